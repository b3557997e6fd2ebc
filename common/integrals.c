/* integrals.c - Gaussian integrals by the McMurchie-Davidson scheme.
 *
 * A product of two Cartesian Gaussians on centres A and B is a sum of
 * Hermite Gaussians on P = (aA + bB)/p with coefficients E^{ab}_{tuv}
 * (a three-term recursion per direction).  Overlap and kinetic energy
 * follow from E alone; Coulomb integrals from the Hermite integrals
 * R_{tuv}, built by recursion on the Boys function (T. Helgaker, P.
 * Jorgensen, J. Olsen, Molecular Electronic-Structure Theory, Wiley 2000,
 * chapter 9, gives the recursions used here).
 *
 * The expansion of every primitive pair of every shell pair is computed
 * once (shell_pair) and reused by the nuclear-attraction integrals and
 * by every shell quartet of the electron repulsion.
 */
#include "integrals.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

/* ---------------------------------------------------------------- Boys */

#define BOYS_TAYLOR 7
#define BOYS_TOP (LAM_BOYS_MMAX + BOYS_TAYLOR)
#define BOYS_STEP (1.0 / 32)
#define BOYS_TMAX 60.0
#define BOYS_NGRID 1921 /* BOYS_TMAX / BOYS_STEP + 1 */

static double boys_table[BOYS_NGRID][BOYS_TOP + 1];
static int boys_ready;

/* F_m(t) = exp(-t) sum_k (2t)^k / ((2m+1)(2m+3)...(2m+2k+1)); all terms
 * positive, so the sum is accurate for any t (slow for large t, used only
 * to fill the table). */
static double boys_series(int m, double t)
{
    double term = 1.0 / (2 * m + 1), sum = term;
    for (int k = 1; k < 4000; ++k) {
        term *= 2.0 * t / (2 * m + 2 * k + 1);
        sum += term;
        if (term < 1e-17 * sum) break;
    }
    return exp(-t) * sum;
}

static void boys_fill_table(void)
{
    for (int i = 0; i < BOYS_NGRID; ++i) {
        double t = i * BOYS_STEP, et = exp(-t);
        boys_table[i][BOYS_TOP] = boys_series(BOYS_TOP, t);
        /* downward recursion is stable for every t */
        for (int m = BOYS_TOP - 1; m >= 0; --m)
            boys_table[i][m] = (2.0 * t * boys_table[i][m + 1] + et) / (2 * m + 1);
    }
    boys_ready = 1;
}

void lam_boys(int mmax, double t, double *f)
{
    if (!boys_ready) boys_fill_table();
    if (t < BOYS_TMAX) {
        /* Taylor step from the nearest grid point, dF_m/dt = -F_{m+1}:
         * F_m(t_i - d) = sum_k F_{m+k}(t_i) d^k / k!, |d| <= 1/64, so 7
         * terms leave a relative error below 1e-16 */
        int i = (int)(t * (1.0 / BOYS_STEP) + 0.5);
        double d = i * BOYS_STEP - t;
        /* Horner form with d/k, the reciprocals written out so that no
         * division is left */
        double d2 = d * 0.5, d3 = d * (1.0 / 3), d4 = d * 0.25, d5 = d * 0.2,
               d6 = d * (1.0 / 6);
        const double *row = boys_table[i];
        for (int m = 0; m <= mmax; ++m) {
            const double *r = row + m;
            f[m] = r[0] + d * (r[1] + d2 * (r[2] + d3 * (r[3] + d4 * (r[4] + d5 * (r[5] + d6 * r[6])))));
        }
    } else {
        /* upward recursion is stable once t exceeds the order */
        double et = exp(-t);
        f[0] = 0.5 * sqrt(LAM_PI / t) * erf(sqrt(t));
        for (int m = 0; m < mmax; ++m)
            f[m + 1] = ((2 * m + 1) * f[m] - et) / (2.0 * t);
    }
}

/* ------------------------------------------------------- Hermite index */

/* Hermite functions (t, u, v) with t+u+v <= LMAX_TOTAL, ordered by
 * t+u+v so that those up to order L are the first herm_count(L). */
