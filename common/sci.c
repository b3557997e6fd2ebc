/* sci.c - heat-bath selected CI for one end of a sector (see sci.h). */
#include "sci.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "ci.h"
#include "eigen.h"
#include "rotate.h"
#include "util.h"

typedef struct {
    uint64_t a, b;
} det;

static int parity(uint64_t x) { return __builtin_popcountll(x) & 1 ? -1 : 1; }
static uint64_t below(int p) { return p ? (~0ULL >> (64 - p)) : 0; }
static int lowest_bit(uint64_t x) { return __builtin_ctzll(x); }

/* ---- Slater-Condon rules on bit strings ---- */

#define G(sf, p, q, r, s) LAM_G(sf, p, q, r, s)

static double diag_energy(const lam_spinfree *sf, uint64_t a, uint64_t b)
{
    double e = sf->e0;
    const uint64_t str[2] = {a, b};
    for (int s = 0; s < 2; ++s)
        for (uint64_t m = str[s]; m; m &= m - 1) {
            int p = lowest_bit(m);
            e += LAM_H(sf, p, p);
            /* pairs within the same spin: Coulomb minus exchange */
            for (uint64_t r = m & (m - 1); r; r &= r - 1) {
                int q = lowest_bit(r);
                e += G(sf, p, p, q, q) - G(sf, p, q, q, p);
            }
            /* pairs of opposite spin: Coulomb only (counted once, from alpha) */
            if (s == 0)
                for (uint64_t r = b; r; r &= r - 1) {
                    int q = lowest_bit(r);
                    e += G(sf, p, p, q, q);
                }
        }
    return e;
}

/* <m'|H|m> for m' = a+_a a_i m within string m of one spin, the other
 * spin's string being o. */
static double single_element(const lam_spinfree *sf, uint64_t m, uint64_t o, int i, int a)
{
    double v = LAM_H(sf, a, i);
    for (uint64_t r = m; r; r &= r - 1) {
        int q = lowest_bit(r);
        v += G(sf, a, i, q, q) - G(sf, a, q, q, i);
    }
    for (uint64_t r = o; r; r &= r - 1) {
        int q = lowest_bit(r);
        v += G(sf, a, i, q, q);
    }
    int lo = i < a ? i : a, hi = i < a ? a : i;
    return parity(m & below(hi) & ~below(lo + 1)) * v;
}

/* Sign of a+_a a_i on string m (i occupied, a empty). */
static int single_sign(uint64_t m, int i, int a)
{
    int lo = i < a ? i : a, hi = i < a ? a : i;
    return parity(m & below(hi) & ~below(lo + 1));
}

/* Sign of a+_a a+_b a_j a_i on string m. */
static int double_sign(uint64_t m, int i, int j, int a, int b)
{
    int s = parity(m & below(i));
    m ^= 1ULL << i;
    s *= parity(m & below(j));
    m ^= 1ULL << j;
    s *= parity(m & below(b));
    m |= 1ULL << b;
    s *= parity(m & below(a));
    return s;
}

static double same_spin_double(const lam_spinfree *sf, uint64_t m, int i, int j, int a, int b)
{
    return double_sign(m, i, j, a, b) * (G(sf, a, i, b, j) - G(sf, a, j, b, i));
}

double lam_sci_element(const lam_spinfree *sf, uint64_t a1, uint64_t b1, uint64_t a2, uint64_t b2)
{
    int da = __builtin_popcountll(a1 ^ a2), db = __builtin_popcountll(b1 ^ b2);
    if (da + db > 4 || __builtin_popcountll(a1) != __builtin_popcountll(a2) ||
        __builtin_popcountll(b1) != __builtin_popcountll(b2))
        return 0;
    if (da + db == 0) return diag_energy(sf, a1, b1);
    if (da == 2 && db == 0) return single_element(sf, a2, b2, lowest_bit(a2 & ~a1), lowest_bit(a1 & ~a2));
    if (da == 0 && db == 2) return single_element(sf, b2, a2, lowest_bit(b2 & ~b1), lowest_bit(b1 & ~b2));
    if (da == 2) {
        int i = lowest_bit(a2 & ~a1), a = lowest_bit(a1 & ~a2);
        int j = lowest_bit(b2 & ~b1), b = lowest_bit(b1 & ~b2);
        return single_sign(a2, i, a) * single_sign(b2, j, b) * G(sf, a, i, b, j);
    }
    uint64_t m2 = da ? a2 : b2, m1 = da ? a1 : b1;
    uint64_t holes = m2 & ~m1, parts = m1 & ~m2;
    int i = lowest_bit(holes), j = lowest_bit(holes & (holes - 1));
    int a = lowest_bit(parts), b = lowest_bit(parts & (parts - 1));
    return same_spin_double(sf, m2, i, j, a, b);
}

/* ---- start determinant ---- */

static uint64_t best_swap(const lam_spinfree *sf, uint64_t *a, uint64_t *b, double sign, double *e)
{
    int n = sf->n;
    uint64_t full = n == 64 ? ~0ULL : (1ULL << n) - 1;
    int improved = 0;
    uint64_t ba = *a, bb = *b;
    for (int s = 0; s < 2; ++s) {
        uint64_t m = s ? *b : *a;
        for (uint64_t occ = m; occ; occ &= occ - 1)
            for (uint64_t emp = full & ~m; emp; emp &= emp - 1) {
                uint64_t t = m ^ (occ & -occ) ^ (emp & -emp);
                double et = s ? diag_energy(sf, *a, t) : diag_energy(sf, t, *b);
                if (sign * et < sign * *e - 1e-12) {
                    *e = et;
                    ba = s ? *a : t;
                    bb = s ? t : *b;
                    improved = 1;
                }
            }
    }
    *a = ba;
    *b = bb;
    return (uint64_t)improved;
}

