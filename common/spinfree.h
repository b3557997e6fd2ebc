/* spinfree.h - spin-free (spin-summed) operators with real coefficients:
 *
 *   H = e0 + sum_pq h_pq E_pq + 1/2 sum_pqrs (pq|rs) e_pqrs
 *
 * E_pq = sum_s a+_ps a_qs, e_pqrs = sum_st a+_ps a+_rt a_st a_qs, chemists'
 * index order.  g holds (pq|rs) as a dense n^4 array; it always has the
 * symmetry (pq|rs) = (rs|pq), which is an identity of the operators
 * (e_pqrs = e_rspq).  The further symmetries of real integrals
 * ((pq|rs) = (qp|rs)) are properties that lam_spinfree_has_real_symmetry
 * tests.
 */
#ifndef LAM_SPINFREE_H
#define LAM_SPINFREE_H

#include <stddef.h>
#include "stream.h"

typedef struct {
    int n;          /* spatial orbitals */
    int electrons;  /* target electron number, -1 if unknown */
    int ms2;        /* 2 Sz of the target, 0 by default */
    double e0;      /* constant */
    double *h;      /* n*n: h[p*n+q] multiplies E_pq */
    double *g;      /* n^4: g[((p*n+q)*n+r)*n+s] = (pq|rs) */
} lam_spinfree;

#define LAM_H(sf, p, q) ((sf)->h[(size_t)(p) * (sf)->n + (q)])
#define LAM_G(sf, p, q, r, s)                                                 \
    ((sf)->g[(((size_t)(p) * (sf)->n + (q)) * (sf)->n + (r)) * (sf)->n + (s)])

/* Zeroed operator on n orbitals (exit 70 when memory is short). */
lam_spinfree *lam_spinfree_new(int n);
void lam_spinfree_free(lam_spinfree *sf);
lam_spinfree *lam_spinfree_clone(const lam_spinfree *sf);
/* Bytes the dense storage takes for n orbitals. */
size_t lam_spinfree_bytes(int n);

/* Add c * e_pqrs (keeps (pq|rs) = (rs|pq)). */
void lam_spinfree_add_two(lam_spinfree *sf, int p, int q, int r, int s,
                          double c);

/* Read the terms of a spinfree stream (the header already read by
 * lam_reader_open).  Orbital count from "orbitals:" or, when absent, from
 * the largest index.  "electrons:" and "ms2:" are taken when present. */
lam_spinfree *lam_spinfree_read(lam_reader *r);
/* Read the terms of a spinfree stream that declares "orbitals: n" one at a
 * time, without the dense n^4 arrays: fn gets each line's coefficient and
 * indices (c alone, c E_pq or c e_pqrs) and its line number.  Returns n;
 * a stream without "orbitals:" is refused (exit 65). */
typedef void (*lam_spinfree_line_visit)(void *ctx, double c, int nidx, const int *idx, long line);
int lam_spinfree_read_each(lam_reader *r, lam_spinfree_line_visit fn, void *ctx);
/* Visit the terms in stream order: the constant (nidx 0), every non-zero
 * h_pq (nidx 2), and e_pqrs for (pq) <= (rs) with the coefficient of the
 * merged pair (nidx 4), non-zero only. */
typedef void (*lam_spinfree_visit)(void *ctx, double c, int nidx, const int *idx);
void lam_spinfree_foreach_term(const lam_spinfree *sf, lam_spinfree_visit fn, void *ctx);
/* Write those terms (not the header). */
void lam_spinfree_write_terms(lam_writer *w, const lam_spinfree *sf);
/* Format "p q" or "p q r s" (the fields after the coefficient). */
void lam_spinfree_format_indices(char *buf, size_t size, int nidx, const int *idx);
/* Header metadata every spinfree stream carries: orbitals, electrons,
 * ms2 (set in meta). */
void lam_spinfree_describe(const lam_spinfree *sf, lam_meta *meta);

/* Largest violation of h_pq = h_qp and (pq|rs) = (qp|sr) (hermiticity). */
double lam_spinfree_hermiticity_error(const lam_spinfree *sf);
/* Largest violation of (pq|rs) = (qp|rs) (with h_pq = h_qp, the 8-fold
 * symmetry of real orbitals). */
double lam_spinfree_real_symmetry_error(const lam_spinfree *sf);

/* exit 65 naming src and the first pair of entries that breaks
 * h_pq = h_qp or (pq|rs) = (qp|sr) beyond 1e-12 of the largest entry
 * (defined in fermion.c, beside the Majorana reader that calls it). */
void lam_spinfree_require_hermitian(const lam_spinfree *sf, const char *src);

/* Exit 65 naming src when the 8-fold symmetry of real integrals is
 * violated by more than 1e-12 of the largest |h|, |g| (17-digit streams
 * keep it far below); what names what needs it, in the message. */
void lam_spinfree_require_real_symmetry(const lam_spinfree *sf, const char *src,
                                        const char *what);

/* Identity part of the qubit/Majorana form:
 *   e0 + sum_p h_pp + 1/2 sum_pr (pp|rr) - 1/4 sum_pq (pq|qp). */
double lam_spinfree_constant(const lam_spinfree *sf);
/* Closed-form Majorana one-norm (no identity), valid for operators with
 * the 8-fold real symmetry (Koridon et al., PRR 3, 033127 (2021)):
 *   sum_pq |h_pq + sum_r (pq|rr) - 1/2 sum_r (pr|rq)|
 *   + 1/4 sum_pqrs |(pq|rs)| + 1/2 sum_{p>r,q>s} |(pq|rs) - (ps|rq)| */
double lam_spinfree_lambda(const lam_spinfree *sf);

/* Number of terms lam_spinfree_foreach_term visits. */
size_t lam_spinfree_term_count(const lam_spinfree *sf);

#endif
