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
    p->max_roots = 4;
}

void lam_eigen_problem_init(lam_eigen_problem *p, size_t dim, lam_eigen_apply apply, void *ctx,
                            const double *diag)
{
    lam_eigen_defaults(p);
    p->dim = dim;
    p->apply = apply;
    p->ctx = ctx;
    p->diag = diag;
}

size_t lam_eigen_bytes(size_t dim, int max_subspace, size_t dense_limit)
{
    if (dim <= dense_limit) return lam_mul_size(lam_mul_size(dim, dim + 3), sizeof(double));
    size_t vectors = 2 * (size_t)(max_subspace < 4 ? 4 : max_subspace) + 4 + LAM_EIGEN_CHECK_VECTORS;
    return lam_mul_size(lam_mul_size(dim, vectors), sizeof(double));
}

/* The suite's one dense symmetric eigensolver: values only (dsyev) or
 * with vectors (divide and conquer, dsyevd). */
static int symmetric_eigen(int n, double *a, double *w, char jobz, lam_error *err)
{
    if (n <= 0) return 0;
    lapack_int info = jobz == 'V' ? LAPACKE_dsyevd(LAPACK_ROW_MAJOR, 'V', 'U', n, a, n, w)
                                  : LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'N', 'U', n, a, n, w);
    if (info != 0)
        return lam_error_set(err, LAM_EX_SOFTWARE, "symmetric eigensolver failed (info %d, n = %d)", (int)info, n);
    return 0;
}

int lam_eigen_dense(int n, double *a, double *w, lam_error *err) { return symmetric_eigen(n, a, w, 'N', err); }

int lam_symmetric_eigen(int n, double *a, double *w, lam_error *err)
{
    return symmetric_eigen(n, a, w, 'V', err);
}

/* LAPACK's failure to converge on a finite symmetric matrix: the callers
 * below only hand it matrices built from the operator, so this is reached
 * by a non-finite operator (NaN or overflow), never by valid input. */
static int lapack_failed(lam_error *err, const char *routine, lapack_int info)
{
    return lam_error_set(err, LAM_EX_SOFTWARE, "LAPACK %s failed (info %d)", routine, (int)info);
}

/* Multiply by -1 when the top is wanted: the solver always minimizes.
 * With nx deflation vectors X (orthonormal columns, stored one after
 * another) the operator is P A P + xshift X X^T, P = 1 - X X^T: Davidson
 * and the check then work on the complement of the roots found, and the
 * roots themselves sit at xshift, a Rayleigh quotient of the complement,
 * so that rounding which brings them back can never pose as an extreme. */
typedef struct {
    const lam_eigen_problem *p;
    double sign;
    const double *X;
    int nx;
    double *scratch; /* dim, when nx > 0 */
    double xshift;
} signed_op;

static void project_out(size_t dim, const double *X, int nx, double *t)
{
    for (int pass = 0; pass < 2; ++pass)
        for (int j = 0; j < nx; ++j) {
            const double *xj = X + (size_t)j * dim;
            cblas_daxpy((int)dim, -cblas_ddot((int)dim, xj, 1, t, 1), xj, 1, t, 1);
        }
}

static void apply_signed(const signed_op *op, const double *x, double *y)
{
    size_t dim = op->p->dim;
    double c[8] = {0};
    if (op->nx > 0) {
        for (int j = 0; j < op->nx && j < 8; ++j) c[j] = cblas_ddot((int)dim, op->X + (size_t)j * dim, 1, x, 1);
        memcpy(op->scratch, x, dim * sizeof(double));
        project_out(dim, op->X, op->nx, op->scratch);
        x = op->scratch;
    }
    op->p->apply(op->p->ctx, x, y);
    if (op->sign < 0) cblas_dscal((int)dim, -1.0, y, 1);
    if (op->nx > 0) {
        project_out(dim, op->X, op->nx, y);
        for (int j = 0; j < op->nx && j < 8; ++j)
            cblas_daxpy((int)dim, op->xshift * c[j], op->X + (size_t)j * dim, 1, y, 1);
    }
}

enum { SMALL_DENSE = 300 };

