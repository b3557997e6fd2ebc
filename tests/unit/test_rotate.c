/* test_rotate.c - orbital rotations: the four-index transformation against
 * a direct quadruple sum, the smoothed one-norm at mu = 0 against the
 * closed form (lam_spinfree_lambda; Koridon et al., PRR 3, 033127 (2021)),
 * the analytic gradient against central differences of exp(K), exp(K)
 * orthogonal, the optimizer never worse than its start, and the block
 * syntax of --within. */
#include <stdlib.h>
#include <string.h>

#include "norm.h"
#include "rotate.h"
#include "tap.h"

/* A library failure here is a failed test, with its message. */
static lam_error lib_err;
static void must(int rc)
{
    if (rc) tap_ok(0, lib_err.msg);
}
#include "testops.h"

static unsigned long long rng_state = 0x243F6A8885A308D3ULL;
static double uniform(void) { return test_uniform(&rng_state); }

/* Random operator with the 8-fold symmetry of real integrals. */
static lam_spinfree *random_operator(int n)
{
    return test_random_real_operator(n, n, &rng_state);
}

static void random_antisymmetric(int n, double scale, double *k)
{
    for (int a = 0; a < n; ++a) {
        k[a * n + a] = 0;
        for (int b = 0; b < a; ++b) {
            double v = scale * uniform();
            k[a * n + b] = v;
            k[b * n + a] = -v;
        }
    }
}

static void transform_matches_direct_sum(void)
{
    int n = 4;
    lam_spinfree *h = random_operator(n);
    double k[16], u[16];
    random_antisymmetric(n, 0.7, k);
    must(lam_rotate_expm(n, k, u, &lib_err));
    lam_spinfree *out = lam_spinfree_new(n);
    double *work = malloc(sizeof(double) * 256);
    lam_rotate_apply(h, u, out, work);
    double err = 0;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s) {
                    double v = 0;
                    for (int a = 0; a < n; ++a)
                        for (int b = 0; b < n; ++b)
                            for (int c = 0; c < n; ++c)
                                for (int d = 0; d < n; ++d)
                                    v += u[a * n + p] * u[b * n + q] * u[c * n + r] *
                                         u[d * n + s] * LAM_G(h, a, b, c, d);
                    err = fmax(err, fabs(v - LAM_G(out, p, q, r, s)));
                }
    tap_near(err, 0, 1e-13, "four dgemm calls = the quadruple sum of U_ap U_bq U_cr U_ds g_abcd");
    double herr = 0;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) {
            double v = 0;
            for (int a = 0; a < n; ++a)
                for (int b = 0; b < n; ++b) v += u[a * n + p] * LAM_H(h, a, b) * u[b * n + q];
            herr = fmax(herr, fabs(v - LAM_H(out, p, q)));
        }
    tap_near(herr, 0, 1e-14, "h' = U^T h U");
    tap_near(lam_spinfree_real_symmetry_error(out), 0, 1e-14, "the 8-fold symmetry is kept");
    /* the identity part (trace-like) is invariant: e0 + sum h_pp + ... */
    tap_near(lam_spinfree_constant(out), lam_spinfree_constant(h), 1e-12,
             "the identity coefficient is invariant under rotation");
    lam_spinfree_free(h);
    lam_spinfree_free(out);
    free(work);
}

static void smooth_matches_closed_form(void)
{
    for (int n = 1; n <= 5; ++n) {
        lam_spinfree *h = random_operator(n);
        char name[96];
        snprintf(name, sizeof name, "n = %d: smoothed lambda at mu = 0 = lam_spinfree_lambda", n);
        tap_near(lam_rotate_smooth_lambda(h, 0, NULL, NULL), lam_spinfree_lambda(h),
                 1e-12 * lam_spinfree_lambda(h), name);
        lam_spinfree_free(h);
    }
}

/* f(exp(t K) rotation) by central differences against grad . K */
static void gradient_matches_differences(double mu)
{
    int n = 5;
    size_t n4 = (size_t)n * n * n * n;
    lam_spinfree *h = random_operator(n);
    lam_spinfree *r = lam_spinfree_new(n);
    double *gg = malloc(sizeof(double) * n4), *work = malloc(sizeof(double) * n4);
    double gh[25], grad[25], k[25], tk[25], u[25];
    lam_rotate_smooth_lambda(h, mu, gh, gg);
    lam_rotate_gradient(h, gh, gg, grad);
    double worst = 0;
    for (int trial = 0; trial < 4; ++trial) {
        random_antisymmetric(n, 1, k);
        double analytic = 0;
        for (int a = 0; a < n; ++a)
            for (int b = a + 1; b < n; ++b) analytic += grad[a * n + b] * k[a * n + b];
        double f[2], t = 1e-6;
        for (int side = 0; side < 2; ++side) {
            for (int i = 0; i < n * n; ++i) tk[i] = (side ? t : -t) * k[i];
            must(lam_rotate_expm(n, tk, u, &lib_err));
            lam_rotate_apply(h, u, r, work);
            f[side] = lam_rotate_smooth_lambda(r, mu, NULL, NULL);
        }
        double numeric = (f[1] - f[0]) / (2 * t);
        worst = fmax(worst, fabs(numeric - analytic) / fmax(1, fabs(analytic)));
    }
    char name[96];
    snprintf(name, sizeof name, "gradient along K = central differences (mu = %g)", mu);
    tap_near(worst, 0, 1e-6, name);
    free(gg);
    free(work);
    lam_spinfree_free(h);
    lam_spinfree_free(r);
}

