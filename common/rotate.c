/* rotate.c - orbital rotations that lower the one-norm (see rotate.h). */
#include "rotate.h"

#include <cblas.h>
#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "encoding.h"
#include "fermion.h"
#include "group.h"
#include "linalg.h"
#include "lp.h"
#include "norm.h"
#include "pauli.h"
#include "shift.h"
#include "util.h"

#define M_PI_8 0.39269908169872414 /* pi / 8 */

/* ---- the transformation ---- */

/* dst[s, abc] = sum_d u[d, s] src[abc, d]: transforms the last index and
 * moves it to the front, so four calls transform all four indices and end
 * in the original index order. */
static void transform_last_to_front(int n, const double *u, const double *src, double *dst)
{
    int n3 = n * n * n;
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasTrans, n, n3, n, 1.0, u, n, src, n, 0.0, dst,
                n3);
}

/* Average each element over the 8 index permutations of real integrals:
 * the projection that keeps every contraction with symmetric g'. */
static void symmetrize8(int n, double *f)
{
    size_t N = (size_t)n;
#define AT(p, q, r, s) f[(((size_t)(p) * N + (q)) * N + (r)) * N + (s)]
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q)
            for (int r = 0; r <= p; ++r)
                for (int s = 0; s <= (r == p ? q : r); ++s) {
                    /* pairwise, so that eight equal values give that value */
                    double m = (((AT(p, q, r, s) + AT(q, p, r, s)) +
                                 (AT(p, q, s, r) + AT(q, p, s, r))) +
                                ((AT(r, s, p, q) + AT(s, r, p, q)) +
                                 (AT(r, s, q, p) + AT(s, r, q, p)))) * 0.125;
                    AT(p, q, r, s) = AT(q, p, r, s) = AT(p, q, s, r) = AT(q, p, s, r) = m;
                    AT(r, s, p, q) = AT(s, r, p, q) = AT(r, s, q, p) = AT(s, r, q, p) = m;
                }
#undef AT
}

void lam_rotate_apply(const lam_spinfree *in, const double *u, lam_spinfree *out, double *work)
{
    int n = in->n;
    transform_last_to_front(n, u, in->g, work);
    transform_last_to_front(n, u, work, out->g);
    transform_last_to_front(n, u, out->g, work);
    transform_last_to_front(n, u, work, out->g);
    double *t = lam_malloc(lam_mul_size((size_t)n * n, sizeof(double)));
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, n, n, 1.0, in->h, n, u, n, 0.0, t,
                n);
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, n, n, n, 1.0, u, n, t, n, 0.0, out->h, n);
    free(t);
    /* exactly symmetric, as a stream round trip makes it: the operator
     * evaluated is then the operator written, to the last bit */
    symmetrize8(n, out->g);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < p; ++q) {
            double v = 0.5 * (out->h[p * n + q] + out->h[q * n + p]);
            out->h[p * n + q] = out->h[q * n + p] = v;
        }
    out->e0 = in->e0;
    out->electrons = in->electrons;
    out->ms2 = in->ms2;
}

/* ---- the smoothed one-norm and its gradient ---- */

static inline double smooth_abs(double x, double mu)
{
    return mu > 0 ? sqrt(x * x + mu * mu) - mu : fabs(x);
}

static inline double smooth_sign(double x, double mu)
{
    if (mu > 0) return x / sqrt(x * x + mu * mu);
    return (x > 0) - (x < 0);
}

double lam_rotate_smooth_lambda(const lam_spinfree *sf, double mu, double *gh, double *gg)
{
    int n = sf->n;
    size_t N = (size_t)n;
    double one = 0, two = 0;
    /* T_pq = h_pq + sum_r (pq|rr) - 1/2 sum_r (pr|rq): the effective one-body
     * part of the closed form (lam_spinfree_lambda). */
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) {
            double t = LAM_H(sf, p, q);
            for (int r = 0; r < n; ++r) t += LAM_G(sf, p, q, r, r) - 0.5 * LAM_G(sf, p, r, r, q);
            one += smooth_abs(t, mu);
            if (gh) gh[p * N + q] = smooth_sign(t, mu);
        }
    /* 1/4 sum |(pq|rs)| + 1/2 sum_{p>r,q>s} |(pq|rs) - (ps|rq)|; the second
     * sum is 1/8 of the sum over all indices (D_pqrs changes sign under
     * p<->r and under q<->s and vanishes for p = r or q = s). */
    for (int a = 0; a < n; ++a)
        for (int c = 0; c < n; ++c)
            for (int b = 0; b < n; ++b)
                for (int d = 0; d < n; ++d) {
                    double x = LAM_G(sf, a, b, c, d);
                    double dd = x - LAM_G(sf, a, d, c, b);
                    two += 0.25 * smooth_abs(x, mu) + 0.125 * smooth_abs(dd, mu);
                    if (gg)
                        gg[((a * N + b) * N + c) * N + d] =
                            0.25 * (smooth_sign(x, mu) + smooth_sign(dd, mu));
                }
    if (gg) {
        /* dT_pq/dg: (pq|rr) and -1/2 (pr|rq) */
        for (int p = 0; p < n; ++p)
            for (int q = 0; q < n; ++q) {
                double w = gh[p * N + q];
                for (int r = 0; r < n; ++r) {
                    gg[((p * N + q) * N + r) * N + r] += w;
                    gg[((p * N + r) * N + r) * N + q] -= 0.5 * w;
                }
            }
        symmetrize8(n, gg);
    }
    return one + two;
}

