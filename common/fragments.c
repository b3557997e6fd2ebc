/* fragments.c - the fragments stream: rotated reflections and their LCU. */
#include "fragments.h"

#include <cblas.h>
#include <assert.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "norm.h"
#include "util.h"

#define MAX_ORBITALS 4096
#define MAX_FRAGMENTS 100000000L
/* A rotation read back from 17-digit text is orthogonal to ~1e-15; 1e-10
 * catches a missing or mistyped entry without rejecting honest rounding. */
#define ORTHO_TOL 1e-10

lam_fragments *lam_fragments_new(int n, int nfrag)
{
    assert(n >= 0 && nfrag >= 0); /* the reader and factor.c give sizes it checked */
    lam_fragments *fr = lam_calloc(1, sizeof *fr);
    fr->n = n;
    fr->nfrag = nfrag;
    fr->electrons = -1;
    size_t nn = lam_mul_size((size_t)n, (size_t)n);
    fr->rot = lam_calloc(lam_mul_size(nn, (size_t)nfrag), sizeof(double));
    for (int f = 0; f < nfrag; ++f)
        for (int p = 0; p < n; ++p) LAM_ROT(fr, f, p, p) = 1.0;
    return fr;
}

void lam_fragments_free(lam_fragments *fr)
{
    if (!fr) return;
    LAM_FREE_ALL(fr->rot, fr->terms, fr);
}

void lam_fragments_add(lam_fragments *fr, int frag, int a, int b, double c)
{
    /* callers pass what the reader or the factorization checked */
    assert(frag >= 0 && frag < fr->nfrag && a >= 0 && a < 2 * fr->n && b < 2 * fr->n && a != b);
    if (b >= 0 && b < a) {
        int t = a;
        a = b;
        b = t;
    }
    if (fr->count == fr->cap) {
        fr->cap = fr->cap ? 2 * fr->cap : 256;
        fr->terms = lam_realloc(fr->terms, lam_mul_size(fr->cap, sizeof *fr->terms));
    }
    fr->terms[fr->count++] = (lam_frag_term){c, frag, a, b};
}

static int term_order(const void *x, const void *y)
{
    const lam_frag_term *s = x, *t = y;
    if (s->frag != t->frag) return s->frag < t->frag ? -1 : 1;
    if (s->b < 0 || t->b < 0) /* single reflections before pairs */
        if ((s->b < 0) != (t->b < 0)) return s->b < 0 ? -1 : 1;
    if (s->a != t->a) return s->a < t->a ? -1 : 1;
    if (s->b != t->b) return s->b < t->b ? -1 : 1;
    return 0;
}

void lam_fragments_merge(lam_fragments *fr)
{
    if (fr->count == 0) return;
    qsort(fr->terms, fr->count, sizeof *fr->terms, term_order);
    size_t out = 0;
    for (size_t i = 0; i < fr->count; ++i) {
        if (out > 0 && term_order(&fr->terms[out - 1], &fr->terms[i]) == 0)
            fr->terms[out - 1].coef += fr->terms[i].coef;
        else
            fr->terms[out++] = fr->terms[i];
    }
    size_t kept = 0;
    for (size_t i = 0; i < out; ++i)
        if (fr->terms[i].coef != 0.0) fr->terms[kept++] = fr->terms[i];
    fr->count = kept;
}

/* ---- reading ---- */

int lam_fragments_parse_mode(const char *tok, int n)
{
    size_t len = strlen(tok);
    if (len < 2 || len > 12) return -1;
    char spin = tok[len - 1];
    if (spin != 'a' && spin != 'b') return -1;
    char digits[16];
    memcpy(digits, tok, len - 1);
    digits[len - 1] = '\0';
    long i;
    if (digits[0] < '0' || digits[0] > '9') return -1; /* no sign */
    if (lam_parse_long(digits, &i) != 0 || i < 0 || i >= (n > 0 ? n : MAX_ORBITALS))
        return -1;
    return (int)(2 * i + (spin == 'b'));
}

typedef struct {
    double x;
    long frag, p, i, line;
} held_rot;

typedef struct {
    lam_frag_term t;
    long line;
} held_term;

typedef struct {
    held_rot *rot;
    size_t nrot, caprot;
    held_term *term;
    size_t nterm, capterm;
    double constant;
    long max_frag, max_orb;
} held_body;

