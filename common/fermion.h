/* fermion.h - fermion ladder terms over spin orbitals, and Majorana
 * monomials.
 *
 * A term is c * o_1 o_2 ... o_k with each o a creator a+_j or an
 * annihilator a_j of mode j, in the written order (stream syntax,
 * version 2: "c 3 1 / 0 2", creators, a "/", annihilators).  Modes are spin orbitals; the spin order says which
 * mode holds orbital p with spin up or down:
 *   interleaved: up = 2p, down = 2p + 1
 *   blocked:     up = p,  down = n + p       (n spatial orbitals)
 *
 * Majorana operators: g_2j = a_j + a+_j, g_2j+1 = i (a+_j - a_j).  A
 * monomial is a set of distinct Majorana indices multiplied in ascending
 * order; every fermion operator is a unique complex combination of them,
 * and a Hermitian one has c real when |S| mod 4 is 0 or 1, imaginary when
 * it is 2 or 3.  The one-norm of the real magnitudes |c_S| over non-empty S
 * is the lambda every Majorana-monomial encoding gives.
 */
#ifndef LAM_FERMION_H
#define LAM_FERMION_H

#include <stddef.h>
#include <stdint.h>

#include "pauli.h"
#include "spinfree.h"
#include "stream.h"

/* ---- spin order ---- */
typedef enum { LAM_SPIN_INTERLEAVED = 0, LAM_SPIN_BLOCKED } lam_spin_order;

const char *lam_spin_order_name(lam_spin_order o);
/* 0 and *o set for "interleaved" or "blocked", -1 otherwise. */
int lam_spin_order_parse(const char *name, lam_spin_order *o);
/* Mode of orbital p with spin (0 up, 1 down) among n spatial orbitals. */
static inline int lam_spin_mode(lam_spin_order o, int n, int p, int spin)
{
    return o == LAM_SPIN_INTERLEAVED ? 2 * p + spin : spin * n + p;
}
/* "spin-order:" of a stream's metadata into *order; dflt when absent, 65
 * naming the line when it is neither name. */
int lam_reader_spin_order(lam_reader *r, lam_spin_order dflt, lam_spin_order *order,
                          lam_error *err);

/* ---- ladder terms ---- */

/* One ladder operator: 2*mode + 1 for a creator, 2*mode for an
 * annihilator. */
#define LAM_CREATE(j) (2 * (int32_t)(j) + 1)
#define LAM_ANNIHILATE(j) (2 * (int32_t)(j))
#define LAM_LADDER_MODE(o) ((o) >> 1)
#define LAM_LADDER_IS_CREATOR(o) ((o) & 1)

/* The longest ladder term accepted: its Majorana expansion has 2^k
 * pieces. */
#define LAM_MAX_LADDER 16

typedef struct {
    int nmodes;
    size_t count, cap;   /* terms */
    size_t nops, opcap;  /* ladder operators of all terms */
    size_t *first;       /* term t has ops[first[t] .. first[t+1]) */
    int32_t *ops;
    double *coef;
    long *line;          /* input line of each term, 0 when made here */
} lam_fermion_op;

void lam_fermion_init(lam_fermion_op *op, int nmodes);
void lam_fermion_free(lam_fermion_op *op);
static inline size_t lam_fermion_length(const lam_fermion_op *op, size_t t)
{
    return op->first[t + 1] - op->first[t];
}
/* Append c * ops[0] ... ops[k-1] (modes must be below nmodes). */
void lam_fermion_add(lam_fermion_op *op, double coef, const int32_t *ops, int k,
                     long line);

/* Read the terms of a fermion stream: "modes:" from the header, else the
 * largest mode + 1.  Version 2 "c 3 1 / 0 2" (creators, "/",
 * annihilators, each side in any order, as written; the bare "c" is the
 * constant) or version 1 "c 3+ 1+ 0- 2-".  A malformed field, a missing
 * or second "/", a mode twice on one side or out of range: 65 with
 * file:line, and *op left empty (freed). */
int lam_fermion_read(lam_reader *r, lam_fermion_op *op, lam_error *err);
/* Write every term in version 2, canonical: creators by descending mode,
 * "/", annihilators by ascending mode, with the sign of the reordering
 * ("c 3 1 / 0 2"; "c 2 /" and "c / 0" for one side; the constant as the
 * bare number).  Terms that are zero (a mode twice on one side) are left
 * out; an operator with a term not normal ordered is written normal
 * ordered (lam_fermion_normal_order). */
void lam_fermion_write_terms(lam_writer *w, const lam_fermion_op *op);