#define LMAX_PAIR (2 * LAM_MAX_L)
#define LMAX_TOTAL (4 * LAM_MAX_L)
#define NHERM_PAIR ((LMAX_PAIR + 1) * (LMAX_PAIR + 2) * (LMAX_PAIR + 3) / 6)
#define NHERM_TOTAL ((LMAX_TOTAL + 1) * (LMAX_TOTAL + 2) * (LMAX_TOTAL + 3) / 6)

static int herm_tuv[NHERM_TOTAL][3];
static int herm_index[LMAX_TOTAL + 1][LMAX_TOTAL + 1][LMAX_TOTAL + 1];
static int herm_sum[NHERM_PAIR][NHERM_PAIR];
static double herm_sign[NHERM_PAIR];
/* recursion source: direction d lowered; index with that direction - 1
 * and - 2 (or -1), and the count (t-1) */
static int herm_dir[NHERM_TOTAL], herm_m1[NHERM_TOTAL], herm_m2[NHERM_TOTAL];
static int herm_ready;

static int herm_count(int l) { return (l + 1) * (l + 2) * (l + 3) / 6; }
static const int herm_count_of[LMAX_TOTAL + 1] = {1, 4, 10, 20, 35, 56, 84, 120, 165};

static void herm_init(void)
{
    int idx = 0;
    for (int n = 0; n <= LMAX_TOTAL; ++n)
        for (int t = n; t >= 0; --t)
            for (int u = n - t; u >= 0; --u) {
                int v = n - t - u;
                herm_tuv[idx][0] = t;
                herm_tuv[idx][1] = u;
                herm_tuv[idx][2] = v;
                herm_index[t][u][v] = idx++;
            }
    for (int i = 0; i < NHERM_TOTAL; ++i) {
        int c[3] = {herm_tuv[i][0], herm_tuv[i][1], herm_tuv[i][2]};
        int d = c[0] ? 0 : c[1] ? 1 : 2;
        herm_dir[i] = d;
        if (c[d] == 0) { herm_m1[i] = herm_m2[i] = -1; continue; }
        c[d] -= 1;
        herm_m1[i] = herm_index[c[0]][c[1]][c[2]];
        c[d] -= 1;
        herm_m2[i] = c[d] >= 0 ? herm_index[c[0]][c[1]][c[2]] : -1;
    }
    for (int i = 0; i < NHERM_PAIR; ++i) {
        herm_sign[i] = ((herm_tuv[i][0] + herm_tuv[i][1] + herm_tuv[i][2]) & 1) ? -1.0 : 1.0;
        for (int j = 0; j < NHERM_PAIR; ++j)
            herm_sum[i][j] = herm_index[herm_tuv[i][0] + herm_tuv[j][0]]
                                       [herm_tuv[i][1] + herm_tuv[j][1]]
                                       [herm_tuv[i][2] + herm_tuv[j][2]];
    }
    herm_ready = 1;
}

/* Hermite Coulomb integrals R^0_{tuv}(alpha, pq) for t+u+v <= l, from
 * R^n_000 = (-2 alpha)^n F_n(alpha |pq|^2) and
 * R^n_{t+1,u,v} = t R^{n+1}_{t-1,u,v} + X R^{n+1}_{t,u,v}. */
static void hermite_coulomb(int l, double alpha, const double pq[3], double *r)
{
    double f[LMAX_TOTAL + 1];
    lam_boys(l, alpha * (pq[0] * pq[0] + pq[1] * pq[1] + pq[2] * pq[2]), f);
    if (l == 0) {
        r[0] = f[0];
        return;
    }
    double w[LMAX_TOTAL + 1][NHERM_TOTAL];
    double *level[LMAX_TOTAL + 1];
    double scale = 1.0;
    for (int n = 0; n <= l; ++n) {
        level[n] = n ? w[n] : r;
        level[n][0] = scale * f[n];
        scale *= -2.0 * alpha;
    }
    for (int n = l - 1; n >= 0; --n) {
        int count = herm_count_of[l - n];
        const double *up = level[n + 1];
        double *cur = level[n];
        for (int i = 1; i < count; ++i) {
            int d = herm_dir[i];
            double val = pq[d] * up[herm_m1[i]];
            if (herm_m2[i] >= 0) val += (herm_tuv[i][d] - 1) * up[herm_m2[i]];
            cur[i] = val;
        }
    }
}

/* ------------------------------------------------------- shell pairs */

/* 1-D expansion coefficients e[i][j][t] of x_A^i x_B^j in Hermite
 * Gaussians (the factor exp(-mu X_AB^2) left out). */