static int hold_rotation(lam_reader *r, const lam_line *ln, held_body *b, long n, long nfrag,
                         lam_error *err)
{
    if (ln->nfields != 4)
        return lam_reader_error(r, ln->line, err,
                                "a rotation line is 'x U fragment row column', not %d fields",
                                ln->nfields);
    int frag, p, i, rc;
    if ((rc = lam_reader_index(r, ln, 1, nfrag, "fragment", &frag, err)) ||
        (rc = lam_reader_index(r, ln, 2, n, "orbital", &p, err)) ||
        (rc = lam_reader_index(r, ln, 3, n, "orbital", &i, err)))
        return rc;
    held_rot h = {ln->coef, frag, p, i, ln->line};
    if (h.frag > b->max_frag) b->max_frag = h.frag;
    if (h.p > b->max_orb) b->max_orb = h.p;
    if (h.i > b->max_orb) b->max_orb = h.i;
    if (b->nrot == b->caprot) {
        b->caprot = b->caprot ? 2 * b->caprot : 256;
        b->rot = lam_realloc(b->rot, lam_mul_size(b->caprot, sizeof *b->rot));
    }
    b->rot[b->nrot++] = h;
    return 0;
}

static int mode_field(lam_reader *r, const lam_line *ln, int field, long n, int *mode,
                      lam_error *err)
{
    *mode = lam_fragments_parse_mode(ln->fields[field], (int)n);
    if (*mode < 0)
        return lam_reader_error(r, ln->line, err,
                                "'%s' is not a rotated spin orbital (like 3a or 3b, orbital "
                                "below %ld)",
                                ln->fields[field], n);
    return 0;
}

static int hold_reflection(lam_reader *r, const lam_line *ln, held_body *b, long n, long nfrag,
                           lam_error *err)
{
    if (ln->nfields != 3 && ln->nfields != 4)
        return lam_reader_error(r, ln->line, err,
                                "a reflection line is 'c R fragment 3a [1b]', not %d fields",
                                ln->nfields);
    held_term h;
    int rc;
    h.t.coef = ln->coef;
    h.t.b = -1;
    if ((rc = lam_reader_index(r, ln, 1, nfrag, "fragment", &h.t.frag, err)) ||
        (rc = mode_field(r, ln, 2, n, &h.t.a, err)) ||
        (ln->nfields == 4 && (rc = mode_field(r, ln, 3, n, &h.t.b, err))))
        return rc;
    h.line = ln->line;
    if (h.t.a == h.t.b)
        return lam_reader_error(r, ln->line, err,
                                "R R of the same spin orbital is the identity: put it in the "
                                "constant");
    if (h.t.b >= 0 && h.t.b < h.t.a) {
        int t = h.t.a;
        h.t.a = h.t.b;
        h.t.b = t;
    }
    int top = (h.t.b > h.t.a ? h.t.b : h.t.a) / 2;
    if (h.t.frag > b->max_frag) b->max_frag = h.t.frag;
    if (top > b->max_orb) b->max_orb = top;
    if (b->nterm == b->capterm) {
        b->capterm = b->capterm ? 2 * b->capterm : 256;
        b->term = lam_realloc(b->term, lam_mul_size(b->capterm, sizeof *b->term));
    }
    b->term[b->nterm++] = h;
    return 0;
}

static int hold_line(lam_reader *r, const lam_line *ln, held_body *b, long n, long nfrag,
                     lam_error *err)
{
    if (ln->nfields == 0) {
        b->constant += ln->coef;
        return 0;
    }
    if (strcmp(ln->fields[0], "U") == 0) return hold_rotation(r, ln, b, n, nfrag, err);
    if (strcmp(ln->fields[0], "R") == 0) return hold_reflection(r, ln, b, n, nfrag, err);
    return lam_reader_error(r, ln->line, err,
                            "a fragments line is 'c', 'x U f p i' or 'c R f 3a [1b]', "
                            "not '%s'",
                            ln->fields[0]);
}

/* Largest |U^T U - 1| of one fragment's rotation. */
static double orthogonality_error(const lam_fragments *fr, int f)
{
    int n = fr->n;
    double err = 0.0;
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) {
            double s = 0.0;
            for (int p = 0; p < n; ++p) s += LAM_ROT(fr, f, p, i) * LAM_ROT(fr, f, p, j);
            double d = fabs(s - (i == j));
            if (d > err) err = d;
        }
    return err;
}

