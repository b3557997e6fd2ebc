/* Unit tests of common/spinfree.c: closed-form constant and one-norm. */
#include <stdlib.h>

#include "fcidump.h"
#include "norm.h"
#include "spinfree.h"
#include "tap.h"

/* H2/STO-3G at R = 0.7414 Angstrom: the integrals Debian's psi4 writes
 * (scf_type pk), copied into this test so that it runs without psi4. */
static lam_spinfree *h2(void)
{
    lam_spinfree *sf = lam_spinfree_new(2);
    sf->e0 = 0.713753993350418225461;
    LAM_H(sf, 0, 0) = -1.25246357335330449345;
    LAM_H(sf, 1, 1) = -0.475948715440681735522;
    double g0000 = 0.674488766289997432324, g0011 = 0.663468096362711978742;
    double g0101 = 0.181288808231110654123, g1111 = 0.697393767358556182501;
    LAM_G(sf, 0, 0, 0, 0) = g0000;
    LAM_G(sf, 1, 1, 1, 1) = g1111;
    LAM_G(sf, 0, 0, 1, 1) = LAM_G(sf, 1, 1, 0, 0) = g0011;
    LAM_G(sf, 0, 1, 0, 1) = LAM_G(sf, 1, 0, 1, 0) = g0101;
    LAM_G(sf, 0, 1, 1, 0) = LAM_G(sf, 1, 0, 0, 1) = g0101;
    return sf;
}

int main(void)
{
    lam_spinfree *sf = h2();
    /* By hand from these integrals with the closed form derived in
     * tests/data/h2-sto3g-r1.4bohr-jw.op: identity -0.0988639698, one-norm
     * without the identity 1.8850504923 (10 decimals). */
    tap_near(lam_spinfree_constant(sf), -0.0988639698, 1e-9, "H2 identity coefficient (by hand)");
    tap_near(lam_spinfree_lambda(sf), 1.8850504923, 1e-9, "H2 closed-form one-norm (by hand)");
    tap_near(lam_spinfree_real_symmetry_error(sf), 0, 0, "H2 integrals have the 8-fold symmetry");
    tap_near(lam_spinfree_hermiticity_error(sf), 0, 0, "H2 operator is Hermitian");

    /* Sum of |JW coefficients| by hand from the published table:
     * 2*0.1711977490 + 2*0.2227859302 + 0.1686221916 + 0.1743484418
     * + 2*0.1205448220 + 2*0.1658670241 + 4*0.0453222021. */
    double by_hand = 2 * 0.1711977490 + 2 * 0.2227859302 + 0.1686221916 + 0.1743484418 +
                     2 * 0.1205448220 + 2 * 0.1658670241 + 4 * 0.0453222021;
    tap_near(lam_spinfree_lambda(sf), by_hand, 1e-9, "closed form equals the sum over the published table");

    /* add_two keeps (pq|rs) = (rs|pq): a lone term c e_0110 becomes
     * g_0110 = g_1001 = c. */
    lam_spinfree *t = lam_spinfree_new(2);
    lam_spinfree_add_two(t, 0, 1, 1, 0, 0.25);
    tap_near(LAM_G(t, 0, 1, 1, 0), 0.25, 0, "add_two sets (01|10)");
    tap_near(LAM_G(t, 1, 0, 0, 1), 0.25, 0, "add_two sets the partner (10|01)");
    lam_spinfree_add_two(t, 0, 0, 0, 0, 0.5);
    tap_near(LAM_G(t, 0, 0, 0, 0), 1.0, 0, "diagonal pair doubles: 1/2 (00|00) e_0000 = 0.5 e_0000");
    tap_ok(lam_spinfree_real_symmetry_error(t) > 0.2, "a lone (01|10) breaks the real symmetry");

    lam_spinfree *c = lam_spinfree_clone(sf);
    tap_near(lam_spinfree_lambda(c), lam_spinfree_lambda(sf), 0, "clone keeps the operator");
    tap_ok(lam_spinfree_term_count(sf) == 9, "H2 writes 9 spinfree terms (constant, 2 one-body, 6 two-body)");
    lam_spinfree_free(c);
    lam_spinfree_free(t);
    lam_spinfree_free(sf);
    return tap_done();
}
