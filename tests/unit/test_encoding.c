/* test_encoding.c - encoding matrices and the Majorana images they give. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "encoding.h"
#include "tap.h"
#include "norm.h"
#include "util.h"

static const lam_encoding_kind kinds[3] = {LAM_ENC_JORDAN_WIGNER, LAM_ENC_BRAVYI_KITAEV,
                                           LAM_ENC_PARITY};

/* A * A^-1 = I over GF(2), for every mode count up to 70 (across a word). */
static void test_inverse(void)
{
    int ok = 1;
    for (int k = 0; k < 3; ++k)
        for (int n = 1; n <= 70; ++n) {
            lam_encoding *e = lam_encoding_new(kinds[k], n);
            for (int i = 0; i < n && ok; ++i)
                for (int j = 0; j < n; ++j) {
                    int sum = 0;
                    for (int l = 0; l < n; ++l)
                        sum ^= lam_encoding_bit(e, e->matrix, i, l) &
                               lam_encoding_bit(e, e->inverse, l, j);
                    if (sum != (i == j)) ok = 0;
                }
            lam_encoding_free(e);
        }
    tap_ok(ok, "A A^-1 = I for Jordan-Wigner, Bravyi-Kitaev and parity, 1..70 modes");
}

/* The Bravyi-Kitaev matrix for 8 modes (Seeley, Richard and Love, J. Chem.
 * Phys. 137, 224109 (2012), from memory): qubit j stores the parity of a
 * Fenwick-tree block of modes. */
static void test_bk_matrix(void)
{
    static const char *want[8] = {"10000000", "11000000", "00100000", "11110000",
                                  "00001000", "00001100", "00000010", "11111111"};
    lam_encoding *e = lam_encoding_new(LAM_ENC_BRAVYI_KITAEV, 8);
    int ok = 1;
    for (int i = 0; i < 8; ++i)
        for (int j = 0; j < 8; ++j)
            if (lam_encoding_bit(e, e->matrix, i, j) != want[i][j] - '0') ok = 0;
    tap_ok(ok, "Bravyi-Kitaev matrix for 8 modes is the published one");
    lam_encoding_free(e);
    /* parity: qubit j holds n_0 + ... + n_j */
    e = lam_encoding_new(LAM_ENC_PARITY, 5);
    ok = 1;
    for (int i = 0; i < 5; ++i)
        for (int j = 0; j < 5; ++j)
            if (lam_encoding_bit(e, e->matrix, i, j) != (j <= i)) ok = 0;
    tap_ok(ok, "parity matrix is lower triangular ones");
    lam_encoding_free(e);
}

/* Majorana operators must anticommute pairwise and square to I: images
 * i^k P with P a Pauli string square to (-1)^k, so k must be even, and
 * distinct images must anticommute as Pauli strings. */
static void test_images(void)
{
    for (int k = 0; k < 3; ++k) {
        int ok_square = 1, ok_anti = 1;
        for (int n = 1; n <= 67; n += 11) {
            lam_encoding *e = lam_encoding_new(kinds[k], n);
            int nw = e->nwords;
            for (int a = 0; a < 2 * n; ++a) {
                if (e->phase[a] % 2) ok_square = 0;
                uint64_t *x = lam_malloc(2 * (size_t)nw * sizeof(uint64_t)), *z = x + nw;
                int ph = lam_pauli_mul(nw, lam_encoding_image_x(e, a), lam_encoding_image_z(e, a),
                                       lam_encoding_image_x(e, a), lam_encoding_image_z(e, a),
                                       x, z);
                if (ph != 0 || !lam_pauli_is_identity(nw, x, z)) ok_square = 0;
                free(x);
                for (int b = a + 1; b < 2 * n; ++b)
                    if (!lam_pauli_anticommute(nw, lam_encoding_image_x(e, a),
                                               lam_encoding_image_z(e, a),
                                               lam_encoding_image_x(e, b),
                                               lam_encoding_image_z(e, b)))
                        ok_anti = 0;
            }
            lam_encoding_free(e);
        }
        char name[128];
        snprintf(name, sizeof name, "%s: Majorana images square to I", lam_encoding_name(kinds[k]));
        tap_ok(ok_square, name);
        snprintf(name, sizeof name, "%s: Majorana images anticommute pairwise",
                 lam_encoding_name(kinds[k]));
        tap_ok(ok_anti, name);
    }
}

