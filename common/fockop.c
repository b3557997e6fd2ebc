/* fockop.c - Pauli operators on Fock-space sectors, matrix-free. */
#include "fockop.h"

#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "ci.h"
#include "encoding.h"
#include "util.h"

typedef struct {
    uint64_t x, z;
    double re, im;
} flat_term;

static int by_flip(const void *a, const void *b)
{
    const flat_term *s = a, *t = b;
    if (s->x != t->x) return s->x < t->x ? -1 : 1;
    return (s->z > t->z) - (s->z < t->z);
}

int lam_fockop_new(const lam_pauli_set *s, const char *src, lam_fockop **out, lam_error *err)
{
    *out = NULL;
    if (s->nqubits > 64)
        return lam_error_at(err, LAM_EX_DATA, src, 0, "%d qubits: the Fock-space path handles at most 64",
                            s->nqubits);
    lam_fockop *op = lam_calloc(1, sizeof *op);
    op->nqubits = s->nqubits;
    size_t nt = s->count;
    flat_term *t = lam_malloc(lam_mul_size(nt ? nt : 1, sizeof *t));
    for (size_t i = 0; i < nt; ++i) {
        uint64_t x = s->nwords ? lam_pauli_x(s, i)[0] : 0, z = s->nwords ? lam_pauli_z(s, i)[0] : 0;
        int ny = __builtin_popcountll(x & z) & 3;
        double c = s->coef[i];
        /* i^ny */
        static const double pr[4] = {1, 0, -1, 0}, pi[4] = {0, 1, 0, -1};
        t[i] = (flat_term){x, z, c * pr[ny], c * pi[ny]};
        if (t[i].im != 0) op->is_complex = 1;
    }
    qsort(t, nt, sizeof *t, by_flip);
    op->flip = lam_malloc(lam_mul_size(nt + 1, sizeof(uint64_t)));
    op->first = lam_malloc(lam_mul_size(nt + 2, sizeof(size_t)));
    op->z = lam_malloc(lam_mul_size(nt + 1, sizeof(uint64_t)));
    op->re = lam_malloc(lam_mul_size(nt + 1, sizeof(double)));
    op->im = lam_malloc(lam_mul_size(nt + 1, sizeof(double)));
    for (size_t i = 0; i < nt; ++i) {
        if (i == 0 || t[i].x != t[i - 1].x) {
            op->flip[op->nflip] = t[i].x;
            op->first[op->nflip++] = i;
        }
        op->z[i] = t[i].z;
        op->re[i] = t[i].re;
        op->im[i] = t[i].im;
    }
    op->first[op->nflip] = nt;
    free(t);
    *out = op;
    return 0;
}

void lam_fockop_free(lam_fockop *op)
{
    if (!op) return;
    LAM_FREE_ALL(op->flip, op->first, op->z, op->re, op->im, op);
}

static int parity(uint64_t v) { return __builtin_popcountll(v) & 1; }

/* <b|H|b ^ flip[f]> as a complex number, from the source string src = b ^ x. */
static void group_element(const lam_fockop *op, size_t f, uint64_t src, double *er, double *ei)
{
    double r = 0, i = 0;
    for (size_t t = op->first[f]; t < op->first[f + 1]; ++t) {
        double s = parity(src & op->z[t]) ? -1.0 : 1.0;
        r += s * op->re[t];
        i += s * op->im[t];
    }
    *er = r;
    *ei = i;
}

/* Terms of group f whose z agrees with zout outside the flip: check that
 * the element vanishes for every source pattern on x that changes the
 * weight on mask. */
