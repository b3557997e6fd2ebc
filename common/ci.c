/* ci.c - alpha/beta strings, string-driven sigma, Slater-Condon elements. */
#include "ci.h"

#include <cblas.h>
#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

size_t lam_ci_binomial(int n, int k)
{
    if (k < 0 || k > n) return 0;
    if (k > n - k) k = n - k;
    size_t c = 1;
    for (int i = 1; i <= k; ++i) {
        /* c * (n - k + i) / i stays exact because c = C(n-k+i-1, i-1). */
        size_t num = (size_t)(n - k + i);
        if (c > SIZE_MAX / num) return SIZE_MAX;
        c = c * num / (size_t)i;
    }
    return c;
}

size_t lam_ci_sector_dim(int n, int na, int nb)
{
    size_t a = lam_ci_binomial(n, na), b = lam_ci_binomial(n, nb);
    if (a == SIZE_MAX || b == SIZE_MAX) return SIZE_MAX;
    if (b != 0 && a > SIZE_MAX / b) return SIZE_MAX;
    return a * b;
}

size_t lam_ci_string_rank(uint64_t mask)
{
    /* Colexicographic rank: the i-th set bit (from 0) at position p adds
     * C(p, i+1); this is the order of increasing masks. */
    size_t rank = 0;
    int i = 0;
    while (mask) {
        int p = __builtin_ctzll(mask);
        rank += lam_ci_binomial(p, i + 1);
        ++i;
        mask &= mask - 1;
    }
    return rank;
}

static uint64_t next_same_popcount(uint64_t v)
{
    /* Gosper's hack: the next larger integer with the same popcount. */
    uint64_t c = v & -v, r = v + c;
    return (((r ^ v) >> 2) / c) | r;
}

static int bits_below(uint64_t mask, int p)
{
    return __builtin_popcountll(p ? mask & ((~0ULL) >> (64 - p)) : 0);
}

/* a+_a a_b on one string; 0 when it vanishes, else the sign and *out. */
static int excite(uint64_t mask, int a, int b, uint64_t *out)
{
    uint64_t bb = 1ULL << b, ba = 1ULL << a;
    if (!(mask & bb)) return 0;
    uint64_t m = mask & ~bb;
    if (m & ba) return 0;
    int parity = bits_below(m, b) + bits_below(m, a);
    *out = m | ba;
    return parity & 1 ? -1 : 1;
}

int lam_ci_strings_new(int n, int k, lam_ci_strings **result, lam_error *err)
{
    *result = NULL;
    /* the callers plan sectors within these limits: internal errors */
    if (n < 0 || n > 64 || k < 0 || k > n)
        return lam_error_set(err, LAM_EX_SOFTWARE, "strings of %d electrons in %d orbitals", k, n);
    size_t count = lam_ci_binomial(n, k);
    if (count == SIZE_MAX || count > UINT32_MAX)
        return lam_error_set(err, LAM_EX_SOFTWARE, "%d electrons in %d orbitals: too many strings", k, n);
    lam_ci_strings *s = lam_calloc(1, sizeof *s);
    s->n = n;
    s->k = k;
    s->count = count;
    s->nexc = k + k * (n - k);
    s->mask = lam_malloc(lam_mul_size(count, sizeof(uint64_t)));
    s->exc = lam_malloc(lam_mul_size(lam_mul_size(count, (size_t)s->nexc), sizeof(lam_ci_exc)));
    uint64_t m = k ? (k == 64 ? ~0ULL : (1ULL << k) - 1) : 0;
    for (size_t i = 0; i < count; ++i) {
        s->mask[i] = m;
        if (k > 0 && k < 64 && i + 1 < count) m = next_same_popcount(m);
    }
    for (size_t i = 0; i < count; ++i) {
        lam_ci_exc *e = s->exc + i * (size_t)s->nexc;
        int t = 0;
        for (int b = 0; b < n; ++b) {
            if (!(s->mask[i] >> b & 1)) continue;
            for (int a = 0; a < n; ++a) {
                uint64_t out;
                int sign = excite(s->mask[i], a, b, &out);
                if (!sign) continue;
                e[t].target = (uint32_t)lam_ci_string_rank(out);
                e[t].a = (uint8_t)a;
                e[t].b = (uint8_t)b;
                e[t].sign = (int8_t)sign;
                ++t;
            }
        }
        /* k + k (n - k) by counting: an internal invariant */
        if (t != s->nexc) {
            int expected = s->nexc;
            lam_ci_strings_free(s);
            return lam_error_set(err, LAM_EX_SOFTWARE, "string excitation count %d, expected %d", t, expected);
        }
    }
    *result = s;
    return 0;
}

