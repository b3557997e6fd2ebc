/* encoding.h - fermion-to-qubit encodings as binary matrices.
 *
 * A linear encoding stores the occupation vector n (one bit a mode) as the
 * qubit vector b = A n over GF(2):
 *   Jordan-Wigner: A = I                       (b_j = n_j)
 *   parity:        A lower triangular ones     (b_j = n_0 + ... + n_j)
 *   Bravyi-Kitaev: Fenwick tree                (b_j = sum of n_k for k in
 *                  (j - lowbit(j+1), j]), any number of modes
 * a_j flips n_j, which flips the qubits of column j of A, with the sign
 * (-1)^(n_0 + ... + n_(j-1)), the parity of the rows 0..j-1 of A^-1 applied
 * to b.  So, with X^x Z^z meaning the X factors left of the Z factors,
 *   g_2j   = X^(col_j A) Z^(P_j)
 *   g_2j+1 = i X^(col_j A) Z^(P_j + R_j)
 * where P_j = sum of the rows 0..j-1 of A^-1 and R_j is row j of A^-1
 * (n_j = R_j . b).  Each image is built generically from A and its inverse.
 */
#ifndef LAM_ENCODING_H
#define LAM_ENCODING_H

#include <stdint.h>

#include "fermion.h"
#include "pauli.h"
#include "spinfree.h"

typedef enum {
    LAM_ENC_JORDAN_WIGNER = 0,
    LAM_ENC_BRAVYI_KITAEV,
    LAM_ENC_PARITY
} lam_encoding_kind;

const char *lam_encoding_name(lam_encoding_kind k);
/* 0 and *k set for "jordan-wigner", "bravyi-kitaev", "parity"; -1
 * otherwise. */
int lam_encoding_parse(const char *name, lam_encoding_kind *k);

typedef struct {
    lam_encoding_kind kind;
    int nmodes, nwords;   /* qubits = modes */
    uint64_t *matrix;     /* row i of A: matrix[i*nwords ..] */
    uint64_t *inverse;    /* row i of A^-1 */
    /* Majorana images: image m has bits at images[m*2*nwords] (x then z)
     * and g_m = i^phase[m] P(x, z) in the convention of pauli.h. */
    uint64_t *images;
    int *phase;
} lam_encoding;

/* Build A, invert it over GF(2) (exit 70 if singular, which would be a
 * bug), and the 2*nmodes Majorana images. */
lam_encoding *lam_encoding_new(lam_encoding_kind kind, int nmodes);
void lam_encoding_free(lam_encoding *e);
static inline int lam_encoding_bit(const lam_encoding *e, const uint64_t *rows, int i,
                                   int j)
{
    return (int)((rows[(size_t)i * e->nwords + j / 64] >> (j % 64)) & 1);
}
static inline const uint64_t *lam_encoding_image_x(const lam_encoding *e, int m)
{
    return e->images + (size_t)m * 2 * e->nwords;
}
static inline const uint64_t *lam_encoding_image_z(const lam_encoding *e, int m)
{
    return e->images + (size_t)m * 2 * e->nwords + e->nwords;
}

/* Call visit once for each Pauli string of the monomials of a Hermitian
 * Majorana set (require_hermitian done), in order, zero coefficients left
 * out; x and z (e->nwords words each) are valid during the call only. */
typedef void (*lam_pauli_visit)(void *ctx, const uint64_t *x, const uint64_t *z, double coef);
void lam_encoding_each_pauli(const lam_encoding *e, const lam_majorana_set *m,
                             lam_pauli_visit visit, void *ctx);

/* Each monomial of a Hermitian Majorana set (require_hermitian done) to
 * one Pauli string with a real coefficient.  The images are independent,
 * so distinct monomials give distinct strings: nothing to merge.  Terms
 * with a zero coefficient are left out. */
void lam_encoding_map_majorana(const lam_encoding *e, const lam_majorana_set *m,
                               lam_pauli_set *out);

#endif
