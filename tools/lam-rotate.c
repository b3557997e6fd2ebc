/* lam-rotate - the same operator in real orbitals chosen to lower lambda. */
#include <cblas.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "cli.h"
#include "output.h"
#include "report.h"
#include "rotate.h"
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
        "Write the spin-free operator H in rotated real orbitals (h' = U^T h U, the\n"
        "same for each index of (pq|rs)), with U chosen to lower the one-norm lambda\n"
        "(Eh).  Every eigenvalue of H is unchanged; lambda is not.  U = U0 exp(K),\n"
        "K antisymmetric, found by L-BFGS on a smoothed lambda, then polished on\n"
        "lambda itself; the result is never worse than the start for the objective.\n"
        "Input: spinfree stream with the 8-fold symmetry of real orbitals.\n\n"
        "      --objective O    pauli (default): closed-form Pauli lambda;\n"
        "                       shifted: lambda after the optimal symmetry shift of\n"
        "                       lam-shift; grouped: lambda after that shift and\n"
        "                       anticommuting grouping (lam-group); er: maximize the\n"
        "                       Edmiston-Ruedenberg sum of (ii|ii)\n"
        "      --start S        given (default): the input orbitals; er: their\n"
        "                       Edmiston-Ruedenberg localization first; or a FILE\n"
        "                       holding U0 (as --matrix writes it)\n"
        "      --starts N       N more starts: U0 times a random rotation (default 8\n"
        "                       up to 16 orbitals, else 0)\n"
        "  -S, --seed N         seed of the random starts (default 1)\n"
        "      --within SPACES  rotate only inside orbital blocks: 0-4,5-9 (commas\n"
        "                       separate blocks, + joins ranges: 0-2+7,3-6; orbitals\n"
        "                       in no block stay), or occ-virt (first N/2 and the rest)\n"
        "  -n, --electrons N    electron number for the shift and occ-virt (default:\n"
        "                       electrons: of the stream)\n"
        "      --matrix FILE    write U (one row a line; new orbital j = sum_p U_pj\n"
        "                       old orbital p)\n"
        "      --max-iter N     L-BFGS iterations per stage (default 200)\n"
        "      --stages N       smoothing stages before the polish (default 3)\n"
        "      --mu MU          first smoothing width in Eh (default 1e-3; /10 a stage)\n"
        "      --rounds N       shift/rotation alternations (default 6)\n"
        "      --gtol G         gradient norm that ends a stage (default 1e-7)\n"
        "      --ftol F         a stage also ends when ten iterations gain less than\n"
        "                       F of the objective (default 1e-6)\n"
        "  -j, --threads N      BLAS threads (default 1; OPENBLAS_NUM_THREADS is not read)\n"
        "  -r, --report FILE    write the report to FILE (default: stderr)\n"
        "  -t, --tsv            report as one header row and one value row\n"
        "  -l, --label TEXT     label column in the --tsv report\n"
        "  -o, --output FILE    write the operator to FILE instead of stdout\n"
        "  -z, --gzip           gzip the output\n"
        "      --progress       progress on stderr (default: when a terminal)\n"
        "  -q, --quiet          no progress\n"
        "  -h, --help           show this help\n"
        "  -V, --version        show the version\n\n"
        "Example:\n"
        "  lam-ints h2o.fcidump | %s --objective shifted | lam-shift | lam-map | lam-norm\n",
        lam_program(), lam_program());
    exit(0);
}

typedef struct {
    lam_rotate_options ro;
    long electrons;
    const char *start, *within, *matrix, *input;
    lam_cli_values cli; /* -o, -z, -r, -t, -l, -j */
} options;