void lam_ci_strings_free(lam_ci_strings *s)
{
    if (!s) return;
    LAM_FREE_ALL(s->mask, s->exc, s);
}

/* ---- the prepared operator ---- */

lam_spinfree *lam_ci_hermitian(lam_spinfree *sf)
{
    if (lam_spinfree_hermiticity_error(sf) == 0) return sf;
    int n = sf->n;
    lam_spinfree *s = lam_spinfree_clone(sf);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) {
            LAM_H(s, p, q) = 0.5 * (LAM_H(sf, p, q) + LAM_H(sf, q, p));
            for (int r = 0; r < n; ++r)
                for (int t = 0; t < n; ++t)
                    LAM_G(s, p, q, r, t) = 0.5 * (LAM_G(sf, p, q, r, t) + LAM_G(sf, q, p, t, r));
        }
    lam_spinfree_free(sf);
    return s;
}

static int has_exact_real_symmetry(const lam_spinfree *sf)
{
    return lam_spinfree_real_symmetry_error(sf) == 0.0 &&
           lam_spinfree_hermiticity_error(sf) == 0.0;
}

lam_ci_ham *lam_ci_ham_new(const lam_spinfree *sf)
{
    int n = sf->n;
    lam_ci_ham *h = lam_calloc(1, sizeof *h);
    h->n = n;
    h->e0 = sf->e0;
    h->packed = has_exact_real_symmetry(sf);
    h->pair = lam_malloc(lam_mul_size((size_t)n * (size_t)n, sizeof(int)));
    int np = 0;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            if (!h->packed || q <= p) h->pair[p * n + q] = np++;
    if (h->packed)
        for (int p = 0; p < n; ++p)
            for (int q = p + 1; q < n; ++q) h->pair[p * n + q] = h->pair[q * n + p];
    h->npair = np;
    h->kvec = lam_calloc((size_t)np, sizeof(double));
    h->gmat = lam_calloc(lam_mul_size((size_t)np, (size_t)np), sizeof(double));
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) {
            double k = LAM_H(sf, p, q);
            for (int r = 0; r < n; ++r) k -= 0.5 * LAM_G(sf, p, r, r, q);
            int P = h->pair[p * n + q];
            h->kvec[P] = k;
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s)
                    h->gmat[(size_t)P * np + h->pair[r * n + s]] = LAM_G(sf, p, q, r, s);
        }
    return h;
}

void lam_ci_ham_free(lam_ci_ham *h)
{
    if (!h) return;
    LAM_FREE_ALL(h->pair, h->kvec, h->gmat, h);
}

/* ---- sectors ---- */

static size_t batch_for(size_t nb, int npair, size_t count_a, size_t scratch_bytes)
{
    size_t row = lam_mul_size(lam_mul_size(nb, (size_t)npair), 2 * sizeof(double));
    size_t batch = row ? scratch_bytes / row : count_a;
    if (batch < 1) batch = 1;
    if (batch > count_a) batch = count_a;
    return batch;
}

static size_t strings_bytes(int n, int k)
{
    size_t c = lam_ci_binomial(n, k);
    size_t nexc = (size_t)(k + k * (n - k));
    return c * (sizeof(uint64_t) + nexc * sizeof(lam_ci_exc));
}

