/* group.c - anticommuting (or commuting) grouping of Pauli terms.
 *
 * Terms are processed by decreasing |c|.
 *
 * Read back through the inverse Jordan-Wigner map, every Pauli string is
 * (up to phase) a product of Majorana operators gamma_A over a set A of the
 * 2n Majorana indices, and gamma_A, gamma_B anticommute exactly when
 * |A||B| + |A n B| is odd.  The map is a linear bijection that keeps
 * commutation, so all of this is exact whatever encoding wrote the stream;
 * it is fast when the sets are small, as for Jordan-Wigner molecules.
 *
 * The test.  A group keeps, per Majorana index i, a bit column over its
 * members (bit m: member m holds i) and one column of degree parities.  A
 * term anticommutes with every member exactly when the XOR of the columns
 * of its indices (and the parity column when its degree is odd) is all
 * ones: four or five word operations for a whole two-body group.  The words
 * of the first 64 members of all groups sit in one array per index, which
 * stays in cache; longer groups finish from their own columns.
 *
 * The index.  When |A||B| is even (molecular Hamiltonians are sums of even
 * monomials), anticommuting sets must intersect.  So a term can only join
 * a group whose first two members a1, a2 both meet its set: the group is
 * filed under every pair (i, j), i in a1, j in a2, and a term scans only
 * the lists of the pairs drawn from its own set.  Groups of one member are
 * filed by single index; groups with an odd anchor also go on a list that
 * odd terms scan; anchors with many indices go on a list every term scans.
 */
#include "group.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "norm.h"
#include "util.h"

/* Anchors with more Majorana indices than this are not filed by index. */
#define DEG_MAX 16
#define PAIR_ENTRIES_MAX 64
/* Members 0..ANCHORS-1 of a group file it in the index; they stay put
 * during refinement. */
#define ANCHORS 2
/* Pair lists are kept while (2 * 64 * words)^2 lists stay this small. */
#define PAIR_MAJORANAS_MAX 1024
/* A share below this fraction of its term's coefficient is folded into
 * the term's largest share. */
#define SPLIT_DROP 1e-10
/* A term joins at most this many groups when split.  Shares given to one
 * term block lighter terms from those groups, so the split is tried with
 * each of these limits and the best kept (measured: no single limit wins on
 * every test molecule). */
#define SPLIT_GROUPS_MAX 32
static const int split_limits[] = {1, 2, 4, SPLIT_GROUPS_MAX};
#define NONE UINT32_MAX

typedef struct {
    uint32_t *v;
    uint32_t n, cap;
} u32vec;

static void u32_push(u32vec *a, uint32_t x)
{
    if (a->n == a->cap) {
        a->cap = a->cap ? 2 * a->cap : 4;
        a->v = lam_realloc(a->v, lam_mul_size(a->cap, sizeof *a->v));
    }
    a->v[a->n++] = x;
}

enum filing { FILED_NONE, FILED_SINGLE, FILED_PAIRS, FILED_WIDE };

typedef struct {
    uint32_t *ids;  /* term ranks; positions 0 and 1 are the anchors */
    uint64_t *bits; /* the members' strings, 2 nw words each, same order */
    uint32_t size, cap;
    /* Majorana columns: bit m of column i says member m holds Majorana
     * index i; column M holds the parity of each member's degree.  The
     * (anti)commutation of P with every member is then the XOR of the
     * columns of P's indices: a few word operations for the whole group. */
    uint64_t *cols;
    uint32_t cw;    /* words per column */
    double weight;  /* sum of c^2 */
    uint8_t filing;
    uint8_t odd;    /* an anchor of odd Majorana degree */
} group;

typedef struct {
    int nw, want_anti;
    size_t nterms;
    const uint64_t *tbits; /* term strings by rank (|c| decreasing) */
    const double *tc;
    uint32_t *home, *pos;
    group *g;
    uint32_t ng, gcap;
    /* index (anticommuting mode) */
    int use_index, use_pairs, M;
    int freeze_filing; /* split shares join member lists but not the index */
    int near;          /* queries look for swap partners (near_admits) */
    u32vec *single, *pair, wide, odd;
    uint32_t *stamp, now;
    /* Prefix columns, group-major per Majorana index: bit m of
     * pcol[i][g] is bit m of column i of group g, for its first 64
     * members; with gsize, the hot data a query touches. */
    uint64_t **pcol;
    uint32_t *gsize;
    u32vec cand;  /* groups whose first 64 members admit the term */
    int *pidx, pdeg; /* Majorana indices of the term being placed */
    int *pidx_member;
    u32vec found; /* groups that admit the term */
} engine;

/* ---------------------------------------------------------------- bits */

static inline int anticommute(int nw, const uint64_t *p, const uint64_t *q)
{
    if (nw == 1) return __builtin_parityll((p[0] & q[1]) ^ (p[1] & q[0]));
    uint64_t acc = 0;
    for (int w = 0; w < nw; ++w) acc ^= (p[w] & q[nw + w]) ^ (p[nw + w] & q[w]);
    return __builtin_parityll(acc);
}

/* Majorana indices of the string (inverse Jordan-Wigner): qubit j gives
 * 2j when z_j ^ x_j ^ S_j, and 2j+1 when z_j ^ S_j, with S_j the parity of
 * the x bits above j.  Fills at most max indices; returns the degree. */
static int majorana_set(int nw, const uint64_t *xz, int *idx, int max)
{
    int n = 0;
    uint64_t carry = 0; /* parity of the x bits in higher words, broadcast */
    for (int w = nw - 1; w >= 0; --w) {
        uint64_t x = xz[w], z = xz[nw + w];
        uint64_t s = x; /* bit j: parity of x bits j..63 of this word */
        s ^= s >> 1;
        s ^= s >> 2;
        s ^= s >> 4;
        s ^= s >> 8;
        s ^= s >> 16;
        s ^= s >> 32;
        uint64_t above = (s >> 1) ^ carry;
        uint64_t even = z ^ x ^ above, oddm = z ^ above;
        for (uint64_t m = even; m; m &= m - 1) {
            if (n < max) idx[n] = 2 * (64 * w + __builtin_ctzll(m));
            ++n;
        }
        for (uint64_t m = oddm; m; m &= m - 1) {
            if (n < max) idx[n] = 2 * (64 * w + __builtin_ctzll(m)) + 1;
            ++n;
        }
        carry = ((s ^ carry) & 1) ? ~(uint64_t)0 : 0;
    }
    return n;
}

