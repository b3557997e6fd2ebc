/* spinfree.c - dense spin-free operators: storage, stream I/O, closed forms. */
#include "spinfree.h"

#include <assert.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

size_t lam_spinfree_bytes(int n)
{
    size_t nn = (size_t)n * (size_t)n;
    return lam_mul_size(nn * nn + nn, sizeof(double));
}

lam_spinfree *lam_spinfree_new(int n)
{
    /* the readers keep n in 0..4096; anything else is a caller's bug */
    assert(n >= 0 && n <= 4096);
    lam_spinfree *sf = lam_calloc(1, sizeof *sf);
    size_t nn = (size_t)n * (size_t)n;
    sf->n = n;
    sf->electrons = -1;
    sf->h = lam_calloc(nn, sizeof(double));
    sf->g = lam_calloc(lam_mul_size(nn, nn), sizeof(double));
    return sf;
}

void lam_spinfree_free(lam_spinfree *sf)
{
    if (!sf) return;
    LAM_FREE_ALL(sf->h, sf->g, sf);
}

lam_spinfree *lam_spinfree_clone(const lam_spinfree *sf)
{
    lam_spinfree *c = lam_spinfree_new(sf->n);
    size_t nn = (size_t)sf->n * (size_t)sf->n;
    c->electrons = sf->electrons;
    c->ms2 = sf->ms2;
    c->e0 = sf->e0;
    memcpy(c->h, sf->h, nn * sizeof(double));
    memcpy(c->g, sf->g, nn * nn * sizeof(double));
    return c;
}

void lam_spinfree_add_two(lam_spinfree *sf, int p, int q, int r, int s, double c)
{
    /* e_pqrs = e_rspq: spread the term over both so g keeps the symmetry;
     * for (pq) = (rs) both additions land on the same element, giving the
     * factor 2 of "1/2 (pq|rs) e_pqrs". */
    LAM_G(sf, p, q, r, s) += c;
    LAM_G(sf, r, s, p, q) += c;
}

/* ---- reading ---- */

typedef struct {
    double c;
    int nidx;
    int idx[4];
    long line;
} held_term;

static int field_count_ok(int n) { return n == 0 || n == 2 || n == 4; }

static void apply_term(lam_spinfree *sf, const held_term *t)
{
    if (t->nidx == 0)
        sf->e0 += t->c;
    else if (t->nidx == 2)
        LAM_H(sf, t->idx[0], t->idx[1]) += t->c;
    else
        lam_spinfree_add_two(sf, t->idx[0], t->idx[1], t->idx[2], t->idx[3], t->c);
}

static int parse_term(lam_reader *r, const lam_line *ln, long limit, held_term *t,
                      lam_error *err)
{
    if (!field_count_ok(ln->nfields))
        return lam_reader_error(r, ln->line, err,
                                "a spinfree term has 0, 2 or 4 orbital indices, not %d",
                                ln->nfields);
    t->c = ln->coef;
    t->nidx = ln->nfields;
    t->line = ln->line;
    int rc = 0;
    for (int i = 0; i < ln->nfields && !rc; ++i)
        rc = lam_reader_index(r, ln, i, limit, "orbital", &t->idx[i], err);
    return rc;
}

/* The terms after the header: into sf when the orbital count is known,
 * else held in *held until the largest index is. */
static int read_terms(lam_reader *r, long n, lam_spinfree *sf, held_term **held, size_t *nheld,
                      int *maxidx, lam_error *err)
{
    size_t cap = 0;
    lam_line ln;
    held_term t;
    int rc;
    while ((rc = lam_reader_next(r, &ln, err)) == 1) {
        if ((rc = parse_term(r, &ln, n >= 0 ? n : 4096, &t, err)) != 0) return rc;
        if (sf) {
            apply_term(sf, &t);
            continue;
        }
        for (int i = 0; i < t.nidx; ++i)
            if (t.idx[i] > *maxidx) *maxidx = t.idx[i];
        if (*nheld == cap) {
            cap = cap ? 2 * cap : 1024;
            *held = lam_realloc(*held, lam_mul_size(cap, sizeof **held));
        }
        (*held)[(*nheld)++] = t;
    }
    return rc;
}

int lam_spinfree_read_if_kind(lam_reader *r, lam_kind *kind, lam_spinfree **out, lam_error *err)
{
    *out = NULL;
    int rc = lam_reader_kind(r, kind, err);
    if (rc || *kind != LAM_KIND_SPINFREE) return rc;
    return lam_spinfree_read(r, out, err);
}

