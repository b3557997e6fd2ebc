/* shift.c - the symmetry shift: parameters, its operator, its L1 problem.
 *
 * Everything here rests on three affine maps from the parameters to the
 * coefficients of K over spin orbitals (spin s = +1/2 up, -1/2 down):
 *   one-body  k^s_pq   = (a1 + a2 + b1 s + b2 s^2) d_pq + (1 - N0) xi_pq
 *                        + (s - S0) zeta_pq
 *   two-body  k^st_pqrs (of 1/2 a+_ps a+_rt a_st a_qs)
 *                      = (2 a2 + 2 b2 s t) d_pq d_rs + (xi_pq + t zeta_pq) d_rs
 *                        + d_pq (xi_rs + s zeta_rs)
 *   and the one-body part of the Majorana form,
 *   T^s_pq = k^s_pq + 1/2 sum_rt k^st_pqrr - 1/2 sum_r k^ss_prrq
 *          = (a1 + 2 n a2 + tr xi + b1 s) d_pq + (n - N0) xi_pq - S0 zeta_pq
 * (n orbitals).  The spin sums vanish for the zeta and b2 parts of T
 * because the two spins cancel.
 */
#include "shift.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

/* ---- terms ---- */

static const struct {
    const char *name;
    unsigned bit;
} term_names[] = {
    {"a1", LAM_SHIFT_A1},     {"a2", LAM_SHIFT_A2},
    {"xi", LAM_SHIFT_XI},     {"xi-diag", LAM_SHIFT_XI_DIAG},
    {"b1", LAM_SHIFT_B1},     {"b2", LAM_SHIFT_B2},
    {"zeta", LAM_SHIFT_ZETA}, {"zeta-diag", LAM_SHIFT_ZETA_DIAG},
};

int lam_shift_parse_terms(const char *list, unsigned *mask)
{
    unsigned m = 0;
    const char *s = list;
    while (*s) {
        size_t len = strcspn(s, ",");
        int found = 0;
        for (size_t i = 0; i < sizeof term_names / sizeof term_names[0]; ++i)
            if (strlen(term_names[i].name) == len && strncmp(s, term_names[i].name, len) == 0) {
                m |= term_names[i].bit;
                found = 1;
            }
        if (!found) return -1;
        s += len;
        if (*s == ',') ++s;
    }
    *mask = m;
    return 0;
}

static void terms_to_string(unsigned mask, char *buf, size_t size)
{
    size_t len = 0;
    buf[0] = '\0';
    for (size_t i = 0; i < sizeof term_names / sizeof term_names[0]; ++i)
        if (mask & term_names[i].bit)
            len += (size_t)snprintf(buf + len, size - len, "%s%s", len ? "," : "",
                                    term_names[i].name);
}

/* ---- parameters ---- */

static int *symmetric_index(int n, int *next, int all, int diag)
{
    int *idx = lam_malloc(lam_mul_size((size_t)n * n + 1, sizeof *idx));
    for (int p = 0; p < n; ++p)
        for (int q = p; q < n; ++q) {
            int use = all || (diag && p == q);
            idx[p * n + q] = idx[q * n + p] = use ? (*next)++ : -1;
        }
    return idx;
}

lam_shift *lam_shift_new(int n, int electrons, int ms2, unsigned terms)
{
    lam_shift *k = lam_calloc(1, sizeof *k);
    k->n = n;
    k->electrons = electrons;
    k->ms2 = ms2;
    k->terms = terms;
    int next = 0;
    k->ia1 = terms & LAM_SHIFT_A1 ? next++ : -1;
    k->ia2 = terms & LAM_SHIFT_A2 ? next++ : -1;
    k->ixi = symmetric_index(n, &next, terms & LAM_SHIFT_XI, terms & LAM_SHIFT_XI_DIAG);
    k->ib1 = terms & LAM_SHIFT_B1 ? next++ : -1;
    k->ib2 = terms & LAM_SHIFT_B2 ? next++ : -1;
    k->izeta = symmetric_index(n, &next, terms & LAM_SHIFT_ZETA, terms & LAM_SHIFT_ZETA_DIAG);
    k->nparams = next;
    k->x = lam_calloc((size_t)next + 1, sizeof *k->x);
    return k;
}

