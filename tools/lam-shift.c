/* lam-shift - the optimal symmetry shift H - K, certified by an LP gap. */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "fermion.h"
#include "lp.h"
#include "output.h"
#include "report.h"
#include "shift.h"
#include "norm.h"
#include "spinfree.h"
#include "stream.h"
#include "linalg.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf(
        "Usage: %s [OPTION]... [STREAM]\n"
        "Find the shift K = a1 (N - N0) + a2 (N^2 - N0^2) + sum_pq xi_pq E_pq (N - N0)\n"
        "that minimizes the Pauli (Majorana) one-norm lambda of H - K, and write H - K.\n"
        "K is zero on every N0-electron state, so H - K has the eigenvalues of H (Eh)\n"
        "there.  The minimum is found as a linear program; the report gives lambda\n"
        "before and after (Eh) and the certified gap to the true minimum.\n"
        "Input: spinfree stream (fermion streams that are spin-free are folded).\n\n"
        "  -n, --electrons N    target electron number N0 (default: electrons: of the\n"
        "                       stream)\n"
        "      --terms LIST     parts of K: a1,a2,xi (default), xi-diag (only the\n"
        "                       diagonal of xi), and with --spin b1,b2,zeta,zeta-diag\n"
        "      --spin           add b1 (Sz - S0) + b2 (Sz^2 - S0^2) + sum zeta_pq E_pq\n"
        "                       (Sz - S0); H - K is then written as a fermion stream\n"
        "      --sz S           target spin projection S0 for --spin (default: ms2/2\n"
        "                       of the stream), e.g. 0 or 0.5\n"
        "      --spin-order O   fermion output: interleaved (default) or blocked\n"
        "      --emit-shift     write K instead of H - K\n"
        "      --emit-recorded  optimize nothing: write the K recorded in the input's\n"
        "                       shift-* metadata (H = input + that K)\n"
        "      --gap G          stop at relative gap G (default 1e-10)\n"
        "      --max-iter N     interior-point iterations at most (default 200)\n"
        "  -r, --report FILE    write the report to FILE ('-': stdout, with -o); FILE is\n"
        "                       opened before the operator is written\n"
        "  -t, --tsv            report as one header row and one value row (a fixed set\n"
        "                       of columns, NA where a value does not apply)\n"
        "  -l, --label TEXT     label column of the report (default: the input's name)\n"
        "      --dump-lp FILE   write the linear program (for checking with other\n"
        "                       solvers)\n"
        "  -o, --output FILE    write the operator to FILE instead of stdout\n"
        "  -z, --gzip           gzip the output\n"
        "      --progress       progress on stderr (default: when a terminal)\n"
        "  -j, --threads N      BLAS threads (default 1; OPENBLAS_NUM_THREADS is not read)\n"
        LAM_CLI_HELP_TAIL
        "Example:\n"
        "  lam-ints h2o.fcidump | %s --report shift.txt | lam-map | lam-norm\n",
        lam_program(), lam_program());
    exit(0);
}

typedef struct {
    long electrons;
    int ms2, have_ms2;
    unsigned terms;
    int spin, emit_shift, emit_recorded;
    lam_spin_order order;
    double gap;
    long max_iter;
    const char *dump, *input;
    lam_cli_values cli; /* -o, -z, -r, -t, -l, -j */
} options;

