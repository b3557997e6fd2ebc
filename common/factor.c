/* factor.c - double factorization and greedy full-rank fragments. */
#include "factor.h"
#include "linalg.h"

#include <cblas.h>
#include <lapacke.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

#define SQRT2 1.41421356237309504880

/* ------------------------------------------------------------------ */
/* small dense helpers (row major) */

static double *new_matrix(size_t rows, size_t cols)
{
    return lam_calloc(lam_mul_size(rows, cols), sizeof(double));
}

static void set_identity(int n, double *a)
{
    memset(a, 0, (size_t)n * n * sizeof(double));
    for (int i = 0; i < n; ++i) a[(size_t)i * n + i] = 1.0;
}

/* c = a b for n x n matrices. */
static void matmul(int n, const double *a, const double *b, double *c)
{
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, n, n, 1.0, a, n, b, n, 0.0, c, n);
}

static double inf_norm(int n, const double *a)
{
    double best = 0.0;
    for (int i = 0; i < n; ++i) {
        double s = 0.0;
        for (int j = 0; j < n; ++j) s += fabs(a[(size_t)i * n + j]);
        if (s > best) best = s;
    }
    return best;
}

static double frobenius(size_t len, const double *a)
{
    double s = 0.0;
    for (size_t i = 0; i < len; ++i) s += a[i] * a[i];
    return sqrt(s);
}

/* Eigenvalues ascending in w, eigenvectors as the columns of z; a is
 * left as it was given. */
static int symmetric_eigen(int n, double *a, double *w, double *z, lam_error *err)
{
    if (n == 0) return 0;
    memcpy(z, a, (size_t)n * (size_t)n * sizeof(double));
    return lam_symmetric_eigen(n, z, w, err);
}

/* Make det(v) = +1 by flipping the sign of column 0 when needed: the sign
 * of an eigenvector is free, and a proper rotation is exp of a real
 * antisymmetric generator. */
static void make_proper_rotation(int n, double *v)
{
    if (n == 0) return;
    double *lu = new_matrix((size_t)n, (size_t)n);
    lapack_int *piv = lam_malloc(lam_mul_size((size_t)n, sizeof(lapack_int)));
    memcpy(lu, v, (size_t)n * n * sizeof(double));
    /* info < 0 flags an illegal argument, impossible with n > 0 and lda = n;
     * info > 0 (singular) still leaves the factors whose signs count */
    LAPACKE_dgetrf(LAPACK_ROW_MAJOR, n, n, lu, n, piv);
    int negative = 0;
    for (int i = 0; i < n; ++i) {
        if (lu[(size_t)i * n + i] < 0) negative ^= 1;
        if (piv[i] != i + 1) negative ^= 1;
    }
    free(lu);
    free(piv);
    if (negative)
        for (int p = 0; p < n; ++p) v[(size_t)p * n] = -v[(size_t)p * n];
}

/* ------------------------------------------------------------------ */
/* matrix exponential and its Frechet derivative */

void lam_expm(int n, const double *a, double *out)
{
    size_t nn = (size_t)n * n;
    double norm = inf_norm(n, a);
    int squarings = 0;
    while (norm > 0.5 && squarings < 60) {
        norm *= 0.5;
        ++squarings;
    }
    double scale = ldexp(1.0, -squarings);
    double *x = new_matrix((size_t)n, (size_t)n), *term = new_matrix((size_t)n, (size_t)n);
    double *next = new_matrix((size_t)n, (size_t)n);
    for (size_t k = 0; k < nn; ++k) x[k] = a[k] * scale;
    set_identity(n, out);
    set_identity(n, term);
    /* ||x|| <= 1/2: the Taylor remainder after k terms is below 2^-k/k!,
     * under 1e-17 relative by k = 14; 30 is a hard stop. */
    for (int k = 1; k <= 30; ++k) {
        matmul(n, term, x, next);
        double tnorm = 0.0;
        for (size_t i = 0; i < nn; ++i) {
            term[i] = next[i] / k;
            out[i] += term[i];
            tnorm = fmax(tnorm, fabs(term[i]));
        }
        if (tnorm < 1e-18) break;
    }
    for (int s = 0; s < squarings; ++s) {
        matmul(n, out, out, next);
        memcpy(out, next, nn * sizeof(double));
    }
    LAM_FREE_ALL(x, term, next);
}