void lam_shift_free(lam_shift *k)
{
    if (!k) return;
    LAM_FREE_ALL(k->ixi, k->izeta, k->x, k);
}

int lam_shift_has_spin(const lam_shift *k) { return (k->terms & LAM_SHIFT_SPIN_TERMS) != 0; }

static double value_at(const lam_shift *k, int idx) { return idx >= 0 ? k->x[idx] : 0; }
double lam_shift_a1(const lam_shift *k) { return value_at(k, k->ia1); }
double lam_shift_a2(const lam_shift *k) { return value_at(k, k->ia2); }
double lam_shift_b1(const lam_shift *k) { return value_at(k, k->ib1); }
double lam_shift_b2(const lam_shift *k) { return value_at(k, k->ib2); }
double lam_shift_xi(const lam_shift *k, int p, int q) { return value_at(k, k->ixi[p * k->n + q]); }
double lam_shift_zeta(const lam_shift *k, int p, int q)
{
    return value_at(k, k->izeta[p * k->n + q]);
}

static double target_sz(const lam_shift *k) { return 0.5 * k->ms2; }

double lam_shift_constant(const lam_shift *k)
{
    double n0 = k->electrons, s0 = target_sz(k);
    return -lam_shift_a1(k) * n0 - lam_shift_a2(k) * n0 * n0 - lam_shift_b1(k) * s0 -
           lam_shift_b2(k) * s0 * s0;
}

/* ---- affine forms: sum_i val[i] x[idx[i]] ---- */

typedef struct {
    int n, cap;
    int *idx;
    double *val;
} affine;

static void affine_init(affine *a, int cap)
{
    a->n = 0;
    a->cap = cap;
    a->idx = lam_malloc(lam_mul_size((size_t)cap, sizeof *a->idx));
    a->val = lam_malloc(lam_mul_size((size_t)cap, sizeof *a->val));
}

static void affine_free(affine *a)
{
    free(a->idx);
    free(a->val);
}

static void affine_add(affine *a, int idx, double v)
{
    if (idx < 0 || v == 0) return;
    for (int i = 0; i < a->n; ++i)
        if (a->idx[i] == idx) {
            a->val[i] += v;
            return;
        }
    if (a->n == a->cap) {
        a->cap *= 2;
        a->idx = lam_realloc(a->idx, lam_mul_size((size_t)a->cap, sizeof *a->idx));
        a->val = lam_realloc(a->val, lam_mul_size((size_t)a->cap, sizeof *a->val));
    }
    a->idx[a->n] = idx;
    a->val[a->n++] = v;
}

/* Drop entries that cancelled and sort by parameter, so that symmetric
 * elements evaluate in the same order and stay bitwise symmetric. */
static void affine_tidy(affine *a)
{
    int m = 0;
    for (int i = 0; i < a->n; ++i)
        if (a->val[i] != 0) {
            a->idx[m] = a->idx[i];
            a->val[m++] = a->val[i];
        }
    a->n = m;
    for (int i = 1; i < a->n; ++i)
        for (int j = i; j > 0 && a->idx[j - 1] > a->idx[j]; --j) {
            int ti = a->idx[j];
            a->idx[j] = a->idx[j - 1];
            a->idx[j - 1] = ti;
            double tv = a->val[j];
            a->val[j] = a->val[j - 1];
            a->val[j - 1] = tv;
        }
}

static double affine_eval(affine *a, const double *x)
{
    affine_tidy(a);
    double s = 0;
    for (int i = 0; i < a->n; ++i) s += a->val[i] * x[a->idx[i]];
    return s;
}

static double spin_of(int sigma) { return sigma == 0 ? 0.5 : -0.5; }

