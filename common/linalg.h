/* linalg.h - small dense linear algebra shared by the modules. */
#ifndef LAM_LINALG_H
#define LAM_LINALG_H

/* Eigenvalues of the symmetric n x n row-major matrix a (upper triangle
 * read) ascending in w; a is overwritten by the eigenvectors as columns.
 * Divide and conquer (dsyevd): its eigenvectors are orthogonal to machine
 * precision also within clusters of close eigenvalues, where the MRRR
 * solver (dsyevr) was seen to lose orthogonality at 1e-4.  LAPACK failure
 * is an internal error (exit 70). */
void lam_symmetric_eigen(int n, double *a, double *w);

/* Threads of the BLAS/LAPACK calls: n from -j/--threads, 0 for the
 * suite's default of one.  One thread is the default because OpenBLAS's
 * own choice was measured 4x slower than one thread for lam-factor's
 * full-rank fragments and 5-13x slower for lam-range on a shared 2-core
 * machine; it overrides OPENBLAS_NUM_THREADS. */
void lam_blas_threads(long n);

#endif