static int solve_dense(const lam_eigen_problem *p, const signed_op *op,
                       lam_eigen_result *res, double *vec, lam_error *err)
{
    int rc = 0;
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
    if (n <= SMALL_DENSE) {
        /* every pair (QR iteration: the most accurate, and cheap here) */
        lapack_int info = LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'V', 'U', (lapack_int)n, a, (lapack_int)n, w);
        if (info != 0) rc = lapack_failed(err, "dsyev", info);
        for (size_t i = 0; i < n; ++i) e[i] = a[i * n];
    } else {
        /* only the lowest pair: the reduction to tridiagonal form sees the
         * whole matrix, bisection then finds its lowest eigenvalue */
        lapack_int found, *support = lam_malloc(2 * sizeof(lapack_int));
        double *z = lam_malloc(n * sizeof(double));
        lapack_int info = LAPACKE_dsyevr(LAPACK_ROW_MAJOR, 'V', 'I', 'U', (lapack_int)n, a, (lapack_int)n, 0, 0,
                                         1, 1, 0.0, &found, w, z, 1, support);
        if (info != 0 || found != 1) rc = lapack_failed(err, "dsyevr", info);
        memcpy(e, z, n * sizeof(double));
        free(z);
        free(support);
    }
    if (rc) goto done;
    /* certify with the residual of the eigenvector, as for Davidson */
    apply_signed(op, e, a);
    double r2 = 0;
    for (size_t i = 0; i < n; ++i) r2 += (a[i] - w[0] * e[i]) * (a[i] - w[0] * e[i]);
    res->value = op->sign * w[0];
    res->residual = sqrt(r2);
    res->iterations = (int)n;
    res->converged = res->residual <= p->tol;
    /* the whole spectrum was computed: the lowest is the lowest */
    res->extreme = res->converged;
    res->certificate = res->extreme ? LAM_EIGEN_BY_SPECTRUM : LAM_EIGEN_UNCERTIFIED;
    res->other = res->extreme ? op->sign * (w[0] - res->residual) : NAN;
    if (vec) memcpy(vec, e, n * sizeof(double));
done:
    LAM_FREE_ALL(a, e, w);
    return rc;
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
static int ritz(const subspace *s, double *Y, double *w, lam_error *err)
{
    int m = s->m;
    for (int i = 0; i < m; ++i)
        for (int j = 0; j < m; ++j) Y[i * m + j] = s->T[i * s->cap + j];
    lapack_int info = LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'V', 'U', m, Y, m, w);
    return info != 0 ? lapack_failed(err, "dsyev", info) : 0;
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

/* start (may be NULL): the first search vector instead of the best
 * diagonal element. */