size_t lam_ci_sector_bytes(int n, int na, int nb, int npair, size_t scratch_bytes)
{
    size_t ca = lam_ci_binomial(n, na), cb = lam_ci_binomial(n, nb);
    size_t batch = batch_for(cb, npair, ca, scratch_bytes);
    size_t bytes = strings_bytes(n, na) + (na == nb ? 0 : strings_bytes(n, nb));
    bytes += cb * (size_t)(nb + nb * (n - nb)) * sizeof(lam_ci_move);
    return bytes + batch * cb * (size_t)npair * 2 * sizeof(double);
}

/* The beta excitations grouped by orbital pair (a, b): E_ab|from> =
 * sign |to>. */
static void build_moves(lam_ci_sector *s)
{
    const lam_ci_strings *B = s->beta;
    int n = s->n;
    size_t total = B->count * (size_t)B->nexc;
    s->move_first = lam_calloc((size_t)n * n + 1, sizeof(size_t));
    s->moves = lam_malloc(lam_mul_size(total ? total : 1, sizeof(lam_ci_move)));
    for (size_t i = 0; i < total; ++i) ++s->move_first[B->exc[i].a * n + B->exc[i].b + 1];
    for (int k = 0; k < n * n; ++k) s->move_first[k + 1] += s->move_first[k];
    size_t *fill = lam_malloc(((size_t)n * n + 1) * sizeof(size_t));
    memcpy(fill, s->move_first, ((size_t)n * n + 1) * sizeof(size_t));
    for (size_t ib = 0; ib < B->count; ++ib)
        for (int t = 0; t < B->nexc; ++t) {
            const lam_ci_exc *e = B->exc + ib * (size_t)B->nexc + t;
            lam_ci_move *m = s->moves + fill[e->a * n + e->b]++;
            m->from = (uint32_t)ib;
            m->to = e->target;
            m->sign = e->sign;
        }
    free(fill);
}

int lam_ci_sector_new(const lam_ci_ham *h, int na, int nb, size_t scratch_bytes, lam_ci_sector **out,
                      lam_error *err)
{
    *out = NULL;
    lam_ci_strings *alpha, *beta;
    if (lam_ci_strings_new(h->n, na, &alpha, err)) return err->code;
    if (na == nb) {
        beta = alpha;
    } else if (lam_ci_strings_new(h->n, nb, &beta, err)) {
        lam_ci_strings_free(alpha);
        return err->code;
    }
    lam_ci_sector *s = lam_calloc(1, sizeof *s);
    s->n = h->n;
    s->na = na;
    s->nb = nb;
    s->alpha = alpha;
    s->beta = beta;
    s->dim = lam_ci_sector_dim(h->n, na, nb);
    s->batch = batch_for(s->beta->count, h->npair, s->alpha->count, scratch_bytes);
    build_moves(s);
    size_t block = lam_mul_size(lam_mul_size(s->batch, s->beta->count), (size_t)h->npair);
    s->d = lam_malloc(lam_mul_size(block, sizeof(double)));
    s->gbuf = lam_malloc(lam_mul_size(block, sizeof(double)));
    *out = s;
    return 0;
}

void lam_ci_sector_free(lam_ci_sector *s)
{
    if (!s) return;
    if (s->beta != s->alpha) lam_ci_strings_free(s->beta);
    lam_ci_strings_free(s->alpha);
    LAM_FREE_ALL(s->moves, s->move_first, s->d, s->gbuf, s);
}

/* ---- sigma ----
 * Layout: D and G hold one row of `rows` determinants per pair P, so the
 * alpha excitations become contiguous axpy updates of length nb and the
 * beta excitations, grouped by orbital pair, stay within one row of c. */

typedef struct {
    const lam_ci_ham *h;
    const lam_ci_sector *s;
    size_t a0, a1, rows;
    const double *c;
    double *sigma;
} batch_ctx;

