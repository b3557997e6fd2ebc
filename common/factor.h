/* factor.h - fermionic fragments of a spin-free Hamiltonian.
 *
 *   H = e0 + sum h_pq E_pq + 1/2 sum (pq|rs) e_pqrs
 *     = const + U_0 (sum_i t_i N_i) U_0^+ + sum_f U_f (1/2 sum_ij l^f_ij N_i N_j) U_f^+
 *
 * with N_i the spin-summed occupation of rotated orbital i.  Two methods
 * give the two-body fragments (U_f, l^f):
 *
 *  - double factorization: the supermatrix (pq|rs) over symmetric pairs is
 *    diagonalized, (pq|rs) = sum_l w_l L^l_pq L^l_rs; each L^l = V e V^T
 *    gives U_f = V and l_ij = w_l e_i e_j.
 *  - full rank (greedy): each fragment fits U = U0 exp(K) (K real
 *    antisymmetric) and a symmetric l_ij to the two-body residual by
 *    minimizing its Frobenius norm with L-BFGS and analytic gradients; l is
 *    eliminated exactly (it is linear), L-BFGS runs over K.
 *
 * Fragment 0 is the one-body part: T = h minus what the two-body
 * fragments' reflection form adds to the one-body operator, diagonalized.
 * The result is a lam_fragments (see fragments.h); the operator it stands
 * for is e0 + h.E + 1/2 G.e with G the fragments' integrals, so every error
 * sits in the two-body integrals and is measured by reconstruction.
 */
#ifndef LAM_FACTOR_H
#define LAM_FACTOR_H

#include <stddef.h>
#include "fragments.h"
#include "spinfree.h"
#include "util.h"

typedef enum { LAM_FACTOR_DOUBLE, LAM_FACTOR_FULL_RANK } lam_factor_method;

typedef struct {
    lam_factor_method method;
    /* double: the sum of |w_l| over dropped factors stays <= tol (it bounds
     * the largest integral error); full rank: fragments are added until the
     * Frobenius norm of the two-body residual is <= tol.  Eh. */
    double tol;
    double cutoff;     /* unitaries with |c| <= cutoff are left out (Eh) */
    int max_fragments; /* full rank: give up (exit 65) beyond this many */
    int max_iter;      /* full rank: L-BFGS iterations per fragment */
} lam_factor_options;

/* Defaults: tol 1e-10 (double) / 1e-6 (full rank), cutoff 1e-14,
 * max_fragments 10 n (n + 1) / 2 + 10, max_iter 500. */
void lam_factor_defaults(lam_factor_options *o, lam_factor_method method, int n);

typedef struct {
    int factors_total;        /* double: non-trivial supermatrix dimension */
    int factors_kept;         /* two-body fragments */
    double discarded_weight;  /* double: sum |w_l| dropped */
    double residual_norm;     /* Frobenius norm of g - G */
    double integral_max_error;  /* max |(pq|rs) - G|, |h - h'| from rebuilding */
    double integral_norm_error; /* Frobenius norm of the same differences */
    double constant_error;      /* |e0 - e0'| */
    double dropped_lambda;      /* sum |c| of unitaries under the cutoff */
    size_t dropped_unitaries;
    long iterations;            /* full rank: L-BFGS iterations in total */
} lam_factor_info;

/* Needs real symmetric integrals (lam_spinfree_validate with real_for
 * first).  The fragments into *out; info filled.  Full rank fails with
 * exit 65 when max_fragments is reached with the residual above tol, or
 * when a fragment does not lower the residual. */
int lam_factor(const lam_spinfree *sf, const lam_factor_options *o, lam_factor_info *info, lam_fragments **out,
               lam_error *err);

/* ---- building blocks, exposed for the unit tests ---- */

/* out = exp(a) for a general real n x n matrix (row major), scaling and
 * squaring with a Taylor series. */
void lam_expm(int n, const double *a, double *out);
/* Frechet derivative of exp at a in direction e: out = L(a, e). */
void lam_expm_frechet(int n, const double *a, const double *e, double *out);
/* u = exp(K), K_pq = kappa, K_qp = -kappa for p < q (row-major order of
 * the pairs p < q). */
void lam_rotation_from_generator(int n, const double *kappa, double *u);

/* Minimize f with L-BFGS (memory 8, backtracking Armijo line search).
 * f returns the value and writes the gradient.  Returns iterations. */
typedef double (*lam_objective)(const double *x, double *grad, void *ctx);
int lam_lbfgs(int dim, double *x, lam_objective f, void *ctx, int max_iter,
              double gtol, double *fx);

/* The full-rank fit: x = (kappa[n(n-1)/2], l[n(n+1)/2] upper triangle by
 * rows), U = u0 exp(K); returns ||resid - sum_ij l_ij vec(u_i u_i^T)
 * vec(u_j u_j^T)^T||_F^2 and its gradient in grad (if not NULL).
 * resid is n^4 with (pq|rs) = (rs|pq) = (qp|rs). */
double lam_fragment_fit(int n, const double *resid, const double *u0, const double *x,
                        double *grad);
/* The same with l at its best for U (the rotated (ii|jj) of resid, the
 * u_i u_i^T being orthonormal): a function of kappa alone, which is what
 * the greedy fit minimizes (variable projection: fewer, better-conditioned
 * unknowns). */
double lam_fragment_fit_reduced(int n, const double *resid, const double *u0,
                                const double *kappa, double *grad);

#endif