static int solve_davidson(const lam_eigen_problem *p, const signed_op *op,
                          lam_eigen_result *res, double *vec, const double *start, double *next,
                          lam_error *err)
{
    int rc = 0;
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
    int quadratic = 0;

    if (start) memcpy(t, start, dim * sizeof(double));
    else start_vector(dim, p->diag, sign, t);
    if (op->nx > 0) project_out(dim, op->X, op->nx, t);
    orthonormalize(dim, 0, s.V, t, ov);
    subspace_add(&s, op, t);
    while (1) {
        if ((rc = ritz(&s, Y, w, err))) break;
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
        /* the value's error is about |r|^2 / gap (Kato-Temple): once that is
         * a hundredth of tol, with the gap to the next Ritz value of the
         * subspace, more iterations do not move the value (the check, not
         * this estimate, decides what it is called) */
        /* Only without the check: its block bound needs |R|^2 / tol below
         * the gap it can resolve, which a loose residual would spoil on
         * near-degenerate levels (measured on N2). */
        double gap = s.m >= 2 ? w[1] - w[0] : 0;
        quadratic = p->check_steps == 0 && gap > 0 && rnorm * rnorm <= 0.01 * p->tol * gap;
        if (rnorm <= p->tol || quadratic || s.applied >= p->max_iter) break;
        if (s.m == cap) {
            restart(&s, Y, keep, yprev, mprev, work);
            mprev = 0;
            continue;
        }
        for (int i = 0; i < s.m; ++i) yprev[i] = Y[i * s.m];
        mprev = s.m;
        olsen_correction(dim, p->diag, sign, theta, x, r, t);
        if (op->nx > 0) project_out(dim, op->X, op->nx, t);
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
    res->converged = rnorm <= p->tol || quadratic;
    if (next) *next = s.m >= 2 ? w[1] : INFINITY;
    if (vec && !rc) memcpy(vec, x, dim * sizeof(double));
    LAM_FREE_ALL(s.V, s.AV, s.T, x, ax, r, t, Y, w, yprev, work, ov);
    return rc;
}

/* ---- the extremality check ---- */

enum { MAX_ROOTS = 4, CHECK_STRIDE = 5 };

/* A standard normal deviate (Box-Muller on the generator above). */
static double normal_deviate(uint64_t *state)
{
    double u = unit_noise(state) + 0.5, v = unit_noise(state) + 0.5;
    if (u < 1e-300) u = 1e-300;
    return sqrt(-2 * log(u)) * cos(6.283185307179586 * v);
}

/* Lowest eigenvalue of [[a, rho], [rho, mu]], without cancellation. */
static double two_by_two_lowest(double a, double rho, double mu)
{
    double h = 0.5 * (mu - a), root = sqrt(h * h + rho * rho);
    if (h >= 0) return root + h > 0 ? a - rho * rho / (root + h) : a;
    return mu - rho * rho / (root - h);
}

/* The block of the roots: A = X^T H X (k x k), |R|_F with R = H X - X A,
 * and the lowest eigenvalue of A with its vector y. */
typedef struct {
    double a_min, rnorm;
    double y[MAX_ROOTS];
} root_block;

static int block_of_roots(const signed_op *op, const double *X, int nx, double *hx, root_block *b,
                          lam_error *err)
{
    size_t dim = op->p->dim;
    signed_op plain = {op->p, op->sign, NULL, 0, NULL, 0};
    double A[MAX_ROOTS * MAX_ROOTS], w[MAX_ROOTS], rr = 0;
    for (int i = 0; i < nx; ++i) {
        apply_signed(&plain, X + (size_t)i * dim, hx);
        for (int j = 0; j < nx; ++j) A[j * nx + i] = cblas_ddot((int)dim, X + (size_t)j * dim, 1, hx, 1);
        for (int j = 0; j < nx; ++j) cblas_daxpy((int)dim, -A[j * nx + i], X + (size_t)j * dim, 1, hx, 1);
        rr += cblas_ddot((int)dim, hx, 1, hx, 1);
    }
    for (int i = 0; i < nx; ++i)
        for (int j = 0; j < i; ++j) A[i * nx + j] = A[j * nx + i] = 0.5 * (A[i * nx + j] + A[j * nx + i]);
    lapack_int info = LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'V', 'U', nx, A, nx, w);
    if (info != 0) return lapack_failed(err, "dsyev", info);
    b->a_min = w[0];
    b->rnorm = sqrt(rr);
    for (int i = 0; i < nx; ++i) b->y[i] = A[i * nx];
    return 0;
}

/* Extreme eigenvalues of the Lanczos tridiagonal (alpha, beta) of order k. */
static int tridiagonal_ends(int k, const double *alpha, const double *beta, double *lo, double *hi,
                            lam_error *err)
{
    int rc = 0;
    lapack_int m, nsplit;
    size_t n = (size_t)(k > 1 ? k : 1);
    lapack_int *iblock = lam_malloc(n * sizeof(lapack_int)), *isplit = lam_malloc(n * sizeof(lapack_int));
    double *w = lam_malloc(n * sizeof(double)), *e = lam_malloc(n * sizeof(double));
    for (int i = 0; i + 1 < k; ++i) e[i] = beta[i];
    for (int end = 0; end < 2; ++end) {
        lapack_int il = end ? k : 1;
        lapack_int info = LAPACKE_dstebz('I', 'E', k, 0, 0, il, il, 0.0, alpha, e, &m, &nsplit, w,
                                         iblock, isplit);
        if (info != 0 || m < 1) {
            rc = lapack_failed(err, "dstebz", info);
            break;
        }
        *(end ? hi : lo) = w[0];
    }
    LAM_FREE_ALL(iblock, isplit, w, e);
    return rc;
}

