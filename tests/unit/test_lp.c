/* test_lp.c - the L1 regression solver against answers known without it. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "lp.h"
#include "rng.h"
#include "tap.h"

static lam_error lib_err;

static void add_row(lam_l1_problem *p, double weight, double target, int nnz, const int *col,
                    const double *val)
{
    if (lam_l1_add_row(p, weight, target, nnz, col, val, &lib_err)) tap_ok(0, lib_err.msg);
}

static unsigned long long rng_state = 88172645463325252ULL;
static double uniform(void) { return test_unit(&rng_state); }

/* p solved with the default options: x, its result and status. */
static int solve(const lam_l1_problem *p, double *x, lam_l1_result *res)
{
    lam_l1_options opt;
    lam_l1_default_options(&opt);
    int rc = lam_l1_solve(p, &opt, NULL, NULL, x, res, &lib_err);
    if (rc) tap_ok(0, lib_err.msg);
    return rc;
}

/* Elementary fact (common practice): sum_t w_t |c_t - x| is minimized by a
 * weighted median of the c_t. */
static void weighted_median(void)
{
    lam_l1_problem p;
    lam_l1_init(&p, 1);
    const double c[] = {3, -1, 7, 2, 10};
    const double w[] = {1, 1, 1, 1, 1};
    int col = 0;
    double one = 1;
    for (int t = 0; t < 5; ++t) add_row(&p, w[t], c[t], 1, &col, &one);
    double x;
    lam_l1_result res;
    int st = solve(&p, &x, &res);
    tap_ok(st == 0 && res.converged, "median: converged");
    tap_near(x, 3, 1e-8, "median of {3,-1,7,2,10} is 3");
    tap_near(res.primal, 4 + 4 + 1 + 7, 1e-9, "median: objective 16");
    tap_ok(res.dual <= res.primal && res.primal - res.dual <= 1e-10 * 16,
           "median: certified gap within 1e-10 relative");
    lam_l1_free(&p);

    /* weights 1,1,5 on 0,1,2: the heavy point wins */
    lam_l1_init(&p, 1);
    const double c2[] = {0, 1, 2}, w2[] = {1, 1, 5};
    for (int t = 0; t < 3; ++t) add_row(&p, w2[t], c2[t], 1, &col, &one);
    solve(&p, &x, &res);
    tap_near(x, 2, 1e-8, "weighted median follows the heavy weight");
    tap_near(res.primal, 3, 1e-9, "weighted median objective 3");
    lam_l1_free(&p);
}

/* Fact of linear programming (common practice): an L1 regression in two
 * parameters has an optimal solution that fits two rows exactly, so the
 * best over all pairs of rows is the optimum. */
static double brute_force_two(const lam_l1_problem *p)
{
    double best = INFINITY;
    for (size_t s = 0; s < p->rows; ++s)
        for (size_t t = s + 1; t < p->rows; ++t) {
            const double *a = p->val + p->start[s], *b = p->val + p->start[t];
            double det = a[0] * b[1] - a[1] * b[0];
            if (fabs(det) < 1e-12) continue;
            double x[2] = {(p->target[s] * b[1] - a[1] * p->target[t]) / det,
                           (a[0] * p->target[t] - p->target[s] * b[0]) / det};
            double f = lam_l1_objective(p, x);
            if (f < best) best = f;
        }
    return best;
}

static void random_two_parameter(void)
{
    for (int trial = 0; trial < 5; ++trial) {
        lam_l1_problem p;
        lam_l1_init(&p, 2);
        int cols[2] = {0, 1};
        for (int t = 0; t < 40; ++t) {
            double a[2] = {uniform() * 2 - 1, uniform() * 2 - 1};
            add_row(&p, 0.1 + uniform(), 3 * uniform() - 1, 2, cols, a);
        }
        double x[2];
        lam_l1_result res;
        solve(&p, x, &res);
        double want = brute_force_two(&p);
        tap_near(res.primal, want, 1e-9 * want, "random 2-parameter L1 fit = best vertex");
        tap_ok(res.dual <= res.primal + 1e-15 && res.primal - res.dual <= 1e-10 * res.primal,
               "random fit: dual bound below, gap certified");
        tap_ok(res.blocks == 1 && res.largest_block == 2, "one block of two");
        lam_l1_free(&p);
    }
}

/* Independent parameters give independent blocks; the joint optimum is
 * the sum of the separate medians. */
static void decoupled_blocks(void)
{
    lam_l1_problem p;
    lam_l1_init(&p, 4);
    double one = 1;
    for (int j = 0; j < 3; ++j)
        for (int t = 0; t < 7; ++t)
            add_row(&p, 1, (double)(t * (j + 1)), 1, &j, &one);
    /* parameter 3 appears in no row */
    double x[4];
    lam_l1_result res;
    solve(&p, x, &res);
    tap_ok(res.blocks == 3 && res.largest_block == 1, "three singleton blocks");
    tap_near(x[0], 3, 1e-8, "block 0 median");
    tap_near(x[1], 6, 1e-8, "block 1 median");
    tap_near(x[2], 9, 1e-8, "block 2 median");
    tap_near(x[3], 0, 0, "unused parameter is zero");
    tap_near(res.primal, 12 + 24 + 36, 1e-8, "sum of the separate optima");
    lam_l1_free(&p);
}