/* ---------------------------------------------------------------- groups */

static const uint64_t *term_bits(const engine *e, uint32_t t)
{
    return e->tbits + (size_t)t * 2 * (size_t)e->nw;
}

static void prepare_term(engine *e, const uint64_t *p)
{
    e->pdeg = majorana_set(e->nw, p, e->pidx, e->M);
}

/* Members 0..63 that fail against the prepared term (a bit each), from
 * the prefix columns: for most groups this is the whole test, in a few
 * loads that stay in cache. */
static uint64_t prefix_mismatch(const engine *e, uint32_t gi)
{
    uint32_t size = e->gsize[gi];
    uint64_t acc = 0;
    for (int k = 0; k < e->pdeg; ++k) acc ^= e->pcol[e->pidx[k]][gi];
    if (e->pdeg & 1) acc ^= e->pcol[e->M][gi];
    uint64_t mask = size >= 64 ? ~(uint64_t)0 : (((uint64_t)1 << size) - 1);
    return (acc ^ (e->want_anti ? mask : 0)) & mask;
}

static int prefix_admits(const engine *e, uint32_t gi)
{
    return e->gsize[gi] > 0 && prefix_mismatch(e, gi) == 0;
}

/* A group of at most 64 where the term fails against exactly one member,
 * not an anchor: a partner for a swap. */
static int near_admits(const engine *e, uint32_t gi)
{
    uint32_t size = e->gsize[gi];
    if (size <= ANCHORS || size > 64) return 0;
    uint64_t miss = prefix_mismatch(e, gi);
    return miss && (miss & (miss - 1)) == 0 && __builtin_ctzll(miss) >= ANCHORS;
}

/* The members from 64 on, from the group's own columns. */
static int rest_admits(engine *e, const group *g)
{
    for (uint32_t w = 1; 64 * w < g->size; ++w) {
        uint64_t acc = 0;
        for (int k = 0; k < e->pdeg; ++k) acc ^= g->cols[(size_t)e->pidx[k] * g->cw + w];
        if (e->pdeg & 1) acc ^= g->cols[(size_t)e->M * g->cw + w];
        uint32_t bits = g->size - 64 * w >= 64 ? 64 : g->size - 64 * w;
        uint64_t mask = bits == 64 ? ~(uint64_t)0 : (((uint64_t)1 << bits) - 1);
        if ((acc & mask) != (e->want_anti ? mask : 0)) return 0;
    }
    return 1;
}

static void set_bit(uint64_t *w, uint32_t b, int on)
{
    uint64_t bit = (uint64_t)1 << (b % 64);
    w[b / 64] = on ? (w[b / 64] | bit) : (w[b / 64] & ~bit);
}

/* Column c, member m of group gi, in both the group's columns and (for
 * m < 64) the prefix columns. */
static void set_member_bit(engine *e, uint32_t gi, int c, uint32_t m, int on)
{
    group *g = &e->g[gi];
    set_bit(g->cols + (size_t)c * g->cw, m, on);
    if (m < 64) set_bit(&e->pcol[c][gi], m, on);
}

static int member_bit(const group *g, int c, uint32_t m)
{
    return (int)((g->cols[(size_t)c * g->cw + m / 64] >> (m % 64)) & 1);
}

static void grow_columns(engine *e, group *g)
{
    uint32_t cw = g->cw ? 2 * g->cw : 1;
    size_t ncol = (size_t)e->M + 1;
    uint64_t *cols = lam_calloc(lam_mul_size(ncol, cw), sizeof *cols);
    for (size_t i = 0; g->cw && i < ncol; ++i)
        memcpy(cols + i * cw, g->cols + i * g->cw, g->cw * sizeof *cols);
    free(g->cols);
    g->cols = cols;
    g->cw = cw;
}

static void put_columns(engine *e, uint32_t gi, uint32_t m, const uint64_t *bits)
{
    int d = majorana_set(e->nw, bits, e->pidx_member, e->M);
    for (int k = 0; k < d; ++k) set_member_bit(e, gi, e->pidx_member[k], m, 1);
    set_member_bit(e, gi, e->M, m, d & 1);
}

static void file_single(engine *e, uint32_t gi)
{
    group *g = &e->g[gi];
    int idx[DEG_MAX];
    int d = majorana_set(e->nw, g->bits, idx, DEG_MAX);
    g->odd = (uint8_t)(d & 1);
    if (g->odd) u32_push(&e->odd, gi);
    if (d > DEG_MAX) {
        g->filing = FILED_WIDE;
        u32_push(&e->wide, gi);
        return;
    }
    g->filing = FILED_SINGLE;
    for (int k = 0; k < d; ++k) u32_push(&e->single[idx[k]], gi);
}

/* A group of two leaves the single lists for the pair lists of (i, j),
 * i in its first member, j in its second. */
static void file_pairs(engine *e, uint32_t gi)
{
    group *g = &e->g[gi];
    if (g->filing != FILED_SINGLE || !e->use_pairs) return;
    size_t stride = 2 * (size_t)e->nw;
    int a[DEG_MAX], b[DEG_MAX];
    int da = majorana_set(e->nw, g->bits, a, DEG_MAX);
    int db = majorana_set(e->nw, g->bits + stride, b, DEG_MAX);
    if ((db & 1) && !g->odd) {
        g->odd = 1;
        u32_push(&e->odd, gi);
    }
    if (db > DEG_MAX || da * db > PAIR_ENTRIES_MAX) {
        g->filing = FILED_WIDE;
        u32_push(&e->wide, gi);
        return;
    }
    g->filing = FILED_PAIRS;
    for (int i = 0; i < da; ++i)
        for (int j = 0; j < db; ++j)
            u32_push(&e->pair[(size_t)a[i] * (size_t)e->M + (size_t)b[j]], gi);
}

