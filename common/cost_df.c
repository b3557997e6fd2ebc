/* cost_df.c - double factorization with Givens rotations loaded by QROM
 * (von Burg, Low, Häner, Steiger, Reiher, Roetteler, Troyer, Phys. Rev.
 * Research 3, 033055 (2021); Lee, Berry, Gidney, Huggins, McClean, Wiebe,
 * Babbush, PRX Quantum 2, 030305 (2021), appendix on double
 * factorization; both from memory).
 *
 * The two-body part is a sum over factors l of (1/2) mu_l (sum_i v_li N_i)^2
 * in the rotated orbitals of its fragment.  With N_i = 1 - (R_ia + R_ib)/2
 * its quadratic part is mu_l A_l^2 / 8, A_l = sum_{i,s} v_li R_is, and the
 * walk block-encodes A_l^2 as A_l applied twice with a reflection between
 * them: one-norm (1/2) |mu_l| (sum_i |v_li|)^2.  A_l is one Z on a rotated
 * mode: prepare the eigenvector index i of factor l (alias sampling),
 * rotate mode 0 onto eigenvector v_li by a network of Givens rotations
 * whose angles a QROM reads, apply Z, rotate back.  The one-body fragment
 * is one more factor, applied once. */
#include "cost.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "linalg.h"
#include "util.h"

#define PI 3.14159265358979323846

/* Alias sampling over d items with m-bit data per item: read, erase, keep
 * test and swap, each in and out. */
static long long alias_in_out(long long d, int data, int aleph, int *k)
{
    int ke;
    return lam_cost_qroam_read(d, data + aleph, k) + lam_cost_qroam_erase(d, &ke) +
           2LL * aleph + 2LL * data;
}

static long long max3(long long a, long long b, long long c)
{
    long long m = a > b ? a : b;
    return m > c ? m : c;
}

/* One walk step (N = 2n spin orbitals, L + 1 factors with the one-body
 * one, Xi eigenvectors, aleph1/aleph2 keep bits, beta angle bits):
 *   first register (which factor), once in and once out:
 *     2 usp(L + 1) + alias over L + 1 (alt index) + a QROM of the factor's
 *     offset, eigenvector count and one-body flag, read and erased
 *   second register (which eigenvector), for each of the two A's, in and
 *     out: 2 (4 ceil(log2(n + 1)) + 2 br - 9) uniform superposition over a
 *     count read from the QROM + 2 ceil(log2 Xi) adding the offset + alias
 *     over Xi (alt index and two sign bits)
 *   angles: for each A, a QROAM read of n beta bits (n Givens angles) and
 *     its erasure
 *   rotations: for each A the network and its inverse, n Givens
 *     rotations of two fixed-angle rotations each: 8n rotations, each
 *     beta - 2 Toffolis by the phase gradient
 *   swaps: the spin-beta modes swapped into place and back for each A,
 *     controlled by the spin qubit: 4n
 *   reflections: on the second register between the two A's, on every
 *     PREPARE register at the end of the step. */
void lam_cost_df_step_of(const lam_cost_df_in *in, lam_cost_df_step *out)
{
    memset(out, 0, sizeof *out);
    long long n = in->n, items1 = in->L + 1, xi = in->xi;
    int lL = lam_cost_index_bits(items1), lX = lam_cost_index_bits(xi);
    int lc = lam_cost_index_bits(n + 1), br = LAM_COST_USP_ROT_BITS;
    int ko, ke;
    int offs = lX + lc + 1; /* offset, count, one-body flag */
    out->first_prepare = 2 * lam_cost_usp_toffolis(items1, br) +
                         alias_in_out(items1, lL, in->aleph1, &out->k1) +
                         lam_cost_qroam_read(items1, offs, &ko) + lam_cost_qroam_erase(items1, &ke);
    long long usp_count = 4LL * lc + 2LL * br - 9;
    if (usp_count < 0) usp_count = 0;
    long long second = 2 * usp_count + 2LL * lX + alias_in_out(xi, lX + 2, in->aleph2, &out->k2);
    out->second_prepare = 2 * second;
    long long angle_bits = n * in->beta;
    out->rot_read = 2 * (lam_cost_qroam_read(xi, angle_bits, &out->k3) + lam_cost_qroam_erase(xi, &ke));
    out->rot_count = 8 * n;
    out->rotations = out->rot_count * lam_cost_rotation_toffolis(in->beta);
    out->swaps = 4 * n;
    out->reflect = (lX + in->aleph2 + 2) + (lL + in->aleph1 + lX + in->aleph2 + 4);
    out->total = out->first_prepare + out->second_prepare + out->rot_read + out->rotations +
                 out->swaps + out->reflect;
    /* Qubits: the outputs that stay while the step runs, the clean copies
     * of the largest QROAM in use, the index and keep-sample registers,
     * the phase-gradient register, a few flags and the rotation ancilla
     * of the uniform superpositions. */
    long long m1 = lL + in->aleph1, m2 = lX + 2 + in->aleph2;
    long long outputs = m1 + offs + m2 + angle_bits;
    long long copies = max3((out->k1 - 1) * m1, (out->k2 - 1) * m2, (out->k3 - 1) * angle_bits);
    out->qubits_work = (int)(outputs + copies + lL + in->aleph1 + lX + in->aleph2 + in->beta + 6);
}

