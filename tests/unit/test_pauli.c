/* test_pauli.c - Pauli strings against explicit 2x2 matrices, the hash
 * merge against a brute-force count, and the pauli stream reader. */
#include <complex.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "norm.h"
#include "pauli.h"
#include "stream.h"
#include "tap.h"
#include "testops.h"
#include "util.h"

typedef double complex cplx;

/* The Pauli matrices (fact of the trade, common practice):
 * I, X = [[0,1],[1,0]], Y = [[0,-i],[i,0]], Z = [[1,0],[0,-1]];
 * index 0..3 in the order I X Y Z. */

static void pauli_matrix(int which, cplx m[4])
{
    static const cplx mats[4][4] = {
        {1, 0, 0, 1}, {0, 1, 1, 0}, {0, -I, I, 0}, {1, 0, 0, -1}};
    memcpy(m, mats[which], sizeof mats[which]);
}

static void matmul2(const cplx a[4], const cplx b[4], cplx c[4])
{
    c[0] = a[0] * b[0] + a[1] * b[2];
    c[1] = a[0] * b[1] + a[1] * b[3];
    c[2] = a[2] * b[0] + a[3] * b[2];
    c[3] = a[2] * b[1] + a[3] * b[3];
}

static int matrix_close(const cplx a[4], const cplx b[4])
{
    for (int i = 0; i < 4; ++i)
        if (cabs(a[i] - b[i]) > 1e-15) return 0;
    return 1;
}

/* Bits of a single-qubit Pauli in the symplectic form used by pauli.h. */
static void letter_bits(int which, uint64_t *x, uint64_t *z)
{
    *x = (which == 1 || which == 2);
    *z = (which == 2 || which == 3);
}

static int which_of_bits(uint64_t x, uint64_t z) { return x ? (z ? 2 : 1) : (z ? 3 : 0); }

static const cplx ipow[4] = {1, I, -1, -I};

/* Every product of two single-qubit Paulis: P1 P2 = i^k P3 as matrices. */
static void test_single_qubit_table(void)
{
    int good_mul = 1, good_anti = 1;
    for (int a = 0; a < 4; ++a)
        for (int b = 0; b < 4; ++b) {
            uint64_t x1, z1, x2, z2, xo, zo;
            letter_bits(a, &x1, &z1);
            letter_bits(b, &x2, &z2);
            int k = lam_pauli_mul(1, &x1, &z1, &x2, &z2, &xo, &zo);
            cplx ma[4], mb[4], mo[4], prod[4], want[4], rev[4];
            pauli_matrix(a, ma);
            pauli_matrix(b, mb);
            pauli_matrix(which_of_bits(xo, zo), mo);
            matmul2(ma, mb, prod);
            for (int i = 0; i < 4; ++i) want[i] = ipow[k] * mo[i];
            if (!matrix_close(prod, want)) good_mul = 0;
            /* anticommute when AB = -BA */
            matmul2(mb, ma, rev);
            for (int i = 0; i < 4; ++i) rev[i] = -rev[i];
            int anti = matrix_close(prod, rev);
            if (anti != lam_pauli_anticommute(1, &x1, &z1, &x2, &z2)) good_anti = 0;
        }
    tap_ok(good_mul, "single-qubit products and phases match the 2x2 matrix products");
    tap_ok(good_anti, "single-qubit anticommutation matches AB = -BA of the matrices");
}

static unsigned long long rng_state = 0x1234567887654321ULL;
static uint64_t rnd(void) { return test_xorshift(&rng_state); }

/* Many-qubit strings across word boundaries: the phase of the product is
 * the product of the single-qubit matrix phases; anticommutation is the
 * parity of anticommuting positions. */
