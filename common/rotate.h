/* rotate.h - real orbital rotations of a spin-free operator, chosen to
 * lower its one-norm.
 *
 * A real orthogonal U (new orbital j = sum_p U_pj old orbital p) maps
 *
 *   h'   = U^T h U,
 *   g'_pqrs = sum_abcd U_ap U_bq U_cr U_ds g_abcd,
 *
 * which is the same operator written in other orbitals: every eigenvalue of
 * every (Na, Nb) sector is unchanged, but the Pauli one-norm lambda (the
 * closed form of Koridon et al., Phys. Rev. Research 3, 033127 (2021),
 * lam_spinfree_lambda) is not.  lamina minimizes a smoothed lambda over
 * U = U0 exp(K), K antisymmetric, by L-BFGS in the moving frame (each step
 * is exp of the step in the current orbitals, and the gradient is taken at
 * K = 0 there; common practice of orbital optimization), with analytic
 * gradients: the four-index transformation and its adjoint are dgemm
 * calls.  The same machinery gives the Edmiston-Ruedenberg localization
 * (maximum of sum_i (ii|ii); Edmiston and Ruedenberg, Rev. Mod. Phys. 35,
 * 457 (1963), from memory), which needs nothing but the integrals.
 */
#ifndef LAM_ROTATE_H
#define LAM_ROTATE_H

#include <stdint.h>
#include "spinfree.h"
#include "util.h"

/* out = the operator in the orbitals U (n x n, row-major), with the
 * 8-fold symmetry of real integrals made exact (the rounding of the
 * transformation breaks it in the last bit).  out must have the same n;
 * work holds n^4 doubles.  e0, electrons, ms2 are copied. */
void lam_rotate_apply(const lam_spinfree *in, const double *u, lam_spinfree *out,
                      double *work);

/* The smoothed closed-form one-norm: lam_spinfree_lambda with every |x|
 * replaced by sqrt(x^2 + mu^2) - mu (mu = 0: |x|, and the gradient is a
 * subgradient).  Needs the 8-fold real symmetry.  When gh and gg are not
 * NULL they receive d/dh (n x n) and d/dg (n^4), the latter symmetrized
 * over the 8 index permutations of real integrals, so that it can be
 * contracted with any index. */
double lam_rotate_smooth_lambda(const lam_spinfree *sf, double mu, double *gh, double *gg);

/* Gradient with respect to K (at K = 0) of f(exp(K)^T-rotated sf), given
 * df/dh and the symmetrized df/dg of sf: grad (n x n) = G - G^T with
 * G = h gh^T + h^T gh + 4 g_(1) gg_(1)^T (the adjoint transformation, one
 * dgemm).  grad[a*n+b] for a < b is the derivative along K_ab = -K_ba. */
void lam_rotate_gradient(const lam_spinfree *sf, const double *gh, const double *gg,
                         double *grad);

/* exp(K) of an antisymmetric n x n K (scaling and squaring of the Taylor
 * series), re-orthonormalized to rounding. */
int lam_rotate_expm(int n, const double *k, double *e, lam_error *err);
/* U <- U (U^T U)^(-1/2): the nearest orthogonal matrix (Lowdin).  Fails
 * (code 70) only when LAPACK does, on a non-finite U. */
int lam_rotate_orthonormalize(int n, double *u, lam_error *err);
/* max |U^T U - I| */
double lam_rotate_orthogonality_error(int n, const double *u);

/* Orbital blocks: block[p] is the block of orbital p, -1 for orbitals that
 * do not move.  Only pairs in one block rotate. */
typedef struct {
    int n;
    int *block;
} lam_rotate_blocks;

/* "0-4,5-9" (blocks separated by commas; a block is ranges a-b or single
 * orbitals joined by '+', e.g. "0-2+7,3-6"), or "occ-virt" (the first N/2
 * orbitals and the rest; electrons N even), or NULL (one block of all).
 * Returns 0, or -1 with a reason in err (size errsize). */
int lam_rotate_blocks_parse(const char *spec, int n, int electrons, lam_rotate_blocks *b,
                            char *err, size_t errsize);
void lam_rotate_blocks_free(lam_rotate_blocks *b);

