/* lp.h - weighted L1 regression, solved as a linear program by a
 * primal-dual interior-point method (Mehrotra predictor-corrector).
 *
 *   minimize   sum_t w_t | c_t - a_t . x |      over x in R^k, w_t > 0
 *
 * written as the LP  min w.(u + v)  s.t.  A x + u - v = c,  u, v >= 0,
 * whose dual is      max c.y        s.t.  A^T y = 0,  -w <= y <= w.
 * Every dual-feasible y gives the lower bound c.y; the solver returns such
 * a y's bound next to the primal value, so the optimum is certified to
 * within their difference (the gap).
 *
 * The rows are sparse (each depends on few parameters).  The normal
 * matrix A^T D A is block diagonal over the connected components of the
 * "appear in a common row" graph; each block is factored on its own by a
 * dense Cholesky (LAPACKE_dpotrf), so the work per iteration is linear in
 * the rows when the parameters decouple.
 */
#ifndef LAM_LP_H
#define LAM_LP_H

#include <stddef.h>
#include <stdio.h>

#include "util.h"

typedef struct {
    int params;        /* k */
    size_t rows;       /* m */
    size_t nnz;
    double *weight;    /* m, each > 0 */
    double *target;    /* m: c_t */
    size_t *start;     /* m + 1: row t has entries start[t] .. start[t+1] */
    int *col;          /* nnz parameter indices */
    double *val;       /* nnz coefficients */
    size_t row_cap, nnz_cap;
} lam_l1_problem;

void lam_l1_init(lam_l1_problem *p, int params);
void lam_l1_free(lam_l1_problem *p);
/* Append the row weight * |target - sum_i val[i] x[col[i]]|.  A column
 * outside the parameters fails (code 70: the caller numbers them). */
int lam_l1_add_row(lam_l1_problem *p, double weight, double target, int nnz,
                   const int *col, const double *val, lam_error *err);
/* Merge rows that are equal bit for bit (target, parameters, coefficients
 * in the same order) by adding their weights; returns the rows left.
 * The objective is unchanged. */
size_t lam_l1_merge_rows(lam_l1_problem *p);
/* Text form for other solvers: "params k", "fixed F", "rows m", then per
 * row "w c nnz j a j a ..." (17 digits); the objective is F + the rows. */
void lam_l1_write(FILE *f, const lam_l1_problem *p, double fixed);
/* sum_t w_t |c_t - a_t . x| */
double lam_l1_objective(const lam_l1_problem *p, const double *x);

typedef struct {
    double rel_gap;   /* stop when gap <= rel_gap * (offset + primal), or
                         when the gap is at the rounding level, 1e-14 of
                         offset + sum_t w_t |c_t| (the value at x = 0) */
    double offset;    /* fixed part of the objective (terms not in the LP),
                         counted in the scale of the relative gap */
    int max_iter;
} lam_l1_options;

/* rel_gap 1e-10, offset 0, max_iter 200. */
void lam_l1_default_options(lam_l1_options *opt);

typedef struct {
    double primal;        /* sum_t w_t |c_t - a_t . x| at the returned x */
    double dual;          /* c.y for a y with A^T y = 0 (to rounding) and
                             |y_t| <= w_t: a lower bound of the optimum */
    int iterations;
    int converged;        /* the relative gap reached rel_gap */
    int blocks;           /* diagonal blocks of the normal matrix */
    int largest_block;
} lam_l1_result;

/* Called once per iteration (may be NULL). */
typedef void (*lam_l1_monitor)(int iteration, double primal, double dual,
                               void *ctx);

/* Solve; x (k entries) receives the parameters.  Parameters that appear in
 * no row are set to 0.  res->converged is 0 when max_iter ran out (x and
 * the bounds are still valid, only less tight).  Fails (code 70) on a row
 * whose weight is not positive or whose target is not finite, or when the
 * normal equations cannot be factored (non-finite data). */
int lam_l1_solve(const lam_l1_problem *p, const lam_l1_options *opt,
                 lam_l1_monitor monitor, void *ctx, double *x,
                 lam_l1_result *res, lam_error *err);

#endif
