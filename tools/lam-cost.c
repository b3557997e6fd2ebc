/* lam-cost - walk steps, Toffolis and logical qubits of qubitized phase
 * estimation from a pauli stream, a fragments stream or a lam-norm report,
 * priced by the construction the literature uses for each form (and the
 * flat LCU count beside it). */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "cli.h"
#include "cost.h"
#include "fragments.h"
#include "pauli.h"
#include "output.h"
#include "report.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf(
        "Usage: lam-cost [OPTION]... [FILE]\n"
        "  or:  lam-cost -C [OPTION]... FILE...\n"
        "Estimate the cost of qubitized phase estimation of an operator: walk steps,\n"
        "Toffoli gates (rotations included) per step and in total, logical qubits,\n"
        "priced by the construction the literature uses for its form:\n"
        "  pauli          sparse   (Berry et al. 2019, QROAM)\n"
        "  pauli grouped  grouped  (SELECT over anticommuting groups, Izmaylov et al. 2020)\n"
        "  fragments      df       (double factorization, von Burg et al. 2021, Lee et al. 2021)\n"
        "  any            flat     (unary-iteration SELECT, alias-sampling PREPARE)\n"
        "FILE (default stdin) is a pauli stream (grouped or not), a fragments\n"
        "stream, or a text report of lam-norm for one of them.\n"
        "\n"
        "  -C, --compare         one row per construction and input, sorted by\n"
        "                        total Toffolis (several inputs of one molecule)\n"
        "      --error EPS       target energy error in Eh (default 0.0016 Eh)\n"
        "      --split P,T,S     shares of EPS for phase estimation, truncation of\n"
        "                        the representation, synthesis (default 0.8,0.1,0.1)\n"
        "      --construction C  price with C (flat, sparse, grouped, df) instead of\n"
        "                        the form's own\n"
        "      --prep-bits N     keep-probability bits of alias sampling (default\n"
        "                        from the budget)\n"
        "      --rot-bits N      bits of every rotation angle (default from the budget)\n"
        "      --ungrouped       ignore group labels: one unitary per Pauli string\n"
        "      --kind KIND       kind of a stream without header (pauli, fragments)\n"
        "      --floor REPORT    a lam-range report (text or --tsv) of the same operator:\n"
        "                        report its half range (the floor) and lambda/floor,\n"
        "                        exact when the floor is, else at-most\n"
        "  -t, --tsv             one header row and one value row\n"
        "  -l, --label TEXT      a label column (first) in --tsv and --compare\n"
        "  -o, --output FILE     write the report to FILE (default stdout)\n"
        "  -q, --quiet           no note and no progress on stderr\n"
        "      --progress        progress on stderr even when it is not a terminal\n"
        "  -h, --help            this help\n"
        "      --allow-empty     read an empty input as the zero operator\n"
        "  -V, --version         version\n"
        "\n"
        "Walk steps = ceil(pi*lambda/(2*eps.phase)) (Babbush et al. 2018; Lee et al.\n"
        "2021).  The figures are estimates of one construction each; they leave out\n"
        "magic-state distillation, routing and layout (lam-cost(1)).\n"
        "\n"
        "Examples:\n"
        "  lam-ints mol.fcidump | lam-map | lam-group | lam-cost\n"
        "  lam-cost -C mol.pauli mol.grouped mol.frag\n");
    exit(0);
}

typedef struct {
    lam_cost_params par;
    lam_cost_budget bud; /* --error split by --split */
    int ungrouped, compare, have_con;
    lam_construction con;
    lam_kind kind;
    const char *floor;
    lam_cli_values cli; /* -o, -t, -l, -q */
    char **inputs;
    int ninputs;
} options;

static void parse_split(const char *arg, double split[3])
{
    char *end;
    const char *p = arg;
    for (int i = 0; i < 3; ++i) {
        errno = 0;
        split[i] = strtod(p, &end);
        if (end == p || errno || (i < 2 && *end != ',') || (i == 2 && *end != '\0'))
            lam_usage_error("option --split wants three fractions P,T,S, not '%s'", arg);
        p = end + 1;
    }
}

