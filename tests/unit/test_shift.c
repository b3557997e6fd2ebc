/* test_shift.c - the shift's L1 rows against one-norms computed without
 * them: the spin-free closed form of the shifted operator
 * (lam_spinfree_lambda, Koridon et al., PRR 3, 033127 (2021)) and, with
 * spin terms, the merged Majorana expansion of its ladder terms. */
#include <stdlib.h>
#include <string.h>

#include "fermion.h"
#include "lp.h"
#include "norm.h"
#include "shift.h"
#include "tap.h"

/* A library failure here is a failed test, with its message. */
static lam_error lib_err;
static void must(int rc)
{
    if (rc) tap_ok(0, lib_err.msg);
}
#include "testops.h"

static unsigned long long rng_state = 0x9E3779B97F4A7C15ULL;
static double uniform(void) { return test_uniform(&rng_state); }

/* Random operator with the 8-fold symmetry of real integrals. */
static lam_spinfree *random_operator(int n, int electrons)
{
    return test_random_real_operator(n, electrons, &rng_state);
}

static void randomize(lam_shift *k)
{
    for (int j = 0; j < k->nparams; ++j) k->x[j] = 0.5 * uniform();
}

static void rows_match_closed_form(int n, int electrons, unsigned terms, const char *what)
{
    lam_spinfree *h = random_operator(n, electrons);
    lam_shift *k = lam_shift_new(n, electrons, 0, terms);
    lam_l1_problem lp;
    double fixed;
    must(lam_shift_build_lp(h, k, &lp, &fixed, &lib_err));
    char name[160];
    snprintf(name, sizeof name, "%s: rows at x = 0 give lambda(H)", what);
    tap_near(fixed + lam_l1_objective(&lp, k->x), lam_spinfree_lambda(h), 1e-12, name);
    for (int trial = 0; trial < 3; ++trial) {
        randomize(k);
        lam_spinfree *hk;
        must(lam_shift_apply(h, k, &hk, &lib_err));
        snprintf(name, sizeof name, "%s: rows at random x give lambda(H - K)", what);
        tap_near(fixed + lam_l1_objective(&lp, k->x), lam_spinfree_lambda(hk), 1e-12, name);
        snprintf(name, sizeof name, "%s: H - K keeps the real 8-fold symmetry", what);
        tap_ok(lam_spinfree_real_symmetry_error(hk) == 0 &&
                   lam_spinfree_hermiticity_error(hk) == 0, name);
        lam_spinfree_free(hk);
    }
    lam_l1_free(&lp);
    lam_shift_free(k);
    lam_spinfree_free(h);
}

/* K as a spin-free operator against K built from its definition:
 * a1 (N - N0) + a2 (N^2 - N0^2) + sum xi_pq E_pq (N - N0), using only
 * E_pq E_rs = e_pqrs + d_qr E_ps (common practice, the definition of
 * e_pqrs). */
static void operator_matches_definition(void)
{
    int n = 3, n0 = 2;
    lam_shift *k = lam_shift_new(n, n0, 0, LAM_SHIFT_DEFAULT);
    randomize(k);
    lam_spinfree *kk;
    must(lam_shift_apply(NULL, k, &kk, &lib_err));
    lam_spinfree *ref = lam_spinfree_new(n);
    double a1 = lam_shift_a1(k), a2 = lam_shift_a2(k);
    ref->e0 = -a1 * n0 - a2 * n0 * n0;
    for (int p = 0; p < n; ++p) {
        LAM_H(ref, p, p) += a1 + a2; /* a1 N, and N^2 = sum e_pprr + N */
        for (int r = 0; r < n; ++r) lam_spinfree_add_two(ref, p, p, r, r, a2);
    }
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) {
            double xi = lam_shift_xi(k, p, q);
            /* xi E_pq N = xi sum_r (e_pqrr + d_qr E_pr) */
            LAM_H(ref, p, q) += xi * (1 - n0);
            for (int r = 0; r < n; ++r) {
                LAM_G(ref, p, q, r, r) += xi;
                LAM_G(ref, r, r, p, q) += xi;
            }
        }
    double worst = fabs(kk->e0 - ref->e0);
    for (int i = 0; i < n * n; ++i) worst = fmax(worst, fabs(kk->h[i] - ref->h[i]));
    for (int i = 0; i < n * n * n * n; ++i) worst = fmax(worst, fabs(kk->g[i] - ref->g[i]));
    tap_near(worst, 0, 1e-14, "K in spin-free form equals its definition");
    lam_spinfree_free(ref);
    lam_spinfree_free(kk);
    lam_shift_free(k);
}

