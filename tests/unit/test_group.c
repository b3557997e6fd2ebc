/* test_group.c - anticommuting grouping (common/group.c).
 *
 * The checks rest on facts outside the code under test:
 * - single-qubit Paulis: X, Y and Z anticommute pairwise, a Pauli commutes
 *   with itself and with any Pauli on other qubits (common practice); the
 *   test decides (anti)commutation by counting the qubits where both strings
 *   act with different letters, not through the symplectic product;
 * - a set of mutually anticommuting Pauli strings on n qubits has at most
 *   2n+1 members, reached by the Jordan-Wigner Majoranas plus their product
 *   (common practice);
 * - the optimal split of one term between two groups follows from calculus
 *   (minimize sqrt(a^2 + s^2) + sqrt(b^2 + (c - s)^2)).
 */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "group.h"
#include "norm.h"
#include "pauli.h"
#include "tap.h"
#include "util.h"

/* A library failure here is a failed test, with its message. */
static lam_error lib_err;
static void must(int rc)
{
    if (rc) tap_ok(0, lib_err.msg);
}

/* Letter of qubit q: 0 identity, 1 X, 2 Y, 3 Z. */
static int letter(const lam_pauli_set *s, size_t t, int q)
{
    uint64_t bit = (uint64_t)1 << (q % 64);
    int x = (lam_pauli_x(s, t)[q / 64] & bit) != 0, z = (lam_pauli_z(s, t)[q / 64] & bit) != 0;
    return x ? (z ? 2 : 1) : (z ? 3 : 0);
}

/* Anticommute when an odd number of qubits carry two different letters. */
static int letters_anticommute(const lam_pauli_set *s, size_t a, size_t b)
{
    int clash = 0;
    for (int q = 0; q < s->nqubits; ++q) {
        int la = letter(s, a, q), lb = letter(s, b, q);
        clash += la && lb && la != lb;
    }
    return clash & 1;
}

static void add_string(lam_pauli_set *s, const char *text, double c)
{
    uint64_t x[4] = {0}, z[4] = {0};
    /* "x:0 z:1,2": a letter, a colon, qubits separated by commas */
    for (const char *p = text; *p;) {
        char l = *p;
        p += 2;
        for (;;) {
            int q = (int)strtol(p, (char **)&p, 10);
            uint64_t bit = (uint64_t)1 << (q % 64);
            if (l != 'z') x[q / 64] |= bit;
            if (l != 'x') z[q / 64] |= bit;
            if (*p != ',') break;
            ++p;
        }
        while (*p == ' ') ++p;
    }
    lam_pauli_set_add(s, x, z, c, -1);
}

typedef struct {
    const char *string;
    double coef;
} term;

/* A new set on nq qubits holding the count terms. */
static void set_of(lam_pauli_set *s, int nq, const term *t, size_t count)
{
    lam_pauli_set_init(s, nq);
    for (size_t k = 0; k < count; ++k) add_string(s, t[k].string, t[k].coef);
}

/* in grouped with opt (NULL: the default options) into out; its statistics. */
static lam_group_stats group_with(const lam_pauli_set *in, const lam_group_options *opt,
                                  lam_pauli_set *out)
{
    lam_group_options def;
    lam_group_options_default(&def);
    lam_group_stats st;
    must(lam_group_build(in, opt ? opt : &def, out, &st, &lib_err));
    return st;
}