/* Two parameters that only ever appear as x0 + x1: the normal matrix is
 * singular; the ridge must still give the optimum of the sum. */
static void rank_deficient(void)
{
    lam_l1_problem p;
    lam_l1_init(&p, 2);
    int cols[2] = {0, 1};
    double a[2] = {1, 1};
    const double c[] = {1, 2, 4, 8, 16};
    for (int t = 0; t < 5; ++t) add_row(&p, 1, c[t], 2, cols, a);
    double x[2];
    lam_l1_result res;
    solve(&p, x, &res);
    tap_near(x[0] + x[1], 4, 1e-7, "singular normal matrix: x0 + x1 at the median");
    tap_near(res.primal, 3 + 2 + 0 + 4 + 12, 1e-8, "singular normal matrix: objective");
    lam_l1_free(&p);
}

/* A system that a parameter fits exactly: the optimum is 0, where no
 * relative gap exists; the rounding-level floor must end the iteration. */
static void exact_fit(void)
{
    lam_l1_problem p;
    lam_l1_init(&p, 1);
    int col = 0;
    for (int t = 1; t <= 6; ++t) {
        double a = t;
        add_row(&p, 1, 2.5 * t, 1, &col, &a);
    }
    double x;
    lam_l1_result res;
    int st = solve(&p, &x, &res);
    tap_ok(st == 0 && res.converged, "exact fit: converged");
    tap_near(x, 2.5, 1e-12, "exact fit: x = 2.5");
    tap_near(res.primal, 0, 1e-12, "exact fit: objective 0");
    lam_l1_free(&p);
}

/* Merging equal rows keeps the objective and the optimum. */
static void merge_rows(void)
{
    lam_l1_problem p;
    lam_l1_init(&p, 2);
    int cols[2] = {0, 1};
    double a[3][2] = {{1, 2}, {1, -1}, {0.5, 0}};
    const double c[3] = {1, 2, -3};
    for (int rep = 0; rep < 4; ++rep)
        for (int t = 0; t < 3; ++t) add_row(&p, 0.5, c[t], 2, cols, a[t]);
    add_row(&p, 1, 7, 1, cols + 1, a[0]); /* a different one */
    double x[2] = {0.3, -0.7};
    double before = lam_l1_objective(&p, x);
    size_t left = lam_l1_merge_rows(&p);
    tap_ok(left == 4 && p.rows == 4 && p.nnz == 7, "13 rows merge to 4");
    tap_near(lam_l1_objective(&p, x), before, 1e-14, "merging keeps the objective");
    tap_near(p.weight[0], 2, 0, "merged weights add");
    lam_l1_free(&p);
}

/* Rows the solver cannot take come back as errors (code 70, the caller's
 * fault), with the row named; the problem is left as it was. */
static void bad_rows(void)
{
    lam_l1_problem p;
    lam_l1_init(&p, 1);
    int col = 0, far = 3;
    double one = 1, x = 0;
    lam_error err;
    tap_ok(lam_l1_add_row(&p, 1, 2, 1, &far, &one, &err) == 70 && p.rows == 0,
           "a column beyond the parameters: code 70, no row added");
    tap_ok(strcmp(err.msg, "L1 row refers to parameter 3 of 1") == 0, "... and the message names it");
    add_row(&p, 1, 2, 1, &col, &one);
    add_row(&p, 0, 5, 1, &col, &one);
    lam_l1_options opt;
    lam_l1_default_options(&opt);
    lam_l1_result res;
    tap_ok(lam_l1_solve(&p, &opt, NULL, NULL, &x, &res, &err) == 70, "a row of weight 0: code 70");
    tap_ok(strcmp(err.msg, "L1 row 1: weight 0, target 5") == 0, "... the row, its weight and target in the message");
    p.weight[1] = 1;
    p.target[1] = NAN;
    tap_ok(lam_l1_solve(&p, &opt, NULL, NULL, &x, &res, &err) == 70 && strstr(err.msg, "target nan"),
           "a row with a NaN target: code 70");
    p.target[1] = 5;
    tap_ok(lam_l1_solve(&p, &opt, NULL, NULL, &x, &res, &err) == 0 && fabs(res.primal - 3) < 1e-8,
           "the same problem with the row repaired solves (|2 - x| + |5 - x| >= 3)");
    lam_l1_free(&p);
}

int main(void)
{
    weighted_median();
    random_two_parameter();
    decoupled_blocks();
    rank_deficient();
    exact_fit();
    merge_rows();
    bad_rows();
    return tap_done();
}