static double majorana_lambda_of(const lam_fermion_op *op)
{
    lam_majorana_set m;
    lam_majorana_init(&m, op->nmodes);
    lam_majorana_from_fermion(op, &m);
    lam_error err;
    if (lam_majorana_require_hermitian(&m, "test", &err)) printf("# %s\n", err.msg);
    double l = lam_majorana_lambda(&m);
    lam_majorana_free(&m);
    return l;
}

/* With spin terms the rows use a spin-resolved closed form; the merged
 * Majorana expansion of the ladder terms knows nothing of it. */
static void spin_rows_match_majorana(int ms2)
{
    int n = 3, n0 = 3;
    lam_spinfree *h = random_operator(n, n0);
    lam_shift *k = lam_shift_new(n, n0, ms2, LAM_SHIFT_DEFAULT | LAM_SHIFT_SPIN_DEFAULT);
    lam_l1_problem lp;
    double fixed;
    must(lam_shift_build_lp(h, k, &lp, &fixed, &lib_err));
    for (int trial = 0; trial < 2; ++trial) {
        randomize(k);
        lam_fermion_op op;
        lam_shift_apply_fermion(h, k, LAM_SPIN_INTERLEAVED, &op);
        double want = majorana_lambda_of(&op);
        char name[96];
        snprintf(name, sizeof name, "spin terms (2Sz = %d): rows give the Majorana lambda", ms2);
        tap_near(fixed + lam_l1_objective(&lp, k->x), want, 1e-12 * want, name);
        lam_fermion_free(&op);
    }
    /* and with x = 0 the fermion form is H itself */
    memset(k->x, 0, (size_t)k->nparams * sizeof *k->x);
    lam_fermion_op op;
    lam_shift_apply_fermion(h, k, LAM_SPIN_BLOCKED, &op);
    tap_near(majorana_lambda_of(&op), lam_spinfree_lambda(h), 1e-12, "x = 0: fermion form has lambda(H)");
    lam_fermion_free(&op);
    lam_l1_free(&lp);
    lam_shift_free(k);
    lam_spinfree_free(h);
}

/* The optimum never exceeds lambda(H) (x = 0 is feasible) and the
 * solver's certificate brackets the value of the operator it returns. */
static void optimum_brackets(void)
{
    lam_spinfree *h = random_operator(5, 4);
    lam_shift *k = lam_shift_new(5, 4, 0, LAM_SHIFT_DEFAULT);
    double fixed;
    lam_l1_result res;
    must(lam_shift_optimize(h, k, &fixed, &res, &lib_err));
    lam_spinfree *hk;
    must(lam_shift_apply(h, k, &hk, &lib_err));
    double after = lam_spinfree_lambda(hk);
    tap_ok(res.converged, "random 5-orbital operator: solver converged");
    tap_ok(after < lam_spinfree_lambda(h), "shift lowers lambda");
    tap_near(after, fixed + res.primal, 1e-12 * after, "returned operator has the primal value");
    tap_ok(fixed + res.dual <= after && after - (fixed + res.dual) <= 1e-10 * after,
           "certified gap below 1e-10 relative");
    lam_spinfree_free(hk);
    lam_shift_free(k);
    lam_spinfree_free(h);
}

/* The callers' mistakes come back as internal errors (code 70), with
 * nothing allocated left behind. */
static void misuse_returns(void)
{
    lam_spinfree *h = random_operator(3, 2);
    lam_shift *spin = lam_shift_new(3, 2, 0, LAM_SHIFT_DEFAULT | LAM_SHIFT_SPIN_DEFAULT);
    lam_shift *other = lam_shift_new(4, 2, 0, LAM_SHIFT_DEFAULT);
    lam_spinfree *out = h;
    lam_error err;
    tap_ok(lam_shift_apply(h, spin, &out, &err) == 70 && out == NULL,
           "spin terms: no spin-free H - K (code 70, nothing returned)");
    tap_ok(strcmp(err.msg, "shift: spin terms make a spin-free form impossible") == 0, "... said so");
    tap_ok(lam_shift_subtract(h, spin, &err) == 70, "spin terms: no in-place subtraction either");
    lam_l1_problem lp;
    double fixed;
    tap_ok(lam_shift_build_lp(h, other, &lp, &fixed, &err) == 70 &&
               strcmp(err.msg, "shift: orbital counts differ") == 0,
           "a shift for 4 orbitals on a 3-orbital H: code 70");
    lam_shift_free(other);
    lam_shift_free(spin);
    lam_spinfree_free(h);
}

/* Folding the ladder form back gives the operator (lam_fermion_from_spinfree
 * is another module's expansion of E_pq and e_pqrs over spins). */