static void parse_options(int argc, char **argv, options *o)
{
    static const struct option opts[] = {
        LAM_CLI_ELECTRONS, LAM_CLI_TERMS, LAM_CLI_SPIN, LAM_CLI_SZ, LAM_CLI_SPIN_ORDER,
        LAM_CLI_EMIT_SHIFT, LAM_CLI_EMIT_RECORDED, LAM_CLI_GAP, LAM_CLI_MAX_ITER, LAM_CLI_DUMP_LP,
        LAM_CLI_REPORT_OUT, LAM_CLI_STREAM_OUT, LAM_CLI_THREADS, LAM_CLI_ALLOW_EMPTY,
        LAM_CLI_STANDARD, LAM_CLI_END};
    memset(o, 0, sizeof *o);
    o->electrons = -1;
    o->terms = 0;
    o->gap = 1e-10;
    o->max_iter = 200;
    int explicit_terms = 0, c;
    while ((c = lam_cli_next(argc, argv, opts)) != -1) {
        switch (c) {
        case 'n': o->electrons = lam_opt_long("--electrons", optarg, 0, 1L << 20); break;
        case LAM_OPT_TERMS:
            if (lam_shift_parse_terms(optarg, &o->terms) != 0 || o->terms == 0)
                lam_usage_error("--terms wants a comma-separated list of a1, a2, xi, xi-diag, "
                                "b1, b2, zeta, zeta-diag, not '%s'", optarg);
            explicit_terms = 1;
            break;
        case LAM_OPT_SPIN: o->spin = 1; break;
        case LAM_OPT_SZ: {
            double sz = lam_opt_double("--sz", optarg);
            if (fabs(sz) > 1e6 || 2 * sz != floor(2 * sz))
                lam_usage_error("--sz wants a whole or half-whole number, not '%s'", optarg);
            o->ms2 = (int)(2 * sz);
            o->have_ms2 = 1;
            break;
        }
        case LAM_OPT_SPIN_ORDER: o->order = lam_cli_spin_order(optarg); break;
        case LAM_OPT_EMIT_SHIFT: o->emit_shift = 1; break;
        case LAM_OPT_EMIT_RECORDED: o->emit_recorded = 1; break;
        case LAM_OPT_GAP:
            o->gap = lam_opt_double("--gap", optarg);
            if (!(o->gap > 0) || o->gap >= 1)
                lam_usage_error("--gap wants a relative gap between 0 and 1, not '%s'", optarg);
            break;
        case LAM_OPT_MAX_ITER: o->max_iter = lam_opt_long("--max-iter", optarg, 1, 100000); break;
        case LAM_OPT_DUMP_LP: o->dump = optarg; break;
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    lam_blas_threads(o->cli.threads);
    lam_cli_report_needs(&o->cli, "operator");
    if (!explicit_terms) o->terms = LAM_SHIFT_DEFAULT | (o->spin ? LAM_SHIFT_SPIN_DEFAULT : 0);
    if ((o->terms & LAM_SHIFT_SPIN_TERMS) && !o->spin)
        lam_usage_error("--terms b1, b2, zeta and zeta-diag need --spin");
    o->input = lam_cli_operand(argc, argv, "one input stream at a time");
}

/* The operator into *out (NULL on error). */
static int read_operator(lam_reader *r, lam_spinfree **out, lam_error *err)
{
    lam_kind kind;
    int rc = lam_spinfree_read_if_kind(r, &kind, out, err);
    if (rc || *out) return rc;
    if (kind == LAM_KIND_FERMION) {
        lam_spin_order order;
        lam_fermion_op op;
        long electrons, ms2;
        if ((rc = lam_reader_spin_order(r, LAM_SPIN_INTERLEAVED, &order, err)) ||
            (rc = lam_fermion_read(r, &op, err)))
            return rc;
        lam_spinfree *sf;
        rc = lam_shift_fold_fermion(&op, order, lam_reader_name(r), &sf, err);
        lam_fermion_free(&op);
        if (rc) return rc;
        if ((rc = lam_reader_meta_long(r, "electrons", -1, 0, 2L * sf->n, &electrons, err)) ||
            (rc = lam_reader_meta_long(r, "ms2", 0, -2L * sf->n, 2L * sf->n, &ms2, err))) {
            lam_spinfree_free(sf);
            return rc;
        }
        sf->electrons = (int)electrons;
        sf->ms2 = (int)ms2;
        *out = sf;
        return 0;
    }
    if (kind == LAM_KIND_UNKNOWN)
        return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0,
                            "an empty stream without a kind: header; nothing to shift");
    return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0,
                        "lam-shift reads spinfree or fermion streams, not %s", lam_kind_name(kind));
}

/* The shift to solve for; usage errors come back with code LAM_EX_USAGE. */
static int resolve_target(const options *o, lam_spinfree *sf, const char *src, lam_shift **k, lam_error *err)
{
    long n0 = o->electrons >= 0 ? o->electrons : sf->electrons;
    if (n0 < 0)
        return lam_error_set(err, LAM_EX_USAGE, "%s has no 'electrons:' line: give --electrons N", src);
    if (n0 > 2L * sf->n)
        return lam_error_set(err, LAM_EX_USAGE, "%ld electrons do not fit in %d orbitals", n0, sf->n);
    int ms2 = o->have_ms2 ? o->ms2 : sf->ms2;
    if (o->spin) {
        long room = n0 < 2L * sf->n - n0 ? n0 : 2L * sf->n - n0;
        if (labs((long)ms2) > room || (n0 - ms2) % 2 != 0)
            return lam_error_set(err, LAM_EX_USAGE, "no state of %ld electrons in %d orbitals has Sz = %g", n0,
                                 sf->n, 0.5 * ms2);
    }
    sf->electrons = (int)n0;
    *k = lam_shift_new(sf->n, (int)n0, ms2, o->terms);
    return 0;
}