/* k^s_pq: one-body coefficient of K for spin sigma. */
static void one_body_form(const lam_shift *k, int sigma, int p, int q, affine *a)
{
    int n = k->n;
    double s = spin_of(sigma);
    if (p == q) {
        affine_add(a, k->ia1, 1);
        affine_add(a, k->ia2, 1);
        affine_add(a, k->ib1, s);
        affine_add(a, k->ib2, s * s);
    }
    affine_add(a, k->ixi[p * n + q], 1.0 - k->electrons);
    affine_add(a, k->izeta[p * n + q], s - target_sz(k));
}

/* k^st_pqrs: two-body coefficient of K (of 1/2 a+_ps a+_rt a_st a_qs). */
static void two_body_form(const lam_shift *k, int sigma, int tau, int p, int q, int r,
                          int s, double sign, affine *a)
{
    int n = k->n;
    double ss = spin_of(sigma), st = spin_of(tau);
    if (p == q && r == s) {
        affine_add(a, k->ia2, 2 * sign);
        affine_add(a, k->ib2, 2 * ss * st * sign);
    }
    if (r == s) {
        affine_add(a, k->ixi[p * n + q], sign);
        affine_add(a, k->izeta[p * n + q], st * sign);
    }
    if (p == q) {
        affine_add(a, k->ixi[r * n + s], sign);
        affine_add(a, k->izeta[r * n + s], ss * sign);
    }
}

/* T^s_pq of K: the one-body coefficient of its Majorana form. */
static void majorana_one_body_form(const lam_shift *k, int sigma, int p, int q, affine *a)
{
    int n = k->n;
    if (p == q) {
        affine_add(a, k->ia1, 1);
        affine_add(a, k->ia2, 2.0 * n);
        for (int r = 0; r < n; ++r) affine_add(a, k->ixi[r * n + r], 1);
        affine_add(a, k->ib1, spin_of(sigma));
    }
    affine_add(a, k->ixi[p * n + q], (double)(n - k->electrons));
    affine_add(a, k->izeta[p * n + q], -target_sz(k));
}

/* ---- the L1 problem ---- */

typedef struct {
    lam_l1_problem *lp;
    double fixed;
    int rc;           /* the first failure, its reason in *err */
    lam_error *err;
} lp_builder;

static void emit(lp_builder *b, double weight, double base, affine *a)
{
    affine_tidy(a);
    if (a->n == 0)
        b->fixed += weight * fabs(base);
    else if (!b->rc)
        b->rc = lam_l1_add_row(b->lp, weight, base, a->n, a->idx, a->val, b->err);
    a->n = 0;
}

static double majorana_one_body(const lam_spinfree *h, int p, int q)
{
    double t = LAM_H(h, p, q);
    for (int r = 0; r < h->n; ++r) t += LAM_G(h, p, q, r, r) - 0.5 * LAM_G(h, p, r, r, q);
    return t;
}

/* lambda = 1/2 sum_s sum_pq |T^s_pq|
 *        + 1/4 sum_pqrs |g^ud_pqrs|                       (opposite spins)
 *        + 1/4 sum_s sum_{p>r,q>s} |g^ss_pqrs - g^ss_psrq|  (equal spins)
 * over spin-resolved coefficients; without spin terms the two spins are
 * equal and are summed into one row each. */
