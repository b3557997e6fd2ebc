/* lam-cost - walk steps, Toffolis and logical qubits of qubitized phase
 * estimation from a pauli stream, a fragments stream or a lam-norm report. */
#include <errno.h>
#include <fcntl.h>
#include <sys/stat.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cost.h"
#include "fragments.h"
#include "pauli.h"
#include "report.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf(
        "Usage: lam-cost [OPTION]... [FILE]\n"
        "Estimate the cost of qubitized phase estimation of an LCU: walk steps,\n"
        "Toffoli gates per step and in total, and logical qubits.\n"
        "FILE (default stdin) is a pauli stream (grouped or not), a fragments\n"
        "stream, or a text report of lam-norm for one of them.\n"
        "\n"
        "  -e, --error EPS       target energy error in Eh (default 0.0016 Eh)\n"
        "  -b, --keep-bits MU    bits of the alias-sampling keep probabilities\n"
        "                        (default ceil(log2(lambda/EPS)))\n"
        "      --ungrouped       ignore group labels: one unitary per Pauli string\n"
        "      --kind KIND       kind of a stream without header (pauli, fragments)\n"
        "      --tsv             one header row and one value row\n"
        "  -o, --output FILE     write the report to FILE (default stdout)\n"
        "  -q, --quiet           no note and no progress on stderr\n"
        "      --progress        progress on stderr even when it is not a terminal\n"
        "  -h, --help            this help\n"
        "      --allow-empty     read an empty input as the zero operator\n"
        "      --version         version\n"
        "\n"
        "Walk steps = ceil(pi*lambda/(2*EPS)) (Babbush et al. 2018; Lee et al. 2021).\n"
        "The figures are estimates of one textbook construction; lam-cost(1)\n"
        "lists the counting and what it leaves out.\n"
        "\n"
        "Example:\n"
        "  lam-ints lih.fcidump | lam-map | lam-group | lam-cost --error 0.001\n");
    exit(0);
}

typedef struct {
    lam_cost_params par;
    int ungrouped, tsv, quiet;
    lam_kind kind;
    const char *output, *input;
} options;

static void parse_options(int argc, char **argv, options *o)
{
    enum { OPT_UNGROUPED = 256, OPT_KIND, OPT_TSV, OPT_PROGRESS, OPT_VERSION };
    static const struct option longopts[] = {
        {"allow-empty", no_argument, 0, LAM_OPT_ALLOW_EMPTY},
        {"error", required_argument, 0, 'e'},
        {"keep-bits", required_argument, 0, 'b'},
        {"ungrouped", no_argument, 0, OPT_UNGROUPED},
        {"kind", required_argument, 0, OPT_KIND},
        {"tsv", no_argument, 0, OPT_TSV},
        {"output", required_argument, 0, 'o'},
        {"quiet", no_argument, 0, 'q'},
        {"progress", no_argument, 0, OPT_PROGRESS},
        {"help", no_argument, 0, 'h'},
        {"version", no_argument, 0, OPT_VERSION},
        {0, 0, 0, 0}};
    memset(o, 0, sizeof *o);
    o->par.error = LAM_COST_DEFAULT_ERROR;
    int c;
    while ((c = getopt_long(argc, argv, "e:b:o:qh", longopts, NULL)) != -1) {
        switch (c) {
        case LAM_OPT_ALLOW_EMPTY: lam_reader_allow_empty(1); break;
        case 'e':
            o->par.error = lam_opt_double("--error", optarg);
            if (!(o->par.error > 0))
                lam_usage_error("option --error wants a positive energy in Eh, not '%s'", optarg);
            break;
        case 'b': o->par.keep_bits = (int)lam_opt_long("--keep-bits", optarg, 1, 60); break;
        case OPT_UNGROUPED: o->ungrouped = 1; break;
        case OPT_KIND:
            if (lam_kind_parse(optarg, &o->kind) != 0 ||
                (o->kind != LAM_KIND_PAULI && o->kind != LAM_KIND_FRAGMENTS))
                lam_usage_error("option --kind wants pauli or fragments, not '%s'", optarg);
            break;
        case OPT_TSV: o->tsv = 1; break;
        case 'o': o->output = optarg; break;
        case 'q':
            o->quiet = 1;
            lam_progress_set(0);
            break;
        case OPT_PROGRESS: lam_progress_set(1); break;
        case 'h': usage();
        case OPT_VERSION: lam_print_version();
        default: lam_usage_error("unknown option");
        }
    }
    if (argc - optind > 1) lam_usage_error("one input at most, got %d", argc - optind);
    o->input = optind < argc ? argv[optind] : NULL;
}

/* ---- telling a report from a stream ----
 * A report's first meaningful line is "key<TAB>value" with a key made of
 * lower-case letters; a stream's is "#%", a comment, a coefficient or gzip
 * data.  Standard input cannot be read twice, so it is copied to an
 * unlinked temporary file that then becomes descriptor 0: the readers see
 * "<stdin>" and name it so in their messages. */