static void axpy(size_t n, double a, const double *x, double *y)
{
    for (size_t i = 0; i < n; ++i) y[i] += a * x[i];
}

/* D[P][I] = (E_pq c)_I for the determinants of alpha string ia:
 * <I|E_pq|J> = <J|E_qp|I>, so an excitation E_ab|I> = s|J> adds s c_J to
 * the pair (b, a). */
static void gather_string(const batch_ctx *b, size_t ia)
{
    const lam_ci_ham *h = b->h;
    const lam_ci_sector *s = b->s;
    const lam_ci_strings *A = s->alpha;
    size_t nb = s->beta->count, off = (ia - b->a0) * nb;
    int n = h->n;
    for (int P = 0; P < h->npair; ++P) memset(s->d + (size_t)P * b->rows + off, 0, nb * sizeof(double));
    const lam_ci_exc *ea = A->exc + ia * (size_t)A->nexc;
    for (int t = 0; t < A->nexc; ++t)
        axpy(nb, ea[t].sign, b->c + (size_t)ea[t].target * nb,
             s->d + (size_t)h->pair[ea[t].b * n + ea[t].a] * b->rows + off);
    const double *crow = b->c + ia * nb;
    for (int a = 0; a < n; ++a)
        for (int bb = 0; bb < n; ++bb) {
            const lam_ci_move *m = s->moves + s->move_first[a * n + bb];
            const lam_ci_move *e = s->moves + s->move_first[a * n + bb + 1];
            double *drow = s->d + (size_t)h->pair[bb * n + a] * b->rows + off;
            for (; m < e; ++m) drow[m->from] += m->sign * crow[m->to];
        }
}

/* sigma_K += 1/2 <K|E_ab|I> G[ab][I], beta excitations of string ia (they
 * stay in row ia of sigma). */
static void scatter_beta(const batch_ctx *b, size_t ia)
{
    const lam_ci_ham *h = b->h;
    const lam_ci_sector *s = b->s;
    size_t nb = s->beta->count, off = (ia - b->a0) * nb;
    int n = h->n;
    double *srow = b->sigma + ia * nb;
    for (int a = 0; a < n; ++a)
        for (int bb = 0; bb < n; ++bb) {
            const lam_ci_move *m = s->moves + s->move_first[a * n + bb];
            const lam_ci_move *e = s->moves + s->move_first[a * n + bb + 1];
            const double *grow = s->gbuf + (size_t)h->pair[a * n + bb] * b->rows + off;
            for (; m < e; ++m) srow[m->to] += 0.5 * m->sign * grow[m->from];
        }
}

/* The alpha part written from the target side, so that each thread owns
 * its rows of sigma: E_ab|K> = s|I> with I in the batch means
 * <K|E_ba|I> = s. */
static void scatter_alpha(const batch_ctx *b, size_t ka)
{
    const lam_ci_ham *h = b->h;
    const lam_ci_sector *s = b->s;
    const lam_ci_strings *A = s->alpha;
    size_t nb = s->beta->count;
    int n = h->n;
    const lam_ci_exc *ek = A->exc + ka * (size_t)A->nexc;
    for (int t = 0; t < A->nexc; ++t) {
        size_t ia = ek[t].target;
        if (ia < b->a0 || ia >= b->a1) continue;
        axpy(nb, 0.5 * ek[t].sign,
             s->gbuf + (size_t)h->pair[ek[t].b * n + ek[t].a] * b->rows + (ia - b->a0) * nb,
             b->sigma + ka * nb);
    }
}

typedef struct {
    const batch_ctx *b;
    void (*fn)(const batch_ctx *, size_t);
    size_t lo, hi;
} work_range;

static void *run_range(void *arg)
{
    work_range *w = arg;
    for (size_t i = w->lo; i < w->hi; ++i) w->fn(w->b, i);
    return NULL;
}

static int ci_threads = 1;

void lam_ci_set_threads(int threads) { ci_threads = threads < 1 ? 1 : threads > 64 ? 64 : threads; }