int lam_shift_build_lp(const lam_spinfree *h, const lam_shift *k, lam_l1_problem *lp,
                       double *fixed, lam_error *err)
{
    int n = h->n;
    /* the callers make k for h: an internal error */
    if (n != k->n) return lam_error_set(err, LAM_EX_SOFTWARE, "shift: orbital counts differ");
    int spins = lam_shift_has_spin(k) ? 2 : 1;
    double wspin = spins == 2 ? 0.5 : 1.0;
    lam_l1_init(lp, k->nparams);
    lp_builder b = {lp, 0, 0, err};
    affine a;
    affine_init(&a, 2 * n + 16);

    for (int sigma = 0; sigma < spins; ++sigma)
        for (int p = 0; p < n; ++p)
            for (int q = 0; q < n; ++q) {
                majorana_one_body_form(k, sigma, p, q, &a);
                emit(&b, wspin, majorana_one_body(h, p, q), &a);
            }
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s) {
                    double g = LAM_G(h, p, q, r, s);
                    if (p != q && r != s) {
                        b.fixed += 0.25 * fabs(g);
                        continue;
                    }
                    two_body_form(k, 0, 1, p, q, r, s, 1, &a);
                    emit(&b, 0.25, g, &a);
                }
    for (int sigma = 0; sigma < spins; ++sigma)
        for (int p = 0; p < n; ++p)
            for (int r = 0; r < p; ++r)
                for (int q = 0; q < n; ++q)
                    for (int s = 0; s < q; ++s) {
                        double g = LAM_G(h, p, q, r, s) - LAM_G(h, p, s, r, q);
                        if (p != q && r != s && p != s && r != q) {
                            b.fixed += 0.5 * wspin * fabs(g);
                            continue;
                        }
                        two_body_form(k, sigma, sigma, p, q, r, s, 1, &a);
                        two_body_form(k, sigma, sigma, p, s, r, q, -1, &a);
                        emit(&b, 0.5 * wspin, g, &a);
                    }
    affine_free(&a);
    if (b.rc) {
        lam_l1_free(lp);
        return b.rc;
    }
    /* the symmetries of the integrals repeat most rows two to eight times */
    lam_l1_merge_rows(lp);
    *fixed = b.fixed;
    return 0;
}

int lam_shift_optimize(const lam_spinfree *h, lam_shift *k, double *fixed, lam_l1_result *res, lam_error *err)
{
    lam_l1_problem lp;
    if (lam_shift_build_lp(h, k, &lp, fixed, err)) return err->code;
    lam_l1_options lo;
    lam_l1_default_options(&lo);
    lo.offset = *fixed;
    int rc = lam_l1_solve(&lp, &lo, NULL, NULL, k->x, res, err);
    lam_l1_free(&lp);
    return rc;
}

/* ---- the operators ---- */

/* out += sign * K */
static int add_shift(lam_spinfree *out, const lam_shift *k, double sign, lam_error *err)
{
    /* the callers ask lam_shift_has_spin first: an internal error */
    if (lam_shift_has_spin(k))
        return lam_error_set(err, LAM_EX_SOFTWARE, "shift: spin terms make a spin-free form impossible");
    int n = k->n;
    affine a;
    affine_init(&a, 2 * n + 16);
    out->e0 += sign * lam_shift_constant(k);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) {
            a.n = 0;
            one_body_form(k, 0, p, q, &a);
            LAM_H(out, p, q) += sign * affine_eval(&a, k->x);
        }
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s) {
                    if (p != q && r != s) continue;
                    a.n = 0;
                    two_body_form(k, 0, 1, p, q, r, s, 1, &a);
                    LAM_G(out, p, q, r, s) += sign * affine_eval(&a, k->x);
                }
    affine_free(&a);
    return 0;
}

int lam_shift_apply(const lam_spinfree *h, const lam_shift *k, lam_spinfree **result, lam_error *err)
{
    lam_spinfree *out;
    *result = NULL;
    if (h) {
        out = lam_spinfree_clone(h);
    } else {
        out = lam_spinfree_new(k->n);
        out->electrons = k->electrons;
        out->ms2 = k->ms2;
    }
    if (add_shift(out, k, h ? -1 : 1, err)) {
        lam_spinfree_free(out);
        return err->code;
    }
    *result = out;
    return 0;
}

int lam_shift_subtract(lam_spinfree *h, const lam_shift *k, lam_error *err) { return add_shift(h, k, -1, err); }