static void parse_options(int argc, char **argv, options *o)
{
    static const struct option opts[] = {
        LAM_CLI_OBJECTIVE, LAM_CLI_START_ORBITALS, LAM_CLI_STARTS, LAM_CLI_SEED, LAM_CLI_WITHIN,
        LAM_CLI_ELECTRONS, LAM_CLI_MATRIX, LAM_CLI_MAX_ITER, LAM_CLI_STAGES, LAM_CLI_MU,
        LAM_CLI_ROUNDS, LAM_CLI_GTOL, LAM_CLI_FTOL, LAM_CLI_THREADS, LAM_CLI_REPORT_OUT,
        LAM_CLI_STREAM_OUT, LAM_CLI_STANDARD, LAM_CLI_END};
    memset(o, 0, sizeof *o);
    lam_rotate_default_options(&o->ro);
    o->electrons = -1;
    o->start = "given";
    o->ro.starts = -1;
    int c;
    while ((c = lam_cli_next(argc, argv, opts)) != -1) {
        switch (c) {
        case LAM_OPT_OBJECTIVE:
            if (lam_rotate_objective_parse(optarg, &o->ro.objective) != 0)
                lam_usage_error("--objective wants pauli, shifted, grouped or er, not '%s'",
                                optarg);
            break;
        case LAM_OPT_START_ORBITALS: o->start = optarg; break;
        case LAM_OPT_STARTS: o->ro.starts = (int)lam_opt_long("--starts", optarg, 0, 100000); break;
        case 'S': o->ro.seed = (uint64_t)lam_opt_long("--seed", optarg, 0, 1L << 62); break;
        case LAM_OPT_WITHIN: o->within = optarg; break;
        case 'n': o->electrons = lam_opt_long("--electrons", optarg, 0, 1L << 20); break;
        case LAM_OPT_MATRIX: o->matrix = optarg; break;
        case LAM_OPT_MAX_ITER: o->ro.max_iter = (int)lam_opt_long("--max-iter", optarg, 0, 10000000); break;
        case LAM_OPT_STAGES: o->ro.stages = (int)lam_opt_long("--stages", optarg, 0, 30); break;
        case LAM_OPT_MU:
            o->ro.mu0 = lam_opt_double("--mu", optarg);
            if (!(o->ro.mu0 > 0)) lam_usage_error("--mu wants a positive width, not '%s'", optarg);
            break;
        case LAM_OPT_ROUNDS: o->ro.outer = (int)lam_opt_long("--rounds", optarg, 0, 100000); break;
        case LAM_OPT_GTOL:
            o->ro.gtol = lam_opt_double("--gtol", optarg);
            if (!(o->ro.gtol >= 0)) lam_usage_error("--gtol wants a norm >= 0, not '%s'", optarg);
            break;
        case LAM_OPT_FTOL:
            o->ro.ftol = lam_opt_double("--ftol", optarg);
            if (!(o->ro.ftol >= 0)) lam_usage_error("--ftol wants a fraction >= 0, not '%s'", optarg);
            break;
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    lam_blas_threads(o->cli.threads);
    o->input = lam_cli_operand(argc, argv, "one input stream at a time");
}

/* The operator into *out (NULL on error). */
static int read_operator(lam_reader *r, lam_spinfree **out, lam_error *err)
{
    lam_kind kind;
    int rc = lam_spinfree_read_if_kind(r, &kind, out, err);
    if (rc || *out) return rc;
    if (kind == LAM_KIND_UNKNOWN)
        return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0,
                            "an empty stream without a kind: header; nothing to rotate");
    return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0,
                        "lam-rotate reads spinfree streams, not %s (orbitals are defined for "
                        "spin-free operators only)", lam_kind_name(kind));
}

/* A shift recorded by lam-shift names xi in the old orbitals; it is the
 * same operator K in the new ones with xi' = U^T xi U. */
static int rotate_recorded_shift(lam_meta *meta, int n, const double *u, const char *src, lam_error *err)
{
    lam_shift *k;
    if (lam_shift_recorded(meta, n, src, &k, err)) return err->code;
    if (!k) return 0;
    if (lam_shift_has_spin(k) || !(k->terms & LAM_SHIFT_XI)) {
        lam_shift_free(k);
        return lam_error_at(err, LAM_EX_DATA, src, 0,
                            "the stream carries a recorded shift whose xi is not a full symmetric "
                            "matrix (or has spin terms); it cannot be carried to rotated orbitals: "
                            "rotate before shifting");
    }
    size_t nn = (size_t)n * n;
    double *xi = lam_malloc(lam_mul_size(nn, sizeof(double)));
    double *t = lam_malloc(lam_mul_size(nn, sizeof(double)));
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) xi[p * n + q] = lam_shift_xi(k, p, q);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, n, n, 1.0, xi, n, u, n, 0.0, t, n);
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, n, n, n, 1.0, u, n, t, n, 0.0, xi, n);
    for (int p = 0; p < n; ++p)
        for (int q = p; q < n; ++q) k->x[k->ixi[p * n + q]] = 0.5 * (xi[p * n + q] + xi[q * n + p]);
    lam_shift_describe(k, meta);
    free(xi);
    free(t);
    lam_shift_free(k);
    return 0;
}