/* Jordan-Wigner (textbook, common practice): g_2j = Z_0..Z_j-1 X_j and
 * g_2j+1 = Z_0..Z_j-1 Y_j, with phase 1. */
static void test_jw_images(void)
{
    lam_encoding *e = lam_encoding_new(LAM_ENC_JORDAN_WIGNER, 4);
    char buf[64];
    lam_pauli_format(buf, sizeof buf, e->nwords, lam_encoding_image_x(e, 6),
                     lam_encoding_image_z(e, 6));
    int ok = strcmp(buf, "x:3 z:0-2") == 0 && e->phase[6] == 0;
    lam_pauli_format(buf, sizeof buf, e->nwords, lam_encoding_image_x(e, 7),
                     lam_encoding_image_z(e, 7));
    ok = ok && strcmp(buf, "y:3 z:0-2") == 0 && e->phase[7] == 0;
    tap_ok(ok, "Jordan-Wigner: g_6 = x:3 z:0-2, g_7 = y:3 z:0-2");
    lam_encoding_free(e);
}

/* n_j = (1 + i g_2j g_2j+1)/2 maps to (1 - Z_j)/2 under Jordan-Wigner
 * (occupied = |1>, common practice). */
static void test_number_operator(void)
{
    lam_majorana_set m;
    lam_majorana_init(&m, 3);
    int idx[2] = {4, 5};
    lam_majorana_add(&m, NULL, 0, 0.5, 0.0, 0);
    lam_majorana_add(&m, idx, 2, 0.0, 0.5, 0);
    lam_error err;
    tap_ok(lam_majorana_require_hermitian(&m, "test", &err) == 0, "n_2 - 1/2 is Hermitian");
    for (int k = 0; k < 3; ++k) {
        lam_encoding *e = lam_encoding_new(kinds[k], 3);
        lam_pauli_set s;
        lam_encoding_map_majorana(e, &m, &s);
        char buf[64];
        lam_pauli_format(buf, sizeof buf, s.nwords, lam_pauli_x(&s, 1), lam_pauli_z(&s, 1));
        int ok = s.count == 2 && s.coef[0] == 0.5 && s.coef[1] == -0.5;
        if (kinds[k] == LAM_ENC_JORDAN_WIGNER) ok = ok && strcmp(buf, "z:2") == 0;
        /* parity: n_2 = (1 - Z_1 Z_2)/2; Bravyi-Kitaev, 3 modes: qubit 2 holds n_2 alone */
        if (kinds[k] == LAM_ENC_PARITY) ok = ok && strcmp(buf, "z:1-2") == 0;
        if (kinds[k] == LAM_ENC_BRAVYI_KITAEV) ok = ok && strcmp(buf, "z:2") == 0;
        char name[96];
        snprintf(name, sizeof name, "%s: n_2 = 1/2 - 1/2 %s", lam_encoding_name(kinds[k]), buf);
        tap_ok(ok, name);
        tap_near(lam_pauli_set_lambda(&s), lam_majorana_lambda(&m), 0,
                 "the Pauli one-norm equals the Majorana one-norm (fact of the trade)");
        lam_pauli_set_free(&s);
        lam_encoding_free(e);
    }
    lam_majorana_free(&m);
}

int main(void)
{
    lam_set_program("test_encoding");
    test_inverse();
    test_bk_matrix();
    test_images();
    test_jw_images();
    test_number_operator();
    lam_encoding_kind k;
    tap_ok(lam_encoding_parse("bravyi-kitaev", &k) == 0 && k == LAM_ENC_BRAVYI_KITAEV &&
               lam_encoding_parse("bk", &k) != 0,
           "encoding names parse, abbreviations do not");
    return tap_done();
}