static int group_conserves(const lam_fockop *op, size_t f, uint64_t mask)
{
    uint64_t x = op->flip[f];
    double scale = 0;
    for (size_t t = op->first[f]; t < op->first[f + 1]; ++t) scale += fabs(op->re[t]) + fabs(op->im[t]);
    double tol = 1e-12 * (scale > 1 ? scale : 1);
    for (size_t t0 = op->first[f]; t0 < op->first[f + 1]; ++t0) {
        uint64_t zout = op->z[t0] & ~x;
        /* each distinct zout once: skip if an earlier term had it */
        int seen = 0;
        for (size_t u = op->first[f]; u < t0 && !seen; ++u) seen = (op->z[u] & ~x) == zout;
        if (seen) continue;
        uint64_t sub = 0;
        do {
            int change = __builtin_popcountll(x & mask & ~sub) - __builtin_popcountll(x & mask & sub);
            if (change != 0) {
                double r = 0, i = 0;
                for (size_t t = op->first[f]; t < op->first[f + 1]; ++t) {
                    if ((op->z[t] & ~x) != zout) continue;
                    double s = parity(sub & op->z[t]) ? -1.0 : 1.0;
                    r += s * op->re[t];
                    i += s * op->im[t];
                }
                if (fabs(r) > tol || fabs(i) > tol) return 0;
            }
            sub = (sub - x) & x; /* next subset of x */
        } while (sub != 0);
    }
    return 1;
}

int lam_fockop_conserves(const lam_fockop *op, uint64_t mask)
{
    for (size_t f = 0; f < op->nflip; ++f) {
        uint64_t x = op->flip[f];
        if (!(x & mask)) continue;
        if (__builtin_popcountll(x) > 20) return 0;
        if (!group_conserves(op, f, mask)) return 0;
    }
    return 1;
}

/* ---- sector indexing ---- */

typedef struct {
    const lam_fockop *op;
    lam_fock_sector sec;
    size_t count_a, count_b, dim;
    uint64_t *states;        /* NULL for the full space (index = string) */
    int nbytes;              /* bytes of a string that can be set */
    uint32_t *rank_a, *rank_b; /* rank of each compressed string, when small */
    uint64_t ctab_a[8][256]; /* byte -> compressed bits of mask_a, in place */
    uint64_t ctab_b[8][256];
} sector_index;

static void compress_tables(uint64_t mask, uint64_t tab[8][256])
{
    for (int k = 0; k < 8; ++k) {
        int offset = __builtin_popcountll(k ? mask & ((~0ULL) >> (64 - 8 * k)) : 0);
        for (int v = 0; v < 256; ++v) {
            uint64_t out = 0;
            int o = offset;
            for (int bit = 0; bit < 8; ++bit) {
                int pos = 8 * k + bit;
                if (!(mask >> pos & 1)) continue;
                if (v >> bit & 1) out |= 1ULL << o;
                ++o;
            }
            tab[k][v] = out;
        }
    }
}

static uint64_t compress(uint64_t b, uint64_t tab[8][256], int nbytes)
{
    uint64_t out = 0;
    for (int k = 0; k < nbytes; ++k) out |= tab[k][(b >> (8 * k)) & 0xFF];
    return out;
}

/* Ranks of all strings of a mask of width w <= 20 by direct lookup. */
enum { RANK_TABLE_BITS = 20 };

static uint32_t *rank_table(int w)
{
    if (w > RANK_TABLE_BITS) return NULL;
    uint32_t *t = lam_malloc(((size_t)1 << w) * sizeof(uint32_t));
    for (uint64_t c = 0; c < ((uint64_t)1 << w); ++c) t[c] = (uint32_t)lam_ci_string_rank(c);
    return t;
}

static uint64_t expand(uint64_t c, uint64_t mask)
{
    uint64_t out = 0;
    for (int pos = 0; c && pos < 64; ++pos) {
        if (!(mask >> pos & 1)) continue;
        if (c & 1) out |= 1ULL << pos;
        c >>= 1;
    }
    return out;
}

static size_t full_dim(int nq) { return nq >= 63 ? SIZE_MAX : (size_t)1 << nq; }

