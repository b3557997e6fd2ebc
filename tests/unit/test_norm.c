/* test_norm.c - every branch of norm.c, and the validation policy of
 * spin-free input, against sums done by hand (hand computation: each
 * expected value is written out beside its test).  The grouped one-norm
 * of a group of anticommuting strings is sqrt(sum c^2) (common practice). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cost.h"
#include "fermion.h"
#include "fockop.h"
#include "fragments.h"
#include "norm.h"
#include "pauli.h"
#include "spinfree.h"
#include "stream.h"
#include "tap.h"
#include "testops.h"
#include "util.h"


static void read_set(const char *text, lam_pauli_set *s)
{
    char *path = test_write_temp(text);
    lam_reader *r = test_open_reader(path);
    lam_error e;
    tap_ok(test_read_ok(lam_pauli_read(r, s, &e), &e), "the test's stream reads");
    lam_reader_close(r);
    unlink(path);
}

/* The summary of a stream, summed as read (distinct) or merged first. */
static void summarize(const char *text, int merged, lam_pauli_summary *sum)
{
    char *path = test_write_temp(text);
    lam_reader *r = test_open_reader(path);
    lam_error e;
    int rc = merged ? lam_pauli_summarize_merged(r, sum, &e) : lam_pauli_summarize(r, sum, &e);
    tap_ok(test_read_ok(rc, &e), "the test's stream is summed");
    lam_reader_close(r);
    unlink(path);
}

static void test_norm2(void)
{
    lam_norm2 a = {0, 0};
    tap_near(lam_norm2_value(&a), 0, 0, "norm2: the empty sum is 0");
    lam_norm2_add(&a, 3);
    lam_norm2_add(&a, -4);
    tap_near(lam_norm2_value(&a), 5, 1e-15, "norm2: |(3, -4)| = 5");
    lam_norm2 tiny = {0, 0};
    lam_norm2_add(&tiny, 3e-310);
    lam_norm2_add(&tiny, 4e-310);
    tap_near(lam_norm2_value(&tiny) / 5e-310, 1, 1e-12, "norm2: subnormal (3, 4) e-310 gives 5e-310");
    lam_norm2 huge = {0, 0};
    lam_norm2_add(&huge, 4e200);
    lam_norm2_add(&huge, 3e200);
    tap_near(lam_norm2_value(&huge) / 5e200, 1, 1e-15, "norm2: (4, 3) e200 gives 5e200, no overflow");
}

static void test_grouped_accumulator(void)
{
    /* labels 5, -1, 2, 5, 2, 9: plain 0.6+0.5+0.12+0.8+0.05+0 = 2.07,
     * grouped 0.5 + sqrt(0.36+0.64) + sqrt(0.0144+0.0025) + 0 = 1.63,
     * three labels (9 holds a zero and still counts) */
    lam_grouped_norm g = {0};
    lam_grouped_norm_add(&g, 5, 0.6);
    lam_grouped_norm_add(&g, -1, -0.5);
    lam_grouped_norm_add(&g, 2, 0.12);
    lam_grouped_norm_add(&g, 5, -0.8);
    lam_grouped_norm_add(&g, 2, -0.05);
    lam_grouped_norm_add(&g, 9, 0.0);
    size_t groups = 0;
    double plain = g.plain, grouped = lam_grouped_norm_finish(&g, &groups);
    tap_near(plain, 2.07, 1e-15, "accumulator: plain sum 2.07");
    tap_near(grouped, 1.63, 1e-15, "accumulator: grouped 0.5 + 1 + 0.13 = 1.63");
    tap_ok(groups == 3, "accumulator: three labels, a zero one included");

    /* many labels: the table grows past its first size */
    lam_grouped_norm big = {0};
    for (int k = 0; k < 5000; ++k) {
        lam_grouped_norm_add(&big, k * 7919, 0.3);
        lam_grouped_norm_add(&big, k * 7919, -0.4);
    }
    double v = lam_grouped_norm_finish(&big, &groups);
    tap_ok(groups == 5000, "accumulator: 5000 labels kept apart");
    tap_near(v, 5000 * 0.5, 1e-9, "accumulator: 5000 groups of norm 0.5");
}

