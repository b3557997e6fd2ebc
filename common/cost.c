/* cost.c - the pieces every construction of lam-cost shares: the error
 * budget, walk steps, bit widths, QROAM block choice, the summary of a
 * pauli stream, the report.  The accounting is written out in
 * lam-cost(1). */
#include "cost.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "norm.h"
#include "util.h"

/* Integers above 2^53 no longer round-trip through a double, and the
 * products below are formed in doubles first to detect overflow. */
#define EXACT_LIMIT 9007199254740992.0
#define PI 3.14159265358979323846

int lam_cost_budget_split(double total, const double frac[3], lam_cost_budget *b,
                          const char **why)
{
    if (!(total > 0) || !isfinite(total)) {
        *why = "the target error must be a positive number of Eh";
        return -1;
    }
    double sum = frac[0] + frac[1] + frac[2];
    if (!(frac[0] > 0) || !(frac[1] >= 0) || !(frac[2] > 0) || fabs(sum - 1) > 1e-9) {
        *why = "the split must be three fractions PHASE,TRUNC,SYNTH summing to 1, "
               "PHASE and SYNTH above 0";
        return -1;
    }
    b->total = total;
    b->phase = total * frac[0];
    b->trunc = total * frac[1];
    b->synth = total * frac[2];
    return 0;
}

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

static int clamp_bits(double bits, int lo)
{
    if (!(bits >= lo)) return lo;
    return bits > 60 ? 60 : (int)bits;
}

int lam_cost_prep_bits(double lambda, double eps)
{
    return clamp_bits(ceil(log2(lambda / eps)), 1);
}

int lam_cost_rot_bits(double lambda, long long r, double eps)
{
    if (r < 1) r = 1;
    return clamp_bits(ceil(log2(PI * lambda * (double)r / eps)), 3);
}

long long lam_cost_rotation_toffolis(int b) { return b > 2 ? b - 2 : 0; }

long long lam_cost_usp_toffolis(long long d, int br)
{
    if (d <= 1 || (d & (d - 1)) == 0) return 0;
    int eta = 0;
    while (((d >> eta) & 1) == 0) ++eta;
    long long c = 3LL * lam_cost_index_bits(d) - 3LL * eta + 2LL * br - 9;
    return c > 0 ? c : 0;
}

static long long ceil_div(long long a, long long b) { return (a + b - 1) / b; }

long long lam_cost_qroam_read(long long d, long long m, int *k)
{
    long long best = -1;
    *k = 1;
    for (int e = 0; e < 40 && (1LL << e) <= 2 * d; ++e) {
        long long kk = 1LL << e;
        long long c = ceil_div(d, kk) + m * (kk - 1);
        if (best < 0 || c < best) {
            best = c;
            *k = (int)kk;
        }
    }
    return best;
}

long long lam_cost_qroam_erase(long long d, int *k)
{
    return lam_cost_qroam_read(d, 1, k) + 1; /* ceil(d/k') + k' */
}

/* ---- constructions ---- */

static const char *const con_names[LAM_CON_COUNT] = {"flat", "sparse", "grouped", "df"};

const char *lam_cost_construction_name(lam_construction c) { return con_names[c]; }

int lam_cost_construction_parse(const char *name, lam_construction *c)
{
    int i = lam_name_index(con_names, LAM_CON_COUNT, name);
    if (i >= 0) *c = (lam_construction)i;
    return i < 0 ? -1 : 0;
}

int lam_cost_applies(const lam_lcu_summary *lcu, lam_construction c)
{
    int fragments = strcmp(lcu->form, "fragments") == 0;
    switch (c) {
    case LAM_CON_FLAT: return 1;
    case LAM_CON_SPARSE: return !fragments && lcu->strings > 0;
    case LAM_CON_GROUPED: return strcmp(lcu->form, "pauli_grouped") == 0;
    case LAM_CON_DF: return fragments && lcu->df_complete;
    default: return 0;
    }
}