size_t lam_fock_sector_dim(const lam_fockop *op, const lam_fock_sector *sec)
{
    if (sec->full) return full_dim(op->nqubits);
    size_t a = lam_ci_binomial(__builtin_popcountll(sec->mask_a), sec->na);
    size_t b = lam_ci_binomial(__builtin_popcountll(sec->mask_b), sec->nb);
    if (a == SIZE_MAX || b == SIZE_MAX || (b && a > SIZE_MAX / b)) return SIZE_MAX;
    return a * b;
}

static int in_sector(const sector_index *ix, uint64_t b)
{
    if (ix->sec.full) return 1;
    return __builtin_popcountll(b & ix->sec.mask_a) == ix->sec.na &&
           __builtin_popcountll(b & ix->sec.mask_b) == ix->sec.nb;
}

static size_t index_of(sector_index *ix, uint64_t b)
{
    if (ix->sec.full) return (size_t)b;
    uint64_t ca = compress(b, ix->ctab_a, ix->nbytes), cb = compress(b, ix->ctab_b, ix->nbytes);
    size_t ra = ix->rank_a ? ix->rank_a[ca] : lam_ci_string_rank(ca);
    size_t rb = ix->rank_b ? ix->rank_b[cb] : lam_ci_string_rank(cb);
    return ra * ix->count_b + rb;
}

static uint64_t first_string(int k)
{
    return k == 0 ? 0 : (k >= 64 ? ~0ULL : (1ULL << k) - 1);
}

static uint64_t next_string(uint64_t v)
{
    uint64_t c = v & -v, r = v + c;
    return (((r ^ v) >> 2) / c) | r;
}

/* NULL (err filled) when the sector is too large to index. */
static sector_index *sector_index_new(const lam_fockop *op, const lam_fock_sector *sec, int list,
                                      lam_error *err)
{
    size_t dim = lam_fock_sector_dim(op, sec);
    if (dim == SIZE_MAX) {
        lam_error_set(err, LAM_EX_SOFTWARE, "sector too large to index");
        return NULL;
    }
    sector_index *ix = lam_calloc(1, sizeof *ix);
    ix->op = op;
    ix->sec = *sec;
    ix->dim = dim;
    if (sec->full) return ix;
    compress_tables(sec->mask_a, ix->ctab_a);
    compress_tables(sec->mask_b, ix->ctab_b);
    ix->nbytes = (op->nqubits + 7) / 8;
    if (list) {
        ix->rank_a = rank_table(__builtin_popcountll(sec->mask_a));
        ix->rank_b = rank_table(__builtin_popcountll(sec->mask_b));
    }
    ix->count_a = lam_ci_binomial(__builtin_popcountll(sec->mask_a), sec->na);
    ix->count_b = lam_ci_binomial(__builtin_popcountll(sec->mask_b), sec->nb);
    if (!list) return ix;
    ix->states = lam_malloc(lam_mul_size(ix->dim, sizeof(uint64_t)));
    uint64_t ca = first_string(sec->na);
    for (size_t ia = 0; ia < ix->count_a; ++ia, ca = ia < ix->count_a ? next_string(ca) : ca) {
        uint64_t ea = expand(ca, sec->mask_a), cb = first_string(sec->nb);
        for (size_t ib = 0; ib < ix->count_b; ++ib, cb = ib < ix->count_b ? next_string(cb) : cb)
            ix->states[ia * ix->count_b + ib] = ea | expand(cb, sec->mask_b);
    }
    return ix;
}

static void sector_index_free(sector_index *ix)
{
    if (!ix) return;
    LAM_FREE_ALL(ix->states, ix->rank_a, ix->rank_b, ix);
}

static uint64_t state_at(const sector_index *ix, size_t i)
{
    return ix->states ? ix->states[i] : (uint64_t)i;
}

/* ---- the operator on a sector ---- */

static double diagonal_of(const lam_fockop *op, uint64_t b)
{
    if (op->nflip == 0 || op->flip[0] != 0) return 0;
    double r, i;
    group_element(op, 0, b, &r, &i);
    return r;
}

