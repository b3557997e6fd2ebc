/* eigen.c - Davidson's method for either end of a symmetric spectrum. */
#include "eigen.h"

#include <cblas.h>
#include <lapacke.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

void lam_eigen_defaults(lam_eigen_problem *p)
{
    memset(p, 0, sizeof *p);
    p->tol = 1e-9;
    p->max_iter = 400;
    p->max_subspace = 8;
    p->dense_limit = 300;
}

size_t lam_eigen_bytes(size_t dim, int max_subspace, size_t dense_limit)
{
    if (dim <= dense_limit) return lam_mul_size(lam_mul_size(dim, dim + 3), sizeof(double));
    size_t vectors = 2 * (size_t)(max_subspace < 4 ? 4 : max_subspace) + 4;
    return lam_mul_size(lam_mul_size(dim, vectors), sizeof(double));
}

void lam_eigen_dense(int n, double *a, double *w)
{
    if (n == 0) return;
    lapack_int info = LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'N', 'U', n, a, n, w);
    if (info != 0) lam_fail(LAM_EX_SOFTWARE, "LAPACK dsyev failed (info %d)", (int)info);
}

/* Multiply by -1 when the top is wanted: the solver always minimizes. */
typedef struct {
    const lam_eigen_problem *p;
    double sign;
} signed_op;

static void apply_signed(const signed_op *op, const double *x, double *y)
{
    op->p->apply(op->p->ctx, x, y);
    if (op->sign < 0) cblas_dscal((int)op->p->dim, -1.0, y, 1);
}

static void solve_dense(const lam_eigen_problem *p, const signed_op *op,
                        lam_eigen_result *res, double *vec)
{
    size_t n = p->dim;
    double *a = lam_malloc(lam_mul_size(n * n, sizeof(double)));
    double *e = lam_calloc(n, sizeof(double));
    double *w = lam_malloc(n * sizeof(double));
    for (size_t j = 0; j < n; ++j) {
        e[j] = 1.0;
        apply_signed(op, e, w);
        e[j] = 0.0;
        for (size_t i = 0; i < n; ++i) a[i * n + j] = w[i];
    }
    /* the lowest eigenpair of the symmetrized matrix */
    for (size_t i = 0; i < n; ++i)
        for (size_t j = 0; j < i; ++j) a[i * n + j] = a[j * n + i] = 0.5 * (a[i * n + j] + a[j * n + i]);
    lapack_int info = LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'V', 'U', (lapack_int)n, a, (lapack_int)n, w);
    if (info != 0) lam_fail(LAM_EX_SOFTWARE, "LAPACK dsyev failed (info %d)", (int)info);
    for (size_t i = 0; i < n; ++i) e[i] = a[i * n];
    /* certify with the residual of the eigenvector, as for Davidson */
    apply_signed(op, e, a);
    double r2 = 0;
    for (size_t i = 0; i < n; ++i) r2 += (a[i] - w[0] * e[i]) * (a[i] - w[0] * e[i]);
    res->value = op->sign * w[0];
    res->residual = sqrt(r2);
    res->iterations = (int)n;
    res->converged = res->residual <= p->tol;
    if (vec) memcpy(vec, e, n * sizeof(double));
    free(a);
    free(e);
    free(w);
}

/* Orthonormalize t against the m columns of V (twice, classical
 * Gram-Schmidt); returns the norm left before normalizing. */
static double orthonormalize(size_t dim, int m, const double *V, double *t, double *ov)
{
    for (int pass = 0; pass < 2 && m > 0; ++pass) {
        cblas_dgemv(CblasRowMajor, CblasNoTrans, m, (int)dim, 1.0, V, (int)dim, t, 1, 0.0, ov, 1);
        cblas_dgemv(CblasRowMajor, CblasTrans, m, (int)dim, -1.0, V, (int)dim, ov, 1, 1.0, t, 1);
    }
    double nrm = cblas_dnrm2((int)dim, t, 1);
    if (nrm > 0) cblas_dscal((int)dim, 1.0 / nrm, t, 1);
    return nrm;
}

