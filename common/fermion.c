/* fermion.c - ladder terms, normal ordering, and Majorana monomials. */
#include "fermion.h"

#include <assert.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

/* The largest mode a stream may name. */
#define LAM_MAX_MODES (1L << 20)

/* ------------------------------------------------------------ spin order */

const char *lam_spin_order_name(lam_spin_order o)
{
    return o == LAM_SPIN_BLOCKED ? "blocked" : "interleaved";
}

int lam_spin_order_parse(const char *name, lam_spin_order *o)
{
    if (strcmp(name, "interleaved") == 0) {
        *o = LAM_SPIN_INTERLEAVED;
        return 0;
    }
    if (strcmp(name, "blocked") == 0) {
        *o = LAM_SPIN_BLOCKED;
        return 0;
    }
    return -1;
}

int lam_reader_spin_order(lam_reader *r, lam_spin_order dflt, lam_spin_order *order,
                          lam_error *err)
{
    const lam_meta_entry *e = lam_meta_find(lam_reader_meta(r), "spin-order");
    *order = dflt;
    if (e && lam_spin_order_parse(e->value, order) != 0)
        return lam_reader_error(r, e->line, err,
                                "'spin-order: %s' is neither interleaved nor blocked", e->value);
    return 0;
}

/* ------------------------------------------------------------ ladder terms */

void lam_fermion_init(lam_fermion_op *op, int nmodes)
{
    memset(op, 0, sizeof *op);
    op->nmodes = nmodes;
    op->cap = 16;
    op->first = lam_malloc(lam_mul_size(op->cap + 1, sizeof(size_t)));
    op->coef = lam_malloc(lam_mul_size(op->cap, sizeof(double)));
    op->line = lam_malloc(lam_mul_size(op->cap, sizeof(long)));
    op->first[0] = 0;
}

void lam_fermion_free(lam_fermion_op *op)
{
    LAM_FREE_ALL(op->first, op->ops, op->coef, op->line);
    memset(op, 0, sizeof *op);
}

void lam_fermion_add(lam_fermion_op *op, double coef, const int32_t *ops, int k,
                     long line)
{
    if (op->count == op->cap) {
        op->cap = lam_mul_size(op->cap, 2);
        op->first = lam_realloc(op->first, lam_mul_size(op->cap + 1, sizeof(size_t)));
        op->coef = lam_realloc(op->coef, lam_mul_size(op->cap, sizeof(double)));
        op->line = lam_realloc(op->line, lam_mul_size(op->cap, sizeof(long)));
    }
    if (op->nops + (size_t)k > op->opcap) {
        size_t cap = op->opcap ? op->opcap : 64;
        while (cap < op->nops + (size_t)k) cap = lam_mul_size(cap, 2);
        op->ops = lam_realloc(op->ops, lam_mul_size(cap, sizeof(int32_t)));
        op->opcap = cap;
    }
    for (int i = 0; i < k; ++i) {
        assert(LAM_LADDER_MODE(ops[i]) < op->nmodes); /* callers check the modes */
        op->ops[op->nops + (size_t)i] = ops[i];
    }
    op->nops += (size_t)k;
    op->coef[op->count] = coef;
    op->line[op->count] = line;
    op->first[++op->count] = op->nops;
}

/* "12+" -> creator of mode 12 (version 1); -1 when the field is
 * malformed. */
static long parse_ladder(const char *tok)
{
    long mode = 0;
    const char *p = tok;
    if (*p < '0' || *p > '9') return -1;
    if (*p == '0' && p[1] >= '0' && p[1] <= '9') return -1;
    for (; *p >= '0' && *p <= '9'; ++p) {
        mode = mode * 10 + (*p - '0');
        if (mode >= LAM_MAX_MODES) return -1;
    }
    if ((*p != '+' && *p != '-') || p[1] != '\0') return -1;
    return *p == '+' ? LAM_CREATE(mode) : LAM_ANNIHILATE(mode);
}

/* A mode: digits only, no leading zero; -1 otherwise. */
static long parse_mode(const char *tok)
{
    long mode = 0;
    const char *p = tok;
    if (*p < '0' || *p > '9') return -1;
    if (*p == '0' && p[1] != '\0') return -1;
    for (; *p; ++p) {
        if (*p < '0' || *p > '9') return -1;
        mode = mode * 10 + (*p - '0');
        if (mode >= LAM_MAX_MODES) return -1;
    }
    return mode;
}

