/* test_fermion.c - normal ordering against the canonical anticommutation
 * relations {a_i, a+_j} = delta_ij, {a_i, a_j} = 0 (common practice), and
 * Majorana expansions against n_j = (1 + i g_2j g_2j+1)/2. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "fermion.h"
#include "tap.h"
#include "norm.h"
#include "util.h"

/* Parse "c o o o; c o o" into an operator (modes < 8); o is a+N for the
 * creator or aN for the annihilator of mode N, in any order. */
/* The error of the calls expected to succeed (printed when one fails). */
static lam_error test_err;

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
            int creator = tok[1] == '+';
            int mode = atoi(tok + 1 + creator);
            ops[k++] = creator ? LAM_CREATE(mode) : LAM_ANNIHILATE(mode);
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
                printf(" a%s%d", LAM_LADDER_IS_CREATOR(out.ops[i]) ? "+" : "",
                       (int)LAM_LADDER_MODE(out.ops[i]));
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
    build(&op, "2 a+0 a+1 a1 a0");
    lam_fermion_normal_order(&op, &out);
    int ok = out.count == 1 && out.coef[0] == 2.0 && out.ops[0] == LAM_CREATE(1) &&
             out.ops[1] == LAM_CREATE(0) && out.ops[2] == LAM_ANNIHILATE(0) &&
             out.ops[3] == LAM_ANNIHILATE(1);
    tap_ok(ok, "a+_0 a+_1 a_1 a_0 = a+_1 a+_0 a_0 a_1 (two swaps, sign +)");
    lam_fermion_free(&op);
    lam_fermion_free(&out);

    check_order("1 a1 a+1", "1; -1 a+1 a1", "a_1 a+_1 = 1 - a+_1 a_1");
    check_order("1 a0 a+1", "-1 a+1 a0", "a_0 a+_1 = -a+_1 a_0");
    check_order("1 a+1 a+1", "", "a+_1 a+_1 = 0");
    check_order("1 a2 a+0 a2", "", "a_2 a+_0 a_2 = 0 (repeated annihilator)");
    check_order("1 a+0 a+1", "-1 a+1 a+0", "a+_0 a+_1 = -a+_1 a+_0");
    check_order("1 a2 a+2; 1 a+2 a2", "1", "{a_2, a+_2} = 1");
    check_order("1 a0 a+1; 1 a+1 a0", "", "{a_0, a+_1} = 0");
    check_order("1 a+0 a0 a+0 a0", "1 a+0 a0", "n_0 n_0 = n_0");
    check_order("1 a0 a1 a+1 a+0", "1; -1 a+0 a0; -1 a+1 a1; 1 a+1 a+0 a0 a1",
                "a_0 a_1 a+_1 a+_0 = (1 - n_0)(1 - n_1)");
    check_order("0.5 a+3 a1; 0.25 a+3 a1; -0.75 a+3 a1", "", "repeated terms merge to zero");
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
    build(&op, "1 a+1 a1");
    op.nmodes = 2;
    lam_majorana_from_fermion(&op, &m);
    int pair[2] = {2, 3};
    long t = find_monomial(&m, pair, 2);
    int ok = t >= 0 && fabs(m.re[t]) < 1e-16 && fabs(m.im[t] - 0.5) < 1e-16 &&
             fabs(lam_majorana_constant(&m) - 0.5) < 1e-16;
    tap_ok(ok, "n_1 = 1/2 + (i/2) g_2 g_3");
    tap_ok(lam_majorana_require_hermitian(&m, "test", &test_err) == 0, "Hermitian (returns 0)");
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
    build(&op, "1 a+0 a1; 1 a+1 a0");
    op.nmodes = 2;
    lam_majorana_from_fermion(&op, &m);
    tap_ok(lam_majorana_require_hermitian(&m, "test", &test_err) == 0, "Hermitian (returns 0)");
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
        if (lam_majorana_require_hermitian(&slow, "test", &test_err)) printf("# %s\n", test_err.msg);
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
    build(&op, "1 a+3 a2");
    op.nmodes = 4; /* 2 orbitals */
    lam_error err;
    lam_fermion_relabel_spin(&op, LAM_SPIN_INTERLEAVED, LAM_SPIN_BLOCKED, &err);
    tap_ok(op.ops[0] == LAM_CREATE(3) && op.ops[1] == LAM_ANNIHILATE(1),
           "relabel interleaved -> blocked: mode 3 (1 down) -> 3, mode 2 (1 up) -> 1");
    lam_fermion_free(&op);
}

/* Terms read from a stream text: 0, or the error code with err filled
 * (and op empty). */
static int read_terms_or_error(const char *text, lam_fermion_op *op, lam_error *err)
{
    char path[] = "/tmp/test_fermion_XXXXXX";
    int fd = mkstemp(path);
    if (fd < 0 || write(fd, text, strlen(text)) != (ssize_t)strlen(text)) exit(70);
    close(fd);
    lam_reader *r;
    int rc = lam_reader_open(path, &r, err);
    if (rc == 0) {
        lam_reader_force_kind(r, LAM_KIND_FERMION);
        rc = lam_fermion_read(r, op, err);
        lam_reader_close(r);
    }
    unlink(path);
    return rc;
}

