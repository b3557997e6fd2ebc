/* cli.h - the command-line options every program shares.
 *
 * -h/--help, -V/--version, -q/--quiet, --progress and --allow-empty mean
 * the same in every program, and a bad option gets the same one message
 * (exit 64).  A program lists the shared entries it offers in its own
 * struct option table and sends every option its switch does not handle
 * to lam_cli_common:
 *
 *     static const struct option opts[] = {
 *         {"drop", required_argument, 0, 'd'},
 *         LAM_CLI_QUIET, LAM_CLI_PROGRESS, LAM_CLI_ALLOW_EMPTY,
 *         LAM_CLI_HELP, LAM_CLI_VERSION, LAM_CLI_END};
 *     while ((c = lam_cli_next(argc, argv, ":d:qhV", opts)) != -1)
 *         switch (c) {
 *         case 'd': ...; break;
 *         default: lam_cli_common(c, argv, usage);
 *         }
 *
 * The short-option string starts with ':' (or "-:" to get FILE operands in
 * order), so that a missing value comes back as ':' and is told apart from
 * an unknown option.
 */
#ifndef LAM_CLI_H
#define LAM_CLI_H

#include <getopt.h>

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

/* getopt_long with getopt's own messages off (opterr = 0): the one message
 * for a bad option is lam_cli_common's. */
int lam_cli_next(int argc, char **argv, const char *shortopts, const struct option *longopts);

/* Handle a shared option c: -h calls usage (which prints the help and
 * exits 0), -V prints the version and exits 0, -q turns progress off,
 * --progress on, --allow-empty lets an empty input read as the zero
 * operator.  Anything else (getopt's ':' and '?') prints the one
 * bad-option message and exits 64.  A program with its own meaning for -q
 * as well (e.g. no note on stderr) sets its flag and then calls this. */
void lam_cli_common(int c, char **argv, void (*usage)(void));

#endif
