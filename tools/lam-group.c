/* lam-group - Pauli terms into mutually anticommuting groups (each group is
 * a unitary up to scale), or check the groups of a labelled stream. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "group.h"
#include "norm.h"
#include "output.h"
#include "pauli.h"
#include "report.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [FILE]\n"
           "Group the terms of a pauli stream (file or stdin, gzip allowed) into sets of\n"
           "mutually anticommuting strings; each set is one unitary of weight\n"
           "sqrt(sum c^2), so lambda_grouped = sum over groups of sqrt(sum c^2) (Eh) is at\n"
           "most lambda = sum |c|.  Writes the stream with '@g' group labels on stdout\n"
           "and, with --report, a key/value report (terms, groups, lambda, lambda_grouped).\n"
           "The identity stays unlabelled; existing labels are replaced.\n\n"
           "  -m, --method M       greedy rule, terms by decreasing |c|: 'sorted' (first\n"
           "                       group that takes the term; default) or 'best' (the\n"
           "                       group whose norm grows least)\n"
           "      --refine N       passes moving terms between groups while lambda_grouped\n"
           "                       falls (0 turns refinement off)\n"
           "      --split          share a term between every group it anticommutes with\n"
           "                       entirely, split optimally\n"
           "      --no-split       each term in one group only\n"
           "      --split-iterations N  iterations of the split optimization (default 1000)\n"
           "                       Default: --refine 8 --split up to %d terms, greedy\n"
           "                       only above (where they cost several times as much)\n"
           "      --commuting      group mutually commuting terms instead (measurement\n"
           "                       planning); the report gives group_norm_sum\n"
           "      --check          verify the groups of a labelled stream: exit 65 naming\n"
           "                       the first pair in one group that fails; report on stdout\n"
           "  -r, --report FILE    write the report to FILE ('-': stdout, with -o); FILE is\n"
           "                       opened before the stream is written\n"
           "  -t, --tsv            report as one header row and one value row (a fixed\n"
           "                       set of columns, NA where a value does not apply)\n"
           "  -l, --label TEXT     label column of the report (default: the input's name)\n"
           "  -o, --output FILE    write the stream to FILE instead of stdout\n"
           "  -z, --gzip           gzip the output stream\n"
           "      --progress       progress on stderr even when it is not a terminal\n"
           LAM_CLI_HELP_TAIL
           "Example:\n"
           "  lam-ints h2o.fcidump | lam-shift | lam-map | %s | lam-norm\n",
           lam_program(), LAM_GROUP_AUTO_TERMS, lam_program());
    exit(0);
}

typedef struct {
    lam_group_options group;
    int check;
    const char *input;
    lam_cli_values cli; /* -o, -z, -r, -t, -l */
} options;


