/* norm.h - every one-norm of the suite, in one place.
 *
 * The one-norm lambda of an LCU H = sum_k c_k U_k is sum_k |c_k|, the
 * identity never counted (it only shifts the spectrum).  The suite meets
 * it in five shapes, all here:
 *
 *   spinfree   the closed form over h and (pq|rs) (Koridon et al., PRR 3,
 *              033127 (2021)), equal to the Majorana one-norm
 *   majorana   sum |c_S| over non-empty Majorana monomials (fermion input)
 *   pauli      sum |c| over non-identity strings (a set, a Fock-space
 *              operator, or a stream read once: lam_grouped_norm)
 *   grouped    each group label is one anticommuting group, hence
 *              sqrt(sum c^2) times a unitary (fact of the trade): the sum
 *              over labels of that Euclidean norm plus |c| of every
 *              unlabelled string
 *   fragments  sum |c| over the unitaries of a fragments stream
 *
 * The grouped norm accumulates each label's Euclidean norm scaled (as
 * LAPACK's dnrm2): no square overflows or underflows, so subnormal or huge
 * coefficients keep their grouped norm.  Every sum runs in the order the
 * terms come (labels in order of first appearance), so a stream summed as
 * it is read and the same terms held in a set give the same digits.
 */
#ifndef LAM_NORM_H
#define LAM_NORM_H

#include <stddef.h>
#include <stdint.h>

#include "fermion.h"
#include "fockop.h"
#include "fragments.h"
#include "pauli.h"
#include "spinfree.h"

/* A Euclidean norm as scale * sqrt(ssq), scale the largest |c| so far;
 * {0, 0} is the empty sum. */
typedef struct {
    double scale, ssq;
} lam_norm2;
void lam_norm2_add(lam_norm2 *acc, double c);
double lam_norm2_value(const lam_norm2 *acc);

/* The plain and the grouped one-norm of terms given one at a time (the
 * identity left to the caller).  Zero-initialise; a label < 0 is an
 * unlabelled term.  A labelled zero still counts as a group. */
typedef struct {
    double plain;      /* sum |c| over every term added */
    double single;     /* sum |c| over the unlabelled ones */
    int32_t *labels;   /* in order of first appearance */
    lam_norm2 *norm;   /* per label */
    size_t count, cap;
    size_t *slot;      /* open addressing over labels: index + 1, 0 empty */
    size_t nslot;
} lam_grouped_norm;
void lam_grouped_norm_add(lam_grouped_norm *g, int32_t label, double c);
/* single + the labels' norms in order of first appearance; *groups gets
 * the number of labels (may be NULL).  Frees the table (plain stays). */
double lam_grouped_norm_finish(lam_grouped_norm *g, size_t *groups);

/* Closed-form one-norm of a spin-free operator with the 8-fold symmetry of
 * real orbitals (lam_spinfree_validate it first):
 *   sum_pq |h_pq + sum_r (pq|rr) - 1/2 sum_r (pr|rq)|
 *   + 1/4 sum_pqrs |(pq|rs)| + 1/2 sum_{p>r,q>s} |(pq|rs) - (ps|rq)| */
double lam_spinfree_lambda(const lam_spinfree *sf);
/* Sum of |c_S| over non-empty monomials (after lam_majorana_require_hermitian). */
double lam_majorana_lambda(const lam_majorana_set *m);
/* Sum of |c| over the non-identity terms, as stored (merge first for the
 * one-norm of the operator). */
double lam_pauli_set_lambda(const lam_pauli_set *s);
/* The grouped one-norm of a set (group labels s->group, none: every string
 * alone); *ngroups gets the number of labels (may be NULL).  The identity
 * is never counted.  Merge first. */
double lam_pauli_set_lambda_grouped(const lam_pauli_set *s, size_t *ngroups);
/* Sum of |coefficient| over the terms other than the identity: |H - c| is
 * at most this, so twice it bounds the spread of the spectrum. */
double lam_fockop_lambda(const lam_fockop *op);
/* Sum of |c| over the unitaries of fragment frag, or of all (frag < 0). */
double lam_fragments_lambda(const lam_fragments *fr, int frag);

#endif