/* fn(b, i) for i in [lo, hi), split over the threads. */
static void parallel_for(const batch_ctx *b, void (*fn)(const batch_ctx *, size_t), size_t lo,
                         size_t hi)
{
    int nt = ci_threads;
    if ((size_t)nt > hi - lo) nt = (int)(hi - lo);
    if (nt <= 1) {
        for (size_t i = lo; i < hi; ++i) fn(b, i);
        return;
    }
    pthread_t tid[64];
    work_range w[64];
    size_t step = (hi - lo + (size_t)nt - 1) / (size_t)nt;
    int started = 0;
    for (int t = 0; t < nt; ++t) {
        size_t l = lo + (size_t)t * step, u = l + step < hi ? l + step : hi;
        w[t] = (work_range){b, fn, l, u < l ? l : u};
        if (t == 0) continue;
        if (pthread_create(&tid[t], NULL, run_range, &w[t]) != 0) {
            run_range(&w[t]); /* no thread to be had: do it here */
            tid[t] = 0;
        } else {
            ++started;
        }
    }
    run_range(&w[0]);
    for (int t = 1; t < nt; ++t)
        if (tid[t]) pthread_join(tid[t], NULL);
    (void)started;
}

void lam_ci_sigma(const lam_ci_ham *h, lam_ci_sector *s, const double *c, double *sigma)
{
    size_t nb = s->beta->count, np = (size_t)h->npair;
    for (size_t i = 0; i < s->dim; ++i) sigma[i] = h->e0 * c[i];
    if (s->na + s->nb == 0) return;
    for (size_t a0 = 0; a0 < s->alpha->count; a0 += s->batch) {
        size_t a1 = a0 + s->batch < s->alpha->count ? a0 + s->batch : s->alpha->count;
        batch_ctx b = {h, s, a0, a1, (a1 - a0) * nb, c, sigma};
        parallel_for(&b, gather_string, a0, a1);
        /* the one-body part: sigma_I += sum_pq k_pq D[pq][I] */
        cblas_dgemv(CblasRowMajor, CblasTrans, (int)np, (int)b.rows, 1.0, s->d, (int)b.rows,
                    h->kvec, 1, 1.0, sigma + a0 * nb, 1);
        cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, (int)np, (int)b.rows, (int)np,
                    1.0, h->gmat, (int)np, s->d, (int)b.rows, 0.0, s->gbuf, (int)b.rows);
        parallel_for(&b, scatter_beta, a0, a1);
        parallel_for(&b, scatter_alpha, 0, s->alpha->count);
    }
}

/* Part of the diagonal that depends on one spin string only. */
static double same_spin_diagonal(const lam_ci_ham *h, uint64_t m)
{
    int n = h->n, np = h->npair;
    double e = 0;
    for (int p = 0; p < n; ++p) {
        if (!(m >> p & 1)) continue;
        int pp = h->pair[p * n + p];
        e += h->kvec[pp];
        for (int r = 0; r < n; ++r) {
            int rr = h->pair[r * n + r];
            if (m >> r & 1)
                e += 0.5 * h->gmat[(size_t)pp * np + rr];
            else /* <I|E_pr E_rp|I> = n_p (1 - n_r) within one spin */
                e += 0.5 * h->gmat[(size_t)h->pair[p * n + r] * np + h->pair[r * n + p]];
        }
    }
    return e;
}

