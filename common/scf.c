/* scf.c - restricted Hartree-Fock with DIIS, and the MO Hamiltonian. */
#include "scf.h"
#include "linalg.h"

#include <cblas.h>
#include <lapacke.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "eigen.h"
#include "integrals.h"
#include "util.h"

void lam_scf_options_default(lam_scf_options *o)
{
    o->max_iter = 100;
    o->energy_tol = 1e-10;
    o->gradient_tol = 1e-8;
    o->diis_depth = 8;
    o->schwarz = 1e-12;
    o->s_tol = 1e-7;
    o->start = LAM_START_ATOMS;
    o->stability = LAM_STABILITY_FOLLOW;
    o->max_follow = 4;
    o->report = 0;
}

int lam_scf_closed_shell_electrons(const lam_molecule *mol, int *electrons, lam_error *err)
{
    int n = lam_molecule_electrons(mol);
    if (n <= 0)
        return lam_error_at(err, LAM_EX_DATA, mol->source, 0, "no electrons left with charge %+d", mol->charge);
    if (n % 2)
        return lam_error_at(err, LAM_EX_DATA, mol->source, 0,
                            "%d electrons with charge %+d: an open shell; lam-scf does "
                            "closed-shell RHF only (change --charge)",
                            n, mol->charge);
    *electrons = n;
    return 0;
}

double lam_scf_bytes(int nbf)
{
    double n = nbf;
    /* integrals and supermatrix, plus a dozen nbf^2 matrices and DIIS */
    return 2.0 * 8.0 * (double)lam_eri_count(nbf) + 8.0 * 40.0 * n * n;
}


/* c = a^T b (a: k x m, b: k x n, c: m x n). */
static void mat_tn(int m, int n, int k, const double *a, const double *b, double *c)
{
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, m, n, k, 1.0, a, m, b, n,
                0.0, c, n);
}

/* c = a b (a: m x k, b: k x n). */
static void mat_nn(int m, int n, int k, const double *a, const double *b, double *c)
{
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, m, n, k, 1.0, a, k, b, n,
                0.0, c, n);
}

/* Canonical orthogonalization X = U s^-1/2 over the eigenvalues of S
 * above s_tol; *kept receives the number of columns kept. */
static int orthogonalizer(int n, const double *s, double s_tol, double *x, int *kept, lam_error *err)
{
    double *u = lam_malloc(lam_mul_size((size_t)n * n, sizeof *u));
    double *w = lam_malloc((size_t)n * sizeof *w);
    memcpy(u, s, (size_t)n * n * sizeof *u);
    if (lam_symmetric_eigen(n, u, w, err)) {
        free(u);
        free(w);
        return err->code;
    }
    int first = 0;
    while (first < n && w[first] < s_tol) ++first;
    int m = n - first;
    for (int i = 0; i < n; ++i)
        for (int k = 0; k < m; ++k)
            x[(size_t)i * m + k] = u[(size_t)i * n + first + k] / sqrt(w[first + k]);
    if (first)
        lam_warn("%d near-linear dependencies in the basis (overlap eigenvalue "
                 "%.3g < %.3g); %d orbitals kept", first, w[0], s_tol, m);
    free(u);
    free(w);
    *kept = m;
    return 0;
}

/* PK supermatrix from the packed integrals; with it G(D)_ij =
 * sum_{k>=l} P_{ij,kl} (2 - delta_kl) D_kl. */
static double *pk_supermatrix(int n, const double *eri)
{
    double *pk = lam_malloc(lam_mul_size(lam_eri_count(n), sizeof *pk));
    for (int i = 0; i < n; ++i)
        for (int j = 0; j <= i; ++j) {
            size_t ij = LAM_PAIR(i, j);
            for (int k = 0; k <= i; ++k) {
                int lmax = k == i ? j : k;
                for (int l = 0; l <= lmax; ++l) {
                    size_t kl = LAM_PAIR(k, l);
                    double ex = eri[LAM_PAIR(LAM_PAIR(i, k), LAM_PAIR(j, l))] +
                                eri[LAM_PAIR(LAM_PAIR(i, l), LAM_PAIR(j, k))];
                    pk[LAM_PAIR(ij, kl)] = eri[LAM_PAIR(ij, kl)] - 0.25 * ex;
                }
            }
        }
    return pk;
}

/* f = h + G(d) = h + J(d) - K(d)/2 for a symmetric d (nbf x nbf, lower
 * triangle read); h NULL gives G(d) alone. */
static void fock_build(int n, const double *pk, const double *h, const double *d,
                       double *f, double *packed_d, double *packed_g)
{
    for (int k = 0; k < n; ++k)
        for (int l = 0; l <= k; ++l)
            packed_d[LAM_PAIR(k, l)] = (k == l ? 1.0 : 2.0) * d[(size_t)k * n + l];
    size_t n2 = (size_t)n * (n + 1) / 2;
    cblas_dspmv(CblasRowMajor, CblasLower, (int)n2, 1.0, pk, packed_d, 1, 0.0,
                packed_g, 1);
    for (int i = 0; i < n; ++i)
        for (int j = 0; j <= i; ++j)
            f[(size_t)i * n + j] = f[(size_t)j * n + i] =
                (h ? h[(size_t)i * n + j] : 0.0) + packed_g[LAM_PAIR(i, j)];
}

/* d = scale C C^T over the first `used` columns of c (n x m). */
static void density(int n, int m, int used, double scale, const double *c, double *d)
{
    if (used == 0) {
        memset(d, 0, (size_t)n * n * sizeof *d);
        return;
    }
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, n, n, used, scale, c, m, c,
                m, 0.0, d, n);
}

static double trace_product(size_t nn, const double *a, const double *b)
{
    double s = 0.0;
    for (size_t i = 0; i < nn; ++i) s += a[i] * b[i];
    return s;
}

/* Diagonalize f in the orthonormal basis x: c = x c', eps ascending. */
static int roothaan_step(int n, int m, const double *x, const double *f,
                         double *c, double *eps, double *work, lam_error *err)
{
    double *fx = work, *fo = work + (size_t)n * m;
    mat_nn(n, m, n, f, x, fx);
    mat_tn(m, m, n, x, fx, fo);
    if (lam_symmetric_eigen(m, fo, eps, err)) return err->code;
    mat_nn(n, m, m, x, fo, c);
    return 0;
}

