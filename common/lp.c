/* lp.c - weighted L1 regression by a primal-dual interior-point method.
 *
 * Variables: x (free), u, v >= 0 (primal), y with |y| < w (dual); the dual
 * slacks are w - y and w + y.  The start is primal and dual feasible
 * (u - v = c - A x, y = 0), and each Newton step keeps A x + u - v = c
 * exactly by construction; the dual equation A^T y = 0 is carried as a
 * residual so that rounding in the normal equations cannot accumulate.
 */
#include "lp.h"

#include <lapacke.h>
#include <math.h>
#include <stdlib.h>
#include <stdint.h>
#include <string.h>

#include "util.h"

void lam_l1_init(lam_l1_problem *p, int params)
{
    memset(p, 0, sizeof *p);
    p->params = params;
    p->row_cap = 64;
    p->nnz_cap = 256;
    p->weight = lam_malloc(p->row_cap * sizeof *p->weight);
    p->target = lam_malloc(p->row_cap * sizeof *p->target);
    p->start = lam_malloc((p->row_cap + 1) * sizeof *p->start);
    p->col = lam_malloc(p->nnz_cap * sizeof *p->col);
    p->val = lam_malloc(p->nnz_cap * sizeof *p->val);
    p->start[0] = 0;
}

void lam_l1_free(lam_l1_problem *p)
{
    LAM_FREE_ALL(p->weight, p->target, p->start, p->col, p->val);
    memset(p, 0, sizeof *p);
}

int lam_l1_add_row(lam_l1_problem *p, double weight, double target, int nnz,
                   const int *col, const double *val, lam_error *err)
{
    /* the callers number their own parameters: an internal error */
    for (int i = 0; i < nnz; ++i)
        if (col[i] < 0 || col[i] >= p->params)
            return lam_error_set(err, LAM_EX_SOFTWARE, "L1 row refers to parameter %d of %d", col[i], p->params);
    if (p->rows == p->row_cap) {
        p->row_cap *= 2;
        p->weight = lam_realloc(p->weight, lam_mul_size(p->row_cap, sizeof *p->weight));
        p->target = lam_realloc(p->target, lam_mul_size(p->row_cap, sizeof *p->target));
        p->start = lam_realloc(p->start, lam_mul_size(p->row_cap + 1, sizeof *p->start));
    }
    while (p->nnz + (size_t)nnz > p->nnz_cap) {
        p->nnz_cap *= 2;
        p->col = lam_realloc(p->col, lam_mul_size(p->nnz_cap, sizeof *p->col));
        p->val = lam_realloc(p->val, lam_mul_size(p->nnz_cap, sizeof *p->val));
    }
    for (int i = 0; i < nnz; ++i) {
        p->col[p->nnz + (size_t)i] = col[i];
        p->val[p->nnz + (size_t)i] = val[i];
    }
    p->nnz += (size_t)nnz;
    p->weight[p->rows] = weight;
    p->target[p->rows] = target;
    p->rows++;
    p->start[p->rows] = p->nnz;
    return 0;
}

static uint64_t mix(uint64_t h, uint64_t v)
{
    h ^= v + 0x9E3779B97F4A7C15ULL + (h << 6) + (h >> 2);
    return h * 0xFF51AFD7ED558CCDULL;
}

static uint64_t bits_of(double d)
{
    uint64_t u;
    d = d == 0 ? 0 : d; /* -0 and 0 alike */
    memcpy(&u, &d, sizeof u);
    return u;
}

static uint64_t row_hash(const lam_l1_problem *p, size_t t)
{
    uint64_t h = mix(0, bits_of(p->target[t]));
    for (size_t e = p->start[t]; e < p->start[t + 1]; ++e)
        h = mix(mix(h, (uint64_t)p->col[e]), bits_of(p->val[e]));
    return h;
}

