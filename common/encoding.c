/* encoding.c - Jordan-Wigner, Bravyi-Kitaev and parity encodings built
 * from their binary matrices; Majorana monomials to Pauli strings. */
#include "encoding.h"

#include <assert.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

static const char *const encoding_names[] = {"jordan-wigner", "bravyi-kitaev", "parity"};

const char *lam_encoding_name(lam_encoding_kind k)
{
    return (unsigned)k < 3 ? encoding_names[k] : "unknown";
}

int lam_encoding_parse(const char *name, lam_encoding_kind *k)
{
    int i = lam_name_index(encoding_names, 3, name);
    if (i >= 0) *k = (lam_encoding_kind)i;
    return i < 0 ? -1 : 0;
}

static void set_bit(uint64_t *row, int j) { row[j / 64] |= (uint64_t)1 << (j % 64); }

/* Row j of A: which occupations qubit j stores the parity of. */
static void fill_matrix(lam_encoding *e)
{
    int n = e->nmodes, nw = e->nwords;
    for (int j = 0; j < n; ++j) {
        uint64_t *row = e->matrix + (size_t)j * nw;
        int lo;
        switch (e->kind) {
        case LAM_ENC_PARITY:
            lo = 0;
            break;
        case LAM_ENC_BRAVYI_KITAEV:
            /* Fenwick node j+1 (1-based) sums (j+1 - lowbit(j+1), j+1] */
            lo = (j + 1) - ((j + 1) & -(j + 1));
            break;
        default:
            lo = j;
            break;
        }
        for (int k = lo; k <= j; ++k) set_bit(row, k);
    }
}

/* Gauss-Jordan over GF(2) on [A | I]; returns -1 when A is singular. */
static int invert_gf2(const uint64_t *a, uint64_t *inv, int n, int nw)
{
    size_t rowbytes = (size_t)nw * sizeof(uint64_t);
    uint64_t *work = lam_malloc(lam_mul_size((size_t)n, rowbytes));
    memcpy(work, a, (size_t)n * rowbytes);
    memset(inv, 0, (size_t)n * rowbytes);
    for (int i = 0; i < n; ++i) set_bit(inv + (size_t)i * nw, i);
    uint64_t *tmp = lam_malloc(rowbytes);
    for (int col = 0; col < n; ++col) {
        uint64_t bit = (uint64_t)1 << (col % 64);
        int w = col / 64, piv = -1;
        for (int r = col; r < n; ++r)
            if (work[(size_t)r * nw + w] & bit) {
                piv = r;
                break;
            }
        if (piv < 0) {
            free(work);
            free(tmp);
            return -1;
        }
        if (piv != col) {
            uint64_t *ws[2] = {work, inv};
            for (int m = 0; m < 2; ++m) {
                memcpy(tmp, ws[m] + (size_t)piv * nw, rowbytes);
                memcpy(ws[m] + (size_t)piv * nw, ws[m] + (size_t)col * nw, rowbytes);
                memcpy(ws[m] + (size_t)col * nw, tmp, rowbytes);
            }
        }
        for (int r = 0; r < n; ++r) {
            if (r == col || !(work[(size_t)r * nw + w] & bit)) continue;
            for (int k = 0; k < nw; ++k) {
                work[(size_t)r * nw + k] ^= work[(size_t)col * nw + k];
                inv[(size_t)r * nw + k] ^= inv[(size_t)col * nw + k];
            }
        }
    }
    free(work);
    free(tmp);
    return 0;
}

/* X^x Z^z = i^(-x.z) P(x, z) in the convention of pauli.h. */
static int xz_order_phase(int nw, const uint64_t *x, const uint64_t *z)
{
    int overlap = 0;
    for (int w = 0; w < nw; ++w) overlap += __builtin_popcountll(x[w] & z[w]);
    return (4 - overlap % 4) % 4;
}

