/* integrals.h - one- and two-electron integrals over contracted Gaussians.
 *
 * McMurchie-Davidson scheme (L. E. McMurchie, E. R. Davidson, J. Comput.
 * Phys. 26, 218 (1978)): products of Gaussians expanded in Hermite
 * Gaussians, Coulomb integrals from the Hermite integrals R_tuv and the
 * Boys function.  Matrices are nbf x nbf, row-major, in the order of the
 * basis functions (lam_basis).
 */
#ifndef LAM_INTEGRALS_H
#define LAM_INTEGRALS_H

#include <stddef.h>
#include "basis.h"
#include "molecule.h"

/* Boys function F_m(t) = int_0^1 u^(2m) exp(-t u^2) du for m = 0..mmax
 * (mmax <= LAM_BOYS_MMAX): Taylor steps from a table (filled by the
 * convergent series and downward recursion) below t = 60, F_0 from erf
 * and upward recursion above, each recursion used where it is stable. */
#define LAM_BOYS_MMAX 4 * LAM_MAX_L
void lam_boys(int mmax, double t, double *f);

void lam_int_overlap(const lam_basis *b, double *s);
void lam_int_kinetic(const lam_basis *b, double *t);
/* Attraction of the electrons to every nucleus of mol (negative). */
void lam_int_nuclear(const lam_basis *b, const lam_molecule *mol, double *v);

/* Index of the unordered pair {i, j}. */
#define LAM_PAIR(i, j)                                                        \
    ((i) >= (j) ? (size_t)(i) * ((size_t)(i) + 1) / 2 + (size_t)(j)           \
                : (size_t)(j) * ((size_t)(j) + 1) / 2 + (size_t)(i))

/* Doubles in the packed electron-repulsion array of n functions:
 * one value per class of the 8-fold symmetry. */
size_t lam_eri_count(int n);

typedef struct {
    size_t quartets;      /* shell quartets with unique integrals */
    size_t screened;      /* of them, skipped by the Schwarz bound */
    double seconds;
} lam_eri_stats;

/* All (ij|kl), chemists' notation, stored once at
 * eri[LAM_PAIR(LAM_PAIR(i, j), LAM_PAIR(k, l))].  Shell quartets whose
 * Schwarz bound sqrt((ab|ab)(cd|cd)) is below tol are left zero.  stats
 * may be NULL. */
double *lam_int_eri(const lam_basis *b, double tol, lam_eri_stats *stats);

#endif