static int rows_equal(const lam_l1_problem *p, size_t a, size_t b)
{
    size_t na = p->start[a + 1] - p->start[a];
    if (na != p->start[b + 1] - p->start[b]) return 0;
    if (bits_of(p->target[a]) != bits_of(p->target[b])) return 0;
    for (size_t i = 0; i < na; ++i) {
        size_t ea = p->start[a] + i, eb = p->start[b] + i;
        if (p->col[ea] != p->col[eb] || bits_of(p->val[ea]) != bits_of(p->val[eb])) return 0;
    }
    return 1;
}

size_t lam_l1_merge_rows(lam_l1_problem *p)
{
    size_t size = 16;
    while (size < 2 * p->rows) size *= 2;
    size_t *slot = lam_malloc(lam_mul_size(size, sizeof *slot));
    for (size_t i = 0; i < size; ++i) slot[i] = SIZE_MAX;
    size_t kept = 0, nnz = 0;
    for (size_t t = 0; t < p->rows; ++t) {
        size_t i = (size_t)row_hash(p, t) & (size - 1);
        for (; slot[i] != SIZE_MAX; i = (i + 1) & (size - 1))
            if (rows_equal(p, slot[i], t)) break;
        if (slot[i] != SIZE_MAX) {
            p->weight[slot[i]] += p->weight[t];
            continue;
        }
        /* move row t down to position kept (rows only move down, so the
         * rows already indexed stay where their slots say) */
        size_t e0 = p->start[t], len = p->start[t + 1] - e0;
        memmove(p->col + nnz, p->col + e0, len * sizeof *p->col);
        memmove(p->val + nnz, p->val + e0, len * sizeof *p->val);
        p->weight[kept] = p->weight[t];
        p->target[kept] = p->target[t];
        p->start[kept] = nnz;
        p->start[kept + 1] = nnz + len;
        nnz += len;
        slot[i] = kept++;
    }
    p->rows = kept;
    p->nnz = nnz;
    free(slot);
    return kept;
}

static double row_dot(const lam_l1_problem *p, size_t t, const double *x)
{
    double s = 0;
    for (size_t e = p->start[t]; e < p->start[t + 1]; ++e)
        s += p->val[e] * x[p->col[e]];
    return s;
}

double lam_l1_objective(const lam_l1_problem *p, const double *x)
{
    double s = 0;
    for (size_t t = 0; t < p->rows; ++t)
        s += p->weight[t] * fabs(p->target[t] - row_dot(p, t, x));
    return s;
}

void lam_l1_write(FILE *f, const lam_l1_problem *p, double fixed)
{
    fprintf(f, "# minimize fixed + sum_t w_t |c_t - sum_j a_tj x_j|; rows: w c nnz (j a)...\n");
    fprintf(f, "params %d\nfixed %.17g\nrows %zu\n", p->params, fixed, p->rows);
    for (size_t t = 0; t < p->rows; ++t) {
        fprintf(f, "%.17g %.17g %zu", p->weight[t], p->target[t], p->start[t + 1] - p->start[t]);
        for (size_t e = p->start[t]; e < p->start[t + 1]; ++e)
            fprintf(f, " %d %.17g", p->col[e], p->val[e]);
        fputc('\n', f);
    }
}

void lam_l1_default_options(lam_l1_options *opt)
{
    opt->rel_gap = 1e-10;
    opt->offset = 0;
    opt->max_iter = 200;
}

/* ---- block-diagonal normal matrix A^T diag(d) A ---- */

typedef struct {
    int k, nblocks;
    int *block;       /* parameter -> block, -1 when in no row */
    int *local;       /* parameter -> position in its block */
    int *size;        /* per block */
    size_t *offset;   /* per block, into mat */
    int *first;       /* per block, into rhs */
    double *mat;      /* dense blocks, row major */
    double *rhs;      /* k, scratch */
} normal_matrix;

static int find_root(int *parent, int i)
{
    while (parent[i] != i) {
        parent[i] = parent[parent[i]];
        i = parent[i];
    }
    return i;
}