/* Orbital gradient X^T (F D S - S D F) X; returns its largest element. */
static double orbital_gradient(int n, int m, const double *f, const double *d,
                               const double *s, const double *x, double *err,
                               double *work)
{
    double *fd = work, *fds = work + (size_t)n * n, *ex = work + 2 * (size_t)n * n;
    mat_nn(n, n, n, f, d, fd);
    mat_nn(n, n, n, fd, s, fds);
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j)
            fd[(size_t)i * n + j] = fds[(size_t)i * n + j] - fds[(size_t)j * n + i];
    mat_nn(n, m, n, fd, x, ex);
    mat_tn(m, m, n, x, ex, err);
    double mx = 0.0;
    for (size_t i = 0; i < (size_t)m * m; ++i)
        if (fabs(err[i]) > mx) mx = fabs(err[i]);
    return mx;
}

typedef struct {
    int cap, count, next;
    size_t fsize, esize;
    double *f, *e;  /* cap Fock matrices and error vectors */
} diis_store;

static void diis_init(diis_store *st, int cap, size_t fsize, size_t esize)
{
    st->cap = cap;
    st->count = st->next = 0;
    st->fsize = fsize;
    st->esize = esize;
    st->f = cap ? lam_malloc(lam_mul_size((size_t)cap * fsize, sizeof(double))) : NULL;
    st->e = cap ? lam_malloc(lam_mul_size((size_t)cap * esize, sizeof(double))) : NULL;
}

static void diis_push(diis_store *st, const double *f, const double *e)
{
    if (!st->cap) return;
    memcpy(st->f + (size_t)st->next * st->fsize, f, st->fsize * sizeof *f);
    memcpy(st->e + (size_t)st->next * st->esize, e, st->esize * sizeof *e);
    st->next = (st->next + 1) % st->cap;
    if (st->count < st->cap) ++st->count;
}

/* Replace f by the Pulay extrapolation; the oldest vectors are dropped
 * while the linear system is singular. */
static void diis_extrapolate(diis_store *st, double *f)
{
    for (int use = st->count; use >= 2; --use) {
        int dim = use + 1;
        double b[(8 + 4) * (8 + 4)], rhs[8 + 4];
        lapack_int piv[8 + 4];
        /* the newest `use` entries */
        int idx[64];
        for (int k = 0; k < use; ++k)
            idx[k] = ((st->next - 1 - k) % st->cap + st->cap) % st->cap;
        for (int i = 0; i < use; ++i) {
            for (int j = 0; j <= i; ++j)
                b[i * dim + j] = b[j * dim + i] =
                    trace_product(st->esize, st->e + (size_t)idx[i] * st->esize,
                                  st->e + (size_t)idx[j] * st->esize);
            b[i * dim + use] = b[use * dim + i] = -1.0;
            rhs[i] = 0.0;
        }
        b[use * dim + use] = 0.0;
        rhs[use] = -1.0;
        if (LAPACKE_dgesv(LAPACK_ROW_MAJOR, dim, 1, b, dim, piv, rhs, 1) != 0) continue;
        memset(f, 0, st->fsize * sizeof *f);
        for (int k = 0; k < use; ++k)
            cblas_daxpy((int)st->fsize, rhs[k], st->f + (size_t)idx[k] * st->fsize, 1, f, 1);
        return;
    }
}

static void diis_free(diis_store *st)
{
    free(st->f);
    free(st->e);
}

/* Work space of one SCF problem: fixed matrices and the iterates. */
typedef struct {
    int n, m;
    size_t nn;
    const double *h, *pk, *ovl, *x;
    double e_nuc;
    double *c, *eps, *occ;  /* orbitals, energies, occupation numbers */
    double *d, *f, *err, *work, *scaled, *pd, *pg;
} scf_state;

static void scf_state_init(scf_state *w, int n, int m, const double *h, const double *pk,
                           const double *ovl, const double *x, double e_nuc)
{
    memset(w, 0, sizeof *w);
    w->n = n;
    w->m = m;
    w->nn = lam_mul_size((size_t)n, (size_t)n);
    w->h = h;
    w->pk = pk;
    w->ovl = ovl;
    w->x = x;
    w->e_nuc = e_nuc;
    size_t nm = lam_mul_size((size_t)n, (size_t)m), n2 = (size_t)n * (n + 1) / 2;
    w->c = lam_malloc(nm * sizeof *w->c);
    w->scaled = lam_malloc(nm * sizeof *w->scaled);
    w->eps = lam_malloc((size_t)m * sizeof *w->eps);
    w->occ = lam_malloc((size_t)m * sizeof *w->occ);
    w->d = lam_calloc(w->nn, sizeof *w->d);
    w->f = lam_malloc(w->nn * sizeof *w->f);
    w->err = lam_malloc(lam_mul_size((size_t)m, (size_t)m) * sizeof *w->err);
    w->work = lam_malloc(lam_mul_size(w->nn, 3 * sizeof *w->work));
    w->pd = lam_malloc(n2 * sizeof *w->pd);
    w->pg = lam_malloc(n2 * sizeof *w->pg);
}

static void scf_state_free(scf_state *w)
{
    LAM_FREE_ALL(w->c, w->scaled, w->eps, w->occ, w->d, w->f, w->err, w->work, w->pd, w->pg);
}

/* Aufbau occupations for `electrons` over the orbital energies.  With
 * fractional set, the electrons of a partly filled group of degenerate
 * orbitals are shared evenly (the spherical average of an open-shell
 * atom); otherwise orbitals are filled two by two. */
static void occupations(scf_state *w, double electrons, int fractional)
{
    double left = electrons;
    for (int i = 0; i < w->m;) {
        int g = 1;
        if (fractional)
            while (i + g < w->m && fabs(w->eps[i + g] - w->eps[i]) < 1e-4) ++g;
        double each = left >= 2.0 * g ? 2.0 : left / g;
        for (int k = 0; k < g; ++k) w->occ[i + k] = each;
        left -= each * g;
        i += g;
    }
}

/* D = C diag(occ) C^T. */
static void occupied_density(scf_state *w)
{
    int n = w->n, m = w->m, used = 0;
    for (int k = 0; k < m; ++k)
        if (w->occ[k] > 0) used = k + 1;
    for (int i = 0; i < n; ++i)
        for (int k = 0; k < used; ++k)
            w->scaled[(size_t)i * m + k] = w->c[(size_t)i * m + k] * sqrt(w->occ[k]);
    density(n, m, used, 1.0, w->scaled, w->d);
}

typedef struct {
    double energy, change, gradient;
    int iterations, converged;
    int rc; /* non-zero: failed, the reason in the lam_error given */
} scf_outcome;

