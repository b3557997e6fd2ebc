/* linalg.c - small dense linear algebra shared by the modules. */
#include "linalg.h"
#include <cblas.h>

#include <lapacke.h>

#include "util.h"

void lam_symmetric_eigen(int n, double *a, double *w)
{
    if (n <= 0) return;
    lapack_int info = LAPACKE_dsyevd(LAPACK_ROW_MAJOR, 'V', 'U', n, a, n, w);
    if (info != 0) lam_fail(LAM_EX_SOFTWARE, "symmetric eigensolver failed (info %d, n = %d)", (int)info, n);
}

void lam_blas_threads(long n)
{
    openblas_set_num_threads(n > 0 ? (int)n : 1);
}