/* Parameters sharing a row end up in one block (union-find). */
static void normal_init(normal_matrix *nm, const lam_l1_problem *p)
{
    int k = p->params;
    nm->k = k;
    int *parent = lam_malloc(lam_mul_size((size_t)k + 1, sizeof *parent));
    char *used = lam_calloc((size_t)k + 1, 1);
    for (int i = 0; i < k; ++i) parent[i] = i;
    for (size_t t = 0; t < p->rows; ++t) {
        size_t e0 = p->start[t];
        for (size_t e = e0; e < p->start[t + 1]; ++e) {
            used[p->col[e]] = 1;
            int a = find_root(parent, p->col[e0]), b = find_root(parent, p->col[e]);
            if (a != b) parent[b] = a;
        }
    }
    nm->block = lam_malloc(lam_mul_size((size_t)k + 1, sizeof *nm->block));
    nm->local = lam_malloc(lam_mul_size((size_t)k + 1, sizeof *nm->local));
    int *root_block = lam_malloc(lam_mul_size((size_t)k + 1, sizeof *root_block));
    for (int i = 0; i < k; ++i) root_block[i] = -1;
    nm->nblocks = 0;
    for (int i = 0; i < k; ++i)
        if (used[i] && root_block[find_root(parent, i)] < 0)
            root_block[find_root(parent, i)] = nm->nblocks++;
    nm->size = lam_calloc((size_t)nm->nblocks + 1, sizeof *nm->size);
    nm->offset = lam_calloc((size_t)nm->nblocks + 1, sizeof *nm->offset);
    for (int i = 0; i < k; ++i) {
        nm->block[i] = used[i] ? root_block[find_root(parent, i)] : -1;
        nm->local[i] = used[i] ? nm->size[nm->block[i]]++ : -1;
    }
    nm->first = lam_calloc((size_t)nm->nblocks + 1, sizeof *nm->first);
    size_t total = 0;
    for (int b = 0; b < nm->nblocks; ++b) {
        if (b > 0) nm->first[b] = nm->first[b - 1] + nm->size[b - 1];
        nm->offset[b] = total;
        total += lam_mul_size((size_t)nm->size[b], (size_t)nm->size[b]);
    }
    nm->mat = lam_malloc(lam_mul_size(total + 1, sizeof *nm->mat));
    nm->rhs = lam_malloc(lam_mul_size((size_t)k + 1, sizeof *nm->rhs));
    LAM_FREE_ALL(parent, used, root_block);
}

static void normal_free(normal_matrix *nm)
{
    LAM_FREE_ALL(nm->block, nm->local, nm->size, nm->offset, nm->first, nm->mat, nm->rhs);
}

static size_t normal_total(const normal_matrix *nm)
{
    if (nm->nblocks == 0) return 0;
    int last = nm->nblocks - 1;
    return nm->offset[last] + (size_t)nm->size[last] * (size_t)nm->size[last];
}

/* Cholesky of each block of A^T diag(d) A (lower triangle).  A block that
 * is singular (parameters not determined by the rows, or weights that
 * have grown apart by many orders near the optimum) gets a small ridge,
 * raised until the factorization succeeds; it fails only on non-finite
 * weights (which lam_l1_solve refuses) or a bad argument (internal). */