void lam_sci_start(const lam_spinfree *sf, int na, int nb, int highest, uint64_t *alpha,
                   uint64_t *beta)
{
    int n = sf->n;
    double sign = highest ? -1.0 : 1.0;
    uint64_t a = 0, b = 0;
    /* greedy: each electron where it moves the diagonal energy most */
    for (int k = 0; k < na + nb; ++k) {
        int spin = (k % 2 == 0 && __builtin_popcountll(a) < na) || __builtin_popcountll(b) >= nb ? 0 : 1;
        double best = INFINITY;
        int bp = -1;
        for (int p = 0; p < n; ++p) {
            uint64_t m = spin ? b : a;
            if (m >> p & 1) continue;
            double e = spin ? diag_energy(sf, a, b | 1ULL << p) : diag_energy(sf, a | 1ULL << p, b);
            if (sign * e < best) {
                best = sign * e;
                bp = p;
            }
        }
        if (spin) b |= 1ULL << bp;
        else a |= 1ULL << bp;
    }
    double e = diag_energy(sf, a, b);
    while (best_swap(sf, &a, &b, sign, &e)) {
    }
    *alpha = a;
    *beta = b;
}

/* ---- memory accounting ---- */

typedef struct {
    double limit, used;
    size_t peak;
} budget;

static int budget_take(budget *m, double bytes)
{
    if (m->used + bytes > m->limit) return 0;
    m->used += bytes;
    if (m->used > (double)m->peak) m->peak = (size_t)m->used;
    return 1;
}

static void budget_give(budget *m, double bytes) { m->used -= bytes; }

/* ---- a set of determinants: open addressing, index per key ---- */

typedef struct {
    det *key;
    uint32_t *idx; /* UINT32_MAX: empty */
    size_t cap;
} dethash;

static size_t det_hash(det d)
{
    uint64_t x = d.a * 0x9E3779B97F4A7C15ULL ^ (d.b + 0x632BE59BD9B4E019ULL) * 0xBF58476D1CE4E5B9ULL;
    x ^= x >> 31;
    x *= 0x94D049BB133111EBULL;
    x ^= x >> 29;
    return (size_t)x;
}

static double dethash_bytes(size_t cap) { return (double)cap * (sizeof(det) + sizeof(uint32_t)); }

static void dethash_init(dethash *h, size_t count)
{
    size_t cap = 64;
    while (cap < 2 * count + 2) cap *= 2;
    h->cap = cap;
    h->key = lam_malloc(lam_mul_size(cap, sizeof(det)));
    h->idx = lam_malloc(lam_mul_size(cap, sizeof(uint32_t)));
    memset(h->idx, 0xff, cap * sizeof(uint32_t));
}

static void dethash_free(dethash *h)
{
    free(h->key);
    free(h->idx);
    h->key = NULL;
    h->idx = NULL;
}

/* Slot of d: holds d, or is the empty slot where d would go. */
static size_t dethash_slot(const dethash *h, det d)
{
    size_t s = det_hash(d) & (h->cap - 1);
    while (h->idx[s] != UINT32_MAX && (h->key[s].a != d.a || h->key[s].b != d.b)) s = (s + 1) & (h->cap - 1);
    return s;
}

static uint32_t dethash_find(const dethash *h, det d) { return h->idx[dethash_slot(h, d)]; }

/* Key d[i] at index i for i < count, into an emptied table. */
static void dethash_fill(dethash *h, const det *d, size_t count)
{
    memset(h->idx, 0xff, h->cap * sizeof(uint32_t));
    for (size_t i = 0; i < count; ++i) {
        size_t s = dethash_slot(h, d[i]);
        h->key[s] = d[i];
        h->idx[s] = (uint32_t)i;
    }
}

/* ---- the heat-bath lists ---- */

typedef struct {
    float v;
    uint8_t a, b;
} hb_entry;

typedef struct {
    const lam_spinfree *sf;
    int n, na, nb;
    size_t *same_first, *opp_first, *sgl_first; /* n*n+1, n*n+1, n+1 */
    hb_entry *same, *opp, *sgl;                  /* sgl: a in .a, bound in .v */
    double list_bytes;
} heatbath;

static int by_size(const void *x, const void *y)
{
    float a = ((const hb_entry *)x)->v, b = ((const hb_entry *)y)->v;
    return (a < b) - (a > b);
}

/* Sorted by |v| descending so that screening stops at the first entry below
 * the threshold: for same-spin pairs i<j the antisymmetrized (ai|bj) -
 * (aj|bi) over a<b; for alpha i, beta j the (ai|bj); for singles i->a an
 * upper bound of |<a|H|i>| over every determinant. */
