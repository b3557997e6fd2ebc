/* cost.c - walk steps, Toffolis and logical qubits of qubitized phase
 * estimation for an LCU (the accounting is written out in lam-cost(1)). */
#include "cost.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

/* Integers above 2^53 no longer round-trip through a double, and the
 * products below are formed in doubles first to detect overflow. */
#define EXACT_LIMIT 9007199254740992.0
#define PI 3.14159265358979323846

long long lam_cost_walk_steps(double lambda, double eps)
{
    double steps = ceil(PI * lambda / (2.0 * eps));
    if (!(steps >= 0) || steps > EXACT_LIMIT) return -1;
    return (long long)steps;
}

int lam_cost_index_bits(long long n)
{
    int b = 0;
    while (b < 62 && (1LL << b) < n) ++b;
    return b < 1 ? 1 : b;
}

int lam_cost_default_keep_bits(double lambda, double eps)
{
    double mu = ceil(log2(lambda / eps));
    if (!(mu >= 1)) return 1;
    return mu > 60 ? 60 : (int)mu;
}

/* Uniform superposition over L index values: free (Hadamards) when L is a
 * power of two, else an inequality test with one round of amplitude
 * amplification, about b Toffolis for each of compare, reflect and
 * uncompute. */
static long long uniform_superposition_toffolis(long long L, int b)
{
    return (L & (L - 1)) == 0 ? 0 : 3LL * b;
}

/* One PREPARE by coherent alias sampling (Babbush et al. 2018): QROM read
 * of (alt, keep) by unary iteration (L - 1), comparison of keep with a
 * uniform mu-bit sample (mu), controlled swap of index and alt (b). */
static long long prepare_toffolis(long long L, int b, int mu)
{
    return (L - 1) + mu + b + uniform_superposition_toffolis(L, b);
}

static int fits(double x) { return x >= 0 && x <= EXACT_LIMIT; }

int lam_cost_estimate_lcu(const lam_lcu_summary *lcu,
                          const lam_cost_params *par, lam_cost_estimate *est,
                          const char **why)
{
    memset(est, 0, sizeof *est);
    if (!(par->error > 0) || !isfinite(par->error)) {
        *why = "the target error must be a positive number of Eh";
        return -1;
    }
    if (lcu->unitaries < 1 || !(lcu->lambda > 0) || !isfinite(lcu->lambda)) {
        *why = "the operator has no term besides the identity: nothing to estimate";
        return -1;
    }
    long long L = lcu->unitaries;
    est->walk_steps = lam_cost_walk_steps(lcu->lambda, par->error);
    if (est->walk_steps < 0) {
        *why = "the number of walk steps exceeds 2^53 (target error too small)";
        return -1;
    }
    int b = lam_cost_index_bits(L);
    int mu = par->keep_bits > 0 ? par->keep_bits
                                : lam_cost_default_keep_bits(lcu->lambda, par->error);
    est->index_bits = b;
    est->keep_bits = mu;

    est->toffoli_select = L - 1;
    est->toffoli_prepare = 2 * prepare_toffolis(L, b, mu); /* PREPARE and its inverse */
    est->qubits_system = lcu->system_qubits;
    est->qubits_index = b;
    est->qubits_alias = b + 2 * mu + 1; /* alt, keep, uniform sample, flag */
    est->qubits_unary = b;              /* the AND chain of unary iteration */
    /* Reflection about |0> of index and alias registers: a multi-controlled
     * Z on m qubits, m - 1 Toffolis. */
    est->toffoli_reflect = (long long)(est->qubits_index + est->qubits_alias) - 1;
    double per_step = (double)est->toffoli_select + (double)est->toffoli_prepare +
                      (double)est->toffoli_reflect;
    double total = per_step * (double)est->walk_steps;
    double rot_total = (double)lcu->rotations * (double)est->walk_steps;
    if (!fits(per_step) || !fits(total) || !fits(rot_total)) {
        *why = "the Toffoli or rotation count exceeds 2^53";
        return -1;
    }
    est->toffoli_per_step = (long long)per_step;
    est->toffoli_total = (long long)total;
    est->rotations_per_step = lcu->rotations;
    est->rotations_total = (long long)rot_total;
    est->qubits_phase = lam_cost_index_bits(est->walk_steps + 1);
    est->logical_qubits = est->qubits_system + est->qubits_index + est->qubits_alias +
                          est->qubits_unary + est->qubits_phase;
    return 0;
}

/* ---- Pauli streams ---- */

typedef struct {
    int32_t group;
    double coef;
} labelled_term;

static int by_group(const void *a, const void *b)
{
    int32_t ga = ((const labelled_term *)a)->group, gb = ((const labelled_term *)b)->group;
    return (ga > gb) - (ga < gb);
}

static int is_identity(const lam_pauli_set *s, size_t t)
{
    const uint64_t *x = lam_pauli_x(s, t), *z = lam_pauli_z(s, t);
    for (int w = 0; w < s->nwords; ++w)
        if (x[w] | z[w]) return 0;
    return 1;
}