static void test_many_qubits(void)
{
    enum { NQ = 150, NW = 3 };
    int good_mul = 1, good_anti = 1;
    for (int trial = 0; trial < 200; ++trial) {
        uint64_t x1[NW] = {0}, z1[NW] = {0}, x2[NW] = {0}, z2[NW] = {0};
        int l1[NQ], l2[NQ];
        for (int q = 0; q < NQ; ++q) {
            l1[q] = (int)(rnd() % 4);
            l2[q] = (int)(rnd() % 4);
            uint64_t a, b;
            letter_bits(l1[q], &a, &b);
            x1[q / 64] |= a << (q % 64);
            z1[q / 64] |= b << (q % 64);
            letter_bits(l2[q], &a, &b);
            x2[q / 64] |= a << (q % 64);
            z2[q / 64] |= b << (q % 64);
        }
        cplx phase = 1;
        int anti = 0, want_letters[NQ];
        for (int q = 0; q < NQ; ++q) {
            cplx ma[4], mb[4], prod[4], rev[4];
            pauli_matrix(l1[q], ma);
            pauli_matrix(l2[q], mb);
            matmul2(ma, mb, prod);
            matmul2(mb, ma, rev);
            /* find the Pauli P and phase with prod = phase * P */
            for (int w = 0; w < 4; ++w) {
                cplx mw[4];
                pauli_matrix(w, mw);
                for (int k = 0; k < 4; ++k) {
                    cplx t[4];
                    for (int i = 0; i < 4; ++i) t[i] = ipow[k] * mw[i];
                    if (matrix_close(prod, t)) {
                        phase *= ipow[k];
                        want_letters[q] = w;
                    }
                }
            }
            for (int i = 0; i < 4; ++i) rev[i] = -rev[i];
            if (l1[q] && l2[q] && matrix_close(prod, rev)) anti ^= 1;
        }
        uint64_t xo[NW], zo[NW];
        int k = lam_pauli_mul(NW, x1, z1, x2, z2, xo, zo);
        if (cabs(ipow[k] - phase) > 1e-12) good_mul = 0;
        for (int q = 0; q < NQ; ++q)
            if (which_of_bits((xo[q / 64] >> (q % 64)) & 1, (zo[q / 64] >> (q % 64)) & 1) !=
                want_letters[q])
                good_mul = 0;
        if (lam_pauli_anticommute(NW, x1, z1, x2, z2) != anti) good_anti = 0;
        /* the output may alias an input */
        uint64_t xa[NW], za[NW];
        memcpy(xa, x1, sizeof xa);
        memcpy(za, z1, sizeof za);
        if (lam_pauli_mul(NW, xa, za, x2, z2, xa, za) != k ||
            memcmp(xa, xo, sizeof xa) || memcmp(za, zo, sizeof za))
            good_mul = 0;
    }
    tap_ok(good_mul, "150-qubit products: phase and string equal the per-qubit matrix products");
    tap_ok(good_anti, "150-qubit anticommutation equals the parity of anticommuting positions");
}

static void test_format_weight(void)
{
    uint64_t x[2] = {0}, z[2] = {0};
    char buf[64];
    tap_ok(lam_pauli_format(buf, sizeof buf, 2, x, z) == 0 && buf[0] == '\0',
           "the identity formats as the empty string");
    tap_ok(lam_pauli_is_identity(2, x, z), "all-zero bits are the identity");
    x[0] = 1;                   /* X on 0 */
    x[0] |= 2, z[0] |= 2;       /* Y on 1 */
    z[0] |= 32;                 /* Z on 5 */
    z[1] |= (uint64_t)1 << 6;   /* Z on 70 */
    int len = lam_pauli_format(buf, sizeof buf, 2, x, z);
    tap_ok(len > 0 && strcmp(buf, "x:0 y:1 z:5,70") == 0, "format writes x:0 y:1 z:5,70");
    tap_ok(lam_pauli_weight(2, x, z) == 4, "weight counts the non-identity factors");
    tap_ok(lam_pauli_format(buf, 8, 2, x, z) == -1, "format reports a buffer too small");
    /* runs: two or more consecutive qubits as a-b, also across a word */
    memset(x, 0, sizeof x);
    memset(z, 0, sizeof z);
    z[0] = 0x7 | 0x18 << 4;         /* 0-2, 7-8 */
    z[0] |= (uint64_t)0xf << 60;    /* 60-63 ... */
    z[1] = 0x3;                     /* ... 64-65 */
    x[1] = (uint64_t)1 << 10;       /* 74 */
    len = lam_pauli_format(buf, sizeof buf, 2, x, z);
    tap_ok(len > 0 && strcmp(buf, "x:74 z:0-2,7-8,60-65") == 0,
           "maximal runs written a-b, a run of two too, across words");
}