void lam_shift_apply_fermion(const lam_spinfree *h, const lam_shift *k,
                             lam_spin_order order, lam_fermion_op *out)
{
    int n = k->n;
    double sign = h ? -1 : 1;
    lam_fermion_op raw;
    lam_fermion_init(&raw, 2 * n);
    affine a;
    affine_init(&a, 2 * n + 16);
    double e0 = (h ? h->e0 : 0) + sign * lam_shift_constant(k);
    lam_fermion_add(&raw, e0, NULL, 0, 0);
    for (int sigma = 0; sigma < 2; ++sigma)
        for (int p = 0; p < n; ++p)
            for (int q = 0; q < n; ++q) {
                a.n = 0;
                one_body_form(k, sigma, p, q, &a);
                double c = (h ? LAM_H(h, p, q) : 0) + sign * affine_eval(&a, k->x);
                int32_t ops[2] = {LAM_CREATE(lam_spin_mode(order, n, p, sigma)),
                                  LAM_ANNIHILATE(lam_spin_mode(order, n, q, sigma))};
                if (c != 0) lam_fermion_add(&raw, c, ops, 2, 0);
            }
    for (int sigma = 0; sigma < 2; ++sigma)
        for (int tau = 0; tau < 2; ++tau)
            for (int p = 0; p < n; ++p)
                for (int q = 0; q < n; ++q)
                    for (int r = 0; r < n; ++r)
                        for (int s = 0; s < n; ++s) {
                            a.n = 0;
                            two_body_form(k, sigma, tau, p, q, r, s, 1, &a);
                            double c = (h ? LAM_G(h, p, q, r, s) : 0) +
                                       sign * affine_eval(&a, k->x);
                            if (c == 0) continue;
                            int32_t ops[4] = {LAM_CREATE(lam_spin_mode(order, n, p, sigma)),
                                              LAM_CREATE(lam_spin_mode(order, n, r, tau)),
                                              LAM_ANNIHILATE(lam_spin_mode(order, n, s, tau)),
                                              LAM_ANNIHILATE(lam_spin_mode(order, n, q, sigma))};
                            lam_fermion_add(&raw, 0.5 * c, ops, 4, 0);
                        }
    affine_free(&a);
    lam_fermion_normal_order(&raw, out);
    lam_fermion_free(&raw);
}

/* ---- metadata ---- */

static void remove_shift_keys(lam_meta *meta)
{
    for (;;) {
        const char *found = NULL;
        for (size_t i = 0; i < meta->count; ++i)
            if (strncmp(meta->items[i].key, "shift-", 6) == 0) {
                found = meta->items[i].key;
                break;
            }
        if (!found) return;
        char *key = lam_strdup(found);
        lam_meta_remove(meta, key);
        free(key);
    }
}

static void add_number(lam_meta *meta, const char *key, double v)
{
    char buf[LAM_DOUBLE_BUF];
    lam_format_double(buf, sizeof buf, v);
    lam_meta_add(meta, key, buf);
}

static void add_matrix(lam_meta *meta, const char *key, const lam_shift *k, const int *idx)
{
    int n = k->n;
    for (int p = 0; p < n; ++p)
        for (int q = p; q < n; ++q) {
            double v = value_at(k, idx[p * n + q]);
            if (v == 0) continue;
            char buf[LAM_DOUBLE_BUF], line[LAM_DOUBLE_BUF + 32];
            lam_format_double(buf, sizeof buf, v);
            snprintf(line, sizeof line, "%d %d %s", p, q, buf);
            lam_meta_add(meta, key, line);
        }
}

void lam_shift_describe(const lam_shift *k, lam_meta *meta)
{
    remove_shift_keys(meta);
    char terms[128];
    terms_to_string(k->terms, terms, sizeof terms);
    lam_meta_add(meta, "shift-terms", terms);
    lam_meta_setf(meta, "shift-electrons", "%d", k->electrons);
    if (lam_shift_has_spin(k)) lam_meta_setf(meta, "shift-ms2", "%d", k->ms2);
    add_number(meta, "shift-a1", lam_shift_a1(k));
    add_number(meta, "shift-a2", lam_shift_a2(k));
    add_matrix(meta, "shift-xi", k, k->ixi);
    if (lam_shift_has_spin(k)) {
        add_number(meta, "shift-b1", lam_shift_b1(k));
        add_number(meta, "shift-b2", lam_shift_b2(k));
        add_matrix(meta, "shift-zeta", k, k->izeta);
    }
}