static void show_iteration(int it, double primal, double dual, void *ctx)
{
    double fixed = *(const double *)ctx;
    lam_progress("iteration %d: lambda %.12g Eh, lower bound %.12g Eh", it, fixed + primal,
                 fixed + dual);
}

/* The shift recorded in a shifted stream, written as an operator: with it
 * the original is rebuilt (lam-sum shifted recorded). */
static int emit_recorded(const options *o, int argc, char **argv, lam_error *err)
{
    lam_reader *r = NULL;
    lam_shift *k = NULL;
    lam_meta out;
    char *history = NULL;
    lam_writer *w = NULL;
    long n = -1, modes;
    lam_meta_init(&out);
    int rc = lam_reader_open(o->input, &r, err);
    if (rc) goto done;
    lam_meta *meta = lam_reader_meta(r);
    rc = lam_reader_meta_long(r, "orbitals", -1, 0, 4096, &n, err);
    if (!rc && n < 0 && !(rc = lam_reader_meta_long(r, "modes", -2, 0, 8192, &modes, err)))
        n = modes / 2;
    if (!rc && n < 0)
        rc = lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0,
                          "no 'orbitals:' or 'modes:' line");
    if (!rc && !(rc = lam_shift_recorded(meta, (int)n, lam_reader_name(r), &k, err)) && !k)
        rc = lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0, "no shift-* metadata to emit");
    lam_spin_order order = LAM_SPIN_INTERLEAVED;
    if (!rc && lam_shift_has_spin(k))
        rc = lam_reader_spin_order(r, LAM_SPIN_INTERLEAVED, &order, err);
    if (rc) goto done;
    lam_meta_copy(&out, meta);
    lam_shift_describe(k, &out);
    history = lam_history_from_argv(argc, argv);
    if ((rc = lam_writer_open(o->cli.output, o->cli.gzip, &w, err))) goto done;
    if (lam_shift_has_spin(k)) {
        lam_fermion_op op;
        lam_shift_apply_fermion(NULL, k, order, &op);
        lam_writer_header(w, LAM_KIND_FERMION, &out, history);
        lam_fermion_write_terms(w, &op);
        lam_fermion_free(&op);
    } else {
        lam_spinfree *kk;
        if ((rc = lam_shift_apply(NULL, k, &kk, err))) goto done;
        lam_spinfree_describe(kk, &out);
        lam_writer_header(w, LAM_KIND_SPINFREE, &out, history);
        lam_spinfree_write_terms(w, kk);
        lam_spinfree_free(kk);
    }
    rc = lam_writer_close(w, err);
    w = NULL;
done:
    lam_writer_discard(w);
    free(history);
    lam_meta_free(&out);
    lam_shift_free(k);
    lam_reader_close(r);
    return rc;
}

static void report_matrix(lam_report *rep, const char *name, const lam_shift *k,
                          double (*get)(const lam_shift *, int, int))
{
    double trace = 0, big = 0;
    long nonzero = 0;
    for (int p = 0; p < k->n; ++p)
        for (int q = p; q < k->n; ++q) {
            double v = get(k, p, q);
            if (p == q) trace += v;
            big = fmax(big, fabs(v));
            nonzero += v != 0;
        }
    char key[64];
    snprintf(key, sizeof key, "%s_trace", name);
    lam_report_num(rep, key, trace);
    snprintf(key, sizeof key, "%s_max_abs", name);
    lam_report_num(rep, key, big);
    snprintf(key, sizeof key, "%s_nonzero", name);
    lam_report_int(rep, key, nonzero);
}

/* The --tsv columns with and without --spin (lam-shift(1) lists them). */
static const char *const tsv_columns[] = {
    "label", "lambda_before", "lambda_after", "gap", "relative_gap", "lambda_lower_bound",
    "converged", "electrons", "a1", "a2", "xi_trace", "xi_max_abs", "xi_nonzero", "sz", "b1",
    "b2", "zeta_trace", "zeta_max_abs", "zeta_nonzero", "orbitals", "parameters", "rows",
    "blocks", "largest_block", "iterations", "lp_seconds", "solve_seconds", "seconds", NULL};

/* What a run holds; main frees it on every exit path. */
typedef struct {
    lam_reader *r;
    lam_spinfree *h;
    lam_shift *k, *earlier, *total;
    lam_l1_problem lp;
    lam_meta meta;
    char *history;
    lam_report *rep;
    lam_output report; /* open until the report is written */
    lam_writer *w;    /* open until the operator is written */
} shift_run;