static void expm_is_orthogonal(void)
{
    int n = 7;
    double k[49], u[49];
    random_antisymmetric(n, 3, k);
    must(lam_rotate_expm(n, k, u, &lib_err));
    tap_near(lam_rotate_orthogonality_error(n, u), 0, 1e-14, "exp(K) is orthogonal");
    /* exp(K) exp(-K) = I */
    double mk[49], v[49];
    for (int i = 0; i < 49; ++i) mk[i] = -k[i];
    must(lam_rotate_expm(n, mk, v, &lib_err));
    double err = 0;
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) {
            double s = 0;
            for (int l = 0; l < n; ++l) s += u[i * n + l] * v[l * n + j];
            err = fmax(err, fabs(s - (i == j)));
        }
    tap_near(err, 0, 1e-13, "exp(K) exp(-K) = I");
}

static void optimizer_never_worse(void)
{
    int n = 4;
    lam_spinfree *h = random_operator(n);
    double u0[16] = {0}, u[16];
    for (int i = 0; i < n; ++i) u0[i * n + i] = 1;
    lam_rotate_options opt;
    lam_rotate_default_options(&opt);
    opt.max_iter = 30;
    opt.starts = 2;
    lam_rotate_result res;
    lam_spinfree *r = lam_spinfree_new(n);
    must(lam_rotate_optimize(h, u0, &opt, u, r, &res, &lib_err));
    tap_ok(res.after <= res.before, "pauli objective: never above the start");
    tap_near(res.before, lam_spinfree_lambda(h), 1e-12, "objective_before is lambda of the input");
    double work[256];
    lam_rotate_apply(h, u, r, work);
    tap_near(lam_spinfree_lambda(r), res.after, 1e-12, "objective_after is lambda of the result");
    tap_near(lam_rotate_orthogonality_error(n, u), 0, 1e-14, "the result is orthogonal");
    /* blocks: orbitals outside every block stay */
    lam_rotate_blocks b;
    char err[128];
    tap_ok(lam_rotate_blocks_parse("0-1", n, -1, &b, err, sizeof err) == 0, "0-1 parses");
    opt.blocks = &b;
    must(lam_rotate_optimize(h, u0, &opt, u, r, &res, &lib_err));
    int fixed = fabs(u[2 * n + 2] - 1) < 1e-14 && fabs(u[3 * n + 3] - 1) < 1e-14 &&
                fabs(u[0 * n + 2]) < 1e-14 && fabs(u[1 * n + 3]) < 1e-14;
    tap_ok(fixed, "--within 0-1: orbitals 2 and 3 do not move");
    lam_rotate_blocks_free(&b);
    opt.objective = LAM_ROTATE_ER;
    opt.blocks = NULL;
    must(lam_rotate_optimize(h, u0, &opt, u, r, &res, &lib_err));
    tap_ok(res.after >= res.before, "er objective: sum (ii|ii) never below the start");
    lam_spinfree_free(h);
    lam_spinfree_free(r);
}

static void block_syntax(void)
{
    lam_rotate_blocks b;
    char err[128];
    tap_ok(lam_rotate_blocks_parse("0-2+7,3-6", 8, -1, &b, err, sizeof err) == 0 &&
               b.block[7] == 0 && b.block[2] == 0 && b.block[3] == 1 && b.block[6] == 1,
           "0-2+7,3-6: two blocks");
    lam_rotate_blocks_free(&b);
    tap_ok(lam_rotate_blocks_parse("0-3,3-5", 8, -1, &b, err, sizeof err) != 0 &&
               strstr(err, "two blocks"),
           "an orbital in two blocks is refused");
    lam_rotate_blocks_free(&b);
    tap_ok(lam_rotate_blocks_parse("0-9", 8, -1, &b, err, sizeof err) != 0,
           "an orbital beyond n is refused");
    lam_rotate_blocks_free(&b);
    tap_ok(lam_rotate_blocks_parse("0-1;2", 8, -1, &b, err, sizeof err) != 0,
           "junk is refused");
    lam_rotate_blocks_free(&b);
    tap_ok(lam_rotate_blocks_parse("occ-virt", 8, 6, &b, err, sizeof err) == 0 &&
               b.block[2] == 0 && b.block[3] == 1,
           "occ-virt with 6 electrons: orbitals 0-2 and 3-7");
    lam_rotate_blocks_free(&b);
    tap_ok(lam_rotate_blocks_parse("occ-virt", 8, 5, &b, err, sizeof err) != 0,
           "occ-virt needs an even electron count");
    lam_rotate_blocks_free(&b);
}

int main(void)
{
    transform_matches_direct_sum();
    smooth_matches_closed_form();
    gradient_matches_differences(0.05);
    gradient_matches_differences(0);
    expm_is_orthogonal();
    optimizer_never_worse();
    block_syntax();
    return tap_done();
}