/* y = H x in the real form: x, y of length dim (real operator) or 2 dim
 * (real part, then imaginary part); rows [lo, hi). */
typedef struct {
    sector_index *ix;
    const double *x;
    double *y;
    size_t lo, hi;
} apply_range;

static void *apply_rows(void *arg)
{
    apply_range *a = arg;
    sector_index *ix = a->ix;
    const lam_fockop *op = ix->op;
    const double *x = a->x;
    double *y = a->y;
    size_t dim = ix->dim;
    int cplx = op->is_complex;
    for (size_t i = a->lo; i < a->hi; ++i) {
        uint64_t b = state_at(ix, i);
        double yr = 0, yi = 0;
        for (size_t f = 0; f < op->nflip; ++f) {
            uint64_t src = b ^ op->flip[f];
            if (!in_sector(ix, src)) continue;
            size_t j = index_of(ix, src);
            double er, ei;
            group_element(op, f, src, &er, &ei);
            if (cplx) {
                yr += er * x[j] - ei * x[dim + j];
                yi += er * x[dim + j] + ei * x[j];
            } else {
                yr += er * x[j];
            }
        }
        y[i] = yr;
        if (cplx) y[dim + i] = yi;
    }
    return NULL;
}

static int fock_threads = 1;

void lam_fockop_set_threads(int threads)
{
    fock_threads = threads < 1 ? 1 : threads > 64 ? 64 : threads;
}

/* Rows are independent (each y_i is written once), so threads split them. */
static void fock_apply(void *ctx, const double *x, double *y)
{
    sector_index *ix = ctx;
    size_t dim = ix->dim;
    int nt = fock_threads;
    if ((size_t)nt > dim) nt = (int)dim;
    if (nt <= 1) {
        apply_range a = {ix, x, y, 0, dim};
        apply_rows(&a);
        return;
    }
    pthread_t tid[64];
    apply_range a[64];
    size_t step = (dim + (size_t)nt - 1) / (size_t)nt;
    for (int t = 0; t < nt; ++t) {
        size_t lo = (size_t)t * step, hi = lo + step < dim ? lo + step : dim;
        a[t] = (apply_range){ix, x, y, lo < dim ? lo : dim, hi};
        tid[t] = 0;
        if (t > 0 && pthread_create(&tid[t], NULL, apply_rows, &a[t]) != 0) {
            apply_rows(&a[t]); /* no thread to be had: do it here */
            tid[t] = 0;
        }
    }
    apply_rows(&a[0]);
    for (int t = 1; t < nt; ++t)
        if (tid[t]) pthread_join(tid[t], NULL);
}

size_t lam_fock_solve_bytes(const lam_fockop *op, const lam_fock_sector *sec,
                            const lam_eigen_problem *tmpl)
{
    size_t dim = lam_fock_sector_dim(op, sec);
    if (dim == SIZE_MAX || dim > ((size_t)1 << 40)) return SIZE_MAX;
    size_t n = op->is_complex ? 2 * dim : dim;
    size_t bytes = n * sizeof(double);                /* diagonal */
    if (!sec->full) {
        bytes += dim * sizeof(uint64_t); /* strings */
        int wa = __builtin_popcountll(sec->mask_a), wb = __builtin_popcountll(sec->mask_b);
        if (wa <= RANK_TABLE_BITS) bytes += ((size_t)1 << wa) * sizeof(uint32_t);
        if (wb <= RANK_TABLE_BITS) bytes += ((size_t)1 << wb) * sizeof(uint32_t);
    }
    return bytes + lam_eigen_bytes(n, tmpl->max_subspace, tmpl->dense_limit);
}