void lam_rotate_gradient(const lam_spinfree *sf, const double *gh, const double *gg, double *grad)
{
    int n = sf->n, n3 = n * n * n;
    double *big = lam_malloc(lam_mul_size((size_t)n * n, sizeof(double)));
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, n, n, n3, 4.0, sf->g, n3, gg, n3, 0.0,
                big, n);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, n, n, n, 1.0, sf->h, n, gh, n, 1.0, big,
                n);
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, n, n, n, 1.0, sf->h, n, gh, n, 1.0, big,
                n);
    for (int a = 0; a < n; ++a)
        for (int b = 0; b < n; ++b) grad[a * n + b] = big[a * n + b] - big[b * n + a];
    free(big);
}

/* ---- orthogonal matrices ---- */

double lam_rotate_orthogonality_error(int n, const double *u)
{
    double *s = lam_malloc(lam_mul_size((size_t)n * n, sizeof(double)));
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, n, n, n, 1.0, u, n, u, n, 0.0, s, n);
    double err = 0;
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) {
            double e = fabs(s[i * n + j] - (i == j));
            if (!(e <= err)) err = isnan(e) ? INFINITY : e;
        }
    free(s);
    return err;
}

int lam_rotate_orthonormalize(int n, double *u, lam_error *err)
{
    size_t nn = (size_t)n * n;
    double *s = lam_malloc(lam_mul_size(nn, sizeof(double)));
    double *w = lam_malloc(lam_mul_size((size_t)n, sizeof(double)));
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, n, n, n, 1.0, u, n, u, n, 0.0, s, n);
    if (lam_symmetric_eigen(n, s, w, err)) {
        free(w);
        free(s);
        return err->code;
    }
    double *t = lam_malloc(lam_mul_size(nn, sizeof(double)));
    /* t = V diag(w^-1/2), then (U^T U)^-1/2 = t V^T */
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) t[i * n + j] = s[i * n + j] / sqrt(w[j]);
    double *r = lam_malloc(lam_mul_size(nn, sizeof(double)));
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, n, n, n, 1.0, t, n, s, n, 0.0, r, n);
    memcpy(t, u, nn * sizeof(double));
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, n, n, 1.0, t, n, r, n, 0.0, u, n);
    LAM_FREE_ALL(r, t, w, s);
    return 0;
}

int lam_rotate_expm(int n, const double *k, double *e, lam_error *err)
{
    size_t nn = (size_t)n * n;
    double norm = 0;
    for (size_t i = 0; i < nn; ++i) norm = fmax(norm, fabs(k[i]));
    norm *= n;  /* bounds the infinity norm */
    int squarings = 0;
    while (norm > 0.25 && squarings < 60) {
        norm /= 2;
        ++squarings;
    }
    double scale = ldexp(1.0, -squarings);
    double *a = lam_malloc(lam_mul_size(nn, sizeof(double)));
    double *term = lam_malloc(lam_mul_size(nn, sizeof(double)));
    double *next = lam_malloc(lam_mul_size(nn, sizeof(double)));
    for (size_t i = 0; i < nn; ++i) a[i] = k[i] * scale;
    /* Taylor to degree 14: with |A| <= 1/4 the remainder is below 1e-22 */
    memset(e, 0, nn * sizeof(double));
    memset(term, 0, nn * sizeof(double));
    for (int i = 0; i < n; ++i) e[(size_t)i * n + i] = term[(size_t)i * n + i] = 1;
    for (int j = 1; j <= 14; ++j) {
        cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, n, n, 1.0 / j, term, n, a, n,
                    0.0, next, n);
        double *sw = term;
        term = next;
        next = sw;
        for (size_t i = 0; i < nn; ++i) e[i] += term[i];
    }
    for (int s = 0; s < squarings; ++s) {
        cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, n, n, 1.0, e, n, e, n, 0.0,
                    next, n);
        memcpy(e, next, nn * sizeof(double));
    }
    LAM_FREE_ALL(a, term, next);
    return lam_rotate_orthonormalize(n, e, err);
}

/* ---- orbital blocks ---- */

static int parse_index(const char **s, int n, int *out)
{
    if (!isdigit((unsigned char)**s)) return -1;
    long v = 0;
    while (isdigit((unsigned char)**s)) {
        v = v * 10 + (**s - '0');
        if (v > 1000000) return -1;
        ++*s;
    }
    if (v >= n) return -1;
    *out = (int)v;
    return 0;
}