/* Objectives. */
typedef enum {
    LAM_ROTATE_PAULI = 0,  /* closed-form Pauli lambda */
    LAM_ROTATE_SHIFTED,    /* lambda after the optimal symmetry shift (lam-shift's LP) */
    LAM_ROTATE_GROUPED,    /* lambda after the shift and anticommuting grouping */
    LAM_ROTATE_ER          /* Edmiston-Ruedenberg: maximize sum_i (ii|ii) */
} lam_rotate_objective;

int lam_rotate_objective_parse(const char *name, lam_rotate_objective *obj);
const char *lam_rotate_objective_name(lam_rotate_objective obj);

typedef struct {
    lam_rotate_objective objective;
    int max_iter;        /* L-BFGS iterations per smoothing stage */
    int outer;           /* shift/rotation alternations (shifted, grouped) */
    int starts;          /* extra random starts */
    uint64_t seed;
    double gtol;         /* stop a stage when |grad| <= gtol */
    double ftol;         /* ... or when ten iterations gained less than ftol
                            (relative) */
    double mu0;          /* first smoothing width (Eh); divided by 10 per stage */
    int stages;          /* smoothing stages before the non-smoothed polish */
    int memory;          /* L-BFGS pairs kept */
    const lam_rotate_blocks *blocks;
} lam_rotate_options;

void lam_rotate_default_options(lam_rotate_options *opt);

typedef struct {
    double before;       /* objective at the start */
    double after;        /* objective at the result (never above before) */
    double lambda_before, lambda_after; /* plain Pauli lambda */
    int iterations;      /* L-BFGS iterations, all stages and starts */
    int evaluations;     /* objective + gradient evaluations */
    int best_start;      /* 0: the given start, k: random start k */
    int kept_start;      /* 1 when no candidate beat the start */
    /* the grouped objective: how well the shifted lambda (surrogate)
     * tracks the grouped one over the candidates evaluated */
    int candidates;
    double surrogate_corr; /* rank correlation (Spearman), NAN below 3 */
} lam_rotate_result;

/* Minimize the objective over rotations u0 exp(K) (u0 is the start; on
 * return u holds the best U found and out (n orbitals) h in those
 * orbitals, never worse than u0 for the objective as evaluated on out
 * itself).  h is the operator in the original orbitals. */
int lam_rotate_optimize(const lam_spinfree *h, const double *u0, const lam_rotate_options *opt,
                        double *u, lam_spinfree *out, lam_rotate_result *res, lam_error *err);

/* Objective value of the operator (already rotated; the ER sum positive). */
int lam_rotate_objective_value(const lam_spinfree *h, lam_rotate_objective obj, double *value, lam_error *err);
/* Sum_i (ii|ii). */
double lam_rotate_er_value(const lam_spinfree *h);

/* The optimal symmetry shift of sf (a1, a2, xi; lam-shift's LP) subtracted
 * in place; *lambda receives lambda(sf - K).  Fails (code 70) only when
 * the LP does, on non-finite integrals. */
int lam_rotate_subtract_shift(lam_spinfree *sf, double *lambda, lam_error *err);
/* lambda_grouped of sf after the shift (Jordan-Wigner, lam-group's
 * default options) into *lambda. */
int lam_rotate_grouped_lambda(const lam_spinfree *sf, double *lambda, lam_error *err);

/* Read an n x n rotation into *out (one row a line, blank lines and '#'
 * comments skipped); fails with exit 65 and path:line on a bad number, a wrong row length or
 * row count, or when max |U^T U - I| > LAM_ROTATE_ORTHO_TOL; 66 when it
 * cannot be opened, 74 when reading fails.  A matrix within the tolerance is orthonormalized
 * (Lowdin) so that the spectrum is kept to rounding. */
#define LAM_ROTATE_ORTHO_TOL 1e-8
int lam_rotate_read_matrix(const char *path, int n, double **out, lam_error *err);
/* Write U to f (opened by the caller before the work), one row a line,
 * 17 significant digits; the caller's close sees a write error. */
#include <stdio.h>
void lam_rotate_write_matrix(FILE *f, int n, const double *u);

/* Random orthogonal exp(K), K antisymmetric within the blocks with normal
 * entries of standard deviation sigma (radians), from a seed. */
int lam_rotate_random(int n, const lam_rotate_blocks *b, double sigma, uint64_t *state,
                      double *u, lam_error *err);

#endif
