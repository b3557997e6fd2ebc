/* test_integrals.c - Gaussian integrals against values from outside.
 *
 * Sources:
 * - Boys function: F_0(t) = sqrt(pi/t) erf(sqrt t) / 2 and F_m(0) =
 *   1/(2m+1) (closed forms, common practice); other orders against a
 *   direct Simpson quadrature of int_0^1 u^2m exp(-t u^2) du written here.
 * - Integrals over s primitives in closed form: A. Szabo, N. S. Ostlund,
 *   Modern Quantum Chemistry (1989), appendix A (from memory).
 * - p and d primitives from s ones by differentiation with respect to the
 *   centre: x_A g = (1/2a) dg/dA_x and x_A^2 g = (1/4a^2)(d2g/dA_x^2 +
 *   2a g) (calculus, common practice), by central finite differences.
 * - H2 in STO-3G at R = 1.4 bohr: Szabo and Ostlund, chapter 3 (from
 *   memory), four decimals.
 * - Water nuclear repulsion: T. D. Crawford group programming projects,
 *   project 3 (from memory).
 * - Real solid harmonics are orthonormal (common practice).
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "basis.h"
#include "integrals.h"
#include "molecule.h"
#include "tap.h"
#include "util.h"

#define PI 3.14159265358979323846

/* ---- independent closed forms over unnormalized s primitives ---- */

static double dist2(const double *a, const double *b)
{
    return (a[0] - b[0]) * (a[0] - b[0]) + (a[1] - b[1]) * (a[1] - b[1]) +
           (a[2] - b[2]) * (a[2] - b[2]);
}

static double f0(double t) { return t < 1e-12 ? 1.0 : 0.5 * sqrt(PI / t) * erf(sqrt(t)); }

static void gaussian_centre(double a, const double *A, double b, const double *B, double *P)
{
    for (int k = 0; k < 3; ++k) P[k] = (a * A[k] + b * B[k]) / (a + b);
}

static double ss_overlap(double a, const double *A, double b, const double *B)
{
    double p = a + b;
    return pow(PI / p, 1.5) * exp(-a * b / p * dist2(A, B));
}

static double ss_kinetic(double a, const double *A, double b, const double *B)
{
    double p = a + b, mu = a * b / p;
    return mu * (3.0 - 2.0 * mu * dist2(A, B)) * ss_overlap(a, A, b, B);
}

static double ss_nuclear(double a, const double *A, double b, const double *B,
                         int z, const double *C)
{
    double p = a + b, P[3];
    gaussian_centre(a, A, b, B, P);
    return -z * 2.0 * PI / p * exp(-a * b / p * dist2(A, B)) * f0(p * dist2(P, C));
}

static double ssss(const double *e, double c[4][3])
{
    double p = e[0] + e[1], q = e[2] + e[3], P[3], Q[3];
    gaussian_centre(e[0], c[0], e[1], c[1], P);
    gaussian_centre(e[2], c[2], e[3], c[3], Q);
    return 2.0 * pow(PI, 2.5) / (p * q * sqrt(p + q)) *
           exp(-e[0] * e[1] / p * dist2(c[0], c[1])) *
           exp(-e[2] * e[3] / q * dist2(c[2], c[3])) * f0(p * q / (p + q) * dist2(P, Q));
}

/* ---- a basis of single unnormalized primitives (coefficient 1) ---- */

static lam_basis *primitive_basis(int n, const int *l, const double *expo,
                                  double centre[][3])
{
    lam_basis *b = lam_calloc(1, sizeof *b);
    b->shell = lam_calloc((size_t)n, sizeof *b->shell);
    b->nshell = n;
    for (int k = 0; k < n; ++k) {
        lam_shell *sh = &b->shell[k];
        sh->l = l[k];
        sh->nprim = 1;
        sh->atom = k;
        sh->exp[0] = expo[k];
        sh->coef[0] = 1.0;
        sh->ncart = sh->nfunc = (l[k] + 1) * (l[k] + 2) / 2;
        sh->first = b->nbf;
        memcpy(sh->center, centre[k], sizeof sh->center);
        b->nbf += sh->nfunc;
        if (l[k] > b->max_l) b->max_l = l[k];
    }
    return b;
}