static void add_member(engine *e, uint32_t gi, uint32_t t)
{
    group *g = &e->g[gi];
    size_t stride = 2 * (size_t)e->nw;
    if (g->size == g->cap) {
        g->cap = g->cap ? 2 * g->cap : 4;
        g->ids = lam_realloc(g->ids, lam_mul_size(g->cap, sizeof *g->ids));
        g->bits = lam_realloc(g->bits, lam_mul_size(g->cap, stride * sizeof(uint64_t)));
    }
    memcpy(g->bits + g->size * stride, term_bits(e, t), stride * sizeof(uint64_t));
    if (g->size == 64 * g->cw) grow_columns(e, g);
    put_columns(e, gi, g->size, term_bits(e, t));
    g->ids[g->size] = t;
    e->home[t] = gi;
    e->pos[t] = g->size;
    g->size++;
    e->gsize[gi] = g->size;
    g->weight += e->tc[t] * e->tc[t];
    if (e->use_index && !e->freeze_filing && g->size == ANCHORS) file_pairs(e, gi);
}

static uint32_t new_group(engine *e, uint32_t t)
{
    if (e->ng == e->gcap) {
        uint32_t cap = e->gcap ? 2 * e->gcap : 1024;
        e->g = lam_realloc(e->g, lam_mul_size(cap, sizeof *e->g));
        e->stamp = lam_realloc(e->stamp, lam_mul_size(cap, sizeof *e->stamp));
        e->gsize = lam_realloc(e->gsize, lam_mul_size(cap, sizeof *e->gsize));
        memset(e->g + e->gcap, 0, (cap - e->gcap) * sizeof *e->g);
        memset(e->stamp + e->gcap, 0, (cap - e->gcap) * sizeof *e->stamp);
        memset(e->gsize + e->gcap, 0, (cap - e->gcap) * sizeof *e->gsize);
        for (int c = 0; c <= e->M; ++c) {
            e->pcol[c] = lam_realloc(e->pcol[c], lam_mul_size(cap, sizeof(uint64_t)));
            memset(e->pcol[c] + e->gcap, 0, (cap - e->gcap) * sizeof(uint64_t));
        }
        e->gcap = cap;
    }
    uint32_t gi = e->ng++;
    add_member(e, gi, t);
    if (e->use_index) file_single(e, gi);
    return gi;
}

/* Remove a member that is not an anchor of a group of two or more. */
static void remove_member(engine *e, uint32_t t)
{
    uint32_t gi = e->home[t], p = e->pos[t];
    group *g = &e->g[gi];
    size_t stride = 2 * (size_t)e->nw;
    uint32_t last = g->size - 1;
    if (p != last) {
        uint32_t moved = g->ids[last];
        g->ids[p] = moved;
        memcpy(g->bits + p * stride, g->bits + last * stride, stride * sizeof(uint64_t));
        for (int c = 0; c <= e->M; ++c) set_member_bit(e, gi, c, p, member_bit(g, c, last));
        e->pos[moved] = p;
    }
    for (int c = 0; c <= e->M; ++c) set_member_bit(e, gi, c, last, 0);
    g->size--;
    e->gsize[gi] = g->size;
    g->weight -= e->tc[t] * e->tc[t];
    if (g->size == 0 || g->weight < 0) g->weight = 0;
    e->home[t] = NONE;
}

static void recompute_weights(engine *e)
{
    for (uint32_t gi = 0; gi < e->ng; ++gi) {
        group *g = &e->g[gi];
        double w = 0;
        for (uint32_t m = 0; m < g->size; ++m) w += e->tc[g->ids[m]] * e->tc[g->ids[m]];
        g->weight = w;
    }
}

/* ---------------------------------------------------------------- queries */

static void consider(engine *e, uint32_t gi, uint32_t exclude)
{
    if (e->stamp[gi] == e->now) return;
    e->stamp[gi] = e->now;
    if (gi != exclude && (e->near ? near_admits(e, gi) : prefix_admits(e, gi)))
        u32_push(&e->cand, gi);
}

/* Single lists drop groups that moved on to pair lists or died. */
static void scan_single(engine *e, u32vec *list, uint32_t exclude)
{
    uint32_t keep = 0;
    for (uint32_t k = 0; k < list->n; ++k) {
        uint32_t gi = list->v[k];
        if (e->gsize[gi] == 0 || e->g[gi].filing != FILED_SINGLE) continue;
        list->v[keep++] = gi;
        consider(e, gi, exclude);
    }
    list->n = keep;
}

/* Groups come in no useful order, so each costs cache misses; fetching the
 * words of a group a few entries ahead overlaps them. */
#define PREFETCH_AHEAD 8
static void prefetch_group(const engine *e, uint32_t gi)
{
    __builtin_prefetch(&e->stamp[gi]);
    __builtin_prefetch(&e->gsize[gi]);
    for (int k = 0; k < e->pdeg && k < 8; ++k) __builtin_prefetch(&e->pcol[e->pidx[k]][gi]);
    __builtin_prefetch(&e->pcol[e->M][gi]);
}

static void scan_list(engine *e, const u32vec *list, uint32_t exclude)
{
    uint32_t n = list->n;
    for (uint32_t k = 0; k < n && k < PREFETCH_AHEAD; ++k) prefetch_group(e, list->v[k]);
    for (uint32_t k = 0; k < n; ++k) {
        if (k + PREFETCH_AHEAD < n) prefetch_group(e, list->v[k + PREFETCH_AHEAD]);
        consider(e, list->v[k], exclude);
    }
}

/* Every group (other than exclude) whose first 64 members admit the
 * prepared term, into e->cand. */
static void query(engine *e, uint32_t exclude)
{
    e->cand.n = 0;
    if (++e->now == 0) {
        memset(e->stamp, 0, e->gcap * sizeof *e->stamp);
        e->now = 1;
    }
    const int *idx = e->pidx;
    int d = e->pdeg;
    if (!e->use_index || d > DEG_MAX || (uint32_t)(d * d) > e->ng) {
        for (uint32_t gi = 0; gi < e->ng; ++gi) consider(e, gi, exclude);
        return;
    }
    for (int i = 0; i < d; ++i) scan_single(e, &e->single[idx[i]], exclude);
    if (e->use_pairs)
        for (int i = 0; i < d; ++i)
            for (int j = 0; j < d; ++j)
                scan_list(e, &e->pair[(size_t)idx[i] * (size_t)e->M + (size_t)idx[j]], exclude);
    scan_list(e, &e->wide, exclude);
    if (d & 1) scan_list(e, &e->odd, exclude);
}