/* ---- fermion input ---- */

typedef struct {
    int n;
    lam_spin_order order;
    const char *src;
    /* the work arrays, freed before a failure so that nothing leaks */
    lam_fermion_op op;
    lam_spinfree *sf;
    double *t[2], *same[2];
    long *same_line[2];
} fold_work;

static void orbital_of(const fold_work *fw, int mode, int *p, int *spin)
{
    if (fw->order == LAM_SPIN_INTERLEAVED) {
        *p = mode / 2;
        *spin = mode % 2;
    } else {
        *p = mode % fw->n;
        *spin = mode / fw->n;
    }
}

static void fold_free(fold_work *fw)
{
    for (int sp = 0; sp < 2; ++sp) {
        LAM_FREE_ALL(fw->t[sp], fw->same[sp], fw->same_line[sp]);
    }
    lam_fermion_free(&fw->op);
}

static int not_spin_free(fold_work *fw, long line, const char *why, lam_error *err)
{
    fold_free(fw);
    lam_spinfree_free(fw->sf);
    return lam_error_at(err, LAM_EX_DATA, fw->src, line, "the operator is not spin-free: %s", why);
}

static size_t idx4(int n, int p, int q, int r, int s)
{
    return (((size_t)p * n + q) * n + r) * n + s;
}

/* Opposite-spin pairs fix every (pq|rs): c a+_x a+_y a_z a_w, brought to
 * the order a+_(p up) a+_(r down) a_(s down) a_(q up), is (pq|rs) of
 * 1/2 sum (pq|rs) e_pqrs.  Equal-spin pairs are then checked against
 * (pw|yz) - (pz|yw), which is what a spin-free operator gives them. */