static void parse_options(int argc, char **argv, options *o)
{
    static const struct option opts[] = {
        LAM_CLI_METHOD, LAM_CLI_REFINE, LAM_CLI_SPLIT_TERMS, LAM_CLI_NO_SPLIT,
        LAM_CLI_SPLIT_ITERATIONS, LAM_CLI_COMMUTING, LAM_CLI_CHECK, LAM_CLI_REPORT_OUT,
        LAM_CLI_STREAM_OUT, LAM_CLI_ALLOW_EMPTY, LAM_CLI_STANDARD, LAM_CLI_END};
    memset(o, 0, sizeof *o);
    lam_group_options_default(&o->group);
    int c;
    while ((c = lam_cli_next(argc, argv, opts)) != -1) {
        switch (c) {
        case 'm':
            if (lam_group_method_parse(optarg, &o->group.method) != 0)
                lam_usage_error("--method wants sorted or best, not '%s'", optarg);
            break;
        case LAM_OPT_REFINE: o->group.refine_passes = (int)lam_opt_long("--refine", optarg, 0, 1000); break;
        case LAM_OPT_SPLIT_TERMS: o->group.split = 1; break;
        case LAM_OPT_NO_SPLIT: o->group.split = 0; break;
        case LAM_OPT_SPLIT_ITERATIONS:
            o->group.split_iterations =
                (int)lam_opt_long("--split-iterations", optarg, 1, 1000000);
            break;
        case LAM_OPT_COMMUTING: o->group.commuting = 1; break;
        case LAM_OPT_CHECK: o->check = 1; break;
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    o->input = lam_cli_operand(argc, argv, "one input stream at a time");
    /* --check writes no stream: its report goes to --report, else -o, else stdout */
    if (!o->check) lam_cli_report_needs(&o->cli, "stream");
}

/* The input stream, refused (freed, program ended) unless it is a pauli
 * stream. */
static lam_reader *open_pauli(const char *path)
{
    lam_error err;
    lam_reader *r;
    lam_kind kind;
    if (lam_reader_open(path, &r, &err)) lam_error_exit(&err);
    int rc = lam_reader_kind(r, &kind, &err);
    if (!rc && kind != LAM_KIND_PAULI && kind != LAM_KIND_UNKNOWN)
        rc = lam_error_at(&err, LAM_EX_DATA, lam_reader_name(r), 0,
                          "a %s stream; lam-group reads pauli streams (lam-map writes them)",
                          lam_kind_name(kind));
    if (rc) {
        lam_reader_close(r);
        lam_error_exit(&err);
    }
    return r;
}

/* Commuting groups when --commuting or when the header says so. */
static int stream_is_commuting(lam_reader *r, int forced)
{
    const char *g = lam_meta_get(lam_reader_meta(r), "grouping");
    return forced || (g && strcmp(g, "commuting") == 0);
}

/* The --tsv columns of both modes (lam-group(1) lists them); the
 * anticommuting figures are lambda_grouped*, the commuting ones
 * group_norm_sum*. */
static const char *const tsv_columns[] = {
    "label", "status", "grouping", "method", "terms", "groups", "lines", "shared_terms",
    "largest_group", "constant", "lambda", "lambda_grouped", "lambda_grouped_greedy",
    "lambda_grouped_refined", "lambda_grouped_split_bound", "group_norm_sum",
    "group_norm_sum_greedy", "group_norm_sum_refined", "group_norm_sum_split_bound",
    "refine_passes", "split", "seconds", NULL};

static lam_report *new_report(const options *o, lam_reader *r)
{
    lam_report *rep = lam_report_new();
    lam_report_columns(rep, tsv_columns);
    lam_report_str(rep, "label", o->cli.label ? o->cli.label : lam_reader_name(r));
    return rep;
}

/* ---------------------------------------------------------------- check */

static void describe_term(char *buf, size_t size, const lam_pauli_set *s, size_t t)
{
    if (lam_pauli_format(buf, size, s->nwords, lam_pauli_x(s, t), lam_pauli_z(s, t)) < 0)
        snprintf(buf, size, "(a long string)");
    else if (!buf[0])
        snprintf(buf, size, "(identity)");
}

/* Describe the offending pair (and where it is) in msg. */
static long describe_pair(char *msg, size_t size, const lam_pauli_set *s, const long *lines,
                          size_t a, size_t b, int commuting)
{
    char sa[200], sb[200];
    describe_term(sa, sizeof sa, s, a);
    describe_term(sb, sizeof sb, s, b);
    const char *verb = commuting ? "anticommutes" : "commutes";
    if (lines) {
        snprintf(msg, size, "group %d: '%s' %s with '%s' of line %ld", (int)s->group[b], sb, verb,
                 sa, lines[a]);
        return lines[b];
    }
    snprintf(msg, size, "group %d: term %zu '%s' %s with term %zu '%s' (terms counted from 1)",
             (int)s->group[b], b + 1, sb, verb, a + 1, sa);
    return 0;
}

static int run_check(const options *o)
{
    lam_reader *r = open_pauli(o->input);
    int commuting = stream_is_commuting(r, o->group.commuting);
    lam_pauli_set s;
    long *lines = NULL;
    lam_error err;
    if (lam_pauli_read_lines(r, &s, &lines, &err)) {
        lam_reader_close(r);
        lam_error_exit(&err);
    }
    size_t a, b;
    if (lam_group_check(&s, commuting, &a, &b)) {
        char msg[600];
        long line = describe_pair(msg, sizeof msg, &s, lines, a, b, commuting);
        lam_error_at(&err, LAM_EX_DATA, lam_reader_name(r), line, "%s", msg);
        free(lines);
        lam_pauli_set_free(&s);
        lam_reader_close(r);
        lam_error_exit(&err);
    }

    lam_pauli_set_merge(&s, 0);
    size_t groups = 0, lines_out = 0;
    double grouped = lam_pauli_set_lambda_grouped(&s, &groups);
    /* the operator itself: strings merged across groups */
    lam_pauli_set op;
    lam_pauli_set_init(&op, s.nqubits);
    for (size_t t = 0; t < s.count; ++t) {
        lam_pauli_set_add(&op, lam_pauli_x(&s, t), lam_pauli_z(&s, t), s.coef[t], -1);
        lines_out += !lam_pauli_is_identity(s.nwords, lam_pauli_x(&s, t), lam_pauli_z(&s, t));
    }
    lam_pauli_set_merge(&op, 0);
    size_t terms = 0;
    for (size_t t = 0; t < op.count; ++t)
        terms += !lam_pauli_is_identity(op.nwords, lam_pauli_x(&op, t), lam_pauli_z(&op, t));
    lam_report *rep = new_report(o, r);
    lam_report_str(rep, "status", "ok");
    lam_report_str(rep, "grouping", commuting ? "commuting" : "anticommuting");
    lam_report_int(rep, "terms", (long long)terms);
    lam_report_int(rep, "lines", (long long)lines_out);
    lam_report_int(rep, "groups", (long long)groups);
    lam_report_num(rep, "constant", lam_pauli_set_constant(&op));
    lam_report_num(rep, "lambda", lam_pauli_set_lambda(&op));
    lam_report_num(rep, commuting ? "group_norm_sum" : "lambda_grouped", grouped);
    lam_pauli_set_free(&op);
    int rc = lam_report_save(rep, o->cli.report ? o->cli.report : o->cli.output, o->cli.tsv, &err);
    lam_report_free(rep);
    free(lines);
    lam_pauli_set_free(&s);
    lam_reader_close(r);
    if (rc) lam_error_exit(&err);
    return 0;
}

/* ---------------------------------------------------------------- group */

static void add_report(lam_report *rep, const options *o, const lam_group_stats *st,
                       double seconds)
{
    int comm = o->group.commuting;
    lam_report_str(rep, "grouping", comm ? "commuting" : "anticommuting");
    lam_report_str(rep, "method", lam_group_method_name(o->group.method));
    lam_report_int(rep, "terms", (long long)st->terms);
    lam_report_int(rep, "groups", (long long)st->groups);
    lam_report_int(rep, "lines", (long long)st->lines);
    lam_report_int(rep, "shared_terms", (long long)st->shared_terms);
    lam_report_int(rep, "largest_group", (long long)st->largest_group);
    lam_report_num(rep, "constant", st->constant);
    lam_report_num(rep, "lambda", st->lambda);
    const char *key = comm ? "group_norm_sum" : "lambda_grouped";
    char name[64];
    snprintf(name, sizeof name, "%s_greedy", key);
    lam_report_num(rep, name, st->lambda_greedy);
    snprintf(name, sizeof name, "%s_refined", key);
    lam_report_num(rep, name, st->lambda_refined);
    lam_report_int(rep, "refine_passes", st->refine_passes_done);
    lam_report_int(rep, "split", st->split_done);
    if (st->split_done) {
        snprintf(name, sizeof name, "%s_split_bound", key);
        lam_report_num(rep, name, st->split_bound);
    }
    lam_report_num(rep, key, st->lambda_grouped);
    lam_report_num(rep, "seconds", seconds);
}

static int run_group(const options *o, int argc, char **argv)
{
    double t0 = lam_seconds();
    lam_reader *r = open_pauli(o->input);
    lam_pauli_set in;
    lam_error err;
    if (lam_pauli_read(r, &in, &err)) {
        lam_reader_close(r);
        lam_error_exit(&err);
    }
    lam_meta meta;
    lam_meta_init(&meta);
    lam_meta_copy(&meta, lam_reader_meta(r));
    lam_report *rep = new_report(o, r);
    lam_reader_close(r);
    /* earlier labels are replaced: merge the strings themselves */
    free(in.group);
    in.group = NULL;
    lam_pauli_set_merge(&in, 0);
    lam_progress("%zu distinct terms on %d qubits", in.count, in.nqubits);

    lam_pauli_set out;
    lam_group_stats st;
    int failed = lam_group_build(&in, &o->group, &out, &st, &err);
    lam_pauli_set_free(&in);
    if (failed) {
        lam_meta_free(&meta);
        lam_report_free(rep);
        lam_error_exit(&err);
    }

    lam_meta_setf(&meta, "qubits", "%d", out.nqubits);
    lam_meta_set(&meta, "grouping", o->group.commuting ? "commuting" : "anticommuting");
    char *history = lam_history_from_argv(argc, argv);
    /* both outputs open before the first byte of either is written */
    lam_output report = {0};
    lam_writer *w = NULL;
    int rc = o->cli.report ? lam_output_open(o->cli.report, &report, &err) : 0;
    if (!rc) rc = lam_writer_open(o->cli.output, o->cli.gzip, &w, &err);
    if (!rc) {
        lam_writer_header(w, LAM_KIND_PAULI, &meta, history);
        rc = lam_pauli_write_terms(w, &out, &err);
        if (!rc) {
            rc = lam_writer_close(w, &err);
            w = NULL;
        }
    }
    add_report(rep, o, &st, lam_seconds() - t0);
    if (!rc && report.fp) {
        lam_report_write(rep, report.fp, o->cli.tsv);
        rc = lam_output_close(&report, 1, &err);
    }
    lam_writer_discard(w);
    lam_output_discard(&report);
    lam_report_free(rep);
    free(history);
    lam_meta_free(&meta);
    lam_pauli_set_free(&out);
    if (rc) lam_error_exit(&err);
    return 0;
}

int main(int argc, char **argv)
{
    options o;
    parse_options(argc, argv, &o);
    return o.check ? run_check(&o) : run_group(&o, argc, argv);
}