/* log(1.648 sqrt(n) / delta) of the bound of Kuczynski and Wozniakowski. */
static double kw_log(size_t n, double delta) { return log(1.648 * sqrt((double)n) / delta); }

/* eps with P(theta_k - lambda >= eps S) <= delta after k steps. */
static double kw_eps(int k, double logterm)
{
    double s = logterm / (2.0 * k - 1);
    return s * s;
}

typedef enum { CHECK_CERTIFIED, CHECK_ROOT, CHECK_BUDGET, CHECK_FAILED } check_status;

typedef struct {
    double mu;      /* probabilistic lower bound on the complement */
    double theta;   /* lowest Lanczos value on the complement */
    int steps;
} check_outcome;

/* Lanczos on the complement of X from a random start, until mu, a lower
 * bound on the complement that fails with probability at most delta,
 * reaches `target`; or until a root of the complement shows that the budget
 * cannot get there (converged at or near the target); or the budget
 * (kmax steps) ends.  CHECK_FAILED: LAPACK failed, the reason in *err. */
static check_status lanczos_check(signed_op *op, double target, int kmax, double delta,
                                  uint64_t seed, double *work, check_outcome *out, lam_error *err)
{
    const lam_eigen_problem *p = op->p;
    size_t dim = p->dim, n = dim - (size_t)op->nx;
    double *q0 = work, *q = work + dim, *w = work + 2 * dim;
    double *alpha = lam_malloc((size_t)kmax * sizeof(double)), *beta = lam_malloc((size_t)kmax * sizeof(double));
    /* mu is tested at most kmax / CHECK_STRIDE + 1 times, each time for
     * both ends of the spectrum: the union bound shares delta out */
    double logterm = kw_log(n, delta / (2.0 * (kmax / CHECK_STRIDE + 1)));
    uint64_t state = seed;
    for (size_t i = 0; i < dim; ++i) q[i] = normal_deviate(&state);
    project_out(dim, op->X, op->nx, q);
    cblas_dscal((int)dim, 1.0 / cblas_dnrm2((int)dim, q, 1), q, 1);
    memset(q0, 0, dim * sizeof(double));
    check_status status = CHECK_BUDGET;
    double last_theta = INFINITY;
    out->mu = -INFINITY;
    out->theta = INFINITY;
    int k = 0;
    while (k < kmax && (size_t)k < n) {
        apply_signed(op, q, w);
        alpha[k] = cblas_ddot((int)dim, q, 1, w, 1);
        if (k == 0) op->xshift = alpha[0]; /* q is in the complement: no effect on this step */
        cblas_daxpy((int)dim, -alpha[k], q, 1, w, 1);
        if (k > 0) cblas_daxpy((int)dim, -beta[k - 1], q0, 1, w, 1);
        beta[k] = cblas_dnrm2((int)dim, w, 1);
        ++k;
        int last = k == kmax || (size_t)k == n || !(beta[k - 1] > 0);
        if (k % CHECK_STRIDE == 0 || last) {
            double lo = 0, hi = 0;
            if (tridiagonal_ends(k, alpha, beta, &lo, &hi, err)) {
                status = CHECK_FAILED;
                break;
            }
            double eps = kw_eps(k, logterm);
            /* the spread of the complement: the given bound, or from both
             * ends of the same run (each end off by at most eps S) */
            double spread = p->spread > 0 ? p->spread : INFINITY;
            if (2 * eps < 1) spread = fmin(spread, (hi - lo) / (1 - 2 * eps));
            out->theta = lo;
            out->mu = lo - eps * spread;
            out->steps = k;
            if (out->mu >= target) {
                status = CHECK_CERTIFIED;
                break;
            }
            /* settled below or so near the target that the budget could
             * not separate them: a root to add */
            double gap = lo - target;
            int settled = fabs(lo - last_theta) <= 1e-10 * fmax(1, fabs(lo));
            double need = gap > 0 && isfinite(spread) ? 0.5 + logterm / (2 * sqrt(gap / spread)) : INFINITY;
            if (settled && need > kmax) {
                status = CHECK_ROOT;
                break;
            }
            last_theta = lo;
        }
        if (!(beta[k - 1] > 1e-300)) break; /* invariant subspace */
        double *t = q0;
        q0 = q;
        q = t;
        memcpy(q, w, dim * sizeof(double));
        cblas_dscal((int)dim, 1.0 / beta[k - 1], q, 1);
    }
    free(alpha);
    free(beta);
    return status;
}