static void read_terms_of(const char *text, lam_fermion_op *op)
{
    lam_error err;
    if (read_terms_or_error(text, op, &err)) printf("# unexpected error: %s\n", err.msg);
}

/* A malformed term: 65 at its line with the reader's message, nothing
 * left in op. */
static void test_refused_terms(void)
{
    static const struct {
        const char *text, *msg;
        long line;
    } bad[] = {
        {"#% lamina-op 2\n0.5 3 1 / 0 2\n1 3 / 0 / 1\n#% end\n", "this one two", 3},
        {"0.5 3 1 / 0 2\n1 3 3 / 0\n", "mode 3 is created twice", 2},
        {"#% modes: 4\n0.5 3 1 / 0 5\n", "mode 5 out of range (the stream has 4 modes)", 2},
        {"0.5 3+ 1-\n0.5 3 / 1\n", "a version-2 term in a version-1 stream", 2},
        {"#% lamina-op 2\n0.5 3 1 / 0 2\n", "truncated stream", 2},
    };
    for (size_t i = 0; i < sizeof bad / sizeof *bad; ++i) {
        lam_fermion_op op;
        lam_error err;
        int rc = read_terms_or_error(bad[i].text, &op, &err);
        int ok = rc == LAM_EX_DATA && err.line == bad[i].line &&
                 strstr(err.msg, bad[i].msg) != NULL && op.count == 0 && op.coef == NULL;
        char name[160];
        snprintf(name, sizeof name, "refused with 65 at line %ld: %s", bad[i].line, bad[i].msg);
        tap_ok(ok, name);
        if (!ok) printf("#   got %d at line %ld: %s\n", rc, err.line, err.msg);
    }
}

/* The terms lam_fermion_write_terms writes, without header or trailer. */
static void written_terms(const lam_fermion_op *op, char *out, size_t size)
{
    char path[] = "/tmp/test_fermion_XXXXXX";
    close(mkstemp(path));
    lam_writer *w;
    lam_error err;
    if (lam_writer_open(path, 0, &w, &err)) exit(74);
    lam_fermion_write_terms(w, op);
    if (lam_writer_close_raw(w, &err)) exit(74);
    FILE *f = fopen(path, "r");
    size_t n = fread(out, 1, size - 1, f);
    out[n] = '\0';
    fclose(f);
    unlink(path);
}

static void test_stream_terms(void)
{
    lam_fermion_op op, v1;
    read_terms_of("0.5 3 1 / 0 2\n-1 / 0\n2 4 /\n0.75\n1.5 /\n", &op);
    int32_t want[] = {LAM_CREATE(3), LAM_CREATE(1), LAM_ANNIHILATE(0), LAM_ANNIHILATE(2),
                      LAM_ANNIHILATE(0), LAM_CREATE(4)};
    int ok = op.count == 5 && op.nops == 6 && op.nmodes == 5 &&
             memcmp(op.ops, want, sizeof want) == 0 && lam_fermion_length(&op, 3) == 0 &&
             lam_fermion_length(&op, 4) == 0 && op.coef[4] == 1.5;
    tap_ok(ok, "version 2: creators, '/', annihilators as written; 'c' and 'c /' constants");
    read_terms_of("0.5 3+ 1+ 0- 2-\n-1 0-\n2 4+\n0.75\n1.5\n", &v1);
    tap_ok(v1.count == op.count && v1.nops == op.nops &&
               memcmp(v1.ops, op.ops, sizeof want) == 0,
           "version 1 (N+ N-) reads to the same terms");
    lam_fermion_free(&v1);
    lam_fermion_free(&op);

    /* canonical on write: creators descending, annihilators ascending, the
     * reordering sign: a+1 a+3 a2 a0 = (-1)(-1) a+3 a+1 a0 a2 */
    char text[512];
    build(&op, "0.5 a+1 a+3 a2 a0; -0.25 a+0 a+2 a1; 1 a3; 2 a+3 a+3 a0; 3");
    written_terms(&op, text, sizeof text);
    tap_ok(strcmp(text, "0.5 3 1 / 0 2\n0.25 2 0 / 1\n1 / 3\n3\n") == 0,
           "written canonical with the sign, zero products left out");
    if (strcmp(text, "0.5 3 1 / 0 2\n0.25 2 0 / 1\n1 / 3\n3\n") != 0) printf("# got %s", text);
    lam_fermion_free(&op);
    /* a product not normal ordered is written normal ordered */
    build(&op, "1 a1 a+1");
    written_terms(&op, text, sizeof text);
    tap_ok(strcmp(text, "1\n-1 1 / 1\n") == 0 || strcmp(text, "-1 1 / 1\n1\n") == 0,
           "a1 a+1 written as 1 - a+1 a1");
    lam_fermion_free(&op);
}

int main(void)
{
    lam_set_program("test_fermion");
    test_stream_terms();
    test_normal_order();
    test_majorana();
    test_spinfree_paths();
    test_spin_order();
    test_refused_terms();
    return tap_done();
}