/* Deterministic pseudo-random numbers (splitmix64). */
static uint64_t rng_state = 42;
static uint64_t rng(void)
{
    uint64_t z = (rng_state += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

static void random_set(lam_pauli_set *s, int nq, size_t count, int maxweight)
{
    lam_pauli_set_init(s, nq);
    uint64_t x[16], z[16]; /* up to 1024 qubits */
    for (size_t t = 0; t < count; ++t) {
        memset(x, 0, sizeof x);
        memset(z, 0, sizeof z);
        int w = 1 + (int)(rng() % (uint64_t)maxweight);
        for (int k = 0; k < w; ++k) {
            int q = (int)(rng() % (uint64_t)nq), l = 1 + (int)(rng() % 3);
            uint64_t bit = (uint64_t)1 << (q % 64);
            x[q / 64] &= ~bit;
            z[q / 64] &= ~bit;
            if (l != 3) x[q / 64] |= bit;
            if (l != 1) z[q / 64] |= bit;
        }
        double c = ((double)(rng() % 2000000) / 1e6 - 1.0) * exp(-(double)(rng() % 8));
        lam_pauli_set_add(s, x, z, c, -1);
    }
    lam_pauli_set_merge(s, 0);
}

/* Every pair inside a group (anti)commutes as asked, checked letter by
 * letter; repeated strings in one group are not allowed by lam-group. */
static int groups_valid(const lam_pauli_set *s, int want_anti)
{
    for (size_t a = 0; a < s->count; ++a)
        for (size_t b = a + 1; b < s->count; ++b) {
            if (!s->group || s->group[a] < 0 || s->group[a] != s->group[b]) continue;
            if (letters_anticommute(s, a, b) != want_anti) return 0;
        }
    return 1;
}

/* The output is the same operator: per string, the lines add up to the
 * input coefficient. */
static double operator_difference(const lam_pauli_set *in, const lam_pauli_set *out)
{
    double worst = 0;
    size_t bytes = 2 * (size_t)in->nwords * sizeof(uint64_t);
    for (size_t a = 0; a < in->count; ++a) {
        double sum = 0;
        for (size_t b = 0; b < out->count; ++b)
            if (memcmp(lam_pauli_x(in, a), lam_pauli_x(out, b), bytes) == 0) sum += out->coef[b];
        if (fabs(sum - in->coef[a]) > worst) worst = fabs(sum - in->coef[a]);
    }
    return worst;
}

static double own_grouped_norm(const lam_pauli_set *s)
{
    double sum = 0;
    int32_t top = -1;
    for (size_t t = 0; t < s->count; ++t)
        if (s->group && s->group[t] > top) top = s->group[t];
    for (int32_t g = 0; g <= top; ++g) {
        double w = 0;
        for (size_t t = 0; t < s->count; ++t)
            if (s->group[t] == g) w += s->coef[t] * s->coef[t];
        sum += sqrt(w);
    }
    return sum;
}

static void test_clique(void)
{
    /* Jordan-Wigner Majoranas on 2 qubits and their product: 5 = 2n+1
     * mutually anticommuting strings, the largest such set. */
    static const term t[] = {{"x:0", 0.3},     {"y:0", -0.4},  {"x:1 z:0", 0.5},
                             {"y:1 z:0", 0.1}, {"z:0,1", -0.2}, {"", 1.5}};
    lam_pauli_set in, out;
    set_of(&in, 2, t, 6);
    lam_group_stats st = group_with(&in, NULL, &out);
    tap_ok(st.groups == 1 && st.largest_group == 5, "2n+1 Majoranas form one group of five");
    tap_near(st.lambda_grouped, sqrt(0.09 + 0.16 + 0.25 + 0.01 + 0.04), 1e-15,
             "lambda_grouped = sqrt(sum c^2) for one group");
    tap_near(st.lambda, 1.5, 1e-15, "lambda = sum |c| without the identity");
    tap_near(st.constant, 1.5, 0, "constant kept");
    tap_ok(out.group && out.group[0] == -1 && out.coef[0] == 1.5, "identity first, unlabelled");
    lam_pauli_set_free(&in);
    lam_pauli_set_free(&out);
}

static void test_commuting_apart(void)
{
    static const term t[] = {{"z:0", 0.7}, {"z:1", -0.2}, {"x:0", 0.1}};
    lam_pauli_set in, out;
    set_of(&in, 2, t, 2);
    lam_group_stats st = group_with(&in, NULL, &out);
    tap_ok(st.groups == 2, "commuting strings stay apart");
    tap_near(st.lambda_grouped, 0.9, 1e-15, "so lambda_grouped = lambda");
    lam_pauli_set_free(&in);
    lam_pauli_set_free(&out);

    lam_group_options opt;
    lam_group_options_default(&opt);
    opt.commuting = 1;
    set_of(&in, 2, t, 3);
    st = group_with(&in, &opt, &out);
    tap_ok(st.groups == 2 && groups_valid(&out, 0), "--commuting: z:0,1 together, x:0 apart");
    lam_pauli_set_free(&in);
    lam_pauli_set_free(&out);
}

static void test_split_optimum(void)
{
    /* x:0 anticommutes with z:0 and with z:0,1, which commute with each
     * other: with unit coefficients the best split of x:0 is 1/2 + 1/2 and
     * lambda = 2 sqrt(1 + 1/4) (calculus), against 1 + sqrt 2 unsplit. */
    static const term t[] = {{"z:0", 1.0}, {"z:0,1", 1.0}, {"x:0", 1.0}};
    lam_pauli_set in, out;
    set_of(&in, 2, t, 3);
    lam_group_options opt;
    lam_group_options_default(&opt);
    opt.split = 0;
    lam_group_stats st = group_with(&in, &opt, &out);
    tap_near(st.lambda_grouped, 1 + sqrt(2.0), 1e-14, "unsplit: 1 + sqrt 2");
    lam_pauli_set_free(&out);
    opt.split = 1;
    opt.split_iterations = 2000;
    st = group_with(&in, &opt, &out);
    tap_near(st.lambda_grouped, 2 * sqrt(1.25), 1e-9, "split: 2 sqrt(5/4)");
    tap_ok(st.split_bound <= st.lambda_grouped + 1e-12 && st.split_bound > 2 * sqrt(1.25) - 1e-6,
           "dual bound below and close to the split optimum");
    tap_ok(st.shared_terms == 1 && st.lines == 4, "one term shared, four lines");
    tap_ok(groups_valid(&out, 1), "split groups still anticommute");
    tap_near(operator_difference(&in, &out), 0, 1e-15, "shares add up to the coefficient");
    lam_pauli_set_free(&in);
    lam_pauli_set_free(&out);
}

static void test_random(int nq, size_t count, int maxweight, lam_group_method method,
                        int split, int commuting)
{
    lam_pauli_set in, out, again;
    random_set(&in, nq, count, maxweight);
    lam_group_options opt;
    lam_group_options_default(&opt);
    opt.method = method;
    opt.split = split;
    opt.commuting = commuting;
    lam_group_stats st;
    must(lam_group_build(&in, &opt, &out, &st, &lib_err));
    char name[160];
    snprintf(name, sizeof name, "%d qubits, %zu terms, %s%s%s: ", nq, in.count,
             lam_group_method_name(method), split ? ", split" : "",
             commuting ? ", commuting" : "");
    size_t len = strlen(name);
    snprintf(name + len, sizeof name - len, "pairs checked letter by letter");
    tap_ok(groups_valid(&out, !commuting), name);
    snprintf(name + len, sizeof name - len, "same operator");
    tap_near(operator_difference(&in, &out), 0, 1e-12, name);
    snprintf(name + len, sizeof name - len, "lambda_grouped recomputed");
    tap_near(own_grouped_norm(&out), st.lambda_grouped, 1e-10, name);
    if (!commuting) {
        snprintf(name + len, sizeof name - len, "lambda_grouped <= lambda");
        tap_ok(st.lambda_grouped <= st.lambda + 1e-12, name);
        snprintf(name + len, sizeof name - len, "groups of at most 2n+1");
        tap_ok(st.largest_group <= (size_t)(2 * nq + 1), name);
    }
    snprintf(name + len, sizeof name - len, "refinement and split never raise it");
    tap_ok(st.lambda_refined <= st.lambda_greedy + 1e-12 &&
               st.lambda_grouped <= st.lambda_refined + 1e-9,
           name);
    snprintf(name + len, sizeof name - len, "lam_group_check agrees");
    size_t f, g;
    tap_ok(lam_group_check(&out, commuting, &f, &g) == 0, name);
    must(lam_group_build(&in, &opt, &again, &st, &lib_err));
    int same = again.count == out.count &&
               memcmp(again.coef, out.coef, out.count * sizeof *out.coef) == 0 &&
               memcmp(again.group, out.group, out.count * sizeof *out.group) == 0;
    snprintf(name + len, sizeof name - len, "deterministic");
    tap_ok(same, name);
    lam_pauli_set_free(&in);
    lam_pauli_set_free(&out);
    lam_pauli_set_free(&again);
}

static void test_check(void)
{
    lam_pauli_set s;
    lam_pauli_set_init(&s, 3);
    uint64_t x[1] = {0}, z[1] = {0};
    /* group 0: x:0, z:0, y:0 fine; group 1: z:1, x:1 z:2, then z:2 (commutes with z:1) */
    const char *text[] = {"x:0", "z:1", "z:0", "x:1 z:2", "y:0", "z:2"};
    int label[] = {0, 1, 0, 1, 0, 1};
    for (int k = 0; k < 6; ++k) {
        lam_pauli_set tmp;
        lam_pauli_set_init(&tmp, 3);
        add_string(&tmp, text[k], 1.0);
        x[0] = lam_pauli_x(&tmp, 0)[0];
        z[0] = lam_pauli_z(&tmp, 0)[0];
        lam_pauli_set_add(&s, x, z, 1.0, label[k]);
        lam_pauli_set_free(&tmp);
    }
    size_t f = 0, g = 0;
    tap_ok(lam_group_check(&s, 0, &f, &g) == 1 && f == 1 && g == 5,
           "check names z:1 (term 1) and z:2 (term 5) of group 1");
    s.group[5] = 2;
    tap_ok(lam_group_check(&s, 0, &f, &g) == 0, "check passes once z:2 has its own group");
    tap_ok(lam_group_check(&s, 1, &f, &g) == 1 && f == 0 && g == 2,
           "as commuting groups, x:0 and z:0 fail first");
    size_t ng = 0;
    tap_near(lam_pauli_set_lambda_grouped(&s, &ng), sqrt(3.0) + sqrt(2.0) + 1.0, 1e-15,
             "lam_pauli_set_lambda_grouped: sqrt 3 + sqrt 2 + 1");
    tap_ok(ng == 3, "three groups counted");
    lam_pauli_set_free(&s);
}

int main(void)
{
    test_clique();
    test_commuting_apart();
    test_split_optimum();
    test_check();
    test_random(6, 300, 4, LAM_GROUP_SORTED, 0, 0);
    test_random(6, 300, 4, LAM_GROUP_BEST, 1, 0);
    test_random(40, 600, 12, LAM_GROUP_BEST, 1, 0);
    test_random(70, 500, 20, LAM_GROUP_SORTED, 1, 0);
    test_random(130, 300, 30, LAM_GROUP_BEST, 1, 0);
    test_random(600, 200, 6, LAM_GROUP_SORTED, 1, 0); /* too many Majoranas for pair lists */
    test_random(8, 300, 4, LAM_GROUP_BEST, 0, 1);
    test_random(70, 300, 10, LAM_GROUP_SORTED, 1, 1);
    return tap_done();
}