/* Candidate order: heaviest first (ties: oldest), or oldest first. */
static const engine *sort_engine;
static int by_weight_desc(const void *pa, const void *pb)
{
    uint32_t a = *(const uint32_t *)pa, b = *(const uint32_t *)pb;
    double wa = sort_engine->g[a].weight, wb = sort_engine->g[b].weight;
    if (wa != wb) return wa > wb ? -1 : 1;
    return (a > b) - (a < b);
}

/* Does candidate a come before b: heavier (ties: older), or older. */
static int precedes(const engine *e, uint32_t a, uint32_t b, lam_group_method order)
{
    if (b == NONE) return 1;
    if (order == LAM_GROUP_BEST && e->g[a].weight != e->g[b].weight)
        return e->g[a].weight > e->g[b].weight;
    return a < b;
}

/* The first candidate, in the order of the method, that admits p; only a
 * candidate that would beat the best so far is tested in full. */
static uint32_t first_admitting(engine *e, lam_group_method order)
{
    uint32_t best = NONE;
    for (uint32_t k = 0; k < e->cand.n; ++k) {
        uint32_t gi = e->cand.v[k];
        if (precedes(e, gi, best, order) && rest_admits(e, &e->g[gi])) best = gi;
    }
    return best;
}

/* Every candidate that admits p, heaviest first, into e->found. */
static void all_admitting(engine *e)
{
    sort_engine = e;
    if (e->cand.n > 1) qsort(e->cand.v, e->cand.n, sizeof *e->cand.v, by_weight_desc);
    e->found.n = 0;
    for (uint32_t k = 0; k < e->cand.n; ++k)
        if (rest_admits(e, &e->g[e->cand.v[k]])) u32_push(&e->found, e->cand.v[k]);
}

/* ---------------------------------------------------------------- phases */

static double grouped_norm(const engine *e)
{
    double sum = 0;
    for (uint32_t gi = 0; gi < e->ng; ++gi) sum += sqrt(e->g[gi].weight);
    return sum;
}

static void progress_every(double *next, const char *what, size_t done, size_t total)
{
    if (!lam_progress_enabled()) return;
    double now = lam_seconds();
    if (now < *next) return;
    *next = now + 1.0;
    lam_progress("%s: %zu of %zu terms", what, done, total);
}

static void greedy(engine *e, lam_group_method method)
{
    double next = lam_seconds() + 1.0;
    for (size_t t = 0; t < e->nterms; ++t) {
        const uint64_t *p = term_bits(e, (uint32_t)t);
        prepare_term(e, p);
        query(e, NONE);
        uint32_t gi = first_admitting(e, method);
        if (gi == NONE)
            new_group(e, (uint32_t)t);
        else
            add_member(e, gi, (uint32_t)t);
        if ((t & 4095) == 0) progress_every(&next, "grouping", t, e->nterms);
    }
}

/* Change of sum_g sqrt(w_g) when c^2 moves from group a to group b. */
static double move_gain(double wa, double wb, double c2)
{
    double rest = wa - c2 > 0 ? wa - c2 : 0;
    return (sqrt(wa) - sqrt(rest)) - (sqrt(wb + c2) - sqrt(wb));
}

/* Exchange t (in group a) with a member u of another group b that is the
 * only one t fails against, when u fits in a without t and the exchange
 * lowers lambda_grouped; the best such exchange.  Returns the fall. */
static double try_swap(engine *e, uint32_t t)
{
    uint32_t a = e->home[t];
    if (e->pos[t] < ANCHORS || e->gsize[a] > 64) return 0;
    prepare_term(e, term_bits(e, t));
    e->near = 1;
    query(e, a);
    e->near = 0;
    double wa = e->g[a].weight, ct2 = e->tc[t] * e->tc[t], best = 0;
    uint32_t best_u = NONE;
    uint64_t t_bit = (uint64_t)1 << e->pos[t];
    for (uint32_t k = 0; k < e->cand.n; ++k) {
        uint32_t b = e->cand.v[k];
        prepare_term(e, term_bits(e, t));
        uint32_t u = e->g[b].ids[__builtin_ctzll(prefix_mismatch(e, b))];
        double wb = e->g[b].weight, cu2 = e->tc[u] * e->tc[u];
        double gain = sqrt(wa) + sqrt(wb) - sqrt(fmax(wa - ct2 + cu2, 0)) -
                      sqrt(fmax(wb - cu2 + ct2, 0));
        if (gain <= best || gain <= 1e-14 * (sqrt(wa) + sqrt(wb))) continue;
        prepare_term(e, term_bits(e, u));
        if ((prefix_mismatch(e, a) & ~t_bit) != 0) continue;
        best = gain;
        best_u = u;
    }
    if (best_u == NONE) return 0;
    uint32_t b = e->home[best_u];
    remove_member(e, t);
    remove_member(e, best_u);
    add_member(e, b, t);
    add_member(e, a, best_u);
    return best;
}

/* One pass of moves (and swaps where no move helps); returns the fall of
 * lambda_grouped. */
static double refine_pass(engine *e)
{
    double fall = 0, next = lam_seconds() + 1.0;
    for (size_t t = 0; t < e->nterms; ++t) {
        if ((t & 4095) == 0) progress_every(&next, "refining", t, e->nterms);
        uint32_t a = e->home[t];
        group *ga = &e->g[a];
        if (ga->size >= 2 && e->pos[t] < ANCHORS) continue; /* anchors stay */
        const uint64_t *p = term_bits(e, (uint32_t)t);
        prepare_term(e, p);
        query(e, a);
        uint32_t b = first_admitting(e, LAM_GROUP_BEST);
        if (b == NONE) {
            fall += try_swap(e, (uint32_t)t);
            continue;
        }
        double c2 = e->tc[t] * e->tc[t];
        double gain = move_gain(ga->weight, e->g[b].weight, c2);
        /* strict improvement, above rounding, so passes cannot cycle */
        if (gain <= 1e-14 * (sqrt(ga->weight) + sqrt(e->g[b].weight))) continue;
        remove_member(e, (uint32_t)t);
        add_member(e, b, (uint32_t)t);
        fall += gain;
    }
    recompute_weights(e);
    return fall;
}

/* ---------------------------------------------------------------- split */

