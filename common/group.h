/* group.h - grouping Pauli terms into mutually anticommuting sets.
 *
 * Real-coefficient Pauli strings that pairwise anticommute satisfy
 * (sum_i c_i P_i)^2 = (sum_i c_i^2) I, so each such set is one unitary with
 * weight sqrt(sum_i c_i^2) in an LCU, and
 *
 *   lambda_grouped = sum_groups sqrt(sum_{i in g} c_i^2)  <=  sum_i |c_i|.
 *
 * The grouping is greedy (terms by decreasing |c|), then refined by moving
 * terms between groups while lambda_grouped falls, then optionally a term is
 * shared between several groups it anticommutes with entirely
 * (c = sum_g c_g) with the split chosen to minimize sum_g ||c_g||_2, a
 * second-order cone program solved by iteratively reweighted least squares
 * with a dual bound that certifies how close the split is to optimal.
 *
 * The same code groups mutually commuting terms (measurement planning);
 * sum_g sqrt(sum c^2) is then the sum of the group standard deviations on
 * the maximally mixed state, the quantity sorted insertion lowers.
 *
 * Everything is deterministic: ties are broken by term and group order.
 */
#ifndef LAM_GROUP_H
#define LAM_GROUP_H

#include <stddef.h>
#include "pauli.h"

typedef enum {
    LAM_GROUP_SORTED = 0, /* first group (in creation order) that admits it */
    LAM_GROUP_BEST        /* the admitting group whose norm grows least */
} lam_group_method;

/* Streams above this many terms get neither refinement nor split unless
 * asked for: there they cost several times the greedy pass and gain well
 * under one per cent (bench/group.sh). */
#define LAM_GROUP_AUTO_TERMS 200000

typedef struct {
    lam_group_method method;
    int refine_passes;   /* passes of the move refinement (0: none; -1: 8
                            up to LAM_GROUP_AUTO_TERMS terms, else none) */
    int split;           /* share terms between groups (IRLS); -1: on up
                            to LAM_GROUP_AUTO_TERMS terms */
    int split_iterations;
    int commuting;       /* group mutually commuting terms instead */
} lam_group_options;

/* The options that measure best (see man/lam-group.1). */
void lam_group_options_default(lam_group_options *opt);
/* "sorted"/"best" -> method; -1 for an unknown name. */
int lam_group_method_parse(const char *name, lam_group_method *method);
const char *lam_group_method_name(lam_group_method method);

typedef struct {
    size_t terms;          /* distinct non-identity input terms */
    size_t groups;
    size_t lines;          /* non-identity output lines (shares count) */
    size_t shared_terms;   /* terms split over more than one group */
    size_t largest_group;
    double constant;       /* identity coefficient */
    double lambda;         /* sum |c| over the non-identity terms */
    double lambda_greedy;  /* after the greedy pass */
    double lambda_refined; /* after refinement (= greedy without it) */
    double lambda_grouped; /* the final value */
    double split_bound;    /* lower bound on the optimal split (dual), or 0 */
    int refine_passes_done;
    int split_done;        /* the split was applied */
    int split_iterations_done;
} lam_group_stats;

/* Group the terms of in (which must be merged: one line per string, group
 * labels ignored).  out receives the identity (unlabelled, first), then
 * every group in order of decreasing weight, labelled 0, 1, ...; with
 * split a string may appear in several groups with coefficients that add
 * up to its input coefficient.  Exact zeros are kept, each grouped like
 * any term. */
int lam_group_build(const lam_pauli_set *in, const lam_group_options *opt,
                    lam_pauli_set *out, lam_group_stats *st, lam_error *err);

/* Verify a labelled set: within every group, every pair of distinct strings
 * anticommutes (commutes when want_commuting).  Returns 0 when it holds,
 * else 1 with *first, *second the offending pair (first < second), chosen
 * with the smallest second, then the smallest first. */
int lam_group_check(const lam_pauli_set *s, int want_commuting, size_t *first,
                    size_t *second);

#endif