static void parse_options(int argc, char **argv, options *o)
{
    static const struct option longopts[] = {
        LAM_CLI_ALLOW_EMPTY, LAM_CLI_COMPARE, LAM_CLI_ERROR, LAM_CLI_SPLIT_ERROR,
        LAM_CLI_CONSTRUCTION, LAM_CLI_PREP_BITS, LAM_CLI_ROT_BITS, LAM_CLI_UNGROUPED,
        LAM_CLI_KIND_LONG_ONLY, LAM_CLI_FLOOR, LAM_CLI_TSV, LAM_CLI_LABEL, LAM_CLI_OUTPUT,
        LAM_CLI_STANDARD, LAM_CLI_END};
    memset(o, 0, sizeof *o);
    double error = LAM_COST_DEFAULT_ERROR;
    double split[3] = {LAM_COST_DEFAULT_SPLIT_PHASE, LAM_COST_DEFAULT_SPLIT_TRUNC,
                       LAM_COST_DEFAULT_SPLIT_SYNTH};
    int c;
    while ((c = lam_cli_next(argc, argv, longopts)) != -1) {
        switch (c) {
        case 'C': o->compare = 1; break;
        case LAM_OPT_ERROR:
            error = lam_opt_double("--error", optarg);
            if (!(error > 0))
                lam_usage_error("option --error wants a positive energy in Eh, not '%s'", optarg);
            break;
        case LAM_OPT_SPLIT_ERROR: parse_split(optarg, split); break;
        case LAM_OPT_CONSTRUCTION:
            if (lam_cost_construction_parse(optarg, &o->con) != 0)
                lam_usage_error("option --construction wants flat, sparse, grouped or df, not '%s'",
                                optarg);
            o->have_con = 1;
            break;
        case LAM_OPT_PREP_BITS: o->par.prep_bits = (int)lam_opt_long("--prep-bits", optarg, 1, 60); break;
        case LAM_OPT_ROT_BITS: o->par.rot_bits = (int)lam_opt_long("--rot-bits", optarg, 3, 60); break;
        case LAM_OPT_UNGROUPED: o->ungrouped = 1; break;
        case LAM_OPT_KIND:
            o->kind = lam_kind_parse(optarg);
            if (o->kind != LAM_KIND_PAULI && o->kind != LAM_KIND_FRAGMENTS)
                lam_usage_error("option --kind wants pauli or fragments, not '%s'", optarg);
            break;
        case LAM_OPT_FLOOR:
            if (o->floor) lam_usage_error("--floor given twice: one lam-range report at most");
            o->floor = optarg;
            break;
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    o->inputs = argv + optind;
    o->ninputs = argc - optind;
    if (!o->compare && o->ninputs > 1)
        lam_usage_error("one input at most, got %d (several inputs want -C)", o->ninputs);
    if (o->compare && o->cli.tsv) lam_usage_error("-C writes a table already; leave out --tsv");
    int stdin_uses = o->ninputs == 0;
    for (int i = 0; i < o->ninputs; ++i) stdin_uses += strcmp(o->inputs[i], "-") == 0;
    if (stdin_uses > 1) lam_usage_error("standard input can be read once only");
    const char *why;
    if (lam_cost_budget_split(error, split, &o->bud, &why) != 0) lam_usage_error("%s", why);
    if (o->floor && strcmp(o->floor, "-") == 0 && stdin_uses)
        lam_usage_error("standard input can be read once only");
}

/* ---- the library calls that can fail on bad input ---- */

static int input_kind(lam_reader *r, lam_kind forced, lam_kind *kind, lam_error *err)
{
    if (forced != LAM_KIND_UNKNOWN) lam_reader_force_kind(r, forced);
    return lam_reader_kind(r, kind, err);
}

static int declared_qubits(lam_reader *r, int *qubits, lam_error *err)
{
    long q;
    int rc = lam_reader_meta_long(r, "qubits", -1, 0, 1 << 24, &q, err);
    if (rc == 0) *qubits = (int)q;
    return rc;
}

static int next_report_line(lam_reader *r, char **text, long *line, int *more, lam_error *err)
{
    int rc = lam_reader_next_text(r, text, line, err);
    if (rc == 0 || rc == 1) {
        *more = rc;
        return 0;
    }
    return rc;
}

/* ---- telling a report from a stream ----
 * The input is read once, through the stream reader: a report has no "#%"
 * line, and its first line is "key<TAB>value" with a key made of
 * lower-case letters, where a stream's first term starts with a number. */

static int looks_like_report(lam_reader *r)
{
    const char *line = lam_reader_first_text(r);
    if (!line || lam_reader_meta(r)->count > 0 || lam_reader_syntax(r) != 0) return 0;
    size_t key = strspn(line, "abcdefghijklmnopqrstuvwxyz_.0123456789");
    return key > 0 && line[key] == '\t' && line[0] >= 'a' && line[0] <= 'z';
}

/* The key<TAB>value lines of a report, through the reader ('#' lines and
 * blank lines skipped, as lam_report_read does). */
static int read_report(lam_reader *r, lam_report_in *in, lam_error *err)
{
    char *text;
    long line;
    int more;
    while (next_report_line(r, &text, &line, &more, err) == 0 && more) {
        char *tab = strchr(text, '\t');
        if (!tab)
            return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), line,
                                "report line without a tab between key and value");
        *tab = '\0';
        lam_report_in_add(in, text, tab + 1, line);
    }
    return err->code;
}