lam_construction lam_cost_headline(const lam_lcu_summary *lcu)
{
    if (lam_cost_applies(lcu, LAM_CON_DF)) return LAM_CON_DF;
    if (lam_cost_applies(lcu, LAM_CON_GROUPED)) return LAM_CON_GROUPED;
    if (lam_cost_applies(lcu, LAM_CON_SPARSE)) return LAM_CON_SPARSE;
    return LAM_CON_FLAT;
}

static int fits(double x) { return x >= 0 && x <= EXACT_LIMIT; }

/* Walk steps, run totals and the qubit sum, once the per-step parts and
 * qubits_system/qubits_work are set. */
static int finish(lam_cost_estimate *est, const lam_cost_budget *bud, const char **why)
{
    est->walk_steps = lam_cost_walk_steps(est->lambda, bud->phase);
    if (est->walk_steps < 0) {
        *why = "the walk steps ceil(pi*lambda/(2*eps.phase)) exceed 2^53: the one-norm is "
               "out of any physical range for this target error";
        return -1;
    }
    double step = (double)est->toffoli_select + (double)est->toffoli_prepare +
                  (double)est->toffoli_rotations + (double)est->toffoli_other;
    double total = step * (double)est->walk_steps;
    double rot = (double)est->step_rotations * (double)est->walk_steps;
    if (!fits(step) || !fits(total) || !fits(rot)) {
        *why = "the Toffoli or rotation count exceeds 2^53";
        return -1;
    }
    est->step_toffoli = (long long)step;
    est->run_toffoli = (long long)total;
    est->run_rotations = (long long)rot;
    est->qubits_phase = lam_cost_index_bits(est->walk_steps + 1);
    est->run_qubits = est->qubits_system + est->qubits_work + est->qubits_phase;
    return 0;
}

static int check_input(const lam_lcu_summary *lcu, double lambda, const char **why)
{
    if (!isfinite(lambda)) {
        *why = "the one-norm overflows a double: a coefficient is out of range";
        return -1;
    }
    if (!(lambda > 0) || lcu->unitaries < 1) {
        *why = "the operator has no term besides the identity: nothing to estimate";
        return -1;
    }
    return 0;
}

int lam_cost_estimate_one(const lam_lcu_summary *lcu, lam_construction c,
                          const lam_cost_budget *bud, const lam_cost_params *par,
                          lam_cost_estimate *est, const char **why)
{
    memset(est, 0, sizeof *est);
    est->con = c;
    if (check_input(lcu, lcu->lambda, why) != 0) return -1;
    int rc;
    switch (c) {
    case LAM_CON_FLAT: rc = lam_cost_flat(lcu, bud, par, est, why); break;
    case LAM_CON_SPARSE: rc = lam_cost_sparse(lcu, bud, par, est, why); break;
    case LAM_CON_GROUPED: rc = lam_cost_grouped(lcu, bud, par, est, why); break;
    case LAM_CON_DF: rc = lam_cost_df(lcu, bud, par, est, why); break;
    default: *why = "unknown construction"; return -1;
    }
    if (rc != 0) return rc;
    if (check_input(lcu, est->lambda, why) != 0) return -1;
    return finish(est, bud, why);
}

/* ---- flat: every unitary its own index ----
 * SELECT by unary iteration (L - 1); PREPARE and its inverse by coherent
 * alias sampling: uniform superposition, QROM read of (alt, keep) by unary
 * iteration (L - 1), comparison (aleph), controlled swap (b) (Babbush et
 * al. 2018, from memory); reflection about zero of index and alias
 * registers.  Rotations of the unitaries by the phase gradient. */