void lam_expm_frechet(int n, const double *a, const double *e, double *out)
{
    /* exp([[a, e], [0, a]]) = [[exp a, L(a, e)], [0, exp a]].  L is linear
     * in e: scale e to the size of a so it does not add squarings. */
    int m = 2 * n;
    double enorm = inf_norm(n, e), anorm = inf_norm(n, a);
    if (enorm == 0.0) {
        memset(out, 0, (size_t)n * n * sizeof(double));
        return;
    }
    double s = (anorm > 0.0 ? anorm : 1.0) / enorm;
    double *big = new_matrix((size_t)m, (size_t)m), *ex = new_matrix((size_t)m, (size_t)m);
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) {
            big[(size_t)i * m + j] = a[(size_t)i * n + j];
            big[(size_t)(i + n) * m + j + n] = a[(size_t)i * n + j];
            big[(size_t)i * m + j + n] = s * e[(size_t)i * n + j];
        }
    lam_expm(m, big, ex);
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) out[(size_t)i * n + j] = ex[(size_t)i * m + j + n] / s;
    free(big);
    free(ex);
}

static void generator_matrix(int n, const double *kappa, double *k)
{
    memset(k, 0, (size_t)n * n * sizeof(double));
    size_t at = 0;
    for (int p = 0; p < n; ++p)
        for (int q = p + 1; q < n; ++q, ++at) {
            k[(size_t)p * n + q] = kappa[at];
            k[(size_t)q * n + p] = -kappa[at];
        }
}

void lam_rotation_from_generator(int n, const double *kappa, double *u)
{
    double *k = new_matrix((size_t)n, (size_t)n);
    generator_matrix(n, kappa, k);
    lam_expm(n, k, u);
    free(k);
}

/* ------------------------------------------------------------------ */
/* L-BFGS */

#define LBFGS_MEMORY 8

static double dot(int n, const double *a, const double *b)
{
    return cblas_ddot(n, a, 1, b, 1);
}

/* d = -H g by the two-loop recursion over the stored pairs. */
static void lbfgs_direction(int dim, int stored, int newest, const double *sv,
                            const double *yv, const double *rho, const double *g, double *d)
{
    double alpha[LBFGS_MEMORY];
    memcpy(d, g, (size_t)dim * sizeof(double));
    for (int k = 0; k < stored; ++k) {
        int j = (newest - k + LBFGS_MEMORY) % LBFGS_MEMORY;
        alpha[j] = rho[j] * dot(dim, sv + (size_t)j * dim, d);
        cblas_daxpy(dim, -alpha[j], yv + (size_t)j * dim, 1, d, 1);
    }
    if (stored > 0) {
        const double *y = yv + (size_t)newest * dim;
        double gamma = 1.0 / (rho[newest] * dot(dim, y, y));
        cblas_dscal(dim, gamma, d, 1);
    }
    for (int k = stored - 1; k >= 0; --k) {
        int j = (newest - k + LBFGS_MEMORY) % LBFGS_MEMORY;
        double beta = rho[j] * dot(dim, yv + (size_t)j * dim, d);
        cblas_daxpy(dim, alpha[j] - beta, sv + (size_t)j * dim, 1, d, 1);
    }
    cblas_dscal(dim, -1.0, d, 1);
}