/* Version 2: "3 1 / 0 2" is a+3 a+1 a0 a2.  A mode twice on one side
 * makes the term zero, which no writer writes: refused as a typo. */
static int parse_term_v2(const lam_reader *r, const lam_line *ln, int32_t *buf, lam_error *err)
{
    int slash = -1;
    for (int f = 0; f < ln->nfields; ++f)
        if (strcmp(ln->fields[f], "/") == 0) {
            if (slash >= 0)
                return lam_reader_error(r, ln->line, err,
                                        "a fermion term has one '/', this one two");
            slash = f;
        }
    if (slash < 0)
        return lam_reader_error(r, ln->line, err,
                                "a fermion term needs a '/' between creators and annihilators "
                                "(such as '3 1 / 0 2')");
    for (int f = 0; f < ln->nfields; ++f) {
        if (f == slash) continue;
        long mode = parse_mode(ln->fields[f]);
        if (mode < 0)
            return lam_reader_error(r, ln->line, err, "'%s' is not a mode (want an index from 0)",
                                    ln->fields[f]);
        int creator = f < slash;
        int k = f < slash ? f : f - 1;
        buf[k] = (int32_t)(creator ? LAM_CREATE(mode) : LAM_ANNIHILATE(mode));
        for (int j = creator ? 0 : slash; j < k; ++j)
            if (buf[j] == buf[k])
                return lam_reader_error(r, ln->line, err,
                                        "mode %ld is %s twice (the term would be zero)", mode,
                                        creator ? "created" : "annihilated");
    }
    return 0;
}

/* Version 1: "3+ 1+ 0- 2-", any order. */
static int parse_term_v1(const lam_reader *r, const lam_line *ln, int32_t *buf, lam_error *err)
{
    for (int f = 0; f < ln->nfields; ++f) {
        long o = parse_ladder(ln->fields[f]);
        if (o < 0)
            return lam_reader_error(r, ln->line, err,
                                    "'%s' is not a ladder operator of a version-1 term (want N+ "
                                    "or N-)",
                                    ln->fields[f]);
        buf[f] = (int32_t)o;
    }
    return 0;
}

/* The spelling of a fermion term: 1 when its first field is "N+"/"N-",
 * 0 for the bare constant, else 2. */
static int fermion_spelling(const lam_line *ln)
{
    if (ln->nfields == 0) return 0;
    if (strcmp(ln->fields[0], "/") == 0) return 2;
    return parse_ladder(ln->fields[0]) >= 0 ? 1 : 2;
}

/* One term line into buf (its ladder operators, *nops of them). */
static int parse_fermion_line(lam_reader *r, const lam_line *ln, long declared, int32_t *buf,
                              int *nops, int *top, lam_error *err)
{
    int spelling = fermion_spelling(ln);
    int rc = spelling ? lam_reader_term_syntax(r, ln, spelling, err) : 0;
    if (rc) return rc;
    *nops = ln->nfields - (spelling == 2);
    if (*nops > LAM_MAX_LADDER)
        return lam_reader_error(r, ln->line, err, "a term has %d ladder operators (at most %d)",
                                *nops, LAM_MAX_LADDER);
    rc = spelling == 2 ? parse_term_v2(r, ln, buf, err) : parse_term_v1(r, ln, buf, err);
    if (rc) return rc;
    for (int k = 0; k < *nops; ++k) {
        long mode = LAM_LADDER_MODE(buf[k]);
        if (declared >= 0 && mode >= declared)
            return lam_reader_error(r, ln->line, err,
                                    "mode %ld out of range (the stream has %ld modes)", mode,
                                    declared);
        if (mode + 1 > *top) *top = (int)mode + 1;
    }
    return 0;
}