/* Brute force: the merged set of a random list equals a quadratic count. */
static void test_merge(void)
{
    lam_pauli_set s;
    lam_pauli_set_init(&s, 100);
    enum { N = 3000 };
    static uint64_t keys[N][4];
    static double coefs[N];
    for (int t = 0; t < N; ++t) {
        uint64_t pick = rnd() % 300; /* many repeats */
        uint64_t b[4] = {pick * 0x9e3779b97f4a7c15ULL, (pick & 7) ? 0 : pick,
                         (pick * 31) & 0xff, pick % 3 ? 0 : (uint64_t)1 << 35};
        b[1] &= 0xfffffffffULL; /* 100 qubits: 36 bits in the second word */
        b[3] &= 0xfffffffffULL;
        memcpy(keys[t], b, sizeof b);
        coefs[t] = (double)(rnd() % 1000) / 64.0 - 7.0;
        uint64_t x[2] = {b[0], b[1]}, z[2] = {b[2], b[3]};
        lam_pauli_set_add(&s, x, z, coefs[t], -1);
    }
    lam_pauli_set_merge(&s, 0);
    int good = 1;
    size_t distinct = 0;
    for (int t = 0; t < N; ++t) {
        int first = 1;
        double sum = 0;
        for (int u = 0; u < N; ++u) {
            if (memcmp(keys[u], keys[t], sizeof keys[t]) != 0) continue;
            if (u < t) first = 0;
            sum += coefs[u];
        }
        if (!first) continue;
        /* order of first appearance */
        const uint64_t *x = lam_pauli_x(&s, distinct), *z = lam_pauli_z(&s, distinct);
        if (x[0] != keys[t][0] || x[1] != keys[t][1] || z[0] != keys[t][2] ||
            z[1] != keys[t][3] || fabs(s.coef[distinct] - sum) > 1e-9)
            good = 0;
        ++distinct;
    }
    tap_ok(good && distinct == s.count, "hash merge equals a brute-force sum, in first-seen order");
    lam_pauli_set_free(&s);

    /* exact cancellation and group labels */
    lam_pauli_set_init(&s, 3);
    uint64_t x = 1, z = 0, x2 = 0, z2 = 4;
    lam_pauli_set_add(&s, &x, &z, 0.5, -1);
    lam_pauli_set_add(&s, &x2, &z2, 0.25, 3);
    lam_pauli_set_add(&s, &x, &z, -0.5, -1);
    lam_pauli_set_add(&s, &x2, &z2, 0.25, 4);
    lam_pauli_set_add(&s, &x2, &z2, 0.5, 3);
    lam_pauli_set_merge(&s, 0);
    tap_ok(s.count == 3 && s.coef[0] == 0.0 && s.coef[1] == 0.75 && s.group[1] == 3 &&
               s.group[2] == 4,
           "merge keeps (string, group) pairs apart and keeps zeros unless asked");
    lam_pauli_set_merge(&s, 1);
    tap_ok(s.count == 2 && s.coef[0] == 0.75 && s.group[0] == 3 && s.group[1] == 4,
           "merge drops exact zeros on request");
    lam_pauli_set_free(&s);
}

static void test_grow_and_norms(void)
{
    lam_pauli_set s;
    lam_pauli_set_init(&s, 10);
    uint64_t x = 5, z = 4, zero = 0;
    lam_pauli_set_add(&s, &x, &z, -2.0, -1);
    lam_pauli_set_add(&s, &zero, &zero, 1.5, -1);
    lam_pauli_set_grow_qubits(&s, 200);
    int good = s.nqubits == 200 && s.nwords == 4 && lam_pauli_x(&s, 0)[0] == 5 &&
               lam_pauli_z(&s, 0)[0] == 4 && lam_pauli_x(&s, 0)[3] == 0 &&
               lam_pauli_z(&s, 0)[1] == 0;
    tap_ok(good, "growing the qubit count keeps the strings");
    tap_near(lam_pauli_set_lambda(&s), 2.0, 0, "lambda excludes the identity");
    tap_near(lam_pauli_set_constant(&s), 1.5, 0, "constant is the identity coefficient");
    lam_pauli_set_free(&s);
}

