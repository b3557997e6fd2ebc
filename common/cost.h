/* cost.h - resource estimates for qubitized phase estimation of an LCU.
 *
 * An LCU H = sum_k c_k U_k (identity left out) is summarized by its
 * one-norm lambda, the number L of unitaries, the system qubits and the
 * fixed-angle rotations its unitaries need.  From these and a target
 * energy error eps the estimate gives
 *
 *   walk steps   ceil(pi lambda / (2 eps))   (Babbush et al., PRX 8,
 *                041015 (2018); Lee et al., PRX Quantum 2, 030305 (2021))
 *   Toffolis     per step: SELECT by unary iteration (L - 1), PREPARE and
 *                its inverse by coherent alias sampling, the reflection
 *                about the PREPARE register; times the walk steps
 *   qubits       system + selection index + alias-sampling ancillas +
 *                unary-iteration ancillas + phase register
 *   rotations    fixed-angle rotations of the unitaries, counted apart
 *                (they are synthesized into T gates, not Toffolis)
 *
 * The counting of each part is written down in man/lam-cost.1.  These are
 * estimates of one construction, not optimized circuits.
 */
#ifndef LAM_COST_H
#define LAM_COST_H

#include "fragments.h"
#include "pauli.h"
#include "report.h"

/* What the estimate needs to know about an LCU. */
typedef struct {
    const char *form;        /* "pauli", "pauli_grouped", "fragments" */
    double lambda;           /* one-norm without the identity, Eh */
    long long unitaries;     /* L, the unitaries SELECT chooses among */
    long long rotations;     /* fixed-angle single-qubit rotations the
                                unitaries need per walk step (0 for
                                Pauli strings, which are Clifford) */
    int system_qubits;
} lam_lcu_summary;

typedef struct {
    double error;       /* target energy error eps, Eh (> 0) */
    int keep_bits;      /* mu, bits of the alias-sampling keep
                           probabilities; 0 chooses ceil(log2(lambda/eps)) */
} lam_cost_params;

typedef struct {
    long long walk_steps;
    int keep_bits;        /* mu actually used */
    int index_bits;       /* ceil(log2 L), at least 1 */
    long long toffoli_select, toffoli_prepare, toffoli_reflect;
    long long toffoli_per_step, toffoli_total;
    long long rotations_per_step, rotations_total;
    int qubits_system, qubits_index, qubits_alias, qubits_unary;
    int qubits_phase, logical_qubits;
} lam_cost_estimate;

/* Default target error: 1.6 mEh ("chemical accuracy", common practice). */
#define LAM_COST_DEFAULT_ERROR 1.6e-3

/* ceil(pi lambda / (2 eps)); -1 when it does not fit in 2^53. */
long long lam_cost_walk_steps(double lambda, double eps);
/* ceil(log2 n) for n >= 1, at least 1. */
int lam_cost_index_bits(long long n);
/* mu = ceil(log2(lambda / eps)), at least 1: the alias table then
 * rounds the operator by at most lambda 2^-mu <= eps. */
int lam_cost_default_keep_bits(double lambda, double eps);

/* Fill est from the summary; returns 0, or -1 with a reason in why
 * (a static string) when the numbers overflow or make no sense. */
int lam_cost_estimate_lcu(const lam_lcu_summary *lcu,
                          const lam_cost_params *par, lam_cost_estimate *est,
                          const char **why);

/* Summaries of the forms lam-cost reads.  From a pauli set (merged here):
 * with use_groups and labels present, each group is one unitary (a
 * normalized sum of anticommuting strings, applied as R P R^dagger with
 * 2(m - 1) Pauli rotations for a group of m strings); unlabelled terms
 * and ungrouped use are single Pauli strings.  The identity is never a
 * unitary. */
void lam_cost_summary_from_pauli(lam_pauli_set *s, int use_groups,
                                 lam_lcu_summary *lcu);

/* From a fragments stream: every reflection or product of two reflections
 * is one unitary; each fragment's orbital rotation (unless it is the
 * identity) is applied before and after as a network of n(n - 1)/2 Givens
 * rotations per spin, two fixed-angle rotations each: 4 n (n - 1)
 * rotations per fragment and step. */
void lam_cost_summary_from_fragments(const lam_fragments *fr, lam_lcu_summary *lcu);
/* The same from the figures of a lam-norm report of a fragments stream
 * (rotations counted for every fragment). */
long long lam_cost_fragment_rotations(long long fragments, int orbitals);

/* One line that says what the estimate assumes (no tabs). */
const char *lam_cost_assumptions(const lam_lcu_summary *lcu);

/* Append every input figure and estimate to rep (snake_case keys). */
void lam_cost_report(lam_report *rep, const lam_lcu_summary *lcu,
                     const lam_cost_params *par, const lam_cost_estimate *est);

#endif