int lam_fock_solve(const lam_fockop *op, const lam_fock_sector *sec, const lam_eigen_problem *tmpl,
                   lam_eigen_result *lo, lam_eigen_result *hi, lam_error *err)
{
    sector_index *ix = sector_index_new(op, sec, 1, err);
    if (!ix) return err->code;
    size_t n = op->is_complex ? 2 * ix->dim : ix->dim;
    double *diag = lam_malloc(lam_mul_size(n, sizeof(double)));
    for (size_t i = 0; i < ix->dim; ++i) {
        diag[i] = diagonal_of(op, state_at(ix, i));
        if (op->is_complex) diag[ix->dim + i] = diag[i];
    }
    lam_eigen_problem p = *tmpl;
    p.dim = n;
    p.apply = fock_apply;
    p.ctx = ix;
    p.diag = diag;
    int rc = lam_eigen_ends(&p, lo, hi, err);
    free(diag);
    sector_index_free(ix);
    return rc;
}

/* ---- inner bounds ---- */

static size_t find_flip(const lam_fockop *op, uint64_t x)
{
    size_t lo = 0, hi = op->nflip;
    while (lo < hi) {
        size_t mid = (lo + hi) / 2;
        if (op->flip[mid] < x) lo = mid + 1;
        else hi = mid;
    }
    return lo < op->nflip && op->flip[lo] == x ? lo : SIZE_MAX;
}

/* <row|H|col> */
static void element(const lam_fockop *op, uint64_t row, uint64_t col, double *er, double *ei)
{
    size_t f = find_flip(op, row ^ col);
    *er = *ei = 0;
    if (f != SIZE_MAX) group_element(op, f, col, er, ei);
}

/* Best string by steepest descent of sign * diagonal over moves of one bit
 * within a mask (any single flip for the full space). */
static uint64_t descend(const lam_fockop *op, const lam_fock_sector *sec, double sign)
{
    int nq = op->nqubits;
    uint64_t b = sec->full ? 0 : expand(first_string(sec->na), sec->mask_a) |
                                     expand(first_string(sec->nb), sec->mask_b);
    double e = sign * diagonal_of(op, b);
    for (int improved = 1; improved;) {
        improved = 0;
        uint64_t best = b;
        double be = e;
        for (int i = 0; i < nq; ++i)
            for (int j = sec->full ? i : 0; j < nq; ++j) {
                uint64_t c;
                if (sec->full) {
                    if (j != i) continue;
                    c = b ^ (1ULL << i);
                } else {
                    int same_a = (sec->mask_a >> i & 1) && (sec->mask_a >> j & 1);
                    int same_b = (sec->mask_b >> i & 1) && (sec->mask_b >> j & 1);
                    if (!(b >> i & 1) || (b >> j & 1) || !(same_a || same_b)) continue;
                    c = (b & ~(1ULL << i)) | 1ULL << j;
                }
                double ce = sign * diagonal_of(op, c);
                if (ce < be - 1e-14) {
                    be = ce;
                    best = c;
                }
            }
        if (best != b) {
            b = best;
            e = be;
            improved = 1;
        }
    }
    return b;
}

static int ritz_bound(const lam_fockop *op, const lam_fock_sector *sec, int subspace, double sign,
                      double *value, lam_error *err)
{
    sector_index *ix = sector_index_new(op, sec, 0, err);
    if (!ix) return err->code;
    uint64_t b0 = descend(op, sec, sign);
    /* the neighbours of b0, each weighed by |<b0|H|b0 ^ flip>|, at its flip */
    lam_weighted *nb = lam_malloc(lam_mul_size(op->nflip + 1, sizeof *nb));
    size_t k = 0;
    for (size_t f = 0; f < op->nflip; ++f) {
        if (op->flip[f] == 0) continue;
        uint64_t c = b0 ^ op->flip[f];
        if (!in_sector(ix, c)) continue;
        double er, ei;
        element(op, b0, c, &er, &ei);
        if (er == 0 && ei == 0) continue;
        nb[k++] = (lam_weighted){hypot(er, ei), f};
    }
    lam_sort_heaviest_first(nb, k);
    size_t m = 1 + (k < (size_t)subspace - 1 ? k : (size_t)subspace - 1);
    uint64_t *basis = lam_malloc(m * sizeof(uint64_t));
    basis[0] = b0;
    for (size_t i = 1; i < m; ++i) basis[i] = b0 ^ op->flip[nb[i - 1].at];
    /* the real form [[A, -B], [B, A]] of the Hermitian projection */
    size_t r = 2 * m;
    double *a = lam_calloc(r * r, sizeof(double)), *w = lam_malloc(r * sizeof(double));
    for (size_t i = 0; i < m; ++i)
        for (size_t j = 0; j < m; ++j) {
            double er, ei;
            element(op, basis[i], basis[j], &er, &ei);
            a[i * r + j] = a[(m + i) * r + m + j] = er;
            a[i * r + m + j] = -ei;
            a[(m + i) * r + j] = ei;
        }
    int rc = lam_eigen_dense((int)r, a, w, err);
    double v = sign > 0 ? w[0] : w[r - 1];
    LAM_FREE_ALL(nb, basis, a, w);
    sector_index_free(ix);
    if (!rc) *value = v;
    return rc;
}