static void test_read(void)
{
    const char *text = "#% lamina-op 2\n#% kind: pauli\n#% qubits: 6\n"
                       "-0.5\n0.25 x:0 y:1 z:5\n1e-3 z:2 @7\n#% end\n";
    char *path = test_write_temp(text);
    lam_reader *r = test_open_reader(path);
    lam_pauli_set s;
    lam_error e;
    tap_ok(test_read_ok(lam_pauli_read(r, &s, &e), &e), "reader: a good stream reads");
    lam_reader_close(r);
    char buf[64];
    int ok = s.count == 3 && s.nqubits == 6 && s.coef[0] == -0.5 &&
             lam_pauli_is_identity(s.nwords, lam_pauli_x(&s, 0), lam_pauli_z(&s, 0)) &&
             lam_pauli_format(buf, sizeof buf, s.nwords, lam_pauli_x(&s, 1),
                              lam_pauli_z(&s, 1)) > 0 &&
             strcmp(buf, "x:0 y:1 z:5") == 0 && s.group && s.group[1] == -1 && s.group[2] == 7;
    tap_ok(ok, "reader: identity, a string, a group label, qubits from the header");
    lam_pauli_set_free(&s);
    unlink(path);

    /* without a header: the qubit count grows to the largest index */
    path = test_write_temp("1 x:3\n2 z:130 x:1\n");
    r = test_open_reader(path);
    lam_reader_force_kind(r, LAM_KIND_PAULI);
    tap_ok(test_read_ok(lam_pauli_read(r, &s, &e), &e), "reader: a headerless stream reads");
    lam_reader_close(r);
    ok = s.count == 2 && s.nqubits == 131 && s.nwords == 3 && lam_pauli_x(&s, 0)[0] == 8 &&
         lam_pauli_z(&s, 1)[2] == 4 && lam_pauli_x(&s, 1)[0] == 2;
    tap_ok(ok, "reader without header grows to the largest index + 1");
    lam_pauli_set_free(&s);
    unlink(path);
}

/* Bits of the terms read from text (pauli kind forced). */
static void read_text(const char *text, lam_pauli_set *s)
{
    char *path = test_write_temp(text);
    lam_reader *r = test_open_reader(path);
    lam_reader_force_kind(r, LAM_KIND_PAULI);
    lam_error e;
    tap_ok(test_read_ok(lam_pauli_read(r, s, &e), &e), "reader: the text reads");
    lam_reader_close(r);
    unlink(path);
}

static int same_bits(const lam_pauli_set *a, const lam_pauli_set *b)
{
    return a->count == b->count && a->nwords == b->nwords &&
           memcmp(a->bits, b->bits, a->count * 2 * (size_t)a->nwords * sizeof(uint64_t)) == 0;
}

/* Random strings on 150 qubits written canonically, and respelled in
 * other valid ways (letters z, y, x; indices descending one by one; a
 * range cut in two), read back to the same bits. */
static void test_spellings(void)
{
    enum { N = 400, NQ = 150 };
    lam_pauli_set want;
    lam_pauli_set_init(&want, NQ);
    size_t cap = (size_t)N * 2000;
    char *canon = lam_malloc(cap), *other = lam_malloc(cap);
    size_t lc = 0, lo = 0;
    for (int t = 0; t < N; ++t) {
        uint64_t x[3] = {0}, z[3] = {0};
        int w = 1 + (int)(rnd() % 40);
        for (int k = 0; k < w; ++k) {
            int q = (int)(rnd() % NQ), letter = 1 + (int)(rnd() % 3);
            if (k > 0 && rnd() % 2) q = (q + 1) % NQ; /* make runs likely */
            uint64_t bit = (uint64_t)1 << (q % 64);
            if ((x[q / 64] | z[q / 64]) & bit) continue;
            if (letter != 3) x[q / 64] |= bit;
            if (letter != 1) z[q / 64] |= bit;
        }
        lam_pauli_set_add(&want, x, z, 1.0, -1);
        char buf[1024];
        lam_pauli_format(buf, sizeof buf, 3, x, z);
        lc += (size_t)snprintf(canon + lc, cap - lc, "1 %s\n", buf);
        lo += (size_t)snprintf(other + lo, cap - lo, "1");
        for (const char *l = "zyx"; *l; ++l) {
            int first = 1;
            for (int q = NQ - 1; q >= 0; --q) {
                uint64_t bit = (uint64_t)1 << (q % 64), xb = x[q / 64] & bit, zb = z[q / 64] & bit;
                char mine = xb && zb ? 'y' : xb ? 'x' : zb ? 'z' : 0;
                if (mine != *l) continue;
                lo += (size_t)snprintf(other + lo, cap - lo, "%s%d", first ? (char[]){' ', *l, ':', 0} : ",", q);
                first = 0;
            }
        }
        lo += (size_t)snprintf(other + lo, cap - lo, "\n");
    }
    lam_pauli_set a, b;
    read_text(canon, &a);
    read_text(other, &b);
    lam_pauli_set_grow_qubits(&a, NQ);
    lam_pauli_set_grow_qubits(&b, NQ);
    tap_ok(same_bits(&a, &want), "canonical spelling reads back to the same strings");
    tap_ok(same_bits(&b, &want), "any valid spelling (letter order, index order) reads the same");
    lam_pauli_set_free(&a);
    lam_pauli_set_free(&b);
    read_text("1 z:3-4,0 x:1,2-2\n1 z:0,3,4 x:1-2\n", &a);
    tap_ok(a.count == 2 && memcmp(lam_pauli_x(&a, 0), lam_pauli_x(&a, 1),
                                  2 * sizeof(uint64_t)) == 0,
           "ranges that are not maximal and a one-qubit range a-a");
    lam_pauli_set_free(&a);
    lam_pauli_set_free(&want);
    free(canon);
    free(other);
}

