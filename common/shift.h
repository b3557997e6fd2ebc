/* shift.h - the symmetry shift K that vanishes on the target block.
 *
 *   K = a1 (N - N0) + a2 (N^2 - N0^2) + sum_pq xi_pq E_pq (N - N0)
 *     [ + b1 (Sz - S0) + b2 (Sz^2 - S0^2) + sum_pq zeta_pq E_pq (Sz - S0) ]
 *
 * with xi and zeta real symmetric, N the number operator, Sz the spin
 * projection, N0 and S0 the target.  K is zero on every state with N0
 * electrons (and spin projection S0 when the bracketed spin terms are
 * used), so H - K acts there as H does.  Without spin terms H - K is
 * spin-free: constant -a1 N0 - a2 N0^2, one-body (a1 + a2) d_pq +
 * (1 - N0) xi_pq, two-body (coefficient of 1/2 e_pqrs) 2 a2 d_pq d_rs +
 * xi_pq d_rs + d_pq xi_rs.  With spin terms it is written over spin
 * orbitals.
 *
 * The Majorana one-norm of H - K is a sum of |affine function of the
 * parameters| (closed form of Koridon et al., PRR 3, 033127 (2021), and
 * its spin-resolved form in man/lam-shift.1); lam_shift_build_lp writes
 * the terms that depend on the parameters as rows of an L1 regression and
 * adds up the rest.
 */
#ifndef LAM_SHIFT_H
#define LAM_SHIFT_H

#include "fermion.h"
#include "lp.h"
#include "spinfree.h"
#include "util.h"

/* Parts of K (--terms). */
enum {
    LAM_SHIFT_A1 = 1 << 0,
    LAM_SHIFT_A2 = 1 << 1,
    LAM_SHIFT_XI = 1 << 2,      /* all of xi */
    LAM_SHIFT_XI_DIAG = 1 << 3, /* only the diagonal of xi */
    LAM_SHIFT_B1 = 1 << 4,
    LAM_SHIFT_B2 = 1 << 5,
    LAM_SHIFT_ZETA = 1 << 6,
    LAM_SHIFT_ZETA_DIAG = 1 << 7,
    LAM_SHIFT_SPIN_TERMS = LAM_SHIFT_B1 | LAM_SHIFT_B2 | LAM_SHIFT_ZETA | LAM_SHIFT_ZETA_DIAG,
    LAM_SHIFT_DEFAULT = LAM_SHIFT_A1 | LAM_SHIFT_A2 | LAM_SHIFT_XI,
    LAM_SHIFT_SPIN_DEFAULT = LAM_SHIFT_B1 | LAM_SHIFT_B2 | LAM_SHIFT_ZETA
};

/* "a1,a2,xi,xi-diag,b1,b2,zeta,zeta-diag" (any subset, comma separated)
 * -> mask; 0 on success, -1 naming nothing when a word is unknown. */
int lam_shift_parse_terms(const char *list, unsigned *mask);

typedef struct {
    int n;            /* spatial orbitals */
    int electrons;    /* N0 */
    int ms2;          /* 2 S0 */
    unsigned terms;
    int nparams;
    int ia1, ia2, ib1, ib2; /* parameter index, -1 when not used */
    int *ixi, *izeta; /* n*n, symmetric, -1 when not used */
    double *x;        /* nparams: the parameter values */
} lam_shift;

lam_shift *lam_shift_new(int n, int electrons, int ms2, unsigned terms);
void lam_shift_free(lam_shift *k);
int lam_shift_has_spin(const lam_shift *k);
double lam_shift_a1(const lam_shift *k);
double lam_shift_a2(const lam_shift *k);
double lam_shift_b1(const lam_shift *k);
double lam_shift_b2(const lam_shift *k);
double lam_shift_xi(const lam_shift *k, int p, int q);
double lam_shift_zeta(const lam_shift *k, int p, int q);
/* Constant of K: -a1 N0 - a2 N0^2 - b1 S0 - b2 S0^2. */
double lam_shift_constant(const lam_shift *k);

/* The terms of lambda(H - K) that depend on the parameters, as rows of lp
 * (initialised here with nparams parameters); *fixed receives the sum of
 * the others, so lambda(H - K(x)) = *fixed + lam_l1_objective(lp, x).
 * H must have the 8-fold symmetry of real integrals. */
int lam_shift_build_lp(const lam_spinfree *h, const lam_shift *k,
                       lam_l1_problem *lp, double *fixed, lam_error *err);

/* The optimal parameters k->x for h with the default solver options:
 * *fixed and res as from lam_shift_build_lp and lam_l1_solve (res->converged
 * says whether the gap was reached). */
int lam_shift_optimize(const lam_spinfree *h, lam_shift *k, double *fixed, lam_l1_result *res, lam_error *err);

/* H - K as a spin-free operator into *out, or K itself when h is NULL (n,
 * electrons taken from k).  k must have no spin terms (code 70 if it has:
 * the caller asks lam_shift_has_spin). */
int lam_shift_apply(const lam_spinfree *h, const lam_shift *k, lam_spinfree **out, lam_error *err);
/* h -= K in place (no spin terms, as above); saves the copy for large n. */
int lam_shift_subtract(lam_spinfree *h, const lam_shift *k, lam_error *err);
/* H - K (or K when h is NULL) as normal-ordered ladder terms over spin
 * orbitals in the given spin order; for spin terms. */
void lam_shift_apply_fermion(const lam_spinfree *h, const lam_shift *k,
                             lam_spin_order order, lam_fermion_op *out);

/* A fermion operator (any order of ladder terms) as a spin-free one:
 * normal-ordered, it must consist of a constant, a+ a and a+ a+ a a terms
 * that conserve every spin and have the pattern of E_pq and e_pqrs
 * (to 1e-12 of its largest coefficient), folded into *out; else fails
 * with exit 65 naming src and the line of the first offending term.
 * electrons and ms2 are left unset. */
int lam_shift_fold_fermion(const lam_fermion_op *op, lam_spin_order order, const char *src,
                           lam_spinfree **out, lam_error *err);

/* Put the parameters in metadata ("shift-a1: ...", one "shift-xi: p q v"
 * per non-zero element with p <= q, ...), replacing earlier shift-*
 * entries. */
void lam_shift_describe(const lam_shift *k, lam_meta *meta);

/* *out: the shift an earlier run recorded in meta (shift-terms, shift-a1,
 * ...), or NULL when there is none; fails with exit 65 naming src and the
 * line of a malformed entry. */
int lam_shift_recorded(const lam_meta *meta, int n, const char *src, lam_shift **out, lam_error *err);
/* a + b, parameter by parameter, with the terms of both; the target (N0,
 * S0) is a's (the caller checks that b has the same). */
lam_shift *lam_shift_sum(const lam_shift *a, const lam_shift *b);

#endif
