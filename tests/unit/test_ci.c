/* test_ci.c - the string-driven sigma against a brute-force reference.
 *
 * The reference applies H = e0 + sum h_pq a+_ps a_qs + 1/2 sum (pq|rs)
 * a+_ps a+_rt a_st a_qs literally, operator by operator, to occupation bit
 * strings of 2n spin orbitals (interleaved order, its own sign bookkeeping)
 * and diagonalizes each (Na, Nb) block with LAPACK.  The sector spectra must
 * agree (they do not depend on the determinant phase convention), which is
 * the definition of second quantization (common practice), not a number
 * recalled from anywhere.
 */
#include <lapacke.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "ci.h"
#include "eigen.h"
#include "tap.h"

/* A library failure here is a failed test, with its message. */
static lam_error lib_err;
static void must(int rc)
{
    if (rc) tap_ok(0, lib_err.msg);
}

static double frand(uint64_t *s)
{
    *s = *s * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*s >> 11) / 9007199254740992.0 - 0.5;
}

/* symmetric 8-fold (real orbitals) when full8, else only the Hermitian
 * symmetries (pq|rs) = (rs|pq) = (qp|sr). */
static lam_spinfree *random_operator(int n, int full8, uint64_t seed)
{
    lam_spinfree *sf = lam_spinfree_new(n);
    sf->e0 = 0.37;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q) LAM_H(sf, p, q) = LAM_H(sf, q, p) = frand(&seed);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s) {
                    if (LAM_G(sf, p, q, r, s) != 0) continue;
                    double v = frand(&seed);
                    LAM_G(sf, p, q, r, s) = LAM_G(sf, r, s, p, q) = v;
                    LAM_G(sf, q, p, s, r) = LAM_G(sf, s, r, q, p) = v;
                    if (full8)
                        LAM_G(sf, q, p, r, s) = LAM_G(sf, r, s, q, p) = LAM_G(sf, p, q, s, r) =
                            LAM_G(sf, s, r, p, q) = v;
                }
    return sf;
}

/* ---- brute force over spin orbitals j = 2p + spin ---- */
static int apply_op(uint64_t *st, int j, int create)
{
    if (((*st >> j) & 1) == (uint64_t)create) return 0;
    int sign = __builtin_popcountll(*st & ((1ULL << j) - 1)) & 1 ? -1 : 1;
    *st ^= 1ULL << j;
    return sign;
}

static void brute_matrix(const lam_spinfree *sf, int na, int nb, int *dim_out, double **mat)
{
    int n = sf->n, nso = 2 * n;
    int *idx = malloc(sizeof(int) << nso), dim = 0;
    uint64_t *states = malloc(sizeof(uint64_t) << nso);
    for (uint64_t st = 0; st < (1ULL << nso); ++st) {
        int a = 0, b = 0;
        for (int p = 0; p < n; ++p) {
            a += (int)(st >> (2 * p) & 1);
            b += (int)(st >> (2 * p + 1) & 1);
        }
        idx[st] = -1;
        if (a == na && b == nb) {
            idx[st] = dim;
            states[dim++] = st;
        }
    }
    double *m = calloc((size_t)dim * dim, sizeof(double));
    for (int c = 0; c < dim; ++c) {
        m[c * dim + c] += sf->e0;
        for (int p = 0; p < n; ++p)
            for (int q = 0; q < n; ++q)
                for (int s = 0; s < 2; ++s) {
                    uint64_t st = states[c];
                    int sg = apply_op(&st, 2 * q + s, 0);
                    if (sg) sg *= apply_op(&st, 2 * p + s, 1);
                    if (sg) m[idx[st] * dim + c] += sg * LAM_H(sf, p, q);
                }
        for (int p = 0; p < n; ++p)
            for (int q = 0; q < n; ++q)
                for (int r = 0; r < n; ++r)
                    for (int s = 0; s < n; ++s)
                        for (int sp = 0; sp < 2; ++sp)
                            for (int tp = 0; tp < 2; ++tp) {
                                uint64_t st = states[c];
                                int sg = apply_op(&st, 2 * q + sp, 0);
                                if (sg) sg *= apply_op(&st, 2 * s + tp, 0);
                                if (sg) sg *= apply_op(&st, 2 * r + tp, 1);
                                if (sg) sg *= apply_op(&st, 2 * p + sp, 1);
                                if (sg) m[idx[st] * dim + c] += 0.5 * sg * LAM_G(sf, p, q, r, s);
                            }
    }
    free(idx);
    free(states);
    *dim_out = dim;
    *mat = m;
}