int lam_lbfgs(int dim, double *x, lam_objective f, void *ctx, int max_iter, double gtol,
              double *fx)
{
    double *g = new_matrix((size_t)dim, 1), *gn = new_matrix((size_t)dim, 1);
    double *xn = new_matrix((size_t)dim, 1), *d = new_matrix((size_t)dim, 1);
    double *sv = new_matrix(LBFGS_MEMORY, (size_t)dim), *yv = new_matrix(LBFGS_MEMORY, (size_t)dim);
    double rho[LBFGS_MEMORY] = {0};
    int stored = 0, newest = LBFGS_MEMORY - 1, iter = 0;
    double fcur = f(x, g, ctx);
    for (; iter < max_iter; ++iter) {
        if (dim == 0) break;
        double gmax = fabs(g[cblas_idamax(dim, g, 1)]);
        if (gmax <= gtol) break;
        lbfgs_direction(dim, stored, newest, sv, yv, rho, g, d);
        double slope = dot(dim, g, d);
        if (slope >= 0.0) { /* not a descent direction: restart */
            stored = 0;
            for (int i = 0; i < dim; ++i) d[i] = -g[i];
            slope = dot(dim, g, d);
        }
        double step = stored == 0 ? fmin(1.0, 1.0 / gmax) : 1.0, fnew = fcur;
        int accepted = 0;
        for (int tries = 0; tries < 60; ++tries, step *= 0.5) {
            for (int i = 0; i < dim; ++i) xn[i] = x[i] + step * d[i];
            fnew = f(xn, gn, ctx);
            if (fnew <= fcur + 1e-4 * step * slope) {
                accepted = 1;
                break;
            }
        }
        if (!accepted) break; /* no decrease left at machine precision */
        double sy = 0.0;
        for (int i = 0; i < dim; ++i) sy += (xn[i] - x[i]) * (gn[i] - g[i]);
        /* A pair without positive curvature would spoil the inverse
         * Hessian: keep the old pairs then. */
        if (sy > 1e-300) {
            newest = (newest + 1) % LBFGS_MEMORY;
            double *s = sv + (size_t)newest * dim, *y = yv + (size_t)newest * dim;
            for (int i = 0; i < dim; ++i) {
                s[i] = xn[i] - x[i];
                y[i] = gn[i] - g[i];
            }
            rho[newest] = 1.0 / sy;
            if (stored < LBFGS_MEMORY) ++stored;
        }
        memcpy(x, xn, (size_t)dim * sizeof(double));
        memcpy(g, gn, (size_t)dim * sizeof(double));
        double decrease = fcur - fnew;
        fcur = fnew;
        if (decrease <= 1e-16 * fmax(fabs(fcur), 1e-300) && decrease >= 0.0) break;
    }
    *fx = fcur;
    LAM_FREE_ALL(g, gn, xn, d, sv, yv);
    return iter;
}

/* ------------------------------------------------------------------ */
/* fragment tensors */

/* v[(p n + q) n + i] = u_pi u_qi: column i is vec(u_i u_i^T). */
static void pair_projectors(int n, const double *u, double *v)
{
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int i = 0; i < n; ++i)
                v[((size_t)p * n + q) * n + i] = u[(size_t)p * n + i] * u[(size_t)q * n + i];
}

/* g (n^2 x n^2) += sign * v lam v^T. */
static void add_fragment_tensor(int n, const double *v, const double *lam, double sign,
                                double *g)
{
    int nn = n * n;
    double *tmp = new_matrix((size_t)nn, (size_t)n);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, nn, n, n, 1.0, v, n, lam, n, 0.0,
                tmp, n);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, nn, nn, n, sign, tmp, n, v, n, 1.0, g,
                nn);
    free(tmp);
}

/* p = v^T g v (n x n): the rotated (ii|jj). */
static void diagonal_projection(int n, const double *v, const double *g, double *p)
{
    int nn = n * n;
    double *w = new_matrix((size_t)nn, (size_t)n);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, nn, n, nn, 1.0, g, nn, v, n, 0.0, w,
                n);
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, n, n, nn, 1.0, v, n, w, n, 0.0, p, n);
    free(w);
}

static int kappa_count(int n) { return n * (n - 1) / 2; }
static int lambda_count(int n) { return n * (n + 1) / 2; }

static void unpack_lambda(int n, const double *l, double *lam)
{
    size_t at = 0;
    for (int i = 0; i < n; ++i)
        for (int j = i; j < n; ++j, ++at) lam[(size_t)i * n + j] = lam[(size_t)j * n + i] = l[at];
}

static void pack_lambda(int n, const double *lam, double *l)
{
    size_t at = 0;
    for (int i = 0; i < n; ++i)
        for (int j = i; j < n; ++j, ++at) l[at] = lam[(size_t)i * n + j];
}