/* Canonical orbitals of the determinant in w->c (occupied: the first
 * nocc columns): the Fock matrix w->f diagonalized within the occupied and
 * within the virtual orbitals separately.  At convergence this is the
 * diagonalization of the whole Fock matrix, except that a degeneracy
 * across the Fermi level cannot swap an occupied orbital for a virtual one
 * (H2 at 20 angstrom: sigma_g and sigma_u have the same energy). */
static int canonicalize(scf_state *w, int nocc, lam_error *err)
{
    int rc = 0;
    int n = w->n, m = w->m;
    double *fc = w->work; /* n x m */
    double *blk = lam_malloc(lam_mul_size((size_t)m, (size_t)m) * sizeof *blk);
    double *cnew = lam_malloc(lam_mul_size((size_t)n, (size_t)m) * sizeof *cnew);
    mat_nn(n, m, n, w->f, w->c, fc);
    int first[2] = {0, nocc}, count[2] = {nocc, m - nocc};
    for (int b = 0; b < 2; ++b) {
        int f0 = first[b], k = count[b];
        if (k == 0) continue;
        cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, k, k, n, 1.0, w->c + f0, m,
                    fc + f0, m, 0.0, blk, k);
        if ((rc = lam_symmetric_eigen(k, blk, w->eps + f0, err))) break;
        cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, k, k, 1.0, w->c + f0, m,
                    blk, k, 0.0, cnew + f0, m);
    }
    if (!rc) memcpy(w->c, cnew, (size_t)n * m * sizeof *cnew);
    free(blk);
    free(cnew);
    return rc;
}

/* Where the iterations start: the core Hamiltonian, the Fock matrix of a
 * guessed density, or the orbitals already in w->c. */
typedef enum { FROM_CORE, FROM_DENSITY, FROM_ORBITALS } scf_start;

/* Roothaan-Hall iterations with DIIS.  On convergence c and eps are the
 * canonical orbitals of the converged Fock matrix (for a closed shell,
 * canonical within the occupied and the virtual orbitals). */
static scf_outcome scf_iterate(scf_state *w, const lam_scf_options *o, double electrons,
                               int fractional, scf_start from, const double *d_guess,
                               int report, lam_error *err)
{
    int n = w->n, m = w->m;
    scf_outcome out = {0.0, 0.0, 0.0, 0, 0, 0};
    if (from == FROM_DENSITY) {
        fock_build(n, w->pk, w->h, d_guess, w->f, w->pd, w->pg);
        out.rc = roothaan_step(n, m, w->x, w->f, w->c, w->eps, w->work, err);
    } else if (from == FROM_CORE) {
        out.rc = roothaan_step(n, m, w->x, w->h, w->c, w->eps, w->work, err);
    }
    if (out.rc) return out;
    diis_store diis;
    diis_init(&diis, o->diis_depth > 8 ? 8 : o->diis_depth, w->nn, (size_t)m * m);
    if (report)
        fprintf(stderr, "%s: iter  energy/Eh                 change/Eh   gradient\n", lam_program());
    int it;
    for (it = 1; it <= o->max_iter; ++it) {
        occupations(w, electrons, fractional);
        occupied_density(w);
        fock_build(n, w->pk, w->h, w->d, w->f, w->pd, w->pg);
        double e = 0.5 * (trace_product(w->nn, w->d, w->h) + trace_product(w->nn, w->d, w->f)) +
                   w->e_nuc;
        out.change = e - out.energy;
        out.energy = e;
        out.gradient = orbital_gradient(n, m, w->f, w->d, w->ovl, w->x, w->err, w->work);
        if (report)
            fprintf(stderr, "%s: %4d  %.15f  %10.3e  %.3e\n", lam_program(), it, e,
                    it == 1 ? 0.0 : out.change, out.gradient);
        /* given orbitals that are already stationary are kept as they
         * are: a diagonalization could swap degenerate orbitals across
         * the Fermi level */
        int settled = it > 1 ? fabs(out.change) < o->energy_tol : from == FROM_ORBITALS;
        if (settled && out.gradient < o->gradient_tol) {
            out.converged = 1;
            break;
        }
        diis_push(&diis, w->f, w->err);
        if (diis.count >= 2) diis_extrapolate(&diis, w->f);
        if ((out.rc = roothaan_step(n, m, w->x, w->f, w->c, w->eps, w->work, err))) break;
    }
    out.iterations = it;
    /* canonical orbitals of the converged (not extrapolated) Fock matrix */
    if (out.converged) {
        if (fractional)
            out.rc = roothaan_step(n, m, w->x, w->f, w->c, w->eps, w->work, err);
        else
            out.rc = canonicalize(w, (int)(electrons / 2), err);
    }
    diis_free(&diis);
    return out;
}

/* Sum over basis functions of the fourth powers of orbital columns k and
 * l of c (n x m) turned by theta. */
static double quartic_spread(int n, int m, const double *c, int k, int l, double theta)
{
    double cs = cos(theta), sn = sin(theta), f = 0.0;
    for (int i = 0; i < n; ++i) {
        double a = c[(size_t)i * m + k], b = c[(size_t)i * m + l];
        double u = cs * a + sn * b, v = -sn * a + cs * b;
        f += u * u * u * u + v * v * v * v;
    }
    return f;
}

#define DEGENERATE_EPS 1e-7

/* Orbitals of one energy (within DEGENERATE_EPS Eh) are an arbitrary
 * rotation of each other after a diagonalization; integrals that vanish
 * by symmetry in the symmetry-adapted choice (pi_x, pi_y of N2) do not in
 * a rotated one.  Within each degenerate set, Jacobi rotations maximize
 * the sum of fourth powers of the coefficients over the basis functions,
 * which turns the set onto the Cartesian axes when the molecule's
 * symmetry elements lie along them.  The sum is c0 + A cos 4t + B sin 4t
 * for a pair, so three values give its maximum.  Sets never straddle the
 * first `nocc` orbitals (occupied and virtual stay apart). */
static void align_degenerate(int n, int m, int nocc, const double *eps, double *c)
{
    for (int first = 0; first < m;) {
        int end = first + 1;
        while (end < m && end != nocc && eps[end] - eps[first] < DEGENERATE_EPS) ++end;
        for (int sweep = 0; sweep < 8 && end - first > 1; ++sweep) {
            double gain = 0.0;
            for (int k = first; k < end; ++k)
                for (int l = k + 1; l < end; ++l) {
                    double f0 = quartic_spread(n, m, c, k, l, 0.0);
                    double f8 = quartic_spread(n, m, c, k, l, 0.125 * acos(-1.0));
                    double f4 = quartic_spread(n, m, c, k, l, 0.25 * acos(-1.0));
                    double c0 = 0.5 * (f0 + f4), a = 0.5 * (f0 - f4), b = f8 - c0;
                    double theta = 0.25 * atan2(b, a), best = c0 + sqrt(a * a + b * b);
                    if (best - f0 <= 1e-14 * (1.0 + f0)) continue;
                    gain += best - f0;
                    double cs = cos(theta), sn = sin(theta);
                    for (int i = 0; i < n; ++i) {
                        double *row = c + (size_t)i * m, x = row[k], y = row[l];
                        row[k] = cs * x + sn * y;
                        row[l] = -sn * x + cs * y;
                    }
                }
            if (gain < 1e-12) break;
        }
        first = end;
    }
}