void lam_ci_diagonal(const lam_ci_ham *h, const lam_ci_sector *s, double *diag)
{
    const lam_ci_strings *A = s->alpha, *B = s->beta;
    int n = h->n, np = h->npair;
    double *ea = lam_malloc(A->count * sizeof(double));
    double *eb = lam_malloc(B->count * sizeof(double));
    double *jrow = lam_malloc((size_t)n * sizeof(double));
    for (size_t i = 0; i < A->count; ++i) ea[i] = same_spin_diagonal(h, A->mask[i]);
    for (size_t i = 0; i < B->count; ++i) eb[i] = same_spin_diagonal(h, B->mask[i]);
    for (size_t ia = 0; ia < A->count; ++ia) {
        /* Coulomb coupling of this alpha string to each beta orbital */
        for (int r = 0; r < n; ++r) {
            double j = 0;
            for (int p = 0; p < n; ++p)
                if (A->mask[ia] >> p & 1)
                    j += h->gmat[(size_t)h->pair[p * n + p] * np + h->pair[r * n + r]];
            jrow[r] = j;
        }
        for (size_t ib = 0; ib < B->count; ++ib) {
            double e = h->e0 + ea[ia] + eb[ib];
            for (uint64_t m = B->mask[ib]; m; m &= m - 1) e += jrow[__builtin_ctzll(m)];
            diag[ia * B->count + ib] = e;
        }
    }
    LAM_FREE_ALL(ea, eb, jrow);
}

/* ---- Slater-Condon rules over spin orbitals (alpha 0..n-1, beta n..2n-1) ---- */

typedef struct {
    uint64_t m[2];
} det_bits;

static int so_occupied(const det_bits *d, int spin, int p) { return d->m[spin] >> p & 1; }

static int so_below(const det_bits *d, int spin, int p)
{
    return (spin ? __builtin_popcountll(d->m[0]) : 0) + bits_below(d->m[spin], p);
}

/* Apply a_(p,spin) (create = 0) or a+ (create = 1); returns the sign or 0. */
static int so_apply(det_bits *d, int spin, int p, int create)
{
    if (so_occupied(d, spin, p) == create) return 0;
    int sign = so_below(d, spin, p) & 1 ? -1 : 1;
    d->m[spin] ^= 1ULL << p;
    return sign;
}

/* [PQ|RS] over spin orbitals: (pq|rs) when the spins pair up. */
static double so_integral(const lam_spinfree *sf, int p, int sp, int q, int sq, int r, int sr,
                          int s, int ss)
{
    if (sp != sq || sr != ss) return 0;
    return LAM_G(sf, p, q, r, s);
}

double lam_ci_det_energy(const lam_spinfree *sf, uint64_t a, uint64_t b)
{
    det_bits d = {{a, b}};
    int n = sf->n;
    double e = sf->e0;
    for (int sp = 0; sp < 2; ++sp)
        for (int p = 0; p < n; ++p) {
            if (!so_occupied(&d, sp, p)) continue;
            e += LAM_H(sf, p, p);
            for (int sr = 0; sr < 2; ++sr)
                for (int r = 0; r < n; ++r) {
                    if (!so_occupied(&d, sr, r)) continue;
                    e += 0.5 * (so_integral(sf, p, sp, p, sp, r, sr, r, sr) -
                                so_integral(sf, p, sp, r, sr, r, sr, p, sp));
                }
        }
    return e;
}

/* Spin orbitals set in x but not in y, as (spin, orbital) pairs; returns
 * how many (stops counting past 2). */
static int differences(const det_bits *x, const det_bits *y, int *spin, int *orb)
{
    int k = 0;
    for (int s = 0; s < 2; ++s)
        for (uint64_t m = x->m[s] & ~y->m[s]; m; m &= m - 1) {
            if (k < 2) {
                spin[k] = s;
                orb[k] = __builtin_ctzll(m);
            }
            ++k;
        }
    return k;
}