double lam_fragment_fit(int n, const double *resid, const double *u0, const double *x,
                        double *grad)
{
    int nn = n * n, nk = kappa_count(n);
    size_t n4 = (size_t)nn * nn;
    double *k = new_matrix((size_t)n, (size_t)n), *e = new_matrix((size_t)n, (size_t)n);
    double *u = new_matrix((size_t)n, (size_t)n), *lam = new_matrix((size_t)n, (size_t)n);
    double *v = new_matrix((size_t)nn, (size_t)n), *d = new_matrix(n4, 1);
    generator_matrix(n, x, k);
    lam_expm(n, k, e);
    matmul(n, u0, e, u);
    unpack_lambda(n, x + nk, lam);
    pair_projectors(n, u, v);
    memcpy(d, resid, n4 * sizeof(double));
    add_fragment_tensor(n, v, lam, -1.0, d);
    double f = cblas_ddot((int)n4, d, 1, d, 1);
    if (grad) {
        /* With D = resid - G, W = D V, P = V^T W, Y = W lam:
         * df/dlam_ij = -2 P_ij for each ordered pair (i, j);
         * U enters G_pqrs = sum_ij lam_ij U_pi U_qi U_rj U_sj four times,
         * and D_pqrs = D_rspq makes the (r, s) places equal to the (p, q)
         * ones: df/dU_ab = -4 sum_q U_qb (Y_(aq),b + Y_(qa),b). */
        double *w = new_matrix((size_t)nn, (size_t)n), *p = new_matrix((size_t)n, (size_t)n);
        double *y = new_matrix((size_t)nn, (size_t)n), *gu = new_matrix((size_t)n, (size_t)n);
        double *ge = new_matrix((size_t)n, (size_t)n), *m = new_matrix((size_t)n, (size_t)n);
        cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, nn, n, nn, 1.0, d, nn, v, n, 0.0,
                    w, n);
        cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, n, n, nn, 1.0, v, n, w, n, 0.0, p,
                    n);
        cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, nn, n, n, 1.0, w, n, lam, n, 0.0,
                    y, n);
        for (int a = 0; a < n; ++a)
            for (int b = 0; b < n; ++b) {
                double s = 0.0;
                for (int q = 0; q < n; ++q)
                    s += u[(size_t)q * n + b] * (y[((size_t)a * n + q) * n + b] +
                                                 y[((size_t)q * n + a) * n + b]);
                gu[(size_t)a * n + b] = -4.0 * s;
            }
        /* U = u0 E: df/dE = u0^T df/dU; df/dK = L(K^T, df/dE). */
        cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, n, n, n, 1.0, u0, n, gu, n, 0.0, ge,
                    n);
        for (int i = 0; i < n; ++i)
            for (int j = 0; j < n; ++j) e[(size_t)i * n + j] = k[(size_t)j * n + i];
        lam_expm_frechet(n, e, ge, m);
        size_t at = 0;
        for (int a = 0; a < n; ++a)
            for (int b = a + 1; b < n; ++b, ++at)
                grad[at] = m[(size_t)a * n + b] - m[(size_t)b * n + a];
        for (int i = 0; i < n; ++i)
            for (int j = i; j < n; ++j, ++at)
                grad[at] = (i == j ? -2.0 : -4.0) * p[(size_t)i * n + j];
        LAM_FREE_ALL(w, p, y, gu, ge, m);
    }
    LAM_FREE_ALL(k, e, u, lam, v, d);
    return f;
}

/* ------------------------------------------------------------------ */
/* the two-body fragments found by a method */

typedef struct {
    int n, count, cap;
    double *u;   /* count x n x n */
    double *lam; /* count x n x n */
} fragment_list;

static void list_push(fragment_list *fl, const double *u, const double *lam)
{
    size_t nn = (size_t)fl->n * fl->n;
    if (fl->count == fl->cap) {
        fl->cap = fl->cap ? 2 * fl->cap : 16;
        fl->u = lam_realloc(fl->u, lam_mul_size(lam_mul_size((size_t)fl->cap, nn), sizeof(double)));
        fl->lam = lam_realloc(fl->lam,
                              lam_mul_size(lam_mul_size((size_t)fl->cap, nn), sizeof(double)));
    }
    memcpy(fl->u + (size_t)fl->count * nn, u, nn * sizeof(double));
    memcpy(fl->lam + (size_t)fl->count * nn, lam, nn * sizeof(double));
    ++fl->count;
}