/* ---- the congruence check ----
 * Sylvester's law of inertia: for any nonsingular diagonal W, H - sigma and
 * B = W (H - sigma) W have as many negative eigenvalues.  With W = |D -
 * sigma|^(-1/2) (D the diagonal, floored), B is the operator Davidson's
 * preconditioner works with: its far end is pressed together, so the
 * Lanczos bound reaches a given level in far fewer steps than on H.  If B
 * restricted to the complement of one vector z is positive semidefinite
 * (certified by lanczos_check, failure probability delta), B and so H -
 * sigma have at most one negative eigenvalue: the second eigenvalue of H is
 * at least sigma.  With the Rayleigh quotient theta < sigma of x and its
 * residual r, the lowest eigenvalue is then at least theta - |r|^2 / (sigma
 * - theta) (Kato-Temple). */
/* sigma - theta as a share of the gap to the next Ritz value; z's residual
 * and step budget (z only has to hold most of B's negative direction) */
#define CONGRUENCE_STEP 0.01
#define CONGRUENCE_Z_TOL 1e-4
#define CONGRUENCE_Z_STEPS 40

typedef struct {
    signed_op op; /* H, signed, without deflation */
    const double *w;
    double sigma;
    double *tmp;
} congruent_op;

static void congruent_apply(void *ctx, const double *x, double *y)
{
    congruent_op *c = ctx;
    size_t dim = c->op.p->dim;
    for (size_t i = 0; i < dim; ++i) c->tmp[i] = c->w[i] * x[i];
    apply_signed(&c->op, c->tmp, y);
    for (size_t i = 0; i < dim; ++i) y[i] = c->w[i] * (y[i] - c->sigma * c->tmp[i]);
}

/* sigma halfway between the value of x and the next Ritz value of
 * Davidson's subspace (an upper bound on the second eigenvalue); *ok is 1
 * and res filled when x is certified extreme to tol.  Fails only when
 * LAPACK does (a non-finite operator). */