#define E1MAX (LAM_MAX_L + 2)
typedef double hermite_1d[E1MAX + 1][E1MAX + 1][2 * E1MAX + 1];

static void hermite_expansion_1d(int la, int lb, double p, double xpa,
                                 double xpb, hermite_1d e)
{
    memset(e, 0, sizeof(hermite_1d));
    double h = 0.5 / p;
    e[0][0][0] = 1.0;
    for (int i = 0; i <= la; ++i) {
        if (i > 0)
            for (int t = 0; t <= i; ++t)
                e[i][0][t] = (t > 0 ? h * e[i - 1][0][t - 1] : 0.0) +
                             xpa * e[i - 1][0][t] + (t + 1) * e[i - 1][0][t + 1];
        for (int j = 1; j <= lb; ++j)
            for (int t = 0; t <= i + j; ++t)
                e[i][j][t] = (t > 0 ? h * e[i][j - 1][t - 1] : 0.0) +
                             xpb * e[i][j - 1][t] + (t + 1) * e[i][j - 1][t + 1];
    }
}

typedef struct {
    int a, b;             /* shells, a >= b */
    int la, lb, l, nab, nherm, nprim;
    double *p, *centre, *pref; /* per primitive pair; centre has 3 each */
    double *e;            /* nprim x nab x nherm, Cartesian norms folded in */
    /* Hermite functions that can be non-zero for each Cartesian product:
     * t <= lx_a + lx_b, u <= ..., v <= ... (the same for every primitive) */
    int *nz_count;        /* nab */
    int *nz_index;        /* nab x nherm */
    /* as e, but only the possibly non-zero entries (in nz_index order,
     * packed at the start of each row) times (-1)^(t+u+v): the pair as
     * the ket side of a Coulomb integral */
    double *ket_e;
    double schwarz;       /* sqrt of max |(ab|ab)| */
} shell_pair;

/* Primitive pairs whose prefactor is below this cannot move an integral
 * by more than ~1e-14 Eh. */
#define PRIM_PAIR_CUTOFF 1e-20