/* The same operator in normal order: in each term the creators first in
 * descending mode order, then the annihilators in ascending mode order
 * (this choice makes the adjoint of a normal-ordered term normal-ordered
 * again).  Signs from the reordering and the extra terms from
 * a_i a+_j = delta_ij - a+_j a_i are included; a term with a repeated
 * creator or annihilator is zero.  Repeated terms are merged (by hash) and
 * exact zeros dropped.  out is initialised here. */
void lam_fermion_normal_order(const lam_fermion_op *in, lam_fermion_op *out);

/* The spinfree operator as ladder terms: e0, h_pq E_pq summed over spins,
 * 1/2 (pq|rs) e_pqrs summed over both spins, modes in the given order. */
void lam_fermion_from_spinfree(const lam_spinfree *sf, lam_spin_order order,
                               lam_fermion_op *out);

/* Add one spin-free term to a ladder operator of 2n modes: c alone
 * (nidx 0), c E_pq summed over spins (nidx 2) or c e_pqrs summed over both
 * spins (nidx 4); line is kept for messages. */
void lam_fermion_add_spinfree_term(lam_fermion_op *out, lam_spin_order order, int n, double c,
                                   int nidx, const int *idx, long line);

/* Rename the modes of an operator written in spin order `from` to the
 * modes of spin order `to`; 65 when nmodes is odd. */
int lam_fermion_relabel_spin(lam_fermion_op *op, lam_spin_order from, lam_spin_order to,
                             lam_error *err);

/* ---- Majorana monomials ---- */
typedef struct {
    int nmodes, nwords;      /* 2*nmodes Majoranas in nwords words a row */
    size_t count, cap;
    uint64_t *bits;          /* row t: bits[t*nwords ...], bit m = g_m */
    double *re, *im;         /* complex coefficient */
    double *mass;            /* sum of |contributions| (rounding scale) */
    long *line;              /* first input line that contributed */
    lam_rowhash index;       /* over rows [0, indexed) */
    size_t indexed;
} lam_majorana_set;

void lam_majorana_init(lam_majorana_set *m, int nmodes);
void lam_majorana_free(lam_majorana_set *m);
/* Add (re + i im) * g_idx[0] g_idx[1] ... g_idx[k-1] (any order, repeats
 * allowed: reduced with g^2 = 1 and the anticommutation signs). */
void lam_majorana_add(lam_majorana_set *m, const int *idx, int k, double re,
                      double im, long line);
/* Expand every ladder term (a_j = (g_2j + i g_2j+1)/2,
 * a+_j = (g_2j - i g_2j+1)/2) and merge. */
void lam_majorana_from_fermion(const lam_fermion_op *op, lam_majorana_set *m);
/* Direct expansion of a spinfree operator with the 8-fold symmetry of real
 * integrals (the caller checks lam_spinfree_is_real first):
 * the merged monomials in closed form, no hashing (see fermion.c). */
void lam_majorana_from_spinfree(const lam_spinfree *sf, lam_spin_order order,
                                lam_majorana_set *m);
/* Any spinfree operator: the direct expansion when the real symmetry holds
 * (lam_spinfree_is_real), else through ladder terms. */
void lam_majorana_from_spinfree_any(const lam_spinfree *sf, lam_spin_order order,
                                    lam_majorana_set *m);
/* Number of Majoranas in monomial t. */
int lam_majorana_degree(const lam_majorana_set *m, size_t t);
/* 65 ("src:LINE: ...") when a monomial's coefficient is not of the
 * Hermitian phase, beyond rounding (1e-12 of the contributions); else
 * clear the rounding-level wrong-phase parts and return 0.  src names the
 * input. */
int lam_majorana_require_hermitian(lam_majorana_set *m, const char *src, lam_error *err);
/* Real magnitude of the Hermitian coefficient of monomial t: re for
 * degree 0,1 mod 4, im for 2,3 mod 4 (after require_hermitian). */
double lam_majorana_value(const lam_majorana_set *m, size_t t);
/* The coefficient of the empty monomial (the one-norm is in norm.h). */
double lam_majorana_constant(const lam_majorana_set *m);


/* The operator of a spinfree or fermion stream as merged Majorana
 * monomials, with modes in spin order *order (NULL: the stream's own
 * "spin-order:", interleaved when absent; a fermion stream is relabelled
 * when they differ).  A non-Hermitian operator or another kind: 65
 * naming the stream (and the line where one is known), m left empty.
 * *used gets the spin order used. */
int lam_majorana_read(lam_reader *r, lam_kind kind, const lam_spin_order *order,
                      lam_majorana_set *m, lam_spin_order *used, lam_error *err);

#endif