/* A deterministic pseudo-random start component (xorshift64*), so a start
 * vector is never confined to one symmetry of the operator. */
static double unit_noise(uint64_t *state)
{
    uint64_t x = *state;
    x ^= x >> 12;
    x ^= x << 25;
    x ^= x >> 27;
    *state = x;
    return (double)((x * 2685821657736338717ULL) >> 11) / 9007199254740992.0 - 0.5;
}

static void start_vector(size_t dim, const double *diag, double sign, double *t)
{
    size_t best = 0;
    for (size_t i = 1; i < dim; ++i)
        if (sign * diag[i] < sign * diag[best]) best = i;
    uint64_t state = 0x9E3779B97F4A7C15ULL;
    double scale = 1e-2 / sqrt((double)dim);
    for (size_t i = 0; i < dim; ++i) t[i] = scale * unit_noise(&state);
    t[best] += 1.0;
}

/* Smallest |D_i - theta| divided by: keeps the correction finite. */
#define PRECOND_FLOOR 1e-8

/* Olsen's correction: t = (D - theta)^-1 (r - eps x) with eps chosen so
 * that t is orthogonal to x. */
static void olsen_correction(size_t dim, const double *diag, double sign, double theta,
                             const double *x, const double *r, double *t)
{
    double num = 0, den = 0;
    for (size_t i = 0; i < dim; ++i) {
        double d = sign * diag[i] - theta;
        if (fabs(d) < PRECOND_FLOOR) d = d < 0 ? -PRECOND_FLOOR : PRECOND_FLOOR;
        num += x[i] * r[i] / d;
        den += x[i] * x[i] / d;
    }
    double eps = den != 0 ? num / den : 0;
    for (size_t i = 0; i < dim; ++i) {
        double d = sign * diag[i] - theta;
        if (fabs(d) < PRECOND_FLOOR) d = d < 0 ? -PRECOND_FLOOR : PRECOND_FLOOR;
        t[i] = (r[i] - eps * x[i]) / d;
    }
}

typedef struct {
    size_t dim;
    int cap, m;
    int applied;        /* operator applications so far */
    double *V, *AV, *T; /* T: cap x cap projected matrix */
} subspace;

static void subspace_add(subspace *s, const signed_op *op, const double *t)
{
    size_t dim = s->dim;
    double *v = s->V + (size_t)s->m * dim, *av = s->AV + (size_t)s->m * dim;
    memcpy(v, t, dim * sizeof(double));
    apply_signed(op, v, av);
    ++s->applied;
    for (int j = 0; j <= s->m; ++j) {
        double x = cblas_ddot((int)dim, s->V + (size_t)j * dim, 1, av, 1);
        s->T[j * s->cap + s->m] = s->T[s->m * s->cap + j] = x;
    }
    ++s->m;
}

/* Ritz pairs of the subspace: the m eigenvectors as columns of Y (row i,
 * column j at Y[i*m + j]), ascending; returns the lowest value. */
static double ritz(const subspace *s, double *Y, double *w)
{
    int m = s->m;
    for (int i = 0; i < m; ++i)
        for (int j = 0; j < m; ++j) Y[i * m + j] = s->T[i * s->cap + j];
    lapack_int info = LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'V', 'U', m, Y, m, w);
    if (info != 0) lam_fail(LAM_EX_SOFTWARE, "LAPACK dsyev failed (info %d)", (int)info);
    return w[0];
}

static void combine(size_t dim, int m, const double *V, const double *y, int stride, double *out)
{
    cblas_dgemv(CblasRowMajor, CblasTrans, m, (int)dim, 1.0, V, (int)dim, y, stride, 0.0, out, 1);
}

/* M (m vectors of length dim) <- M C with C m x k (row-major), in place,
 * a block of components at a time. */