static void shell_pair_build(shell_pair *sp, const lam_basis *b, int ia, int ib)
{
    const lam_shell *A = &b->shell[ia], *B = &b->shell[ib];
    memset(sp, 0, sizeof *sp);
    sp->a = ia;
    sp->b = ib;
    sp->la = A->l;
    sp->lb = B->l;
    sp->l = A->l + B->l;
    sp->nab = A->ncart * B->ncart;
    sp->nherm = herm_count(sp->l);
    size_t maxprim = (size_t)A->nprim * B->nprim;
    sp->p = lam_malloc(maxprim * sizeof *sp->p);
    sp->pref = lam_malloc(maxprim * sizeof *sp->pref);
    sp->centre = lam_malloc(lam_mul_size(maxprim, 3 * sizeof *sp->centre));
    sp->e = lam_malloc(lam_mul_size(maxprim, (size_t)sp->nab * sp->nherm * sizeof *sp->e));
    sp->ket_e = lam_malloc(lam_mul_size(maxprim, (size_t)sp->nab * sp->nherm * sizeof *sp->ket_e));
    double rab[3], r2 = 0.0;
    for (int k = 0; k < 3; ++k) {
        rab[k] = A->center[k] - B->center[k];
        r2 += rab[k] * rab[k];
    }
    double norm_a[6], norm_b[6];
    int pa[6][3], pb[6][3];
    for (int k = 0; k < A->ncart; ++k) {
        lam_cart_powers(A->l, k, &pa[k][0], &pa[k][1], &pa[k][2]);
        norm_a[k] = lam_cart_norm_ratio(pa[k][0], pa[k][1], pa[k][2]);
    }
    for (int k = 0; k < B->ncart; ++k) {
        lam_cart_powers(B->l, k, &pb[k][0], &pb[k][1], &pb[k][2]);
        norm_b[k] = lam_cart_norm_ratio(pb[k][0], pb[k][1], pb[k][2]);
    }
    sp->nz_count = lam_malloc((size_t)sp->nab * sizeof *sp->nz_count);
    sp->nz_index = lam_malloc(lam_mul_size((size_t)sp->nab, (size_t)sp->nherm * sizeof *sp->nz_index));
    for (int ka = 0; ka < A->ncart; ++ka)
        for (int kb = 0; kb < B->ncart; ++kb) {
            int ab = ka * B->ncart + kb, count = 0;
            for (int h = 0; h < sp->nherm; ++h)
                if (herm_tuv[h][0] <= pa[ka][0] + pb[kb][0] &&
                    herm_tuv[h][1] <= pa[ka][1] + pb[kb][1] &&
                    herm_tuv[h][2] <= pa[ka][2] + pb[kb][2])
                    sp->nz_index[ab * sp->nherm + count++] = h;
            sp->nz_count[ab] = count;
        }
    hermite_1d ex[3];
    for (int i = 0; i < A->nprim; ++i)
        for (int j = 0; j < B->nprim; ++j) {
            double a = A->exp[i], bb = B->exp[j], p = a + bb;
            double pref = A->coef[i] * B->coef[j] * exp(-a * bb / p * r2);
            if (fabs(pref) < PRIM_PAIR_CUTOFF) continue;
            int n = sp->nprim++;
            sp->p[n] = p;
            sp->pref[n] = pref;
            double *P = sp->centre + 3 * n;
            for (int k = 0; k < 3; ++k) {
                P[k] = (a * A->center[k] + bb * B->center[k]) / p;
                hermite_expansion_1d(A->l, B->l, p, P[k] - A->center[k],
                                     P[k] - B->center[k], ex[k]);
            }
            double *e = sp->e + (size_t)n * sp->nab * sp->nherm;
            for (int ka = 0; ka < A->ncart; ++ka)
                for (int kb = 0; kb < B->ncart; ++kb) {
                    double *row = e + (ka * B->ncart + kb) * sp->nherm;
                    double nrm = norm_a[ka] * norm_b[kb];
                    for (int h = 0; h < sp->nherm; ++h) {
                        const int *tuv = herm_tuv[h];
                        row[h] = nrm * ex[0][pa[ka][0]][pb[kb][0]][tuv[0]] *
                                 ex[1][pa[ka][1]][pb[kb][1]][tuv[1]] *
                                 ex[2][pa[ka][2]][pb[kb][2]][tuv[2]];
                    }
                    int ab = ka * B->ncart + kb;
                    double *krow = sp->ket_e + ((size_t)n * sp->nab + ab) * sp->nherm;
                    const int *nz = sp->nz_index + ab * sp->nherm;
                    for (int k = 0; k < sp->nz_count[ab]; ++k)
                        krow[k] = herm_sign[nz[k]] * row[nz[k]];
                }
        }
}

static void shell_pair_free(shell_pair *sp)
{
    LAM_FREE_ALL(sp->nz_count, sp->nz_index, sp->p, sp->pref, sp->centre, sp->e, sp->ket_e);
}

/* All pairs a >= b, pair (a, b) at a(a+1)/2 + b. */
static shell_pair *shell_pairs_build(const lam_basis *b, size_t *count)
{
    if (!herm_ready) herm_init();
    size_t n = (size_t)b->nshell * (b->nshell + 1) / 2;
    shell_pair *sp = lam_malloc(lam_mul_size(n, sizeof *sp));
    for (int a = 0; a < b->nshell; ++a)
        for (int c = 0; c <= a; ++c) shell_pair_build(&sp[LAM_PAIR(a, c)], b, a, c);
    *count = n;
    return sp;
}

static void shell_pairs_free(shell_pair *sp, size_t n)
{
    for (size_t i = 0; i < n; ++i) shell_pair_free(&sp[i]);
    free(sp);
}

/* ------------------------------------------ Cartesian to spherical */

/* block is [pre][ncart][post]; replace the middle index of a pure d
 * shell by its 5 spherical functions (result in out). */
static void spherical_index(const double *block, int pre, int post, double *out)
{
    for (int i = 0; i < pre; ++i)
        for (int m = 0; m < 5; ++m) {
            double *o = out + ((size_t)i * 5 + m) * post;
            for (int x = 0; x < post; ++x) o[x] = 0.0;
            for (int k = 0; k < 6; ++k) {
                double c = lam_d_spherical[m][k];
                if (c == 0.0) continue;
                const double *src = block + ((size_t)i * 6 + k) * post;
                for (int x = 0; x < post; ++x) o[x] += c * src[x];
            }
        }
}

