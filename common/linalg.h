/* linalg.h - small dense linear algebra shared by the modules. */
#ifndef LAM_LINALG_H
#define LAM_LINALG_H

/* lam_symmetric_eigen: in eigen.h, the one dense symmetric eigensolver. */
#include "eigen.h"

/* Threads of the BLAS/LAPACK calls: n from -j/--threads, 0 for the
 * suite's default of one.  One thread is the default because OpenBLAS's
 * own choice was measured 4x slower than one thread for lam-factor's
 * full-rank fragments and 5-13x slower for lam-range on a shared 2-core
 * machine; it overrides OPENBLAS_NUM_THREADS. */
void lam_blas_threads(long n);

#endif
