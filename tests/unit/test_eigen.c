/* test_eigen.c - Davidson's method against closed-form spectra.
 *
 * The path-graph Laplacian (tridiagonal 2, -1) of order N has eigenvalues
 * 2 - 2 cos(k pi / (N + 1)), k = 1..N (common practice, textbook linear
 * algebra).  Adding a diagonal ramp d_i = i / N breaks the closed form,
 * so that case is checked against LAPACK's dense eigenvalues.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "eigen.h"
#include "tap.h"

typedef struct {
    size_t n;
    const double *ramp; /* may be NULL */
} path_op;

static void path_apply(void *ctx, const double *x, double *y)
{
    const path_op *op = ctx;
    size_t n = op->n;
    for (size_t i = 0; i < n; ++i) {
        double v = 2 * x[i];
        if (i > 0) v -= x[i - 1];
        if (i + 1 < n) v -= x[i + 1];
        if (op->ramp) v += op->ramp[i] * x[i];
        y[i] = v;
    }
}

static void solve(size_t n, const double *ramp, int highest, size_t dense_limit,
                  lam_eigen_result *res)
{
    path_op op = {n, ramp};
    double *diag = malloc(n * sizeof(double));
    for (size_t i = 0; i < n; ++i) diag[i] = 2 + (ramp ? ramp[i] : 0);
    lam_eigen_problem p;
    lam_eigen_defaults(&p);
    p.dim = n;
    p.apply = path_apply;
    p.ctx = &op;
    p.diag = diag;
    p.highest = highest;
    p.dense_limit = dense_limit;
    p.max_iter = 3000;
    p.tol = 1e-9;
    lam_eigen_extreme(&p, res, NULL);
    free(diag);
}

int main(void)
{
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
    tap_ok(r.converged && r.residual <= 1e-9, "Davidson: residual certified to 1e-9");
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
    lam_eigen_dense((int)n, a, w);
    solve(n, ramp, 0, 0, &r);
    tap_near(r.value, w[0], 1e-10, "Davidson with a ramp: lowest = LAPACK");
    tap_ok(r.value >= w[0] - 1e-12, "the value is a Rayleigh quotient: not below the lowest eigenvalue");
    solve(n, ramp, 1, 0, &r);
    tap_near(r.value, w[n - 1], 1e-10, "Davidson with a ramp: highest = LAPACK");
    tap_ok(r.value <= w[n - 1] + 1e-12, "the value is a Rayleigh quotient: not above the highest eigenvalue");
    free(ramp);
    free(a);
    free(w);
    return tap_done();
}
