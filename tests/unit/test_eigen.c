/* test_eigen.c - Davidson's method against closed-form spectra.
 *
 * The path-graph Laplacian (tridiagonal 2, -1) of order N has eigenvalues
 * 2 - 2 cos(k pi / (N + 1)), k = 1..N (common practice, textbook linear
 * algebra).  Adding a diagonal ramp d_i = i / N breaks the closed form,
 * so that case is checked against LAPACK's dense eigenvalues.
 *
 * The extremality certificate: a value is marked extreme only when it is
 * the extreme eigenvalue to tol, also when the lowest level is degenerate
 * (two copies of one matrix) and when Davidson's start points at an
 * interior eigenvalue (a decoupled block whose diagonal is lowest).  The
 * congruence check (Sylvester's law of inertia, common practice, textbook
 * linear algebra) must refuse the last two: there H - sigma has two or more
 * negative eigenvalues.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "eigen.h"
#include "tap.h"

/* A library failure here is a failed test, with its message. */
static lam_error lib_err;
static void must(int rc)
{
    if (rc) tap_ok(0, lib_err.msg);
}

typedef struct {
    size_t n;
    const double *ramp; /* may be NULL */
    size_t copies;      /* 2: the direct sum of two equal paths */
} path_op;

static void path_apply(void *ctx, const double *x, double *y)
{
    const path_op *op = ctx;
    size_t n = op->n, copies = op->copies ? op->copies : 1;
    for (size_t c = 0; c < copies; ++c, x += n, y += n)
        for (size_t i = 0; i < n; ++i) {
            double v = 2 * x[i];
            if (i > 0) v -= x[i - 1];
            if (i + 1 < n) v -= x[i + 1];
            if (op->ramp) v += op->ramp[i] * x[i];
            y[i] = v;
        }
}

/* diag(d) on the first half; on the second half a path with diagonal 1
 * and couplings -1.6 (eigenvalues 1 - 3.2 cos(k pi / (m + 1))). */
static void split_apply(void *ctx, const double *x, double *y)
{
    const double *d = ctx;
    size_t n = 400, m = n / 2;
    for (size_t i = 0; i < m; ++i) y[i] = d[i] * x[i];
    for (size_t i = 0; i < m; ++i) {
        double v = x[m + i];
        if (i > 0) v -= 1.6 * x[m + i - 1];
        if (i + 1 < m) v -= 1.6 * x[m + i + 1];
        y[m + i] = v;
    }
}

static void solve(size_t n, const double *ramp, int highest, size_t dense_limit,
                  lam_eigen_result *res)
{
    path_op op = {n, ramp, 1};
    double *diag = malloc(n * sizeof(double));
    for (size_t i = 0; i < n; ++i) diag[i] = 2 + (ramp ? ramp[i] : 0);
    lam_eigen_problem p;
    lam_eigen_problem_init(&p, n, path_apply, &op, diag);
    p.highest = highest;
    p.dense_limit = dense_limit;
    p.max_iter = 3000;
    p.tol = 1e-9;
    must(lam_eigen_extreme(&p, res, NULL, &lib_err));
    free(diag);
}

/* y = NaN: what a non-finite operator gives (the stream readers refuse
 * coefficients beyond 1e100, so no input file gets here). */
static void nan_apply(void *ctx, const double *x, double *y)
{
    size_t n = *(const size_t *)ctx;
    for (size_t i = 0; i < n; ++i) y[i] = x[i] * NAN;
}

/* LAPACK's failures and an empty problem come back as code 70 with the
 * routine named, on the dense and the Davidson path alike. */
static void failures_return(void)
{
    lam_error err;
    double a[4] = {1, NAN, NAN, 2}, w[2];
    tap_ok(lam_eigen_dense(2, a, w, &err) == 70 && strstr(err.msg, "symmetric eigensolver failed"),
           "NaN matrix: lam_eigen_dense fails with code 70");
    double b[4] = {1, NAN, NAN, 2};
    tap_ok(lam_symmetric_eigen(2, b, w, &err) == 70 && strstr(err.msg, "n = 2"),
           "NaN matrix: lam_symmetric_eigen fails with code 70, the order named");
    size_t n = 400;
    double *diag = calloc(n, sizeof(double));
    lam_eigen_problem p;
    lam_eigen_problem_init(&p, n, nan_apply, NULL, diag);
    p.ctx = &p.dim;
    lam_eigen_result r;
    p.dense_limit = 500;
    tap_ok(lam_eigen_extreme(&p, &r, NULL, &err) == 70 && strstr(err.msg, "LAPACK dsyevr failed"),
           "NaN operator, dense beyond 300: code 70, dsyevr named");
    p.dim = 20;
    tap_ok(lam_eigen_extreme(&p, &r, NULL, &err) == 70 && strstr(err.msg, "LAPACK dsyev failed"),
           "NaN operator, small dense: code 70, dsyev named");
    p.dim = n;
    p.dense_limit = 0;
    tap_ok(lam_eigen_ends(&p, &r, NULL, &err) == 70 && strstr(err.msg, "LAPACK dsyev failed"),
           "NaN operator, Davidson: code 70 from the Ritz step");
    p.dim = 0;
    tap_ok(lam_eigen_extreme(&p, &r, NULL, &err) == 70 &&
               strcmp(err.msg, "eigenvalue problem of dimension 0") == 0,
           "dimension 0: code 70");
    free(diag);
}

