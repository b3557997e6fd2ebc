/* cost.h - resource estimates for qubitized phase estimation, one
 * construction per representation.
 *
 * An input (pauli stream, grouped pauli stream, fragments stream, or the
 * lam-norm report of one) is summarized once (lam_lcu_summary); each
 * construction that applies to it then prices one walk step in Toffolis,
 * fixed-angle rotations and logical qubits:
 *
 *   flat     unary-iteration SELECT over every unitary, alias-sampling
 *            PREPARE (Babbush et al., PRX 8, 041015 (2018))   cost_flat.c
 *   sparse   sparse-representation qubitization, QROAM over the terms
 *            (Berry et al., Quantum 3, 208 (2019))            cost_sparse.c
 *   grouped  SELECT over anticommuting groups, each group applied as a
 *            sequence of Pauli rotations around one member (Izmaylov et
 *            al., JCTC 16, 190 (2020))                        cost_sparse.c
 *   df       double factorization with Givens rotations loaded by QROM
 *            (von Burg et al., PRR 3, 033055 (2021); Lee et al., PRX
 *            Quantum 2, 030305 (2021))                        cost_df.c
 *
 * All citations from memory.  The term-by-term accounting of each is in
 * man/lam-cost.1; it is this program's reading of the papers, not their
 * final formulas copied.  Rotations become Toffolis by the phase-gradient
 * method (Gidney, Quantum 2, 74 (2018)).  Every figure is an estimate of
 * one construction: no distillation, routing or layout.
 */
#ifndef LAM_COST_H
#define LAM_COST_H

#include "fragments.h"
#include "pauli.h"
#include "report.h"

/* Default target error: 1.6 mEh ("chemical accuracy", common practice). */
#define LAM_COST_DEFAULT_ERROR 1.6e-3
/* Default shares of the budget: phase estimation, truncation, synthesis. */
#define LAM_COST_DEFAULT_SPLIT_PHASE 0.8
#define LAM_COST_DEFAULT_SPLIT_TRUNC 0.1
#define LAM_COST_DEFAULT_SPLIT_SYNTH 0.1
/* Bits of the rotation that turns the uniform superposition over a
 * number of values that is not a power of two into an exact one (Lee et
 * al. 2021 use 7; from memory). */
#define LAM_COST_USP_ROT_BITS 7

/* The error budget, Eh. */
typedef struct {
    double total, phase, trunc, synth;
} lam_cost_budget;

/* Split total by fractions (each >= 0, phase > 0, sum 1 within 1e-9);
 * 0, or -1 with a reason. */
int lam_cost_budget_split(double total, const double frac[3], lam_cost_budget *b,
                          const char **why);

/* What the constructions need to know about one input. */
typedef struct {
    const char *form;        /* "pauli", "pauli_grouped", "fragments" */
    int system_qubits;       /* n (2 x orbitals for fragments) */
    double trunc_input;      /* bound on the operator-norm error the input
                                already carries (Eh); < 0 when unknown */
    const char *trunc_source;/* what trunc_input comes from */
    /* the flat LCU: every unitary SELECT chooses among */
    double lambda;           /* sum |c| over the unitaries, Eh */
    long long unitaries;
    long long flat_rotations;/* fixed-angle rotations the unitaries need */
    /* pauli and pauli_grouped */
    long long strings;       /* distinct non-identity Pauli strings */
    double lambda_strings;   /* their sum |c| */
    long long groups;        /* anticommuting groups (pauli_grouped) */
    long long grouped_strings; /* strings in groups of two or more */
    int largest_group;
    /* fragments: the double-factorized form of the two-body fragments */
    int orbitals;
    long long df_factors;    /* L: rank-one factors (eigenvectors of each
                                fragment's l matrix), one-body not included */
    long long df_eigvecs;    /* Xi: total eigenvectors over the factors,
                                plus the one-body fragment's orbitals */
    double df_lambda;        /* the one-norm the DF walk block-encodes */
    int df_complete;         /* 1 when the factors were derived from a
                                spin-symmetric stream; 0 from a report or
                                a fragment that is not spin symmetric (no
                                DF row then) */
} lam_lcu_summary;

/* Constructions. */
typedef enum {
    LAM_CON_FLAT,
    LAM_CON_SPARSE,
    LAM_CON_GROUPED,
    LAM_CON_DF,
    LAM_CON_COUNT
} lam_construction;

const char *lam_cost_construction_name(lam_construction c);
/* -1 when the name is unknown. */
int lam_cost_construction_parse(const char *name, lam_construction *c);
/* Does construction c apply to this input? */
int lam_cost_applies(const lam_lcu_summary *lcu, lam_construction c);
/* The construction the literature uses for this input's form. */
lam_construction lam_cost_headline(const lam_lcu_summary *lcu);

/* Overrides of the budget-derived bit widths (0: from the budget). */
typedef struct {
    int prep_bits; /* aleph: keep-probability bits of alias sampling */
    int rot_bits;  /* b: bits of every rotation angle */
} lam_cost_params;

typedef struct {
    lam_construction con;
    double lambda;           /* the one-norm this construction's walk sees */
    long long walk_steps;
    int prep_bits, rot_bits;
    int qroam_block, qroam_block_erase; /* k and k' (0: none) */
    long long toffoli_select, toffoli_prepare, toffoli_rotations, toffoli_other;
    long long step_toffoli;    /* their sum: rotations included */
    long long step_rotations;  /* fixed-angle rotations per step */
    long long run_toffoli, run_rotations;
    int qubits_system, qubits_work, qubits_phase, run_qubits;
    double synth_error;        /* bound on the error of rounding (Eh) */
} lam_cost_estimate;