int lam_rotate_blocks_parse(const char *spec, int n, int electrons, lam_rotate_blocks *b,
                            char *err, size_t errsize)
{
    b->n = n;
    b->block = lam_malloc(lam_mul_size((size_t)(n > 0 ? n : 1), sizeof(int)));
    if (!spec) {
        for (int p = 0; p < n; ++p) b->block[p] = 0;
        return 0;
    }
    if (strcmp(spec, "occ-virt") == 0) {
        if (electrons < 0 || electrons % 2 || electrons / 2 > n) {
            snprintf(err, errsize, "occ-virt needs an even electron count of at most %d", 2 * n);
            return -1;
        }
        for (int p = 0; p < n; ++p) b->block[p] = p < electrons / 2 ? 0 : 1;
        return 0;
    }
    for (int p = 0; p < n; ++p) b->block[p] = -1;
    const char *s = spec;
    int blk = 0;
    for (;;) {
        int lo, hi;
        if (parse_index(&s, n, &lo) != 0) goto bad;
        hi = lo;
        if (*s == '-') {
            ++s;
            if (parse_index(&s, n, &hi) != 0 || hi < lo) goto bad;
        }
        for (int p = lo; p <= hi; ++p) {
            if (b->block[p] >= 0) {
                snprintf(err, errsize, "orbital %d is in two blocks", p);
                return -1;
            }
            b->block[p] = blk;
        }
        if (*s == '+') {
            ++s;
        } else if (*s == ',') {
            ++s;
            ++blk;
        } else if (*s == '\0') {
            break;
        } else {
            goto bad;
        }
    }
    return 0;
bad:
    snprintf(err, errsize,
             "'%s' is not a list of orbital blocks (e.g. 0-4,5-9 or 0-2+7,3-6; "
             "orbitals 0 to %d)", spec, n - 1);
    return -1;
}

void lam_rotate_blocks_free(lam_rotate_blocks *b)
{
    free(b->block);
    b->block = NULL;
}

/* The rotating pairs a < b, as parameters of the optimization. */
typedef struct {
    int count;
    int *a, *b;
} pair_list;

static void pairs_from_blocks(int n, const lam_rotate_blocks *blk, pair_list *pl)
{
    size_t cap = (size_t)n * (n > 0 ? n - 1 : 0) / 2 + 1;
    pl->a = lam_malloc(lam_mul_size(cap, sizeof(int)));
    pl->b = lam_malloc(lam_mul_size(cap, sizeof(int)));
    pl->count = 0;
    for (int a = 0; a < n; ++a)
        for (int b = a + 1; b < n; ++b) {
            int ba = blk ? blk->block[a] : 0, bb = blk ? blk->block[b] : 0;
            if (ba < 0 || ba != bb) continue;
            pl->a[pl->count] = a;
            pl->b[pl->count] = b;
            ++pl->count;
        }
}

static void pairs_free(pair_list *pl)
{
    free(pl->a);
    free(pl->b);
}

/* ---- random rotations ---- */