typedef struct {
    size_t *start;    /* memberships of term t: start[t] .. start[t+1] */
    uint32_t *gid;
    double *share;
    size_t count;
} shares;

/* Home group first, then every group that admits the term next to its core
 * and the extras given to it before (so each group stays anticommuting). */
static void collect_memberships(engine *e, int split, int limit, shares *sh)
{
    e->freeze_filing = 1;
    size_t cap = e->nterms + 16;
    sh->start = lam_malloc(lam_mul_size(e->nterms + 1, sizeof *sh->start));
    sh->gid = lam_malloc(lam_mul_size(cap, sizeof *sh->gid));
    sh->count = 0;
    double next = lam_seconds() + 1.0;
    for (size_t t = 0; t < e->nterms; ++t) {
        sh->start[t] = sh->count;
        size_t need = sh->count + 1 + (split ? (size_t)limit : 0);
        if (need > cap) {
            while (cap < need) cap = lam_mul_size(cap, 2);
            sh->gid = lam_realloc(sh->gid, lam_mul_size(cap, sizeof *sh->gid));
        }
        uint32_t home = e->home[t];
        sh->gid[sh->count++] = home;
        if (!split || e->tc[t] == 0) continue;
        const uint64_t *p = term_bits(e, (uint32_t)t);
        prepare_term(e, p);
        query(e, home);
        all_admitting(e);
        int taken = 0;
        for (uint32_t k = 0; k < e->found.n && taken < limit; ++k) {
            uint32_t gi = e->found.v[k];
            /* an extra joins the member list so later terms are tested
             * against it; weights stay those of the cores */
            double w = e->g[gi].weight;
            uint32_t keep_home = e->home[t], keep_pos = e->pos[t];
            add_member(e, gi, (uint32_t)t);
            e->g[gi].weight = w;
            e->home[t] = keep_home;
            e->pos[t] = keep_pos;
            sh->gid[sh->count++] = gi;
            ++taken;
        }
        if ((t & 4095) == 0) progress_every(&next, "splitting", t, e->nterms);
    }
    sh->start[e->nterms] = sh->count;
    e->freeze_filing = 0;
    sh->share = lam_malloc(lam_mul_size(sh->count ? sh->count : 1, sizeof *sh->share));
    for (size_t t = 0; t < e->nterms; ++t) sh->share[sh->start[t]] = e->tc[t];
    for (size_t t = 0; t < e->nterms; ++t)
        for (size_t k = sh->start[t] + 1; k < sh->start[t + 1]; ++k) sh->share[k] = 0;
}

/* Shares proportional to the group norms: the minimizer of the weighted
 * least-squares majorant sum_g ||c_g||^2 / (2 n_g) of sum_g ||c_g||, so
 * every step lowers the objective (majorization-minimization). */
static void irls_step(const engine *e, shares *sh, const double *norm, double *acc)
{
    memset(acc, 0, e->ng * sizeof *acc);
    for (size_t t = 0; t < e->nterms; ++t) {
        size_t a = sh->start[t], b = sh->start[t + 1];
        if (b - a == 1) {
            acc[sh->gid[a]] += e->tc[t] * e->tc[t];
            sh->share[a] = e->tc[t];
            continue;
        }
        double den = 0;
        for (size_t k = a; k < b; ++k) den += norm[sh->gid[k]];
        for (size_t k = a; k < b; ++k) {
            double s = den > 0 ? e->tc[t] * norm[sh->gid[k]] / den
                               : (k == a ? e->tc[t] : 0.0);
            sh->share[k] = s;
            acc[sh->gid[k]] += s * s;
        }
    }
}

/* Dual bound: y_t = c_t / sum of the norms of its groups, scaled so that
 * every group's ||y_g|| <= 1, gives sum_t y_t c_t <= the optimal split. */
static double split_bound(const engine *e, const shares *sh, const double *norm, double *acc)
{
    memset(acc, 0, e->ng * sizeof *acc);
    double value = 0;
    for (size_t t = 0; t < e->nterms; ++t) {
        double den = 0;
        for (size_t k = sh->start[t]; k < sh->start[t + 1]; ++k) den += norm[sh->gid[k]];
        if (den <= 0) continue;
        double y = e->tc[t] / den;
        value += y * e->tc[t];
        for (size_t k = sh->start[t]; k < sh->start[t + 1]; ++k) acc[sh->gid[k]] += y * y;
    }
    double worst = 0;
    for (uint32_t gi = 0; gi < e->ng; ++gi)
        if (acc[gi] > worst) worst = acc[gi];
    return worst > 0 ? value / sqrt(worst) : 0;
}

/* Shares from the weights w, their objective sum_g ||c_g||, and in next
 * the group norms they give (the plain majorization step's next w). */
static double evaluate_split(const engine *e, shares *sh, const double *w, double *next)
{
    irls_step(e, sh, w, next);
    double obj = 0;
    for (uint32_t gi = 0; gi < e->ng; ++gi) obj += (next[gi] = sqrt(next[gi]));
    return obj;
}

/* Majorization-minimization with an extrapolated step w^(1-r) m^r, kept
 * only when it lowers the objective (so the iteration stays monotone);
 * stops at a relative duality gap of 1e-9, when steps stall, or after the
 * given number of iterations. */
static int optimize_split(const engine *e, shares *sh, int iterations, double *bound)
{
    size_t ng = e->ng ? e->ng : 1;
    double *w = lam_malloc(lam_mul_size(ng, sizeof *w));
    double *next = lam_malloc(lam_mul_size(ng, sizeof *next));
    double *trial = lam_malloc(lam_mul_size(ng, sizeof *trial));
    double *trial_next = lam_malloc(lam_mul_size(ng, sizeof *trial_next));
    for (uint32_t gi = 0; gi < e->ng; ++gi) w[gi] = sqrt(e->g[gi].weight);
    double obj = evaluate_split(e, sh, w, next), rate = 2.0;
    int it;
    *bound = 0;
    for (it = 1; it < iterations; ++it) {
        double before = obj;
        for (uint32_t gi = 0; gi < e->ng; ++gi)
            trial[gi] = w[gi] > 0 && next[gi] > 0 ? w[gi] * pow(next[gi] / w[gi], rate) : next[gi];
        double tried = evaluate_split(e, sh, trial, trial_next);
        if (tried < obj) {
            memcpy(w, trial, e->ng * sizeof *w);
            memcpy(next, trial_next, e->ng * sizeof *next);
            obj = tried;
            rate = rate * 1.5 < 16 ? rate * 1.5 : 16;
        } else {
            memcpy(w, next, e->ng * sizeof *w);
            obj = evaluate_split(e, sh, w, next);
            rate = 2.0;
        }
        if (it % 16 == 0) {
            *bound = split_bound(e, sh, w, trial);
            if (obj - *bound <= 1e-9 * obj) break;
        }
        if (before - obj <= 1e-15 * obj) break;
    }
    *bound = split_bound(e, sh, w, trial);
    LAM_FREE_ALL(w, next, trial, trial_next);
    return it;
}

