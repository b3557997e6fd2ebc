/* norm.c - every one-norm of the suite (see norm.h). */
#include "norm.h"

#include <math.h>
#include <stdlib.h>

#include "util.h"

/* ---- scaled Euclidean norm ---- */

void lam_norm2_add(lam_norm2 *acc, double c)
{
    double a = fabs(c);
    if (a == 0) return;
    if (a > acc->scale) {
        double r = acc->scale / a;
        acc->ssq = 1 + acc->ssq * r * r;
        acc->scale = a;
    } else {
        double r = a / acc->scale;
        acc->ssq += r * r;
    }
}

double lam_norm2_value(const lam_norm2 *acc) { return acc->scale * sqrt(acc->ssq); }

/* ---- grouped one-norm ---- */

static size_t label_hash(int32_t label, size_t mask)
{
    return (size_t)(((uint64_t)(uint32_t)label * 0x9E3779B97F4A7C15ull) >> 32) & mask;
}

static void rehash_labels(lam_grouped_norm *g)
{
    size_t nslot = g->nslot ? 2 * g->nslot : 512;
    size_t *slot = lam_calloc(nslot, sizeof *slot);
    for (size_t k = 0; k < g->count; ++k) {
        size_t h = label_hash(g->labels[k], nslot - 1);
        while (slot[h]) h = (h + 1) & (nslot - 1);
        slot[h] = k + 1;
    }
    free(g->slot);
    g->slot = slot;
    g->nslot = nslot;
}

/* Index of label in the table, added (with an empty norm) when new. */
static size_t label_index(lam_grouped_norm *g, int32_t label)
{
    if (2 * (g->count + 1) > g->nslot) rehash_labels(g);
    size_t h = label_hash(label, g->nslot - 1);
    for (; g->slot[h]; h = (h + 1) & (g->nslot - 1))
        if (g->labels[g->slot[h] - 1] == label) return g->slot[h] - 1;
    if (g->count == g->cap) {
        g->cap = g->cap ? 2 * g->cap : 256;
        g->labels = lam_realloc(g->labels, lam_mul_size(g->cap, sizeof *g->labels));
        g->norm = lam_realloc(g->norm, lam_mul_size(g->cap, sizeof *g->norm));
    }
    g->labels[g->count] = label;
    g->norm[g->count] = (lam_norm2){0, 0};
    g->slot[h] = ++g->count;
    return g->count - 1;
}

void lam_grouped_norm_add(lam_grouped_norm *g, int32_t label, double c)
{
    double a = fabs(c);
    g->plain += a;
    if (label < 0) {
        g->single += a;
        return;
    }
    size_t k = label_index(g, label); /* may move g->norm */
    lam_norm2_add(&g->norm[k], c);
}

double lam_grouped_norm_finish(lam_grouped_norm *g, size_t *groups)
{
    double sum = 0;
    for (size_t k = 0; k < g->count; ++k) sum += lam_norm2_value(&g->norm[k]);
    if (groups) *groups = g->count;
    LAM_FREE_ALL(g->labels, g->norm, g->slot);
    g->labels = NULL;
    g->norm = NULL;
    g->slot = NULL;
    g->count = g->cap = g->nslot = 0;
    return g->single + sum;
}

/* ---- spin-free closed form ---- */

double lam_spinfree_lambda(const lam_spinfree *sf)
{
    int n = sf->n;
    size_t n4 = (size_t)n * n * n * n;
    double one = 0, same_spin = 0, mixed = 0;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) one += fabs(lam_spinfree_effective_one_body(sf, p, q));
    for (size_t i = 0; i < n4; ++i) mixed += fabs(sf->g[i]);
    for (int p = 0; p < n; ++p)
        for (int r = 0; r < p; ++r)
            for (int q = 0; q < n; ++q)
                for (int s = 0; s < q; ++s)
                    same_spin += fabs(LAM_G(sf, p, q, r, s) - LAM_G(sf, p, s, r, q));
    return one + 0.25 * mixed + 0.5 * same_spin;
}

/* ---- Majorana monomials ---- */

double lam_majorana_lambda(const lam_majorana_set *m)
{
    double sum = 0.0;
    for (size_t t = 0; t < m->count; ++t)
        if (lam_majorana_degree(m, t) > 0) sum += fabs(lam_majorana_value(m, t));
    return sum;
}

/* ---- Pauli strings ---- */

static int is_identity(const lam_pauli_set *s, size_t t)
{
    return lam_pauli_is_identity(s->nwords, lam_pauli_x(s, t), lam_pauli_z(s, t));
}

double lam_pauli_set_lambda(const lam_pauli_set *s)
{
    double sum = 0.0;
    for (size_t t = 0; t < s->count; ++t)
        if (!is_identity(s, t)) sum += fabs(s->coef[t]);
    return sum;
}

double lam_pauli_set_lambda_grouped(const lam_pauli_set *s, size_t *ngroups)
{
    lam_grouped_norm g = {0};
    for (size_t t = 0; t < s->count; ++t)
        if (!is_identity(s, t)) lam_grouped_norm_add(&g, s->group ? s->group[t] : -1, s->coef[t]);
    return lam_grouped_norm_finish(&g, ngroups);
}

double lam_fockop_lambda(const lam_fockop *op)
{
    double s = 0;
    for (size_t f = 0; f < op->nflip; ++f)
        for (size_t t = op->first[f]; t < op->first[f + 1]; ++t)
            if (op->flip[f] != 0 || op->z[t] != 0) s += hypot(op->re[t], op->im[t]);
    return s;
}

/* ---- fragments ---- */

double lam_fragments_lambda(const lam_fragments *fr, int frag)
{
    double s = 0.0;
    for (size_t k = 0; k < fr->count; ++k)
        if (frag < 0 || fr->terms[k].frag == frag) s += fabs(fr->terms[k].coef);
    return s;
}