static double eri_of(const double *eri, int i, int j, int k, int l)
{
    return eri[LAM_PAIR(LAM_PAIR(i, j), LAM_PAIR(k, l))];
}

static void test_boys(void)
{
    double f[LAM_BOYS_MMAX + 1];
    const double ts[] = {0.0, 1e-9, 0.03, 0.5, 2.37, 7.9, 19.95, 35.96, 36.04, 50.0, 120.0};
    double worst0 = 0.0, worst = 0.0;
    for (size_t i = 0; i < sizeof ts / sizeof *ts; ++i) {
        double t = ts[i];
        lam_boys(LAM_BOYS_MMAX, t, f);
        double d0 = fabs(f[0] - f0(t)) / f0(t);
        if (d0 > worst0) worst0 = d0;
        for (int m = 0; m <= LAM_BOYS_MMAX; ++m) {
            /* Simpson's rule, 20000 intervals: error far below 1e-12 */
            int nseg = 20000;
            double h = 1.0 / nseg, s = 0.0;
            for (int k = 0; k <= nseg; ++k) {
                double u = k * h, w = (k == 0 || k == nseg) ? 1 : (k % 2 ? 4 : 2);
                s += w * pow(u, 2 * m) * exp(-t * u * u);
            }
            s *= h / 3.0;
            double d = fabs(f[m] - s) / s;
            if (d > worst) worst = d;
        }
        if (t == 0.0)
            for (int m = 0; m <= LAM_BOYS_MMAX; ++m)
                tap_near(f[m], 1.0 / (2 * m + 1), 1e-15, "F_m(0) = 1/(2m+1)");
    }
    tap_near(worst0, 0.0, 1e-14, "F_0 against sqrt(pi/t) erf(sqrt t)/2 (relative)");
    tap_near(worst, 0.0, 1e-12, "F_m, m <= 8, against Simpson quadrature (relative)");
}

static void test_s_closed_forms(void)
{
    double c[4][3] = {{0.1, -0.2, 0.3}, {1.0, 0.4, -0.5}, {-0.7, 0.9, 0.2}, {0.3, -1.1, 0.8}};
    double e[4] = {1.3, 0.45, 2.1, 0.8};
    int l[4] = {0, 0, 0, 0};
    lam_basis *b = primitive_basis(4, l, e, c);
    double s[16], t[16], v[16];
    lam_int_overlap(b, s);
    lam_int_kinetic(b, t);
    lam_molecule mol = {0};
    int z = 3;
    double cz[3] = {0.25, 0.5, -0.4};
    long line = 1;
    mol.natom = 1;
    mol.z = &z;
    mol.xyz = cz;
    mol.line = &line;
    lam_int_nuclear(b, &mol, v);
    double *eri = lam_int_eri(b, 0.0, NULL);
    tap_near(s[1], ss_overlap(e[0], c[0], e[1], c[1]), 1e-14, "s overlap, two centres");
    tap_near(t[2 * 4 + 3], ss_kinetic(e[2], c[2], e[3], c[3]), 1e-13, "s kinetic, two centres");
    tap_near(v[0 * 4 + 3], ss_nuclear(e[0], c[0], e[3], c[3], z, cz), 1e-13, "s nuclear attraction");
    double cc[4][3];
    int idx[4] = {0, 1, 2, 3};
    for (int k = 0; k < 4; ++k) memcpy(cc[k], c[idx[k]], sizeof cc[k]);
    tap_near(eri_of(eri, 0, 1, 2, 3), ssss(e, cc), 1e-13, "(ss|ss) four centres");
    double e2[4] = {e[2], e[0], e[3], e[1]};
    double c2[4][3];
    memcpy(c2[0], c[2], sizeof c2[0]);
    memcpy(c2[1], c[0], sizeof c2[1]);
    memcpy(c2[2], c[3], sizeof c2[2]);
    memcpy(c2[3], c[1], sizeof c2[3]);
    tap_near(eri_of(eri, 2, 0, 3, 1), ssss(e2, c2), 1e-13, "(ss|ss) another index order");
    free(eri);
    lam_basis_free(b);
}

/* Integrals over Cartesian primitives from the s-type closed forms:
 * for every centre and direction with power 1 apply (1/2a) d/dA, with
 * power 2 apply (1/4a^2)(d2/dA2 + 2a), by central differences. */
