/* cli.h - the command-line options of the suite, every one declared here.
 *
 * Every option name of the suite has its table entry here, once: a
 * LAM_CLI_ macro (the name, whether it takes a value, and its letter from
 * the suite's short-option table or, for a long-only option, its LAM_OPT_
 * id below).  A program's struct option table is a list of these entries
 * and its switch uses the same letters and ids, so that a name means one
 * thing across the suite and the tables cannot drift apart.  Where one
 * name has two meanings in different programs, it has two entries whose
 * names say which (LAM_CLI_SPLIT_ERROR and LAM_CLI_SPLIT_TERMS).
 *
 * -h/--help, -V/--version, -q/--quiet, --progress and --allow-empty mean
 * the same in every program, and a bad option gets the same one message
 * (exit 64).  So do the output options of the suite's table: -o/--output,
 * -z/--gzip, -r/--report, -t/--tsv, -l/--label, -j/--threads and
 * -M/--max-memory.  A program keeps their values in a lam_cli_values and
 * sends every option its switch does not handle to lam_cli_option:
 *
 *     static const struct option opts[] = {
 *         LAM_CLI_DROP, LAM_CLI_SORT,
 *         LAM_CLI_STREAM_OUT, LAM_CLI_ALLOW_EMPTY, LAM_CLI_STANDARD, LAM_CLI_END};
 *     while ((c = lam_cli_next(argc, argv, opts)) != -1)
 *         switch (c) {
 *         case 'd': ...; break;
 *         case LAM_OPT_SORT: ...; break;
 *         default: lam_cli_option(c, argv, usage, &o->cli);
 *         }
 *     o->input = lam_cli_operand(argc, argv, "one input stream at a time");
 *
 * The table is all a program says about its options: lam_cli_next builds
 * the short-option string from the entries' letters.  A new option gets
 * its id and its entry here first.
 */
#ifndef LAM_CLI_H
#define LAM_CLI_H

#include <getopt.h>

#include "fermion.h"
#include "stream.h"

/* getopt_long ids of the long-only options: above the characters and
 * below the fixed ids of --progress, --allow-empty and --floor (0x4c45 and
 * up). */
#define LAM_OPT_PROGRESS 0x4c50
#define LAM_OPT_ALLOW_EMPTY 0x4c45
#define LAM_OPT_FLOOR 0x4c46
enum {
    LAM_OPT_BOHR = 256,
    LAM_OPT_BOUND_ENERGY_TOL, LAM_OPT_BOUND_SUBSPACE, LAM_OPT_BOUNDS, LAM_OPT_CARTESIAN,
    LAM_OPT_CHECK, LAM_OPT_CHECK_STEPS, LAM_OPT_COMMUTING, LAM_OPT_CONSTRUCTION, LAM_OPT_CUTOFF,
    LAM_OPT_DIIS_DEPTH, LAM_OPT_DUMP_LP, LAM_OPT_EMIT_RECORDED, LAM_OPT_EMIT_SHIFT,
    LAM_OPT_ENERGY_ONLY, LAM_OPT_ENERGY_TOL, LAM_OPT_ERROR, LAM_OPT_FERMION, LAM_OPT_FTOL,
    LAM_OPT_GAP, LAM_OPT_GRADIENT_TOL, LAM_OPT_GTOL, LAM_OPT_HIGHEST, LAM_OPT_KIND, LAM_OPT_LOWEST,
    LAM_OPT_MATRIX, LAM_OPT_MAX_FRAGMENTS, LAM_OPT_MAX_ITER, LAM_OPT_MU, LAM_OPT_MULTIPLETS,
    LAM_OPT_NO_MULTIPLETS, LAM_OPT_NO_SPLIT, LAM_OPT_OBJECTIVE, LAM_OPT_PREP_BITS, LAM_OPT_REFINE,
    LAM_OPT_RESUME, LAM_OPT_ROT_BITS, LAM_OPT_ROUNDS, LAM_OPT_SCALE, LAM_OPT_SCHWARZ, LAM_OPT_SORT,
    LAM_OPT_SPHERICAL, LAM_OPT_SPIN, LAM_OPT_SPIN_ORDER, LAM_OPT_SPLIT_ERROR,
    LAM_OPT_SPLIT_ITERATIONS, LAM_OPT_SPLIT_TERMS, LAM_OPT_STABILITY, LAM_OPT_STAGES,
    LAM_OPT_START_GUESS, LAM_OPT_START_ORBITALS, LAM_OPT_STARTS, LAM_OPT_SZ, LAM_OPT_TERMS,
    LAM_OPT_TOL, LAM_OPT_UNGROUPED, LAM_OPT_WITHIN
};