double lam_ci_det_element(const lam_spinfree *sf, uint64_t a1, uint64_t b1, uint64_t a2,
                          uint64_t b2)
{
    det_bits d1 = {{a1, b1}}, d2 = {{a2, b2}};
    int hs[2], ho[2], ps[2], po[2];
    int nh = differences(&d2, &d1, hs, ho); /* occupied in D2 only: holes */
    int npart = differences(&d1, &d2, ps, po);
    if (nh != npart || nh > 2) return 0;
    if (nh == 0) return lam_ci_det_energy(sf, a1, b1);
    int n = sf->n;
    if (nh == 1) {
        det_bits t = d2;
        int sign = so_apply(&t, hs[0], ho[0], 0);
        sign *= so_apply(&t, ps[0], po[0], 1);
        if (hs[0] != ps[0]) return 0;
        int a = po[0], i = ho[0], sa = ps[0];
        double v = LAM_H(sf, a, i);
        for (int sr = 0; sr < 2; ++sr)
            for (int r = 0; r < n; ++r) {
                if (!so_occupied(&d2, sr, r)) continue;
                v += so_integral(sf, a, sa, i, sa, r, sr, r, sr) -
                     so_integral(sf, a, sa, r, sr, r, sr, i, sa);
            }
        return sign * v;
    }
    /* a+_a a+_b a_j a_i |D2> = sign |D1> with i, j the holes, a, b the
     * particles; the element is sign ([ai|bj] - [aj|bi]). */
    det_bits t = d2;
    int sign = so_apply(&t, hs[0], ho[0], 0);
    sign *= so_apply(&t, hs[1], ho[1], 0);
    sign *= so_apply(&t, ps[1], po[1], 1);
    sign *= so_apply(&t, ps[0], po[0], 1);
    double v = so_integral(sf, po[0], ps[0], ho[0], hs[0], po[1], ps[1], ho[1], hs[1]) -
               so_integral(sf, po[0], ps[0], ho[1], hs[1], po[1], ps[1], ho[0], hs[0]);
    return sign * v;
}

/* ---- both ends of a sector ---- */

size_t lam_ci_scratch_bytes(size_t dim)
{
    /* D and G of a few alpha strings stay in the second-level cache, which
     * makes the gather and scatter loops run at cache speed while the
     * matrix product stays wide (a row per determinant of the batch); two
     * vectors' worth at most, so that small sectors stay small (a batch is
     * never less than one alpha string) */
    size_t cap = (size_t)4 << 20, two = dim > SIZE_MAX / 16 ? SIZE_MAX : 16 * dim;
    return two < cap ? two : cap;
}

size_t lam_ci_solve_bytes(const lam_ci_ham *h, int na, int nb, const lam_eigen_problem *tmpl)
{
    size_t dim = lam_ci_sector_dim(h->n, na, nb);
    if (dim == SIZE_MAX || lam_ci_binomial(h->n, na) > UINT32_MAX ||
        lam_ci_binomial(h->n, nb) > UINT32_MAX || dim > ((size_t)1 << 40))
        return SIZE_MAX;
    size_t bytes = lam_ci_sector_bytes(h->n, na, nb, h->npair, lam_ci_scratch_bytes(dim));
    bytes += dim * sizeof(double); /* diagonal */
    bytes += lam_eigen_bytes(dim, tmpl->max_subspace, tmpl->dense_limit);
    return bytes;
}

void lam_ci_sigma_apply(void *ctx, const double *x, double *y)
{
    lam_ci_sigma_ctx *c = ctx;
    lam_ci_sigma(c->h, c->s, x, y);
}

int lam_ci_solve(const lam_ci_ham *h, int na, int nb, const lam_eigen_problem *tmpl,
                 lam_eigen_result *lo, lam_eigen_result *hi, lam_error *err)
{
    size_t dim = lam_ci_sector_dim(h->n, na, nb);
    lam_ci_sector *s;
    if (lam_ci_sector_new(h, na, nb, lam_ci_scratch_bytes(dim), &s, err)) return err->code;
    double *diag = lam_malloc(lam_mul_size(s->dim, sizeof(double)));
    lam_ci_diagonal(h, s, diag);
    lam_ci_sigma_ctx ctx = {h, s};
    lam_eigen_problem p = *tmpl;
    p.dim = s->dim;
    p.apply = lam_ci_sigma_apply;
    p.ctx = &ctx;
    p.diag = diag;
    int rc = lam_eigen_ends(&p, lo, hi, err);
    free(diag);
    lam_ci_sector_free(s);
    return rc;
}
