/* test_fermion.c - normal ordering against the canonical anticommutation
 * relations {a_i, a+_j} = delta_ij, {a_i, a_j} = 0 (common practice), and
 * Majorana expansions against n_j = (1 + i g_2j g_2j+1)/2. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "fermion.h"
#include "tap.h"
#include "util.h"

/* Parse "c o o o; c o o" into an operator (modes < 8). */
static void build(lam_fermion_op *op, const char *text)
{
    lam_fermion_init(op, 8);
    char *copy = lam_strdup(text), *save = NULL;
    for (char *term = strtok_r(copy, ";", &save); term; term = strtok_r(NULL, ";", &save)) {
        int32_t ops[LAM_MAX_LADDER];
        int k = 0;
        char *save2 = NULL, *tok = strtok_r(term, " ", &save2);
        double c = atof(tok);
        while ((tok = strtok_r(NULL, " ", &save2)) != NULL) {
            int mode = atoi(tok);
            ops[k++] = strchr(tok, '+') ? LAM_CREATE(mode) : LAM_ANNIHILATE(mode);
        }
        lam_fermion_add(op, c, ops, k, 0);
    }
    free(copy);
}

/* The normal-ordered operator as "c|ops" strings sorted, for comparison. */
static int same_operator(const lam_fermion_op *op, const char *want_text)
{
    lam_fermion_op want, want_no;
    build(&want, want_text);
    lam_fermion_normal_order(&want, &want_no); /* the expected form is written normal-ordered */
    int ok = want_no.count == op->count;
    for (size_t t = 0; ok && t < op->count; ++t) {
        int found = 0;
        for (size_t u = 0; u < want_no.count; ++u) {
            size_t k = lam_fermion_length(op, t);
            if (k != lam_fermion_length(&want_no, u)) continue;
            if (k && memcmp(op->ops + op->first[t], want_no.ops + want_no.first[u],
                            k * sizeof(int32_t)) != 0)
                continue;
            found = fabs(op->coef[t] - want_no.coef[u]) <= 1e-15;
        }
        ok = found;
    }
    lam_fermion_free(&want);
    lam_fermion_free(&want_no);
    return ok;
}

static void check_order(const char *in, const char *want, const char *name)
{
    lam_fermion_op op, out;
    build(&op, in);
    lam_fermion_normal_order(&op, &out);
    int ok = same_operator(&out, want);
    tap_ok(ok, name);
    if (!ok) {
        printf("#   got:");
        for (size_t t = 0; t < out.count; ++t) {
            printf(" %g", out.coef[t]);
            for (size_t i = out.first[t]; i < out.first[t + 1]; ++i)
                printf(" %d%c", (int)LAM_LADDER_MODE(out.ops[i]),
                       LAM_LADDER_IS_CREATOR(out.ops[i]) ? '+' : '-');
            printf(";");
        }
        printf("\n");
    }
    lam_fermion_free(&op);
    lam_fermion_free(&out);
}

static void test_normal_order(void)
{
    /* the canonical form itself: creators descending, annihilators ascending */
    lam_fermion_op op, out;
    build(&op, "2 0+ 1+ 1- 0-");
    lam_fermion_normal_order(&op, &out);
    int ok = out.count == 1 && out.coef[0] == 2.0 && out.ops[0] == LAM_CREATE(1) &&
             out.ops[1] == LAM_CREATE(0) && out.ops[2] == LAM_ANNIHILATE(0) &&
             out.ops[3] == LAM_ANNIHILATE(1);
    tap_ok(ok, "a+_0 a+_1 a_1 a_0 = a+_1 a+_0 a_0 a_1 (two swaps, sign +)");
    lam_fermion_free(&op);
    lam_fermion_free(&out);

    check_order("1 1- 1+", "1; -1 1+ 1-", "a_1 a+_1 = 1 - a+_1 a_1");
    check_order("1 0- 1+", "-1 1+ 0-", "a_0 a+_1 = -a+_1 a_0");
    check_order("1 1+ 1+", "", "a+_1 a+_1 = 0");
    check_order("1 2- 0+ 2-", "", "a_2 a+_0 a_2 = 0 (repeated annihilator)");
    check_order("1 0+ 1+", "-1 1+ 0+", "a+_0 a+_1 = -a+_1 a+_0");
    check_order("1 2- 2+; 1 2+ 2-", "1", "{a_2, a+_2} = 1");
    check_order("1 0- 1+; 1 1+ 0-", "", "{a_0, a+_1} = 0");
    check_order("1 0+ 0- 0+ 0-", "1 0+ 0-", "n_0 n_0 = n_0");
    check_order("1 0- 1- 1+ 0+", "1; -1 0+ 0-; -1 1+ 1-; 1 1+ 0+ 0- 1-",
                "a_0 a_1 a+_1 a+_0 = (1 - n_0)(1 - n_1)");
    check_order("0.5 3+ 1-; 0.25 3+ 1-; -0.75 3+ 1-", "", "repeated terms merge to zero");
}