static int heatbath_build(heatbath *hb, const lam_spinfree *sf, budget *mem, lam_error *err)
{
    int n = sf->n;
    size_t nn = (size_t)n * n;
    hb->sf = sf;
    hb->n = n;
    size_t cs = 0, co = 0;
    for (int pass = 0; pass < 2; ++pass) {
        cs = co = 0;
        for (int i = 0; i < n; ++i)
            for (int j = 0; j < n; ++j) {
                if (pass) {
                    hb->same_first[i * n + j] = cs;
                    hb->opp_first[i * n + j] = co;
                }
                for (int a = 0; a < n; ++a)
                    for (int b = 0; b < n; ++b) {
                        if (i < j && a < b && a != i && a != j && b != i && b != j) {
                            double v = fabs(G(sf, a, i, b, j) - G(sf, a, j, b, i));
                            if (v > 1e-12) {
                                if (pass) hb->same[cs] = (hb_entry){(float)v, (uint8_t)a, (uint8_t)b};
                                ++cs;
                            }
                        }
                        if (a != i && b != j) {
                            double v = fabs(G(sf, a, i, b, j));
                            if (v > 1e-12) {
                                if (pass) hb->opp[co] = (hb_entry){(float)v, (uint8_t)a, (uint8_t)b};
                                ++co;
                            }
                        }
                    }
            }
        if (!pass) {
            hb->list_bytes = (double)(cs + co + nn) * sizeof(hb_entry) + (2.0 * nn + n + 3) * sizeof(size_t);
            if (!budget_take(mem, hb->list_bytes))
                return lam_error_set(err, LAM_EX_MEMORY,
                                     "selected CI: the operator and its sorted integral lists (%d orbitals) need "
                                     "%.0f KiB, over --max-memory",
                                     n, ceil((mem->used + hb->list_bytes) / 1024.0));
            hb->same_first = lam_malloc((nn + 1) * sizeof(size_t));
            hb->opp_first = lam_malloc((nn + 1) * sizeof(size_t));
            hb->sgl_first = lam_malloc(((size_t)n + 1) * sizeof(size_t));
            hb->same = lam_malloc(lam_mul_size(cs + 1, sizeof(hb_entry)));
            hb->opp = lam_malloc(lam_mul_size(co + 1, sizeof(hb_entry)));
            hb->sgl = lam_malloc(lam_mul_size(nn + 1, sizeof(hb_entry)));
        }
    }
    hb->same_first[nn] = cs;
    hb->opp_first[nn] = co;
    for (size_t k = 0; k < nn; ++k) {
        qsort(hb->same + hb->same_first[k], hb->same_first[k + 1] - hb->same_first[k], sizeof(hb_entry), by_size);
        qsort(hb->opp + hb->opp_first[k], hb->opp_first[k + 1] - hb->opp_first[k], sizeof(hb_entry), by_size);
    }
    size_t c = 0;
    for (int i = 0; i < n; ++i) {
        hb->sgl_first[i] = c;
        for (int a = 0; a < n; ++a) {
            if (a == i) continue;
            double s = fabs(LAM_H(sf, a, i));
            for (int r = 0; r < n; ++r) s += 2 * fabs(G(sf, a, i, r, r)) + fabs(G(sf, a, r, r, i));
            hb->sgl[c++] = (hb_entry){(float)(s * (1 + 1e-6)), (uint8_t)a, 0};
        }
        qsort(hb->sgl + hb->sgl_first[i], c - hb->sgl_first[i], sizeof(hb_entry), by_size);
    }
    hb->sgl_first[n] = c;
    return 0;
}

static void heatbath_free(heatbath *hb)
{
    LAM_FREE_ALL(hb->same_first, hb->opp_first, hb->sgl_first, hb->same, hb->opp, hb->sgl);
}

/* Every determinant K outside-or-inside the space with |<K|H|D>| w > eps
 * (singles and doubles of D), handed to fn with the signed element when
 * `exact`, else with its size (the list value for doubles). */
typedef int (*emit_fn)(void *ctx, det k, double h);

static int excite(const heatbath *hb, det d, double w, double eps, int exact, emit_fn fn, void *ctx)
{
    const lam_spinfree *sf = hb->sf;
    int n = hb->n;
    if (w <= 0) return 0;
    for (int s = 0; s < 2; ++s) {
        uint64_t m = s ? d.b : d.a, o = s ? d.a : d.b;
        for (uint64_t oi = m; oi; oi &= oi - 1) {
            int i = lowest_bit(oi);
            for (size_t k = hb->sgl_first[i]; k < hb->sgl_first[i + 1]; ++k) {
                if ((double)hb->sgl[k].v * w <= eps) break;
                int a = hb->sgl[k].a;
                if (m >> a & 1) continue;
                double v = single_element(sf, m, o, i, a);
                if (fabs(v) * w <= eps) continue;
                uint64_t t = m ^ 1ULL << i ^ 1ULL << a;
                det kd = s ? (det){d.a, t} : (det){t, d.b};
                if (fn(ctx, kd, exact ? v : fabs(v))) return 1;
            }
        }
        /* same-spin doubles */
        for (uint64_t oi = m; oi; oi &= oi - 1) {
            int i = lowest_bit(oi);
            for (uint64_t oj = oi & (oi - 1); oj; oj &= oj - 1) {
                int j = lowest_bit(oj);
                size_t l = (size_t)i * n + j;
                for (size_t k = hb->same_first[l]; k < hb->same_first[l + 1]; ++k) {
                    const hb_entry *e = &hb->same[k];
                    if ((double)e->v * w <= eps) break;
                    if ((m >> e->a & 1) || (m >> e->b & 1)) continue;
                    uint64_t t = m ^ 1ULL << i ^ 1ULL << j ^ 1ULL << e->a ^ 1ULL << e->b;
                    det kd = s ? (det){d.a, t} : (det){t, d.b};
                    double v = exact ? same_spin_double(sf, m, i, j, e->a, e->b) : e->v;
                    if (fn(ctx, kd, v)) return 1;
                }
            }
        }
    }
    /* opposite-spin doubles */
    for (uint64_t oi = d.a; oi; oi &= oi - 1) {
        int i = lowest_bit(oi);
        for (uint64_t oj = d.b; oj; oj &= oj - 1) {
            int j = lowest_bit(oj);
            size_t l = (size_t)i * n + j;
            for (size_t k = hb->opp_first[l]; k < hb->opp_first[l + 1]; ++k) {
                const hb_entry *e = &hb->opp[k];
                if ((double)e->v * w <= eps) break;
                if ((d.a >> e->a & 1) || (d.b >> e->b & 1)) continue;
                det kd = {d.a ^ 1ULL << i ^ 1ULL << e->a, d.b ^ 1ULL << j ^ 1ULL << e->b};
                double v = e->v;
                if (exact)
                    v = single_sign(d.a, i, e->a) * single_sign(d.b, j, e->b) * G(sf, e->a, i, e->b, j);
                if (fn(ctx, kd, v)) return 1;
            }
        }
    }
    return 0;
}