static void list_free(fragment_list *fl)
{
    free(fl->u);
    free(fl->lam);
}

/* The supermatrix over symmetric pairs p <= q, scaled so that its
 * eigenvectors are orthonormal in the full n^2 space: M_ab = s_a s_b
 * (pq|rs) with s = 1 for p = q and sqrt 2 otherwise.  Its eigenpairs
 * (w, z) give (pq|rs) = sum_l w_l L^l_pq L^l_rs, L^l_pq = z_al / s_a. */
static int pair_count(int n) { return n * (n + 1) / 2; }

static void pair_of(int n, int a, int *p, int *q)
{
    int i = 0;
    while (a >= n - i) {
        a -= n - i;
        ++i;
    }
    *p = i;
    *q = i + a;
}

static void build_supermatrix(int n, const double *g, double *m)
{
    int np = pair_count(n);
    size_t nn = (size_t)n * n;
    for (int a = 0; a < np; ++a) {
        int p, q;
        pair_of(n, a, &p, &q);
        double sa = p == q ? 1.0 : SQRT2;
        for (int b = 0; b < np; ++b) {
            int r, s;
            pair_of(n, b, &r, &s);
            double sb = r == s ? 1.0 : SQRT2;
            m[(size_t)a * np + b] = sa * sb * g[((size_t)p * n + q) * nn + (size_t)r * n + s];
        }
    }
}

/* Factor l of the supermatrix as a fragment: L = V diag(e) V^T, U = V,
 * lam_ij = w e_i e_j. */
static int factor_to_fragment(int n, const double *z, int np, int l, double w, double *u,
                              double *lam, lam_error *err)
{
    double *mat = new_matrix((size_t)n, (size_t)n), *e = new_matrix((size_t)n, 1);
    for (int a = 0; a < np; ++a) {
        int p, q;
        pair_of(n, a, &p, &q);
        double x = z[(size_t)a * np + l] / (p == q ? 1.0 : SQRT2);
        mat[(size_t)p * n + q] = mat[(size_t)q * n + p] = x;
    }
    int rc = symmetric_eigen(n, mat, e, u, err);
    if (!rc) {
        make_proper_rotation(n, u);
        for (int i = 0; i < n; ++i)
            for (int j = 0; j < n; ++j) lam[(size_t)i * n + j] = w * e[i] * e[j];
    }
    free(mat);
    free(e);
    return rc;
}

/* Indices of the supermatrix eigenvalues by |w| ascending (insertion
 * sort: np is small next to the n^6 eigen-solve). */
static void order_by_magnitude(int np, const double *w, int *order)
{
    for (int a = 0; a < np; ++a) order[a] = a;
    for (int a = 1; a < np; ++a) {
        int t = order[a], b = a;
        while (b > 0 && fabs(w[order[b - 1]]) > fabs(w[t])) {
            order[b] = order[b - 1];
            --b;
        }
        order[b] = t;
    }
}

static int double_factorization(const lam_spinfree *sf, const lam_factor_options *o,
                                fragment_list *fl, lam_factor_info *info, lam_error *err)
{
    int n = sf->n, np = pair_count(n);
    double *m = new_matrix((size_t)np, (size_t)np), *w = new_matrix((size_t)np, 1);
    double *z = new_matrix((size_t)np, (size_t)np);
    double *u = new_matrix((size_t)n, (size_t)n), *lam = new_matrix((size_t)n, (size_t)n);
    int *order = lam_malloc(lam_mul_size((size_t)np + 1, sizeof(int)));
    build_supermatrix(n, sf->g, m);
    lam_progress("double factorization: %d x %d supermatrix", np, np);
    int rc = symmetric_eigen(np, m, w, z, err);
    if (!rc) order_by_magnitude(np, w, order);
    /* Drop the smallest factors while their |w| sum stays within tol:
     * |L_pq| <= 1, so the sum bounds the largest integral error. */
    int first_kept = 0;
    double dropped = 0.0;
    while (!rc && first_kept < np && dropped + fabs(w[order[first_kept]]) <= o->tol)
        dropped += fabs(w[order[first_kept++]]);
    info->factors_total = np;
    info->discarded_weight = dropped;
    for (int k = np - 1; !rc && k >= first_kept; --k) {
        if ((rc = factor_to_fragment(n, z, np, order[k], w[order[k]], u, lam, err))) break;
        list_push(fl, u, lam);
    }
    LAM_FREE_ALL(m, w, z, u, lam, order);
    return rc;
}