/* Find monomial idx (ascending) in the set; returns its index or -1. */
static long find_monomial(const lam_majorana_set *m, const int *idx, int k)
{
    for (size_t t = 0; t < m->count; ++t) {
        const uint64_t *row = m->bits + t * (size_t)m->nwords;
        uint64_t want[4] = {0};
        for (int i = 0; i < k; ++i) want[idx[i] / 64] |= (uint64_t)1 << (idx[i] % 64);
        int same = 1;
        for (int w = 0; w < m->nwords; ++w)
            if (row[w] != want[w]) same = 0;
        if (same) return (long)t;
    }
    return -1;
}

static void test_majorana(void)
{
    lam_fermion_op op;
    lam_majorana_set m;
    /* n_1 = (1 + i g_2 g_3)/2 */
    build(&op, "1 1+ 1-");
    op.nmodes = 2;
    lam_majorana_from_fermion(&op, &m);
    int pair[2] = {2, 3};
    long t = find_monomial(&m, pair, 2);
    int ok = t >= 0 && fabs(m.re[t]) < 1e-16 && fabs(m.im[t] - 0.5) < 1e-16 &&
             fabs(lam_majorana_constant(&m) - 0.5) < 1e-16;
    tap_ok(ok, "n_1 = 1/2 + (i/2) g_2 g_3");
    lam_majorana_require_hermitian(&m, "test");
    tap_near(lam_majorana_lambda(&m), 0.5, 1e-16, "one-norm of n_1 without the identity is 1/2");
    lam_majorana_free(&m);
    lam_fermion_free(&op);

    /* g_1 g_0 = -g_0 g_1 and g_0 g_0 = 1 */
    lam_majorana_init(&m, 1);
    int rev[2] = {1, 0}, sq[2] = {0, 0}, fwd[2] = {0, 1};
    lam_majorana_add(&m, rev, 2, 0.0, 1.0, 0);
    lam_majorana_add(&m, sq, 2, 3.0, 0.0, 0);
    t = find_monomial(&m, fwd, 2);
    ok = t >= 0 && m.im[t] == -1.0 && fabs(lam_majorana_constant(&m) - 3.0) < 1e-16;
    tap_ok(ok, "Majorana products: g_1 g_0 = -g_0 g_1, g_0 g_0 = 1");
    lam_majorana_free(&m);

    /* a+_0 a_1 + a+_1 a_0 = (i/2)(g_0 g_3 + g_2 g_1)... as monomials:
     * the hopping term has one-norm 1 (two strings of 1/2). */
    build(&op, "1 0+ 1-; 1 1+ 0-");
    op.nmodes = 2;
    lam_majorana_from_fermion(&op, &m);
    lam_majorana_require_hermitian(&m, "test");
    tap_near(lam_majorana_lambda(&m), 1.0, 1e-15,
             "hopping a+_0 a_1 + h.c.: one-norm 1 (XX + YY over 2 under JW, common practice)");
    lam_majorana_free(&m);
    lam_fermion_free(&op);
}

/* A random spinfree operator with the 8-fold symmetry: the closed-form
 * expansion equals the general one through ladder terms, and its one-norm
 * is lam_spinfree_lambda. */