int lam_cost_df(const lam_lcu_summary *lcu, const lam_cost_budget *bud,
                const lam_cost_params *par, lam_cost_estimate *est, const char **why)
{
    if (lcu->df_eigvecs < 1 || lcu->orbitals < 1) {
        *why = "the fragments have no eigenvector to load";
        return -1;
    }
    int n = lcu->orbitals;
    est->lambda = lcu->df_lambda;
    /* a quarter of the synthesis share for each of the two alias
     * samplings, half for the rotations */
    int aleph = par->prep_bits > 0 ? par->prep_bits : lam_cost_prep_bits(est->lambda, bud->synth / 4);
    long long path = 8LL * n;
    int beta = par->rot_bits > 0 ? par->rot_bits
                                 : lam_cost_rot_bits(est->lambda, path, bud->synth / 2);
    lam_cost_df_in in = {n, lcu->df_factors, lcu->df_eigvecs, aleph, aleph, beta};
    lam_cost_df_step st;
    lam_cost_df_step_of(&in, &st);
    est->prep_bits = aleph;
    est->rot_bits = beta;
    est->qroam_block = st.k3;
    est->qroam_block_erase = st.k2;
    est->toffoli_prepare = st.first_prepare + st.second_prepare + st.rot_read;
    est->toffoli_select = st.swaps;
    est->toffoli_rotations = st.rotations;
    est->toffoli_other = st.reflect;
    est->step_rotations = st.rot_count;
    est->qubits_system = 2 * n;
    est->qubits_work = st.qubits_work;
    est->synth_error = 2 * est->lambda * ldexp(1.0, -aleph) +
                       est->lambda * (double)path * PI * ldexp(1.0, -beta);
    return 0;
}

/* ---- the DF form of a fragments stream ----
 * Fragment f's pair terms c R_is R_jt give back its matrix l: l_ij / 4 on
 * each of the four spin pairs of i != j, l_ii / 4 on (ia, ib).  Its
 * eigenpairs (mu_k, v_k) are the rank-one factors (one per fragment after
 * double factorization).  Eigenvalues within roundoff of zero are left
 * out, and their bound (1/2)|mu| n added to the input's truncation. */

static void fragment_matrix(const lam_fragments *fr, size_t lo, size_t hi, double *l)
{
    int n = fr->n;
    memset(l, 0, sizeof(double) * (size_t)n * (size_t)n);
    for (size_t t = lo; t < hi; ++t) {
        const lam_frag_term *T = &fr->terms[t];
        if (T->b < 0) continue;
        int i = T->a / 2, j = T->b / 2;
        if (i == j) {
            l[(size_t)i * n + i] += 4 * T->coef;
        } else {
            l[(size_t)i * n + j] += T->coef;
            l[(size_t)j * n + i] += T->coef;
        }
    }
}

/* The DF walk applies the same rotated one-body operator to both spins:
 * it needs every pair of orbitals i != j at l_ij / 4 on all four spin
 * pairs and equal reflections of both spins.  0 when the fragment is not
 * so (then only the flat count prices it). */
static int spin_symmetric(const lam_fragments *fr, size_t lo, size_t hi, const double *l)
{
    int n = fr->n;
    double big = 0, *single = lam_calloc((size_t)2 * n, sizeof *single);
    for (size_t i = 0; i < (size_t)n * n; ++i) big = fmax(big, fabs(l[i]));
    for (size_t t = lo; t < hi; ++t) {
        const lam_frag_term *T = &fr->terms[t];
        if (T->b < 0) {
            single[T->a] = T->coef;
            big = fmax(big, fabs(T->coef));
        }
    }
    int ok = 1;
    for (int i = 0; i < n && ok; ++i) ok = fabs(single[2 * i] - single[2 * i + 1]) <= 1e-12 * big;
    for (size_t t = lo; t < hi && ok; ++t) {
        const lam_frag_term *T = &fr->terms[t];
        int i = T->a / 2, j = T->b / 2;
        if (T->b >= 0 && i != j) ok = fabs(T->coef - l[(size_t)i * n + j] / 4) <= 1e-12 * big;
    }
    free(single);
    return ok;
}