/* ---- full rank ---- */

typedef struct {
    int n;
    const double *resid, *u0;
    double scale; /* 1 / ||resid||^2: the fit works on a relative norm */
} fit_problem;

double lam_fragment_fit_reduced(int n, const double *resid, const double *u0,
                                const double *kappa, double *grad)
{
    int nk = kappa_count(n), dim = nk + lambda_count(n);
    size_t nn = (size_t)n * n;
    double *x = new_matrix((size_t)dim, 1), *full = new_matrix((size_t)dim, 1);
    double *k = new_matrix((size_t)n, (size_t)n), *e = new_matrix((size_t)n, (size_t)n);
    double *u = new_matrix((size_t)n, (size_t)n), *v = new_matrix(nn, (size_t)n);
    double *lam = new_matrix((size_t)n, (size_t)n);
    memcpy(x, kappa, (size_t)nk * sizeof(double));
    generator_matrix(n, kappa, k);
    lam_expm(n, k, e);
    matmul(n, u0, e, u);
    pair_projectors(n, u, v);
    diagonal_projection(n, v, resid, lam);
    pack_lambda(n, lam, x + nk);
    /* At the best l the l-gradient vanishes, so the K-gradient of the
     * joint objective is the gradient of the reduced one. */
    double f = lam_fragment_fit(n, resid, u0, x, grad ? full : NULL);
    if (grad) memcpy(grad, full, (size_t)nk * sizeof(double));
    LAM_FREE_ALL(x, full, k, e, u, v, lam);
    return f;
}

static double projected_objective(const double *kappa, double *grad, void *ctx)
{
    const fit_problem *fp = ctx;
    double f = lam_fragment_fit_reduced(fp->n, fp->resid, fp->u0, kappa, grad);
    if (grad) cblas_dscal(kappa_count(fp->n), fp->scale, grad, 1);
    return f * fp->scale;
}

/* Starting rotation: the leading double-factorization factor of the
 * residual, so the first guess is at least as good as that factor. */
static int leading_factor_rotation(int n, const double *resid, double *u, lam_error *err)
{
    int np = pair_count(n);
    double *m = new_matrix((size_t)np, (size_t)np), *w = new_matrix((size_t)np, 1);
    double *z = new_matrix((size_t)np, (size_t)np), *lam = new_matrix((size_t)n, (size_t)n);
    build_supermatrix(n, resid, m);
    int rc = symmetric_eigen(np, m, w, z, err);
    if (!rc) {
        int best = 0;
        for (int a = 1; a < np; ++a)
            if (fabs(w[a]) > fabs(w[best])) best = a;
        rc = factor_to_fragment(n, z, np, best, w[best], u, lam, err);
    }
    LAM_FREE_ALL(m, w, z, lam);
    return rc;
}