static void check_sector(const lam_spinfree *sf, int na, int nb, size_t scratch, const char *what)
{
    char name[200];
    int dim;
    double *ref;
    brute_matrix(sf, na, nb, &dim, &ref);
    double *wref = malloc(sizeof(double) * (size_t)dim);
    must(lam_eigen_dense(dim, ref, wref, &lib_err));

    lam_ci_ham *h = lam_ci_ham_new(sf);
    lam_ci_sector *s;
    must(lam_ci_sector_new(h, na, nb, scratch, &s, &lib_err));
    double *a = malloc(sizeof(double) * (size_t)dim * dim), *e = calloc((size_t)dim, sizeof(double));
    double *col = malloc(sizeof(double) * (size_t)dim), *diag = malloc(sizeof(double) * (size_t)dim);
    double sym = 0, diagerr = 0, scerr = 0;
    lam_ci_diagonal(h, s, diag);
    for (int j = 0; j < dim; ++j) {
        e[j] = 1;
        lam_ci_sigma(h, s, e, col);
        e[j] = 0;
        for (int i = 0; i < dim; ++i) a[i * dim + j] = col[i];
    }
    for (int i = 0; i < dim; ++i) {
        diagerr = fmax(diagerr, fabs(diag[i] - a[i * dim + i]));
        for (int j = 0; j < dim; ++j) {
            sym = fmax(sym, fabs(a[i * dim + j] - a[j * dim + i]));
            /* Slater-Condon against the sigma columns (same convention) */
            size_t nbs = s->beta->count;
            double sc = lam_ci_det_element(sf, s->alpha->mask[i / nbs], s->beta->mask[i % nbs],
                                           s->alpha->mask[j / nbs], s->beta->mask[j % nbs]);
            scerr = fmax(scerr, fabs(sc - a[i * dim + j]));
        }
    }
    double *w = malloc(sizeof(double) * (size_t)dim);
    must(lam_eigen_dense(dim, a, w, &lib_err));
    double err = 0;
    for (int i = 0; i < dim; ++i) err = fmax(err, fabs(w[i] - wref[i]));
    snprintf(name, sizeof name, "%s (%d,%d): dimension %d", what, na, nb, dim);
    tap_ok((size_t)dim == s->dim, name);
    snprintf(name, sizeof name, "%s (%d,%d): sigma matrix symmetric", what, na, nb);
    tap_near(sym, 0, 1e-12, name);
    snprintf(name, sizeof name, "%s (%d,%d): diagonal", what, na, nb);
    tap_near(diagerr, 0, 1e-12, name);
    snprintf(name, sizeof name, "%s (%d,%d): Slater-Condon elements", what, na, nb);
    tap_near(scerr, 0, 1e-12, name);
    snprintf(name, sizeof name, "%s (%d,%d): spectrum equals the brute-force one", what, na, nb);
    tap_near(err, 0, 1e-11, name);
    lam_ci_sector_free(s);
    lam_ci_ham_free(h);
    free(ref);
    free(wref);
    free(a);
    free(e);
    free(col);
    free(diag);
    free(w);
}

int main(void)
{
    tap_ok(lam_ci_binomial(12, 6) == 924, "C(12,6) = 924");
    tap_ok(lam_ci_sector_dim(12, 6, 6) == 853776, "12 orbitals, 6+6 electrons: 853776 determinants");
    tap_ok(lam_ci_string_rank(0x7) == 0 && lam_ci_string_rank(0xB) == 1 &&
               lam_ci_string_rank(0xD) == 2 && lam_ci_string_rank(0xE) == 3,
           "colexicographic ranks of 3-bit strings");
    lam_ci_strings *st;
    must(lam_ci_strings_new(6, 3, &st, &lib_err));
    int ranks_ok = 1;
    for (size_t i = 0; i < st->count; ++i) ranks_ok &= lam_ci_string_rank(st->mask[i]) == i;
    tap_ok(ranks_ok && st->count == 20, "string enumeration matches ranks");
    lam_ci_strings_free(st);

    lam_spinfree *sf8 = random_operator(4, 1, 11);
    lam_spinfree *sfh = random_operator(4, 0, 12);
    int sectors[][2] = {{0, 0}, {1, 0}, {0, 1}, {1, 1}, {2, 1}, {1, 2}, {2, 2}, {3, 1}, {4, 3}, {4, 4}};
    for (size_t i = 0; i < sizeof sectors / sizeof sectors[0]; ++i) {
        check_sector(sf8, sectors[i][0], sectors[i][1], 1 << 20, "8-fold");
        check_sector(sfh, sectors[i][0], sectors[i][1], 1 << 20, "hermitian only");
    }
    /* batches of one alpha string exercise the batching */
    check_sector(sf8, 2, 2, 1, "8-fold, tiny scratch");
    check_sector(sfh, 3, 2, 1, "hermitian only, tiny scratch");

    /* Davidson on the CI operator against the dense answer */
    lam_spinfree *big = random_operator(6, 1, 13);
    lam_ci_ham *h = lam_ci_ham_new(big);
    lam_ci_sector *s;
    must(lam_ci_sector_new(h, 3, 3, 1 << 16, &s, &lib_err));
    double *diag = malloc(s->dim * sizeof(double));
    lam_ci_diagonal(h, s, diag);
    lam_ci_sigma_ctx ctx = {h, s};
    for (int hi = 0; hi < 2; ++hi) {
        lam_eigen_problem p;
        lam_eigen_problem_init(&p, s->dim, lam_ci_sigma_apply, &ctx, diag);
        p.highest = hi;
        p.dense_limit = 1000;
        lam_eigen_result dense, dav;
        must(lam_eigen_extreme(&p, &dense, NULL, &lib_err));
        p.dense_limit = 0;
        must(lam_eigen_extreme(&p, &dav, NULL, &lib_err));
        /* stopped at |r| <= 1e-9 or once |r|^2/gap <= 1e-11 */
        tap_ok(dav.converged && dav.residual <= 1e-5, hi ? "Davidson top converged" : "Davidson bottom converged");
        tap_near(dav.value, dense.value, 1e-10, hi ? "Davidson top = dense top" : "Davidson bottom = dense bottom");
    }
    free(diag);
    lam_ci_sector_free(s);
    lam_ci_ham_free(h);
    lam_spinfree_free(big);
    lam_spinfree_free(sf8);
    lam_spinfree_free(sfh);
    return tap_done();
}