/* ---- the three inputs ---- */

static int summary_from_pauli_stream(lam_reader *r, const options *o, lam_lcu_summary *lcu,
                                     lam_error *err)
{
    int qubits;
    if (declared_qubits(r, &qubits, err) != 0) return err->code;
    lam_pauli_set s;
    lam_pauli_set_init(&s, qubits);
    double t0 = lam_seconds();
    int rc = lam_pauli_read_merged(r, &s, 1, err); /* repeated strings never take room */
    if (rc == 0) {
        lam_progress("read %zu distinct Pauli terms in %.2f s", s.count, lam_seconds() - t0);
        lam_cost_summary_from_pauli(&s, !o->ungrouped, lcu);
    }
    lam_pauli_set_free(&s);
    return rc;
}

static int summary_from_fragments_stream(lam_reader *r, lam_lcu_summary *lcu, lam_error *err)
{
    lam_fragments *fr = NULL;
    int rc = lam_fragments_read(r, &fr, err);
    if (rc == 0) rc = lam_cost_summary_from_fragments(fr, lam_reader_meta(r), lcu, err);
    lam_fragments_free(fr);
    return rc;
}

static int summary_from_stream(lam_reader *r, const options *o, lam_lcu_summary *lcu,
                               lam_error *err)
{
    lam_kind kind;
    if (input_kind(r, o->kind, &kind, err) != 0) return err->code;
    switch (kind) {
    case LAM_KIND_PAULI: return summary_from_pauli_stream(r, o, lcu, err);
    case LAM_KIND_FRAGMENTS: return summary_from_fragments_stream(r, lcu, err);
    default:
        return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), lam_reader_lineno(r),
                            "lam-cost reads pauli or fragments streams, not %s "
                            "(map a spinfree stream with lam-map first)",
                            lam_kind_name(kind));
    }
}

/* A value of the report, or NAN (0 for a count) with *err set: the first
 * problem met is the one told. */
static double report_number(const lam_report_in *in, const char *name, const char *key,
                            lam_error *err)
{
    double v;
    const char *s = lam_report_get_str(in, key);
    if (err->code) return NAN;
    if (!s) {
        lam_error_at(err, LAM_EX_DATA, name, 0, "report has no '%s' line", key);
        return NAN;
    }
    if (!lam_report_get(in, key, &v))
        lam_error_at(err, LAM_EX_DATA, name, 0, "report value of '%s' is not a number: '%s'", key,
                     s);
    return v;
}

static long long report_count(const lam_report_in *in, const char *name, const char *key,
                              lam_error *err)
{
    double v = report_number(in, name, key, err);
    if (err->code) return 0;
    if (v < 0 || v != (double)(long long)v) {
        lam_error_at(err, LAM_EX_DATA, name, 0, "report value of '%s' is not a count: %.17g", key,
                     v);
        return 0;
    }
    return (long long)v;
}

/* lam-norm's report of a pauli stream: terms counts every line of the
 * merged operator, the identity included when the constant is not zero;
 * groups and lambda_grouped are present for labelled streams.  The report
 * does not give the largest group: the bound strings - groups + 1 sets
 * the rotation bits then. */