/* ---- the variational space ---- */

typedef struct {
    det *d;
    double *diag;
    size_t count, cap;
    dethash h;
} space;

static double space_bytes(size_t cap)
{
    return (double)cap * (sizeof(det) + sizeof(double)) + dethash_bytes(4 * cap + 64);
}

static void space_init(space *v, size_t cap)
{
    v->cap = cap;
    v->count = 0;
    v->d = lam_malloc(lam_mul_size(cap, sizeof(det)));
    v->diag = lam_malloc(lam_mul_size(cap, sizeof(double)));
    dethash_init(&v->h, cap);
}

static void space_free(space *v)
{
    free(v->d);
    free(v->diag);
    dethash_free(&v->h);
}

static int space_add(space *v, const lam_spinfree *sf, det d)
{
    size_t s = dethash_slot(&v->h, d);
    if (v->h.idx[s] != UINT32_MAX) return 0;
    v->h.key[s] = d;
    v->h.idx[s] = (uint32_t)v->count;
    v->d[v->count] = d;
    v->diag[v->count] = diag_energy(sf, d.a, d.b);
    ++v->count;
    return 1;
}

/* Back to the first `count` determinants (after a space did not fit). */
static void space_truncate(space *v, size_t count)
{
    dethash_fill(&v->h, v->d, count);
    v->count = count;
}

/* ---- the sparse Hamiltonian over the space ---- */

/* Upper triangle by rows, diagonal apart. */
typedef struct {
    size_t dim;
    size_t *row;     /* dim+1 */
    uint32_t *col;
    double *val;
    const double *diag;
    size_t cap;
    double bytes;
} sparse;

static void sparse_free(sparse *h)
{
    LAM_FREE_ALL(h->row, h->col, h->val);
    memset(h, 0, sizeof *h);
}

static int sparse_push(sparse *h, budget *mem, uint32_t j, double v)
{
    size_t k = h->row[h->dim + 1]; /* h->dim: the row being filled */
    if (k == h->cap) {
        size_t cap = h->cap ? h->cap * 2 : 4096;
        double more = (double)(cap - h->cap) * (sizeof(uint32_t) + sizeof(double));
        if (!budget_take(mem, more)) return 0;
        h->bytes += more;
        h->col = lam_realloc(h->col, cap * sizeof(uint32_t));
        h->val = lam_realloc(h->val, cap * sizeof(double));
        h->cap = cap;
    }
    h->col[k] = j;
    h->val[k] = v;
    h->row[h->dim + 1] = k + 1;
    return 1;
}

static void sparse_apply(void *ctx, const double *x, double *y)
{
    const sparse *h = ctx;
    for (size_t i = 0; i < h->dim; ++i) y[i] = h->diag[i] * x[i];
    for (size_t i = 0; i < h->dim; ++i) {
        double xi = x[i], yi = 0;
        for (size_t k = h->row[i]; k < h->row[i + 1]; ++k) {
            uint32_t j = h->col[k];
            yi += h->val[k] * x[j];
            y[j] += h->val[k] * xi;
        }
        y[i] += yi;
    }
}

/* Groups of determinants by one spin's string: strings numbered, members
 * of each listed sorted by the other spin's string. */
typedef struct {
    size_t nstr;
    uint64_t *str;     /* nstr strings */
    uint32_t *of;      /* per determinant: its string number */
    size_t *first;     /* nstr+1 */
    uint32_t *member;  /* determinants, grouped */
    size_t *single_first; /* nstr+1: strings one replacement away */
    uint32_t *single;
} groups;

static const det *sort_dets;
static int sort_spin;

static int by_other_string(const void *x, const void *y)
{
    const det *a = &sort_dets[*(const uint32_t *)x], *b = &sort_dets[*(const uint32_t *)y];
    uint64_t u = sort_spin ? a->a : a->b, v = sort_spin ? b->a : b->b;
    return (u > v) - (u < v);
}

/* Strings one replacement apart share exactly one string with one electron
 * removed: sort (string minus one electron, string) pairs and link within
 * runs of equal keys. */
static void link_singles(groups *g, int k)
{
    size_t np = g->nstr * (size_t)k;
    lam_keyed *p = lam_malloc(lam_mul_size(np + 1, sizeof *p));
    size_t c = 0;
    for (size_t s = 0; s < g->nstr; ++s)
        for (uint64_t m = g->str[s]; m; m &= m - 1) p[c++] = (lam_keyed){g->str[s] ^ (m & -m), s};
    lam_sort_by_key(p, c);
    size_t *cnt = lam_calloc(g->nstr + 1, sizeof(size_t));
    for (size_t r = 0; r < c;) {
        size_t e = r;
        while (e < c && p[e].key == p[r].key) ++e;
        for (size_t x = r; x < e; ++x) cnt[p[x].at] += e - r - 1;
        r = e;
    }
    g->single_first = lam_malloc((g->nstr + 1) * sizeof(size_t));
    size_t tot = 0;
    for (size_t s = 0; s < g->nstr; ++s) {
        g->single_first[s] = tot;
        tot += cnt[s];
        cnt[s] = g->single_first[s];
    }
    g->single_first[g->nstr] = tot;
    g->single = lam_malloc((tot + 1) * sizeof(uint32_t));
    for (size_t r = 0; r < c;) {
        size_t e = r;
        while (e < c && p[e].key == p[r].key) ++e;
        for (size_t x = r; x < e; ++x)
            for (size_t y = r; y < e; ++y)
                if (x != y) g->single[cnt[p[x].at]++] = (uint32_t)p[y].at;
        r = e;
    }
    free(cnt);
    free(p);
}