static void transform_basis(double *M, size_t dim, int m, const double *C, int k, double *tmp,
                            size_t chunk)
{
    for (size_t i0 = 0; i0 < dim; i0 += chunk) {
        size_t len = i0 + chunk < dim ? chunk : dim - i0;
        cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, k, (int)len, m, 1.0, C, k, M + i0,
                    (int)dim, 0.0, tmp, (int)len);
        for (int c = 0; c < k; ++c) memcpy(M + (size_t)c * dim + i0, tmp + (size_t)c * len, len * sizeof(double));
    }
}

enum { RESTART_CHUNK = 2048 };

/* Thick restart: keep the lowest `keep` Ritz vectors and the previous Ritz
 * vector (given by coefficients yprev over the first mprev vectors).  All
 * of it is done on coefficients, V and AV are rotated in place, and the
 * projected matrix is rebuilt from dot products. */
static void restart(subspace *s, const double *Y, int keep, const double *yprev, int mprev,
                    double *work)
{
    int m = s->m, k = 0;
    double *C = work, *tmp = work + (size_t)m * (keep + 1);
    for (int i = 0; i < m; ++i)
        for (int c = 0; c < keep; ++c) C[i * (keep + 1) + c] = Y[i * m + c];
    k = keep;
    if (mprev > 0) {
        double *col = tmp; /* the previous vector, orthogonalized in coefficient space */
        for (int i = 0; i < m; ++i) col[i] = i < mprev ? yprev[i] : 0;
        for (int c = 0; c < keep; ++c) {
            double d = 0;
            for (int i = 0; i < m; ++i) d += C[i * (keep + 1) + c] * col[i];
            for (int i = 0; i < m; ++i) col[i] -= d * C[i * (keep + 1) + c];
        }
        double nrm = 0;
        for (int i = 0; i < m; ++i) nrm += col[i] * col[i];
        nrm = sqrt(nrm);
        if (nrm > 1e-3) {
            for (int i = 0; i < m; ++i) C[i * (keep + 1) + keep] = col[i] / nrm;
            k = keep + 1;
        }
    }
    if (k < keep + 1)
        for (int i = 0; i < m; ++i) C[i * (keep + 1) + keep] = 0;
    /* C has keep + 1 columns; the last is unused when k == keep */
    transform_basis(s->V, s->dim, m, C, keep + 1, tmp, RESTART_CHUNK);
    transform_basis(s->AV, s->dim, m, C, keep + 1, tmp, RESTART_CHUNK);
    s->m = k;
    for (int i = 0; i < k; ++i)
        for (int j = 0; j <= i; ++j) {
            double a = cblas_ddot((int)s->dim, s->V + (size_t)i * s->dim, 1, s->AV + (size_t)j * s->dim, 1);
            double b = cblas_ddot((int)s->dim, s->V + (size_t)j * s->dim, 1, s->AV + (size_t)i * s->dim, 1);
            s->T[i * s->cap + j] = s->T[j * s->cap + i] = 0.5 * (a + b);
        }
}