/* A labelled stream: identity 0.7 (never counted), lambda
 * 0.3+0.4+0.5+0.12+0.05 = 1.37, lambda_grouped
 * 0.5 + sqrt(0.09+0.16) + sqrt(0.0144+0.0025) = 0.5 + 0.5 + 0.13 = 1.13. */
static const char *labelled_stream =
    "#% lamina-op 2\n#% kind: pauli\n#% qubits: 4\n"
    "0.7\n0.3 x:0 @1\n-0.4 z:1 @1\n0.5 y:2\n0.12 x:3 @2\n-0.05 z:3 @2\n#% end\n";

static void test_pauli(void)
{
    lam_pauli_set s;
    read_set(labelled_stream, &s);
    tap_near(lam_pauli_set_lambda(&s), 1.37, 1e-15, "pauli set: lambda 1.37 (identity left out)");
    size_t groups = 0;
    tap_near(lam_pauli_set_lambda_grouped(&s, &groups), 1.13, 1e-15,
             "pauli set: lambda_grouped 1.13");
    tap_ok(groups == 2, "pauli set: two labels");
    free(s.group);
    s.group = NULL;
    tap_near(lam_pauli_set_lambda_grouped(&s, NULL), 1.37, 1e-15,
             "pauli set without labels: lambda_grouped = lambda");
    lam_pauli_set_free(&s);

    for (int merged = 0; merged < 2; ++merged) {
        lam_pauli_summary sum;
        char name[128];
        const char *how = merged ? "merged summary" : "one-pass summary";
        summarize(labelled_stream, merged, &sum);
        snprintf(name, sizeof name, "%s: lambda 1.37", how);
        tap_near(sum.lambda, 1.37, 1e-15, name);
        snprintf(name, sizeof name, "%s of a labelled stream: lambda_grouped 1.13", how);
        tap_near(sum.lambda_grouped, 1.13, 1e-15, name);
        snprintf(name, sizeof name, "%s: labelled, 2 groups, constant 0.7", how);
        tap_ok(sum.labelled && sum.groups == 2 && sum.constant == 0.7, name);
    }

    /* the merged path adds a repeated (string, label) first:
     * 0.1 x:0 @1 twice is 0.2 x:0 @1, so lambda_grouped
     * sqrt(0.04 + 0.09) + 0.5 = 0.86055512754639891 (by hand) */
    lam_pauli_summary sum;
    summarize("#% lamina-op 2\n#% kind: pauli\n#% qubits: 4\n"
              "0.1 x:0 @1\n0.3 z:1 @1\n0.5 y:2\n0.1 x:0 @1\n#% end\n", 1, &sum);
    tap_near(sum.lambda_grouped, sqrt(0.13) + 0.5, 1e-15,
             "merged summary: a repeated labelled string is summed before its group's norm");

    /* subnormal coefficients keep their grouped norm (scaled sums) */
    summarize("#% lamina-op 2\n#% kind: pauli\n#% qubits: 2\n3e-310 x:0 @4\n4e-310 z:1 @4\n#% end\n",
              0, &sum);
    tap_near(sum.lambda_grouped / 5e-310, 1, 1e-12, "summary: subnormal group (3, 4) e-310 gives 5e-310");
}

static void test_cost_uses_the_same_norm(void)
{
    lam_pauli_set s;
    lam_lcu_summary lcu;
    read_set(labelled_stream, &s);
    lam_cost_summary_from_pauli(&s, 1, &lcu);
    tap_near(lcu.lambda, 1.13, 1e-15, "cost, grouped: lambda 1.13");
    tap_near(lcu.lambda_strings, 1.37, 1e-15, "cost, grouped: lambda of the strings 1.37");
    tap_ok(lcu.groups == 3 && lcu.unitaries == 3, "cost, grouped: 2 labels + 1 lone string = 3 unitaries");
    lam_pauli_set_free(&s);
    read_set(labelled_stream, &s);
    lam_cost_summary_from_pauli(&s, 0, &lcu);
    tap_near(lcu.lambda, 1.37, 1e-15, "cost, ungrouped: lambda 1.37");
    lam_pauli_set_free(&s);
}