static void shares_free(shares *sh)
{
    LAM_FREE_ALL(sh->start, sh->gid, sh->share);
    memset(sh, 0, sizeof *sh);
}

/* sum_g ||c_g|| of the shares as they stand. */
static double shares_objective(const engine *e, const shares *sh)
{
    double *acc = lam_calloc(e->ng ? e->ng : 1, sizeof *acc), sum = 0;
    for (size_t t = 0; t < e->nterms; ++t)
        for (size_t k = sh->start[t]; k < sh->start[t + 1]; ++k)
            acc[sh->gid[k]] += sh->share[k] * sh->share[k];
    for (uint32_t gi = 0; gi < e->ng; ++gi) sum += sqrt(acc[gi]);
    free(acc);
    return sum;
}

/* Drop the split shares from the member lists: back to the groups found by
 * grouping and refinement (the shares never entered the index). */
static void truncate_to_cores(engine *e, const uint32_t *core)
{
    for (uint32_t gi = 0; gi < e->ng; ++gi) {
        group *g = &e->g[gi];
        for (uint32_t m = core[gi]; m < g->size; ++m)
            for (int c = 0; c <= e->M; ++c) set_member_bit(e, gi, c, m, 0);
        g->size = core[gi];
        e->gsize[gi] = core[gi];
    }
}

/* Fold negligible shares into the largest one, which takes whatever the
 * others leave so that the shares add up to the coefficient. */
static void tidy_shares(const engine *e, shares *sh)
{
    for (size_t t = 0; t < e->nterms; ++t) {
        size_t a = sh->start[t], b = sh->start[t + 1], big = a;
        if (b - a == 1) continue;
        for (size_t k = a; k < b; ++k)
            if (fabs(sh->share[k]) > fabs(sh->share[big])) big = k;
        double rest = e->tc[t];
        for (size_t k = a; k < b; ++k) {
            if (k == big) continue;
            if (fabs(sh->share[k]) <= SPLIT_DROP * fabs(e->tc[t]))
                sh->share[k] = 0;
            rest -= sh->share[k];
        }
        sh->share[big] = rest;
    }
}

/* ---------------------------------------------------------------- output */

/* A share folded away by tidy_shares is no line; a term whose coefficient
 * is zero keeps its one line in its home group. */
static int is_line(const engine *e, const shares *sh, size_t t, size_t k)
{
    return sh->share[k] != 0 || (e->tc[t] == 0 && k == sh->start[t]);
}

/* Emit the groups by decreasing norm. */
static void emit(const engine *e, const shares *sh, const lam_pauli_set *in,
                 const size_t *rank_to_term, lam_pauli_set *out, lam_group_stats *st)
{
    uint32_t ng = e->ng;
    double *norm2 = lam_calloc(ng ? ng : 1, sizeof *norm2);
    uint32_t *count = lam_calloc(ng ? ng : 1, sizeof *count);
    for (size_t t = 0; t < e->nterms; ++t) {
        int lines = 0;
        for (size_t k = sh->start[t]; k < sh->start[t + 1]; ++k) {
            if (!is_line(e, sh, t, k)) continue;
            norm2[sh->gid[k]] += sh->share[k] * sh->share[k];
            count[sh->gid[k]]++;
            ++lines;
        }
        if (lines > 1) st->shared_terms++;
        st->lines += (size_t)lines;
    }
    lam_weighted *order = lam_malloc(lam_mul_size(ng ? ng : 1, sizeof *order));
    uint32_t live = 0;
    for (uint32_t gi = 0; gi < ng; ++gi)
        if (count[gi]) order[live++] = (lam_weighted){sqrt(norm2[gi]), gi};
    lam_sort_heaviest_first(order, live);
    uint32_t *label = lam_malloc(lam_mul_size(ng ? ng : 1, sizeof *label));
    size_t *first = lam_malloc(lam_mul_size((size_t)live + 1, sizeof *first));
    first[0] = 0;
    for (uint32_t k = 0; k < live; ++k) {
        label[order[k].at] = k;
        first[k + 1] = first[k] + count[order[k].at];
        if (count[order[k].at] > st->largest_group) st->largest_group = count[order[k].at];
    }
    /* place every line at its group's next slot, terms in rank order */
    size_t *slot_term = lam_malloc(lam_mul_size(st->lines ? st->lines : 1, sizeof *slot_term));
    double *slot_coef = lam_malloc(lam_mul_size(st->lines ? st->lines : 1, sizeof *slot_coef));
    size_t *fill = lam_malloc(lam_mul_size((size_t)live + 1, sizeof *fill));
    memcpy(fill, first, ((size_t)live + 1) * sizeof *fill);
    for (size_t t = 0; t < e->nterms; ++t)
        for (size_t k = sh->start[t]; k < sh->start[t + 1]; ++k) {
            if (!is_line(e, sh, t, k)) continue;
            size_t at = fill[label[sh->gid[k]]]++;
            slot_term[at] = rank_to_term[t];
            slot_coef[at] = sh->share[k];
        }
    lam_pauli_set_reserve(out, out->count + st->lines);
    for (uint32_t k = 0; k < live; ++k)
        for (size_t at = first[k]; at < first[k + 1]; ++at)
            lam_pauli_set_add(out, lam_pauli_x(in, slot_term[at]), lam_pauli_z(in, slot_term[at]),
                              slot_coef[at], (int32_t)k);
    st->groups = live;
    LAM_FREE_ALL(norm2, count, order, label, first, slot_term, slot_coef, fill);
}

/* ---------------------------------------------------------------- driver */