static int certify_by_congruence(const lam_eigen_problem *p, const signed_op *op, const double *x,
                                 double next, double delta, lam_eigen_result *res, int *ok,
                                 lam_error *err)
{
    int rc = 0;
    size_t dim = p->dim;
    signed_op plain = {p, op->sign, NULL, 0, NULL, 0};
    double *vecs = lam_malloc(lam_mul_size(dim, 8 * sizeof(double)));
    double *hx = vecs, *w = vecs + dim, *bdiag = vecs + 2 * dim, *z = vecs + 3 * dim;
    double *tmp = vecs + 4 * dim, *lanczos = vecs + 5 * dim;
    apply_signed(&plain, x, hx);
    res->check_iterations += 1;
    double theta = cblas_ddot((int)dim, x, 1, hx, 1);
    cblas_daxpy((int)dim, -theta, x, 1, hx, 1);
    double r = cblas_dnrm2((int)dim, hx, 1);
    /* sigma just above theta: Kato-Temple then loses r^2 / (sigma - theta),
     * at most tol / 2, and B's one negative eigenvalue is so small that a
     * rough z deflates it; the second eigenvalue of B keeps nearly all of
     * the gap */
    double gap = next - theta;
    double step = fmax(CONGRUENCE_STEP * gap, 2 * r * r / p->tol);
    double sigma = theta + step;
    *ok = 0;
    if (!(isfinite(gap) && gap > 0 && step <= 0.5 * gap)) goto done;
    /* W's floor: a determinant whose diagonal lies within the gap of sigma
     * is scaled as if it lay a gap away, keeping W bounded */
    for (size_t i = 0; i < dim; ++i) {
        double d = op->sign * p->diag[i] - sigma;
        w[i] = 1.0 / sqrt(fmax(d, gap));
        bdiag[i] = w[i] * w[i] * d;
    }
    congruent_op cop = {plain, w, sigma, tmp};
    lam_eigen_problem pb = *p;
    pb.apply = congruent_apply;
    pb.ctx = &cop;
    pb.diag = bdiag;
    pb.highest = 0;
    pb.tol = CONGRUENCE_Z_TOL;
    pb.max_iter = CONGRUENCE_Z_STEPS;
    pb.check_steps = 0;
    pb.spread = 0;
    signed_op bop = {&pb, 1.0, NULL, 0, NULL, 0};
    /* B's start: W^-1 x, the direction x stands for (hx is free now) */
    for (size_t i = 0; i < dim; ++i) hx[i] = x[i] / w[i];
    lam_eigen_result rb;
    memset(&rb, 0, sizeof rb);
    if ((rc = solve_davidson(&pb, &bop, &rb, z, hx, NULL, err))) goto done;
    res->check_iterations += rb.iterations;
    lam_progress("%s%scongruence check: sigma %.9f, B's lowest %.3e (residual %.1e, %d steps)",
                 p->label ? p->label : "", p->label ? ": " : "", op->sign * sigma, rb.value,
                 rb.residual, rb.iterations);
    if (!(rb.value < 0)) goto done;
    signed_op deflated = {&pb, 1.0, z, 1, hx, 0}; /* hx: free again */
    check_outcome c = {0, 0, 0};
    check_status st = lanczos_check(&deflated, 0.0, p->check_steps, delta, 0x4F1BBCDCBFA53E0BULL, lanczos, &c,
                                    err);
    if (st == CHECK_FAILED) {
        rc = err->code;
        goto done;
    }
    res->check_iterations += c.steps;
    lam_progress("%s%scongruence check: %d Lanczos steps: %s (B beyond %.3e, theta %.3e)",
                 p->label ? p->label : "", p->label ? ": " : "", c.steps,
                 st == CHECK_CERTIFIED ? "one eigenvalue below sigma" : "not certified", c.mu, c.theta);
    if (st != CHECK_CERTIFIED) goto done;
    /* the reported value stays Davidson's (as in the block check with one
     * root); it is called extreme when it, too, is within tol of the bound */
    double lower = theta - r * r / (sigma - theta);
    res->roots = 1;
    if (fmax(theta, op->sign * res->value) - lower <= p->tol) {
        res->extreme = 1;
        res->certificate = LAM_EIGEN_BY_CONGRUENCE;
        res->other = op->sign * lower;
        *ok = 1;
    }
done:
    free(vecs);
    return rc;
}

/* Davidson's value, then the check: roots met are solved on the
 * complement and added, until certified, out of roots or out of budget. */