static void write_all(int fd, const char *buf, size_t n)
{
    while (n > 0) {
        ssize_t m = write(fd, buf, n);
        if (m < 0 && errno == EINTR) continue;
        if (m < 0) lam_fail(LAM_EX_IOERR, "cannot write a temporary file: %s", strerror(errno));
        buf += m;
        n -= (size_t)m;
    }
}

static void spool_stdin(void)
{
    const char *dir = getenv("TMPDIR");
    char path[4096];
    snprintf(path, sizeof path, "%s/lam-cost.XXXXXX", dir && *dir ? dir : "/tmp");
    int fd = mkstemp(path);
    if (fd < 0) lam_fail(LAM_EX_IOERR, "cannot create a temporary file in %s: %s",
                         dir && *dir ? dir : "/tmp", strerror(errno));
    unlink(path);
    char buf[1 << 16];
    ssize_t n;
    while ((n = read(0, buf, sizeof buf)) != 0) {
        if (n < 0 && errno == EINTR) continue;
        if (n < 0) lam_fail(LAM_EX_IOERR, "read error on <stdin>: %s", strerror(errno));
        write_all(fd, buf, (size_t)n);
    }
    if (lseek(fd, 0, SEEK_SET) != 0 || dup2(fd, 0) < 0)
        lam_fail(LAM_EX_IOERR, "cannot rewind a temporary file: %s", strerror(errno));
    close(fd);
}

/* Inputs given by name are read twice only when they are regular files. */
static int is_regular_file(const char *path, const char *name)
{
    struct stat st;
    if (stat(path, &st) != 0) lam_fail(LAM_EX_NOINPUT, "cannot open %s: %s", name, strerror(errno));
    if (S_ISDIR(st.st_mode)) lam_fail(LAM_EX_NOINPUT, "cannot read %s: it is a directory", name);
    return S_ISREG(st.st_mode);
}

static int looks_like_report(const char *path, const char *name)
{
    int fd = path ? open(path, O_RDONLY) : 0;
    if (fd < 0) lam_fail(LAM_EX_NOINPUT, "cannot open %s: %s", name, strerror(errno));
    char buf[4096];
    ssize_t n;
    while ((n = pread(fd, buf, sizeof buf - 1, 0)) < 0 && errno == EINTR) {}
    if (n < 0) lam_fail(LAM_EX_IOERR, "read error on %s: %s", name, strerror(errno));
    if (fd != 0) close(fd);
    buf[n] = '\0';
    if (n > 0 && (unsigned char)buf[0] == 0x1f) return 0; /* gzip: only streams */
    for (char *line = buf; *line;) {
        char *next = strchr(line, '\n');
        if (line[0] != '#' && line[strspn(line, " \t\r\n")] != '\0' && line[0] != '\n') {
            size_t key = strspn(line, "abcdefghijklmnopqrstuvwxyz_0123456789");
            return key > 0 && line[key] == '\t' && line[0] >= 'a' && line[0] <= 'z';
        }
        if (!next) break;
        line = next + 1;
    }
    return 0;
}

/* ---- the three inputs ---- */

static void summary_from_pauli_stream(lam_reader *r, const options *o, lam_lcu_summary *lcu)
{
    lam_pauli_set s;
    lam_pauli_set_init(&s, (int)lam_reader_meta_long(r, "qubits", -1, 0, 1 << 24));
    double t0 = lam_seconds();
    lam_pauli_read_merged(r, &s, 1); /* repeated strings never take room */
    lam_progress("read %zu distinct Pauli terms in %.2f s", s.count, lam_seconds() - t0);
    lam_cost_summary_from_pauli(&s, !o->ungrouped, lcu);
    lam_pauli_set_free(&s);
}

static void summary_from_stream(const char *path, const options *o, lam_lcu_summary *lcu)
{
    lam_reader *r = lam_reader_open(path);
    if (o->kind != LAM_KIND_UNKNOWN) lam_reader_force_kind(r, o->kind);
    lam_kind kind = lam_reader_kind(r);
    switch (kind) {
    case LAM_KIND_PAULI: summary_from_pauli_stream(r, o, lcu); break;
    case LAM_KIND_FRAGMENTS: {
        lam_fragments *fr = lam_fragments_read(r);
        lam_cost_summary_from_fragments(fr, lcu);
        lam_fragments_free(fr);
        break;
    }
    default:
        lam_reader_fail(r, "lam-cost reads pauli or fragments streams, not %s "
                        "(map a spinfree stream with lam-map first)",
                        lam_kind_name(kind));
    }
    lam_reader_close(r);
}

static double report_number(const lam_report_in *in, const char *name, const char *key)
{
    double v;
    const char *s = lam_report_get_str(in, key);
    if (!s) lam_fail_at(LAM_EX_DATA, name, 0, "report has no '%s' line", key);
    if (!lam_report_get(in, key, &v))
        lam_fail_at(LAM_EX_DATA, name, 0, "report value of '%s' is not a number: '%s'", key, s);
    return v;
}