/* Each orbital's sign is arbitrary, and BLAS kernels (which differ by
 * processor, or under valgrind) choose differently; integrals with an odd
 * count of one orbital change sign with it.  Fixed here: the first
 * coefficient within 1e-6 of the largest magnitude is positive, so that
 * the same input gives the same FCIDUMP everywhere (to rounding). */
static void fix_signs(int n, int m, double *c)
{
    for (int k = 0; k < m; ++k) {
        double mx = 0.0;
        for (int i = 0; i < n; ++i) mx = fmax(mx, fabs(c[(size_t)i * m + k]));
        int i = 0;
        while (i < n - 1 && fabs(c[(size_t)i * m + k]) < mx * (1.0 - 1e-6)) ++i;
        if (c[(size_t)i * m + k] < 0)
            for (int r = 0; r < n; ++r) c[(size_t)r * m + k] = -c[(size_t)r * m + k];
    }
}

/* Energy of the closed-shell determinant of the first electrons/2
 * orbitals in w->c; leaves its density and Fock matrix in w->d, w->f. */
static double determinant_energy(scf_state *w, double electrons)
{
    occupations(w, electrons, 0);
    occupied_density(w);
    fock_build(w->n, w->pk, w->h, w->d, w->f, w->pd, w->pg);
    return 0.5 * (trace_product(w->nn, w->d, w->h) + trace_product(w->nn, w->d, w->f)) +
           w->e_nuc;
}

/* ---- stability of the RHF solution ----
 *
 * Real RHF -> real RHF (singlet, internal) stability: the solution is a
 * minimum when the orbital Hessian for real rotations between occupied
 * orbitals i, j and virtual orbitals a, b,
 *     (A+B)_{ai,bj} = (e_a - e_i) d_ab d_ij + 4 (ai|bj) - (ab|ij) - (aj|bi),
 * has no negative eigenvalue (R. Seeger and J. A. Pople, J. Chem. Phys.
 * 66, 3045 (1977); from memory).  Its product with a rotation X (nv x no)
 * needs one Fock-like build: with D = C_v X C_o^T and Ds = D + D^T,
 *     [(A+B) X]_ai = (e_a - e_i) X_ai + 2 [C_v^T G(Ds) C_o]_ai,
 * G = J - K/2 from the PK supermatrix.  The lowest eigenvalue comes from
 * Davidson's method (common/eigen.h). */

typedef struct {
    const scf_state *w;
    int nocc, nvir;
    const double *u;          /* unit vector of a Householder reflection, or NULL */
    double *x, *t, *d, *g;    /* work: dim, n x nocc, n x n, n x n */
    double *pd, *pg;          /* packed work of the G build */
} hessian_op;

/* y = (1 - 2 u u^T) x; y may be x. */
static void reflect(size_t dim, const double *u, const double *x, double *y)
{
    double s = 2.0 * cblas_ddot((int)dim, u, 1, x, 1);
    if (y != x) memcpy(y, x, dim * sizeof *y);
    cblas_daxpy((int)dim, -s, u, 1, y, 1);
}

static void hessian_apply(void *ctx, const double *xin, double *y)
{
    hessian_op *h = ctx;
    const scf_state *w = h->w;
    int n = w->n, m = w->m, no = h->nocc, nv = h->nvir;
    size_t dim = (size_t)no * nv;
    const double *x = xin;
    if (h->u) {
        reflect(dim, h->u, xin, h->x);
        x = h->x;
    }
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, no, nv, 1.0, w->c + no, m, x,
                no, 0.0, h->t, no);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, n, n, no, 1.0, h->t, no, w->c, m,
                0.0, h->d, n);
    for (int i = 0; i < n; ++i)
        for (int j = 0; j <= i; ++j)
            h->d[(size_t)i * n + j] = h->d[(size_t)j * n + i] =
                h->d[(size_t)i * n + j] + h->d[(size_t)j * n + i];
    fock_build(n, w->pk, NULL, h->d, h->g, h->pd, h->pg);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, no, n, 1.0, h->g, n, w->c, m,
                0.0, h->t, no);
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, nv, no, n, 2.0, w->c + no, m, h->t,
                no, 0.0, y, no);
    for (int a = 0; a < nv; ++a)
        for (int i = 0; i < no; ++i)
            y[(size_t)a * no + i] += (w->eps[no + a] - w->eps[i]) * x[(size_t)a * no + i];
    if (h->u) reflect(dim, h->u, y, y);
}

/* Lowest eigenvalue of (A+B) for the solution in w (nocc occupied
 * orbitals) and its unit eigenvector (nv x no) in vec.  Davidson starts
 * from one excitation and, with a diagonal preconditioner, would never
 * leave its symmetry species; the reflection mixes every species into the
 * start (the dense path, for small problems, needs none). */
static int hessian_lowest(const scf_state *w, int nocc, double *vec, lam_eigen_result *res,
                          lam_error *err)
{
    int n = w->n, nv = w->m - nocc;
    size_t dim = (size_t)nocc * nv, nn = (size_t)n * n, n2 = (size_t)n * (n + 1) / 2;
    hessian_op h = {w, nocc, nv, NULL, NULL, NULL, NULL, NULL, NULL, NULL};
    h.x = lam_malloc(dim * sizeof *h.x);
    h.t = lam_malloc(lam_mul_size((size_t)n, (size_t)nocc) * sizeof *h.t);
    h.d = lam_malloc(nn * sizeof *h.d);
    h.g = lam_malloc(nn * sizeof *h.g);
    h.pd = lam_malloc(n2 * sizeof *h.pd);
    h.pg = lam_malloc(n2 * sizeof *h.pg);
    double *diag = lam_malloc(dim * sizeof *diag), *u = NULL;
    for (int a = 0; a < nv; ++a)
        for (int i = 0; i < nocc; ++i) diag[(size_t)a * nocc + i] = w->eps[nocc + a] - w->eps[i];
    lam_eigen_problem p;
    lam_eigen_problem_init(&p, dim, hessian_apply, &h, diag);
    p.tol = 1e-7;
    p.max_iter = 300;
    p.max_subspace = 16;
    p.dense_limit = 200;
    p.label = "stability test";
    if (dim > p.dense_limit) {
        /* any fixed vector with no zero and no symmetry pattern */
        u = lam_malloc(dim * sizeof *u);
        for (size_t k = 0; k < dim; ++k) u[k] = 1.0 + 0.5 * sin(12.9898 * (double)(k + 1));
        cblas_dscal((int)dim, 1.0 / cblas_dnrm2((int)dim, u, 1), u, 1);
        h.u = u;
    }
    int rc = lam_eigen_extreme(&p, res, vec, err);
    if (u && !rc) reflect(dim, u, vec, vec);
    LAM_FREE_ALL(u, diag, h.x, h.t, h.d, h.g, h.pd, h.pg);
    return rc;
}