static int place_rotations(lam_reader *r, lam_fragments *fr, const held_body *b, lam_error *err)
{
    size_t nn = (size_t)fr->n * fr->n;
    unsigned char *seen = lam_calloc(lam_mul_size(nn, (size_t)fr->nfrag), 1);
    unsigned char *given = lam_calloc((size_t)fr->nfrag, 1);
    int rc = 0;
    memset(fr->rot, 0, nn * (size_t)fr->nfrag * sizeof(double));
    for (size_t k = 0; k < b->nrot && !rc; ++k) {
        const held_rot *h = &b->rot[k];
        size_t at = ((size_t)h->frag * fr->n + (size_t)h->p) * fr->n + (size_t)h->i;
        if (seen[at]) {
            rc = lam_reader_error(r, h->line, err, "rotation entry U %ld %ld %ld given twice",
                                  h->frag, h->p, h->i);
            break;
        }
        seen[at] = 1;
        given[h->frag] = 1;
        fr->rot[at] = h->x;
    }
    for (int f = 0; f < fr->nfrag && !rc; ++f) {
        if (given[f]) continue;
        for (int p = 0; p < fr->n; ++p) LAM_ROT(fr, f, p, p) = 1.0;
    }
    free(seen);
    free(given);
    return rc;
}

static int check_rotations(lam_reader *r, const lam_fragments *fr, const held_body *b,
                           lam_error *err)
{
    unsigned char *used = lam_calloc((size_t)fr->nfrag + 1, 1);
    int rc = 0;
    for (size_t k = 0; k < b->nterm; ++k) used[b->term[k].t.frag] = 1;
    for (size_t k = 0; k < b->nrot; ++k) used[b->rot[k].frag] = 1;
    for (int f = 0; f < fr->nfrag && !rc; ++f) {
        if (!used[f]) continue;
        double e = orthogonality_error(fr, f);
        if (e > ORTHO_TOL)
            rc = lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), 0,
                              "the rotation of fragment %d is not orthogonal (largest |U^T U - 1| "
                              "= %.3g; a missing U line?)",
                              f, e);
    }
    free(used);
    return rc;
}

/* The fragments of the held body, sized n x nfrag, checked. */
static int build_fragments(lam_reader *r, const held_body *b, long n, long nfrag,
                           lam_fragments **out, lam_error *err)
{
    long electrons, ms2;
    int rc;
    *out = NULL;
    if ((rc = lam_reader_meta_long(r, "electrons", -1, 0, 2 * n, &electrons, err)) ||
        (rc = lam_reader_meta_long(r, "ms2", 0, -n, n, &ms2, err)))
        return rc;
    lam_fragments *fr = lam_fragments_new((int)n, (int)nfrag);
    fr->constant = b->constant;
    fr->electrons = (int)electrons;
    fr->ms2 = (int)ms2;
    if ((rc = place_rotations(r, fr, b, err)) || (rc = check_rotations(r, fr, b, err))) {
        lam_fragments_free(fr);
        return rc;
    }
    for (size_t k = 0; k < b->nterm; ++k)
        lam_fragments_add(fr, b->term[k].t.frag, b->term[k].t.a, b->term[k].t.b,
                          b->term[k].t.coef);
    lam_fragments_merge(fr);
    *out = fr;
    return 0;
}

int lam_fragments_read(lam_reader *r, lam_fragments **out, lam_error *err)
{
    long n, nfrag;
    int rc;
    *out = NULL;
    if ((rc = lam_reader_meta_long(r, "orbitals", -1, 0, MAX_ORBITALS, &n, err)) ||
        (rc = lam_reader_meta_long(r, "fragments", -1, 0, MAX_FRAGMENTS, &nfrag, err)))
        return rc;
    held_body b = {0};
    b.max_frag = b.max_orb = -1;
    lam_line ln;
    while ((rc = lam_reader_next(r, &ln, err)) == 1)
        if ((rc = hold_line(r, &ln, &b, n >= 0 ? n : MAX_ORBITALS,
                            nfrag >= 0 ? nfrag : MAX_FRAGMENTS, err)))
            break;
    if (n < 0) n = b.max_orb + 1;
    if (nfrag < 0) nfrag = b.max_frag + 1;
    if (!rc) rc = build_fragments(r, &b, n, nfrag, out, err);
    free(b.rot);
    free(b.term);
    return rc;
}

/* ---- writing ---- */