typedef double (*s_form)(const double *e, double c[4][3], const void *extra);

static double apply_ops(s_form f, const double *e, double c[4][3], const void *extra,
                        int pw[4][3], int k, double h)
{
    for (; k < 12 && !pw[k / 3][k % 3]; ++k) {}
    if (k == 12) return f(e, c, extra);
    int ctr = k / 3, dir = k % 3, p = pw[ctr][dir];
    double a = e[ctr], cc[4][3];
    memcpy(cc, c, sizeof cc);
    cc[ctr][dir] = c[ctr][dir] + h;
    double fp = apply_ops(f, e, cc, extra, pw, k + 1, h);
    cc[ctr][dir] = c[ctr][dir] - h;
    double fm = apply_ops(f, e, cc, extra, pw, k + 1, h);
    if (p == 1) return (fp - fm) / (2.0 * h) / (2.0 * a);
    double f0c = apply_ops(f, e, c, extra, pw, k + 1, h);
    return ((fp - 2.0 * f0c + fm) / (h * h) + 2.0 * a * f0c) / (4.0 * a * a);
}

/* Richardson extrapolation of the h^2 error of the central stencils.  With
 * up to five nested stencils rounding and truncation leave about 1e-7
 * relative, so the checks below allow 1e-6; a wrong recursion or
 * normalization is off by far more. */
static double differentiated(s_form f, const double *e, double c[4][3], const void *extra,
                             int pw[4][3])
{
    double h = 2e-2;
    double coarse = apply_ops(f, e, c, extra, pw, 0, h);
    double fine = apply_ops(f, e, c, extra, pw, 0, h / 2);
    return (4.0 * fine - coarse) / 3.0;
}

static double form_eri(const double *e, double c[4][3], const void *extra)
{
    (void)extra;
    return ssss(e, c);
}

static double form_overlap(const double *e, double c[4][3], const void *extra)
{
    (void)extra;
    return ss_overlap(e[0], c[0], e[1], c[1]);
}

static double form_kinetic(const double *e, double c[4][3], const void *extra)
{
    (void)extra;
    return ss_kinetic(e[0], c[0], e[1], c[1]);
}

static const double nucleus_at[3] = {0.25, 0.5, -0.4};
static double form_nuclear(const double *e, double c[4][3], const void *extra)
{
    (void)extra;
    return ss_nuclear(e[0], c[0], e[1], c[1], 2, nucleus_at);
}

/* Index of the Cartesian component with powers p in shell k. */
static int component(const lam_basis *b, int k, const int p[3])
{
    const lam_shell *sh = &b->shell[k];
    for (int i = 0; i < sh->ncart; ++i) {
        int x, y, z;
        lam_cart_powers(sh->l, i, &x, &y, &z);
        if (x == p[0] && y == p[1] && z == p[2]) return sh->first + i;
    }
    return -1;
}

/* A Cartesian Gaussian x^lx y^ly z^lz exp(-a r^2) has the norm factor
 * of x^l times sqrt((2l-1)!! / ((2lx-1)!! (2ly-1)!! (2lz-1)!!)) (common
 * practice); the basis keeps one coefficient per shell, so for d shells
 * xy, xz and yz carry an extra sqrt(3) against the raw monomial. */
static double cartesian_factor(int pw[4][3], int ncentre)
{
    double f = 1.0;
    for (int k = 0; k < ncentre; ++k) {
        int l = pw[k][0] + pw[k][1] + pw[k][2];
        if (l == 2 && pw[k][0] < 2 && pw[k][1] < 2 && pw[k][2] < 2) f *= sqrt(3.0);
    }
    return f;
}

static double test_centres[4][3] = {
    {0.1, -0.2, 0.3}, {1.0, 0.4, -0.5}, {-0.7, 0.9, 0.2}, {0.3, -1.1, 0.8}};
static double test_exps[4] = {1.3, 0.45, 2.1, 0.8};

static void check_eri(int pw[4][3], const char *name)
{
    int l[4];
    for (int k = 0; k < 4; ++k) l[k] = pw[k][0] + pw[k][1] + pw[k][2];
    lam_basis *b = primitive_basis(4, l, test_exps, test_centres);
    double *eri = lam_int_eri(b, 0.0, NULL);
    double got = eri_of(eri, component(b, 0, pw[0]), component(b, 1, pw[1]),
                        component(b, 2, pw[2]), component(b, 3, pw[3]));
    double want = cartesian_factor(pw, 4) *
                  differentiated(form_eri, test_exps, test_centres, NULL, pw);
    tap_near(got, want, 1e-6 * fabs(want) + 1e-10, name);
    free(eri);
    lam_basis_free(b);
}