/* ---- the options every program may share ---- */
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

/* ---- the other short options of the suite's table ---- */
#define LAM_CLI_ACTIVE {"active", required_argument, 0, 'a'}
#define LAM_CLI_BASIS {"basis", required_argument, 0, 'b'}
#define LAM_CLI_CHARGE {"charge", required_argument, 0, 'c'}
#define LAM_CLI_COMPARE {"compare", no_argument, 0, 'C'}
#define LAM_CLI_DROP {"drop", required_argument, 0, 'd'}
#define LAM_CLI_ELECTRONS {"electrons", required_argument, 0, 'n'}
#define LAM_CLI_ENCODING {"encoding", required_argument, 0, 'e'}
#define LAM_CLI_FROZEN {"frozen", required_argument, 0, 'f'}
#define LAM_CLI_KIND {"kind", required_argument, 0, 'k'}
#define LAM_CLI_METHOD {"method", required_argument, 0, 'm'}
#define LAM_CLI_SECTOR {"sector", required_argument, 0, 's'}
#define LAM_CLI_SEED {"seed", required_argument, 0, 'S'}

/* ---- long-only options ----
 * Two meanings of one name, two entries: --split P,T,S shares lam-cost's
 * error budget, while lam-group's --split (a flag) shares a term between
 * groups; --start is lam-rotate's starting orbitals and lam-scf's initial
 * guess; lam-cost takes --kind without its letter. */