static void shift_run_free(shift_run *sr)
{
    lam_writer_discard(sr->w);
    lam_output_discard(&sr->report);
    lam_report_free(sr->rep);
    free(sr->history);
    lam_meta_free(&sr->meta);
    lam_l1_free(&sr->lp);
    lam_shift_free(sr->k);
    lam_shift_free(sr->earlier);
    lam_shift_free(sr->total);
    lam_spinfree_free(sr->h);
    lam_reader_close(sr->r);
}

/* The operator and its shift (k), checked against an earlier shift. */
static int read_and_target(const options *o, shift_run *sr, lam_error *err)
{
    double t0 = lam_seconds();
    if (lam_reader_open(o->input, &sr->r, err)) return err->code;
    lam_progress("reading %s", lam_reader_name(sr->r));
    if (read_operator(sr->r, &sr->h, err)) return err->code;
    lam_progress("read %d orbitals in %.2f s", sr->h->n, lam_seconds() - t0);
    const char *src = lam_reader_name(sr->r);
    if (lam_spinfree_validate(sr->h, src, "the one-norm the shift minimizes", err) != 0) return err->code;
    if (resolve_target(o, sr->h, src, &sr->k, err)) return err->code;
    if (lam_shift_recorded(lam_reader_meta(sr->r), sr->h->n, src, &sr->earlier, err)) return err->code;
    const lam_shift *k = sr->k, *earlier = sr->earlier;
    if (earlier && (earlier->electrons != k->electrons ||
                    (lam_shift_has_spin(k) && lam_shift_has_spin(earlier) && earlier->ms2 != k->ms2)))
        return lam_error_at(err, LAM_EX_DATA, src, 0,
                            "the stream was already shifted for %d electrons (2Sz %d); a second shift "
                            "for %d (2Sz %d) would leave no block as in the original operator",
                            earlier->electrons, earlier->ms2, k->electrons, k->ms2);
    return 0;
}

/* Both outputs (and the LP dump) open before the first byte of either is
 * written; the dump is written and closed here. */
static int open_outputs(const options *o, shift_run *sr, double fixed, lam_error *err)
{
    if (o->cli.report && lam_output_open(o->cli.report, &sr->report, err)) return err->code;
    lam_output dump = {0};
    if (o->dump && lam_output_open_file(o->dump, &dump, err)) return err->code;
    if (lam_writer_open(o->cli.output, o->cli.gzip, &sr->w, err)) {
        lam_output_discard(&dump);
        return err->code;
    }
    if (!dump.fp) return 0;
    lam_l1_write(dump.fp, &sr->lp, fixed);
    return lam_output_close(&dump, 1, err);
}

/* H - K (or K) written as a spin-free or, with spin terms, fermion stream;
 * after: the LP's value, which the operator written must have. */
static int write_operator(const options *o, shift_run *sr, double after, lam_error *err)
{
    lam_shift *k = sr->k;
    const lam_shift *recorded = sr->total ? sr->total : k;
    lam_spinfree *h = sr->h;
    if (!lam_shift_has_spin(k)) {
        lam_spinfree *out;
        if (o->emit_shift) {
            if (lam_shift_apply(NULL, k, &out, err)) return err->code;
        } else {
            /* in place: H is not needed any more, and at 80 orbitals a copy
             * of its integrals is 330 MB */
            if (lam_shift_subtract(h, k, err)) return err->code;
            out = h;
            /* the operator written is the one whose norm is reported */
            double check = lam_spinfree_lambda(out);
            if (fabs(check - after) > 1e-9 * fmax(1, after))
                return lam_error_set(err, LAM_EX_SOFTWARE, "lambda of H - K is %.17g, the LP says %.17g",
                                     check, after);
        }
        lam_spinfree_describe(out, &sr->meta);
        lam_shift_describe(recorded, &sr->meta);
        lam_writer_header(sr->w, LAM_KIND_SPINFREE, &sr->meta, sr->history);
        lam_spinfree_write_terms(sr->w, out);
        if (out != h) lam_spinfree_free(out);
    } else {
        lam_fermion_op out;
        lam_shift_apply_fermion(o->emit_shift ? NULL : h, k, o->order, &out);
        lam_meta_remove(&sr->meta, "orbitals");
        lam_meta_setf(&sr->meta, "modes", "%d", 2 * h->n);
        lam_meta_set(&sr->meta, "spin-order", lam_spin_order_name(o->order));
        lam_meta_setf(&sr->meta, "electrons", "%d", k->electrons);
        lam_meta_setf(&sr->meta, "ms2", "%d", k->ms2);
        lam_shift_describe(recorded, &sr->meta);
        lam_writer_header(sr->w, LAM_KIND_FERMION, &sr->meta, sr->history);
        lam_fermion_write_terms(sr->w, &out);
        lam_fermion_free(&out);
    }
    lam_writer *w = sr->w;
    sr->w = NULL;
    return lam_writer_close(w, err);
}

