/* linalg.c - small dense linear algebra shared by the modules. */
#include "linalg.h"
#include <cblas.h>

void lam_blas_threads(long n)
{
    openblas_set_num_threads(n > 0 ? (int)n : 1);
}