static void solve_davidson(const lam_eigen_problem *p, const signed_op *op,
                           lam_eigen_result *res, double *vec)
{
    size_t dim = p->dim;
    int cap = p->max_subspace < 4 ? 4 : p->max_subspace;
    int keep = cap / 3 < 1 ? 1 : cap / 3;
    subspace s = {dim, cap, 0, 0, NULL, NULL, NULL};
    s.V = lam_malloc(lam_mul_size(lam_mul_size(dim, (size_t)cap), sizeof(double)));
    s.AV = lam_malloc(lam_mul_size(lam_mul_size(dim, (size_t)cap), sizeof(double)));
    s.T = lam_calloc((size_t)cap * cap, sizeof(double));
    double *x = lam_malloc(dim * sizeof(double)), *ax = lam_malloc(dim * sizeof(double));
    double *r = lam_malloc(dim * sizeof(double)), *t = lam_malloc(dim * sizeof(double));
    double *Y = lam_malloc((size_t)cap * cap * sizeof(double));
    double *w = lam_malloc((size_t)cap * sizeof(double));
    /* the previous Ritz vector as coefficients over V, kept at a restart */
    double *yprev = lam_malloc((size_t)cap * sizeof(double));
    int mprev = 0;
    double *work = lam_malloc(((size_t)cap * (keep + 1) + (size_t)(keep + 1) * RESTART_CHUNK + cap) *
                              sizeof(double));
    double *ov = lam_malloc((size_t)cap * sizeof(double));
    double sign = op->sign;
    double theta = 0, rnorm = INFINITY;

    start_vector(dim, p->diag, sign, t);
    orthonormalize(dim, 0, s.V, t, ov);
    subspace_add(&s, op, t);
    while (1) {
        ritz(&s, Y, w);
        combine(dim, s.m, s.V, Y, s.m, x);
        combine(dim, s.m, s.AV, Y, s.m, ax);
        /* the Rayleigh quotient of x itself, the value that is certified */
        double xx = cblas_ddot((int)dim, x, 1, x, 1);
        theta = cblas_ddot((int)dim, x, 1, ax, 1) / xx;
        cblas_dscal((int)dim, 1.0 / sqrt(xx), x, 1);
        cblas_dscal((int)dim, 1.0 / sqrt(xx), ax, 1);
        memcpy(r, ax, dim * sizeof(double));
        cblas_daxpy((int)dim, -theta, x, 1, r, 1);
        rnorm = cblas_dnrm2((int)dim, r, 1);
        lam_progress("%s%siteration %d: %.12f Eh, residual %.2e", p->label ? p->label : "",
                     p->label ? ": " : "", s.applied, sign * theta, rnorm);
        if (rnorm <= p->tol || s.applied >= p->max_iter) break;
        if (s.m == cap) {
            restart(&s, Y, keep, yprev, mprev, work);
            mprev = 0;
            continue;
        }
        for (int i = 0; i < s.m; ++i) yprev[i] = Y[i * s.m];
        mprev = s.m;
        olsen_correction(dim, p->diag, sign, theta, x, r, t);
        double nrm = orthonormalize(dim, s.m, s.V, t, ov);
        if (!(nrm > 1e-14)) {
            /* no new direction: use the raw residual */
            memcpy(t, r, dim * sizeof(double));
            nrm = orthonormalize(dim, s.m, s.V, t, ov);
            if (!(nrm > 1e-14)) break;
        }
        subspace_add(&s, op, t);
    }
    res->iterations = s.applied;
    res->value = sign * theta;
    res->residual = rnorm;
    res->converged = rnorm <= p->tol;
    if (vec) memcpy(vec, x, dim * sizeof(double));
    free(s.V);
    free(s.AV);
    free(s.T);
    free(x);
    free(ax);
    free(r);
    free(t);
    free(Y);
    free(w);
    free(yprev);
    free(work);
    free(ov);
}

void lam_eigen_extreme(const lam_eigen_problem *p, lam_eigen_result *res, double *vec)
{
    memset(res, 0, sizeof *res);
    signed_op op = {p, p->highest ? -1.0 : 1.0};
    if (p->dim == 0) lam_fail(LAM_EX_SOFTWARE, "eigenvalue problem of dimension 0");
    if (p->dim <= p->dense_limit)
        solve_dense(p, &op, res, vec);
    else
        solve_davidson(p, &op, res, vec);
}

void lam_eigen_ends(const lam_eigen_problem *p, lam_eigen_result *lo, lam_eigen_result *hi)
{
    lam_eigen_problem q = *p;
    if (lo) {
        q.highest = 0;
        lam_eigen_extreme(&q, lo, NULL);
    }
    if (hi) {
        q.highest = 1;
        lam_eigen_extreme(&q, hi, NULL);
    }
}