int lam_shift_fold_fermion(const lam_fermion_op *in, lam_spin_order order, const char *src,
                           lam_spinfree **out, lam_error *err)
{
    *out = NULL;
    if (in->nmodes % 2 != 0)
        return lam_error_at(err, LAM_EX_DATA, src, 0,
                            "the operator is not spin-free: an odd number of modes (%d)", in->nmodes);
    fold_work fw;
    memset(&fw, 0, sizeof fw);
    lam_fermion_normal_order(in, &fw.op);
    int n = fw.op.nmodes / 2;
    fw.n = n;
    fw.order = order;
    fw.src = src;
    fw.sf = lam_spinfree_new(n);
    lam_spinfree *sf = fw.sf;
    const lam_fermion_op *op = &fw.op;
    size_t n4 = (size_t)n * n * n * n;
    for (int sp = 0; sp < 2; ++sp) {
        fw.t[sp] = lam_calloc((size_t)n * n + 1, sizeof(double));
        fw.same[sp] = lam_calloc(n4 + 1, sizeof(double));
        fw.same_line[sp] = lam_calloc(n4 + 1, sizeof(long));
    }
    double big = 0;
    for (size_t k = 0; k < op->count; ++k) {
        const int32_t *o = op->ops + op->first[k];
        size_t len = lam_fermion_length(op, k);
        double c = op->coef[k];
        big = fmax(big, fabs(c));
        if (len == 0) {
            sf->e0 += c;
            continue;
        }
        int cre = 0;
        for (size_t i = 0; i < len; ++i) cre += LAM_LADDER_IS_CREATOR(o[i]) ? 1 : 0;
        if ((len != 2 && len != 4) || 2 * (size_t)cre != len)
            return not_spin_free(&fw, op->line[k], "a term that is not a+ a or a+ a+ a a", err);
        int p[4], s[4];
        for (size_t i = 0; i < len; ++i) orbital_of(&fw, LAM_LADDER_MODE(o[i]), &p[i], &s[i]);
        if (len == 2) {
            if (s[0] != s[1]) return not_spin_free(&fw, op->line[k], "a term that flips a spin", err);
            fw.t[s[0]][p[0] * n + p[1]] += c;
            continue;
        }
        /* a+_0 a+_1 a_2 a_3 */
        if (s[0] + s[1] != s[2] + s[3])
            return not_spin_free(&fw, op->line[k], "a term that changes Sz", err);
        if (s[0] == s[1]) {
            if (s[2] != s[0]) return not_spin_free(&fw, op->line[k], "a term that flips spins", err);
            /* creators descend and annihilators ascend in mode, hence in
             * orbital within one spin */
            size_t i = idx4(n, p[0], p[1], p[2], p[3]);
            fw.same[s[0]][i] += c;
            if (!fw.same_line[s[0]][i]) fw.same_line[s[0]][i] = op->line[k];
            continue;
        }
        int up_c = s[0] == 0 ? 0 : 1, dn_c = 1 - up_c;
        int up_a = s[2] == 0 ? 2 : 3, dn_a = 5 - up_a;
        double sign = (up_c == 0 ? 1 : -1) * (dn_a == 2 ? 1 : -1);
        LAM_G(sf, p[up_c], p[up_a], p[dn_c], p[dn_a]) += sign * c;
    }
    double tol = 1e-12 * fmax(big, 1e-300);
    for (int i = 0; i < n * n; ++i) {
        if (fabs(fw.t[0][i] - fw.t[1][i]) > tol)
            return not_spin_free(&fw, 0, "the one-body terms of the two spins differ", err);
        sf->h[i] = 0.5 * (fw.t[0][i] + fw.t[1][i]);
    }
    for (int a = 0; a < n; ++a)
        for (int b = 0; b < n; ++b)
            for (int c = 0; c < n; ++c)
                for (int d = 0; d < n; ++d)
                    if (fabs(LAM_G(sf, a, b, c, d) - LAM_G(sf, c, d, a, b)) > tol)
                        return not_spin_free(&fw, 0, "up-down and down-up pair terms differ", err);
    for (int sp = 0; sp < 2; ++sp)
        for (int x = 0; x < n; ++x)
            for (int y = 0; y < x; ++y)
                for (int z = 0; z < n; ++z)
                    for (int w = z + 1; w < n; ++w) {
                        size_t i = idx4(n, x, y, z, w);
                        double want = LAM_G(sf, x, w, y, z) - LAM_G(sf, x, z, y, w);
                        if (fabs(fw.same[sp][i] - want) > tol) {
                            char why[160];
                            snprintf(why, sizeof why,
                                     "equal-spin pair term (orbitals %d %d %d %d, spin %s) is "
                                     "%.6g, its opposite-spin terms imply %.6g",
                                     x, y, z, w, sp ? "down" : "up", fw.same[sp][i], want);
                            return not_spin_free(&fw, fw.same_line[sp][i], why, err);
                        }
                    }
    fold_free(&fw);
    *out = sf;
    return 0;
}

/* ---- an earlier shift recorded in the metadata ---- */

static int bad_record(const char *src, const lam_meta_entry *e, const char *why, lam_error *err)
{
    return lam_error_at(err, LAM_EX_DATA, src, e->line, "%s: %s '%s'", why, e->key, e->value);
}

static int record_matrix(const char *src, const lam_meta_entry *e, lam_shift *k, int *idx, lam_error *err)
{
    char buf[256];
    snprintf(buf, sizeof buf, "%s", e->value);
    char *save = NULL, *tp = strtok_r(buf, " \t", &save), *tq = strtok_r(NULL, " \t", &save);
    char *tv = strtok_r(NULL, " \t", &save);
    long p, q;
    double v;
    if (!tp || !tq || !tv || strtok_r(NULL, " \t", &save) || lam_parse_long(tp, &p) != 0 ||
        lam_parse_long(tq, &q) != 0 || lam_parse_double(tv, &v) != 0)
        return bad_record(src, e, "want 'p q value'", err);
    if (p < 0 || q < 0 || p >= k->n || q >= k->n) return bad_record(src, e, "orbital out of range", err);
    if (idx[p * k->n + q] < 0) return bad_record(src, e, "not among shift-terms", err);
    k->x[idx[p * k->n + q]] += v;
    return 0;
}