static void groups_build(groups *g, const space *v, int spin, int k)
{
    size_t m = v->count;
    dethash h;
    dethash_init(&h, m);
    g->str = lam_malloc((m + 1) * sizeof(uint64_t));
    g->of = lam_malloc((m + 1) * sizeof(uint32_t));
    g->nstr = 0;
    for (size_t i = 0; i < m; ++i) {
        det key = {spin ? v->d[i].b : v->d[i].a, 0};
        size_t s = dethash_slot(&h, key);
        if (h.idx[s] == UINT32_MAX) {
            h.key[s] = key;
            h.idx[s] = (uint32_t)g->nstr;
            g->str[g->nstr++] = key.a;
        }
        g->of[i] = h.idx[s];
    }
    dethash_free(&h);
    g->first = lam_calloc(g->nstr + 1, sizeof(size_t));
    for (size_t i = 0; i < m; ++i) ++g->first[g->of[i] + 1];
    for (size_t s = 0; s < g->nstr; ++s) g->first[s + 1] += g->first[s];
    g->member = lam_malloc((m + 1) * sizeof(uint32_t));
    size_t *fill = lam_malloc((g->nstr + 1) * sizeof(size_t));
    memcpy(fill, g->first, (g->nstr + 1) * sizeof(size_t));
    for (size_t i = 0; i < m; ++i) g->member[fill[g->of[i]]++] = (uint32_t)i;
    free(fill);
    sort_dets = v->d;
    sort_spin = spin;
    for (size_t s = 0; s < g->nstr; ++s)
        qsort(g->member + g->first[s], g->first[s + 1] - g->first[s], sizeof(uint32_t), by_other_string);
    link_singles(g, k);
}

static double groups_bytes(const groups *g, size_t m)
{
    return (double)g->nstr * (sizeof(uint64_t) + 2 * sizeof(size_t)) + (double)m * 2 * sizeof(uint32_t) +
           (double)g->single_first[g->nstr] * sizeof(uint32_t);
}

static void groups_free(groups *g)
{
    LAM_FREE_ALL(g->str, g->of, g->first, g->member, g->single_first, g->single);
}

/* Member of group s whose beta string is b, or UINT32_MAX. */
static uint32_t find_beta(const groups *ga, const det *d, size_t s, uint64_t b)
{
    size_t lo = ga->first[s], hi = ga->first[s + 1];
    while (lo < hi) {
        size_t mid = (lo + hi) / 2;
        uint64_t x = d[ga->member[mid]].b;
        if (x == b) return ga->member[mid];
        if (x < b) lo = mid + 1;
        else hi = mid;
    }
    return UINT32_MAX;
}

static int push_pair(sparse *h, budget *mem, const lam_spinfree *sf, const det *d, size_t i, uint32_t j)
{
    double v = lam_sci_element(sf, d[j].a, d[j].b, d[i].a, d[i].b);
    if (v == 0) return 1;
    return sparse_push(h, mem, j, v);
}

/* Every pair (i < j) of determinants at most two replacements apart:
 * same alpha string (scan the alpha group), same beta string (scan the
 * beta group), or one replacement in each (alpha neighbours of the alpha
 * string, then the beta string looked up in their groups).  0 when the
 * matrix would not fit the budget. */
static int sparse_build(sparse *h, const space *v, const lam_spinfree *sf, budget *mem)
{
    size_t m = v->count;
    const det *d = v->d;
    memset(h, 0, sizeof *h);
    groups ga, gb;
    groups_build(&ga, v, 0, __builtin_popcountll(d[0].a));
    groups_build(&gb, v, 1, __builtin_popcountll(d[0].b));
    double gbytes = groups_bytes(&ga, m) + groups_bytes(&gb, m);
    int ok = budget_take(mem, gbytes + (double)(m + 1) * sizeof(size_t));
    h->bytes = (double)(m + 1) * sizeof(size_t);
    h->row = lam_calloc(m + 1, sizeof(size_t));
    h->diag = v->diag;
    for (size_t i = 0; ok && i < m; ++i) {
        h->dim = i;
        h->row[i + 1] = h->row[i];
        size_t sa = ga.of[i], sb = gb.of[i];
        for (size_t k = ga.first[sa]; ok && k < ga.first[sa + 1]; ++k) {
            uint32_t j = ga.member[k];
            if (j > i && __builtin_popcountll(d[i].b ^ d[j].b) <= 4) ok = push_pair(h, mem, sf, d, i, j);
        }
        for (size_t k = gb.first[sb]; ok && k < gb.first[sb + 1]; ++k) {
            uint32_t j = gb.member[k];
            if (j > i && __builtin_popcountll(d[i].a ^ d[j].a) <= 4) ok = push_pair(h, mem, sf, d, i, j);
        }
        size_t nbs = gb.single_first[sb + 1] - gb.single_first[sb];
        for (size_t x = ga.single_first[sa]; ok && x < ga.single_first[sa + 1]; ++x) {
            size_t s2 = ga.single[x];
            size_t size = ga.first[s2 + 1] - ga.first[s2];
            if (size <= nbs) {
                for (size_t k = ga.first[s2]; ok && k < ga.first[s2 + 1]; ++k) {
                    uint32_t j = ga.member[k];
                    if (j > i && __builtin_popcountll(d[i].b ^ d[j].b) == 2) ok = push_pair(h, mem, sf, d, i, j);
                }
            } else {
                for (size_t y = gb.single_first[sb]; ok && y < gb.single_first[sb + 1]; ++y) {
                    uint32_t j = find_beta(&ga, d, s2, gb.str[gb.single[y]]);
                    if (j != UINT32_MAX && j > i) ok = push_pair(h, mem, sf, d, i, j);
                }
            }
        }
    }
    h->dim = m;
    budget_give(mem, gbytes);
    groups_free(&ga);
    groups_free(&gb);
    if (!ok) {
        budget_give(mem, h->bytes);
        sparse_free(h);
    }
    return ok;
}