static int normal_factor(normal_matrix *nm, const lam_l1_problem *p,
                         const double *d, lam_error *err)
{
    int rc = 0;
    memset(nm->mat, 0, normal_total(nm) * sizeof *nm->mat);
    for (size_t t = 0; t < p->rows; ++t) {
        size_t e0 = p->start[t], e1 = p->start[t + 1];
        if (e0 == e1) continue;
        int b = nm->block[p->col[e0]];
        int n = nm->size[b];
        double *m = nm->mat + nm->offset[b];
        for (size_t e = e0; e < e1; ++e) {
            int i = nm->local[p->col[e]];
            double ai = p->val[e] * d[t];
            for (size_t f = e0; f <= e; ++f) {
                int j = nm->local[p->col[f]];
                double v = ai * p->val[f];
                if (i >= j) m[(size_t)i * n + j] += v;
                else m[(size_t)j * n + i] += v;
            }
        }
    }
    double *backup = NULL;
    size_t backup_cap = 0;
    for (int b = 0; b < nm->nblocks; ++b) {
        int n = nm->size[b];
        double *m = nm->mat + nm->offset[b];
        double dmax = 0;
        for (int i = 0; i < n; ++i) dmax = fmax(dmax, m[(size_t)i * n + i]);
        if (!(dmax > 0)) dmax = 1;
        if (n == 1) {
            m[0] = m[0] > 1e-13 * dmax ? m[0] : m[0] + 1e-13 * dmax;
            if (!(m[0] > 0)) m[0] = 1e-300;
            continue;
        }
        size_t bytes = (size_t)n * n * sizeof *m;
        if (bytes > backup_cap) {
            free(backup);
            backup = lam_malloc(bytes);
            backup_cap = bytes;
        }
        memcpy(backup, m, bytes);
        double ridge = 1e-14 * dmax;
        for (int attempt = 0;; ++attempt) {
            for (int i = 0; i < n; ++i) m[(size_t)i * n + i] += ridge;
            lapack_int info = LAPACKE_dpotrf(LAPACK_ROW_MAJOR, 'L', n, m, n);
            if (info == 0) break;
            if (info < 0 || attempt > 12) {
                rc = lam_error_set(err, LAM_EX_SOFTWARE,
                                   "normal equations could not be factored (block of %d, info %d)", n,
                                   (int)info);
                break;
            }
            memcpy(m, backup, bytes);
            ridge *= 100;
        }
        if (rc) break;
    }
    free(backup);
    return rc;
}

/* Solve (A^T D A) dx = r in place (r has k entries; unused parameters
 * get 0). */
static int normal_solve(normal_matrix *nm, double *r, lam_error *err)
{
    for (int i = 0; i < nm->k; ++i) {
        int b = nm->block[i];
        if (b >= 0) nm->rhs[nm->first[b] + nm->local[i]] = r[i];
    }
    for (int b = 0; b < nm->nblocks; ++b) {
        int n = nm->size[b];
        double *m = nm->mat + nm->offset[b];
        double *z = nm->rhs + nm->first[b];
        if (n == 1) {
            z[0] /= m[0];
            continue;
        }
        /* dpotrs fails only on a bad argument: an internal error */
        lapack_int info = LAPACKE_dpotrs(LAPACK_ROW_MAJOR, 'L', n, 1, m, n, z, 1);
        if (info != 0) return lam_error_set(err, LAM_EX_SOFTWARE, "normal equations: dpotrs failed (%d)", (int)info);
    }
    for (int i = 0; i < nm->k; ++i) {
        int b = nm->block[i];
        r[i] = b >= 0 ? nm->rhs[nm->first[b] + nm->local[i]] : 0;
    }
    return 0;
}

/* ---- the interior-point iteration ---- */

static void mul_A(const lam_l1_problem *p, const double *x, double *out)
{
    for (size_t t = 0; t < p->rows; ++t) out[t] = row_dot(p, t, x);
}

static void mul_At(const lam_l1_problem *p, const double *y, double *out)
{
    memset(out, 0, (size_t)p->params * sizeof *out);
    for (size_t t = 0; t < p->rows; ++t)
        for (size_t e = p->start[t]; e < p->start[t + 1]; ++e)
            out[p->col[e]] += p->val[e] * y[t];
}

typedef struct {
    size_t m;
    int k;
    double *x, *u, *v, *y;         /* iterate */
    double *dx, *du, *dv, *dy;     /* direction */
    double *dua, *dva, *dya;       /* affine direction, kept for the corrector */
    double *rp, *rd, *D, *tmp, *rk;
} ipm_state;