int lam_fermion_read(lam_reader *r, lam_fermion_op *op, lam_error *err)
{
    long declared;
    memset(op, 0, sizeof *op);
    int rc = lam_reader_meta_long(r, "modes", -1, 0, LAM_MAX_MODES, &declared, err);
    if (rc) return rc;
    lam_fermion_init(op, declared < 0 ? (int)LAM_MAX_MODES : (int)declared);
    int32_t buf[LAM_MAX_LADDER + 1];
    int top = 0, nops = 0;
    lam_line ln;
    while ((rc = lam_reader_next(r, &ln, err)) == 1) {
        if ((rc = parse_fermion_line(r, &ln, declared, buf, &nops, &top, err)) != 0) break;
        lam_fermion_add(op, ln.coef, buf, nops, ln.line);
    }
    if (rc) {
        lam_fermion_free(op);
        return rc;
    }
    if (declared < 0) op->nmodes = top;
    return 0;
}

/* 1 when every creator of the term stands before every annihilator. */
static int creators_first(const lam_fermion_op *op, size_t t)
{
    int seen_annihilator = 0;
    for (size_t i = op->first[t]; i < op->first[t + 1]; ++i) {
        if (!LAM_LADDER_IS_CREATOR(op->ops[i]))
            seen_annihilator = 1;
        else if (seen_annihilator)
            return 0;
    }
    return 1;
}

static long order_key(int32_t o);

/* The term in canonical order (creators by descending mode, then
 * annihilators by ascending mode) into ops; returns the sign of the
 * reordering, 0 when a mode repeats on one side (the term is zero). */
static int canonical_term(const lam_fermion_op *op, size_t t, int32_t *ops)
{
    int k = (int)lam_fermion_length(op, t), sign = 1;
    memcpy(ops, op->ops + op->first[t], (size_t)k * sizeof *ops);
    for (int i = 1; i < k; ++i)
        for (int j = i; j > 0 && order_key(ops[j - 1]) > order_key(ops[j]); --j) {
            int32_t tmp = ops[j];
            ops[j] = ops[j - 1];
            ops[j - 1] = tmp;
            sign = -sign;
        }
    for (int i = 1; i < k; ++i)
        if (ops[i] == ops[i - 1]) return 0;
    return sign;
}

static void write_ordered_terms(lam_writer *w, const lam_fermion_op *op)
{
    char buf[LAM_MAX_LADDER * 12 + 8];
    int32_t ops[LAM_MAX_LADDER];
    for (size_t t = 0; t < op->count; ++t) {
        int k = (int)lam_fermion_length(op, t);
        int sign = canonical_term(op, t, ops);
        if (sign == 0) continue;
        size_t len = 0;
        int slash = k > 0;
        for (int i = 0; i < k; ++i) {
            if (slash && !LAM_LADDER_IS_CREATOR(ops[i])) {
                len += (size_t)snprintf(buf + len, sizeof buf - len, "%s/", len ? " " : "");
                slash = 0;
            }
            len += (size_t)snprintf(buf + len, sizeof buf - len, "%s%d", len ? " " : "",
                                    (int)LAM_LADDER_MODE(ops[i]));
        }
        if (slash) len += (size_t)snprintf(buf + len, sizeof buf - len, " /");
        buf[len] = '\0';
        lam_writer_term(w, sign * op->coef[t], buf);
    }
}

void lam_fermion_write_terms(lam_writer *w, const lam_fermion_op *op)
{
    for (size_t t = 0; t < op->count; ++t)
        if (!creators_first(op, t)) {
            /* version 2 spells normal-ordered products only */
            lam_fermion_op ordered;
            lam_fermion_normal_order(op, &ordered);
            write_ordered_terms(w, &ordered);
            lam_fermion_free(&ordered);
            return;
        }
    write_ordered_terms(w, op);
}

/* ------------------------------------------------------------ normal order */

/* Normal order as a sort key: creators (descending mode) before
 * annihilators (ascending mode). */
static long order_key(int32_t o)
{
    long mode = LAM_LADDER_MODE(o);
    return LAM_LADDER_IS_CREATOR(o) ? -mode - 1 : mode + LAM_MAX_MODES;
}

typedef struct {
    double coef;
    long line;
    int k;
    int32_t ops[LAM_MAX_LADDER];
} work_term;

typedef struct {
    work_term *items;
    size_t count, cap;
} work_stack;

static void push(work_stack *st, const work_term *t)
{
    if (st->count == st->cap) {
        st->cap = st->cap ? 2 * st->cap : 64;
        st->items = lam_realloc(st->items, lam_mul_size(st->cap, sizeof *st->items));
    }
    st->items[st->count++] = *t;
}