/* ---- candidates: determinants outside the space ---- */

typedef struct {
    dethash h;
    det *d;
    double *val;      /* selection: largest |H_KD c_D|; pt2: sum H_KD c_D */
    size_t count, room, limit; /* room: allocated, grows up to limit */
    const space *v;
    int sum;          /* 1: accumulate signed sums (pt2), 0: keep the largest */
    int overflow;
} candidates;

static double candidate_bytes(size_t limit)
{
    size_t cap = 64;
    while (cap < 2 * limit + 2) cap *= 2;
    return dethash_bytes(cap) + (double)limit * (sizeof(det) + sizeof(double));
}

static void candidates_alloc(candidates *c, size_t room)
{
    dethash_init(&c->h, room);
    c->d = lam_realloc(c->d, lam_mul_size(room + 1, sizeof(det)));
    c->val = lam_realloc(c->val, lam_mul_size(room + 1, sizeof(double)));
    c->room = room;
}

/* Twice the room, keys re-inserted (the arrays keep their order). */
static void candidates_grow(candidates *c)
{
    size_t room = 2 * c->room < c->limit ? 2 * c->room : c->limit;
    dethash_free(&c->h);
    candidates_alloc(c, room);
    dethash_fill(&c->h, c->d, c->count);
}

static void candidates_init(candidates *c, const space *v, size_t limit, int sum)
{
    memset(c, 0, sizeof *c);
    candidates_alloc(c, limit < 4096 ? limit : 4096);
    c->limit = limit;
    c->v = v;
    c->sum = sum;
}

static void candidates_clear(candidates *c)
{
    memset(c->h.idx, 0xff, c->h.cap * sizeof(uint32_t));
    c->count = 0;
    c->overflow = 0;
}

static void candidates_free(candidates *c)
{
    dethash_free(&c->h);
    free(c->d);
    free(c->val);
}

static int candidate_emit(void *ctx, det k, double hval)
{
    candidates *c = ctx;
    if (dethash_find(&c->v->h, k) != UINT32_MAX) return 0;
    size_t s = dethash_slot(&c->h, k);
    uint32_t i = c->h.idx[s];
    if (i == UINT32_MAX) {
        if (c->count == c->room) {
            if (c->room == c->limit) {
                c->overflow = 1;
                return 1;
            }
            candidates_grow(c);
            s = dethash_slot(&c->h, k);
        }
        i = (uint32_t)c->count++;
        c->h.key[s] = k;
        c->h.idx[s] = i;
        c->d[i] = k;
        c->val[i] = 0;
    }
    if (c->sum) c->val[i] += hval;
    else if (hval > c->val[i]) c->val[i] = hval;
    return 0;
}

/* Singles and doubles of the whole space above eps; 0 on overflow. */
static int collect(candidates *c, const heatbath *hb, const space *v, const double *x, double eps)
{
    candidates_clear(c);
    for (size_t i = 0; i < v->count; ++i) {
        if (excite(hb, v->d[i], fabs(x[i]), eps, 0, candidate_emit, c)) return 0;
    }
    return 1;
}

/* ---- Epstein-Nesbet second order ---- */

typedef struct {
    candidates *c;
    double x;
} pt2_ctx;

static int pt2_emit(void *ctx, det k, double h)
{
    pt2_ctx *p = ctx;
    return candidate_emit(p->c, k, h * p->x);
}

/* E2 = sum_K (sum_D H_KD x_D)^2 / (E - H_KK) over K outside the space,
 * the sum screened at |H_KD x_D| > eps (heat-bath); eps grows fourfold
 * until the terms fit `limit`. */
static double pt2_energy(const heatbath *hb, const space *v, const double *x, double e, double *eps,
                         size_t limit)
{
    candidates c;
    candidates_init(&c, v, limit, 1);
    for (;;) {
        candidates_clear(&c);
        int ok = 1;
        for (size_t i = 0; ok && i < v->count; ++i) {
            pt2_ctx p = {&c, x[i]};
            ok = !excite(hb, v->d[i], fabs(x[i]), *eps, 1, pt2_emit, &p);
        }
        if (ok) break;
        *eps *= 4;
    }
    double e2 = 0;
    for (size_t k = 0; k < c.count; ++k) {
        double den = e - diag_energy(hb->sf, c.d[k].a, c.d[k].b);
        if (fabs(den) > 1e-10) e2 += c.val[k] * c.val[k] / den;
    }
    candidates_free(&c);
    return e2;
}

/* ---- the solver ---- */

void lam_sci_defaults(lam_sci_options *o)
{
    memset(o, 0, sizeof *o);
    o->max_dets = 100000;
    o->max_bytes = lam_machine_memory();
    o->energy_tol = 1e-6;
    o->pt2 = 1;
    o->localize = 1;
}

const char *lam_sci_stop_name(lam_sci_stop s)
{
    switch (s) {
    case LAM_SCI_BUDGET: return "budget";
    case LAM_SCI_MEMORY: return "memory";
    case LAM_SCI_ENERGY: return "energy";
    case LAM_SCI_SATURATED: return "saturated";
    default: return "complete";
    }
}

/* Rayleigh quotient of x computed afresh from the matrix (long double sums),
 * the number that is reported as the bound. */
static double rayleigh(const sparse *h, const double *x, double *work)
{
    sparse_apply((void *)h, x, work);
    long double xy = 0, xx = 0;
    for (size_t i = 0; i < h->dim; ++i) {
        xy += (long double)x[i] * work[i];
        xx += (long double)x[i] * x[i];
    }
    return (double)(xy / xx);
}