#define LAM_CLI_BOHR {"bohr", no_argument, 0, LAM_OPT_BOHR}
#define LAM_CLI_BOUND_ENERGY_TOL {"bound-energy-tol", required_argument, 0, LAM_OPT_BOUND_ENERGY_TOL}
#define LAM_CLI_BOUND_SUBSPACE {"bound-subspace", required_argument, 0, LAM_OPT_BOUND_SUBSPACE}
#define LAM_CLI_BOUNDS {"bounds", optional_argument, 0, LAM_OPT_BOUNDS}
#define LAM_CLI_CARTESIAN {"cartesian", no_argument, 0, LAM_OPT_CARTESIAN}
#define LAM_CLI_CHECK {"check", no_argument, 0, LAM_OPT_CHECK}
#define LAM_CLI_CHECK_STEPS {"check-steps", required_argument, 0, LAM_OPT_CHECK_STEPS}
#define LAM_CLI_COMMUTING {"commuting", no_argument, 0, LAM_OPT_COMMUTING}
#define LAM_CLI_CONSTRUCTION {"construction", required_argument, 0, LAM_OPT_CONSTRUCTION}
#define LAM_CLI_CUTOFF {"cutoff", required_argument, 0, LAM_OPT_CUTOFF}
#define LAM_CLI_DIIS_DEPTH {"diis-depth", required_argument, 0, LAM_OPT_DIIS_DEPTH}
#define LAM_CLI_DUMP_LP {"dump-lp", required_argument, 0, LAM_OPT_DUMP_LP}
#define LAM_CLI_EMIT_RECORDED {"emit-recorded", no_argument, 0, LAM_OPT_EMIT_RECORDED}
#define LAM_CLI_EMIT_SHIFT {"emit-shift", no_argument, 0, LAM_OPT_EMIT_SHIFT}
#define LAM_CLI_ENERGY_ONLY {"energy-only", no_argument, 0, LAM_OPT_ENERGY_ONLY}
#define LAM_CLI_ENERGY_TOL {"energy-tol", required_argument, 0, LAM_OPT_ENERGY_TOL}
#define LAM_CLI_ERROR {"error", required_argument, 0, LAM_OPT_ERROR}
#define LAM_CLI_FERMION {"fermion", no_argument, 0, LAM_OPT_FERMION}
#define LAM_CLI_FLOOR {"floor", required_argument, 0, LAM_OPT_FLOOR}
#define LAM_CLI_FTOL {"ftol", required_argument, 0, LAM_OPT_FTOL}
#define LAM_CLI_GAP {"gap", required_argument, 0, LAM_OPT_GAP}
#define LAM_CLI_GRADIENT_TOL {"gradient-tol", required_argument, 0, LAM_OPT_GRADIENT_TOL}
#define LAM_CLI_GTOL {"gtol", required_argument, 0, LAM_OPT_GTOL}
#define LAM_CLI_HIGHEST {"highest", no_argument, 0, LAM_OPT_HIGHEST}
#define LAM_CLI_KIND_LONG_ONLY {"kind", required_argument, 0, LAM_OPT_KIND}
#define LAM_CLI_LOWEST {"lowest", no_argument, 0, LAM_OPT_LOWEST}
#define LAM_CLI_MATRIX {"matrix", required_argument, 0, LAM_OPT_MATRIX}
#define LAM_CLI_MAX_FRAGMENTS {"max-fragments", required_argument, 0, LAM_OPT_MAX_FRAGMENTS}
#define LAM_CLI_MAX_ITER {"max-iter", required_argument, 0, LAM_OPT_MAX_ITER}
#define LAM_CLI_MU {"mu", required_argument, 0, LAM_OPT_MU}
#define LAM_CLI_MULTIPLETS {"multiplets", no_argument, 0, LAM_OPT_MULTIPLETS}
#define LAM_CLI_NO_MULTIPLETS {"no-multiplets", no_argument, 0, LAM_OPT_NO_MULTIPLETS}
#define LAM_CLI_NO_SPLIT {"no-split", no_argument, 0, LAM_OPT_NO_SPLIT}
#define LAM_CLI_OBJECTIVE {"objective", required_argument, 0, LAM_OPT_OBJECTIVE}
#define LAM_CLI_PREP_BITS {"prep-bits", required_argument, 0, LAM_OPT_PREP_BITS}
#define LAM_CLI_REFINE {"refine", required_argument, 0, LAM_OPT_REFINE}
#define LAM_CLI_RESUME {"resume", required_argument, 0, LAM_OPT_RESUME}
#define LAM_CLI_ROT_BITS {"rot-bits", required_argument, 0, LAM_OPT_ROT_BITS}
#define LAM_CLI_ROUNDS {"rounds", required_argument, 0, LAM_OPT_ROUNDS}
#define LAM_CLI_SCALE {"scale", required_argument, 0, LAM_OPT_SCALE}
#define LAM_CLI_SCHWARZ {"schwarz", required_argument, 0, LAM_OPT_SCHWARZ}
#define LAM_CLI_SORT {"sort", no_argument, 0, LAM_OPT_SORT}
#define LAM_CLI_SPHERICAL {"spherical", no_argument, 0, LAM_OPT_SPHERICAL}
#define LAM_CLI_SPIN {"spin", no_argument, 0, LAM_OPT_SPIN}
#define LAM_CLI_SPIN_ORDER {"spin-order", required_argument, 0, LAM_OPT_SPIN_ORDER}
#define LAM_CLI_SPLIT_ERROR {"split", required_argument, 0, LAM_OPT_SPLIT_ERROR}
#define LAM_CLI_SPLIT_ITERATIONS {"split-iterations", required_argument, 0, LAM_OPT_SPLIT_ITERATIONS}
#define LAM_CLI_SPLIT_TERMS {"split", no_argument, 0, LAM_OPT_SPLIT_TERMS}
#define LAM_CLI_STABILITY {"stability", required_argument, 0, LAM_OPT_STABILITY}
#define LAM_CLI_STAGES {"stages", required_argument, 0, LAM_OPT_STAGES}
#define LAM_CLI_START_GUESS {"start", required_argument, 0, LAM_OPT_START_GUESS}
#define LAM_CLI_START_ORBITALS {"start", required_argument, 0, LAM_OPT_START_ORBITALS}
#define LAM_CLI_STARTS {"starts", required_argument, 0, LAM_OPT_STARTS}
#define LAM_CLI_SZ {"sz", required_argument, 0, LAM_OPT_SZ}
#define LAM_CLI_TERMS {"terms", required_argument, 0, LAM_OPT_TERMS}
#define LAM_CLI_TOL {"tol", required_argument, 0, LAM_OPT_TOL}
#define LAM_CLI_UNGROUPED {"ungrouped", no_argument, 0, LAM_OPT_UNGROUPED}
#define LAM_CLI_WITHIN {"within", required_argument, 0, LAM_OPT_WITHIN}

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

