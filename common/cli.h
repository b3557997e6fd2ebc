/* cli.h - the command-line options every program shares.
 *
 * -h/--help, -V/--version, -q/--quiet, --progress and --allow-empty mean
 * the same in every program, and a bad option gets the same one message
 * (exit 64).  So do the output options of the suite's table: -o/--output,
 * -z/--gzip, -r/--report, -t/--tsv, -l/--label, -j/--threads and
 * -M/--max-memory.  A program lists the shared entries it offers in its
 * own struct option table, says in a lam_cli_fields where it keeps their
 * values, and sends every option its switch does not handle to
 * lam_cli_option:
 *
 *     static const struct option opts[] = {
 *         {"drop", required_argument, 0, 'd'},
 *         LAM_CLI_STREAM_OUT, LAM_CLI_ALLOW_EMPTY, LAM_CLI_STANDARD, LAM_CLI_END};
 *     const lam_cli_fields f = {.output = &o->output, .gzip = &o->gzip};
 *     while ((c = lam_cli_next(argc, argv, ":d:o:zqhV", opts)) != -1)
 *         switch (c) {
 *         case 'd': ...; break;
 *         default: lam_cli_option(c, argv, usage, &f);
 *         }
 *     o->input = lam_cli_operand(argc, argv, "one input stream at a time");
 *
 * The short-option string starts with ':' (or "-:" to get FILE operands in
 * order), so that a missing value comes back as ':' and is told apart from
 * an unknown option.
 */
#ifndef LAM_CLI_H
#define LAM_CLI_H

#include <getopt.h>

#include "stream.h"

/* getopt_long values of the long-only --progress and --allow-empty (outside
 * the characters). */
#define LAM_OPT_PROGRESS 0x4c50
#define LAM_OPT_ALLOW_EMPTY 0x4c45

#define LAM_CLI_HELP {"help", no_argument, 0, 'h'}
#define LAM_CLI_VERSION {"version", no_argument, 0, 'V'}
#define LAM_CLI_QUIET {"quiet", no_argument, 0, 'q'}
#define LAM_CLI_PROGRESS {"progress", no_argument, 0, LAM_OPT_PROGRESS}
#define LAM_CLI_ALLOW_EMPTY {"allow-empty", no_argument, 0, LAM_OPT_ALLOW_EMPTY}
#define LAM_CLI_END {0, 0, 0, 0}
#define LAM_CLI_OUTPUT {"output", required_argument, 0, 'o'}
#define LAM_CLI_GZIP {"gzip", no_argument, 0, 'z'}
#define LAM_CLI_REPORT {"report", required_argument, 0, 'r'}
#define LAM_CLI_TSV {"tsv", no_argument, 0, 't'}
#define LAM_CLI_LABEL {"label", required_argument, 0, 'l'}
#define LAM_CLI_THREADS {"threads", required_argument, 0, 'j'}
#define LAM_CLI_MAX_MEMORY {"max-memory", required_argument, 0, 'M'}

/* The entries that come together: a stream output (-o FILE, -z), a
 * key/value report (-r FILE, -t, -l TEXT) and what a program that reports
 * progress offers (--progress, -q, -h, -V). */
#define LAM_CLI_STREAM_OUT LAM_CLI_OUTPUT, LAM_CLI_GZIP
#define LAM_CLI_REPORT_OUT LAM_CLI_REPORT, LAM_CLI_TSV, LAM_CLI_LABEL
#define LAM_CLI_STANDARD LAM_CLI_PROGRESS, LAM_CLI_QUIET, LAM_CLI_HELP, LAM_CLI_VERSION

/* The --help lines of -q, -h, --allow-empty and -V, last in the help of a
 * program whose descriptions start in column 24. */
#define LAM_CLI_HELP_TAIL                                                      \
    "  -q, --quiet          no progress\n"                                     \
    "  -h, --help           show this help\n"                                  \
    "      --allow-empty    read an empty input as the zero operator\n"        \
    "  -V, --version        show the version\n\n"

/* Where a program keeps the values of the shared options it offers; a NULL
 * member is an option it does not take. */
typedef struct {
    const char **output; /* -o FILE */
    int *gzip;           /* -z */
    const char **report; /* -r FILE */
    int *tsv;            /* -t */
    const char **label;  /* -l TEXT */
    long *threads;       /* -j N, 1 to 1024 */
    double *max_memory;  /* -M SIZE, bytes */
    int *quiet;          /* -q: set to 1 besides turning progress off */
} lam_cli_fields;

/* getopt_long with getopt's own messages off (opterr = 0): the one message
 * for a bad option is lam_cli_common's. */
int lam_cli_next(int argc, char **argv, const char *shortopts, const struct option *longopts);

/* Handle a shared option c: -h calls usage (which prints the help and
 * exits 0), -V prints the version and exits 0, -q turns progress off,
 * --progress on, --allow-empty lets an empty input read as the zero
 * operator.  Anything else (getopt's ':' and '?') prints the one
 * bad-option message and exits 64.  A program with its own meaning for -q
 * as well (e.g. no note on stderr) names it in lam_cli_fields.quiet. */
void lam_cli_common(int c, char **argv, void (*usage)(void));

/* Handle a shared option c, the output options included: store the value
 * where f says (f may be NULL) and pass anything else to lam_cli_common. */
void lam_cli_option(int c, char **argv, void (*usage)(void), const lam_cli_fields *f);

/* -t and -l format the report, so they want -r; "-r -" wants -o FILE when
 * stdout carries the program's main output (what names it).  Exit 64 when
 * they do not get it.  f names report, tsv, label and output. */
void lam_cli_report_needs(const lam_cli_fields *f, const char *what);

/* The stream kind arg names, one of those in allowed (a LAM_CLI_KIND bit
 * each); any other is a usage error that lists them (exit 64). */
#define LAM_CLI_KIND(k) (1u << (k))
lam_kind lam_cli_kind(const char *arg, unsigned allowed);

/* The one operand after the options (NULL: none, read stdin); more than
 * one is a usage error that says too_many (exit 64). */
const char *lam_cli_operand(int argc, char **argv, const char *too_many);

#endif