/* L-BFGS iterations are added to *iters. */
static int fit_one_fragment(int n, double *resid, const lam_factor_options *o, double *u,
                            double *lam, long *iters, lam_error *err)
{
    int nk = kappa_count(n);
    size_t nn = (size_t)n * n;
    double *u0 = new_matrix((size_t)n, (size_t)n), *v = new_matrix(nn, (size_t)n);
    double *kappa = new_matrix((size_t)nk, 1), *k = new_matrix((size_t)n, (size_t)n);
    double *e = new_matrix((size_t)n, (size_t)n);
    if (leading_factor_rotation(n, resid, u0, err)) {
        LAM_FREE_ALL(u0, v, kappa, k, e);
        return err->code;
    }
    double norm2 = cblas_ddot((int)(nn * nn), resid, 1, resid, 1), fx;
    fit_problem fp = {n, resid, u0, 1.0 / norm2};
    *iters += lam_lbfgs(nk, kappa, projected_objective, &fp, o->max_iter, 1e-12, &fx);
    generator_matrix(n, kappa, k);
    lam_expm(n, k, e);
    matmul(n, u0, e, u);
    pair_projectors(n, u, v);
    diagonal_projection(n, v, resid, lam);
    add_fragment_tensor(n, v, lam, -1.0, resid);
    LAM_FREE_ALL(u0, v, kappa, k, e);
    return 0;
}

static int full_rank(const lam_spinfree *sf, const lam_factor_options *o, fragment_list *fl,
                     lam_factor_info *info, lam_error *err)
{
    int n = sf->n;
    size_t n4 = (size_t)n * n * n * n;
    double *resid = new_matrix(n4, 1);
    double *u = new_matrix((size_t)n, (size_t)n), *lam = new_matrix((size_t)n, (size_t)n);
    memcpy(resid, sf->g, n4 * sizeof(double));
    double norm = frobenius(n4, resid);
    while (norm > o->tol) {
        if (fl->count >= o->max_fragments) {
            LAM_FREE_ALL(resid, u, lam);
            return lam_error_set(err, LAM_EX_DATA,
                                 "full-rank fragments: residual %.3g Eh above --tol %.3g after %d "
                                 "fragments (raise --max-fragments or --tol)",
                                 norm, o->tol, fl->count);
        }
        if (fit_one_fragment(n, resid, o, u, lam, &info->iterations, err)) {
            LAM_FREE_ALL(resid, u, lam);
            return err->code;
        }
        list_push(fl, u, lam);
        double before = norm;
        norm = frobenius(n4, resid);
        lam_progress("full rank: fragment %d, residual %.3e Eh", fl->count, norm);
        if (!(norm < before)) {
            LAM_FREE_ALL(resid, u, lam);
            return lam_error_set(err, LAM_EX_DATA,
                                 "full-rank fragments: fragment %d does not lower the residual "
                                 "(%.3g Eh, --tol %.3g is below what the fit can reach)",
                                 fl->count, norm, o->tol);
        }
    }
    info->residual_norm = norm;
    LAM_FREE_ALL(resid, u, lam);
    return 0;
}

/* ------------------------------------------------------------------ */
/* assembly into rotated reflections */

static void add_unitary(lam_fragments *fr, int f, int a, int b, double c,
                        const lam_factor_options *o, lam_factor_info *info)
{
    if (fabs(c) <= o->cutoff) {
        info->dropped_lambda += fabs(c);
        info->dropped_unitaries += c != 0.0;
        return;
    }
    lam_fragments_add(fr, f, a, b, c);
}

/* 1/2 sum_ij l_ij N_i N_j with N_i = sum_s (1 - R_is)/2: the products of
 * two different reflections carry l_ij / 4 each; R_is R_is = 1 goes to the
 * identity and the terms linear in R are one-body (left to fragment 0). */
static void add_two_body_fragment(lam_fragments *fr, int f, const double *lam,
                                  const lam_factor_options *o, lam_factor_info *info)
{
    int n = fr->n;
    for (int a = 0; a < 2 * n; ++a)
        for (int b = a + 1; b < 2 * n; ++b)
            add_unitary(fr, f, a, b, 0.25 * lam[(size_t)(a / 2) * n + b / 2], o, info);
}

/* Fragment 0: whatever one-body operator and constant the two-body
 * fragments' reflections leave, made up to e0 + h.E with sum_i t_i N_i. */