int lam_spinfree_read(lam_reader *r, lam_spinfree **out, lam_error *err)
{
    *out = NULL;
    long n, electrons, ms2;
    int rc = lam_reader_meta_long(r, "orbitals", -1, 0, 4096, &n, err);
    if (rc) return rc;
    lam_spinfree *sf = n >= 0 ? lam_spinfree_new((int)n) : NULL;
    held_term *held = NULL;
    size_t nheld = 0;
    int maxidx = -1;
    rc = read_terms(r, n, sf, &held, &nheld, &maxidx, err);
    if (!rc && !sf) {
        sf = lam_spinfree_new(maxidx + 1);
        for (size_t i = 0; i < nheld; ++i) apply_term(sf, &held[i]);
    }
    free(held);
    if (!rc) rc = lam_reader_meta_long(r, "electrons", -1, 0, 2L * sf->n, &electrons, err);
    if (!rc) rc = lam_reader_meta_long(r, "ms2", 0, -sf->n, sf->n, &ms2, err);
    if (rc) {
        lam_spinfree_free(sf);
        return rc;
    }
    sf->electrons = (int)electrons;
    sf->ms2 = (int)ms2;
    *out = sf;
    return 0;
}

int lam_spinfree_read_each(lam_reader *r, lam_spinfree_line_visit fn, void *ctx, int *norb,
                           lam_error *err)
{
    long n;
    int rc = lam_reader_meta_long(r, "orbitals", -1, 0, 4096, &n, err);
    if (rc) return rc;
    if (n < 0)
        return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0,
                            "term by term reading needs an 'orbitals:' line in the header");
    *norb = (int)n;
    lam_line ln;
    held_term t;
    while ((rc = lam_reader_next(r, &ln, err)) == 1) {
        if ((rc = parse_term(r, &ln, n, &t, err)) != 0) return rc;
        fn(ctx, t.c, t.nidx, t.idx, t.line);
    }
    return rc;
}

/* ---- writing ---- */

void lam_spinfree_format_indices(char *buf, size_t size, int nidx, const int *idx)
{
    int len = 0;
    buf[0] = '\0';
    for (int i = 0; i < nidx && (size_t)len < size; ++i)
        len += snprintf(buf + len, size - (size_t)len, "%s%d", i ? " " : "", idx[i]);
}

/* Coefficient of e_pqrs once the pair (pq),(rs) is merged into one line. */
static double merged_two(const lam_spinfree *sf, int p, int q, int r, int s)
{
    if (p == r && q == s) return 0.5 * LAM_G(sf, p, q, r, s);
    return 0.5 * (LAM_G(sf, p, q, r, s) + LAM_G(sf, r, s, p, q));
}

void lam_spinfree_foreach_term(const lam_spinfree *sf, lam_spinfree_visit fn, void *ctx)
{
    int n = sf->n;
    fn(ctx, sf->e0, 0, NULL);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            if (LAM_H(sf, p, q) != 0) fn(ctx, LAM_H(sf, p, q), 2, (int[]){p, q});
    for (int pq = 0; pq < n * n; ++pq)
        for (int rs = pq; rs < n * n; ++rs) {
            int p = pq / n, q = pq % n, r = rs / n, s = rs % n;
            double c = merged_two(sf, p, q, r, s);
            if (c != 0) fn(ctx, c, 4, (int[]){p, q, r, s});
        }
}

static void write_one(void *ctx, double c, int nidx, const int *idx)
{
    char rest[64];
    lam_spinfree_format_indices(rest, sizeof rest, nidx, idx);
    lam_writer_term(ctx, c, rest);
}

void lam_spinfree_write_terms(lam_writer *w, const lam_spinfree *sf)
{
    lam_spinfree_foreach_term(sf, write_one, w);
}

static void count_one(void *ctx, double c, int nidx, const int *idx)
{
    (void)c, (void)nidx, (void)idx;
    ++*(size_t *)ctx;
}

size_t lam_spinfree_term_count(const lam_spinfree *sf)
{
    size_t count = 0;
    lam_spinfree_foreach_term(sf, count_one, &count);
    return count;
}

void lam_spinfree_describe(const lam_spinfree *sf, lam_meta *meta)
{
    lam_meta_setf(meta, "orbitals", "%d", sf->n);
    if (sf->electrons >= 0) lam_meta_setf(meta, "electrons", "%d", sf->electrons);
    lam_meta_setf(meta, "ms2", "%d", sf->ms2);
}

/* ---- symmetry checks ---- */