static uint64_t splitmix64(uint64_t *state)
{
    uint64_t z = (*state += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

static double normal_deviate(uint64_t *state)
{
    double u1 = ((splitmix64(state) >> 11) + 0.5) / 9007199254740992.0;
    double u2 = ((splitmix64(state) >> 11) + 0.5) / 9007199254740992.0;
    return sqrt(-2 * log(u1)) * cos(6.283185307179586 * u2);
}

int lam_rotate_random(int n, const lam_rotate_blocks *b, double sigma, uint64_t *state,
                      double *u, lam_error *err)
{
    pair_list pl;
    pairs_from_blocks(n, b, &pl);
    double *k = lam_calloc(lam_mul_size((size_t)n * n, 1), sizeof(double));
    for (int i = 0; i < pl.count; ++i) {
        double v = sigma * normal_deviate(state);
        k[(size_t)pl.a[i] * n + pl.b[i]] = v;
        k[(size_t)pl.b[i] * n + pl.a[i]] = -v;
    }
    int rc = lam_rotate_expm(n, k, u, err);
    free(k);
    pairs_free(&pl);
    return rc;
}

/* ---- objectives ---- */

static const char *const objective_names[] = {"pauli", "shifted", "grouped", "er"};

int lam_rotate_objective_parse(const char *name, lam_rotate_objective *obj)
{
    for (int i = 0; i < 4; ++i)
        if (strcmp(name, objective_names[i]) == 0) {
            *obj = (lam_rotate_objective)i;
            return 0;
        }
    return -1;
}

const char *lam_rotate_objective_name(lam_rotate_objective obj)
{
    return objective_names[obj];
}

double lam_rotate_er_value(const lam_spinfree *h)
{
    double s = 0;
    for (int i = 0; i < h->n; ++i) s += LAM_G(h, i, i, i, i);
    return s;
}

int lam_rotate_subtract_shift(lam_spinfree *sf, double *lambda, lam_error *err)
{
    lam_shift *k = lam_shift_new(sf->n, sf->electrons, sf->ms2, LAM_SHIFT_DEFAULT);
    double fixed;
    lam_l1_result res;
    int rc = lam_shift_optimize(sf, k, &fixed, &res, err);
    if (!rc) rc = lam_shift_subtract(sf, k, err);
    lam_shift_free(k);
    if (!rc) *lambda = lam_spinfree_lambda(sf);
    return rc;
}

int lam_rotate_grouped_lambda(const lam_spinfree *sf, double *lambda, lam_error *err)
{
    lam_majorana_set m;
    /* Hermitian by construction: the closed form writes every monomial
     * with its Hermitian phase only (lam_majorana_from_spinfree), so there
     * is nothing to check */
    lam_majorana_from_spinfree(sf, LAM_SPIN_INTERLEAVED, &m);
    lam_encoding *enc = lam_encoding_new(LAM_ENC_JORDAN_WIGNER, m.nmodes);
    lam_pauli_set in, out;
    lam_pauli_set_init(&in, m.nmodes);
    lam_encoding_map_majorana(enc, &m, &in);
    lam_group_options go;
    lam_group_options_default(&go);
    lam_group_stats st;
    lam_pauli_set_init(&out, m.nmodes);
    int rc = lam_group_build(&in, &go, &out, &st, err);
    lam_pauli_set_free(&in);
    lam_pauli_set_free(&out);
    lam_encoding_free(enc);
    lam_majorana_free(&m);
    if (!rc) *lambda = st.lambda_grouped;
    return rc;
}

/* The objective of sf (the ER sum positive); the shifted and grouped ones
 * subtract the shift from sf itself. */
static int objective_in_place(lam_spinfree *sf, lam_rotate_objective obj, double *v, lam_error *err)
{
    double shifted;
    *v = NAN;
    switch (obj) {
    case LAM_ROTATE_ER: *v = lam_rotate_er_value(sf); break;
    case LAM_ROTATE_PAULI: *v = lam_spinfree_lambda(sf); break;
    case LAM_ROTATE_SHIFTED: return lam_rotate_subtract_shift(sf, v, err);
    case LAM_ROTATE_GROUPED:
        if (lam_rotate_subtract_shift(sf, &shifted, err)) return err->code;
        return lam_rotate_grouped_lambda(sf, v, err);
    }
    return 0;
}

/* Score (lower is better: the ER sum enters negated) of h rotated by u;
 * tmp receives the rotated operator, shifted for those objectives unless
 * keep.  The value is that of exactly the operator in tmp: the grouped
 * lambda changes with the last bit of the coefficients (ties in the greedy
 * order; the optimal shift parameters are not unique). */
static int score_at(const lam_spinfree *h, const double *u, lam_rotate_objective obj,
                    lam_spinfree *tmp, double *work, int keep, double *score, lam_error *err)
{
    lam_rotate_apply(h, u, tmp, work);
    double v;
    int rc = keep ? lam_rotate_objective_value(tmp, obj, &v, err) : objective_in_place(tmp, obj, &v, err);
    if (!rc) *score = obj == LAM_ROTATE_ER ? -v : v;
    return rc;
}

int lam_rotate_objective_value(const lam_spinfree *h, lam_rotate_objective obj, double *v, lam_error *err)
{
    if (obj == LAM_ROTATE_ER || obj == LAM_ROTATE_PAULI)
        return objective_in_place((lam_spinfree *)h, obj, v, err); /* does not write */
    lam_spinfree *tmp = lam_spinfree_clone(h);
    int rc = objective_in_place(tmp, obj, v, err);
    lam_spinfree_free(tmp);
    return rc;
}

/* ---- L-BFGS over rotations ---- */

typedef struct {
    const lam_spinfree *base; /* operator in the frame where U = I */
    lam_spinfree *cur;        /* base rotated by the current trial U */
    double *work;             /* n^4 */
    double *gh, *gfull;       /* n^2 */
    double mu;
    int er;
    const pair_list *pairs;
    int evaluations;
} eval_ctx;

/* f(U) and its gradient along the rotating pairs, in the frame of U. */
static double evaluate(eval_ctx *c, const double *u, double *grad)
{
    int n = c->base->n;
    lam_rotate_apply(c->base, u, c->cur, c->work);
    ++c->evaluations;
    double f;
    if (c->er) {
        /* f = -sum_i (ii|ii): dF/dg is minus the all-equal-index delta, so
         * G[a,b] = -4 (ab|bb) */
        f = -lam_rotate_er_value(c->cur);
        for (int a = 0; a < n; ++a)
            for (int b = 0; b < n; ++b) c->gfull[a * n + b] = -4 * LAM_G(c->cur, a, b, b, b);
        for (int a = 0; a < n; ++a)
            for (int b = 0; b < a; ++b) {
                double x = c->gfull[a * n + b], y = c->gfull[b * n + a];
                c->gfull[a * n + b] = x - y;
                c->gfull[b * n + a] = y - x;
            }
    } else {
        f = lam_rotate_smooth_lambda(c->cur, c->mu, c->gh, c->work);
        lam_rotate_gradient(c->cur, c->gh, c->work, c->gfull);
    }
    for (int i = 0; i < c->pairs->count; ++i)
        grad[i] = c->gfull[(size_t)c->pairs->a[i] * n + c->pairs->b[i]];
    return f;
}

static double dot(int m, const double *x, const double *y)
{
    double s = 0;
    for (int i = 0; i < m; ++i) s += x[i] * y[i];
    return s;
}

/* u <- u exp(K(step)) */
static int take_step(int n, const pair_list *pl, const double *step, const double *u,
                     double *out, lam_error *err)
{
    size_t nn = (size_t)n * n;
    double *k = lam_calloc(nn, sizeof(double));
    double *e = lam_malloc(lam_mul_size(nn, sizeof(double)));
    for (int i = 0; i < pl->count; ++i) {
        k[(size_t)pl->a[i] * n + pl->b[i]] = step[i];
        k[(size_t)pl->b[i] * n + pl->a[i]] = -step[i];
    }
    int rc = lam_rotate_expm(n, k, e, err);
    if (!rc)
        cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, n, n, 1.0, u, n, e, n, 0.0, out,
                    n);
    free(k);
    free(e);
    return rc;
}

/* Minimize from u (updated in place). */
static int lbfgs(eval_ctx *c, double *u, int max_iter, double gtol, double ftol, int mem,
                 const char *label, int *iterations, lam_error *err)
{
    int n = c->base->n, m = c->pairs->count, rc = 0;
    if (m == 0) {
        (void)evaluate(c, u, NULL); /* counted like every evaluation */
        return 0;
    }
    size_t nn = (size_t)n * n;
    double *g = lam_malloc(lam_mul_size((size_t)m, sizeof(double)));
    double *gt = lam_malloc(lam_mul_size((size_t)m, sizeof(double)));
    double *d = lam_malloc(lam_mul_size((size_t)m, sizeof(double)));
    double *S = lam_malloc(lam_mul_size((size_t)m * mem, sizeof(double)));
    double *Y = lam_malloc(lam_mul_size((size_t)m * mem, sizeof(double)));
    double *rho = lam_malloc(lam_mul_size((size_t)mem, sizeof(double)));
    double *alpha = lam_malloc(lam_mul_size((size_t)mem, sizeof(double)));
    double *ut = lam_malloc(lam_mul_size(nn, sizeof(double)));
    int stored = 0, head = 0, stall = 0;
    double last_step = 0.05;
    /* f ten iterations back: a stage ends when they gained less than ftol */
    double window[10];
    for (int i = 0; i < 10; ++i) window[i] = INFINITY;
    double f = evaluate(c, u, g);
    for (int it = 0; it < max_iter; ++it) {
        double gnorm = sqrt(dot(m, g, g));
        lam_progress("%s iteration %d: objective %.12g, |gradient| %.3g", label, it, f, gnorm);
        if (gnorm <= gtol) break;
        /* two-loop recursion */
        for (int i = 0; i < m; ++i) d[i] = -g[i];
        for (int j = 0; j < stored; ++j) {
            int k = (head - 1 - j + mem) % mem;
            alpha[k] = rho[k] * dot(m, S + (size_t)k * m, d);
            for (int i = 0; i < m; ++i) d[i] -= alpha[k] * Y[(size_t)k * m + i];
        }
        double gamma;
        if (stored > 0) {
            int k = (head - 1 + mem) % mem;
            gamma = dot(m, S + (size_t)k * m, Y + (size_t)k * m) /
                    dot(m, Y + (size_t)k * m, Y + (size_t)k * m);
        } else {
            /* no curvature pair yet (or only negative curvature, as near
             * the saddle of canonical orbitals): twice the last step that
             * was accepted, the line search cuts it back */
            gamma = fmin(2 * last_step, 0.3) / fmax(gnorm, 1e-300);
        }
        for (int i = 0; i < m; ++i) d[i] *= gamma;
        for (int j = stored - 1; j >= 0; --j) {
            int k = (head - 1 - j + mem) % mem;
            double beta = rho[k] * dot(m, Y + (size_t)k * m, d);
            for (int i = 0; i < m; ++i) d[i] += (alpha[k] - beta) * S[(size_t)k * m + i];
        }
        double slope = dot(m, g, d);
        if (!(slope < 0)) {
            for (int i = 0; i < m; ++i) d[i] = -g[i] * fmin(2 * last_step, 0.3) / fmax(gnorm, 1e-300);
            slope = dot(m, g, d);
            stored = 0;
        }
        /* no single rotation angle beyond 0.3 rad in one step */
        double big = 0;
        for (int i = 0; i < m; ++i) big = fmax(big, fabs(d[i]));
        if (big > 0.3)
            for (int i = 0; i < m; ++i) d[i] *= 0.3 / big;
        if (big > 0.3) slope *= 0.3 / big;
        double step = 1, ft = f;
        int accepted = 0;
        for (int ls = 0; ls < 30; ++ls) {
            for (int i = 0; i < m; ++i) gt[i] = step * d[i];
            if ((rc = take_step(n, c->pairs, gt, u, ut, err))) break;
            ft = evaluate(c, ut, gt);
            if (ft <= f + 1e-4 * step * slope) {
                accepted = 1;
                break;
            }
            step *= 0.5;
        }
        if (iterations) ++*iterations;
        if (rc || !accepted) break;
        double *s = S + (size_t)head * m, *y = Y + (size_t)head * m;
        for (int i = 0; i < m; ++i) {
            s[i] = step * d[i];
            y[i] = gt[i] - g[i];
        }
        last_step = fmax(1e-4, step * sqrt(dot(m, d, d)));
        double sy = dot(m, s, y);
        if (sy > 1e-12 * sqrt(dot(m, s, s) * dot(m, y, y))) {
            rho[head] = 1 / sy;
            head = (head + 1) % mem;
            if (stored < mem) ++stored;
        }
        memcpy(u, ut, nn * sizeof(double));
        memcpy(g, gt, (size_t)m * sizeof(double));
        stall = (f - ft <= 1e-12 * fabs(f)) ? stall + 1 : 0;
        f = ft;
        if (stall >= 3) break;
        double old = window[it % 10];
        window[it % 10] = f;
        if (old - f < ftol * fabs(f)) break;
    }
    if (!rc) rc = lam_rotate_orthonormalize(n, u, err);
    LAM_FREE_ALL(g, gt, d, S, Y, rho, alpha, ut);
    return rc;
}

void lam_rotate_default_options(lam_rotate_options *opt)
{
    memset(opt, 0, sizeof *opt);
    opt->objective = LAM_ROTATE_PAULI;
    opt->max_iter = 200;
    opt->outer = 6;
    opt->starts = 0;
    opt->seed = 1;
    opt->gtol = 1e-7;
    opt->ftol = 1e-6;
    opt->mu0 = 1e-3;
    opt->stages = 3;
    opt->memory = 12;
}

typedef struct {
    const lam_spinfree *h;
    const lam_rotate_options *opt;
    pair_list pairs;
    lam_spinfree *cur, *tmp;
    double *work, *gh, *gfull;
    lam_rotate_result *res;
} run_ctx;

/* The smoothed stages and the polish of the plain one-norm of base, from
 * the identity; v receives the rotation (in base's frame). */
static int minimize_pauli(run_ctx *rc, const lam_spinfree *base, double *v, const char *label,
                          lam_error *err)
{
    int status = 0;
    int n = base->n;
    eval_ctx c = {base, rc->cur, rc->work, rc->gh, rc->gfull, 0, 0, &rc->pairs, 0};
    for (int i = 0; i < n * n; ++i) v[i] = (i % (n + 1)) == 0;
    char name[96];
    double mu = rc->opt->mu0;
    for (int st = 0; st <= rc->opt->stages; ++st) {
        c.mu = st < rc->opt->stages ? mu : 0;
        snprintf(name, sizeof name, "%s mu %.0e", label, c.mu);
        if ((status = lbfgs(&c, v, rc->opt->max_iter, rc->opt->gtol, rc->opt->ftol, rc->opt->memory, name,
                            &rc->res->iterations, err)))
            break;
        mu /= 10;
    }
    rc->res->evaluations += c.evaluations;
    return status;
}

static void multiply(int n, const double *a, const double *b, double *out)
{
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, n, n, 1.0, a, n, b, n, 0.0, out, n);
}