/* b (n x k, leading dimension ld) <- b m^(-1/2) for a symmetric positive
 * definite k x k matrix m (destroyed). */
static int times_inverse_sqrt(int n, int k, int ld, double *b, double *m, lam_error *err)
{
    double *mu = lam_malloc((size_t)k * sizeof *mu);
    if (lam_symmetric_eigen(k, m, mu, err)) {
        free(mu);
        return err->code;
    }
    double *r = lam_malloc(lam_mul_size((size_t)k, (size_t)k) * sizeof *r);
    double *t = lam_malloc(lam_mul_size((size_t)n, (size_t)k) * sizeof *t);
    for (int i = 0; i < k; ++i)
        for (int j = 0; j < k; ++j) {
            double v = 0.0;
            for (int l = 0; l < k; ++l) v += m[(size_t)i * k + l] * m[(size_t)j * k + l] / sqrt(mu[l]);
            r[(size_t)i * k + j] = v;
        }
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, k, k, 1.0, b, ld, r, k, 0.0, t, k);
    for (int i = 0; i < n; ++i) memcpy(b + (size_t)i * ld, t + (size_t)i * k, (size_t)k * sizeof *t);
    LAM_FREE_ALL(mu, r, t);
    return 0;
}

/* Orbitals c (n x m, the first nocc occupied) turned by the rotation
 * whose virtual-occupied block is tan * x (nv x no), into out:
 *     C_o' = (C_o + t C_v X) (1 + t^2 X^T X)^(-1/2),
 *     C_v' = (C_v - t C_o X^T) (1 + t^2 X X^T)^(-1/2),
 * orthonormal, and C_o' orthogonal to C_v'. */
static int rotate_orbitals(int n, int m, int nocc, const double *c, const double *x, double t,
                           double *out, lam_error *err)
{
    int nv = m - nocc;
    memcpy(out, c, (size_t)n * m * sizeof *out);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasNoTrans, n, nocc, nv, t, c + nocc, m, x, nocc,
                1.0, out, m);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, n, nv, nocc, -t, c, m, x, nocc, 1.0,
                out + nocc, m);
    double *mo = lam_malloc(lam_mul_size((size_t)nocc, (size_t)nocc) * sizeof *mo);
    double *mv = lam_malloc(lam_mul_size((size_t)nv, (size_t)nv) * sizeof *mv);
    cblas_dgemm(CblasRowMajor, CblasTrans, CblasNoTrans, nocc, nocc, nv, t * t, x, nocc, x, nocc,
                0.0, mo, nocc);
    cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, nv, nv, nocc, t * t, x, nocc, x, nocc,
                0.0, mv, nv);
    for (int i = 0; i < nocc; ++i) mo[(size_t)i * nocc + i] += 1.0;
    for (int a = 0; a < nv; ++a) mv[(size_t)a * nv + a] += 1.0;
    int rc = times_inverse_sqrt(n, nocc, m, out, mo, err);
    if (!rc) rc = times_inverse_sqrt(n, nv, m, out + nocc, mv, err);
    free(mo);
    free(mv);
    return rc;
}

#define FOLLOW_STEPS 20

/* Leave the unstable solution in w along the eigenvector x of its lowest
 * Hessian eigenvalue: the lowest determinant of a scan of the rotation
 * angle over (0, pi/2), then iterations from its orbitals. */
static scf_outcome follow_instability(scf_state *w, const lam_scf_options *o, int nelec,
                                      const double *x, double e_unstable, lam_error *err)
{
    scf_outcome r = {e_unstable, 0.0, 0.0, 0, 0, 0};
    int n = w->n, m = w->m, nocc = nelec / 2;
    size_t nm = (size_t)n * m;
    double *c0 = lam_malloc(nm * sizeof *c0), *best = lam_malloc(nm * sizeof *best);
    memcpy(c0, w->c, nm * sizeof *c0);
    double e_best = e_unstable, quarter = 0.5 * acos(-1.0);
    for (int k = 1; k < FOLLOW_STEPS; ++k) {
        if ((r.rc = rotate_orbitals(n, m, nocc, c0, x, tan(quarter * k / FOLLOW_STEPS), w->c, err))) break;
        double e = determinant_energy(w, nelec);
        if (e < e_best) {
            e_best = e;
            memcpy(best, w->c, nm * sizeof *best);
        }
    }
    if (!r.rc && e_best < e_unstable) {
        memcpy(w->c, best, nm * sizeof *best);
        r = scf_iterate(w, o, nelec, 0, FROM_ORBITALS, NULL, o->report, err);
    }
    free(c0);
    free(best);
    return r;
}

/* The stability test on the converged solution in w, and with
 * LAM_STABILITY_FOLLOW the way down from each instability found.  Returns
 * 0, -1 with the reason in why (unstable), or the code of a failure in
 * *err. */