/* Bit rows of normal-ordered terms: creator set, then annihilator set. */
typedef struct {
    int nw;
    size_t count, cap;
    uint64_t *rows;
    double *coef;
    long *line;
    lam_rowhash index;
} ordered_set;

static void ordered_add(ordered_set *s, const work_term *t)
{
    size_t width = 2 * (size_t)s->nw;
    if (s->count == s->cap) {
        s->cap = s->cap ? 2 * s->cap : 64;
        s->rows = lam_realloc(s->rows, lam_mul_size(s->cap, width * sizeof(uint64_t)));
        s->coef = lam_realloc(s->coef, lam_mul_size(s->cap, sizeof(double)));
        s->line = lam_realloc(s->line, lam_mul_size(s->cap, sizeof(long)));
    }
    uint64_t *row = s->rows + s->count * width;
    memset(row, 0, width * sizeof(uint64_t));
    for (int i = 0; i < t->k; ++i) {
        int mode = (int)LAM_LADDER_MODE(t->ops[i]);
        uint64_t *half = LAM_LADDER_IS_CREATOR(t->ops[i]) ? row : row + s->nw;
        half[mode / 64] |= (uint64_t)1 << (mode % 64);
    }
    s->coef[s->count] = t->coef;
    s->line[s->count] = t->line;
    size_t k = lam_rowhash_insert(&s->index, s->rows, width, NULL, s->count);
    if (k == s->count)
        ++s->count;
    else
        s->coef[k] += t->coef;
}

/* Bubble the term into normal order; every swap of neighbours is a sign,
 * and a_j a+_j = 1 - a+_j a_j leaves a shorter term behind. */
static void normal_order_term(work_stack *st, ordered_set *out)
{
    while (st->count) {
        work_term t = st->items[--st->count];
        int i, swapped = 0;
        for (i = 0; i + 1 < t.k; ++i) {
            if (t.ops[i] == t.ops[i + 1]) break; /* a a = a+ a+ = 0 */
            if (order_key(t.ops[i]) > order_key(t.ops[i + 1])) {
                swapped = 1;
                break;
            }
        }
        if (i + 1 < t.k && !swapped) continue; /* a repeated operator: zero */
        if (!swapped) {
            if (t.coef != 0.0) ordered_add(out, &t);
            continue;
        }
        int32_t a = t.ops[i], b = t.ops[i + 1];
        if (LAM_LADDER_MODE(a) == LAM_LADDER_MODE(b) && !LAM_LADDER_IS_CREATOR(a) &&
            LAM_LADDER_IS_CREATOR(b)) {
            work_term d = t;
            memmove(d.ops + i, d.ops + i + 2, (size_t)(t.k - i - 2) * sizeof(int32_t));
            d.k -= 2;
            push(st, &d);
        }
        t.ops[i] = b;
        t.ops[i + 1] = a;
        t.coef = -t.coef;
        push(st, &t);
    }
}

static int bit_is_set(const uint64_t *w, int j) { return (int)((w[j / 64] >> (j % 64)) & 1); }

void lam_fermion_normal_order(const lam_fermion_op *in, lam_fermion_op *out)
{
    ordered_set set;
    memset(&set, 0, sizeof set);
    set.nw = lam_pauli_words(in->nmodes > 0 ? in->nmodes : 1);
    work_stack st = {NULL, 0, 0};
    for (size_t t = 0; t < in->count; ++t) {
        work_term w;
        size_t k = lam_fermion_length(in, t);
        assert(k <= LAM_MAX_LADDER); /* the reader and lam_fermion_add keep it */
        w.coef = in->coef[t];
        w.line = in->line[t];
        w.k = (int)k;
        if (k) memcpy(w.ops, in->ops + in->first[t], k * sizeof(int32_t));
        push(&st, &w);
        normal_order_term(&st, &set);
    }
    free(st.items);
    lam_rowhash_free(&set.index);

    lam_fermion_init(out, in->nmodes);
    int32_t *ops = lam_malloc(lam_mul_size((size_t)in->nmodes + 1, 2 * sizeof(int32_t)));
    for (size_t t = 0; t < set.count; ++t) {
        if (set.coef[t] == 0.0) continue;
        const uint64_t *cre = set.rows + t * 2 * (size_t)set.nw, *ann = cre + set.nw;
        int k = 0;
        for (int j = in->nmodes - 1; j >= 0; --j)
            if (bit_is_set(cre, j)) ops[k++] = LAM_CREATE(j);
        for (int j = 0; j < in->nmodes; ++j)
            if (bit_is_set(ann, j)) ops[k++] = LAM_ANNIHILATE(j);
        lam_fermion_add(out, set.coef[t], ops, k, set.line[t]);
    }
    LAM_FREE_ALL(ops, set.rows, set.coef, set.line);
}