static double *identity(int n)
{
    double *u = lam_calloc(lam_mul_size((size_t)n * n, 1), sizeof(double));
    for (int i = 0; i < n; ++i) u[(size_t)i * n + i] = 1;
    return u;
}

/* What a run holds; main frees it on every exit path. */
typedef struct {
    lam_reader *r;
    lam_spinfree *h, *out;
    double *u0, *u;
    lam_rotate_blocks blocks;
    lam_output matrix; /* --matrix, open from before the work */
    lam_meta meta;
    char *history;
    lam_report *rep;
} rotate_run;

static void rotate_run_free(rotate_run *rr)
{
    lam_report_free(rr->rep);
    free(rr->history);
    lam_meta_free(&rr->meta);
    lam_output_discard(&rr->matrix);
    lam_rotate_blocks_free(&rr->blocks);
    free(rr->u0);
    free(rr->u);
    lam_spinfree_free(rr->out);
    lam_spinfree_free(rr->h);
    lam_reader_close(rr->r);
}

/* Check the operator against the options; usage errors come back with
 * code LAM_EX_USAGE. */
static int settle_options(options *o, rotate_run *rr, lam_error *err)
{
    lam_spinfree *h = rr->h;
    const char *src = lam_reader_name(rr->r);
    int n = h->n;
    if (lam_spinfree_validate(h, src, "the closed-form one-norm the rotation lowers", err) != 0)
        return err->code;
    if (o->electrons >= 0) {
        if (o->electrons > 2L * n)
            return lam_error_set(err, LAM_EX_USAGE, "%ld electrons do not fit in %d orbitals", o->electrons, n);
        h->electrons = (int)o->electrons;
    }
    int needs_n = o->ro.objective == LAM_ROTATE_SHIFTED || o->ro.objective == LAM_ROTATE_GROUPED;
    if (needs_n && h->electrons < 0)
        return lam_error_set(err, LAM_EX_USAGE, "%s has no 'electrons:' line: give --electrons N for the shift",
                             src);
    char why[256];
    if (lam_rotate_blocks_parse(o->within, n, h->electrons, &rr->blocks, why, sizeof why) != 0)
        return lam_error_set(err, LAM_EX_USAGE, "--within: %s", why);
    o->ro.blocks = &rr->blocks;
    /* small operators: canonical orbitals of symmetric molecules are
     * stationary points, and random starts cost little there */
    if (o->ro.starts < 0) o->ro.starts = n <= 16 ? 8 : 0;
    return 0;
}