static int ensure_stable(scf_state *w, const lam_scf_options *o, int nelec, scf_outcome *r,
                         lam_scf *s, char *why, size_t why_size, lam_error *err)
{
    int nocc = nelec / 2, status = 0;
    size_t dim = (size_t)nocc * (w->m - nocc);
    s->hessian_lowest = s->hessian_residual = NAN;
    if (o->stability == LAM_STABILITY_OFF || dim == 0) return 0;
    double *vec = lam_malloc(dim * sizeof *vec);
    for (;;) {
        lam_eigen_result hr;
        if ((status = hessian_lowest(w, nocc, vec, &hr, err))) break;
        s->hessian_lowest = hr.value;
        s->hessian_residual = hr.residual;
        if (o->report)
            fprintf(stderr, "%s: stability test: lowest orbital Hessian eigenvalue %.6e Eh "
                    "(residual %.1e)\n", lam_program(), hr.value, hr.residual);
        if (hr.value >= -LAM_STABILITY_TOL) {
            if (!hr.converged)
                lam_warn("warning: stability test not converged (lowest orbital Hessian "
                         "eigenvalue %.3e Eh, residual %.1e): the solution may be unstable",
                         hr.value, hr.residual);
            break;
        }
        /* a negative Rayleigh quotient proves the instability, converged or not */
        status = -1;
        if (o->stability == LAM_STABILITY_CHECK) {
            snprintf(why, why_size, "the RHF solution (%.12f Eh) is unstable: the orbital "
                     "Hessian has the eigenvalue %.6e Eh; --stability follow goes on to a "
                     "lower solution", r->energy, hr.value);
            break;
        }
        if (s->instabilities_followed == o->max_follow) {
            snprintf(why, why_size, "the RHF solution (%.12f Eh) is still unstable after %d "
                     "instabilities were followed (orbital Hessian eigenvalue %.6e Eh)",
                     r->energy, o->max_follow, hr.value);
            break;
        }
        double e_unstable = r->energy;
        scf_outcome next = follow_instability(w, o, nelec, vec, e_unstable, err);
        if (next.rc) {
            status = next.rc;
            break;
        }
        if (!next.converged || next.energy > e_unstable) {
            snprintf(why, why_size, "the RHF solution (%.12f Eh) is unstable (orbital Hessian "
                     "eigenvalue %.6e Eh), and no lower solution was reached along it (%s)",
                     e_unstable, hr.value,
                     next.iterations == 0 ? "no lower determinant on the way"
                                          : "the iterations did not converge");
            break;
        }
        status = 0;
        if (o->report)
            fprintf(stderr, "%s: instability followed from %.12f Eh down to %.12f Eh\n",
                    lam_program(), e_unstable, next.energy);
        if (!s->instabilities_followed) {
            s->unstable_energy = e_unstable;
            s->unstable_eigenvalue = hr.value;
        }
        r->iterations += next.iterations;
        r->energy = next.energy;
        r->change = next.change;
        r->gradient = next.gradient;
        s->instabilities_followed++;
    }
    free(vec);
    return status;
}

/* One-electron matrices: overlap and core Hamiltonian. */
static void one_electron(const lam_basis *b, const lam_molecule *mol, double *ovl, double *h)
{
    size_t nn = (size_t)b->nbf * b->nbf;
    double *kin = lam_calloc(nn, sizeof *kin);
    lam_int_overlap(b, ovl);
    lam_int_kinetic(b, kin);
    lam_int_nuclear(b, mol, h);
    for (size_t i = 0; i < nn; ++i) h[i] += kin[i];
    free(kin);
}

/* First function and number of functions of an atom (its shells are
 * consecutive). */
static void atom_functions(const lam_basis *b, int atom, int *first, int *count)
{
    *first = -1;
    *count = 0;
    for (int k = 0; k < b->nshell; ++k) {
        if (b->shell[k].atom != atom) continue;
        if (*first < 0) *first = b->shell[k].first;
        *count += b->shell[k].nfunc;
    }
}

/* Density of the neutral atom `atom` alone in its own functions, from a
 * spherically averaged (fractionally occupied) Hartree-Fock calculation. */
static double *atomic_density(const lam_basis *b, const lam_molecule *mol, int atom,
                              const lam_scf_options *o, lam_error *err)
{
    lam_basis ab = {0, 0, 0, NULL};
    ab.shell = lam_malloc(lam_mul_size((size_t)b->nshell, sizeof *ab.shell));
    for (int k = 0; k < b->nshell; ++k) {
        if (b->shell[k].atom != atom) continue;
        lam_shell *sh = &ab.shell[ab.nshell++];
        *sh = b->shell[k];
        sh->first = ab.nbf;
        ab.nbf += sh->nfunc;
        if (sh->l > ab.max_l) ab.max_l = sh->l;
    }
    lam_molecule am = {1, &mol->z[atom], mol->xyz + 3 * atom, &mol->line[atom], mol->source, 0};
    int n = ab.nbf;
    size_t nn = (size_t)n * n;
    double *ovl = lam_calloc(nn, sizeof *ovl), *h = lam_calloc(nn, sizeof *h);
    double *x = lam_malloc(nn * sizeof *x);
    one_electron(&ab, &am, ovl, h);
    double *eri = lam_int_eri(&ab, o->schwarz, NULL);
    double *pk = pk_supermatrix(n, eri);
    free(eri);
    int m = 0;
    double *d = NULL;
    if (orthogonalizer(n, ovl, o->s_tol, x, &m, err) == 0) {
        scf_state w;
        scf_state_init(&w, n, m, h, pk, ovl, x, 0.0);
        lam_scf_options ao = *o;
        ao.energy_tol = 1e-8;
        ao.gradient_tol = 1e-5;
        ao.max_iter = 60;
        /* not converging only makes the guess a little worse */
        if (scf_iterate(&w, &ao, mol->z[atom], 1, FROM_CORE, NULL, 0, err).rc == 0) {
            d = w.d;
            w.d = NULL;
        }
        scf_state_free(&w);
    }
    LAM_FREE_ALL(ovl, h, x, pk, ab.shell);
    return d;
}

/* Superposition of atomic densities (one atomic calculation per element);
 * NULL with the reason in *err on failure. */
static double *atomic_densities(const lam_basis *b, const lam_molecule *mol,
                                const lam_scf_options *o, lam_error *err)
{
    int n = b->nbf;
    double *d = lam_calloc((size_t)n * n, sizeof *d);
    double *by_element[LAM_MAX_Z + 1] = {NULL};
    for (int a = 0; a < mol->natom; ++a) {
        int z = mol->z[a], first, count;
        atom_functions(b, a, &first, &count);
        if (!by_element[z] && !(by_element[z] = atomic_density(b, mol, a, o, err))) {
            free(d);
            d = NULL;
            break;
        }
        for (int i = 0; i < count; ++i)
            memcpy(d + (size_t)(first + i) * n + first, by_element[z] + (size_t)i * count,
                   (size_t)count * sizeof *d);
    }
    for (int z = 0; z <= LAM_MAX_Z; ++z) free(by_element[z]);
    return d;
}

