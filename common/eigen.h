/* eigen.h - extreme eigenvalues of large real symmetric operators.
 *
 * Davidson's method (Davidson, J. Comput. Phys. 17, 87 (1975)) with the
 * diagonal preconditioner and Olsen's correction (Olsen, Jorgensen and
 * Simons, Chem. Phys. Lett. 169, 463 (1990); citations from memory),
 * thick-restarted from the lowest third of the Ritz vectors and the
 * previous Ritz vector (which carries near-degenerate pairs through a
 * restart).  The operator is matrix-free:
 * the caller supplies y = A x and the diagonal.  Small problems are solved
 * densely (the whole matrix is built column by column and diagonalized
 * with LAPACK), which is exact.
 *
 * The result carries a certificate: the value is a Rayleigh quotient, so
 * it is never below the lowest eigenvalue (never above the highest); the
 * residual r = A x - value x says an eigenvalue lies within |r| of it.
 *
 * That the value is the EXTREME eigenvalue is a separate claim
 * (res->extreme).  Dense problems have it from the whole spectrum.  For
 * Davidson, a check bounds the rest of the spectrum: with X the Ritz
 * vectors found (orthonormal columns), A = X^T H X, R = H X - X A, and mu a
 * lower bound on H restricted to the complement of X,
 *     lambda_min >= lowest eigenvalue of [[a_min, |R|], [|R|, mu]]
 * (H dominates that block matrix; Kato-Temple in block form).  mu comes
 * from Lanczos on the deflated operator from a random start, lowered by
 * the bound of Kuczynski and Wozniakowski (SIAM J. Matrix Anal. Appl. 13,
 * 1094 (1992); from memory): after k steps from a start uniform on the
 * sphere, P(theta_k - lambda >= eps S) <= 1.648 sqrt(n) exp(-sqrt(eps)
 * (2k - 1)), S the spectral spread.  The value is certified extreme when
 * value - lower <= tol, with failure probability at most
 * LAM_EIGEN_FAILURE over the random start (a seeded generator standing in
 * for a uniform draw independent of the operator).  Roots the check meets
 * (degenerate or missed ones) are solved by Davidson on the complement and
 * added to X, up to max_roots.
 *
 * Before that block check, a cheaper one is tried (the congruence check):
 * with sigma just above the value and W = |D - sigma|^(-1/2) (D the
 * diagonal, floored at the gap to Davidson's next Ritz value), Sylvester's
 * law of inertia makes H - sigma and B = W (H - sigma) W have equally many
 * negative eigenvalues.  Lanczos as above, on B restricted to the
 * complement of B's own lowest vector, certifies that B has only one, so the
 * second eigenvalue of H is at least sigma, and Kato-Temple bounds the
 * lowest from below by value - |r|^2 / (sigma - value).  B is the operator
 * Davidson's preconditioner sees: its far end is pressed together, so this
 * needs about half the Lanczos steps of the check on H (70 against 145 on
 * a 10-atom hydrogen chain).  The failure probability LAM_EIGEN_FAILURE is
 * shared by the congruence check and the block checks (union bound).
 */
#ifndef LAM_EIGEN_H
#define LAM_EIGEN_H

#include <stddef.h>
#include <stdint.h>

#include "util.h"

typedef void (*lam_eigen_apply)(void *ctx, const double *x, double *y);

typedef struct {
    size_t dim;
    lam_eigen_apply apply;
    void *ctx;
    const double *diag;   /* dim diagonal elements (required) */
    double tol;           /* converged when |r| <= tol */
    int max_iter;         /* operator applications, e.g. 500 */
    int max_subspace;     /* Davidson vectors kept (at least 4 are used) */
    int highest;          /* 1: the highest eigenvalue, 0: the lowest */
    size_t dense_limit;   /* solve densely up to this dimension */
    const char *label;    /* progress label, may be NULL */
    double spread;        /* upper bound on lambda_max - lambda_min (0: none) */
    int check_steps;      /* Lanczos steps of the extremality check per
                             root (0: no check, Davidson values stay bounds) */
    int max_roots;        /* Ritz vectors the check may collect (default 4) */
} lam_eigen_problem;

/* What certified a value as extreme. */
enum lam_eigen_certificate {
    LAM_EIGEN_UNCERTIFIED = 0,
    LAM_EIGEN_BY_SPECTRUM,   /* dense: the whole spectrum was computed */
    LAM_EIGEN_BY_CONGRUENCE, /* one Lanczos check on W (H - sigma) W */
    LAM_EIGEN_BY_BLOCK       /* block Kato-Temple over the roots found */
};

/* Failure probability allowed to the randomized extremality check of one
 * value. */
#define LAM_EIGEN_FAILURE 1e-6

typedef struct {
    double value;     /* Rayleigh quotient of the final vector */
    double residual;  /* |A x - value x| for unit x */
    int iterations;   /* operator applications */
    int converged;    /* residual <= tol */
    int extreme;      /* certified: value - (the extreme eigenvalue) <= tol
                         (dense: whole spectrum; else the check above) */
    double other;     /* the certified far side: lowest >= other (highest
                         <= other); NAN without a certificate */
    int roots;        /* Ritz vectors used by the check */
    int certificate;  /* how `extreme` was shown: enum lam_eigen_certificate */
    int check_iterations; /* operator applications of the check */
} lam_eigen_result;

/* Fill defaults: tol 1e-9, max_iter 400, max_subspace 8, dense_limit 300,
 * check_steps 0, max_roots 4. */
void lam_eigen_defaults(lam_eigen_problem *p);
/* The defaults for the operator apply(ctx) of dimension dim with its
 * diagonal. */
void lam_eigen_problem_init(lam_eigen_problem *p, size_t dim, lam_eigen_apply apply, void *ctx,
                            const double *diag);
/* Bytes of working storage (beyond the diagonal) the solver allocates:
 * 2 max_subspace + 4 vectors and the check's (LAM_EIGEN_CHECK_VECTORS),
 * or the dense matrix. */
#define LAM_EIGEN_CHECK_VECTORS 10
size_t lam_eigen_bytes(size_t dim, int max_subspace, size_t dense_limit);
/* Solve; vec (may be NULL) receives the final unit vector.  Fails (exit
 * code 70 in *err) on a problem of dimension 0 or when LAPACK fails on the
 * projected matrices, which only a non-finite operator makes happen. */
int lam_eigen_extreme(const lam_eigen_problem *p, lam_eigen_result *res,
                      double *vec, lam_error *err);

/* The lowest into *lo and the highest into *hi (either may be NULL): the
 * problem's own `highest` is ignored. */
int lam_eigen_ends(const lam_eigen_problem *p, lam_eigen_result *lo,
                   lam_eigen_result *hi, lam_error *err);

/* All eigenvalues of a dense symmetric n x n matrix (row-major, destroyed),
 * ascending, into w.  Fails with code 70 if LAPACK fails (a non-finite
 * matrix). */
int lam_eigen_dense(int n, double *a, double *w, lam_error *err);

/* Eigenvalues of the symmetric n x n row-major matrix a (upper triangle
 * read) ascending in w; a is overwritten by the eigenvectors as columns.
 * Divide and conquer (dsyevd): its eigenvectors are orthogonal to machine
 * precision also within clusters of close eigenvalues, where the MRRR
 * solver (dsyevr) was seen to lose orthogonality at 1e-4.  LAPACK failure
 * (a non-finite matrix) is returned as an internal error (code 70). */
int lam_symmetric_eigen(int n, double *a, double *w, lam_error *err);

#endif