void lam_fragments_describe(const lam_fragments *fr, lam_meta *meta)
{
    lam_meta_setf(meta, "orbitals", "%d", fr->n);
    lam_meta_setf(meta, "fragments", "%d", fr->nfrag);
    if (fr->electrons >= 0) {
        lam_meta_setf(meta, "electrons", "%d", fr->electrons);
        lam_meta_setf(meta, "ms2", "%d", fr->ms2);
    } else {
        lam_meta_remove(meta, "electrons");
        lam_meta_remove(meta, "ms2");
    }
}

static void format_mode(char *buf, size_t size, int m)
{
    snprintf(buf, size, "%d%c", m / 2, m % 2 ? 'b' : 'a');
}

void lam_fragments_write_terms(lam_writer *w, const lam_fragments *fr)
{
    char rest[96], ma[24], mb[24];
    lam_writer_term(w, fr->constant, NULL);
    for (int f = 0; f < fr->nfrag; ++f)
        for (int p = 0; p < fr->n; ++p)
            for (int i = 0; i < fr->n; ++i) {
                double x = LAM_ROT(fr, f, p, i);
                if (x == 0.0) continue;
                snprintf(rest, sizeof rest, "U %d %d %d", f, p, i);
                lam_writer_term(w, x, rest);
            }
    for (size_t k = 0; k < fr->count; ++k) {
        const lam_frag_term *t = &fr->terms[k];
        format_mode(ma, sizeof ma, t->a);
        if (t->b < 0) {
            snprintf(rest, sizeof rest, "R %d %s", t->frag, ma);
        } else {
            format_mode(mb, sizeof mb, t->b);
            snprintf(rest, sizeof rest, "R %d %s %s", t->frag, ma, mb);
        }
        lam_writer_term(w, t->coef, rest);
    }
}

/* ---- figures ---- */

lam_fragments_stats lam_fragments_stats_of(const lam_fragments *fr)
{
    lam_fragments_stats s = {0};
    s.constant = fr->constant;
    s.fragments = fr->nfrag;
    s.orbitals = fr->n;
    s.lambda = lam_fragments_lambda(fr, -1);
    for (size_t k = 0; k < fr->count; ++k) s.max_coef = fmax(s.max_coef, fabs(fr->terms[k].coef));
    s.unitaries = fr->count;
    s.terms = fr->count + (fr->constant != 0.0);
    return s;
}

void lam_fragments_report(const lam_fragments *fr, lam_report *rep)
{
    lam_fragments_stats s = lam_fragments_stats_of(fr);
    lam_report_str(rep, "kind", lam_kind_name(LAM_KIND_FRAGMENTS));
    lam_report_int(rep, "terms", (long long)s.terms);
    lam_report_num(rep, "constant", s.constant);
    lam_report_num(rep, "lambda", s.lambda);
    lam_report_int(rep, "unitaries", (long long)s.unitaries);
    lam_report_int(rep, "fragments", s.fragments);
    lam_report_int(rep, "orbitals", s.orbitals);
    lam_report_int(rep, "qubits", 2LL * s.orbitals);
}

/* ---- back to the spin-free operator ---- */

/* Coefficients of one fragment in occupation numbers of its rotated spin
 * orbitals: constant + sum occ[m] n_m + sum pair[a][b] n_a n_b (a < b). */
typedef struct {
    double constant;
    double *occ;  /* 2n */
    double *pair; /* 2n x 2n, upper triangle used */
} occupation_form;

static void add_to_occupation_form(occupation_form *o, int m2, const lam_frag_term *t)
{
    /* R = 1 - 2 n;  R_a R_b = 1 - 2 n_a - 2 n_b + 4 n_a n_b. */
    o->constant += t->coef;
    o->occ[t->a] -= 2.0 * t->coef;
    if (t->b < 0) return;
    o->occ[t->b] -= 2.0 * t->coef;
    o->pair[(size_t)t->a * m2 + t->b] += 4.0 * t->coef;
}

static int spin_differs(double x, double y)
{
    return fabs(x - y) > 1e-12 * (1.0 + fabs(x) + fabs(y));
}

static int not_spin_free(const char *name, int f, lam_error *err)
{
    return lam_error_at(err, LAM_EX_DATA, name ? name : "-", 0,
                        "fragment %d is not spin-free (alpha and beta reflections carry "
                        "different coefficients)",
                        f);
}

/* The pair coefficient of n_(i s) n_(j t) whatever the order. */
static double pair_at(const occupation_form *o, int m2, int a, int b)
{
    return a < b ? o->pair[(size_t)a * m2 + b] : o->pair[(size_t)b * m2 + a];
}