/* ------------------------------------------------------------ from spinfree */

void lam_fermion_add_spinfree_term(lam_fermion_op *out, lam_spin_order order, int n, double c,
                                   int nidx, const int *idx, long line)
{
    if (nidx == 0) {
        if (c != 0.0) lam_fermion_add(out, c, NULL, 0, line);
        return;
    }
    int p = idx[0], q = idx[1];
    if (nidx == 2) {
        for (int s = 0; s < 2; ++s) {
            int32_t ops[2] = {LAM_CREATE(lam_spin_mode(order, n, p, s)),
                              LAM_ANNIHILATE(lam_spin_mode(order, n, q, s))};
            lam_fermion_add(out, c, ops, 2, line);
        }
        return;
    }
    int r = idx[2], s = idx[3];
    for (int a = 0; a < 2; ++a)
        for (int b = 0; b < 2; ++b) {
            /* e_pqrs = sum a+_pa a+_rb a_sb a_qa */
            int32_t ops[4] = {LAM_CREATE(lam_spin_mode(order, n, p, a)),
                              LAM_CREATE(lam_spin_mode(order, n, r, b)),
                              LAM_ANNIHILATE(lam_spin_mode(order, n, s, b)),
                              LAM_ANNIHILATE(lam_spin_mode(order, n, q, a))};
            if (ops[0] == ops[1] || ops[2] == ops[3]) continue;
            lam_fermion_add(out, c, ops, 4, line);
        }
}

void lam_fermion_from_spinfree(const lam_spinfree *sf, lam_spin_order order,
                               lam_fermion_op *out)
{
    int n = sf->n;
    lam_fermion_init(out, 2 * n);
    lam_fermion_add_spinfree_term(out, order, n, sf->e0, 0, NULL, 0);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            if (LAM_H(sf, p, q) != 0.0)
                lam_fermion_add_spinfree_term(out, order, n, LAM_H(sf, p, q), 2, (int[]){p, q}, 0);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s)
                    if (LAM_G(sf, p, q, r, s) != 0.0)
                        lam_fermion_add_spinfree_term(out, order, n, 0.5 * LAM_G(sf, p, q, r, s), 4,
                                                      (int[]){p, q, r, s}, 0);
}

/* ------------------------------------------------------------ Majorana */

void lam_majorana_init(lam_majorana_set *m, int nmodes)
{
    memset(m, 0, sizeof *m);
    m->nmodes = nmodes;
    m->nwords = lam_pauli_words(2 * nmodes > 0 ? 2 * nmodes : 1);
}

void lam_majorana_free(lam_majorana_set *m)
{
    LAM_FREE_ALL(m->bits, m->re, m->im, m->mass, m->line);
    lam_rowhash_free(&m->index);
    memset(m, 0, sizeof *m);
}

static void majorana_reserve(lam_majorana_set *m, size_t need)
{
    if (need <= m->cap) return;
    size_t cap = m->cap ? m->cap : 256;
    while (cap < need) cap = lam_mul_size(cap, 2);
    m->bits = lam_realloc(m->bits, lam_mul_size(cap, (size_t)m->nwords * sizeof(uint64_t)));
    m->re = lam_realloc(m->re, lam_mul_size(cap, sizeof(double)));
    m->im = lam_realloc(m->im, lam_mul_size(cap, sizeof(double)));
    m->mass = lam_realloc(m->mass, lam_mul_size(cap, sizeof(double)));
    m->line = lam_realloc(m->line, lam_mul_size(cap, sizeof(long)));
    m->cap = cap;
}