void lam_group_options_default(lam_group_options *opt)
{
    opt->method = LAM_GROUP_SORTED;
    opt->refine_passes = -1;
    opt->split = -1;
    opt->split_iterations = 1000;
    opt->commuting = 0;
}

int lam_group_method_parse(const char *name, lam_group_method *method)
{
    if (strcmp(name, "sorted") == 0) *method = LAM_GROUP_SORTED;
    else if (strcmp(name, "best") == 0) *method = LAM_GROUP_BEST;
    else return -1;
    return 0;
}

const char *lam_group_method_name(lam_group_method method)
{
    return method == LAM_GROUP_SORTED ? "sorted" : "best";
}

static void engine_init(engine *e, const lam_pauli_set *in, const lam_group_options *opt,
                        size_t nterms)
{
    memset(e, 0, sizeof *e);
    e->nw = in->nwords;
    e->want_anti = !opt->commuting;
    e->nterms = nterms;
    e->home = lam_malloc(lam_mul_size(nterms ? nterms : 1, sizeof *e->home));
    e->pos = lam_malloc(lam_mul_size(nterms ? nterms : 1, sizeof *e->pos));
    e->use_index = !opt->commuting;
    e->M = 2 * (in->nqubits > 0 ? in->nqubits : 1);
    e->pidx = lam_malloc(lam_mul_size((size_t)e->M, sizeof *e->pidx));
    e->pidx_member = lam_malloc(lam_mul_size((size_t)e->M, sizeof *e->pidx_member));
    e->pcol = lam_calloc((size_t)e->M + 1, sizeof *e->pcol);
    if (e->use_index) {
        e->use_pairs = e->M <= PAIR_MAJORANAS_MAX;
        e->single = lam_calloc((size_t)e->M, sizeof *e->single);
        if (e->use_pairs)
            e->pair = lam_calloc(lam_mul_size((size_t)e->M, (size_t)e->M), sizeof *e->pair);
    }
}

static void engine_free(engine *e)
{
    for (uint32_t gi = 0; gi < e->ng; ++gi) {
        LAM_FREE_ALL(e->g[gi].ids, e->g[gi].bits, e->g[gi].cols);
    }
    LAM_FREE_ALL(e->g, e->stamp, e->home, e->pos);
    if (e->single)
        for (int i = 0; i < e->M; ++i) free(e->single[i].v);
    if (e->pair)
        for (size_t i = 0; i < (size_t)e->M * (size_t)e->M; ++i) free(e->pair[i].v);
    LAM_FREE_ALL(e->single, e->pair, e->wide.v, e->odd.v, e->found.v, e->cand.v);
    for (int c = 0; c <= e->M; ++c) free(e->pcol[c]);
    LAM_FREE_ALL(e->pcol, e->gsize, e->pidx, e->pidx_member);
}

int lam_group_build(const lam_pauli_set *in, const lam_group_options *opt,
                    lam_pauli_set *out, lam_group_stats *st, lam_error *err)
{
    memset(st, 0, sizeof *st);
    int nw = in->nwords;
    size_t stride = 2 * (size_t)nw;
    lam_pauli_set_init(out, in->nqubits);
    lam_pauli_set_grow_qubits(out, in->nqubits);

    /* the identity stays unlabelled, first; the rest by decreasing |c| */
    lam_weighted *sorted = lam_malloc(lam_mul_size(in->count ? in->count : 1, sizeof *sorted));
    size_t n = 0;
    for (size_t t = 0; t < in->count; ++t) {
        if (lam_pauli_is_identity(nw, lam_pauli_x(in, t), lam_pauli_z(in, t))) {
            st->constant += in->coef[t];
            lam_pauli_set_add(out, lam_pauli_x(in, t), lam_pauli_z(in, t), in->coef[t], -1);
            continue;
        }
        sorted[n++] = (lam_weighted){fabs(in->coef[t]), t};
    }
    st->lambda = lam_pauli_set_lambda(in);
    /* ranks are 32-bit: memory runs out long before this in practice */
    if (n > (size_t)UINT32_MAX - 1) {
        free(sorted);
        lam_pauli_set_free(out);
        return lam_error_set(err, LAM_EX_SOFTWARE, "%zu terms: more than lam-group can hold", n);
    }
    lam_sort_heaviest_first(sorted, n);
    st->terms = n;

    uint64_t *tbits = lam_malloc(lam_mul_size(n ? n : 1, stride * sizeof(uint64_t)));
    double *tc = lam_malloc(lam_mul_size(n ? n : 1, sizeof *tc));
    size_t *rank_to_term = lam_malloc(lam_mul_size(n ? n : 1, sizeof *rank_to_term));
    for (size_t k = 0; k < n; ++k) {
        size_t t = sorted[k].at;
        memcpy(tbits + k * stride, lam_pauli_x(in, t), stride * sizeof(uint64_t));
        tc[k] = in->coef[t];
        rank_to_term[k] = t;
    }
    free(sorted);

    engine e;
    engine_init(&e, in, opt, n);
    e.tbits = tbits;
    e.tc = tc;
    greedy(&e, opt->method);
    recompute_weights(&e);
    st->lambda_greedy = grouped_norm(&e);
    st->lambda_refined = st->lambda_greedy;
    int small = n <= LAM_GROUP_AUTO_TERMS;
    int passes = opt->refine_passes >= 0 ? opt->refine_passes : (small ? 8 : 0);
    int split = opt->split >= 0 ? opt->split : small;
    st->split_done = split;
    for (int pass = 0; pass < passes; ++pass) {
        double fall = refine_pass(&e);
        st->refine_passes_done = pass + 1;
        st->lambda_refined = grouped_norm(&e);
        lam_progress("refinement pass %d: lambda_grouped %.12g Eh", pass + 1,
                     st->lambda_refined);
        if (fall <= 1e-6 * st->lambda_refined) break; /* later passes gain less */
    }

    shares sh = {0};
    uint32_t *core = lam_malloc(lam_mul_size(e.ng ? e.ng : 1, sizeof *core));
    for (uint32_t gi = 0; gi < e.ng; ++gi) core[gi] = e.g[gi].size;
    double best = HUGE_VAL;
    int tries = split ? (int)(sizeof split_limits / sizeof *split_limits) : 1;
    for (int k = 0; k < tries; ++k) {
        shares trial;
        double bound = 0;
        int iterations = 0;
        collect_memberships(&e, split, split_limits[k], &trial);
        if (split && trial.count > n) {
            iterations = optimize_split(&e, &trial, opt->split_iterations, &bound);
            tidy_shares(&e, &trial);
        }
        double value = shares_objective(&e, &trial);
        if (!(split && trial.count > n)) bound = value; /* nothing shared: optimal */
        lam_progress("split over at most %d groups a term: lambda_grouped %.12g Eh",
                     split_limits[k], value);
        if (k == 0 || value < best) { /* the first always: value may be inf or NaN */
            best = value;
            shares_free(&sh);
            sh = trial;
            st->split_bound = bound;
            st->split_iterations_done = iterations;
        } else {
            shares_free(&trial);
        }
        truncate_to_cores(&e, core);
    }
    free(core);
    emit(&e, &sh, in, rank_to_term, out, st);
    st->lambda_grouped = lam_pauli_set_lambda_grouped(out, NULL);

    shares_free(&sh);
    engine_free(&e);
    LAM_FREE_ALL(tbits, tc, rank_to_term);
    return 0;
}