/* Transform each pure index of a block over nsh shells in place (buf
 * holds the result on the way; both sized for the Cartesian block). */
static double *block_to_spherical(double *block, double *buf,
                                  const lam_shell *const *sh, int nsh)
{
    int dims[4];
    for (int k = 0; k < nsh; ++k) dims[k] = sh[k]->ncart;
    for (int k = 0; k < nsh; ++k) {
        if (!sh[k]->pure) continue;
        int pre = 1, post = 1;
        for (int j = 0; j < k; ++j) pre *= dims[j];
        for (int j = k + 1; j < nsh; ++j) post *= dims[j];
        spherical_index(block, pre, post, buf);
        dims[k] = 5;
        double *t = block;
        block = buf;
        buf = t;
    }
    return block;
}

/* Store a (shell a) x (shell b) block symmetrically in an nbf matrix. */
static void store_one_electron(const lam_basis *b, int ia, int ib,
                               double *block, double *m)
{
    const lam_shell *sh[2] = {&b->shell[ia], &b->shell[ib]};
    double buf[36];
    const double *v = block_to_spherical(block, buf, sh, 2);
    int n = b->nbf;
    for (int i = 0; i < sh[0]->nfunc; ++i)
        for (int j = 0; j < sh[1]->nfunc; ++j) {
            int r = sh[0]->first + i, c = sh[1]->first + j;
            m[(size_t)r * n + c] = m[(size_t)c * n + r] = v[i * sh[1]->nfunc + j];
        }
}

/* -------------------------------------------------- one-electron */

void lam_int_overlap(const lam_basis *b, double *s)
{
    size_t np;
    shell_pair *sp = shell_pairs_build(b, &np);
    for (size_t k = 0; k < np; ++k) {
        const shell_pair *q = &sp[k];
        double block[36] = {0};
        for (int i = 0; i < q->nprim; ++i) {
            double f = q->pref[i] * pow(LAM_PI / q->p[i], 1.5);
            const double *e = q->e + (size_t)i * q->nab * q->nherm;
            for (int ab = 0; ab < q->nab; ++ab) block[ab] += f * e[ab * q->nherm];
        }
        store_one_electron(b, q->a, q->b, block, s);
    }
    shell_pairs_free(sp, np);
}

/* Kinetic energy of one primitive pair in one direction from 1-D
 * overlaps: d2/dx2 x^j e^{-b x^2} = j(j-1) x^{j-2} - 2b(2j+1) x^j + 4b^2 x^{j+2}.
 * e is read only; it is not declared const because C11 does not convert a
 * pointer to arrays into a pointer to const arrays (-Wpedantic). */
static double kinetic_1d(hermite_1d e, double bexp, int i, int j, double s0)
{
    double t = -2.0 * bexp * (2 * j + 1) * e[i][j][0] + 4.0 * bexp * bexp * e[i][j + 2][0];
    if (j >= 2) t += j * (j - 1) * e[i][j - 2][0];
    return -0.5 * t * s0;
}

void lam_int_kinetic(const lam_basis *b, double *t)
{
    for (int ia = 0; ia < b->nshell; ++ia)
        for (int ib = 0; ib <= ia; ++ib) {
            const lam_shell *A = &b->shell[ia], *B = &b->shell[ib];
            double block[36] = {0};
            double r2 = 0.0;
            for (int k = 0; k < 3; ++k)
                r2 += (A->center[k] - B->center[k]) * (A->center[k] - B->center[k]);
            for (int i = 0; i < A->nprim; ++i)
                for (int j = 0; j < B->nprim; ++j) {
                    double a = A->exp[i], bb = B->exp[j], p = a + bb;
                    double pref = A->coef[i] * B->coef[j] * exp(-a * bb / p * r2);
                    double s0 = sqrt(LAM_PI / p);
                    hermite_1d e[3];
                    for (int k = 0; k < 3; ++k) {
                        double P = (a * A->center[k] + bb * B->center[k]) / p;
                        hermite_expansion_1d(A->l, B->l + 2, p, P - A->center[k],
                                             P - B->center[k], e[k]);
                    }
                    for (int ka = 0; ka < A->ncart; ++ka)
                        for (int kb = 0; kb < B->ncart; ++kb) {
                            int x[3], y[3];
                            lam_cart_powers(A->l, ka, &x[0], &x[1], &x[2]);
                            lam_cart_powers(B->l, kb, &y[0], &y[1], &y[2]);
                            double s[3], kin[3];
                            for (int k = 0; k < 3; ++k) {
                                s[k] = e[k][x[k]][y[k]][0] * s0;
                                kin[k] = kinetic_1d(e[k], bb, x[k], y[k], s0);
                            }
                            double val = kin[0] * s[1] * s[2] + s[0] * kin[1] * s[2] +
                                         s[0] * s[1] * kin[2];
                            block[ka * B->ncart + kb] +=
                                pref * val * lam_cart_norm_ratio(x[0], x[1], x[2]) *
                                lam_cart_norm_ratio(y[0], y[1], y[2]);
                        }
                }
            store_one_electron(b, ia, ib, block, t);
        }
}