int lam_scf_run(const lam_molecule *mol, const lam_basis *b, const lam_scf_options *o, lam_scf **out,
                lam_error *err)
{
    int nelec;
    *out = NULL;
    if (lam_scf_closed_shell_electrons(mol, &nelec, err)) return err->code;
    int n = b->nbf;
    size_t nn = lam_mul_size((size_t)n, (size_t)n);
    lam_scf *s = lam_calloc(1, sizeof *s);
    s->nbf = n;
    s->nocc = nelec / 2;
    s->e_nuc = lam_molecule_nuclear_repulsion(mol);

    double t0 = lam_seconds();
    double *ovl = lam_calloc(nn, sizeof *ovl);
    s->hcore = lam_calloc(nn, sizeof *s->hcore);
    one_electron(b, mol, ovl, s->hcore);
    lam_eri_stats st;
    s->eri = lam_int_eri(b, o->schwarz, &st);
    s->pk = pk_supermatrix(n, s->eri);
    s->seconds_integrals = lam_seconds() - t0;
    if (o->report)
        fprintf(stderr, "%s: %d basis functions, %zu shell quartets (%zu screened), "
                "integrals %.2f s\n", lam_program(), n, st.quartets, st.screened,
                s->seconds_integrals);

    double *x = lam_malloc(nn * sizeof *x);
    int m = 0;
    if (orthogonalizer(n, ovl, o->s_tol, x, &m, err)) {
        free(ovl);
        free(x);
        lam_scf_free(s);
        return err->code;
    }
    s->nmo = m;
    if (s->nocc > m) {
        free(ovl);
        free(x);
        lam_scf_free(s);
        return lam_error_at(err, LAM_EX_DATA, mol->source, 0, "%d electrons do not fit in %d orbitals", nelec, m);
    }
    t0 = lam_seconds();
    double *guess = NULL;
    if (o->start == LAM_START_ATOMS && !(guess = atomic_densities(b, mol, o, err))) {
        free(ovl);
        free(x);
        lam_scf_free(s);
        return err->code;
    }
    if (o->report)
        fprintf(stderr, "%s: start from %s\n", lam_program(),
                guess ? "a superposition of atomic densities" : "the core Hamiltonian");
    scf_state w;
    scf_state_init(&w, n, m, s->hcore, s->pk, ovl, x, s->e_nuc);
    scf_outcome r = scf_iterate(&w, o, nelec, 0, guess ? FROM_DENSITY : FROM_CORE, guess,
                                o->report, err);
    char unstable[320] = "";
    int stable = r.rc;
    if (!r.rc && r.converged) {
        stable = ensure_stable(&w, o, nelec, &r, s, unstable, sizeof unstable, err);
        align_degenerate(n, m, nelec / 2, w.eps, w.c);
        fix_signs(n, m, w.c);
    }
    s->seconds_iterations = lam_seconds() - t0;
    s->energy = r.energy;
    s->iterations = r.iterations;
    s->c = w.c;
    s->eps = w.eps;
    w.c = w.eps = NULL;
    scf_state_free(&w);
    LAM_FREE_ALL(guess, ovl, x);
    if (stable > 0) {
        lam_scf_free(s);
        return err->code;
    }
    if (!r.converged) {
        lam_scf_free(s);
        return lam_error_at(err, LAM_EX_DATA, mol->source, 0,
                            "RHF did not converge in %d iterations (last energy change "
                            "%.2e Eh, gradient %.2e); try --max-iter or looser --energy-tol/--gradient-tol",
                            o->max_iter, fabs(r.change), r.gradient);
    }
    if (stable != 0) {
        lam_scf_free(s);
        return lam_error_at(err, LAM_EX_DATA, mol->source, 0, "%s", unstable);
    }
    *out = s;
    return 0;
}

void lam_scf_free(lam_scf *s)
{
    if (!s) return;
    LAM_FREE_ALL(s->hcore, s->eri, s->pk, s->c, s->eps, s);
}

/* Columns first .. first+count-1 of c (n x m) as an n x count matrix. */
static double *orbital_block(const lam_scf *s, int first, int count)
{
    double *c = lam_malloc(lam_mul_size((size_t)s->nbf, (size_t)(count ? count : 1)) * sizeof *c);
    for (int i = 0; i < s->nbf; ++i)
        for (int k = 0; k < count; ++k)
            c[(size_t)i * count + k] = s->c[(size_t)i * s->nmo + first + k];
    return c;
}

/* a (n x n symmetric) -> c^T a c (m x m), via t (n x m). */
static void congruence(int n, int m, const double *a, const double *c, double *t,
                       double *out)
{
    mat_nn(n, m, n, a, c, t);
    mat_tn(m, m, n, c, t, out);
}

/* Rows r0 .. r0+nr-1 of the symmetric n2 x n2 matrix whose lower
 * triangle is packed in tri.  The part right of the diagonal is read
 * column-wise, nr contiguous values at a time. */
static void unpack_rows(const double *tri, size_t n2, size_t r0, size_t nr,
                        double *rows)
{
    for (size_t b = 0; b < nr; ++b) {
        size_t r = r0 + b;
        memcpy(rows + b * n2, tri + r * (r + 1) / 2, (r + 1) * sizeof *rows);
    }
    for (size_t c = r0 + 1; c < n2; ++c) {
        const double *src = tri + c * (c + 1) / 2;
        size_t rend = r0 + nr < c ? r0 + nr : c;
        for (size_t r = r0; r < rend; ++r) rows[(r - r0) * n2 + c] = src[r];
    }
}

/* out[b][pq] = sum_kl c_kp c_lq rows[b][kl] for nr rows of pair vectors
 * (n functions) to pair vectors of m orbitals (packed p >= q). */
static void transform_rows(int n, int m, const double *c, const double *rows,
                           size_t nr, double *full, double *t, double *bm,
                           double *out)
{
    size_t n2 = (size_t)n * (n + 1) / 2, m2 = (size_t)m * (m + 1) / 2;
    for (size_t b = 0; b < nr; ++b) {
        const double *v = rows + b * n2;
        double *a = full + b * (size_t)n * n;
        for (int k = 0; k < n; ++k)
            for (int l = 0; l <= k; ++l)
                a[(size_t)k * n + l] = a[(size_t)l * n + k] = v[LAM_PAIR(k, l)];
    }
    /* one product for the whole batch: (nr n) x n times n x m */
    mat_nn((int)(nr * n), m, n, full, c, t);
    for (size_t b = 0; b < nr; ++b) {
        mat_tn(m, m, n, c, t + b * (size_t)n * m, bm);
        double *o = out + b * m2;
        for (int p = 0; p < m; ++p)
            for (int q = 0; q <= p; ++q) o[LAM_PAIR(p, q)] = bm[(size_t)p * m + q];
    }
}

#define TRANSFORM_BATCH 32

/* Four-index transformation (ij|kl) -> (pq|rs) in two half steps of
 * batched BLAS products; the result is made exactly symmetric under
 * pq <-> rs and written with all 8 copies into sf->g. */