/* Spearman rank correlation of x and y (k points). */
static double rank_correlation(int k, const double *x, const double *y)
{
    if (k < 3) return NAN;
    double *rx = lam_malloc(lam_mul_size((size_t)k, sizeof(double)));
    double *ry = lam_malloc(lam_mul_size((size_t)k, sizeof(double)));
    for (int i = 0; i < k; ++i) {
        rx[i] = ry[i] = 0;
        for (int j = 0; j < k; ++j) {
            rx[i] += (x[j] < x[i]) + 0.5 * (x[j] == x[i] && j != i);
            ry[i] += (y[j] < y[i]) + 0.5 * (y[j] == y[i] && j != i);
        }
    }
    double mx = 0, my = 0, sxy = 0, sxx = 0, syy = 0;
    for (int i = 0; i < k; ++i) {
        mx += rx[i] / k;
        my += ry[i] / k;
    }
    for (int i = 0; i < k; ++i) {
        sxy += (rx[i] - mx) * (ry[i] - my);
        sxx += (rx[i] - mx) * (rx[i] - mx);
        syy += (ry[i] - my) * (ry[i] - my);
    }
    free(rx);
    free(ry);
    return sxx > 0 && syy > 0 ? sxy / sqrt(sxx * syy) : NAN;
}

typedef struct {
    double *lam_s, *lam_g;
    int count, cap;
} track;

