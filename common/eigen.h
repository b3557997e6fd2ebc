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
 */
#ifndef LAM_EIGEN_H
#define LAM_EIGEN_H

#include <stddef.h>
#include <stdint.h>

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
} lam_eigen_problem;

typedef struct {
    double value;     /* Rayleigh quotient of the final vector */
    double residual;  /* |A x - value x| for unit x */
    int iterations;   /* operator applications */
    int converged;    /* residual <= tol */
} lam_eigen_result;

/* Fill defaults: tol 1e-9, max_iter 400, max_subspace 8, dense_limit 300. */
void lam_eigen_defaults(lam_eigen_problem *p);
/* Bytes of working storage (beyond the diagonal) the solver allocates:
 * 2 max_subspace + 4 vectors, or the dense matrix. */
size_t lam_eigen_bytes(size_t dim, int max_subspace, size_t dense_limit);
/* Solve; vec (may be NULL) receives the final unit vector. */
void lam_eigen_extreme(const lam_eigen_problem *p, lam_eigen_result *res,
                       double *vec);

/* The lowest into *lo and the highest into *hi (either may be NULL): the
 * problem's own `highest` is ignored. */
void lam_eigen_ends(const lam_eigen_problem *p, lam_eigen_result *lo,
                    lam_eigen_result *hi);

/* All eigenvalues of a dense symmetric n x n matrix (row-major, destroyed),
 * ascending, into w.  exit 70 if LAPACK fails. */
void lam_eigen_dense(int n, double *a, double *w);

#endif