/* Spin-summed diagonal tensors in the rotated basis: d[i] multiplies E_ii,
 * lam[i][j] is (ii|jj).  Fails when the spins do not agree. */
static int spin_sum(const occupation_form *o, int n, int f, const char *name, double *d,
                    double *lam, lam_error *err)
{
    int m2 = 2 * n;
    for (int i = 0; i < n; ++i) {
        if (spin_differs(o->occ[2 * i], o->occ[2 * i + 1])) return not_spin_free(name, f, err);
        d[i] = o->occ[2 * i];
        for (int j = 0; j < n; ++j) {
            if (i == j) {
                lam[i * n + i] = pair_at(o, m2, 2 * i, 2 * i + 1);
                continue;
            }
            double aa = pair_at(o, m2, 2 * i, 2 * j), bb = pair_at(o, m2, 2 * i + 1, 2 * j + 1);
            double ab = pair_at(o, m2, 2 * i, 2 * j + 1), ba = pair_at(o, m2, 2 * i + 1, 2 * j);
            if (spin_differs(aa, bb) || spin_differs(aa, ab) || spin_differs(aa, ba))
                return not_spin_free(name, f, err);
            lam[i * n + j] = aa;
        }
    }
    return 0;
}

/* h += U diag(d) U^T;  g += sum_ij lam_ij vec(u_i u_i^T) vec(u_j u_j^T)^T.
 * n_(i a) n_(j b) summed over spins is e_iijj for i != j and 1/2 e_iiii for
 * i = j, so lam_ij is exactly the rotated (ii|jj). */
static void rotate_back(lam_spinfree *sf, const lam_fragments *fr, int f, const double *d,
                        const double *lam)
{
    int n = fr->n;
    size_t nn = (size_t)n * n;
    double *v = lam_malloc(lam_mul_size(nn, (size_t)n) * sizeof(double));
    double *tmp = lam_malloc(lam_mul_size(nn, (size_t)n) * sizeof(double));
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int i = 0; i < n; ++i) {
                double x = LAM_ROT(fr, f, p, i) * LAM_ROT(fr, f, q, i);
                v[((size_t)p * n + q) * n + i] = x;
                LAM_H(sf, p, q) += d[i] * x;
            }
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, (int)nn, n, n, 1.0, v, n, lam, n,
                0.0, tmp, n);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, (int)nn, (int)nn, n, 1.0, tmp, n, v,
                n, 1.0, sf->g, (int)nn);
    free(v);
    free(tmp);
}

int lam_fragments_to_spinfree(const lam_fragments *fr, const char *name, lam_spinfree **out,
                              lam_error *err)
{
    int rc = 0;
    *out = NULL;
    int n = fr->n, m2 = 2 * n;
    lam_spinfree *sf = lam_spinfree_new(n);
    sf->electrons = fr->electrons;
    sf->ms2 = fr->ms2;
    sf->e0 = fr->constant;
    occupation_form o;
    o.occ = lam_malloc(lam_mul_size((size_t)m2, sizeof(double)));
    o.pair = lam_malloc(lam_mul_size(lam_mul_size((size_t)m2, (size_t)m2), sizeof(double)));
    double *d = lam_malloc(lam_mul_size((size_t)n, sizeof(double)));
    double *lam = lam_malloc(lam_mul_size(lam_mul_size((size_t)n, (size_t)n), sizeof(double)));
    size_t k = 0;
    for (int f = 0; f < fr->nfrag && !rc; ++f) {
        o.constant = 0.0;
        memset(o.occ, 0, (size_t)m2 * sizeof(double));
        memset(o.pair, 0, (size_t)m2 * m2 * sizeof(double));
        int any = 0;
        /* Terms are merged, hence sorted by fragment. */
        for (; k < fr->count && fr->terms[k].frag == f; ++k, any = 1)
            add_to_occupation_form(&o, m2, &fr->terms[k]);
        if (!any) continue;
        if ((rc = spin_sum(&o, n, f, name, d, lam, err))) break;
        sf->e0 += o.constant;
        rotate_back(sf, fr, f, d, lam);
    }
    LAM_FREE_ALL(o.occ, o.pair, d, lam);
    if (rc) {
        lam_spinfree_free(sf);
        return rc;
    }
    assert(k == fr->count); /* the terms were merged, hence sorted by fragment */
    *out = sf;
    return 0;
}