/* ---------------------------------------------------------------- labels */

/* A labelled term: its label (>= 0) is the key, its position in the set
 * is at. */
typedef lam_keyed labelled;

/* Labelled non-identity-or-not terms sorted by (label, position): the
 * members of each group in stream order.  Returns the count. */
static size_t members_by_label(const lam_pauli_set *s, labelled **out)
{
    size_t n = 0;
    labelled *v = lam_malloc(lam_mul_size(s->count ? s->count : 1, sizeof *v));
    for (size_t t = 0; s->group && t < s->count; ++t)
        if (s->group[t] >= 0) v[n++] = (labelled){(uint64_t)s->group[t], t};
    lam_sort_by_key(v, n);
    *out = v;
    return n;
}

static int same_string(const lam_pauli_set *s, size_t a, size_t b)
{
    return memcmp(lam_pauli_x(s, a), lam_pauli_x(s, b),
                  2 * (size_t)s->nwords * sizeof(uint64_t)) == 0;
}

static int pair_anticommutes(const lam_pauli_set *s, size_t a, size_t b)
{
    return anticommute(s->nwords, lam_pauli_x(s, a), lam_pauli_x(s, b));
}

/* First member (by position) of an anticommuting group that commutes with
 * an earlier distinct one.  Distinct members that pass are mutually
 * anticommuting, so at most 2n+1 of them are kept before a failure. */
static int check_anticommuting(const lam_pauli_set *s, const labelled *m, size_t k,
                               size_t *first, size_t *second)
{
    size_t *distinct = lam_malloc(lam_mul_size(k, sizeof *distinct));
    size_t nd = 0;
    int bad = 0;
    for (size_t i = 0; i < k && !bad; ++i) {
        size_t t = m[i].at;
        int repeat = 0;
        for (size_t d = 0; d < nd; ++d) {
            if (same_string(s, distinct[d], t)) {
                repeat = 1; /* repeated lines of one term add up */
                continue;
            }
            if (!pair_anticommutes(s, distinct[d], t)) {
                *first = distinct[d];
                *second = t;
                bad = 1;
                break;
            }
        }
        if (!repeat && !bad) distinct[nd++] = t;
    }
    free(distinct);
    return bad;
}

/* Mutually commuting strings span an isotropic subspace: a member commutes
 * with all earlier ones exactly when it commutes with a basis of their
 * span, which has at most n vectors, so long groups cost O(k n). */
static int check_commuting(const lam_pauli_set *s, const labelled *m, size_t k,
                           size_t *first, size_t *second)
{
    int nw = s->nwords;
    size_t stride = 2 * (size_t)nw;
    size_t maxbasis = (size_t)64 * stride;
    uint64_t *basis = lam_malloc(lam_mul_size(maxbasis, stride * sizeof(uint64_t)));
    int *pivot = lam_malloc(lam_mul_size(maxbasis, sizeof *pivot));
    uint64_t *v = lam_malloc(stride * sizeof(uint64_t));
    size_t nb = 0;
    int bad = 0;
    for (size_t i = 0; i < k && !bad; ++i) {
        const uint64_t *p = lam_pauli_x(s, m[i].at);
        for (size_t b = 0; b < nb; ++b)
            if (anticommute(nw, p, basis + b * stride)) {
                bad = 1;
                break;
            }
        if (bad) {
            for (size_t j = 0; j < i; ++j)
                if (pair_anticommutes(s, m[j].at, m[i].at)) {
                    *first = m[j].at;
                    *second = m[i].at;
                    break;
                }
            break;
        }
        memcpy(v, p, stride * sizeof(uint64_t));
        for (size_t b = 0; b < nb; ++b)
            if ((v[pivot[b] / 64] >> (pivot[b] % 64)) & 1)
                for (size_t w = 0; w < stride; ++w) v[w] ^= basis[b * stride + w];
        for (size_t w = 0; w < stride; ++w)
            if (v[w]) {
                int bit = (int)(w * 64) + __builtin_ctzll(v[w]);
                for (size_t b = 0; b < nb; ++b) /* keep the basis reduced */
                    if ((basis[b * stride + w] >> (bit % 64)) & 1)
                        for (size_t u = 0; u < stride; ++u) basis[b * stride + u] ^= v[u];
                memcpy(basis + nb * stride, v, stride * sizeof(uint64_t));
                pivot[nb++] = bit;
                break;
            }
    }
    LAM_FREE_ALL(basis, pivot, v);
    return bad;
}

int lam_group_check(const lam_pauli_set *s, int want_commuting, size_t *first,
                    size_t *second)
{
    labelled *v;
    size_t n = members_by_label(s, &v);
    int found = 0;
    for (size_t a = 0; a < n;) {
        size_t b = a;
        while (b < n && v[b].key == v[a].key) ++b;
        size_t f = 0, g = 0;
        int bad = want_commuting ? check_commuting(s, v + a, b - a, &f, &g)
                                 : check_anticommuting(s, v + a, b - a, &f, &g);
        if (bad && (!found || g < *second || (g == *second && f < *first))) {
            *first = f;
            *second = g;
            found = 1;
        }
        a = b;
    }
    free(v);
    return found;
}