static void test_fockop(void)
{
    lam_pauli_set s;
    read_set("#% lamina-op 2\n#% kind: pauli\n#% qubits: 3\n2.0\n0.25 x:0\n-0.5 y:1 z:2\n0.125 z:0\n#% end\n",
             &s);
    lam_fockop *op;
    lam_error err;
    tap_ok(lam_fockop_new(&s, "test", &op, &err) == 0, "fockop: built");
    /* 0.25 + 0.5 + 0.125 = 0.875; the identity 2 not counted */
    tap_near(lam_fockop_lambda(op), 0.875, 1e-15, "fockop: lambda 0.875 without the identity");
    lam_fockop_free(op);
    lam_pauli_set_free(&s);
}

static void test_spinfree_and_majorana(void)
{
    /* one orbital: h00 = -1.25, (00|00) = 0.6; closed form
     * |h + g - g/2| + g/4 = |-0.95| + 0.15 = 1.1 (no same-spin pair) */
    lam_spinfree *sf = lam_spinfree_new(1);
    LAM_H(sf, 0, 0) = -1.25;
    LAM_G(sf, 0, 0, 0, 0) = 0.6;
    tap_near(lam_spinfree_lambda(sf), 1.1, 1e-15, "spinfree: one orbital, closed form 1.1");
    /* the same through ladder terms and their Majorana monomials */
    lam_fermion_op op;
    lam_majorana_set m;
    lam_error e;
    lam_fermion_from_spinfree(sf, LAM_SPIN_INTERLEAVED, &op);
    lam_majorana_from_fermion(&op, &m);
    tap_ok(lam_majorana_require_hermitian(&m, "test", &e) == 0, "majorana: Hermitian");
    tap_near(lam_majorana_lambda(&m), 1.1, 1e-14, "majorana: ladder expansion of it gives 1.1 too");
    lam_majorana_free(&m);
    lam_fermion_free(&op);
    lam_spinfree_free(sf);

    /* 0.5 n_0 = 0.25 + 0.25 i g0 g1: lambda 0.25 */
    lam_fermion_init(&op, 2);
    int32_t ops[2] = {LAM_CREATE(0), LAM_ANNIHILATE(0)};
    lam_fermion_add(&op, 0.5, ops, 2, 0);
    lam_majorana_from_fermion(&op, &m);
    tap_ok(lam_majorana_require_hermitian(&m, "test", &e) == 0, "majorana: Hermitian");
    tap_near(lam_majorana_lambda(&m), 0.25, 1e-16, "majorana: 0.5 n_0 has lambda 0.25");
    lam_majorana_free(&m);
    lam_fermion_free(&op);
}

static void test_fragments(void)
{
    lam_fragments *fr = lam_fragments_new(2, 2);
    lam_fragments_add(fr, 0, 0, -1, 0.5);
    lam_fragments_add(fr, 0, 1, -1, -0.25);
    lam_fragments_add(fr, 1, 0, 2, 0.125);
    lam_fragments_add(fr, 1, 1, 3, -1.0);
    tap_near(lam_fragments_lambda(fr, -1), 1.875, 1e-15, "fragments: lambda 1.875");
    tap_near(lam_fragments_lambda(fr, 0), 0.75, 1e-15, "fragments: fragment 0 (one-body) 0.75");
    tap_near(lam_fragments_lambda(fr, 1), 1.125, 1e-15, "fragments: fragment 1 1.125");
    tap_near(lam_fragments_stats_of(fr).lambda, 1.875, 0, "fragments: the stats carry the same lambda");
    lam_fragments_free(fr);
}