static int diagonalize(const sparse *h, int highest, double *x, double *resid, lam_error *err)
{
    lam_eigen_problem p;
    lam_eigen_problem_init(&p, h->dim, sparse_apply, (void *)h, h->diag);
    p.tol = 1e-7;
    p.max_iter = 300;
    p.highest = highest;
    lam_eigen_result r;
    int was = lam_progress_enabled();
    lam_progress_set(0); /* one line per selection round, not per product */
    int rc = lam_eigen_extreme(&p, &r, x, err);
    lam_progress_set(was);
    *resid = r.residual;
    return rc;
}

/* New determinants of a round: the space about triples, so that few
 * diagonalizations are spent on small spaces. */
static size_t grow_target(size_t m, size_t budget_left)
{
    size_t t = 2 * (m < 100 ? 100 : m);
    /* a last round of a few determinants would cost a whole
     * diagonalization for little: take them now (not more: selecting
     * many at once from a small space's vector chooses worse) */
    if (budget_left - (t < budget_left ? t : budget_left) < t / 8) return budget_left;
    return t;
}

/* One selection run of at most max_dets determinants from
 * lam_sci_start's determinant. */
static int select_run(const lam_spinfree *sf, int na, int nb, const lam_sci_options *o, size_t max_dets,
                      budget *mem, lam_sci_result *res, lam_error *err)
{
    double t0 = lam_seconds();
    heatbath hb;
    memset(&hb, 0, sizeof hb);
    if (heatbath_build(&hb, sf, mem, err)) return err->code;
    const char *label = o->label ? o->label : "selected CI";

    /* room for the whole budget up front: vectors and the space's arrays */
    double vec_bytes = (double)max_dets * sizeof(double) * (2 * 8 + 4 + 3);
    double held = space_bytes(max_dets) + vec_bytes;
    if (!budget_take(mem, held)) {
        /* a smaller budget that fits, rather than nothing */
        double per = space_bytes(1024) / 1024 + sizeof(double) * 23;
        double room = (mem->limit - mem->used) / per / 2; /* half for the matrix */
        held = space_bytes((size_t)room) + (room < 2 ? 0 : (double)(size_t)room * sizeof(double) * 23);
        if (room < 2 || !budget_take(mem, held)) {
            heatbath_free(&hb);
            budget_give(mem, hb.list_bytes);
            return lam_error_set(err, LAM_EX_MEMORY,
                                 "selected CI: no room for a variational space within --max-memory");
        }
        max_dets = (size_t)room;
    }
    space v;
    space_init(&v, max_dets);
    double *x = lam_malloc(lam_mul_size(max_dets, sizeof(double)));
    double *xprev = lam_malloc(lam_mul_size(max_dets, sizeof(double)));
    double *work = lam_malloc(lam_mul_size(max_dets, sizeof(double)));

    uint64_t a0, b0;
    lam_sci_start(sf, na, nb, o->highest, &a0, &b0);
    space_add(&v, sf, (det){a0, b0});
    if (na == nb && max_dets > 1) space_add(&v, sf, (det){b0, a0});

    /* candidates may take what is left after room for a matrix of ~100
     * elements a determinant */
    double left = mem->limit - mem->used - (double)max_dets * 100 * 12;
    size_t climit = 64;
    while (climit < ((size_t)1 << 31) && candidate_bytes(2 * climit) < left / 2) climit *= 2;
    double cbytes = candidate_bytes(climit);
    candidates cand;
    lam_weighted *rank = NULL;
    int rc = 0;
    if (!budget_take(mem, cbytes)) {
        rc = lam_error_set(err, LAM_EX_MEMORY, "selected CI: no room for candidate determinants within --max-memory");
        goto out;
    }
    candidates_init(&cand, &v, climit, 0);

    sparse h;
    double value = 0, resid = 0, eps = 1.0;
    size_t accepted = 0;
    lam_sci_stop stop = LAM_SCI_BUDGET;
    for (int iter = 0;; ++iter) {
        size_t before = accepted;
        if (!sparse_build(&h, &v, sf, mem)) {
            if (iter == 0) {
                rc = lam_error_set(err, LAM_EX_MEMORY, "selected CI: the first space does not fit --max-memory");
                break;
            }
            space_truncate(&v, before);
            stop = LAM_SCI_MEMORY;
            break;
        }
        double dv;
        if ((rc = diagonalize(&h, o->highest, x, &dv, err))) {
            budget_give(mem, h.bytes);
            sparse_free(&h);
            break;
        }
        double rq = rayleigh(&h, x, work);
        budget_give(mem, h.bytes);
        sparse_free(&h);
        double change = iter ? rq - value : NAN;
        value = rq;
        resid = dv;
        accepted = v.count;
        memcpy(xprev, x, v.count * sizeof(double));
        res->iterations += 1;
        lam_progress("%s: %zu determinants, %.10f Eh (change %.2e), %.1f s", label, v.count, value, change,
                     lam_seconds() - t0);
        if (iter && fabs(change) < o->energy_tol) {
            stop = LAM_SCI_ENERGY;
            break;
        }
        if (v.count >= max_dets) {
            stop = v.count >= lam_ci_sector_dim(sf->n, na, nb) ? LAM_SCI_COMPLETE : LAM_SCI_BUDGET;
            break;
        }
        /* heat-bath selection: the largest |H_KD x_D| first */
        size_t target = grow_target(v.count, max_dets - v.count);
        int raised = 0;
        for (;;) {
            int ok = collect(&cand, &hb, &v, x, eps);
            if (!ok) {
                eps *= 2;
                raised = 1;
                continue;
            }
            if (cand.count >= target || eps < 1e-12 || raised) break;
            eps /= 4;
        }
        if (cand.count == 0) {
            /* raised: the candidates did not fit, not that none are left */
            stop = raised ? LAM_SCI_MEMORY : LAM_SCI_SATURATED;
            break;
        }
        rank = lam_realloc(rank, lam_mul_size(cand.count, sizeof *rank));
        for (size_t k = 0; k < cand.count; ++k) rank[k] = (lam_weighted){cand.val[k], k};
        lam_sort_heaviest_first(rank, cand.count);
        size_t add = cand.count < target ? cand.count : target;
        for (size_t k = 0; k < add; ++k) space_add(&v, sf, cand.d[rank[k].at]);
    }
    candidates_free(&cand);
    if (rc == 0) {
        memcpy(x, xprev, accepted * sizeof(double));
        res->value = value;
        res->residual = resid;
        res->dets = accepted;
        res->stop = stop;
        res->pt2 = 0;
        res->pt2_eps = NAN;
        if (o->pt2 && stop != LAM_SCI_COMPLETE) {
            double eps2 = eps / 10;
            res->pt2 = pt2_energy(&hb, &v, x, value, &eps2, climit); /* in the room the selection had */
            res->pt2_eps = eps2;
        }
    }
    budget_give(mem, cbytes);
out:
    free(rank);
    budget_give(mem, held);
    LAM_FREE_ALL(x, xprev, work);
    space_free(&v);
    heatbath_free(&hb);
    budget_give(mem, hb.list_bytes);
    return rc;
}