static void fold_round_trip(lam_spin_order order, const char *what)
{
    lam_spinfree *h = random_operator(3, 2);
    lam_fermion_op op;
    lam_fermion_from_spinfree(h, order, &op);
    lam_spinfree *back = NULL;
    lam_error err;
    tap_ok(lam_shift_fold_fermion(&op, order, "test", &back, &err) == 0 && back, "fold succeeds");
    double worst = fabs(back->e0 - h->e0);
    for (int i = 0; i < 9; ++i) worst = fmax(worst, fabs(back->h[i] - h->h[i]));
    for (int i = 0; i < 81; ++i) worst = fmax(worst, fabs(back->g[i] - h->g[i]));
    char name[96];
    snprintf(name, sizeof name, "fermion form folds back to the spin-free operator (%s)", what);
    tap_near(worst, 0, 1e-14, name);
    lam_spinfree_free(back);
    lam_fermion_free(&op);
    lam_spinfree_free(h);
}

/* The metadata written by lam_shift_describe gives the parameters back. */
static void metadata_round_trip(void)
{
    lam_shift *k = lam_shift_new(4, 3, 1, LAM_SHIFT_DEFAULT | LAM_SHIFT_SPIN_DEFAULT);
    randomize(k);
    lam_meta meta;
    lam_meta_init(&meta);
    lam_shift_describe(k, &meta);
    lam_shift *back = NULL;
    lam_error err;
    tap_ok(lam_shift_recorded(&meta, 4, "test", &back, &err) == 0 && back, "recorded shift read back");
    double worst = 0;
    for (int j = 0; j < k->nparams; ++j) worst = fmax(worst, fabs(back->x[j] - k->x[j]));
    tap_ok(back->nparams == k->nparams && back->electrons == 3 && back->ms2 == 1 && worst == 0,
           "parameters survive the metadata exactly");
    lam_shift *twice = lam_shift_sum(k, back);
    tap_near(lam_shift_xi(twice, 1, 2), 2 * lam_shift_xi(k, 1, 2), 0, "sum of two shifts adds xi");
    tap_near(lam_shift_b2(twice), 2 * lam_shift_b2(k), 0, "sum of two shifts adds b2");
    lam_shift_free(twice);
    lam_shift_free(back);
    lam_meta_free(&meta);
    lam_shift_free(k);
}

/* Bad input comes back as an error (code, file, message), nothing held. */
static void errors_return(void)
{
    lam_meta meta;
    lam_meta_init(&meta);
    lam_shift *k = NULL;
    lam_error err;
    tap_ok(lam_shift_recorded(&meta, 4, "m", &k, &err) == 0 && !k, "no shift-* metadata: no shift");
    lam_meta_set(&meta, "shift-terms", "a1,a2,xi");
    lam_meta_set(&meta, "shift-electrons", "2");
    lam_meta_set(&meta, "shift-xi", "0 9 1.5");
    int rc = lam_shift_recorded(&meta, 4, "m", &k, &err);
    tap_ok(rc == LAM_EX_DATA && !k && !strcmp(err.file, "m") &&
               !strcmp(err.msg, "orbital out of range: shift-xi '0 9 1.5'"),
           "an orbital out of range is a returned data error");
    lam_meta_free(&meta);
    lam_fermion_op op;
    memset(&op, 0, sizeof op);
    op.nmodes = 3;
    lam_spinfree *sf = NULL;
    rc = lam_shift_fold_fermion(&op, LAM_SPIN_INTERLEAVED, "f", &sf, &err);
    tap_ok(rc == LAM_EX_DATA && !sf && !strcmp(err.msg, "the operator is not spin-free: an odd number of modes (3)"),
           "an odd number of modes is a returned data error");
}

static void parse_terms(void)
{
    unsigned m;
    tap_ok(lam_shift_parse_terms("a1,a2,xi", &m) == 0 && m == LAM_SHIFT_DEFAULT, "parse a1,a2,xi");
    tap_ok(lam_shift_parse_terms("xi-diag,b1", &m) == 0 &&
               m == (LAM_SHIFT_XI_DIAG | LAM_SHIFT_B1), "parse xi-diag,b1");
    tap_ok(lam_shift_parse_terms("a1,a3", &m) == -1, "unknown term refused");
}

int main(void)
{
    parse_terms();
    rows_match_closed_form(4, 2, LAM_SHIFT_DEFAULT, "a1,a2,xi");
    rows_match_closed_form(4, 4, LAM_SHIFT_DEFAULT, "n = N0");
    rows_match_closed_form(3, 1, LAM_SHIFT_A1 | LAM_SHIFT_XI_DIAG, "a1,xi-diag");
    operator_matches_definition();
    spin_rows_match_majorana(0);
    spin_rows_match_majorana(1);
    optimum_brackets();
    misuse_returns();
    fold_round_trip(LAM_SPIN_INTERLEAVED, "interleaved");
    fold_round_trip(LAM_SPIN_BLOCKED, "blocked");
    metadata_round_trip();
    errors_return();
    return tap_done();
}
