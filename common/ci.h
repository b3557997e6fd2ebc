/* ci.h - determinant configuration interaction over alpha and beta strings.
 *
 * A sector (Na, Nb) of a spin-free operator on n orbitals is spanned by the
 * determinants |Ia Ib> = (alpha creators of string Ia, ascending orbital)
 * (beta creators of string Ib, ascending) |vac>; determinant Ia*nb + Ib
 * in a vector of length C(n,Na) C(n,Nb).  Strings are numbered in
 * increasing integer order of their occupation bit masks.
 *
 * The sigma vector H c uses the string-driven scheme with one-particle
 * coupling coefficients (Knowles and Handy, Chem. Phys. Lett. 111, 315
 * (1984); citation from memory): with
 *     H = e0 + sum_pq k_pq E_pq + 1/2 sum_pqrs (pq|rs) E_pq E_rs,
 *     k_pq = h_pq - 1/2 sum_r (pr|rq),
 * D[I][pq] = (E_pq c)_I is gathered from the single-excitation lists of
 * the strings, G = D (pq|rs) is one dense matrix product (cblas_dgemm), and
 * G is scattered back through the same lists.  Determinants are processed
 * in batches of alpha strings so that D and G stay within a fixed scratch
 * size.  When the integrals have the 8-fold symmetry of real orbitals the
 * pairs pq and qp are merged, which cuts the matrix product about 3.4 fold.
 */
#ifndef LAM_CI_H
#define LAM_CI_H

#include <stddef.h>
#include <stdint.h>

#include "eigen.h"
#include "spinfree.h"
#include "util.h"

/* E_ab |I> = sign |target> for one spin. */
typedef struct {
    uint32_t target;
    uint8_t a, b;
    int8_t sign;
} lam_ci_exc;

typedef struct {
    int n, k;
    size_t count;        /* C(n, k) */
    uint64_t *mask;      /* occupation of each string */
    int nexc;            /* excitations per string: k + k (n - k) */
    lam_ci_exc *exc;     /* count * nexc entries, string by string */
} lam_ci_strings;

/* Binomial coefficient, or SIZE_MAX when it does not fit. */
size_t lam_ci_binomial(int n, int k);
/* Dimension C(n,na) C(n,nb) of a sector, SIZE_MAX on overflow. */
size_t lam_ci_sector_dim(int n, int na, int nb);
/* Index of a string among all strings with the same n and popcount. */
size_t lam_ci_string_rank(uint64_t mask);

/* Strings of k electrons in n <= 64 orbitals, with their excitation lists,
 * into *out (fails with code 70 when the count exceeds 2^32 - 1). */
int lam_ci_strings_new(int n, int k, lam_ci_strings **out, lam_error *err);
void lam_ci_strings_free(lam_ci_strings *s);

/* sf itself when exactly Hermitian; else (H + H^T)/2 in place of sf
 * (freed).  The caller has validated sf (lam_spinfree_validate), so what
 * this removes is an asymmetry within the policy's tolerance. */
lam_spinfree *lam_ci_hermitian(lam_spinfree *sf);

/* The operator prepared for sigma: pair numbering, (pq|rs) as a pair by
 * pair matrix, k_pq. */
typedef struct {
    int n;
    int packed;      /* pq and qp merged (8-fold symmetric integrals) */
    int npair;
    int *pair;       /* n*n: pair index of (p,q) */
    double e0;
    double *kvec;    /* npair: k_pq */
    double *gmat;    /* npair*npair: (pq|rs) */
} lam_ci_ham;

/* sf must be Hermitian (the caller checks). */
lam_ci_ham *lam_ci_ham_new(const lam_spinfree *sf);
void lam_ci_ham_free(lam_ci_ham *h);

/* A beta excitation E_ab|from> = sign |to>, listed by orbital pair. */
typedef struct {
    uint32_t from, to;
    int32_t sign;
} lam_ci_move;

/* One (Na, Nb) sector with its strings and scratch space. */
typedef struct {
    int n, na, nb;
    size_t dim;
    lam_ci_strings *alpha, *beta; /* beta may equal alpha */
    size_t *move_first;           /* n*n+1: moves of pair (a,b) */
    lam_ci_move *moves;
    size_t batch;                 /* alpha strings per batch */
    double *d, *gbuf;             /* batch * nb * npair each */
} lam_ci_sector;

/* Bytes a sector's strings and scratch take beyond its vectors (for a
 * scratch limit of scratch_bytes). */
size_t lam_ci_sector_bytes(int n, int na, int nb, int npair,
                           size_t scratch_bytes);
int lam_ci_sector_new(const lam_ci_ham *h, int na, int nb,
                      size_t scratch_bytes, lam_ci_sector **out, lam_error *err);
void lam_ci_sector_free(lam_ci_sector *s);

/* Threads for the gather and scatter loops of sigma (default 1; the
 * matrix product uses OpenBLAS's own threads). */
void lam_ci_set_threads(int threads);

/* sigma = H c on the sector. */
void lam_ci_sigma(const lam_ci_ham *h, lam_ci_sector *s, const double *c,
                  double *sigma);
/* lam_ci_sigma as the eigensolver's operator (lam_eigen_apply): ctx is a
 * lam_ci_sigma_ctx. */
typedef struct {
    const lam_ci_ham *h;
    lam_ci_sector *s;
} lam_ci_sigma_ctx;
void lam_ci_sigma_apply(void *ctx, const double *x, double *y);
/* Diagonal elements <I|H|I>. */
void lam_ci_diagonal(const lam_ci_ham *h, const lam_ci_sector *s,
                     double *diag);

/* <D1|H|D2> between two determinants given by occupation masks (n <= 64),
 * by the Slater-Condon rules; works for any n without strings. */
double lam_ci_det_element(const lam_spinfree *sf, uint64_t a1, uint64_t b1,
                          uint64_t a2, uint64_t b2);
/* <D|H|D>. */
double lam_ci_det_energy(const lam_spinfree *sf, uint64_t a, uint64_t b);


/* ---- both ends of a sector ---- */

/* Scratch size lam_ci_solve uses for a sector of dimension dim. */
size_t lam_ci_scratch_bytes(size_t dim);
/* Bytes an exact solve of sector (na, nb) allocates (strings, scratch,
 * diagonal, solver vectors); SIZE_MAX when it cannot be addressed. */
size_t lam_ci_solve_bytes(const lam_ci_ham *h, int na, int nb,
                          const lam_eigen_problem *tmpl);
/* Lowest (lo, when non-NULL) and highest (hi) eigenvalue of the sector;
 * tmpl gives tol, subspace and limits (dim, apply, diag, highest are set
 * here). */
int lam_ci_solve(const lam_ci_ham *h, int na, int nb,
                 const lam_eigen_problem *tmpl, lam_eigen_result *lo,
                 lam_eigen_result *hi, lam_error *err);

#endif
