/* lam-factor - fermionic fragments (double factorization, greedy full-rank
 * fragments) of a spin-free Hamiltonian, written as a fragments stream. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "factor.h"
#include "fragments.h"
#include "norm.h"
#include "output.h"
#include "report.h"
#include "spinfree.h"
#include "stream.h"
#include "linalg.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [STREAM]\n"
           "Split a spin-free Hamiltonian (file or stdin) into fermionic fragments, each an\n"
           "orbital rotation with a quadratic form of occupation numbers, and write it as a\n"
           "linear combination of rotated reflections R = 1 - 2n (a fragments stream).\n\n"
           "  -m, --method M        double (double factorization, default) or full-rank\n"
           "                        (greedy fragments fitted with L-BFGS)\n"
           "      --tol X           Eh; double: drop the smallest factors while the sum of\n"
           "                        their eigenvalues stays <= X (default 1e-10); full-rank:\n"
           "                        add fragments until the two-body residual (Frobenius\n"
           "                        norm) is <= X (default 1e-6)\n"
           "      --cutoff X        leave out unitaries with |c| <= X Eh (default 1e-14)\n"
           "      --max-fragments N full-rank: fail beyond N fragments (default 10 n(n+1)/2+10)\n"
           "      --max-iter N      full-rank: L-BFGS iterations per fragment (default 500)\n"
           "  -r, --report FILE     write figures (lambda in Eh, fragments, unitaries, errors)\n"
           "                        as key<TAB>value lines to FILE ('-' is stdout with -o);\n"
           "                        FILE is opened before the stream is written\n"
           "  -t, --tsv             the report as one header row and one value row (a fixed\n"
           "                        set of columns, NA where a figure does not apply)\n"
           "  -l, --label TEXT      label column of the report (default: the input's name)\n"
           "  -o, --output FILE     write the stream to FILE instead of stdout\n"
           "  -z, --gzip            gzip the stream\n"
           "      --progress        show progress on stderr (default: when it is a terminal)\n"
           "  -j, --threads N       BLAS threads (default 1; OPENBLAS_NUM_THREADS is not read)\n"
           "  -q, --quiet           no progress\n"
           "  -h, --help            show this help\n"
           "      --allow-empty     read an empty input as the zero operator\n"
           "  -V, --version         show the version\n\n"
           "Example:\n"
           "  lam-ints h4.fcidump | %s --method double --tol 1e-6 | lam-norm\n",
           lam_program(), lam_program());
    exit(0);
}

typedef struct {
    lam_factor_method method;
    double tol, cutoff;
    int tol_set, cutoff_set;
    long max_fragments, max_iter;
    const char *in;
    lam_cli_values cli; /* -o, -z, -r, -t, -l, -j */
} cli;

static lam_factor_method parse_method(const char *s)
{
    if (strcmp(s, "double") == 0) return LAM_FACTOR_DOUBLE;
    if (strcmp(s, "full-rank") == 0) return LAM_FACTOR_FULL_RANK;
    lam_usage_error("--method wants double or full-rank, not '%s'", s);
}

static double non_negative(const char *opt, const char *arg)
{
    double x = lam_opt_double(opt, arg);
    if (!(x >= 0.0)) lam_usage_error("%s wants a number >= 0, not '%s'", opt, arg);
    return x;
}