/* The rotated operator and the matrix written, the report filled. */
static int rotate(options *o, int argc, char **argv, rotate_run *rr, lam_error *err)
{
    double t0 = lam_seconds();
    clock_t c0 = clock();
    if (lam_reader_open(o->input, &rr->r, err)) return err->code;
    if (read_operator(rr->r, &rr->h, err)) return err->code;
    if (settle_options(o, rr, err)) return err->code;
    lam_spinfree *h = rr->h;
    const char *src = lam_reader_name(rr->r);
    int n = h->n;

    int start_er = strcmp(o->start, "er") == 0;
    if (strcmp(o->start, "given") == 0 || start_er) rr->u0 = identity(n);
    if (!rr->u0 && lam_rotate_read_matrix(o->start, n, &rr->u0, err)) return err->code;
    if (o->matrix && lam_output_open_file(o->matrix, &rr->matrix, err)) return err->code;

    lam_rotate_result er_res = {0};
    if (start_er) {
        lam_rotate_options eo = o->ro;
        eo.objective = LAM_ROTATE_ER;
        eo.starts = 0;
        double *t = lam_malloc(lam_mul_size((size_t)n * n, sizeof(double)));
        lam_spinfree *loc = lam_spinfree_new(n);
        lam_progress("Edmiston-Ruedenberg localization of %d orbitals", n);
        int rc = lam_rotate_optimize(h, rr->u0, &eo, t, loc, &er_res, err);
        lam_spinfree_free(loc);
        free(rr->u0);
        rr->u0 = t;
        if (rc) return rc;
    }
    double before_given = lam_spinfree_lambda(h);
    rr->u = lam_malloc(lam_mul_size((size_t)n * n, sizeof(double)));
    lam_rotate_result res;
    lam_progress("optimizing the %s objective over %d orbitals",
                 lam_rotate_objective_name(o->ro.objective), n);
    rr->out = lam_spinfree_new(n);
    if (lam_rotate_optimize(h, rr->u0, &o->ro, rr->u, rr->out, &res, err)) return err->code;
    double lambda_out = lam_spinfree_lambda(rr->out);

    lam_meta_copy(&rr->meta, lam_reader_meta(rr->r));
    if (rotate_recorded_shift(&rr->meta, n, rr->u, src, err)) return err->code;
    lam_spinfree_describe(rr->out, &rr->meta);
    lam_meta_setf(&rr->meta, "rotation", "objective %s start %s within %s",
                  lam_rotate_objective_name(o->ro.objective),
                  start_er || !strcmp(o->start, "given") ? o->start : "file",
                  o->within ? o->within : "all");
    char buf[LAM_DOUBLE_BUF];
    lam_format_double(buf, sizeof buf, before_given);
    lam_meta_set(&rr->meta, "rotation-lambda-before", buf);
    lam_format_double(buf, sizeof buf, lambda_out);
    lam_meta_set(&rr->meta, "rotation-lambda-after", buf);
    rr->history = lam_history_from_argv(argc, argv);
    lam_writer *w;
    if (lam_writer_open(o->cli.output, o->cli.gzip, &w, err)) return err->code;
    lam_writer_header(w, LAM_KIND_SPINFREE, &rr->meta, rr->history);
    lam_spinfree_write_terms(w, rr->out);
    if (lam_writer_close(w, err)) return err->code;
    if (rr->matrix.fp) {
        lam_rotate_write_matrix(rr->matrix.fp, n, rr->u);
        if (lam_output_close(&rr->matrix, 1, err)) return err->code;
    }

    lam_report *rep = rr->rep = lam_report_new();
    if (o->cli.label) lam_report_str(rep, "label", o->cli.label);
    lam_report_str(rep, "objective", lam_rotate_objective_name(o->ro.objective));
    lam_report_str(rep, "start", start_er || !strcmp(o->start, "given") ? o->start : "file");
    lam_report_num(rep, "lambda_before", before_given);
    lam_report_num(rep, "lambda_start", res.lambda_before);
    lam_report_num(rep, "lambda_after", lambda_out);
    lam_report_num(rep, "objective_before", res.before);
    lam_report_num(rep, "objective_after", res.after);
    lam_report_str(rep, "kept_start", res.kept_start ? "yes" : "no");
    lam_report_int(rep, "best_start", res.best_start);
    lam_report_int(rep, "starts", o->ro.starts + 1);
    lam_report_int(rep, "iterations", res.iterations + er_res.iterations);
    lam_report_int(rep, "evaluations", res.evaluations + er_res.evaluations);
    if (o->ro.objective == LAM_ROTATE_GROUPED) {
        lam_report_int(rep, "grouped_candidates", res.candidates);
        lam_report_num(rep, "surrogate_rank_correlation", res.surrogate_corr);
    }
    lam_report_int(rep, "orbitals", n);
    lam_report_num(rep, "seconds", lam_seconds() - t0);
    lam_report_num(rep, "cpu_seconds", (double)(clock() - c0) / CLOCKS_PER_SEC);
    lam_report_int(rep, "threads", openblas_get_num_threads());
    if (o->cli.report) return lam_report_save(rep, o->cli.report, o->cli.tsv, err);
    lam_report_write(rep, stderr, o->cli.tsv);
    return 0;
}

int main(int argc, char **argv)
{
    options o;
    parse_options(argc, argv, &o);
    rotate_run rr;
    memset(&rr, 0, sizeof rr);
    lam_meta_init(&rr.meta);
    lam_error err;
    int rc = rotate(&o, argc, argv, &rr, &err);
    rotate_run_free(&rr);
    lam_exit_on_error(rc, &err);
    return 0;
}