static int summary_from_pauli_report(const lam_report_in *in, const char *name,
                                     const options *o, lam_lcu_summary *lcu, lam_error *err)
{
    long long terms = report_count(in, name, "terms", err);
    double constant = report_number(in, name, "constant", err);
    long long strings = terms - (constant != 0 && terms > 0 ? 1 : 0);
    lcu->form = "pauli";
    lcu->system_qubits = (int)report_count(in, name, "qubits", err);
    lcu->lambda = lcu->lambda_strings = report_number(in, name, "lambda", err);
    if (err->code) return err->code;
    lcu->unitaries = lcu->strings = strings;
    lcu->trunc_input = -1;
    lcu->trunc_source = "unknown (a report does not say)";
    int labelled = lam_report_get_str(in, "groups") != NULL;
    if (labelled && o->ungrouped)
        return lam_error_at(err, LAM_EX_DATA, name, 0,
                            "--ungrouped with the report of a grouped stream: the report does "
                            "not say how many distinct strings there are; give lam-cost the "
                            "stream");
    if (!labelled) return 0;
    long long groups = report_count(in, name, "groups", err);
    if (err->code) return err->code;
    if (groups > strings)
        return lam_error_at(err, LAM_EX_DATA, name, 0,
                            "report has more groups (%lld) than terms (%lld)", groups, strings);
    lcu->form = "pauli_grouped";
    lcu->lambda = report_number(in, name, "lambda_grouped", err);
    lcu->unitaries = lcu->groups = groups;
    lcu->flat_rotations = 2 * (strings - groups);
    lcu->largest_group = (int)(strings - groups + 1 < 1 << 30 ? strings - groups + 1 : 1 << 30);
    return err->code;
}

/* lam-norm's report of a fragments stream carries the LCU size, not the
 * factors: only the flat count applies to it. */
static int summary_from_fragments_report(const lam_report_in *in, const char *name,
                                         lam_lcu_summary *lcu, lam_error *err)
{
    long long orbitals = report_count(in, name, "orbitals", err);
    if (err->code) return err->code;
    if (orbitals > 1 << 20)
        return lam_error_at(err, LAM_EX_DATA, name, 0, "report has %lld orbitals", orbitals);
    lcu->form = "fragments";
    lcu->lambda = report_number(in, name, "lambda", err);
    lcu->unitaries = report_count(in, name, "unitaries", err);
    lcu->system_qubits = 2 * (int)orbitals;
    lcu->orbitals = (int)orbitals;
    lcu->trunc_input = -1;
    lcu->trunc_source = "unknown (a report does not say)";
    long long fragments = report_count(in, name, "fragments", err);
    if (err->code) return err->code;
    lcu->flat_rotations = lam_cost_fragment_rotations(fragments, (int)orbitals);
    return 0;
}

static int summary_from_report_lines(const lam_report_in *in, const char *name,
                                     const options *o, lam_lcu_summary *lcu, lam_error *err)
{
    const char *kind = lam_report_get_str(in, "kind");
    if (!kind)
        return lam_error_at(err, LAM_EX_DATA, name, 0,
                            "report has no 'kind' line (is it from lam-norm?)");
    if (strchr(kind, '\t'))
        return lam_error_at(err, LAM_EX_DATA, name, 1,
                            "a --tsv report: lam-cost reads the key<TAB>value form");
    if (strcmp(kind, "pauli") == 0) return summary_from_pauli_report(in, name, o, lcu, err);
    if (strcmp(kind, "fragments") == 0) return summary_from_fragments_report(in, name, lcu, err);
    return lam_error_at(err, LAM_EX_DATA, name, 0,
                        "report of a %s stream: lam-cost needs the report of a pauli or "
                        "fragments stream (map a spinfree stream with lam-map first)", kind);
}

static int summary_from_report(lam_reader *r, const options *o, lam_lcu_summary *lcu,
                               lam_error *err)
{
    lam_report_in *in = lam_report_in_new();
    int rc = read_report(r, in, err);
    if (rc == 0) rc = summary_from_report_lines(in, lam_reader_name(r), o, lcu, err);
    lam_report_in_free(in);
    return rc;
}