static void parse_args(int argc, char **argv, cli *c)
{
    static const struct option opts[] = {
        LAM_CLI_METHOD, LAM_CLI_TOL, LAM_CLI_CUTOFF, LAM_CLI_MAX_FRAGMENTS, LAM_CLI_MAX_ITER,
        LAM_CLI_REPORT_OUT, LAM_CLI_STREAM_OUT, LAM_CLI_THREADS, LAM_CLI_ALLOW_EMPTY,
        LAM_CLI_STANDARD, LAM_CLI_END};
    int o;
    memset(c, 0, sizeof *c);
    c->method = LAM_FACTOR_DOUBLE;
    c->max_fragments = c->max_iter = -1;
    while ((o = lam_cli_next(argc, argv, opts)) != -1) {
        switch (o) {
        case 'm': c->method = parse_method(optarg); break;
        case LAM_OPT_TOL: c->tol = non_negative("--tol", optarg); c->tol_set = 1; break;
        case LAM_OPT_CUTOFF: c->cutoff = non_negative("--cutoff", optarg); c->cutoff_set = 1; break;
        case LAM_OPT_MAX_FRAGMENTS: c->max_fragments = lam_opt_long("--max-fragments", optarg, 1, 100000000); break;
        case LAM_OPT_MAX_ITER: c->max_iter = lam_opt_long("--max-iter", optarg, 0, 100000000); break;
        default: lam_cli_option(o, argv, usage, &c->cli);
        }
    }
    lam_blas_threads(c->cli.threads);
    c->in = lam_cli_operand(argc, argv, "one input stream at a time");
    if (c->cli.label && !c->cli.tsv && !c->cli.report)
        lam_usage_error("--label names the --report; give --report FILE");
    lam_cli_report_needs(&c->cli, "stream");
    if (c->method == LAM_FACTOR_FULL_RANK && c->tol_set && c->tol == 0.0)
        lam_usage_error("--tol 0 cannot be reached by full-rank fragments: give a positive "
                        "residual");
}

/* The operator into *out (NULL on error). */
static int read_operator(lam_reader *r, lam_spinfree **out, lam_error *err)
{
    lam_kind kind;
    int rc = lam_reader_kind(r, &kind, err);
    *out = NULL;
    if (rc) return rc;
    /* An empty input is refused too: it is most often a failed program
     * upstream in the pipeline, not the zero operator. */
    if (kind != LAM_KIND_SPINFREE)
        return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0,
                            "lam-factor reads a spinfree stream, not %s (make one with lam-ints)",
                            kind == LAM_KIND_UNKNOWN ? "an empty or unrecognised one"
                                                     : lam_kind_name(kind));
    lam_spinfree *sf;
    if ((rc = lam_spinfree_read(r, &sf, err))) return rc;
    if ((rc = lam_spinfree_validate(sf, lam_reader_name(r), "the factorization", err))) {
        lam_spinfree_free(sf);
        return rc;
    }
    *out = sf;
    return 0;
}

static void options_from_cli(const cli *c, int n, lam_factor_options *o)
{
    lam_factor_defaults(o, c->method, n);
    if (c->tol_set) o->tol = c->tol;
    if (c->cutoff_set) o->cutoff = c->cutoff;
    if (c->max_fragments > 0) o->max_fragments = (int)c->max_fragments;
    if (c->max_iter >= 0) o->max_iter = (int)c->max_iter;
}

static const char *method_name(lam_factor_method m)
{
    return m == LAM_FACTOR_DOUBLE ? "double" : "full-rank";
}

static void describe_result(lam_meta *meta, const lam_fragments *fr, const lam_factor_options *o,
                            const lam_factor_info *info)
{
    char buf[LAM_DOUBLE_BUF];
    lam_fragments_describe(fr, meta);
    lam_meta_set(meta, "method", method_name(o->method));
    lam_format_double(buf, sizeof buf, o->tol);
    lam_meta_set(meta, "tol", buf);
    if (o->method == LAM_FACTOR_DOUBLE) {
        lam_format_double(buf, sizeof buf, info->discarded_weight);
        lam_meta_set(meta, "discarded-weight", buf);
    }
    lam_format_double(buf, sizeof buf, info->integral_max_error);
    lam_meta_set(meta, "integral-max-error", buf);
    lam_format_double(buf, sizeof buf, info->integral_norm_error);
    lam_meta_set(meta, "integral-norm-error", buf);
}

/* The --tsv columns, whichever the method (lam-factor(1) lists them):
 * the fragments figures lam-norm also gives, then lam-factor's own, named
 * scope first (lambda.h1: the one-body part of lambda, ...). */