int lam_cost_flat(const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                  const lam_cost_params *par, lam_cost_estimate *est, const char **why)
{
    (void)why;
    long long L = lcu->unitaries;
    int b = lam_cost_index_bits(L);
    est->lambda = lcu->lambda;
    double eps_prep = lcu->flat_rotations > 0 ? bud->synth / 2 : bud->synth;
    est->prep_bits = par->prep_bits > 0 ? par->prep_bits
                                        : lam_cost_prep_bits(lcu->lambda, eps_prep);
    int mu = est->prep_bits;
    est->synth_error = lcu->lambda * ldexp(1.0, -mu);
    est->toffoli_select = L - 1;
    est->toffoli_prepare = 2 * ((L - 1) + mu + b + lam_cost_usp_toffolis(L, LAM_COST_USP_ROT_BITS));
    int alias = b + 2 * mu + 1; /* alt, keep, uniform sample, flag */
    est->toffoli_other = (long long)(b + alias) - 1;
    /* every rotation sits inside the branch of one index of the unary
     * iteration, so it is controlled: two rotations of half the angle */
    est->step_rotations = 2 * lcu->flat_rotations;
    if (est->step_rotations > 0) {
        /* every rotation of the step lies on the path of some index: the
         * bound takes the largest path to be the whole step */
        est->rot_bits = par->rot_bits > 0 ? par->rot_bits
                                          : lam_cost_rot_bits(lcu->lambda, est->step_rotations,
                                                              bud->synth / 2);
        est->toffoli_rotations = est->step_rotations * lam_cost_rotation_toffolis(est->rot_bits);
        est->synth_error += lcu->lambda * (double)est->step_rotations * PI *
                            ldexp(1.0, -est->rot_bits);
    }
    est->qubits_system = lcu->system_qubits;
    est->qubits_work = b + alias + b /* unary-iteration AND chain */ +
                       (est->rot_bits > 0 ? est->rot_bits : 0) /* phase gradient */;
    return 0;
}

/* ---- Pauli streams ---- */

typedef struct {
    int32_t group;
} labelled_term;

static int by_group(const void *a, const void *b)
{
    int32_t ga = ((const labelled_term *)a)->group, gb = ((const labelled_term *)b)->group;
    return (ga > gb) - (ga < gb);
}

static int is_identity(const lam_pauli_set *s, size_t t)
{
    return lam_pauli_is_identity(s->nwords, lam_pauli_x(s, t), lam_pauli_z(s, t));
}

/* Each group of m anticommuting strings is one unitary (of norm
 * sqrt(sum c^2): lam_pauli_set_lambda_grouped), applied as R P R^dagger
 * with R a product of m - 1 Pauli rotations: 2(m - 1) fixed-angle
 * rotations. */
static void add_groups(labelled_term *lt, size_t n, lam_lcu_summary *lcu)
{
    qsort(lt, n, sizeof *lt, by_group);
    for (size_t i = 0; i < n;) {
        size_t j = i;
        while (j < n && lt[j].group == lt[i].group) ++j;
        long long m = (long long)(j - i);
        lcu->unitaries += 1;
        lcu->groups += 1;
        lcu->flat_rotations += 2 * (m - 1);
        if (m > 1) lcu->grouped_strings += m;
        if (m > lcu->largest_group) lcu->largest_group = (int)m;
        i = j;
    }
}

void lam_cost_summary_from_pauli(lam_pauli_set *s, int use_groups, lam_lcu_summary *lcu)
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
    lcu->trunc_input = -1;
    lcu->trunc_source = "unknown (the stream does not say)";
    labelled_term *lt = grouped ? lam_malloc(lam_mul_size(s->count, sizeof *lt)) : NULL;
    size_t nl = 0;
    for (size_t t = 0; t < s->count; ++t) {
        if (is_identity(s, t)) continue;
        lcu->strings += 1;
        if (grouped && s->group[t] >= 0) {
            lt[nl].group = s->group[t];
            ++nl;
            continue;
        }
        lcu->unitaries += 1;
        if (grouped) { /* an unlabelled string is a group of one */
            lcu->groups += 1;
            if (lcu->largest_group < 1) lcu->largest_group = 1;
        }
    }
    lcu->lambda_strings = lam_pauli_set_lambda(s);
    lcu->lambda = grouped ? lam_pauli_set_lambda_grouped(s, NULL) : lcu->lambda_strings;
    if (grouped) {
        lcu->form = "pauli_grouped";
        add_groups(lt, nl, lcu);
        free(lt);
    }
}