static double one_body_asymmetry(const lam_spinfree *sf)
{
    double worst = 0;
    for (int p = 0; p < sf->n; ++p)
        for (int q = 0; q < p; ++q)
            worst = fmax(worst, fabs(LAM_H(sf, p, q) - LAM_H(sf, q, p)));
    return worst;
}

/* The largest |h_pq - h_qp| and |(pq|rs) - partner|, the partner being
 * (qp|sr) for Hermiticity (swap_rs) or (qp|rs) for real orbitals.  Both
 * relations are symmetric in the pair, so q <= p covers them. */
static double worst_pair_difference(const lam_spinfree *sf, int swap_rs)
{
    int n = sf->n;
    double worst = one_body_asymmetry(sf);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s) {
                    double partner = swap_rs ? LAM_G(sf, q, p, s, r) : LAM_G(sf, q, p, r, s);
                    worst = fmax(worst, fabs(LAM_G(sf, p, q, r, s) - partner));
                }
    return worst;
}

double lam_spinfree_hermiticity_error(const lam_spinfree *sf)
{
    return worst_pair_difference(sf, 1);
}

double lam_spinfree_real_symmetry_error(const lam_spinfree *sf)
{
    return worst_pair_difference(sf, 0);
}

/* ---- the validation policy ---- */

double lam_spinfree_scale(const lam_spinfree *sf)
{
    size_t nn = (size_t)sf->n * (size_t)sf->n;
    double big = 0.0;
    for (size_t i = 0; i < nn; ++i) big = fmax(big, fabs(sf->h[i]));
    for (size_t i = 0; i < nn * nn; ++i) big = fmax(big, fabs(sf->g[i]));
    return big;
}

static double symmetry_tol(const lam_spinfree *sf)
{
    return LAM_SPINFREE_SYMMETRY_TOL * lam_spinfree_scale(sf);
}

int lam_spinfree_is_real(const lam_spinfree *sf)
{
    return lam_spinfree_real_symmetry_error(sf) <= symmetry_tol(sf);
}

/* The first pair of entries that breaks h_pq = h_qp or (pq|rs) = (qp|sr)
 * beyond tol, named for the user. */
static int first_hermiticity_break(const lam_spinfree *sf, double tol, const char *file,
                                   lam_error *err)
{
    int n = sf->n;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            if (fabs(LAM_H(sf, p, q) - LAM_H(sf, q, p)) > tol)
                return lam_error_at(err, LAM_EX_DATA, file, 0,
                                    "the operator is not Hermitian: term '%d %d' has "
                                    "coefficient %.17g but '%d %d' has %.17g",
                                    p, q, LAM_H(sf, p, q), q, p, LAM_H(sf, q, p));
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s)
                    if (fabs(LAM_G(sf, p, q, r, s) - LAM_G(sf, q, p, s, r)) > tol)
                        return lam_error_at(err, LAM_EX_DATA, file, 0,
                                            "the operator is not Hermitian: (%d %d|%d %d) = "
                                            "%.17g but (%d %d|%d %d) = %.17g",
                                            p, q, r, s, LAM_G(sf, p, q, r, s), q, p, s, r,
                                            LAM_G(sf, q, p, s, r));
    return 0;
}

int lam_spinfree_validate(const lam_spinfree *sf, const char *file, const char *real_for,
                          lam_error *err)
{
    double tol = symmetry_tol(sf);
    if (first_hermiticity_break(sf, tol, file, err) != 0) return err->code;
    if (!real_for) return 0;
    double real = lam_spinfree_real_symmetry_error(sf);
    if (real > tol)
        return lam_error_at(err, LAM_EX_DATA, file, 0,
                            "the integrals lack the 8-fold symmetry of real orbitals "
                            "(largest violation %.3g Eh); %s needs it",
                            real, real_for);
    return 0;
}

/* ---- closed forms ---- */

double lam_spinfree_constant(const lam_spinfree *sf)
{
    int n = sf->n;
    double c = sf->e0;
    for (int p = 0; p < n; ++p) {
        c += LAM_H(sf, p, p);
        for (int r = 0; r < n; ++r)
            c += 0.5 * LAM_G(sf, p, p, r, r) - 0.25 * LAM_G(sf, p, r, r, p);
    }
    return c;
}

double lam_spinfree_effective_one_body(const lam_spinfree *sf, int p, int q)
{
    double t = LAM_H(sf, p, q);
    for (int r = 0; r < sf->n; ++r)
        t += LAM_G(sf, p, q, r, r) - 0.5 * LAM_G(sf, p, r, r, q);
    return t;
}