static const char *const tsv_columns[] = {
    "label", "kind", "terms", "constant", "lambda", "unitaries", "fragments", "orbitals",
    "qubits", "method", "tol", "fragments.h2", "factors.total", "trunc.weight",
    "fit.iterations", "lambda.h1", "lambda.h2", "lambda.pauli", "residual.h2",
    "error.max", "error.frobenius", "error.constant", "cutoff",
    "dropped.unitaries", "dropped.lambda", NULL};

static lam_report *make_report(const cli *c, const char *input, const lam_spinfree *sf,
                               const lam_fragments *fr, const lam_factor_options *o,
                               const lam_factor_info *info)
{
    lam_report *rep = lam_report_new();
    lam_report_columns(rep, tsv_columns);
    lam_report_str(rep, "label", c->cli.label ? c->cli.label : input);
    lam_fragments_report(fr, rep);
    double lambda = lam_fragments_lambda(fr, -1), one = lam_fragments_lambda(fr, 0);
    lam_report_str(rep, "method", method_name(o->method));
    lam_report_num(rep, "tol", o->tol);
    lam_report_int(rep, "fragments.h2", info->factors_kept);
    if (o->method == LAM_FACTOR_DOUBLE) {
        lam_report_int(rep, "factors.total", info->factors_total);
        lam_report_num(rep, "trunc.weight", info->discarded_weight);
    } else {
        lam_report_int(rep, "fit.iterations", info->iterations);
    }
    lam_report_num(rep, "lambda.h1", one);
    lam_report_num(rep, "lambda.h2", lambda - one);
    lam_report_num(rep, "lambda.pauli", lam_spinfree_lambda(sf));
    lam_report_num(rep, "residual.h2", info->residual_norm);
    lam_report_num(rep, "error.max", info->integral_max_error);
    lam_report_num(rep, "error.frobenius", info->integral_norm_error);
    lam_report_num(rep, "error.constant", info->constant_error);
    lam_report_num(rep, "cutoff", o->cutoff);
    lam_report_int(rep, "dropped.unitaries", (long long)info->dropped_unitaries);
    lam_report_num(rep, "dropped.lambda", info->dropped_lambda);
    return rep;
}

int main(int argc, char **argv)
{
    cli c;
    parse_args(argc, argv, &c);
    lam_error err;
    lam_reader *r = NULL;
    lam_spinfree *sf = NULL;
    lam_fragments *fr = NULL;
    lam_meta meta;
    char *history = NULL;
    lam_output report = {0};
    lam_writer *w = NULL;
    lam_meta_init(&meta);
    int rc = lam_reader_open(c.in, &r, &err);
    if (!rc) rc = read_operator(r, &sf, &err);
    if (rc) goto done;
    lam_factor_options o;
    lam_factor_info info;
    options_from_cli(&c, sf->n, &o);
    double t0 = lam_seconds();
    if ((rc = lam_factor(sf, &o, &info, &fr, &err))) goto done;
    lam_progress("%s: %d fragments in %.2f s", method_name(o.method), fr->nfrag,
                 lam_seconds() - t0);

    lam_meta_copy(&meta, lam_reader_meta(r));
    describe_result(&meta, fr, &o, &info);
    history = lam_history_from_argv(argc, argv);
    /* both outputs open before the first byte of either is written */
    if (c.cli.report && (rc = lam_output_open(c.cli.report, &report, &err))) goto done;
    if ((rc = lam_writer_open(c.cli.output, c.cli.gzip, &w, &err))) goto done;
    lam_writer_header(w, LAM_KIND_FRAGMENTS, &meta, history);
    lam_fragments_write_terms(w, fr);
    rc = lam_writer_close(w, &err);
    w = NULL;
    if (rc) goto done;
    if (report.fp) {
        lam_report *rep = make_report(&c, lam_reader_name(r), sf, fr, &o, &info);
        lam_report_write(rep, report.fp, c.cli.tsv);
        lam_report_free(rep);
        rc = lam_output_close(&report, 1, &err);
    }

done:
    lam_writer_discard(w);
    lam_output_discard(&report);
    free(history);
    lam_meta_free(&meta);
    lam_fragments_free(fr);
    lam_spinfree_free(sf);
    lam_reader_close(r);
    if (rc) lam_error_exit(&err);
    return 0;
}