/* Newton direction for complementarity targets rcu (u-rows) and rcv
 * (v-rows); the normal matrix is already factored for the current D. */
static int newton_direction(ipm_state *s, const lam_l1_problem *p,
                            normal_matrix *nm, const double *rcu,
                            const double *rcv, lam_error *err)
{
    for (size_t t = 0; t < s->m; ++t) {
        double su = p->weight[t] - s->y[t], sv = p->weight[t] + s->y[t];
        double rho = rcu[t] / su - rcv[t] / sv;
        s->tmp[t] = (s->rp[t] - rho) / s->D[t];
    }
    mul_At(p, s->tmp, s->rk);
    for (int j = 0; j < s->k; ++j) s->rk[j] -= s->rd[j];
    if (normal_solve(nm, s->rk, err)) return err->code;
    memcpy(s->dx, s->rk, (size_t)s->k * sizeof *s->dx);
    mul_A(p, s->dx, s->tmp);
    for (size_t t = 0; t < s->m; ++t) {
        double su = p->weight[t] - s->y[t], sv = p->weight[t] + s->y[t];
        double rho = rcu[t] / su - rcv[t] / sv;
        s->dy[t] = (s->rp[t] - rho - s->tmp[t]) / s->D[t];
        s->du[t] = (rcu[t] + s->u[t] * s->dy[t]) / su;
        s->dv[t] = (rcv[t] - s->v[t] * s->dy[t]) / sv;
    }
    return 0;
}

/* Largest steps in [0, 1] keeping u, v >= 0 and -w <= y <= w. */
static void max_steps(const ipm_state *s, const lam_l1_problem *p,
                      double *ap, double *ad)
{
    double a = 1, b = 1;
    for (size_t t = 0; t < s->m; ++t) {
        if (s->du[t] < 0) a = fmin(a, -s->u[t] / s->du[t]);
        if (s->dv[t] < 0) a = fmin(a, -s->v[t] / s->dv[t]);
        double su = p->weight[t] - s->y[t], sv = p->weight[t] + s->y[t];
        if (s->dy[t] > 0) b = fmin(b, su / s->dy[t]);
        if (s->dy[t] < 0) b = fmin(b, -sv / s->dy[t]);
    }
    *ap = a;
    *ad = b;
}

static double dual_value(const lam_l1_problem *p, const double *y)
{
    double s = 0;
    for (size_t t = 0; t < p->rows; ++t) s += p->target[t] * y[t];
    return s;
}

/* A dual point that satisfies A^T y = 0 to rounding and the box exactly:
 * y minus its projection on range(A) (least squares through the same
 * block Cholesky with D = 1), then scaled into the box.  Its value c.y is
 * a lower bound of the optimum, into *bound. */
static int certified_dual(const lam_l1_problem *p, normal_matrix *nm,
                          const double *y, double *work_m, double *work_k, double *bound,
                          lam_error *err)
{
    double *ones = lam_malloc(lam_mul_size(p->rows + 1, sizeof *ones));
    for (size_t t = 0; t < p->rows; ++t) ones[t] = 1;
    int rc = normal_factor(nm, p, ones, err);
    free(ones);
    if (rc) return rc;
    mul_At(p, y, work_k);
    if (normal_solve(nm, work_k, err)) return err->code;
    mul_A(p, work_k, work_m);
    double scale = 1;
    for (size_t t = 0; t < p->rows; ++t) {
        work_m[t] = y[t] - work_m[t];
        double r = fabs(work_m[t]) / p->weight[t];
        if (r > scale) scale = r;
    }
    double s = 0;
    for (size_t t = 0; t < p->rows; ++t) s += p->target[t] * work_m[t] / scale;
    *bound = s;
    return 0;
}

static double *vec(size_t n)
{
    return lam_calloc(n + 1, sizeof(double));
}

