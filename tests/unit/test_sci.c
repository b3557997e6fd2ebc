/* test_sci.c - selected CI against the exact solve of the same sector.
 *
 * References: the determinant CI of ci.c (its Slater-Condon elements and
 * its exact Davidson solve), an independent implementation in this
 * project; and the variational principle (common practice): a Rayleigh
 * quotient is never below the lowest eigenvalue nor above the highest.
 */
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "ci.h"
#include "eigen.h"
#include "sci.h"
#include "tap.h"

/* A library failure here is a failed test, with its message. */
static lam_error lib_err;
static void must(int rc)
{
    if (rc) tap_ok(0, lib_err.msg);
}
#include "util.h"

static double frand(uint64_t *s)
{
    *s = *s * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*s >> 11) / 9007199254740992.0 - 0.5;
}

/* Real orbitals: 8-fold symmetric integrals, diagonal-dominant one-body
 * part so that the spectrum has a structure like a molecule's. */
static lam_spinfree *random_operator(int n, uint64_t seed)
{
    lam_spinfree *sf = lam_spinfree_new(n);
    sf->e0 = 0.5;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q) LAM_H(sf, p, q) = LAM_H(sf, q, p) = (p == q ? p - 2.0 : 0.3 * frand(&seed));
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s <= r; ++s) {
                    if (p * n + q < r * n + s) continue;
                    double v = 0.2 * frand(&seed) + (p == q && r == s ? 0.4 : 0);
                    int idx[8][4] = {{p, q, r, s}, {q, p, r, s}, {p, q, s, r}, {q, p, s, r},
                                     {r, s, p, q}, {s, r, p, q}, {r, s, q, p}, {s, r, q, p}};
                    for (int k = 0; k < 8; ++k) LAM_G(sf, idx[k][0], idx[k][1], idx[k][2], idx[k][3]) = v;
                }
    return sf;
}

static uint64_t random_string(int n, int k, uint64_t *seed)
{
    uint64_t m = 0;
    while (__builtin_popcountll(m) < k) m |= 1ULL << (int)((frand(seed) + 0.5) * n);
    return m;
}

static void check_elements(const lam_spinfree *sf, int na, int nb)
{
    uint64_t seed = 99;
    double err = 0;
    int tested = 0;
    uint64_t a0 = random_string(sf->n, na, &seed), b0 = random_string(sf->n, nb, &seed);
    for (int t = 0; t < 4000; ++t) {
        /* near neighbours of (a0, b0) so that singles and doubles occur */
        uint64_t a = a0, b = b0;
        for (int k = 0; k < 1 + t % 3; ++k) {
            uint64_t *m = (frand(&seed) > 0) ? &a : &b;
            if (!*m || *m == (sf->n == 64 ? ~0ULL : (1ULL << sf->n) - 1)) continue;
            int i, j;
            do i = (int)((frand(&seed) + 0.5) * sf->n); while (!(*m >> i & 1));
            do j = (int)((frand(&seed) + 0.5) * sf->n); while (*m >> j & 1);
            *m ^= 1ULL << i | 1ULL << j;
        }
        double want = lam_ci_det_element(sf, a, b, a0, b0);
        double got = lam_sci_element(sf, a, b, a0, b0);
        err = fmax(err, fabs(want - got));
        ++tested;
    }
    char name[128];
    snprintf(name, sizeof name, "(%d,%d): %d Slater-Condon elements agree with ci.c", na, nb, tested);
    tap_near(err, 0, 1e-12, name);
}

static void exact_ends(const lam_spinfree *sf, int na, int nb, double *lo, double *hi)
{
    lam_ci_ham *h = lam_ci_ham_new(sf);
    lam_eigen_problem t;
    lam_eigen_defaults(&t);
    t.max_iter = 1000;
    lam_eigen_result r1, r2;
    must(lam_ci_solve(h, na, nb, &t, &r1, &r2, &lib_err));
    *lo = r1.value;
    *hi = r2.value;
    lam_ci_ham_free(h);
}

/* A solve that must succeed: say why when it does not. */
static void sci_ok(int rc)
{
    if (rc) tap_ok(0, "lam_sci_solve failed unexpectedly");
}