static int add_one_body_fragment(lam_fragments *fr, const lam_spinfree *sf,
                                 const lam_factor_options *o, lam_factor_info *info,
                                 lam_error *err)
{
    int n = sf->n;
    lam_spinfree *two;
    int rc = lam_fragments_to_spinfree(fr, NULL, &two, err);
    if (rc) return rc;
    double *t = new_matrix((size_t)n, (size_t)n), *ev = new_matrix((size_t)n, 1);
    double *w = new_matrix((size_t)n, (size_t)n);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            t[(size_t)p * n + q] = 0.5 * (LAM_H(sf, p, q) - LAM_H(two, p, q) + LAM_H(sf, q, p) -
                                          LAM_H(two, q, p));
    if ((rc = symmetric_eigen(n, t, ev, w, err))) {
        lam_spinfree_free(two);
        LAM_FREE_ALL(t, ev, w);
        return rc;
    }
    make_proper_rotation(n, w);
    memcpy(fr->rot, w, (size_t)n * n * sizeof(double));
    fr->constant = sf->e0 - two->e0;
    /* t_i N_i = t_i - t_i/2 (R_ia + R_ib) */
    for (int i = 0; i < n; ++i) {
        fr->constant += ev[i];
        add_unitary(fr, 0, 2 * i, -1, -0.5 * ev[i], o, info);
        add_unitary(fr, 0, 2 * i + 1, -1, -0.5 * ev[i], o, info);
    }
    lam_spinfree_free(two);
    LAM_FREE_ALL(t, ev, w);
    return 0;
}

/* Errors of the whole LCU against the input, by exact algebra. */
static int measure_reconstruction(const lam_fragments *fr, const lam_spinfree *sf,
                                  lam_factor_info *info, lam_error *err)
{
    lam_spinfree *back;
    int rc = lam_fragments_to_spinfree(fr, NULL, &back, err);
    if (rc) return rc;
    size_t nn = (size_t)sf->n * sf->n, n4 = nn * nn;
    double maxerr = 0.0, sum2 = 0.0, gsum2 = 0.0;
    for (size_t k = 0; k < nn; ++k) {
        double d = back->h[k] - sf->h[k];
        maxerr = fmax(maxerr, fabs(d));
        sum2 += d * d;
    }
    for (size_t k = 0; k < n4; ++k) {
        double d = back->g[k] - sf->g[k];
        maxerr = fmax(maxerr, fabs(d));
        gsum2 += d * d;
    }
    info->integral_max_error = maxerr;
    info->integral_norm_error = sqrt(sum2 + gsum2);
    info->residual_norm = sqrt(gsum2);
    info->constant_error = fabs(back->e0 - sf->e0);
    lam_spinfree_free(back);
    return 0;
}

void lam_factor_defaults(lam_factor_options *o, lam_factor_method method, int n)
{
    o->method = method;
    o->tol = method == LAM_FACTOR_DOUBLE ? 1e-10 : 1e-6;
    o->cutoff = 1e-14;
    o->max_fragments = 10 * pair_count(n) + 10;
    o->max_iter = 500;
}

int lam_factor(const lam_spinfree *sf, const lam_factor_options *o, lam_factor_info *info, lam_fragments **out,
               lam_error *err)
{
    fragment_list fl = {sf->n, 0, 0, NULL, NULL};
    memset(info, 0, sizeof *info);
    *out = NULL;
    if (o->method == LAM_FACTOR_DOUBLE ? double_factorization(sf, o, &fl, info, err)
                                       : full_rank(sf, o, &fl, info, err)) {
        list_free(&fl);
        return err->code;
    }
    info->factors_kept = fl.count;
    lam_fragments *fr = lam_fragments_new(sf->n, fl.count + 1);
    fr->electrons = sf->electrons;
    fr->ms2 = sf->ms2;
    size_t nn = (size_t)sf->n * sf->n;
    for (int f = 0; f < fl.count; ++f) {
        memcpy(fr->rot + (size_t)(f + 1) * nn, fl.u + (size_t)f * nn, nn * sizeof(double));
        add_two_body_fragment(fr, f + 1, fl.lam + (size_t)f * nn, o, info);
    }
    list_free(&fl);
    lam_fragments_merge(fr);
    if (add_one_body_fragment(fr, sf, o, info, err)) {
        lam_fragments_free(fr);
        return err->code;
    }
    lam_fragments_merge(fr);
    if (measure_reconstruction(fr, sf, info, err)) {
        lam_fragments_free(fr);
        return err->code;
    }
    *out = fr;
    return 0;
}