static void check_one_electron(int which, int pw[4][3], const char *name)
{
    int l[2] = {pw[0][0] + pw[0][1] + pw[0][2], pw[1][0] + pw[1][1] + pw[1][2]};
    lam_basis *b = primitive_basis(2, l, test_exps, test_centres);
    int n = b->nbf;
    double *m = lam_calloc((size_t)n * n, sizeof *m);
    s_form f = form_overlap;
    if (which == 0) lam_int_overlap(b, m);
    if (which == 1) { lam_int_kinetic(b, m); f = form_kinetic; }
    if (which == 2) {
        int z = 2;
        long line = 1;
        double cz[3] = {nucleus_at[0], nucleus_at[1], nucleus_at[2]};
        lam_molecule mol = {1, &z, cz, &line, NULL, 0};
        lam_int_nuclear(b, &mol, m);
        f = form_nuclear;
    }
    double got = m[component(b, 0, pw[0]) * n + component(b, 1, pw[1])];
    double want = cartesian_factor(pw, 2) * differentiated(f, test_exps, test_centres, NULL, pw);
    tap_near(got, want, 1e-6 * fabs(want) + 1e-10, name);
    free(m);
    lam_basis_free(b);
}

static void test_p_and_d_by_differentiation(void)
{
    int ov[4][3] = {{1, 0, 0}, {1, 1, 0}, {0}, {0}};
    check_one_electron(0, ov, "overlap <p_x|d_xy> by differentiation");
    int kin[4][3] = {{0, 0, 2}, {0, 1, 0}, {0}, {0}};
    check_one_electron(1, kin, "kinetic <d_zz|p_y> by differentiation");
    int kin2[4][3] = {{1, 0, 1}, {0, 2, 0}, {0}, {0}};
    check_one_electron(1, kin2, "kinetic <d_xz|d_yy> by differentiation");
    int nuc[4][3] = {{1, 0, 1}, {0, 2, 0}, {0}, {0}};
    check_one_electron(2, nuc, "nuclear attraction <d_xz|d_yy> by differentiation");
    int nuc2[4][3] = {{0, 1, 0}, {0, 1, 0}, {0}, {0}};
    check_one_electron(2, nuc2, "nuclear attraction <p_y|p_y> by differentiation");
    int e1[4][3] = {{1, 0, 0}, {0}, {0}, {0}};
    check_eri(e1, "(p_x s|s s) four centres by differentiation");
    int e2[4][3] = {{1, 0, 0}, {0, 0, 1}, {0, 1, 0}, {1, 0, 0}};
    check_eri(e2, "(p_x p_z|p_y p_x) four centres by differentiation");
    int e3[4][3] = {{2, 0, 0}, {0}, {0, 1, 0}, {0, 1, 1}};
    check_eri(e3, "(d_xx s|p_y d_yz) four centres by differentiation");
    /* more derivatives than these drown the stencils in rounding */
    int e4[4][3] = {{0, 1, 1}, {0}, {0}, {0, 0, 2}};
    check_eri(e4, "(d_yz s|s d_zz) four centres by differentiation");
    int e5[4][3] = {{0}, {2, 0, 0}, {0, 2, 0}, {0}};
    check_eri(e5, "(s d_xx|d_yy s) four centres by differentiation");
}