/* sf in Edmiston-Ruedenberg orbitals (largest sum of (ii|ii)), or NULL
 * when they do not fit the budget.  The highest state crowds electrons
 * into pairs on compact orbitals (ionic configurations), which are few
 * determinants in localized orbitals and very many in canonical ones.
 * *rot is left NULL when they do not fit; fails when the optimizer does. */
static int localized_orbitals(const lam_spinfree *sf, budget *mem, lam_spinfree **rot, lam_error *err)
{
    int n = sf->n;
    double n4 = (double)n * n * n * n * sizeof(double);
    double need = (double)lam_spinfree_bytes(n) + 4 * n4; /* the result and the optimizer's work */
    *rot = NULL;
    if (!budget_take(mem, need)) return 0;
    double *u0 = lam_calloc((size_t)n * n, sizeof(double));
    double *u = lam_malloc((size_t)n * n * sizeof(double));
    for (int p = 0; p < n; ++p) u0[p * n + p] = 1;
    lam_rotate_options ro;
    lam_rotate_default_options(&ro);
    ro.objective = LAM_ROTATE_ER;
    ro.starts = 0;
    lam_rotate_result rr;
    lam_spinfree *out = lam_spinfree_new(n);
    int rc = lam_rotate_optimize(sf, u0, &ro, u, out, &rr, err);
    out->e0 = sf->e0;
    out->electrons = sf->electrons;
    out->ms2 = sf->ms2;
    free(u0);
    free(u);
    budget_give(mem, 4 * n4);
    if (rc) lam_spinfree_free(out);
    else *rot = out;
    return rc;
}

int lam_sci_solve(const lam_spinfree *sf, int na, int nb, const lam_sci_options *o, lam_sci_result *res,
                  lam_error *err)
{
    double t0 = lam_seconds();
    int n = sf->n;
    memset(res, 0, sizeof *res);
    if (n > 64) return lam_error_set(err, LAM_EX_DATA, "selected CI handles at most 64 orbitals, not %d", n);
    if (na < 0 || nb < 0 || na > n || nb > n)
        return lam_error_set(err, LAM_EX_USAGE,
                             "sector (%d,%d) does not exist: %d orbitals hold at most %d electrons of each spin",
                             na, nb, n, n);
    if (o->max_dets < 1)
        return lam_error_set(err, LAM_EX_USAGE, "selected CI: the determinant budget must be at least 1");
    if (!(o->max_bytes > 0))
        return lam_error_set(err, LAM_EX_USAGE, "selected CI: the memory budget must be positive");
    size_t full = lam_ci_sector_dim(n, na, nb);
    size_t max_dets = o->max_dets < full ? o->max_dets : full;
    if (max_dets > UINT32_MAX - 1) max_dets = UINT32_MAX - 1;
    budget mem = {o->max_bytes, (double)lam_spinfree_bytes(n), 0};

    /* The highest end in localized orbitals.  The rotation keeps the
     * spectrum (it is unitary within each sector), so a Rayleigh quotient
     * in them bounds the same eigenvalue, up to the rounding of the
     * integral transformation.  It needs the 8-fold symmetry of real
     * integrals, which the rotation imposes. */
    lam_spinfree *rot = NULL;
    if (o->highest && o->localize && max_dets < full && n >= 2 &&
        lam_spinfree_real_symmetry_error(sf) <= 1e-10) {
        lam_progress("%s: Edmiston-Ruedenberg localization of %d orbitals", o->label ? o->label : "selected CI", n);
        if (localized_orbitals(sf, &mem, &rot, err)) return err->code;
        /* kept only when its start determinant is higher: localized
         * orbitals help where the top is ionic (molecules), not for
         * every operator */
        uint64_t a, b, la, lb;
        lam_sci_start(sf, na, nb, 1, &a, &b);
        if (rot) lam_sci_start(rot, na, nb, 1, &la, &lb);
        if (rot && !(diag_energy(rot, la, lb) > diag_energy(sf, a, b))) {
            lam_spinfree_free(rot);
            budget_give(&mem, (double)lam_spinfree_bytes(n));
            rot = NULL;
        }
    }
    int rc = select_run(rot ? rot : sf, na, nb, o, max_dets, &mem, res, err);
    res->rotated = rot != NULL;
    lam_spinfree_free(rot);
    if (rc) return rc;
    res->bytes = mem.peak;
    res->seconds = lam_seconds() - t0;
    lam_progress("%s: %zu determinants, bound %.10f Eh, with second order %.10f Eh (estimate), %.1f s",
                 o->label ? o->label : "selected CI", res->dets, res->value, res->value + res->pt2,
                 res->seconds);
    return 0;
}