static void transform_eri(const lam_scf *s, const double *c, int m, lam_spinfree *sf)
{
    int n = s->nbf;
    size_t n2 = (size_t)n * (n + 1) / 2, m2 = (size_t)m * (m + 1) / 2;
    size_t nb = TRANSFORM_BATCH;
    double *half = lam_malloc(lam_mul_size(n2, m2) * sizeof *half); /* [pq][ij] */
    double *rows = lam_malloc(lam_mul_size(nb, n2 > m2 ? n2 : m2) * sizeof *rows);
    double *full = lam_malloc(lam_mul_size(nb * n, (size_t)n) * sizeof *full);
    double *t = lam_malloc(lam_mul_size(nb * n, (size_t)m) * sizeof *t);
    double *bm = lam_malloc(lam_mul_size((size_t)m, (size_t)m) * sizeof *bm);
    double *out = lam_malloc(lam_mul_size(nb, m2) * sizeof *out);
    for (size_t r0 = 0; r0 < n2; r0 += nb) {
        if (r0 % (64 * nb) == 0)
            lam_progress("MO transformation: first half, AO pair %zu of %zu", r0 + 1, n2);
        size_t nr = r0 + nb <= n2 ? nb : n2 - r0;
        unpack_rows(s->eri, n2, r0, nr, rows);
        transform_rows(n, m, c, rows, nr, full, t, bm, out);
        for (size_t pq = 0; pq < m2; ++pq)
            for (size_t b = 0; b < nr; ++b) half[pq * n2 + r0 + b] = out[b * m2 + pq];
    }
    double *mo = lam_malloc(lam_mul_size(m2, m2) * sizeof *mo); /* [pq][rs] */
    for (size_t r0 = 0; r0 < m2; r0 += nb) {
        if (r0 % (64 * nb) == 0)
            lam_progress("MO transformation: second half, MO pair %zu of %zu", r0 + 1, m2);
        size_t nr = r0 + nb <= m2 ? nb : m2 - r0;
        transform_rows(n, m, c, half + r0 * n2, nr, full, t, bm, mo + r0 * m2);
    }
    free(half);
    /* (pq|rs) and (rs|pq) came from different products: average them, in
     * tiles so that the transposed reads stay in cache */
    for (size_t a0 = 0; a0 < m2; a0 += 64)
        for (size_t b0 = 0; b0 <= a0; b0 += 64)
            for (size_t a = a0; a < a0 + 64 && a < m2; ++a)
                for (size_t b = b0; b < b0 + 64 && b < a; ++b) {
                    double v = 0.5 * (mo[a * m2 + b] + mo[b * m2 + a]);
                    mo[a * m2 + b] = mo[b * m2 + a] = v;
                }
    for (int p = 0; p < m; ++p)
        for (int q = 0; q < m; ++q) {
            const double *row = mo + LAM_PAIR(p, q) * m2;
            double *g = &LAM_G(sf, p, q, 0, 0);
            for (int r = 0; r < m; ++r)
                for (int u = 0; u < m; ++u) g[(size_t)r * m + u] = row[LAM_PAIR(r, u)];
        }
    LAM_FREE_ALL(mo, rows, full, t, bm, out);
}

lam_spinfree *lam_scf_mo_hamiltonian(const lam_scf *s, int frozen, int active)
{
    int n = s->nbf;
    size_t nn = (size_t)n * n, n2 = (size_t)n * (n + 1) / 2;
    /* frozen-core density and its Fock matrix in the AO basis */
    double *ccore = orbital_block(s, 0, frozen);
    double *d = lam_calloc(nn, sizeof *d), *f = lam_malloc(nn * sizeof *f);
    double *pd = lam_malloc(n2 * sizeof *pd), *pg = lam_malloc(n2 * sizeof *pg);
    density(n, frozen, frozen, 2.0, ccore, d);
    fock_build(n, s->pk, s->hcore, d, f, pd, pg);
    double e_core = 0.5 * (trace_product(nn, d, s->hcore) + trace_product(nn, d, f));

    lam_spinfree *sf = lam_spinfree_new(active);
    sf->e0 = s->e_nuc + e_core;
    sf->electrons = 2 * (s->nocc - frozen);
    sf->ms2 = 0;
    double *c = orbital_block(s, frozen, active);
    double *t = lam_malloc(lam_mul_size((size_t)n, (size_t)active) * sizeof *t);
    congruence(n, active, f, c, t, sf->h);
    /* exact symmetry, whatever the rounding of the two products */
    for (int p = 0; p < active; ++p)
        for (int q = 0; q < p; ++q) LAM_H(sf, q, p) = LAM_H(sf, p, q);
    transform_eri(s, c, active, sf);
    LAM_FREE_ALL(ccore, d, f, pd, pg, c, t);
    return sf;
}

double lam_scf_integral_scale(const lam_spinfree *sf)
{
    size_t n = (size_t)sf->n, n2 = n * n;
    double mx = 0.0;
    for (size_t i = 0; i < n2; ++i) mx = fmax(mx, fabs(sf->h[i]));
    for (size_t i = 0; i < n2 * n2; ++i) mx = fmax(mx, fabs(sf->g[i]));
    return mx;
}

/* One unique integral (and its copies) against the cutoff. */
static void clean_one(double *v, double cutoff, lam_scf_cleaning *c)
{
    if (*v == 0.0) return;
    if (fabs(*v) > cutoff) {
        ++c->kept;
        return;
    }
    ++c->dropped;
    c->largest_dropped = fmax(c->largest_dropped, fabs(*v));
    *v = 0.0;
}

void lam_scf_clean_integrals(lam_spinfree *sf, double cutoff, lam_scf_cleaning *out)
{
    int n = sf->n;
    memset(out, 0, sizeof *out);
    out->scale = lam_scf_integral_scale(sf);
    out->cutoff = cutoff;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q) {
            double v = LAM_H(sf, p, q);
            clean_one(&v, cutoff, out);
            LAM_H(sf, p, q) = LAM_H(sf, q, p) = v;
        }
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q)
            for (int r = 0; r <= p; ++r)
                for (int t = 0; t <= (r == p ? q : r); ++t) {
                    double v = LAM_G(sf, p, q, r, t);
                    clean_one(&v, cutoff, out);
                    if (v != 0.0) continue;
                    int a[8][4] = {{p, q, r, t}, {q, p, r, t}, {p, q, t, r}, {q, p, t, r},
                                   {r, t, p, q}, {t, r, p, q}, {r, t, q, p}, {t, r, q, p}};
                    for (int k = 0; k < 8; ++k) LAM_G(sf, a[k][0], a[k][1], a[k][2], a[k][3]) = 0.0;
                }
}