/* Version 1 is still read, with or without its header line. */
static void test_read_v1(void)
{
    lam_pauli_set a, b, c;
    read_text("#% lamina-op 1\n#% kind: pauli\n0.5 X0 Z1 Z2 X3 Y5 @4\n-1\n#% end\n", &a);
    read_text("0.5 X0 Z1 Z2 X3 Y5 @4\n-1\n", &b);
    read_text("0.5 x:0,3 y:5 z:1-2 @4\n-1\n", &c);
    tap_ok(same_bits(&a, &c) && a.group && a.group[0] == 4 && a.coef[1] == -1,
           "a version-1 stream reads as its version-2 spelling");
    tap_ok(same_bits(&b, &c), "headerless version-1 terms read too");
    lam_pauli_set_free(&a);
    lam_pauli_set_free(&b);
    lam_pauli_set_free(&c);
}

/* Merging while reading (batches of 4096 lines, the string width growing
 * on the way) gives what reading and then merging gives. */
static void test_read_merged(void)
{
    static char path[64];
    strcpy(path, "/tmp/test_pauli_XXXXXX");
    int fd = mkstemp(path);
    FILE *f = fdopen(fd, "w");
    for (int t = 0; t < 12000; ++t) {
        int top = t < 5000 ? 30 : 150; /* one word, then three */
        int q1 = (int)(rnd() % (uint64_t)top), q2 = (q1 + 1 + (int)(rnd() % 7)) % top;
        if (q2 == q1) q2 = (q1 + 1) % top;
        fprintf(f, "%g x:%d z:%d%s\n", (double)(rnd() % 8) - 3.5, q1, q2, t % 5 ? "" : " @2");
    }
    fclose(f);
    lam_pauli_set a, b;
    lam_reader *r = test_open_reader(path);
    lam_reader_force_kind(r, LAM_KIND_PAULI);
    lam_error e;
    int read = test_read_ok(lam_pauli_read(r, &a, &e), &e);
    lam_reader_close(r);
    lam_pauli_set_merge(&a, 1);
    r = test_open_reader(path);
    lam_reader_force_kind(r, LAM_KIND_PAULI);
    read = test_read_ok(lam_pauli_read_merged(r, &b, 1, &e), &e) && read;
    lam_reader_close(r);
    int ok = read && a.count == b.count && a.nqubits == b.nqubits && a.nwords == b.nwords &&
             memcmp(a.bits, b.bits, a.count * 2 * (size_t)a.nwords * sizeof(uint64_t)) == 0 &&
             memcmp(a.coef, b.coef, a.count * sizeof(double)) == 0 &&
             memcmp(a.group, b.group, a.count * sizeof(int32_t)) == 0;
    tap_ok(ok, "reading merged = reading then merging (same terms, order, sums)");
    lam_pauli_set_free(&a);
    lam_pauli_set_free(&b);
    unlink(path);
}

int main(void)
{
    lam_set_program("test_pauli");
    test_single_qubit_table();
    test_many_qubits();
    test_format_weight();
    test_spellings();
    test_read_v1();
    test_merge();
    test_grow_and_norms();
    test_read();
    test_read_merged();
    return tap_done();
}