/* (i'i'|i'i') + (j'j'|j'j') after rotating orbitals i, j of sf by th
 * (new i = c i + s j, new j = -s i + c j). */
static double er_pair_value(const lam_spinfree *sf, int i, int j, double th)
{
    int idx[2] = {i, j};
    double r[2][2] = {{cos(th), -sin(th)}, {sin(th), cos(th)}};
    double v = 0;
    for (int k = 0; k < 2; ++k)
        for (int a = 0; a < 2; ++a)
            for (int b = 0; b < 2; ++b)
                for (int c = 0; c < 2; ++c)
                    for (int d = 0; d < 2; ++d)
                        v += r[a][k] * r[b][k] * r[c][k] * r[d][k] *
                             LAM_G(sf, idx[a], idx[b], idx[c], idx[d]);
    return v;
}

/* The pair rotation that raises sum (ii|ii) most: the pair's part is
 * a0 + a1 cos 4th + b1 sin 4th, fitted exactly from three angles.  Applies
 * it to u and returns 1 when it gains more than rounding. */
static int best_er_pair_rotation(const lam_spinfree *sf, const pair_list *pl, double *u)
{
    int n = sf->n, bi = -1, bj = -1;
    double best_gain = 1e-11 * fmax(1, fabs(lam_rotate_er_value(sf))), best_th = 0;
    for (int t = 0; t < pl->count; ++t) {
        int i = pl->a[t], j = pl->b[t];
        /* f(0) = a0 + a1, f(pi/4) = a0 - a1, f(pi/8) = a0 + b1 */
        double f0 = er_pair_value(sf, i, j, 0), f1 = er_pair_value(sf, i, j, 2 * M_PI_8);
        double f2 = er_pair_value(sf, i, j, M_PI_8);
        double a0 = (f0 + f1) / 2, a1 = (f0 - f1) / 2, b1 = f2 - a0;
        double th = atan2(b1, a1) / 4;
        double gain = er_pair_value(sf, i, j, th) - f0;
        if (gain > best_gain) {
            best_gain = gain;
            best_th = th;
            bi = i;
            bj = j;
        }
    }
    if (bi < 0) return 0;
    double c = cos(best_th), s = sin(best_th);
    for (int p = 0; p < n; ++p) {
        double x = u[(size_t)p * n + bi], y = u[(size_t)p * n + bj];
        u[(size_t)p * n + bi] = c * x + s * y;
        u[(size_t)p * n + bj] = -s * x + c * y;
    }
    return 1;
}