/* ---- what the figures are ---- */

const char *lam_cost_assumptions(lam_construction c)
{
    static const char *const what[LAM_CON_COUNT] = {
        "estimate of one construction (flat LCU: unary-iteration SELECT over every unitary, "
        "alias-sampling PREPARE)",
        "estimate of one construction (sparse-representation qubitization with QROAM, after "
        "Berry et al. 2019)",
        "estimate of one construction (SELECT over anticommuting groups, each group a "
        "sequence of Pauli rotations, after Izmaylov et al. 2020)",
        "estimate of one construction (double factorization with Givens rotations loaded by "
        "QROM, after von Burg et al. 2021 and Lee et al. 2021)"};
    static char line[LAM_CON_COUNT][512];
    if (!line[c][0])
        snprintf(line[c], sizeof line[c],
                 "%s; walk steps ceil(pi*lambda/(2*eps.phase)); rotations as phase-gradient "
                 "additions; leaves out magic-state distillation, routing, layout and "
                 "error-correction overhead",
                 what[c]);
    return line[c];
}

void lam_cost_report(lam_report *rep, const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                     const lam_cost_estimate *est)
{
    lam_report_str(rep, "form", lcu->form);
    lam_report_str(rep, "construction", lam_cost_construction_name(est->con));
    lam_report_num(rep, "lambda", est->lambda);
    lam_report_int(rep, "unitaries", lcu->unitaries);
    lam_report_num(rep, "eps.total", bud->total);
    lam_report_num(rep, "eps.phase", bud->phase);
    lam_report_num(rep, "eps.trunc", bud->trunc);
    lam_report_num(rep, "eps.synth", bud->synth);
    if (lcu->trunc_input >= 0)
        lam_report_num(rep, "trunc.input", lcu->trunc_input);
    else
        lam_report_str(rep, "trunc.input", "unknown");
    lam_report_str(rep, "trunc.within",
                   lcu->trunc_input < 0 ? "unknown" : lcu->trunc_input <= bud->trunc ? "yes" : "no");
    lam_report_num(rep, "synth.bound", est->synth_error);
    lam_report_int(rep, "prep.bits", est->prep_bits);
    lam_report_int(rep, "rot.bits", est->rot_bits);
    lam_report_int(rep, "qroam.block", est->qroam_block);
    lam_report_int(rep, "qroam.block.erase", est->qroam_block_erase);
    /* every key in every report, so that --tsv columns never depend on
     * the input: 0 where a figure does not belong to the input */
    lam_report_int(rep, "strings", lcu->strings);
    lam_report_int(rep, "groups", lcu->groups);
    lam_report_int(rep, "groups.largest", lcu->largest_group);
    lam_report_int(rep, "df.factors", lcu->df_factors);
    lam_report_int(rep, "df.eigenvectors", lcu->df_eigvecs);
    lam_report_int(rep, "walk.steps", est->walk_steps);
    lam_report_int(rep, "step.toffoli.select", est->toffoli_select);
    lam_report_int(rep, "step.toffoli.prepare", est->toffoli_prepare);
    lam_report_int(rep, "step.toffoli.rotations", est->toffoli_rotations);
    lam_report_int(rep, "step.toffoli.other", est->toffoli_other);
    lam_report_int(rep, "step.toffoli", est->step_toffoli);
    lam_report_int(rep, "step.rotations", est->step_rotations);
    lam_report_int(rep, "run.toffoli", est->run_toffoli);
    lam_report_int(rep, "run.rotations", est->run_rotations);
    lam_report_int(rep, "run.qubits.system", est->qubits_system);
    lam_report_int(rep, "run.qubits.work", est->qubits_work);
    lam_report_int(rep, "run.qubits.phase", est->qubits_phase);
    lam_report_int(rep, "run.qubits", est->run_qubits);
    lam_report_str(rep, "assumes", lam_cost_assumptions(est->con));
}