static long long report_count(const lam_report_in *in, const char *name, const char *key)
{
    double v = report_number(in, name, key);
    if (v < 0 || v != (double)(long long)v)
        lam_fail_at(LAM_EX_DATA, name, 0, "report value of '%s' is not a count: %.17g", key, v);
    return (long long)v;
}

/* lam-norm's report of a pauli stream: terms counts every line of the
 * merged operator, the identity included when the constant is not zero;
 * groups and lambda_grouped are present for labelled streams. */
static void summary_from_pauli_report(const lam_report_in *in, const char *name,
                                      const options *o, lam_lcu_summary *lcu)
{
    long long terms = report_count(in, name, "terms");
    double constant = report_number(in, name, "constant");
    long long strings = terms - (constant != 0 && terms > 0 ? 1 : 0);
    lcu->form = "pauli";
    lcu->system_qubits = (int)report_count(in, name, "qubits");
    lcu->lambda = report_number(in, name, "lambda");
    lcu->unitaries = strings;
    int labelled = lam_report_get_str(in, "groups") != NULL;
    if (labelled && o->ungrouped)
        lam_fail_at(LAM_EX_DATA, name, 0,
                    "--ungrouped with the report of a grouped stream: the report does not say "
                    "how many distinct strings there are; give lam-cost the stream");
    if (labelled) {
        long long groups = report_count(in, name, "groups");
        lcu->form = "pauli_grouped";
        lcu->lambda = report_number(in, name, "lambda_grouped");
        lcu->unitaries = groups;
        lcu->rotations = 2 * (strings - groups);
        if (lcu->rotations < 0)
            lam_fail_at(LAM_EX_DATA, name, 0, "report has more groups (%lld) than terms (%lld)",
                        groups, strings);
    }
}

/* lam-norm's report of a fragments stream carries the LCU size itself. */
static void summary_from_fragments_report(const lam_report_in *in, const char *name,
                                          lam_lcu_summary *lcu)
{
    long long orbitals = report_count(in, name, "orbitals");
    if (orbitals > 1 << 20) lam_fail_at(LAM_EX_DATA, name, 0, "report has %lld orbitals", orbitals);
    lcu->form = "fragments";
    lcu->lambda = report_number(in, name, "lambda");
    lcu->unitaries = report_count(in, name, "unitaries");
    lcu->system_qubits = 2 * (int)orbitals;
    lcu->rotations = lam_cost_fragment_rotations(report_count(in, name, "fragments"), (int)orbitals);
}

static void summary_from_report(const char *path, const char *name, const options *o,
                                lam_lcu_summary *lcu)
{
    lam_report_in *in = lam_report_read(path);
    const char *kind = lam_report_get_str(in, "kind");
    if (!kind) lam_fail_at(LAM_EX_DATA, name, 0, "report has no 'kind' line (is it from lam-norm?)");
    if (strchr(kind, '\t'))
        lam_fail_at(LAM_EX_DATA, name, 1, "a --tsv report: lam-cost reads the key<TAB>value form");
    if (strcmp(kind, "pauli") == 0)
        summary_from_pauli_report(in, name, o, lcu);
    else if (strcmp(kind, "fragments") == 0)
        summary_from_fragments_report(in, name, lcu);
    else
        lam_fail_at(LAM_EX_DATA, name, 0,
                    "report of a %s stream: lam-cost needs the report of a pauli or fragments "
                    "stream (map a spinfree stream with lam-map first)", kind);
    lam_report_in_free(in);
}

int main(int argc, char **argv)
{
    lam_set_program(argv[0]);
    options o;
    parse_options(argc, argv, &o);
    const char *path = o.input && strcmp(o.input, "-") != 0 ? o.input : NULL;
    const char *name = path ? path : "<stdin>";
    if (path && !is_regular_file(path, name)) { /* a pipe such as <(...) */
        int fd = open(path, O_RDONLY);
        if (fd < 0 || dup2(fd, 0) < 0)
            lam_fail(LAM_EX_NOINPUT, "cannot open %s: %s", name, strerror(errno));
        close(fd);
        path = NULL;
    }
    if (!path) spool_stdin();

    lam_lcu_summary lcu;
    memset(&lcu, 0, sizeof lcu);
    if (looks_like_report(path, name))
        summary_from_report(path, name, &o, &lcu);
    else
        summary_from_stream(path, &o, &lcu);

    lam_cost_estimate est;
    const char *why = NULL;
    if (lam_cost_estimate_lcu(&lcu, &o.par, &est, &why) != 0)
        lam_fail_at(LAM_EX_DATA, name, 0, "%s", why);

    lam_report *rep = lam_report_new();
    lam_cost_report(rep, &lcu, &o.par, &est);
    lam_report_save(rep, o.output, o.tsv);
    lam_report_free(rep);
    if (!o.quiet)
        fprintf(stderr, "%s: note: these figures are estimates of one textbook construction "
                "(see the 'assumes' line and lam-cost(1))\n", lam_program());
    return 0;
}