/* ---- common pieces (cost.c) ---- */

/* ceil(pi lambda / (2 eps)); -1 when it does not fit in 2^53. */
long long lam_cost_walk_steps(double lambda, double eps);
/* ceil(log2 n) for n >= 1, at least 1. */
int lam_cost_index_bits(long long n);
/* ceil(log2(lambda / eps)), between 1 and 60: alias sampling with these
 * keep bits changes the operator by at most lambda 2^-bits <= eps. */
int lam_cost_prep_bits(double lambda, double eps);
/* Bits b of the rotation angles so that r rotations on the path of one
 * SELECT, each rounded by at most pi 2^-b, move the block-encoded
 * operator by at most lambda r pi 2^-b <= eps; between 3 and 60. */
int lam_cost_rot_bits(double lambda, long long r, double eps);
/* Toffolis of one b-bit rotation by the phase-gradient method: b - 2
 * (Gidney, Quantum 2, 74 (2018), as counted by Lee et al. 2021; from
 * memory). */
long long lam_cost_rotation_toffolis(int b);
/* Uniform superposition over d values: 0 when d is a power of two, else
 * 3 ceil(log2 d) - 3 eta + 2 br - 9 with 2^eta the largest power of two
 * dividing d (Lee et al. 2021, from memory). */
long long lam_cost_usp_toffolis(long long d, int br);
/* QROAM reading d items of m bits with blocks of k: ceil(d/k) + m(k - 1)
 * Toffolis (Berry et al. 2019; Low, Kliuchnikov, Schaeffer 2018); the k
 * (power of two) minimizing it is stored in *k. */
long long lam_cost_qroam_read(long long d, long long m, int *k);
/* Its erasure by measurement: ceil(d/k') + k', k' minimizing it. */
long long lam_cost_qroam_erase(long long d, int *k);

/* ---- the constructions: fill est (its con set by the caller), 0 or -1
 * with a reason (static string). ---- */
int lam_cost_flat(const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                  const lam_cost_params *par, lam_cost_estimate *est, const char **why);
int lam_cost_sparse(const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                    const lam_cost_params *par, lam_cost_estimate *est, const char **why);
int lam_cost_grouped(const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                     const lam_cost_params *par, lam_cost_estimate *est, const char **why);
int lam_cost_df(const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                const lam_cost_params *par, lam_cost_estimate *est, const char **why);
/* Dispatch on c. */
int lam_cost_estimate_one(const lam_lcu_summary *lcu, lam_construction c,
                          const lam_cost_budget *bud, const lam_cost_params *par,
                          lam_cost_estimate *est, const char **why);

/* Per-step parts shared by the constructions, exposed for the tests. */
typedef struct {
    long long d;       /* terms of the sparse list */
    int data_bits;     /* bits that say which term (and its sign) */
    long long select;  /* Toffolis of SELECT given the data */
    int prep_bits;
} lam_cost_sparse_in;
typedef struct {
    long long prepare, select, other;
    int k, k_erase, index_bits, read_bits;
} lam_cost_sparse_step;
void lam_cost_sparse_step_of(const lam_cost_sparse_in *in, lam_cost_sparse_step *out);

typedef struct {
    int n;             /* spatial orbitals (N = 2n spin orbitals) */
    long long L;       /* rank-one factors, one-body not included */
    long long xi;      /* eigenvectors, one-body included */
    int aleph1, aleph2, beta;
} lam_cost_df_in;
typedef struct {
    long long first_prepare;  /* both registers of l, in and out */
    long long second_prepare; /* both halves, in and out */
    long long rot_read;       /* QROAM of the angles, read and erase, twice */
    long long rotations;      /* the Givens networks, in Toffolis */
    long long rot_count;      /* fixed-angle rotations */
    long long swaps, reflect;
    long long total;
    int k1, k2, k3;
    int qubits_work;
} lam_cost_df_step;
void lam_cost_df_step_of(const lam_cost_df_in *in, lam_cost_df_step *out);

/* ---- summaries of the inputs (cost.c, cost_df.c) ---- */

/* From a pauli set (merged here): groups are used when labels are present
 * and use_groups is set; the identity is never a unitary. */
void lam_cost_summary_from_pauli(lam_pauli_set *s, int use_groups, lam_lcu_summary *lcu);
/* From a fragments stream; meta may be NULL (trunc_input from its tol,
 * discarded-weight or integral-max-error).  Fails (code 70) only when
 * LAPACK fails on a fragment's matrix (non-finite coefficients). */
int lam_cost_summary_from_fragments(const lam_fragments *fr, const lam_meta *meta,
                                    lam_lcu_summary *lcu, lam_error *err);
/* Rotations of the flat count: n(n-1)/2 Givens rotations per spin, two
 * rotations each, before and after: 4 n (n - 1) per fragment. */
long long lam_cost_fragment_rotations(long long fragments, int orbitals);
/* Bound on the operator error of a fragments stream from its metadata
 * (double factorization: (2n + 1) x discarded weight; else 2 n^2 (n^2 + 1)
 * x the largest integral error); -1 when the metadata say nothing. */
double lam_cost_fragments_trunc(const lam_meta *meta, int n, const char **source);

/* One line that says what the estimate is and leaves out (no tabs). */
const char *lam_cost_assumptions(lam_construction c);

/* Append every figure to rep (scope-first dot keys, lam-cost(1)). */
void lam_cost_report(lam_report *rep, const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                     const lam_cost_estimate *est);

#endif