static void check_solve(const lam_spinfree *sf, int na, int nb)
{
    lam_error err;
    double elo, ehi;
    exact_ends(sf, na, nb, &elo, &ehi);
    size_t full = lam_ci_sector_dim(sf->n, na, nb);
    lam_sci_options o;
    lam_sci_defaults(&o);
    o.max_bytes = 1e9;
    o.energy_tol = 0;
    lam_sci_result lo, hi;
    char name[160];
    /* the whole sector: the exact values */
    o.max_dets = full;
    sci_ok(lam_sci_solve(sf, na, nb, &o, &lo, &err));
    o.highest = 1;
    sci_ok(lam_sci_solve(sf, na, nb, &o, &hi, &err));
    snprintf(name, sizeof name, "(%d,%d): whole sector (%zu), lowest exact", na, nb, full);
    tap_near(lo.value, elo, 1e-8, name);
    snprintf(name, sizeof name, "(%d,%d): whole sector, highest exact", na, nb);
    tap_near(hi.value, ehi, 1e-8, name);
    snprintf(name, sizeof name, "(%d,%d): the whole sector is reported complete", na, nb);
    tap_ok(lo.stop == LAM_SCI_COMPLETE && hi.stop == LAM_SCI_COMPLETE && lo.dets == full, name);
    /* a fifth of it: inner bounds */
    for (size_t budget = full / 20 + 1; budget <= full / 5 + 1; budget *= 2) {
        o.max_dets = budget;
        o.highest = 0;
        sci_ok(lam_sci_solve(sf, na, nb, &o, &lo, &err));
        o.highest = 1;
        sci_ok(lam_sci_solve(sf, na, nb, &o, &hi, &err));
        snprintf(name, sizeof name, "(%d,%d) budget %zu: lowest %.8f >= exact %.8f", na, nb, budget, lo.value, elo);
        tap_ok(lo.value >= elo - 1e-10 && lo.dets <= budget, name);
        snprintf(name, sizeof name, "(%d,%d) budget %zu: highest %.8f <= exact %.8f", na, nb, budget, hi.value, ehi);
        tap_ok(hi.value <= ehi + 1e-10 && hi.dets <= budget, name);
        snprintf(name, sizeof name, "(%d,%d) budget %zu: half range within 5%% of exact", na, nb, budget);
        tap_ok((hi.value - lo.value) >= 0.95 * (ehi - elo), name);
    }
}

static void check_start(const lam_spinfree *sf, int na, int nb)
{
    uint64_t a, b, al, bl;
    lam_sci_start(sf, na, nb, 1, &a, &b);
    lam_sci_start(sf, na, nb, 0, &al, &bl);
    double e = lam_ci_det_energy(sf, a, b), el = lam_ci_det_energy(sf, al, bl);
    int local = 1;
    for (int s = 0; s < 2; ++s) {
        uint64_t m = s ? b : a;
        for (int i = 0; i < sf->n; ++i)
            for (int j = 0; j < sf->n; ++j) {
                if (!(m >> i & 1) || (m >> j & 1)) continue;
                uint64_t t = m ^ 1ULL << i ^ 1ULL << j;
                double et = s ? lam_ci_det_energy(sf, a, t) : lam_ci_det_energy(sf, t, b);
                if (et > e + 1e-12) local = 0;
            }
    }
    char name[128];
    snprintf(name, sizeof name, "(%d,%d): highest start determinant: no single replacement raises it", na, nb);
    tap_ok(local && __builtin_popcountll(a) == na && __builtin_popcountll(b) == nb, name);
    snprintf(name, sizeof name, "(%d,%d): highest start above the lowest start", na, nb);
    tap_ok(e > el, name);
}

int main(void)
{
    lam_spinfree *sf = random_operator(8, 7);
    check_elements(sf, 4, 4);
    check_elements(sf, 3, 1);
    check_elements(sf, 8, 2);
    check_start(sf, 4, 4);
    check_start(sf, 5, 2);
    check_solve(sf, 4, 4);
    check_solve(sf, 4, 3);
    check_solve(sf, 1, 0);
    lam_spinfree_free(sf);
    return tap_done();
}