void lam_int_nuclear(const lam_basis *b, const lam_molecule *mol, double *v)
{
    size_t np;
    shell_pair *sp = shell_pairs_build(b, &np);
    double r[NHERM_TOTAL];
    for (size_t k = 0; k < np; ++k) {
        const shell_pair *q = &sp[k];
        double block[36] = {0};
        for (int i = 0; i < q->nprim; ++i) {
            const double *P = q->centre + 3 * i;
            double hsum[NHERM_PAIR] = {0};
            for (int c = 0; c < mol->natom; ++c) {
                const double *C = mol->xyz + 3 * c;
                double pc[3] = {P[0] - C[0], P[1] - C[1], P[2] - C[2]};
                hermite_coulomb(q->l, q->p[i], pc, r);
                for (int h = 0; h < q->nherm; ++h) hsum[h] -= mol->z[c] * r[h];
            }
            double f = 2.0 * LAM_PI / q->p[i] * q->pref[i];
            const double *e = q->e + (size_t)i * q->nab * q->nherm;
            for (int ab = 0; ab < q->nab; ++ab) {
                double acc = 0.0;
                for (int h = 0; h < q->nherm; ++h) acc += e[ab * q->nherm + h] * hsum[h];
                block[ab] += f * acc;
            }
        }
        store_one_electron(b, q->a, q->b, block, v);
    }
    shell_pairs_free(sp, np);
}

/* -------------------------------------------------- two-electron */

size_t lam_eri_count(int n)
{
    size_t n2 = (size_t)n * (n + 1) / 2;
    return n2 * (n2 + 1) / 2;
}

/* (bra|ket) over Cartesian functions into out[nab][ncd].  For each bra
 * primitive pair the ket side is first summed in Hermite space
 * (x[t][cd]), then contracted with the bra coefficients once. */
static void eri_quartet(const shell_pair *bra, const shell_pair *ket, double *out)
{
    enum { XMAX = NHERM_PAIR * 36 };
    int l = bra->l + ket->l, nhb = bra->nherm, nhk = ket->nherm;
    int nab = bra->nab, ncd = ket->nab;
    double x[XMAX], r[NHERM_TOTAL];
    const double two_pi_52 = 2.0 * pow(LAM_PI, 2.5);
    memset(out, 0, (size_t)nab * ncd * sizeof *out);
    for (int i = 0; i < bra->nprim; ++i) {
        double p = bra->p[i];
        const double *P = bra->centre + 3 * i;
        memset(x, 0, (size_t)nhb * ncd * sizeof *x);
        for (int j = 0; j < ket->nprim; ++j) {
            double q = ket->p[j];
            const double *Q = ket->centre + 3 * j;
            double pq[3] = {P[0] - Q[0], P[1] - Q[1], P[2] - Q[2]};
            double f = two_pi_52 / (p * q * sqrt(p + q)) * ket->pref[j];
            hermite_coulomb(l, p * q / (p + q), pq, r);
            const double *ek = ket->e + (size_t)j * ncd * nhk;
            if (nhb == 1 && nhk == 1) {
                double rv = f * r[0];
                for (int cd = 0; cd < ncd; ++cd) x[cd] += rv * ek[cd];
                continue;
            }
            const double *kek = ket->ket_e + (size_t)j * ncd * nhk;
            for (int t = 0; t < nhb; ++t) {
                const int *sum_t = herm_sum[t];
                double *xt = x + t * ncd;
                for (int cd = 0; cd < ncd; ++cd) {
                    const double *e = kek + cd * nhk;
                    const int *nz = ket->nz_index + cd * nhk;
                    double acc = 0.0;
                    for (int k = 0; k < ket->nz_count[cd]; ++k) acc += r[sum_t[nz[k]]] * e[k];
                    xt[cd] += f * acc;
                }
            }
        }
        const double *eb = bra->e + (size_t)i * nab * nhb;
        double pref = bra->pref[i];
        for (int ab = 0; ab < nab; ++ab) {
            const double *e = eb + ab * nhb;
            const int *nz = bra->nz_index + ab * nhb;
            double *o = out + (size_t)ab * ncd;
            for (int k = 0; k < bra->nz_count[ab]; ++k) {
                int t = nz[k];
                double c = pref * e[t];
                const double *xt = x + t * ncd;
                for (int cd = 0; cd < ncd; ++cd) o[cd] += c * xt[cd];
            }
        }
    }
}