/* One shift-* entry into k. */
static int record_entry(const char *src, const lam_meta_entry *e, lam_shift *k, lam_error *err)
{
    int *slot = NULL;
    if (strcmp(e->key, "shift-a1") == 0) slot = &k->ia1;
    else if (strcmp(e->key, "shift-a2") == 0) slot = &k->ia2;
    else if (strcmp(e->key, "shift-b1") == 0) slot = &k->ib1;
    else if (strcmp(e->key, "shift-b2") == 0) slot = &k->ib2;
    if (slot) {
        double v;
        if (lam_parse_double(e->value, &v) != 0) return bad_record(src, e, "not a number", err);
        if (*slot < 0 && v != 0) return bad_record(src, e, "not among shift-terms", err);
        if (*slot >= 0) k->x[*slot] += v;
    } else if (strcmp(e->key, "shift-xi") == 0) {
        return record_matrix(src, e, k, k->ixi, err);
    } else if (strcmp(e->key, "shift-zeta") == 0) {
        return record_matrix(src, e, k, k->izeta, err);
    }
    return 0;
}

int lam_shift_recorded(const lam_meta *meta, int n, const char *src, lam_shift **out, lam_error *err)
{
    *out = NULL;
    const lam_meta_entry *terms = lam_meta_find(meta, "shift-terms");
    if (!terms) return 0;
    unsigned mask;
    if (lam_shift_parse_terms(terms->value, &mask) != 0) return bad_record(src, terms, "unknown terms", err);
    const lam_meta_entry *ne = lam_meta_find(meta, "shift-electrons");
    const lam_meta_entry *se = lam_meta_find(meta, "shift-ms2");
    long n0 = -1, ms2 = 0;
    if (!ne || lam_parse_long(ne->value, &n0) != 0 || n0 < 0 || n0 > 2L * n)
        return lam_error_at(err, LAM_EX_DATA, src, terms->line, "shift-terms without a valid shift-electrons");
    if (se && (lam_parse_long(se->value, &ms2) != 0 || labs(ms2) > 2L * n))
        return bad_record(src, se, "not a spin projection", err);
    lam_shift *k = lam_shift_new(n, (int)n0, (int)ms2, mask);
    for (size_t i = 0; i < meta->count; ++i)
        if (record_entry(src, &meta->items[i], k, err)) {
            lam_shift_free(k);
            return err->code;
        }
    *out = k;
    return 0;
}

lam_shift *lam_shift_sum(const lam_shift *a, const lam_shift *b)
{
    lam_shift *s = lam_shift_new(a->n, a->electrons, a->ms2, a->terms | b->terms);
    const lam_shift *parts[2] = {a, b};
    for (int i = 0; i < 2; ++i) {
        const lam_shift *k = parts[i];
        if (s->ia1 >= 0) s->x[s->ia1] += lam_shift_a1(k);
        if (s->ia2 >= 0) s->x[s->ia2] += lam_shift_a2(k);
        if (s->ib1 >= 0) s->x[s->ib1] += lam_shift_b1(k);
        if (s->ib2 >= 0) s->x[s->ib2] += lam_shift_b2(k);
        for (int p = 0; p < s->n; ++p)
            for (int q = p; q < s->n; ++q) {
                if (s->ixi[p * s->n + q] >= 0) s->x[s->ixi[p * s->n + q]] += lam_shift_xi(k, p, q);
                if (s->izeta[p * s->n + q] >= 0)
                    s->x[s->izeta[p * s->n + q]] += lam_shift_zeta(k, p, q);
            }
    }
    return s;
}
