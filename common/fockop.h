/* fockop.h - matrix-free action of a Pauli operator on Fock space.
 *
 * Any operator given as Pauli strings (a pauli stream, or a fermion stream
 * mapped by Jordan-Wigner) acts on bit strings b of nqubits <= 64 bits:
 * P = i^(#Y) X^x Z^z, so <b|P|b ^ x> = i^(#Y) (-1)^popcount((b ^ x) & z).
 * Terms are grouped by their flip mask x; a row of H is one pass over the
 * groups.  When an imaginary element is present (odd number of Y), the
 * Hermitian H = A + iB is handled as the real symmetric [[A, -B], [B, A]],
 * which has the same eigenvalues, each twice.
 *
 * Under Jordan-Wigner the occupation of mode j is bit j, so an operator
 * that conserves the particle number keeps the Hamming weight; with a spin
 * order, the weights on the spin-up and spin-down qubits separately.  A
 * sector is the set of strings with given weights on two disjoint masks
 * (mask_b may be 0: a total-number block); conservation is checked exactly
 * from the coefficients, not assumed.
 */
#ifndef LAM_FOCKOP_H
#define LAM_FOCKOP_H

#include <stddef.h>
#include <stdint.h>

#include "eigen.h"
#include "fermion.h"
#include "pauli.h"
#include "stream.h"
#include "util.h"

typedef struct {
    int nqubits;
    size_t nflip;      /* distinct flip masks */
    uint64_t *flip;    /* nflip masks; flip[0] = 0 when diagonal terms exist */
    size_t *first;     /* group f has terms [first[f], first[f+1]) */
    uint64_t *z;       /* per term */
    double *re, *im;   /* per term: coefficient times i^(#Y) */
    int is_complex;    /* some element is imaginary */
} lam_fockop;

/* *out from a Pauli set (merged or not) of at most 64 qubits; fails with
 * exit 65 naming src when there are more qubits. */
int lam_fockop_new(const lam_pauli_set *s, const char *src, lam_fockop **out, lam_error *err);
void lam_fockop_free(lam_fockop *op);

/* Its one-norm is lam_fockop_lambda (norm.h). */

/* 1 when every element of the operator keeps the Hamming weight on mask
 * (to rounding), 0 when some element changes it, or when a flip mask spans
 * more than 20 qubits (the exact check enumerates 2^|x| patterns; such an
 * operator is then treated as not conserving). */
int lam_fockop_conserves(const lam_fockop *op, uint64_t mask);

/* Read a pauli stream, or a fermion stream mapped by Jordan-Wigner (65
 * when it is not Hermitian), into set; the spin order from the header
 * (interleaved by default); *jw = 0 when a pauli stream names another
 * encoding (its strings then carry no Hamming-weight sectors).  0, or the
 * code in err with nothing left to free in set. */
int lam_fockop_read_stream(lam_reader *r, lam_kind kind, lam_pauli_set *set,
                           lam_spin_order *order, int *jw, lam_error *err);

/* What a Jordan-Wigner operator conserves: the spin-up and spin-down
 * numbers on their masks (spin_sectors), or at least the total number on
 * all qubits (number_blocks). */
typedef struct {
    uint64_t mask_a, mask_b, all;
    int spin_sectors, number_blocks;
} lam_fock_conservation;

lam_fock_conservation lam_fockop_conservation(const lam_fockop *op,
                                              lam_spin_order order, int jw);

/* A sector: strings with weight na on mask_a and nb on mask_b (the masks
 * are disjoint and cover all qubits; mask_b = 0 for a total-number
 * block).  full = 1 means the whole Fock space (masks ignored). */
typedef struct {
    uint64_t mask_a, mask_b;
    int na, nb;
    int full;
} lam_fock_sector;

/* Dimension (strings), SIZE_MAX when not addressable. */
size_t lam_fock_sector_dim(const lam_fockop *op, const lam_fock_sector *sec);
/* Threads for the operator products (default 1). */
void lam_fockop_set_threads(int threads);

/* Bytes an exact solve allocates. */
size_t lam_fock_solve_bytes(const lam_fockop *op, const lam_fock_sector *sec,
                            const lam_eigen_problem *tmpl);
/* Lowest (lo) and highest (hi) eigenvalue of H on the sector (either may
 * be NULL).  The caller has checked that the sector is invariant; fails
 * with exit 70 when the sector is too large to index. */
int lam_fock_solve(const lam_fockop *op, const lam_fock_sector *sec, const lam_eigen_problem *tmpl,
                   lam_eigen_result *lo, lam_eigen_result *hi, lam_error *err);

/* Inner bounds without holding the sector: the lowest and highest
 * diagonal elements found by descent over single bit swaps within each
 * mask, then Rayleigh-Ritz over the best string and up to subspace - 1 of
 * its strongest neighbours (strings the operator reaches from it).  The
 * results are Rayleigh quotients: *lo >= E_min, *hi <= E_max.  Fails
 * with exit 70 when the sector is too large to index. */
int lam_fock_bounds(const lam_fockop *op, const lam_fock_sector *sec, int subspace, double *lo, double *hi,
                    lam_error *err);

#endif
