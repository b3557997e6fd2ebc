/* cost_sparse.c - sparse-representation qubitization of a Pauli stream
 * (Berry, Gidney, Motta, McClean, Babbush, Quantum 3, 208 (2019); from
 * memory).  The terms are a list of d items; PREPARE is alias sampling
 * with the data of the item and of its alternate read together by QROAM
 * (advanced QROM: Low, Kliuchnikov, Schaeffer, arXiv:1812.00954; Berry et
 * al. 2019; from memory) and erased by measurement; SELECT applies the
 * item named by the data.  The accounting is lam-cost(1)'s reading of that
 * construction for Pauli data, not the paper's fermionic formula copied:
 * the paper loads four orbital indices per item and applies Majorana
 * operators; a Pauli stream (of any encoding) is loaded as its string. */
#include "cost.h"

#include <math.h>

/* One walk step of the sparse construction:
 *   prepare  2 usp(d)                 uniform superposition, in and out
 *          + ceil(d/k) + m (k - 1)    QROAM read, m = 2 data + aleph
 *          + ceil(d/k') + k'          its erasure by measurement
 *          + 2 aleph                  keep test, in and out
 *          + 2 data                   swap with the alternate, in and out
 *   select   given (the data decide what is applied)
 *   other    ceil(log2 d) + aleph + 2 reflection about zero of the
 *            registers PREPARE leaves, and the control of the walk. */
void lam_cost_sparse_step_of(const lam_cost_sparse_in *in, lam_cost_sparse_step *out)
{
    long long d = in->d, data = in->data_bits, aleph = in->prep_bits;
    out->index_bits = lam_cost_index_bits(d);
    out->read_bits = (int)(2 * data + aleph);
    long long read = lam_cost_qroam_read(d, out->read_bits, &out->k);
    long long erase = lam_cost_qroam_erase(d, &out->k_erase);
    out->prepare = 2 * lam_cost_usp_toffolis(d, LAM_COST_USP_ROT_BITS) + read + erase +
                   2 * aleph + 2 * data;
    out->select = in->select;
    out->other = out->index_bits + aleph + 2;
}

/* Qubits of the sparse PREPARE: index, uniform keep sample, the QROAM
 * output with its k - 1 clean copies, two flags, the rotation ancilla of
 * the uniform superposition. */
static int sparse_work_qubits(const lam_cost_sparse_step *st, int aleph)
{
    return st->index_bits + aleph + st->read_bits * st->k + 2 + 1;
}

/* The sparse step's Toffolis into est; returns its work qubits. */
static int sparse_step_into(const lam_cost_sparse_in *in, lam_cost_estimate *est)
{
    lam_cost_sparse_step st;
    lam_cost_sparse_step_of(in, &st);
    est->qroam_block = st.k;
    est->qroam_block_erase = st.k_erase;
    est->toffoli_prepare = st.prepare;
    est->toffoli_select = st.select;
    est->toffoli_other = st.other;
    return sparse_work_qubits(&st, in->prep_bits);
}

/* A Pauli string is loaded as its x and z masks (2n bits) and two bits of
 * its phase (the sign of c and the power of i of its Y factors); SELECT
 * applies X and Z on every qubit controlled by the walk's control and the
 * mask bit (2n Toffolis) and the phase by one more. */
int lam_cost_sparse(const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                    const lam_cost_params *par, lam_cost_estimate *est, const char **why)
{
    (void)why;
    int n = lcu->system_qubits;
    est->lambda = lcu->lambda_strings;
    est->prep_bits = par->prep_bits > 0 ? par->prep_bits
                                        : lam_cost_prep_bits(est->lambda, bud->synth);
    lam_cost_sparse_in in = {lcu->strings, 2 * n + 2, 2LL * n + 1, est->prep_bits};
    est->qubits_system = n;
    est->qubits_work = sparse_step_into(&in, est);
    est->synth_error = est->lambda * ldexp(1.0, -est->prep_bits);
    return 0;
}

/* ---- grouped: SELECT over anticommuting groups ----
 * Alias sampling over the G groups exactly as the sparse construction
 * (data: the group index and a sign), SELECT by unary iteration over the
 * groups (G - 1; Babbush et al. 2018).  Group g of m strings with
 * coefficients c_i is ||c|| U_g, U_g = sum (c_i/||c||) P_i, applied as
 * R_g P R_g^dagger with R_g a sequence of m - 1 Pauli rotations (Izmaylov,
 * Yen, Lang, Verteletskyy, JCTC 16, 190 (2020); from memory).  Inside the
 * branch of unary iteration each rotation is controlled by the branch's
 * flag, which costs two uncontrolled rotations of half the angle: 4(m - 1)
 * rotations per group and step, each a phase-gradient addition.  Only the
 * rotations of one group lie on the path of one index, which sets the
 * rotation bits. */
int lam_cost_grouped(const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                     const lam_cost_params *par, lam_cost_estimate *est, const char **why)
{
    (void)why;
    long long G = lcu->groups;
    est->lambda = lcu->lambda;
    long long path = 4LL * (lcu->largest_group - 1);
    double eps_prep = path > 0 ? bud->synth / 2 : bud->synth;
    est->prep_bits = par->prep_bits > 0 ? par->prep_bits : lam_cost_prep_bits(est->lambda, eps_prep);
    int gbits = lam_cost_index_bits(G);
    lam_cost_sparse_in in = {G, gbits + 1, G - 1, est->prep_bits};
    int prepare_qubits = sparse_step_into(&in, est);
    est->step_rotations = 2 * lcu->flat_rotations;
    est->synth_error = est->lambda * ldexp(1.0, -est->prep_bits);
    if (est->step_rotations > 0) {
        est->rot_bits = par->rot_bits > 0 ? par->rot_bits
                                          : lam_cost_rot_bits(est->lambda, path, bud->synth / 2);
        est->toffoli_rotations = est->step_rotations * lam_cost_rotation_toffolis(est->rot_bits);
        est->synth_error += est->lambda * (double)path * 3.14159265358979323846 *
                            ldexp(1.0, -est->rot_bits);
    }
    est->qubits_system = lcu->system_qubits;
    est->qubits_work = prepare_qubits + gbits /* AND chain */ +
                       est->rot_bits /* phase gradient */;
    return 0;
}