int lam_l1_solve(const lam_l1_problem *p, const lam_l1_options *opt,
                 lam_l1_monitor monitor, void *ctx, double *x,
                 lam_l1_result *res, lam_error *err)
{
    memset(res, 0, sizeof *res);
    size_t m = p->rows;
    int k = p->params;
    for (int j = 0; j < k; ++j) x[j] = 0;
    for (size_t t = 0; t < m; ++t)
        if (!(p->weight[t] > 0) || !isfinite(p->target[t]))
            return lam_error_set(err, LAM_EX_SOFTWARE, "L1 row %zu: weight %g, target %g", t,
                                 p->weight[t], p->target[t]);
    if (m == 0 || k == 0) {
        res->primal = res->dual = lam_l1_objective(p, x);
        res->converged = 1;
        return 0;
    }
    normal_matrix nm;
    normal_init(&nm, p);
    res->blocks = nm.nblocks;
    for (int b = 0; b < nm.nblocks; ++b)
        if (nm.size[b] > res->largest_block) res->largest_block = nm.size[b];

    ipm_state s = {.m = m, .k = k};
    s.x = x;
    s.u = vec(m), s.v = vec(m), s.y = vec(m);
    s.dx = vec((size_t)k), s.du = vec(m), s.dv = vec(m), s.dy = vec(m);
    s.dua = vec(m), s.dva = vec(m), s.dya = vec(m);
    s.rp = vec(m), s.rd = vec((size_t)k), s.D = vec(m), s.tmp = vec(m);
    s.rk = vec((size_t)k);
    double *rcu = vec(m), *rcv = vec(m);

    /* Start from the weighted least-squares fit: its residuals are a fair
     * guess of which rows stay non-zero at the optimum. */
    for (size_t t = 0; t < m; ++t) s.D[t] = 1 / p->weight[t];
    int rc = normal_factor(&nm, p, p->weight, err);
    for (size_t t = 0; t < m; ++t) s.tmp[t] = p->weight[t] * p->target[t];
    mul_At(p, s.tmp, s.rk);
    if (!rc) rc = normal_solve(&nm, s.rk, err);
    memcpy(x, s.rk, (size_t)k * sizeof *x);
    mul_A(p, x, s.tmp);
    double mean_abs = 0;
    for (size_t t = 0; t < m; ++t) mean_abs += fabs(p->target[t] - s.tmp[t]);
    mean_abs /= (double)m;
    double theta = fmax(0.1 * mean_abs, 1e-8);
    for (size_t t = 0; t < m; ++t) {
        double r = p->target[t] - s.tmp[t];
        s.u[t] = (r > 0 ? r : 0) + theta;
        s.v[t] = (r < 0 ? -r : 0) + theta;
        s.y[t] = 0;
    }

    /* A gap at the rounding level of the data also ends the iteration:
     * an optimum of 0 (or nearly) has no relative gap to reach. */
    double floor_gap = fabs(opt->offset);
    for (size_t t = 0; t < m; ++t) floor_gap += p->weight[t] * fabs(p->target[t]);
    floor_gap *= 1e-14;
    int status = 1;
    double primal = 0, dual = 0;
    for (int it = 0; !rc && it < opt->max_iter; ++it) {
        mul_A(p, x, s.tmp);
        primal = 0;
        for (size_t t = 0; t < m; ++t) {
            double r = p->target[t] - s.tmp[t];
            primal += p->weight[t] * fabs(r);
            s.rp[t] = r - s.u[t] + s.v[t];
        }
        mul_At(p, s.y, s.rd);
        for (int j = 0; j < k; ++j) s.rd[j] = -s.rd[j];
        dual = dual_value(p, s.y);
        res->iterations = it;
        if (monitor) monitor(it, primal, dual, ctx);
        double tol = fmax(opt->rel_gap * fabs(opt->offset + primal), floor_gap);
        /* c.y of the iterate is a bound only up to its dual residual; stop
         * when the certified bound (y made exactly feasible) is close enough */
        if (primal - dual <= tol) {
            double bound = 0;
            if ((rc = certified_dual(p, &nm, s.y, s.tmp, s.rk, &bound, err))) break;
            if (primal - bound <= tol) {
                status = 0;
                break;
            }
        }
        double mu = 0;
        for (size_t t = 0; t < m; ++t) {
            double su = p->weight[t] - s.y[t], sv = p->weight[t] + s.y[t];
            mu += s.u[t] * su + s.v[t] * sv;
            s.D[t] = s.u[t] / su + s.v[t] / sv;
            s.tmp[t] = 1 / s.D[t];
        }
        mu /= 2.0 * (double)m;
        if ((rc = normal_factor(&nm, p, s.tmp, err))) break;

        /* predictor */
        for (size_t t = 0; t < m; ++t) {
            double su = p->weight[t] - s.y[t], sv = p->weight[t] + s.y[t];
            rcu[t] = -s.u[t] * su;
            rcv[t] = -s.v[t] * sv;
        }
        if ((rc = newton_direction(&s, p, &nm, rcu, rcv, err))) break;
        double ap, ad;
        max_steps(&s, p, &ap, &ad);
        double mu_aff = 0;
        for (size_t t = 0; t < m; ++t) {
            double su = p->weight[t] - s.y[t] - ad * s.dy[t];
            double sv = p->weight[t] + s.y[t] + ad * s.dy[t];
            mu_aff += (s.u[t] + ap * s.du[t]) * su + (s.v[t] + ap * s.dv[t]) * sv;
        }
        mu_aff /= 2.0 * (double)m;
        double sigma = pow(fmax(mu_aff, 0) / mu, 3);
        if (sigma > 1) sigma = 1;
        memcpy(s.dua, s.du, m * sizeof *s.du);
        memcpy(s.dva, s.dv, m * sizeof *s.dv);
        memcpy(s.dya, s.dy, m * sizeof *s.dy);

        /* corrector: centring plus the second-order term of the predictor */
        for (size_t t = 0; t < m; ++t) {
            double su = p->weight[t] - s.y[t], sv = p->weight[t] + s.y[t];
            rcu[t] = sigma * mu - s.u[t] * su + s.dua[t] * s.dya[t];
            rcv[t] = sigma * mu - s.v[t] * sv - s.dva[t] * s.dya[t];
        }
        if ((rc = newton_direction(&s, p, &nm, rcu, rcv, err))) break;
        max_steps(&s, p, &ap, &ad);
        const double eta = 0.9995;
        ap = fmin(1, eta * ap);
        ad = fmin(1, eta * ad);
        for (int j = 0; j < k; ++j) x[j] += ap * s.dx[j];
        for (size_t t = 0; t < m; ++t) {
            s.u[t] += ap * s.du[t];
            s.v[t] += ap * s.dv[t];
            s.y[t] += ad * s.dy[t];
            /* keep the iterate strictly interior despite rounding */
            if (s.u[t] <= 0) s.u[t] = 1e-300;
            if (s.v[t] <= 0) s.v[t] = 1e-300;
            double lim = p->weight[t] * (1 - 1e-15);
            if (s.y[t] > lim) s.y[t] = lim;
            if (s.y[t] < -lim) s.y[t] = -lim;
        }
        res->iterations = it + 1;
    }
    res->primal = lam_l1_objective(p, x);
    if (!rc) rc = certified_dual(p, &nm, s.y, s.tmp, s.rk, &res->dual, err);
    if (res->dual > res->primal) res->dual = res->primal;
    /* converged: certified within the gap in the iteration and again here */
    res->converged = status == 0 && res->primal - res->dual <=
                     fmax(opt->rel_gap * fabs(opt->offset + res->primal), floor_gap);

    LAM_FREE_ALL(s.u, s.v, s.y, s.dx, s.du, s.dv, s.dy, s.dua, s.dva, s.dya, s.rp, s.rd, s.D,
                 s.tmp, s.rk, rcu, rcv);
    normal_free(&nm);
    return rc;
}