static void build_images(lam_encoding *e)
{
    int n = e->nmodes, nw = e->nwords;
    uint64_t *prefix = lam_calloc((size_t)nw, sizeof(uint64_t)); /* P_j */
    for (int j = 0; j < n; ++j) {
        uint64_t *x0 = e->images + (size_t)(2 * j) * 2 * nw, *z0 = x0 + nw;
        uint64_t *x1 = z0 + nw, *z1 = x1 + nw;
        const uint64_t *rj = e->inverse + (size_t)j * nw;
        for (int i = 0; i < n; ++i)
            if (lam_encoding_bit(e, e->matrix, i, j)) set_bit(x0, i);
        memcpy(x1, x0, (size_t)nw * sizeof(uint64_t));
        for (int w = 0; w < nw; ++w) {
            z0[w] = prefix[w];
            z1[w] = prefix[w] ^ rj[w];
        }
        e->phase[2 * j] = xz_order_phase(nw, x0, z0);
        e->phase[2 * j + 1] = (1 + xz_order_phase(nw, x1, z1)) % 4;
        for (int w = 0; w < nw; ++w) prefix[w] ^= rj[w];
    }
    free(prefix);
}

lam_encoding *lam_encoding_new(lam_encoding_kind kind, int nmodes)
{
    lam_encoding *e = lam_calloc(1, sizeof *e);
    e->kind = kind;
    e->nmodes = nmodes;
    e->nwords = lam_pauli_words(nmodes > 0 ? nmodes : 1);
    size_t rows = lam_mul_size((size_t)(nmodes > 0 ? nmodes : 1), (size_t)e->nwords);
    e->matrix = lam_calloc(rows, sizeof(uint64_t));
    e->inverse = lam_calloc(rows, sizeof(uint64_t));
    e->images = lam_calloc(lam_mul_size(rows, 4), sizeof(uint64_t));
    e->phase = lam_calloc((size_t)(2 * nmodes > 0 ? 2 * nmodes : 1), sizeof(int));
    fill_matrix(e);
    int singular = invert_gf2(e->matrix, e->inverse, nmodes, e->nwords);
    assert(!singular); /* every encoding's matrix is invertible by construction */
    (void)singular;
    build_images(e);
    return e;
}

void lam_encoding_free(lam_encoding *e)
{
    if (!e) return;
    LAM_FREE_ALL(e->matrix, e->inverse, e->images, e->phase, e);
}

void lam_encoding_each_pauli(const lam_encoding *e, const lam_majorana_set *m,
                             lam_pauli_visit visit, void *ctx)
{
    int nw = e->nwords;
    assert(m->nmodes == e->nmodes); /* the caller builds the encoding for these modes */
    uint64_t *x = lam_malloc(lam_mul_size(2 * (size_t)nw, sizeof(uint64_t))), *z = x + nw;
    for (size_t t = 0; t < m->count; ++t) {
        double v = lam_majorana_value(m, t);
        if (v == 0.0) continue;
        const uint64_t *row = m->bits + t * (size_t)m->nwords;
        memset(x, 0, 2 * (size_t)nw * sizeof(uint64_t));
        int degree = 0, k = 0;
        for (int w = 0; w < m->nwords; ++w)
            for (uint64_t bits = row[w]; bits; bits &= bits - 1) {
                int g = w * 64 + __builtin_ctzll(bits);
                k += e->phase[g] + lam_pauli_mul(nw, x, z, lam_encoding_image_x(e, g),
                                                 lam_encoding_image_z(e, g), x, z);
                ++degree;
            }
        /* the coefficient is v for degree 0,1 mod 4 and i v for 2,3 */
        k += (degree % 4) >= 2;
        /* a Hermitian monomial maps to a real multiple of a Pauli string */
        assert(k % 2 == 0);
        visit(ctx, x, z, k % 4 == 0 ? v : -v);
    }
    free(x);
}

static void add_to_set(void *ctx, const uint64_t *x, const uint64_t *z, double coef)
{
    lam_pauli_set_add(ctx, x, z, coef, -1);
}

void lam_encoding_map_majorana(const lam_encoding *e, const lam_majorana_set *m,
                               lam_pauli_set *out)
{
    lam_pauli_set_init(out, e->nmodes);
    assert(out->nwords == e->nwords);
    lam_pauli_set_reserve(out, m->count);
    lam_encoding_each_pauli(e, m, add_to_set, out);
}
