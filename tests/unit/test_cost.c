/* test_cost.c - walk steps, index bits and the Pauli summary of lam-cost. */
#include <string.h>

#include "cost.h"
#include "tap.h"

/* Walk steps = ceil(pi lambda / (2 eps)): Babbush et al., PRX 8, 041015
 * (2018) and Lee et al., PRX Quantum 2, 030305 (2021), from memory.  The
 * wanted values are worked out by hand from that formula. */
static void walk_steps_by_hand(void)
{
    /* lambda = 1.8850504923 Eh (H2/STO-3G at 0.7414 A, from lam-norm);
     * pi * 1.8850504923 / 0.0032 = 1850.64... -> 1851 */
    tap_ok(lam_cost_walk_steps(1.8850504923, 1.6e-3) == 1851, "H2 one-norm at 1.6 mEh: 1851 steps");
    /* lambda = 100 Eh, eps = 1 mEh: pi * 100 / 0.002 = 157079.63... -> 157080 */
    tap_ok(lam_cost_walk_steps(100.0, 1e-3) == 157080, "100 Eh at 1 mEh: 157080 steps");
    /* lambda = 0.5 Eh, eps = 10 mEh: pi * 0.5 / 0.02 = 78.54 -> 79 */
    tap_ok(lam_cost_walk_steps(0.5, 1e-2) == 79, "0.5 Eh at 10 mEh: 79 steps");
    tap_ok(lam_cost_walk_steps(1e10, 1e-10) == -1, "more than 2^53 steps is refused");
}

static void index_and_keep_bits(void)
{
    tap_ok(lam_cost_index_bits(1) == 1, "one unitary still takes one index bit");
    tap_ok(lam_cost_index_bits(2) == 1, "2 unitaries: 1 bit");
    tap_ok(lam_cost_index_bits(14) == 4, "14 unitaries: 4 bits");
    tap_ok(lam_cost_index_bits(16) == 4, "16 unitaries: 4 bits");
    tap_ok(lam_cost_index_bits(17) == 5, "17 unitaries: 5 bits");
    /* log2(1.885/0.0016) = 10.2 -> 11 */
    tap_ok(lam_cost_default_keep_bits(1.885, 1.6e-3) == 11, "keep bits ceil(log2(lambda/eps))");
}

/* Counting of lam-cost(1) for L = 14 (not a power of two), b = 4, mu = 11:
 * SELECT 13; PREPARE (13 + 11 + 4 + 3*4) = 40, twice = 80; reflection on
 * b + (b + 2 mu + 1) = 31 qubits: 30; per step 123. */
static void counting_of_the_man_page(void)
{
    lam_lcu_summary lcu = {"pauli", 1.8850504923, 14, 0, 4};
    lam_cost_params par = {1.6e-3, 0};
    lam_cost_estimate est;
    const char *why = NULL;
    tap_ok(lam_cost_estimate_lcu(&lcu, &par, &est, &why) == 0, "H2 estimate succeeds");
    tap_ok(est.toffoli_select == 13, "SELECT: L - 1 Toffolis");
    tap_ok(est.toffoli_prepare == 80, "PREPARE and inverse: 2 (L - 1 + mu + b + 3b)");
    tap_ok(est.toffoli_reflect == 30, "reflection: 2b + 2mu");
    tap_ok(est.toffoli_per_step == 123, "per step 123");
    tap_ok(est.toffoli_total == 123LL * 1851, "total = per step x walk steps");
    tap_ok(est.logical_qubits == 4 + 4 + 27 + 4 + 11, "qubits: system + index + alias + unary + phase");
    par.error = 0;
    tap_ok(lam_cost_estimate_lcu(&lcu, &par, &est, &why) == -1 && why, "zero error refused");
    par.error = 1e-3;
    lcu.unitaries = 0;
    tap_ok(lam_cost_estimate_lcu(&lcu, &par, &est, &why) == -1, "no unitaries refused");
}

static void add_term(lam_pauli_set *s, int qubit_x, int qubit_z, double c, int32_t g)
{
    uint64_t x[1] = {qubit_x >= 0 ? 1ULL << qubit_x : 0};
    uint64_t z[1] = {qubit_z >= 0 ? 1ULL << qubit_z : 0};
    lam_pauli_set_add(s, x, z, c, g);
}

/* Fact of the trade (common practice): an anticommuting group costs
 * sqrt(sum c^2); the identity is never a unitary. */
static void pauli_summary(void)
{
    lam_pauli_set s;
    lam_pauli_set_init(&s, 2);
    add_term(&s, -1, -1, 5.0, -1);  /* identity */
    add_term(&s, 0, -1, 3.0, 1);    /* X0 */
    add_term(&s, -1, 0, -4.0, 1);   /* Z0: anticommutes with X0 */
    add_term(&s, -1, 1, 0.5, -1);   /* Z1 unlabelled */
    lam_lcu_summary lcu;
    lam_cost_summary_from_pauli(&s, 1, &lcu);
    tap_near(lcu.lambda, 5.5, 1e-15, "grouped lambda = 5 + 0.5");
    tap_ok(lcu.unitaries == 2 && lcu.rotations == 2, "2 unitaries, 2 rotations");
    tap_ok(strcmp(lcu.form, "pauli_grouped") == 0, "form pauli_grouped");
    lam_cost_summary_from_pauli(&s, 0, &lcu);
    tap_near(lcu.lambda, 7.5, 1e-15, "ungrouped lambda = 3 + 4 + 0.5");
    tap_ok(lcu.unitaries == 3 && lcu.rotations == 0, "3 Pauli strings, no rotations");
    lam_pauli_set_free(&s);
}

int main(void)
{
    walk_steps_by_hand();
    index_and_keep_bits();
    counting_of_the_man_page();
    pauli_summary();
    return tap_done();
}