static int certify_extreme(const lam_eigen_problem *p, const signed_op *op, lam_eigen_result *res,
                           double *x1, double next, lam_error *err)
{
    int rc = 0;
    size_t dim = p->dim;
    int max_roots = p->max_roots < 1 ? 1 : p->max_roots > MAX_ROOTS ? MAX_ROOTS : p->max_roots;
    /* one check by congruence, then up to max_roots block checks: the
     * union bound shares the failure probability out */
    double delta = LAM_EIGEN_FAILURE / (max_roots + 1);
    int certified = 0;
    if ((rc = certify_by_congruence(p, op, x1, next, delta, res, &certified, err)) || certified) return rc;
    double *X = lam_malloc(lam_mul_size(lam_mul_size(dim, MAX_ROOTS), sizeof(double)));
    double *work = lam_malloc(lam_mul_size(dim, 5 * sizeof(double)));
    memcpy(X, x1, dim * sizeof(double));
    int nx = 1;
    signed_op deflated = {p, op->sign, X, 0, work + 3 * dim, 0};
    root_block b = {0, 0, {0}};
    for (;;) {
        if ((rc = block_of_roots(op, X, nx, work + 4 * dim, &b, err))) break;
        double value = b.a_min;
        deflated.nx = nx;
        check_outcome c = {0, 0, 0};
        /* two_by_two_lowest(a_min, |R|, mu) >= value - tol exactly when mu
         * reaches this level */
        double target = p->tol > 0 ? value - p->tol + b.rnorm * b.rnorm / p->tol : INFINITY;
        check_status st = lanczos_check(&deflated, target, p->check_steps, delta,
                                        0x2545F4914F6CDD1DULL + (uint64_t)nx, work, &c, err);
        if (st == CHECK_FAILED) {
            rc = err->code;
            break;
        }
        res->check_iterations += c.steps;
        res->roots = nx;
        double lower = two_by_two_lowest(b.a_min, b.rnorm, c.mu);
        lam_progress("%s%scheck with %d root%s, %d Lanczos steps: %s (value %.9f, next %.9f, "
                     "rest certain beyond %.6f Eh)",
                     p->label ? p->label : "", p->label ? ": " : "", nx, nx > 1 ? "s" : "", c.steps,
                     st == CHECK_CERTIFIED ? "extreme" : st == CHECK_ROOT ? "another root" : "budget spent",
                     op->sign * value, op->sign * c.theta, op->sign * c.mu);
        if (nx > 1) {
            /* the best vector is now a combination of the roots */
            res->value = op->sign * value;
            res->residual = b.rnorm;
            res->converged = b.rnorm <= p->tol;
            memset(x1, 0, dim * sizeof(double));
            for (int i = 0; i < nx; ++i) cblas_daxpy((int)dim, b.y[i], X + (size_t)i * dim, 1, x1, 1);
        }
        if (st == CHECK_CERTIFIED) {
            res->extreme = 1;
            res->certificate = LAM_EIGEN_BY_BLOCK;
            res->other = op->sign * lower;
            break;
        }
        if (st != CHECK_ROOT || nx >= max_roots) break;
        /* the next root from a random start on the complement: from the
         * best diagonal element, Davidson settles near it, which is how
         * the root the check saw can be missed again */
        lam_eigen_result r2;
        deflated.nx = nx;
        uint64_t state = 0x853C49E6748FEA9BULL + (uint64_t)nx;
        double *start = work + 4 * dim;
        for (size_t i = 0; i < dim; ++i) start[i] = normal_deviate(&state);
        if ((rc = solve_davidson(p, &deflated, &r2, X + (size_t)nx * dim, start, NULL, err))) break;
        res->iterations += r2.iterations;
        project_out(dim, X, nx, X + (size_t)nx * dim);
        double nrm = cblas_dnrm2((int)dim, X + (size_t)nx * dim, 1);
        if (!(nrm > 1e-8)) break;
        cblas_dscal((int)dim, 1.0 / nrm, X + (size_t)nx * dim, 1);
        ++nx;
    }
    free(X);
    free(work);
    return rc;
}

int lam_eigen_extreme(const lam_eigen_problem *p, lam_eigen_result *res, double *vec, lam_error *err)
{
    memset(res, 0, sizeof *res);
    res->other = NAN;
    signed_op op = {p, p->highest ? -1.0 : 1.0, NULL, 0, NULL, 0};
    /* the callers skip empty sectors before they get here: an internal
     * error, not reachable from input */
    if (p->dim == 0) return lam_error_set(err, LAM_EX_SOFTWARE, "eigenvalue problem of dimension 0");
    if (p->dim <= p->dense_limit) return solve_dense(p, &op, res, vec, err);
    double *x = lam_malloc(lam_mul_size(p->dim, sizeof(double)));
    double next;
    int rc = solve_davidson(p, &op, res, x, NULL, &next, err);
    if (!rc && p->check_steps > 0 && p->dim > 1) rc = certify_extreme(p, &op, res, x, next, err);
    if (!rc && vec) memcpy(vec, x, p->dim * sizeof(double));
    free(x);
    return rc;
}

int lam_eigen_ends(const lam_eigen_problem *p, lam_eigen_result *lo, lam_eigen_result *hi, lam_error *err)
{
    lam_eigen_problem q = *p;
    if (lo) {
        q.highest = 0;
        if (lam_eigen_extreme(&q, lo, NULL, err)) return err->code;
    }
    if (hi) {
        q.highest = 1;
        if (lam_eigen_extreme(&q, hi, NULL, err)) return err->code;
    }
    return 0;
}