/* Write the unique integrals of a shell quartet (spherical where the
 * shells are pure) into the packed array. */
static void eri_store(const lam_basis *b, const shell_pair *bra,
                      const shell_pair *ket, double *block, double *buf,
                      double *eri)
{
    const lam_shell *sh[4] = {&b->shell[bra->a], &b->shell[bra->b],
                              &b->shell[ket->a], &b->shell[ket->b]};
    const double *v = block_to_spherical(block, buf, sh, 4);
    int n0 = sh[0]->nfunc, n1 = sh[1]->nfunc, n2 = sh[2]->nfunc, n3 = sh[3]->nfunc;
    for (int i = 0; i < n0; ++i)
        for (int j = 0; j < n1; ++j) {
            size_t ij = LAM_PAIR(sh[0]->first + i, sh[1]->first + j);
            for (int k = 0; k < n2; ++k)
                for (int l = 0; l < n3; ++l) {
                    size_t kl = LAM_PAIR(sh[2]->first + k, sh[3]->first + l);
                    eri[LAM_PAIR(ij, kl)] = v[((i * n1 + j) * n2 + k) * n3 + l];
                }
        }
}

/* Schwarz factor of every shell pair: sqrt of the largest (ab|ab) over
 * the final (spherical where pure) functions of the pair. */
static void schwarz_bounds(const lam_basis *b, shell_pair *sp, size_t np,
                           double *block, double *buf)
{
    for (size_t k = 0; k < np; ++k) {
        const lam_shell *sh[4] = {&b->shell[sp[k].a], &b->shell[sp[k].b],
                                  &b->shell[sp[k].a], &b->shell[sp[k].b]};
        eri_quartet(&sp[k], &sp[k], block);
        const double *v = block_to_spherical(block, buf, sh, 4);
        int nab = sh[0]->nfunc * sh[1]->nfunc;
        double mx = 0.0;
        for (int ab = 0; ab < nab; ++ab) {
            double d = fabs(v[(size_t)ab * nab + ab]);
            if (d > mx) mx = d;
        }
        sp[k].schwarz = sqrt(mx);
    }
}

double *lam_int_eri(const lam_basis *b, double tol, lam_eri_stats *stats)
{
    double t0 = lam_seconds();
    size_t np;
    shell_pair *sp = shell_pairs_build(b, &np);
    double *eri = lam_calloc(lam_eri_count(b->nbf), sizeof *eri);
    size_t blk = 6 * 6 * 6 * 6;
    double *block = lam_malloc(blk * sizeof *block);
    double *buf = lam_malloc(blk * sizeof *buf);
    schwarz_bounds(b, sp, np, block, buf);
    lam_eri_stats st = {0, 0, 0.0};
    for (size_t pb = 0; pb < np; ++pb) {
        if (pb % 64 == 0)
            lam_progress("electron repulsion: shell pair %zu of %zu", pb + 1, np);
        for (size_t pk = 0; pk <= pb; ++pk) {
            ++st.quartets;
            if (sp[pb].schwarz * sp[pk].schwarz < tol) {
                ++st.screened;
                continue;
            }
            eri_quartet(&sp[pb], &sp[pk], block);
            eri_store(b, &sp[pb], &sp[pk], block, buf, eri);
        }
    }
    free(block);
    free(buf);
    shell_pairs_free(sp, np);
    st.seconds = lam_seconds() - t0;
    if (stats) *stats = st;
    return eri;
}