/* A directory opens and then fails to read (exit 74): say what it is. */
static int refuse_directory(const char *path, lam_error *err)
{
    struct stat st;
    if (path && strcmp(path, "-") != 0 && stat(path, &st) == 0 && S_ISDIR(st.st_mode))
        return lam_error_set(err, LAM_EX_NOINPUT, "cannot read %s: it is a directory", path);
    return 0;
}

/* Read one input (a file name, "-" or NULL for stdin) into lcu, once. */
static int summarize(const char *input, const options *o, lam_lcu_summary *lcu, lam_error *err)
{
    lam_reader *r = NULL;
    memset(lcu, 0, sizeof *lcu);
    if (refuse_directory(input, err) != 0 || lam_reader_open(input, &r, err) != 0) return err->code;
    int rc = looks_like_report(r) ? summary_from_report(r, o, lcu, err)
                                  : summary_from_stream(r, o, lcu, err);
    lam_reader_close(r);
    return rc;
}

/* ---- one input: the key/value report ---- */

static void warn_truncation(const options *o, const lam_cost_budget *bud, const char *name,
                            const lam_lcu_summary *lcu)
{
    if (lcu->trunc_input > bud->trunc && !o->cli.quiet)
        lam_warn("%s: the input's truncation (%.3g Eh, from %s) exceeds its share eps.trunc "
                 "(%.3g Eh)", name, lcu->trunc_input, lcu->trunc_source, bud->trunc);
}

/* fl NULL (no --floor): the keys with NA, so that --tsv keeps its columns. */
static int one_input(const options *o, const lam_cost_budget *bud, const lam_floor *fl,
                     lam_error *err)
{
    const char *input = o->ninputs ? o->inputs[0] : NULL;
    const char *name = input && strcmp(input, "-") != 0 ? input : "<stdin>";
    lam_lcu_summary lcu;
    if (summarize(input, o, &lcu, err) != 0) return err->code;
    lam_construction con = o->have_con ? o->con : lam_cost_headline(&lcu);
    if (!lam_cost_applies(&lcu, con))
        return lam_error_at(err, LAM_EX_DATA, name, 0,
                            "construction %s does not apply to this %s input (df needs a "
                            "spin-symmetric fragments stream, not a report; grouped needs group "
                            "labels; sparse needs Pauli strings)",
                            lam_cost_construction_name(con), lcu.form);
    lam_cost_estimate est;
    const char *why = NULL;
    if (lam_cost_estimate_one(&lcu, con, bud, &o->par, &est, &why) != 0)
        return lam_error_at(err, LAM_EX_DATA, name, 0, "%s", why);
    warn_truncation(o, bud, name, &lcu);
    lam_report *rep = lam_report_new();
    if (o->cli.label) lam_report_str(rep, "label", o->cli.label);
    lam_cost_report(rep, &lcu, bud, &est);
    lam_floor_report(rep, fl, '.');
    lam_floor_ratio(rep, fl, '.', "ratio", est.lambda);
    int rc = lam_report_save(rep, o->cli.output, o->cli.tsv, err);
    lam_report_free(rep);
    return rc;
}

/* ---- several inputs: one row per construction that applies ---- */

typedef struct {
    const char *input;
    lam_lcu_summary lcu;
    lam_cost_estimate est;
} row;

static int by_run_toffoli(const void *a, const void *b)
{
    long long x = ((const row *)a)->est.run_toffoli, y = ((const row *)b)->est.run_toffoli;
    return (x > y) - (x < y);
}

/* With --floor: the floor's columns of one row, lambda/floor with its
 * status (exact only over a certified floor). */
static void write_floor_columns(FILE *f, const lam_floor *fl, double lambda)
{
    char v[40], ratio[40];
    if (!fl) return;
    lam_format_double(v, sizeof v, fl->value);
    lam_format_double(ratio, sizeof ratio, lambda / fl->value);
    fprintf(f, "\t%s\t%s\t%s\t%s\t%s", v, fl->exact ? "exact" : "bound", fl->from, ratio,
            fl->exact ? "exact" : "at-most");
}

