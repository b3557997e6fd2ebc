/* spinfree.h - spin-free (spin-summed) operators with real coefficients:
 *
 *   H = e0 + sum_pq h_pq E_pq + 1/2 sum_pqrs (pq|rs) e_pqrs
 *
 * E_pq = sum_s a+_ps a_qs, e_pqrs = sum_st a+_ps a+_rt a_st a_qs, chemists'
 * index order.  g holds (pq|rs) as a dense n^4 array; it always has the
 * symmetry (pq|rs) = (rs|pq), which is an identity of the operators
 * (e_pqrs = e_rspq).  The further symmetries of real integrals
 * ((pq|rs) = (qp|rs)) are properties that lam_spinfree_validate checks.
 */
#ifndef LAM_SPINFREE_H
#define LAM_SPINFREE_H

#include <stddef.h>
#include "stream.h"
#include "util.h"

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
 * lam_reader_open) into *out.  Orbital count from "orbitals:" or, when
 * absent, from the largest index.  "electrons:" and "ms2:" are taken when
 * present.  0, or the reader's error code (nothing left allocated). */
int lam_spinfree_read(lam_reader *r, lam_spinfree **out, lam_error *err);
/* The stream's kind into *kind and, when it is spinfree, the operator into
 * *out; for any other kind *out is NULL and the caller reads or refuses it. */
int lam_spinfree_read_if_kind(lam_reader *r, lam_kind *kind, lam_spinfree **out, lam_error *err);
/* Read the terms of a spinfree stream that declares "orbitals: n" one at a
 * time, without the dense n^4 arrays: fn gets each line's coefficient and
 * indices (c alone, c E_pq or c e_pqrs) and its line number; *norb gets n.
 * A stream without "orbitals:" is refused (65). */
typedef void (*lam_spinfree_line_visit)(void *ctx, double c, int nidx, const int *idx, long line);
int lam_spinfree_read_each(lam_reader *r, lam_spinfree_line_visit fn, void *ctx, int *norb,
                           lam_error *err);
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

/* The one validation policy of spin-free input, applied by every program
 * that reads a spinfree stream.  The operator must be Hermitian
 * (h_pq = h_qp and (pq|rs) = (qp|sr)) and, where real_for names something
 * that needs it (a closed form, the fragments), have the 8-fold symmetry
 * of real orbitals ((pq|rs) = (qp|rs)); both to LAM_SPINFREE_SYMMETRY_TOL
 * times lam_spinfree_scale.  A stream written with 17 digits keeps every
 * symmetry of its source to the last bit, far inside; an asymmetry above
 * it is a property of the operator, not rounding.  Returns 0, or 65 with
 * err naming file and the first pair of entries that differ (or the
 * largest violation of the real symmetry). */
#define LAM_SPINFREE_SYMMETRY_TOL 1e-12
int lam_spinfree_validate(const lam_spinfree *sf, const char *file, const char *real_for,
                          lam_error *err);
/* The scale of the policy: the largest |h_pq| and |(pq|rs)| (0 for the
 * zero operator, which passes). */
double lam_spinfree_scale(const lam_spinfree *sf);
/* 1 when the 8-fold real symmetry holds within the policy's tolerance (the
 * closed forms then apply), else 0. */
int lam_spinfree_is_real(const lam_spinfree *sf);

/* Identity part of the qubit/Majorana form:
 *   e0 + sum_p h_pp + 1/2 sum_pr (pp|rr) - 1/4 sum_pq (pq|qp). */
double lam_spinfree_constant(const lam_spinfree *sf);
/* One-body coefficient once the two-body part has given up its one-body
 * pieces: h_pq + sum_r (pq|rr) - 1/2 sum_r (pr|rq) (the closed form of
 * the one-norm, lam_spinfree_lambda in norm.h, and the direct Majorana
 * expansion both use it). */
double lam_spinfree_effective_one_body(const lam_spinfree *sf, int p, int q);

/* Number of terms lam_spinfree_foreach_term visits. */
size_t lam_spinfree_term_count(const lam_spinfree *sf);

#endif