static void test_spinfree_paths(void)
{
    int n = 3;
    lam_spinfree *sf = lam_spinfree_new(n);
    unsigned seed = 7;
    sf->e0 = 0.3;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q) {
            seed = seed * 1103515245u + 12345u;
            LAM_H(sf, p, q) = LAM_H(sf, q, p) = (double)(seed >> 16) / 65536.0 - 0.5;
        }
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s) {
                    if (LAM_G(sf, p, q, r, s) != 0.0) continue;
                    seed = seed * 1103515245u + 12345u;
                    double v = (double)(seed >> 16) / 65536.0 - 0.5;
                    int perm[8][4] = {{p, q, r, s}, {q, p, r, s}, {p, q, s, r}, {q, p, s, r},
                                      {r, s, p, q}, {s, r, p, q}, {r, s, q, p}, {s, r, q, p}};
                    for (int k = 0; k < 8; ++k)
                        LAM_G(sf, perm[k][0], perm[k][1], perm[k][2], perm[k][3]) = v;
                }
    for (int order = 0; order < 2; ++order) {
        lam_majorana_set fast, slow;
        lam_fermion_op op;
        lam_majorana_from_spinfree(sf, (lam_spin_order)order, &fast);
        lam_fermion_from_spinfree(sf, (lam_spin_order)order, &op);
        lam_majorana_from_fermion(&op, &slow);
        lam_majorana_require_hermitian(&slow, "test");
        int ok = 1;
        size_t nonzero = 0;
        for (size_t t = 0; t < slow.count; ++t) {
            double v = lam_majorana_value(&slow, t);
            if (fabs(v) < 1e-14) continue;
            ++nonzero;
            int idx[64], k = 0;
            for (int j = 0; j < 4 * n; ++j)
                if ((slow.bits[t * slow.nwords + j / 64] >> (j % 64)) & 1) idx[k++] = j;
            long u = find_monomial(&fast, idx, k);
            if (u < 0 || fabs(lam_majorana_value(&fast, (size_t)u) - v) > 1e-14) ok = 0;
        }
        size_t fast_nonzero = 0;
        for (size_t t = 0; t < fast.count; ++t)
            if (fabs(lam_majorana_value(&fast, t)) >= 1e-14) ++fast_nonzero;
        tap_ok(ok && nonzero == fast_nonzero,
               order ? "closed-form Majorana expansion = general expansion (blocked)"
                     : "closed-form Majorana expansion = general expansion (interleaved)");
        tap_near(lam_majorana_lambda(&slow), lam_spinfree_lambda(sf),
                 1e-13 * lam_spinfree_lambda(sf),
                 "general expansion one-norm = closed form (Koridon et al. 2021, from memory)");
        tap_near(lam_majorana_constant(&slow), lam_spinfree_constant(sf), 1e-14,
                 "general expansion identity = lam_spinfree_constant");
        lam_majorana_free(&fast);
        lam_majorana_free(&slow);
        lam_fermion_free(&op);
    }
    lam_spinfree_free(sf);
}

static void test_spin_order(void)
{
    tap_ok(lam_spin_mode(LAM_SPIN_INTERLEAVED, 5, 3, 1) == 7 &&
               lam_spin_mode(LAM_SPIN_BLOCKED, 5, 3, 1) == 8 &&
               lam_spin_mode(LAM_SPIN_BLOCKED, 5, 3, 0) == 3,
           "spin orders: interleaved 2p+s, blocked s*n+p");
    lam_fermion_op op;
    build(&op, "1 3+ 2-");
    op.nmodes = 4; /* 2 orbitals */
    lam_fermion_relabel_spin(&op, LAM_SPIN_INTERLEAVED, LAM_SPIN_BLOCKED);
    tap_ok(op.ops[0] == LAM_CREATE(3) && op.ops[1] == LAM_ANNIHILATE(1),
           "relabel interleaved -> blocked: mode 3 (1 down) -> 3, mode 2 (1 up) -> 1");
    lam_fermion_free(&op);
}

int main(void)
{
    lam_set_program("test_fermion");
    test_normal_order();
    test_majorana();
    test_spinfree_paths();
    test_spin_order();
    return tap_done();
}