/* Add fragment [lo, hi)'s factors to lcu. */
static int add_fragment_factors(const lam_fragments *fr, size_t lo, size_t hi, double *l,
                                double *w, lam_lcu_summary *lcu, lam_error *err)
{
    int n = fr->n, singles = 0;
    char *used = lam_calloc((size_t)n, 1);
    for (size_t t = lo; t < hi; ++t)
        if (fr->terms[t].b < 0) {
            lcu->df_lambda += fabs(fr->terms[t].coef);
            if (!used[fr->terms[t].a / 2]) ++singles;
            used[fr->terms[t].a / 2] = 1;
        }
    free(used);
    if (singles > 0) lcu->df_eigvecs += singles; /* the one-body factor */
    fragment_matrix(fr, lo, hi, l);
    if (!spin_symmetric(fr, lo, hi, l)) lcu->df_complete = -1;
    double big = 0;
    for (size_t i = 0; i < (size_t)n * n; ++i) big = fmax(big, fabs(l[i]));
    if (big == 0) return 0;
    /* l now holds the eigenvectors as columns */
    if (lam_symmetric_eigen(n, l, w, err)) return err->code;
    const double *v = l;
    double wmax = 0;
    for (int k = 0; k < n; ++k) wmax = fmax(wmax, fabs(w[k]));
    for (int k = 0; k < n; ++k) {
        if (fabs(w[k]) <= 1e-12 * wmax) {
            lcu->trunc_input += 0.5 * fabs(w[k]) * n;
            continue;
        }
        double s1 = 0, vmax = 0;
        for (int i = 0; i < n; ++i) vmax = fmax(vmax, fabs(v[(size_t)i * n + k]));
        long long support = 0;
        for (int i = 0; i < n; ++i) {
            double x = fabs(v[(size_t)i * n + k]);
            s1 += x;
            if (x > 1e-10 * vmax) ++support;
        }
        lcu->df_lambda += 0.5 * fabs(w[k]) * s1 * s1;
        lcu->df_factors += 1;
        lcu->df_eigvecs += support;
    }
    return 0;
}

int lam_cost_summary_from_fragments(const lam_fragments *fr, const lam_meta *meta,
                                    lam_lcu_summary *lcu, lam_error *err)
{
    lam_fragments_stats st = lam_fragments_stats_of(fr);
    memset(lcu, 0, sizeof *lcu);
    lcu->form = "fragments";
    lcu->lambda = st.lambda;
    lcu->unitaries = (long long)st.unitaries;
    lcu->system_qubits = 2 * fr->n;
    lcu->orbitals = fr->n;
    lcu->trunc_input = meta ? lam_cost_fragments_trunc(meta, fr->n, &lcu->trunc_source) : -1;
    if (lcu->trunc_input < 0) lcu->trunc_source = "unknown (the stream does not say)";
    double keep_unknown = lcu->trunc_input;
    if (lcu->trunc_input < 0) lcu->trunc_input = 0;
    size_t nn = (size_t)fr->n * (size_t)fr->n;
    double *l = lam_malloc(lam_mul_size(nn, sizeof *l));
    double *w = lam_malloc(lam_mul_size((size_t)fr->n + 1, sizeof *w));
    /* terms are merged, so sorted by fragment */
    for (size_t t = 0; t < fr->count;) {
        size_t u = t;
        while (u < fr->count && fr->terms[u].frag == fr->terms[t].frag) ++u;
        if (add_fragment_factors(fr, t, u, l, w, lcu, err)) {
            free(l);
            free(w);
            return err->code;
        }
        t = u;
    }
    free(l);
    free(w);
    if (keep_unknown < 0 && lcu->trunc_input == 0) lcu->trunc_input = -1;
    lcu->df_complete = lcu->df_complete == 0; /* -1: a fragment is not spin symmetric */
    for (int f = 0; f < fr->nfrag; ++f) {
        int identity = 1;
        for (int p = 0; p < fr->n && identity; ++p)
            for (int i = 0; i < fr->n; ++i)
                if (fabs(LAM_ROT(fr, f, p, i) - (p == i)) > 1e-14) {
                    identity = 0;
                    break;
                }
        if (!identity) lcu->flat_rotations += lam_cost_fragment_rotations(1, fr->n);
    }
    return 0;
}

long long lam_cost_fragment_rotations(long long fragments, int orbitals)
{
    return fragments * 4LL * orbitals * (orbitals - 1);
}

static int meta_double(const lam_meta *meta, const char *key, double *x)
{
    const char *s = lam_meta_get(meta, key);
    return s && lam_parse_double(s, x) == 0 && *x >= 0 && isfinite(*x);
}

/* Dropping factor l of double factorization changes the operator by
 * (1/2) w_l [(sum_s L_s)^2 - (L^2)_s]: ||L_s|| <= sum|eps| <= sqrt(n) and
 * sum eps^2 = 1 give at most (2n + 1)|w_l|.  An error delta in every
 * integral moves (1/2) sum (pq|rs) e_pqrs by at most 2 n^4 delta and
 * sum h_pq E_pq by 2 n^2 delta. */
double lam_cost_fragments_trunc(const lam_meta *meta, int n, const char **source)
{
    double dw, dmax, best = -1;
    double nn = (double)n;
    if (meta_double(meta, "integral-max-error", &dmax)) {
        best = 2 * nn * nn * (nn * nn + 1) * dmax;
        *source = "lam-factor integral-max-error";
    }
    if (meta_double(meta, "discarded-weight", &dw) && (best < 0 || (2 * nn + 1) * dw < best)) {
        best = (2 * nn + 1) * dw;
        *source = "lam-factor discarded-weight";
    }
    return best;
}