/* Append a monomial known to be new, without indexing it yet. */
static void majorana_append(lam_majorana_set *m, const uint64_t *row, double re, double im,
                            long line)
{
    majorana_reserve(m, m->count + 1);
    size_t nw = (size_t)m->nwords, c = m->count;
    for (size_t w = 0; w < nw; ++w) m->bits[c * nw + w] = row[w];
    m->re[c] = re;
    m->im[c] = im;
    m->mass[c] = fabs(re) + fabs(im);
    m->line[c] = line;
    ++m->count;
}

/* Index the rows appended without it, so that later additions merge. */
static void majorana_index_all(lam_majorana_set *m)
{
    for (; m->indexed < m->count; ++m->indexed)
        lam_rowhash_insert(&m->index, m->bits, (size_t)m->nwords, NULL, m->indexed);
}

/* Insert a reduced monomial given as a bit row. */
static void majorana_insert(lam_majorana_set *m, const uint64_t *row, double re, double im,
                            long line)
{
    majorana_index_all(m);
    majorana_reserve(m, m->count + 1);
    size_t nw = (size_t)m->nwords, c = m->count;
    memcpy(m->bits + c * nw, row, nw * sizeof(uint64_t));
    size_t k = lam_rowhash_insert(&m->index, m->bits, nw, NULL, c);
    double mass = fabs(re) + fabs(im);
    if (k == c) {
        m->re[c] = re;
        m->im[c] = im;
        m->mass[c] = mass;
        m->line[c] = line;
        ++m->count;
        ++m->indexed;
    } else {
        m->re[k] += re;
        m->im[k] += im;
        m->mass[k] += mass;
    }
}

/* Sort the indices into ascending order (each swap of distinct
 * Majoranas is a sign) and cancel equal pairs (g^2 = 1).  Returns the
 * sign. */
static int reduce_monomial(int *idx, int k, uint64_t *row, int nw)
{
    int sign = 1;
    for (int i = 1; i < k; ++i)
        for (int j = i; j > 0 && idx[j - 1] > idx[j]; --j) {
            int t = idx[j];
            idx[j] = idx[j - 1];
            idx[j - 1] = t;
            sign = -sign;
        }
    memset(row, 0, (size_t)nw * sizeof(uint64_t));
    for (int i = 0; i < k; ++i) row[idx[i] / 64] ^= (uint64_t)1 << (idx[i] % 64);
    return sign;
}

void lam_majorana_add(lam_majorana_set *m, const int *idx, int k, double re, double im,
                      long line)
{
    int local[2 * LAM_MAX_LADDER];
    uint64_t rowbuf[8];
    assert(k <= 2 * LAM_MAX_LADDER); /* callers build products of at most this */
    uint64_t *row = m->nwords <= 8 ? rowbuf : lam_malloc((size_t)m->nwords * sizeof(uint64_t));
    for (int i = 0; i < k; ++i) {
        assert(idx[i] >= 0 && idx[i] < 2 * m->nmodes);
        local[i] = idx[i];
    }
    int sign = reduce_monomial(local, k, row, m->nwords);
    majorana_insert(m, row, sign * re, sign * im, line);
    if (row != rowbuf) free(row);
}

void lam_majorana_from_fermion(const lam_fermion_op *op, lam_majorana_set *m)
{
    lam_majorana_init(m, op->nmodes);
    int idx[LAM_MAX_LADDER];
    for (size_t t = 0; t < op->count; ++t) {
        size_t k = lam_fermion_length(op, t);
        const int32_t *ops = op->ops + op->first[t];
        assert(k <= LAM_MAX_LADDER);
        /* a_j = (g_2j + i g_2j+1)/2, a+_j = (g_2j - i g_2j+1)/2: choice bit 1
         * picks g_2j+1 with its factor +-i */
        for (unsigned long pick = 0; pick < (1UL << k); ++pick) {
            double re = op->coef[t] / (double)(1UL << k), im = 0.0;
            for (size_t i = 0; i < k; ++i) {
                int j = (int)LAM_LADDER_MODE(ops[i]);
                if ((pick >> i) & 1) {
                    idx[i] = 2 * j + 1;
                    /* multiply by +i (annihilator) or -i (creator) */
                    double f = LAM_LADDER_IS_CREATOR(ops[i]) ? -1.0 : 1.0;
                    double nre = -f * im, nim = f * re;
                    re = nre;
                    im = nim;
                } else {
                    idx[i] = 2 * j;
                }
            }
            lam_majorana_add(m, idx, (int)k, re, im, op->line[t]);
        }
    }
}