static void write_table(FILE *f, const options *o, const lam_cost_budget *bud, const row *rows,
                        size_t n, const lam_floor *fl)
{
    char lam[40], trunc[40];
    if (o->cli.label) fputs("label\t", f);
    fputs("input\tform\tconstruction\tlambda\twalk.steps\tstep.toffoli\tstep.rotations\t"
          "rot.bits\trun.toffoli\trun.qubits\teps.total\teps.phase\teps.trunc\teps.synth\t"
          "trunc.input", f);
    fputs(fl ? "\tfloor\tfloor.status\tfloor.from\tratio\tratio.status\n" : "\n", f);
    for (size_t i = 0; i < n; ++i) {
        const row *r = &rows[i];
        lam_format_double(lam, sizeof lam, r->est.lambda);
        if (r->lcu.trunc_input >= 0)
            snprintf(trunc, sizeof trunc, "%.3g", r->lcu.trunc_input);
        else
            snprintf(trunc, sizeof trunc, "unknown");
        if (o->cli.label) fprintf(f, "%s\t", o->cli.label);
        fprintf(f, "%s\t%s\t%s\t%s\t%lld\t%lld\t%lld\t%d\t%lld\t%d\t%g\t%g\t%g\t%g\t%s",
                r->input, r->lcu.form, lam_cost_construction_name(r->est.con), lam,
                r->est.walk_steps, r->est.step_toffoli, r->est.step_rotations, r->est.rot_bits,
                r->est.run_toffoli, r->est.run_qubits, bud->total, bud->phase, bud->trunc,
                bud->synth, trunc);
        write_floor_columns(f, fl, r->est.lambda);
        fputc('\n', f);
    }
    fputs("# estimates of one construction each (lam-cost(1)); they leave out magic-state "
          "distillation, routing, layout and error-correction overhead\n", f);
}

/* One row per construction that applies to the input (or the one asked for). */
static int add_rows(const options *o, const lam_cost_budget *bud, const char *input, row *rows,
                    size_t *n, lam_error *err)
{
    const char *name = strcmp(input, "-") != 0 ? input : "<stdin>";
    lam_lcu_summary lcu;
    if (summarize(input, o, &lcu, err) != 0) return err->code;
    for (int c = 0; c < LAM_CON_COUNT; ++c) {
        if (!lam_cost_applies(&lcu, (lam_construction)c)) continue;
        if (o->have_con && c != (int)o->con) continue;
        row *r = &rows[*n];
        const char *why = NULL;
        if (lam_cost_estimate_one(&lcu, (lam_construction)c, bud, &o->par, &r->est, &why) != 0)
            return lam_error_at(err, LAM_EX_DATA, name, 0, "%s", why);
        r->input = name;
        r->lcu = lcu;
        ++*n;
    }
    warn_truncation(o, bud, name, &lcu);
    return 0;
}

static int write_table_to(const options *o, const lam_cost_budget *bud, const row *rows,
                          size_t n, const lam_floor *fl, lam_error *err)
{
    lam_output out;
    if (lam_output_open(o->cli.output, &out, err)) return err->code;
    write_table(out.fp, o, bud, rows, n, fl);
    return lam_output_close(&out, 1, err);
}

static int compare(const options *o, const lam_cost_budget *bud, const lam_floor *fl,
                   lam_error *err)
{
    int ninputs = o->ninputs ? o->ninputs : 1;
    row *rows = lam_malloc(lam_mul_size((size_t)ninputs * LAM_CON_COUNT, sizeof *rows));
    size_t n = 0;
    int rc = 0;
    for (int i = 0; rc == 0 && i < ninputs; ++i)
        rc = add_rows(o, bud, o->ninputs ? o->inputs[i] : "-", rows, &n, err);
    if (rc == 0) {
        qsort(rows, n, sizeof *rows, by_run_toffoli);
        rc = write_table_to(o, bud, rows, n, fl, err);
    }
    free(rows);
    return rc;
}

int main(int argc, char **argv)
{
    options o;
    parse_options(argc, argv, &o);
    lam_error err;
    lam_error_clear(&err);
    lam_floor floor_in, *fl = o.floor ? &floor_in : NULL;
    if (fl && lam_floor_read(o.floor, fl, &err) != 0) lam_error_exit(&err);
    if ((o.compare ? compare(&o, &o.bud, fl, &err) : one_input(&o, &o.bud, fl, &err)) != 0)
        lam_error_exit(&err);
    if (!o.cli.quiet)
        fprintf(stderr, "%s: note: these figures are estimates of one construction each "
                "(see the 'assumes' line and lam-cost(1))\n", lam_program());
    return 0;
}