/* One start: u in, the best rotation of this run out, its score in *score. */
static int run_from(run_ctx *rc, double *u, int start, track *tr, double *score_out, lam_error *err)
{
    int status = 0;
    const lam_spinfree *h = rc->h;
    int n = h->n;
    size_t nn = (size_t)n * n;
    lam_rotate_objective obj = rc->opt->objective;
    double *v = lam_malloc(lam_mul_size(nn, sizeof(double)));
    double *t = lam_malloc(lam_mul_size(nn, sizeof(double)));
    char label[64];
    double best = INFINITY;
    if (obj == LAM_ROTATE_ER) {
        eval_ctx c = {h, rc->cur, rc->work, rc->gh, rc->gfull, 0, 1, &rc->pairs, 0};
        /* L-BFGS stops where the gradient vanishes, which canonical orbitals
         * of a symmetric molecule do by symmetry (a saddle); the best single
         * pair rotation, exact in its angle, leaves such points */
        for (int round = 0; round < 10 * n + 10; ++round) {
            snprintf(label, sizeof label, "start %d er round %d", start, round);
            if ((status = lbfgs(&c, u, rc->opt->max_iter * (rc->opt->stages + 1), rc->opt->gtol,
                                rc->opt->ftol, rc->opt->memory, label, &rc->res->iterations, err)))
                break;
            lam_rotate_apply(h, u, rc->cur, rc->work);
            if (!best_er_pair_rotation(rc->cur, &rc->pairs, u)) break;
        }
        rc->res->evaluations += c.evaluations;
        if (!status) status = score_at(h, u, obj, rc->tmp, rc->work, 0, &best, err);
    } else if (obj == LAM_ROTATE_PAULI) {
        lam_rotate_apply(h, u, rc->tmp, rc->work);
        snprintf(label, sizeof label, "start %d", start);
        if ((status = minimize_pauli(rc, rc->tmp, v, label, err)) == 0) {
            multiply(n, u, v, t);
            status = lam_rotate_orthonormalize(n, t, err);
        }
        double before = lam_spinfree_lambda(rc->tmp);
        if (!status) status = score_at(h, t, obj, rc->tmp, rc->work, 0, &best, err);
        if (status) best = before;
        else if (best < before) memcpy(u, t, nn * sizeof(double));
        else best = before;
    } else {
        /* Alternate: the optimal shift K at U, then the rotation V that
         * lowers lambda(V(H_U - K)); the next shift is solved at U V, so
         * the shift that follows a rotation is always the optimum for it. */
        double *ubest = lam_malloc(lam_mul_size(nn, sizeof(double)));
        memcpy(ubest, u, nn * sizeof(double));
        best = INFINITY;
        double prev_s = INFINITY;
        for (int outer = 0; outer <= rc->opt->outer; ++outer) {
            lam_rotate_apply(h, u, rc->tmp, rc->work);
            double ls;
            if ((status = lam_rotate_subtract_shift(rc->tmp, &ls, err))) break;
            double score = ls;
            if (obj == LAM_ROTATE_GROUPED) {
                if ((status = lam_rotate_grouped_lambda(rc->tmp, &score, err))) break;
                if (tr->count == tr->cap) {
                    tr->cap = tr->cap ? 2 * tr->cap : 16;
                    tr->lam_s = lam_realloc(tr->lam_s, (size_t)tr->cap * sizeof(double));
                    tr->lam_g = lam_realloc(tr->lam_g, (size_t)tr->cap * sizeof(double));
                }
                tr->lam_s[tr->count] = ls;
                tr->lam_g[tr->count] = score;
                ++tr->count;
                lam_progress("start %d round %d: shifted lambda %.12g, grouped %.12g", start,
                             outer, ls, score);
            } else {
                lam_progress("start %d round %d: shifted lambda %.12g", start, outer, ls);
            }
            if (score < best) {
                best = score;
                memcpy(ubest, u, nn * sizeof(double));
            }
            if (outer == rc->opt->outer || (outer > 0 && !(ls < prev_s - 1e-9 * fabs(prev_s))))
                break;
            prev_s = ls;
            snprintf(label, sizeof label, "start %d round %d", start, outer);
            if ((status = minimize_pauli(rc, rc->tmp, v, label, err))) break;
            multiply(n, u, v, t);
            if ((status = lam_rotate_orthonormalize(n, t, err))) break;
            memcpy(u, t, nn * sizeof(double));
        }
        memcpy(u, ubest, nn * sizeof(double));
        free(ubest);
    }
    free(v);
    free(t);
    *score_out = best;
    return status;
}