int main(void)
{
    failures_return();
    const double pi = 3.14159265358979323846;
    lam_eigen_result r;

    /* N = 200: dense path */
    solve(200, NULL, 0, 300, &r);
    tap_near(r.value, 2 - 2 * cos(pi / 201), 1e-12, "dense: lowest of the path Laplacian, N = 200");
    tap_ok(r.converged, "dense: certified");
    solve(200, NULL, 1, 300, &r);
    tap_near(r.value, 2 - 2 * cos(200 * pi / 201), 1e-12, "dense: highest of the path Laplacian, N = 200");

    /* N = 100: Davidson (constant diagonal, the hard case for it) */
    solve(100, NULL, 0, 0, &r);
    tap_near(r.value, 2 - 2 * cos(pi / 101), 1e-10, "Davidson: lowest of the path Laplacian, N = 100");
    /* stopped at |r| <= 1e-9 or once |r|^2/gap <= 1e-11 */
    tap_ok(r.converged && r.residual <= 1e-5, "Davidson: converged, residual at most 1e-5");
    solve(100, NULL, 1, 0, &r);
    tap_near(r.value, 2 - 2 * cos(100 * pi / 101), 1e-10, "Davidson: highest of the path Laplacian, N = 100");

    /* N = 400 with a ramp: Davidson against LAPACK */
    size_t n = 400;
    double *ramp = malloc(n * sizeof(double)), *a = calloc(n * n, sizeof(double)), *w = malloc(n * sizeof(double));
    for (size_t i = 0; i < n; ++i) ramp[i] = 30.0 * (double)i / (double)n;
    for (size_t i = 0; i < n; ++i) {
        a[i * n + i] = 2 + ramp[i];
        if (i + 1 < n) a[i * n + i + 1] = a[(i + 1) * n + i] = -1;
    }
    must(lam_eigen_dense((int)n, a, w, &lib_err));
    solve(n, ramp, 0, 0, &r);
    tap_near(r.value, w[0], 1e-10, "Davidson with a ramp: lowest = LAPACK");
    tap_ok(r.value >= w[0] - 1e-12, "the value is a Rayleigh quotient: not below the lowest eigenvalue");
    solve(n, ramp, 1, 0, &r);
    tap_near(r.value, w[n - 1], 1e-10, "Davidson with a ramp: highest = LAPACK");
    tap_ok(r.value <= w[n - 1] + 1e-12, "the value is a Rayleigh quotient: not above the highest eigenvalue");

    /* the certificate on the ramp: both ends extreme, the far side within tol */
    lam_eigen_problem p;
    path_op op = {n, ramp, 1};
    double *diag = malloc(2 * n * sizeof(double));
    for (size_t i = 0; i < 2 * n; ++i) diag[i] = 2 + ramp[i % n];
    lam_eigen_problem_init(&p, n, path_apply, &op, diag);
    p.dense_limit = 0;
    p.max_iter = 3000;
    p.spread = 40; /* |A| <= 4 + 30 */
    lam_eigen_result r0;
    p.check_steps = 0;
    must(lam_eigen_extreme(&p, &r0, NULL, &lib_err));
    tap_ok(!r0.extreme, "without the check a Davidson value is not called extreme");
    p.check_steps = 400;
    must(lam_eigen_extreme(&p, &r, NULL, &lib_err));
    tap_ok(r.extreme, "ramp: the lowest is certified extreme");
    tap_ok(r.certificate == LAM_EIGEN_BY_CONGRUENCE && r.roots == 1,
           "ramp: a gap to the next level: the congruence check certifies the lowest");
    tap_near(r.value, w[0], 1e-9, "ramp: the certified lowest is LAPACK's");
    tap_ok(r.other <= w[0] + 1e-12 && r.value - r.other <= 1e-9, "ramp: the certified lower end is below E_min, within tol");
    p.highest = 1;
    must(lam_eigen_extreme(&p, &r, NULL, &lib_err));
    tap_ok(r.extreme && fabs(r.value - w[n - 1]) <= 1e-9, "ramp: the highest is certified extreme");

    /* a degenerate lowest level: two equal blocks */
    path_op two = {n, ramp, 2};
    p.dim = 2 * n;
    p.ctx = &two;
    p.highest = 0;
    must(lam_eigen_extreme(&p, &r, NULL, &lib_err));
    tap_ok(r.extreme && r.roots >= 2, "degenerate lowest: certified (with two roots or more)");
    tap_ok(r.certificate == LAM_EIGEN_BY_BLOCK,
           "degenerate lowest: the congruence check refuses (two eigenvalues below sigma), the block check certifies");
    tap_near(r.value, w[0], 1e-9, "degenerate lowest: the value is LAPACK's");

    /* Davidson's start points at an interior eigenvalue: block one is a
     * diagonal whose first element (0) is the smallest of the diagonal,
     * block two is the ramp shifted up by 1, whose lowest eigenvalue lies
     * below 0 only through its couplings (a -1.6 off-diagonal) */
    size_t half = 200;
    double *d2 = malloc(2 * half * sizeof(double));
    for (size_t i = 0; i < half; ++i) d2[i] = i == 0 ? 0 : 5 + 0.01 * (double)i;
    for (size_t i = half; i < 2 * half; ++i) d2[i] = 1;
    p.dim = 2 * half;
    p.apply = split_apply;
    p.ctx = d2;
    p.diag = d2;
    p.spread = 20;
    p.tol = 1e-6;
    must(lam_eigen_extreme(&p, &r, NULL, &lib_err));
    double want = 1 - 3.2 * cos(pi / (double)(half + 1));
    tap_ok(r.extreme, "start at an interior eigenvalue: the value is certified extreme");
    tap_ok(r.certificate == LAM_EIGEN_BY_BLOCK,
           "start at an interior eigenvalue: the congruence check refuses (many eigenvalues below sigma)");
    tap_near(r.value, want, 1e-6, "start at an interior eigenvalue: the extreme 1 - 3.2 cos(pi/201) is found");
    free(d2);
    free(diag);
    free(ramp);
    free(a);
    free(w);
    return tap_done();
}