/* Each group of m anticommuting strings is one unitary of norm
 * sqrt(sum c^2); it is applied as R P R^dagger with R a product of m - 1
 * Pauli rotations, so it costs 2(m - 1) fixed-angle rotations. */
static void add_groups(labelled_term *lt, size_t n, lam_lcu_summary *lcu)
{
    qsort(lt, n, sizeof *lt, by_group);
    for (size_t i = 0; i < n;) {
        size_t j = i;
        double sq = 0;
        for (; j < n && lt[j].group == lt[i].group; ++j) sq += lt[j].coef * lt[j].coef;
        lcu->lambda += sqrt(sq);
        lcu->unitaries += 1;
        lcu->rotations += 2 * (long long)(j - i - 1);
        i = j;
    }
}

void lam_cost_summary_from_pauli(lam_pauli_set *s, int use_groups,
                                 lam_lcu_summary *lcu)
{
    if (!use_groups && s->group) { /* a split term counts once, merged */
        free(s->group);
        s->group = NULL;
    }
    lam_pauli_set_merge(s, 1);
    int grouped = use_groups && s->group != NULL;
    memset(lcu, 0, sizeof *lcu);
    lcu->form = "pauli";
    lcu->system_qubits = s->nqubits;
    labelled_term *lt = grouped ? lam_malloc(lam_mul_size(s->count, sizeof *lt)) : NULL;
    size_t nl = 0;
    for (size_t t = 0; t < s->count; ++t) {
        if (is_identity(s, t)) continue;
        if (grouped && s->group[t] >= 0) {
            lt[nl].group = s->group[t];
            lt[nl].coef = s->coef[t];
            ++nl;
            continue;
        }
        lcu->lambda += fabs(s->coef[t]);
        lcu->unitaries += 1;
    }
    if (grouped) {
        lcu->form = "pauli_grouped";
        add_groups(lt, nl, lcu);
        free(lt);
    }
}

/* ---- fragments streams ---- */

long long lam_cost_fragment_rotations(long long fragments, int orbitals)
{
    return fragments * 4LL * orbitals * (orbitals - 1);
}

static int rotation_is_identity(const lam_fragments *fr, int f)
{
    for (int p = 0; p < fr->n; ++p)
        for (int i = 0; i < fr->n; ++i)
            if (fabs(LAM_ROT(fr, f, p, i) - (p == i)) > 1e-14) return 0;
    return 1;
}

void lam_cost_summary_from_fragments(const lam_fragments *fr, lam_lcu_summary *lcu)
{
    lam_fragments_stats st = lam_fragments_stats_of(fr);
    memset(lcu, 0, sizeof *lcu);
    lcu->form = "fragments";
    lcu->lambda = st.lambda;
    lcu->unitaries = (long long)st.unitaries;
    lcu->system_qubits = 2 * fr->n;
    for (int f = 0; f < fr->nfrag; ++f)
        if (!rotation_is_identity(fr, f)) lcu->rotations += lam_cost_fragment_rotations(1, fr->n);
}

const char *lam_cost_assumptions(const lam_lcu_summary *lcu)
{
    (void)lcu;
    return "estimate only: textbook qubitized phase estimation with ceil(pi*lambda/(2*error)) "
           "walk steps; SELECT by unary iteration; PREPARE and its inverse by coherent alias "
           "sampling with keep_bits of precision; no measurement-based uncomputation, no "
           "error budget split, no magic-state distillation or routing overhead; rotations "
           "counted apart, not as Toffolis";
}

void lam_cost_report(lam_report *rep, const lam_lcu_summary *lcu,
                     const lam_cost_params *par, const lam_cost_estimate *est)
{
    lam_report_str(rep, "form", lcu->form);
    lam_report_num(rep, "lambda", lcu->lambda);
    lam_report_int(rep, "unitaries", lcu->unitaries);
    lam_report_num(rep, "error", par->error);
    lam_report_int(rep, "keep_bits", est->keep_bits);
    lam_report_int(rep, "index_bits", est->index_bits);
    lam_report_int(rep, "walk_steps", est->walk_steps);
    lam_report_int(rep, "toffoli_select", est->toffoli_select);
    lam_report_int(rep, "toffoli_prepare", est->toffoli_prepare);
    lam_report_int(rep, "toffoli_reflect", est->toffoli_reflect);
    lam_report_int(rep, "toffoli_per_step", est->toffoli_per_step);
    lam_report_int(rep, "toffoli_total", est->toffoli_total);
    lam_report_int(rep, "rotations_per_step", est->rotations_per_step);
    lam_report_int(rep, "rotations_total", est->rotations_total);
    lam_report_int(rep, "qubits_system", est->qubits_system);
    lam_report_int(rep, "qubits_index", est->qubits_index);
    lam_report_int(rep, "qubits_alias", est->qubits_alias);
    lam_report_int(rep, "qubits_unary", est->qubits_unary);
    lam_report_int(rep, "qubits_phase", est->qubits_phase);
    lam_report_int(rep, "logical_qubits", est->logical_qubits);
    lam_report_str(rep, "assumes", lam_cost_assumptions(lcu));
}
