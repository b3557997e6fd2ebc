/* fragments.h - the fragments stream: an operator as a linear combination
 * of rotated reflections (see man/lam-factor.1, "THE FRAGMENTS STREAM").
 *
 * Each fragment f has an orbital rotation U_f (real orthogonal, n x n;
 * lam-factor writes determinant +1, so U_f = exp(kappa) with kappa real
 * antisymmetric): the rotated orbital i is sum_p U_f[p][i] phi_p.  With
 * n_{i,s} the occupation of rotated spin orbital (i, s), R_{i,s} =
 * 1 - 2 n_{i,s} is a reflection (unitary, R^2 = 1).  The operator is
 *
 *   constant + sum c R_{f,i,s} + sum c R_{f,i,s} R_{f,j,t},
 *
 * one body line per unitary, the coefficient in column 1:
 *
 *   c                 the identity
 *   x U f p i         U_f[p][i] (entries left out are zero)
 *   c R f 3a          c R_{3,alpha} of fragment f  (b for beta)
 *   c R f 3a 1b       c R_{3,alpha} R_{1,beta} of fragment f
 *
 * Repeated term lines add, as in every stream; the reader merges them.
 */
#ifndef LAM_FRAGMENTS_H
#define LAM_FRAGMENTS_H

#include <stddef.h>
#include "report.h"
#include "spinfree.h"
#include "stream.h"

/* One unitary: a reflection (b < 0) or a product of two reflections of the
 * same fragment.  Modes are spin orbitals 2 i + s (s = 0 alpha, 1 beta) of
 * the fragment's rotated orbitals, a < b. */
typedef struct {
    double coef;
    int frag;
    int a, b;
} lam_frag_term;

typedef struct {
    int n;              /* spatial orbitals */
    int nfrag;          /* fragments (rotations) */
    int electrons, ms2; /* from the metadata; -1 / 0 when absent */
    double constant;    /* identity coefficient */
    double *rot;        /* nfrag * n * n, rot[((size_t)f * n + p) * n + i] */
    lam_frag_term *terms;
    size_t count, cap;
} lam_fragments;

#define LAM_ROT(fr, f, p, i)                                                  \
    ((fr)->rot[((size_t)(f) * (fr)->n + (p)) * (fr)->n + (i)])

/* Empty operator on n orbitals with nfrag identity rotations. */
lam_fragments *lam_fragments_new(int n, int nfrag);
void lam_fragments_free(lam_fragments *fr);
/* Append one unitary (a, b put in order; b < 0 for a single reflection).
 * Does not merge; lam_fragments_merge does. */
void lam_fragments_add(lam_fragments *fr, int frag, int a, int b, double c);
/* Sort the terms (fragment, a, b), add repeated ones, drop exact zeros. */
void lam_fragments_merge(lam_fragments *fr);

/* Read the body of a fragments stream (header already read).  Orbitals
 * and fragments come from "orbitals:" / "fragments:" or from the largest
 * index.  Every rotation used must be orthogonal to 1e-10 (exit 65
 * naming the fragment otherwise); terms are merged.  0 and *out, or the
 * reader's error code with nothing left allocated. */
int lam_fragments_read(lam_reader *r, lam_fragments **out, lam_error *err);
/* Header metadata of a fragments stream (orbitals, fragments, electrons,
 * ms2) set in meta. */
void lam_fragments_describe(const lam_fragments *fr, lam_meta *meta);
/* Write the body: constant, rotations (non-zero entries), unitaries. */
void lam_fragments_write_terms(lam_writer *w, const lam_fragments *fr);

/* What lam-norm and lam-cost print about a fragments stream. */
typedef struct {
    size_t terms;     /* distinct term lines, identity included if non-zero */
    size_t unitaries; /* terms other than the identity: the LCU size */
    double constant;  /* identity coefficient */
    double lambda;    /* sum |c| over the unitaries (identity not counted) */
    double max_coef;  /* largest |c| of a unitary */
    int fragments;
    int orbitals;
} lam_fragments_stats;

lam_fragments_stats lam_fragments_stats_of(const lam_fragments *fr);
/* Add kind, terms, constant, lambda, unitaries, fragments, orbitals,
 * qubits (2n) to a report, in that order. */
void lam_fragments_report(const lam_fragments *fr, lam_report *rep);

/* The spin-free operator the fragments stand for (exact algebra, no
 * approximation).  Needs spin-symmetric coefficients (R_{i,a} and R_{i,b}
 * alike, pairs alike under swapping both spins); 65 with the reader's
 * name otherwise (name may be NULL). */
int lam_fragments_to_spinfree(const lam_fragments *fr, const char *name, lam_spinfree **out,
                              lam_error *err);

/* Parse a mode token "3a" / "3b" into 2*3+s; -1 if malformed or out of
 * [0, n). */
int lam_fragments_parse_mode(const char *tok, int n);

#endif