/* Two orbitals: h01 = 0.2, h10 = 0.2 + d, (00|00) = 1 (the scale). */
static lam_spinfree *asymmetric(double d)
{
    lam_spinfree *sf = lam_spinfree_new(2);
    LAM_H(sf, 0, 1) = 0.2;
    LAM_H(sf, 1, 0) = 0.2 + d;
    LAM_G(sf, 0, 0, 0, 0) = 1.0;
    LAM_G(sf, 1, 1, 1, 1) = 0.5;
    return sf;
}

static void test_validation(void)
{
    lam_error err;
    lam_spinfree *sf = asymmetric(0);
    tap_ok(lam_spinfree_validate(sf, "in.op", "the test", &err) == 0 && lam_spinfree_is_real(sf),
           "validate: a symmetric operator passes");
    lam_spinfree_free(sf);

    sf = asymmetric(1e-13);
    tap_ok(lam_spinfree_validate(sf, "in.op", "the test", &err) == 0 && lam_spinfree_is_real(sf),
           "validate: h01, h10 1e-13 apart at scale 1 pass (tolerance 1e-12)");
    lam_spinfree_free(sf);

    sf = asymmetric(1e-11);
    int code = lam_spinfree_validate(sf, "in.op", NULL, &err);
    tap_ok(code == LAM_EX_DATA && err.code == LAM_EX_DATA && strcmp(err.file, "in.op") == 0 &&
               strstr(err.msg, "not Hermitian: term '0 1'") != NULL,
           "validate: h01, h10 1e-11 apart refused (65), the pair named");
    tap_ok(!lam_spinfree_is_real(sf), "validate: nor is it real-symmetric");
    lam_spinfree_free(sf);

    /* the tolerance is relative: the same operator scaled by 1e-20 */
    sf = asymmetric(1e-13);
    for (size_t i = 0; i < 4; ++i) sf->h[i] *= 1e-20;
    for (size_t i = 0; i < 16; ++i) sf->g[i] *= 1e-20;
    tap_ok(lam_spinfree_validate(sf, "in.op", NULL, &err) == 0, "validate: scaled by 1e-20, still inside");
    LAM_H(sf, 1, 0) = 0.2e-20 * (1 + 1e-10);
    tap_ok(lam_spinfree_validate(sf, "in.op", NULL, &err) == LAM_EX_DATA,
           "validate: scaled by 1e-20, an asymmetry of 1e-10 relative is refused");
    lam_spinfree_free(sf);

    /* Hermitian ((01|01) = (10|10)) but without the real symmetry
     * ((01|01) != (10|01) = 0) */
    sf = lam_spinfree_new(2);
    lam_spinfree_add_two(sf, 0, 1, 0, 1, 0.3);
    lam_spinfree_add_two(sf, 1, 0, 1, 0, 0.3);
    tap_ok(lam_spinfree_validate(sf, "in.op", NULL, &err) == 0,
           "validate: Hermitian without the real symmetry passes when none is asked");
    code = lam_spinfree_validate(sf, "in.op", "the test", &err);
    tap_ok(code == LAM_EX_DATA && strstr(err.msg, "8-fold symmetry of real orbitals") &&
               strstr(err.msg, "the test needs it"),
           "validate: ... and is refused, naming what needs it, when the real symmetry is asked");
    lam_spinfree_free(sf);

    sf = lam_spinfree_new(3);
    tap_ok(lam_spinfree_validate(sf, "in.op", "the test", &err) == 0 && lam_spinfree_scale(sf) == 0,
           "validate: the zero operator passes (scale 0)");
    lam_spinfree_free(sf);
}

int main(void)
{
    test_norm2();
    test_grouped_accumulator();
    test_pauli();
    test_cost_uses_the_same_norm();
    test_fockop();
    test_spinfree_and_majorana();
    test_fragments();
    test_validation();
    return tap_done();
}