static int shift(const options *o, int argc, char **argv, shift_run *sr, lam_error *err)
{
    double t0 = lam_seconds();
    if (read_and_target(o, sr, err)) return err->code;
    lam_spinfree *h = sr->h;
    lam_shift *k = sr->k;
    const char *src = lam_reader_name(sr->r);

    double t_lp = lam_seconds();
    double fixed;
    if (lam_shift_build_lp(h, k, &sr->lp, &fixed, err)) return err->code;
    lam_progress("%d orbitals, %d parameters, %zu rows depend on them", h->n, k->nparams, sr->lp.rows);
    lam_l1_options lo;
    lam_l1_default_options(&lo);
    lo.rel_gap = o->gap;
    lo.offset = fixed;
    lo.max_iter = (int)o->max_iter;
    lam_l1_result res;
    double t_solve = lam_seconds();
    if (lam_l1_solve(&sr->lp, &lo, show_iteration, &fixed, k->x, &res, err)) return err->code;
    t_solve = lam_seconds() - t_solve;
    t_lp = lam_seconds() - t_lp;
    /* the metadata describes the whole shift since the original operator */
    if (sr->earlier && !o->emit_shift) sr->total = lam_shift_sum(sr->earlier, k);

    double before = lam_spinfree_lambda(h);
    double after = fixed + res.primal;
    lam_meta_copy(&sr->meta, lam_reader_meta(sr->r));
    sr->history = lam_history_from_argv(argc, argv);
    lam_progress("optimum found in %.2f s; writing %s", t_lp, o->emit_shift ? "K" : "H - K");
    if (open_outputs(o, sr, fixed, err)) return err->code;
    if (write_operator(o, sr, after, err)) return err->code;

    lam_report *rep = sr->rep = lam_report_new();
    lam_report_columns(rep, tsv_columns);
    lam_report_str(rep, "label", o->cli.label ? o->cli.label : src);
    lam_report_num(rep, "lambda_before", before);
    lam_report_num(rep, "lambda_after", after);
    lam_report_num(rep, "gap", res.primal - res.dual);
    lam_report_num(rep, "relative_gap", (res.primal - res.dual) / fmax(after, 1e-300));
    lam_report_num(rep, "lambda_lower_bound", fixed + res.dual);
    lam_report_str(rep, "converged", res.converged ? "yes" : "no");
    lam_report_int(rep, "electrons", k->electrons);
    lam_report_num(rep, "a1", lam_shift_a1(k));
    lam_report_num(rep, "a2", lam_shift_a2(k));
    report_matrix(rep, "xi", k, lam_shift_xi);
    if (lam_shift_has_spin(k)) {
        lam_report_num(rep, "sz", 0.5 * k->ms2);
        lam_report_num(rep, "b1", lam_shift_b1(k));
        lam_report_num(rep, "b2", lam_shift_b2(k));
        report_matrix(rep, "zeta", k, lam_shift_zeta);
    }
    lam_report_int(rep, "orbitals", h->n);
    lam_report_int(rep, "parameters", k->nparams);
    lam_report_int(rep, "rows", (long long)sr->lp.rows);
    lam_report_int(rep, "blocks", res.blocks);
    lam_report_int(rep, "largest_block", res.largest_block);
    lam_report_int(rep, "iterations", res.iterations);
    lam_report_num(rep, "lp_seconds", t_lp);
    lam_report_num(rep, "solve_seconds", t_solve);
    lam_report_num(rep, "seconds", lam_seconds() - t0);
    if (sr->report.fp) {
        lam_report_write(rep, sr->report.fp, o->cli.tsv);
        if (lam_output_close(&sr->report, 1, err)) return err->code;
    }
    if (!res.converged)
        lam_warn("warning: the relative gap %.3g did not reach %.3g in %d iterations; "
                 "H - K is exact, only possibly not the best",
                 (res.primal - res.dual) / fmax(after, 1e-300), o->gap, res.iterations);
    return 0;
}

int main(int argc, char **argv)
{
    options o;
    parse_options(argc, argv, &o);
    lam_error err;
    int rc;
    if (o.emit_recorded) {
        rc = emit_recorded(&o, argc, argv, &err);
    } else {
        shift_run sr;
        memset(&sr, 0, sizeof sr);
        lam_meta_init(&sr.meta);
        rc = shift(&o, argc, argv, &sr, &err);
        shift_run_free(&sr);
    }
    lam_exit_on_error(rc, &err);
    return 0;
}