int lam_fock_bounds(const lam_fockop *op, const lam_fock_sector *sec, int subspace, double *lo, double *hi,
                    lam_error *err)
{
    if (subspace < 1) subspace = 1;
    if (lo && ritz_bound(op, sec, subspace, 1.0, lo, err)) return err->code;
    if (hi && ritz_bound(op, sec, subspace, -1.0, hi, err)) return err->code;
    return 0;
}

/* ---- reading and what is conserved ---- */

int lam_fockop_read_stream(lam_reader *r, lam_kind kind, lam_pauli_set *set,
                           lam_spin_order *order, int *jw, lam_error *err)
{
    int rc = lam_reader_spin_order(r, LAM_SPIN_INTERLEAVED, order, err);
    if (rc) return rc;
    *jw = 1;
    if (kind == LAM_KIND_PAULI) {
        const lam_meta_entry *enc = lam_meta_find(lam_reader_meta(r), "encoding");
        lam_encoding_kind ek;
        if (enc) *jw = lam_encoding_parse(enc->value, &ek) == 0 && ek == LAM_ENC_JORDAN_WIGNER;
        if ((rc = lam_pauli_read(r, set, err)) != 0) return rc;
        lam_pauli_set_merge(set, 1);
        return 0;
    }
    lam_fermion_op f;
    lam_majorana_set m;
    if ((rc = lam_fermion_read(r, &f, err)) != 0) return rc;
    lam_majorana_init(&m, f.nmodes);
    lam_majorana_from_fermion(&f, &m);
    if ((rc = lam_majorana_require_hermitian(&m, lam_reader_name(r), err)) != 0) {
        lam_majorana_free(&m);
        lam_fermion_free(&f);
        return rc;
    }
    lam_encoding *e = lam_encoding_new(LAM_ENC_JORDAN_WIGNER, f.nmodes);
    lam_pauli_set_init(set, f.nmodes);
    lam_encoding_map_majorana(e, &m, set);
    lam_encoding_free(e);
    lam_majorana_free(&m);
    lam_fermion_free(&f);
    return 0;
}

lam_fock_conservation lam_fockop_conservation(const lam_fockop *op, lam_spin_order order, int jw)
{
    lam_fock_conservation c = {0, 0, 0, 0, 0};
    int nq = op->nqubits;
    c.all = nq >= 64 ? ~0ULL : (1ULL << nq) - 1;
    if (!jw) return c;
    if (nq % 2 == 0) {
        int n = nq / 2;
        for (int p = 0; p < n; ++p) {
            c.mask_a |= 1ULL << lam_spin_mode(order, n, p, 0);
            c.mask_b |= 1ULL << lam_spin_mode(order, n, p, 1);
        }
        c.spin_sectors = lam_fockop_conserves(op, c.mask_a) && lam_fockop_conserves(op, c.mask_b);
    }
    c.number_blocks = c.spin_sectors || lam_fockop_conserves(op, c.all);
    return c;
}