int lam_rotate_optimize(const lam_spinfree *h, const double *u0, const lam_rotate_options *opt,
                        double *u, lam_spinfree *out, lam_rotate_result *res, lam_error *err)
{
    int status = 0;
    int n = h->n;
    size_t nn = (size_t)n * n;
    memset(res, 0, sizeof *res);
    run_ctx rc;
    rc.h = h;
    rc.opt = opt;
    rc.res = res;
    pairs_from_blocks(n, opt->blocks, &rc.pairs);
    rc.cur = lam_spinfree_new(n);
    rc.tmp = lam_spinfree_new(n);
    rc.work = lam_malloc(lam_mul_size(nn * nn, sizeof(double)));
    rc.gh = lam_malloc(lam_mul_size(nn, sizeof(double)));
    rc.gfull = lam_malloc(lam_mul_size(nn, sizeof(double)));
    double *trial = lam_malloc(lam_mul_size(nn, sizeof(double)));
    double *rnd = lam_malloc(lam_mul_size(nn, sizeof(double)));
    track tr = {NULL, NULL, 0, 0};

    double start_score = 0;
    status = score_at(h, u0, opt->objective, out, rc.work, 1, &start_score, err);
    res->lambda_before = lam_spinfree_lambda(out);
    memcpy(u, u0, nn * sizeof(double));
    double best = start_score;
    uint64_t state = opt->seed;
    for (int s = 0; !status && s <= opt->starts; ++s) {
        memcpy(trial, u0, nn * sizeof(double));
        if (s > 0) {
            if ((status = lam_rotate_random(n, opt->blocks, 0.5, &state, rnd, err))) break;
            multiply(n, u0, rnd, trial);
        }
        double score;
        if ((status = run_from(&rc, trial, s, &tr, &score, err))) break;
        lam_progress("start %d: %s objective %.12g (best %.12g)", s,
                     lam_rotate_objective_name(opt->objective),
                     opt->objective == LAM_ROTATE_ER ? -score : score,
                     opt->objective == LAM_ROTATE_ER ? -best : best);
        if (score < best) {
            best = score;
            memcpy(u, trial, nn * sizeof(double));
            res->best_start = s;
        }
    }
    double after = start_score;
    if (!status) status = score_at(h, u, opt->objective, out, rc.work, 1, &after, err);
    res->kept_start = 0;
    if (!status && !(after < start_score)) {
        /* never worse than the start: keep it */
        memcpy(u, u0, nn * sizeof(double));
        status = score_at(h, u, opt->objective, out, rc.work, 1, &after, err);
        res->kept_start = 1;
        res->best_start = 0;
    }
    res->lambda_after = lam_spinfree_lambda(out);
    int sign = opt->objective == LAM_ROTATE_ER ? -1 : 1;
    res->before = sign * start_score;
    res->after = sign * after;
    res->candidates = tr.count;
    res->surrogate_corr = rank_correlation(tr.count, tr.lam_s, tr.lam_g);
    LAM_FREE_ALL(tr.lam_s, tr.lam_g, trial, rnd, rc.work, rc.gh, rc.gfull);
    lam_spinfree_free(rc.cur);
    lam_spinfree_free(rc.tmp);
    pairs_free(&rc.pairs);
    return status;
}

/* ---- the matrix file ---- */

/* The rows of the matrix file into u; the line number reached in *lineno. */
static int read_matrix_rows(FILE *f, const char *path, int n, double *u, long *lineno, lam_error *err)
{
    char *line = NULL;
    size_t cap = 0;
    int rows = 0, rc = 0;
    while (!rc && getline(&line, &cap, f) != -1) {
        ++*lineno;
        char *save = NULL, *tok = strtok_r(line, " \t\r\n", &save);
        if (!tok || tok[0] == '#') continue;
        if (rows == n) {
            rc = lam_error_at(err, LAM_EX_DATA, path, *lineno, "more than %d rows (the operator has %d orbitals)",
                              n, n);
            break;
        }
        int cols = 0;
        for (; tok && !rc; tok = strtok_r(NULL, " \t\r\n", &save)) {
            double v;
            if (lam_parse_double(tok, &v) != 0)
                rc = lam_error_at(err, LAM_EX_DATA, path, *lineno, "'%s' is not a finite number", tok);
            else if (cols == n)
                rc = lam_error_at(err, LAM_EX_DATA, path, *lineno, "more than %d numbers in a row", n);
            else
                u[(size_t)rows * n + cols++] = v;
        }
        if (!rc && cols != n)
            rc = lam_error_at(err, LAM_EX_DATA, path, *lineno, "%d numbers in a row, want %d", cols, n);
        ++rows;
    }
    free(line);
    if (rc) return rc;
    if (ferror(f)) return lam_error_set(err, LAM_EX_IOERR, "%s: read failed", path);
    if (rows != n)
        return lam_error_at(err, LAM_EX_DATA, path, *lineno, "%d rows, want %d (the operator's orbitals)", rows,
                            n);
    return 0;
}

int lam_rotate_read_matrix(const char *path, int n, double **out, lam_error *err)
{
    *out = NULL;
    FILE *f = fopen(path, "r");
    if (!f) return lam_error_set(err, LAM_EX_NOINPUT, "%s: cannot open: %s", path, strerror(errno));
    double *u = lam_malloc(lam_mul_size((size_t)n * n, sizeof(double)));
    long lineno = 0;
    int rc = read_matrix_rows(f, path, n, u, &lineno, err);
    fclose(f);
    if (!rc) {
        double ortho = lam_rotate_orthogonality_error(n, u);
        if (!(ortho <= LAM_ROTATE_ORTHO_TOL))
            rc = lam_error_at(err, LAM_EX_DATA, path, lineno, "not orthogonal: max |U^T U - I| = %.3g, above %.0e",
                              ortho, LAM_ROTATE_ORTHO_TOL);
    }
    if (!rc) rc = lam_rotate_orthonormalize(n, u, err);
    if (rc) free(u);
    else *out = u;
    return rc;
}

void lam_rotate_write_matrix(FILE *f, int n, const double *u)
{
    char buf[LAM_DOUBLE_BUF];
    for (int i = 0; i < n; ++i) {
        for (int j = 0; j < n; ++j) {
            lam_format_double(buf, sizeof buf, u[(size_t)i * n + j]);
            fprintf(f, j ? " %s" : "%s", buf);
        }
        fputc('\n', f);
    }
}