/* The values of the shared options: a program keeps one in its options,
 * and its table says which of them it offers.  Zero is "not given". */
typedef struct {
    const char *output; /* -o FILE */
    int gzip;           /* -z */
    const char *report; /* -r FILE */
    int tsv;            /* -t */
    const char *label;  /* -l TEXT */
    long threads;       /* -j N, 1 to 1024 */
    double max_memory;  /* -M SIZE, bytes (a program may set its default first) */
    int quiet;          /* -q, besides turning progress off (e.g. no note on stderr) */
} lam_cli_values;

/* The next option, as getopt_long returns it, with the short-option
 * string built from the table (the letter of every entry that has one), so
 * that the table is a program's one list of its options.  getopt's own
 * messages are off (opterr = 0): a missing value comes back as ':', an
 * unknown option as '?', and lam_cli_common gives each its one message.
 * The first call also names the program after argv[0] (lam_set_program),
 * so that a program's main begins with its options. */
int lam_cli_next(int argc, char **argv, const struct option *longopts);

/* The same, with the operands coming back in order among the options (as
 * option 1, the operand in optarg), for a program where an option applies
 * to the FILE after it. */
int lam_cli_next_in_order(int argc, char **argv, const struct option *longopts);

/* Handle a shared option c: -h calls usage (which prints the help and
 * exits 0), -V prints the version and exits 0, -q turns progress off,
 * --progress on, --allow-empty lets an empty input read as the zero
 * operator.  Anything else (getopt's ':' and '?') prints the one
 * bad-option message and exits 64.  A program with its own meaning for -q
 * as well (e.g. no note on stderr) names it in lam_cli_fields.quiet. */
void lam_cli_common(int c, char **argv, void (*usage)(void));

/* Handle a shared option c, the output options included: store the value
 * in v and pass anything else to lam_cli_common. */
void lam_cli_option(int c, char **argv, void (*usage)(void), lam_cli_values *v);

/* -t and -l format the report, so they want -r; "-r -" wants -o FILE when
 * stdout carries the program's main output (what names it).  Exit 64 when
 * they do not get it. */
void lam_cli_report_needs(const lam_cli_values *v, const char *what);

/* The stream kind arg names, one of those in allowed (a LAM_CLI_KIND_BIT
 * each); any other is a usage error that lists them (exit 64). */
#define LAM_CLI_KIND_BIT(k) (1u << (k))
lam_kind lam_cli_kind(const char *arg, unsigned allowed);

/* The --spin-order arg names (interleaved or blocked); any other is a
 * usage error (exit 64). */
lam_spin_order lam_cli_spin_order(const char *arg);

/* The one operand after the options (NULL: none, read stdin); more than
 * one is a usage error that says too_many (exit 64). */
const char *lam_cli_operand(int argc, char **argv, const char *too_many);

#endif