static void test_h2_szabo(void)
{
    /* Szabo-Ostlund ch. 3 (from memory): STO-3G (zeta 1.24), R = 1.4 bohr */
    lam_molecule mol = {0};
    int z[2] = {1, 1};
    double xyz[6] = {0, 0, 0, 0, 0, 1.4};
    long line[2] = {1, 2};
    mol.natom = 2;
    mol.z = z;
    mol.xyz = xyz;
    mol.line = line;
    mol.source = "h2";
    lam_basis *b;
    lam_error err;
    if (lam_basis_build(&mol, lam_basis_set_find("sto-3g"), -1, &b, &err)) exit(65);
    double s[4], t[4], v[4];
    lam_int_overlap(b, s);
    lam_int_kinetic(b, t);
    lam_int_nuclear(b, &mol, v);
    double *eri = lam_int_eri(b, 1e-12, NULL);
    tap_near(s[1], 0.6593, 5e-5, "H2 S12 = 0.6593 (Szabo-Ostlund)");
    tap_near(t[0], 0.7600, 5e-5, "H2 T11 = 0.7600 (Szabo-Ostlund)");
    tap_near(t[1], 0.2365, 5e-5, "H2 T12 = 0.2365 (Szabo-Ostlund)");
    tap_near(t[0] + v[0], -1.1204, 5e-5, "H2 Hcore11 = -1.1204 (Szabo-Ostlund)");
    tap_near(t[1] + v[1], -0.9584, 5e-5, "H2 Hcore12 = -0.9584 (Szabo-Ostlund)");
    tap_near(eri_of(eri, 0, 0, 0, 0), 0.7746, 5e-5, "H2 (11|11) = 0.7746 (Szabo-Ostlund)");
    tap_near(eri_of(eri, 0, 0, 1, 1), 0.5697, 5e-5, "H2 (11|22) = 0.5697 (Szabo-Ostlund)");
    tap_near(eri_of(eri, 1, 0, 0, 0), 0.4441, 5e-5, "H2 (21|11) = 0.4441 (Szabo-Ostlund)");
    tap_near(eri_of(eri, 1, 0, 1, 0), 0.2970, 5e-5, "H2 (21|21) = 0.2970 (Szabo-Ostlund)");
    tap_near(lam_molecule_nuclear_repulsion(&mol), 1 / 1.4, 1e-15, "H2 1/R");
    free(eri);
    lam_basis_free(b);
}

static void test_water_and_normalization(void)
{
    /* Crawford programming projects, project 3 geometry (bohr), E_nuc
     * 8.002367061810450 (from memory) */
    lam_molecule mol = {0};
    int z[3] = {8, 1, 1};
    double xyz[9] = {0.0, -0.143225816552, 0.0, 1.638036840407, 1.136548822547, 0.0,
                     -1.638036840407, 1.136548822547, 0.0};
    long line[3] = {1, 2, 3};
    mol.natom = 3;
    mol.z = z;
    mol.xyz = xyz;
    mol.line = line;
    mol.source = "water";
    tap_near(lam_molecule_nuclear_repulsion(&mol), 8.002367061810450, 1e-10,
             "water E_nuc = 8.002367061810450 (Crawford project 3)");
    for (int pure = 0; pure <= 1; ++pure) {
        lam_basis *b;
        lam_error err;
        if (lam_basis_build(&mol, lam_basis_set_find("cc-pvdz"), pure, &b, &err)) exit(65);
        int n = b->nbf;
        tap_ok(n == (pure ? 24 : 25), pure ? "water cc-pVDZ: 24 spherical functions"
                                           : "water cc-pVDZ: 25 Cartesian functions");
        double *s = lam_calloc((size_t)n * n, sizeof *s);
        lam_int_overlap(b, s);
        double worst = 0.0;
        for (int i = 0; i < n; ++i)
            if (fabs(s[i * n + i] - 1.0) > worst) worst = fabs(s[i * n + i] - 1.0);
        tap_near(worst, 0.0, 1e-12, pure ? "spherical functions normalized"
                                         : "Cartesian functions normalized");
        if (pure) {
            /* the d shell of O: 5 orthonormal real solid harmonics */
            const lam_shell *d = NULL;
            for (int k = 0; k < b->nshell; ++k)
                if (b->shell[k].l == 2) d = &b->shell[k];
            double off = 0.0;
            for (int i = 0; i < 5; ++i)
                for (int j = 0; j < i; ++j) {
                    double x = fabs(s[(d->first + i) * n + d->first + j]);
                    if (x > off) off = x;
                }
            tap_near(off, 0.0, 1e-14, "spherical d functions orthogonal on one centre");
        }
        free(s);
        lam_basis_free(b);
    }
}

int main(void)
{
    lam_set_program("test_integrals");
    test_boys();
    test_s_closed_forms();
    test_p_and_d_by_differentiation();
    test_h2_szabo();
    test_water_and_normalization();
    return tap_done();
}