/* One monomial of Majoranas a, b, c, d (distinct) with a real or imaginary
 * coefficient, sorted with its sign, appended unindexed. */
static void append_sorted(lam_majorana_set *m, int *idx, int k, double re, double im)
{
    uint64_t rowbuf[8];
    uint64_t *row = m->nwords <= 8 ? rowbuf : lam_malloc((size_t)m->nwords * sizeof(uint64_t));
    int sign = reduce_monomial(idx, k, row, m->nwords);
    majorana_append(m, row, sign * re, sign * im, 0);
    if (row != rowbuf) free(row);
}

/* With h and (pq|rs) symmetric in p <-> q, E_pq can be replaced by its
 * symmetric part 1/2 delta_pq + (i/2) g_2p g_2q+1 (same spin) inside the
 * sums, and the normal-ordering correction folds into the one-body part.
 * The result, monomial by monomial (every one of them distinct, so no
 * merging is needed; a = g_2j, b = g_2j+1 of the mode j):
 *   identity        lam_spinfree_constant
 *   a_ps b_qs       (i/2) t_pq,  t_pq = h_pq + sum_r (pq|rr) - 1/2 sum_r (pr|rq)
 *   a_pu b_qu a_rd b_sd          -1/4 (pq|rs)                  (opposite spins)
 *   a_ps b_qs a_rs b_ss, p<r, q<s  -1/4 ((pq|rs) - (ps|rq))      (same spin)
 * These are the terms whose one-norm is the closed form of
 * lam_spinfree_lambda (norm.c). */
void lam_majorana_from_spinfree(const lam_spinfree *sf, lam_spin_order order,
                                lam_majorana_set *m)
{
    int n = sf->n;
    lam_majorana_init(m, 2 * n);
    int none[1];
    append_sorted(m, none, 0, lam_spinfree_constant(sf), 0.0);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) {
            double t = lam_spinfree_effective_one_body(sf, p, q);
            if (t == 0.0) continue;
            for (int s = 0; s < 2; ++s) {
                int idx[2] = {2 * lam_spin_mode(order, n, p, s),
                              2 * lam_spin_mode(order, n, q, s) + 1};
                append_sorted(m, idx, 2, 0.0, 0.5 * t);
            }
        }
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s) {
                    double g = LAM_G(sf, p, q, r, s);
                    if (g == 0.0) continue;
                    int idx[4] = {2 * lam_spin_mode(order, n, p, 0),
                                  2 * lam_spin_mode(order, n, q, 0) + 1,
                                  2 * lam_spin_mode(order, n, r, 1),
                                  2 * lam_spin_mode(order, n, s, 1) + 1};
                    append_sorted(m, idx, 4, -0.25 * g, 0.0);
                }
    for (int p = 0; p < n; ++p)
        for (int r = p + 1; r < n; ++r)
            for (int q = 0; q < n; ++q)
                for (int s = q + 1; s < n; ++s) {
                    double v = LAM_G(sf, p, q, r, s) - LAM_G(sf, p, s, r, q);
                    if (v == 0.0) continue;
                    for (int a = 0; a < 2; ++a) {
                        int idx[4] = {2 * lam_spin_mode(order, n, p, a),
                                      2 * lam_spin_mode(order, n, q, a) + 1,
                                      2 * lam_spin_mode(order, n, r, a),
                                      2 * lam_spin_mode(order, n, s, a) + 1};
                        append_sorted(m, idx, 4, -0.25 * v, 0.0);
                    }
                }
}

void lam_majorana_from_spinfree_any(const lam_spinfree *sf, lam_spin_order order,
                                    lam_majorana_set *m)
{
    if (lam_spinfree_is_real(sf)) {
        lam_majorana_from_spinfree(sf, order, m);
        return;
    }
    lam_fermion_op op;
    lam_fermion_from_spinfree(sf, order, &op);
    lam_majorana_from_fermion(&op, m);
    lam_fermion_free(&op);
}

int lam_majorana_degree(const lam_majorana_set *m, size_t t)
{
    const uint64_t *row = m->bits + t * (size_t)m->nwords;
    int d = 0;
    for (int w = 0; w < m->nwords; ++w) d += __builtin_popcountll(row[w]);
    return d;
}

/* Hermitian coefficients are real for degree 0,1 mod 4 and imaginary for
 * 2,3 mod 4, because (g_S)+ = (-1)^(k(k-1)/2) g_S. */
static int imaginary_phase(int degree) { return (degree % 4) >= 2; }

int lam_majorana_require_hermitian(lam_majorana_set *m, const char *src, lam_error *err)
{
    for (size_t t = 0; t < m->count; ++t) {
        double *wrong = imaginary_phase(lam_majorana_degree(m, t)) ? &m->re[t] : &m->im[t];
        if (fabs(*wrong) > 1e-12 * m->mass[t] && *wrong != 0.0)
            return lam_error_at(err, LAM_EX_DATA, src, m->line[t],
                                "the operator is not Hermitian: this term's conjugate is missing "
                                "or has another coefficient (anti-Hermitian part %.3g)",
                                fabs(*wrong));
        *wrong = 0.0;
    }
    return 0;
}

double lam_majorana_value(const lam_majorana_set *m, size_t t)
{
    return imaginary_phase(lam_majorana_degree(m, t)) ? m->im[t] : m->re[t];
}

double lam_majorana_constant(const lam_majorana_set *m)
{
    double sum = 0.0;
    for (size_t t = 0; t < m->count; ++t)
        if (lam_majorana_degree(m, t) == 0) sum += m->re[t];
    return sum;
}

/* ------------------------------------------------------------ streams */

int lam_fermion_relabel_spin(lam_fermion_op *op, lam_spin_order from, lam_spin_order to,
                             lam_error *err)
{
    if (from == to) return 0;
    if (op->nmodes % 2)
        return lam_error_set(err, LAM_EX_DATA,
                             "%d modes cannot be relabelled by spin (an odd count)", op->nmodes);
    int n = op->nmodes / 2;
    for (size_t i = 0; i < op->nops; ++i) {
        int j = (int)LAM_LADDER_MODE(op->ops[i]);
        int p = from == LAM_SPIN_INTERLEAVED ? j / 2 : j % n;
        int s = from == LAM_SPIN_INTERLEAVED ? j % 2 : j / n;
        int k = lam_spin_mode(to, n, p, s);
        op->ops[i] = LAM_LADDER_IS_CREATOR(op->ops[i]) ? LAM_CREATE(k) : LAM_ANNIHILATE(k);
    }
    return 0;
}

int lam_majorana_read(lam_reader *r, lam_kind kind, const lam_spin_order *order,
                      lam_majorana_set *m, lam_spin_order *used, lam_error *err)
{
    const char *src = lam_reader_name(r);
    lam_spin_order stream_order;
    memset(m, 0, sizeof *m);
    int rc = lam_reader_spin_order(r, LAM_SPIN_INTERLEAVED, &stream_order, err);
    if (rc) return rc;
    lam_spin_order out = order ? *order : stream_order;
    if (kind == LAM_KIND_SPINFREE) {
        lam_spinfree *sf;
        if ((rc = lam_spinfree_read(r, &sf, err)) != 0) return rc;
        if ((rc = lam_spinfree_validate(sf, src, NULL, err)) != 0) {
            lam_spinfree_free(sf);
            return rc;
        }
        lam_majorana_from_spinfree_any(sf, out, m);
        lam_spinfree_free(sf);
    } else if (kind == LAM_KIND_FERMION) {
        lam_fermion_op op;
        if ((rc = lam_fermion_read(r, &op, err)) != 0) return rc;
        rc = lam_fermion_relabel_spin(&op, stream_order, out, err);
        if (!rc) lam_majorana_from_fermion(&op, m);
        lam_fermion_free(&op);
        if (rc) return rc;
    } else {
        return lam_error_at(err, LAM_EX_DATA, src, 0,
                            "a %s stream cannot be read as fermion operators", lam_kind_name(kind));
    }
    if ((rc = lam_majorana_require_hermitian(m, src, err)) != 0) {
        lam_majorana_free(m);
        return rc;
    }
    *used = out;
    return 0;
}
