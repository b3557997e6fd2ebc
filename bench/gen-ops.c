/* gen-ops - synthetic operator streams for the benchmarks.
 *
 *   gen-ops pauli TERMS QUBITS [SEED [WEIGHT]]
 *                                       random Pauli strings of weight 1..8
 *                                       (or exactly WEIGHT), stream version 2
 *   gen-ops spinfree ORBITALS [SEED]    every integral non-zero, with the
 *                                       8-fold symmetry of real orbitals
 *
 * Deterministic for a given seed; written with 17 significant digits like
 * the tools of the suite.  Not part of the programs: a bench helper only.
 */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../tests/unit/rng.h"

static unsigned long long state = 88172645463325252ULL;

static uint64_t next(void) { return test_xorshift(&state); }
static double uniform(void) { return test_uniform(&state); }

/* One letter's qubits (sorted) as "l:a,b-c" into out; returns the length. */
static int letter_field(char *out, char letter, const int *qs, int n)
{
    int len = sprintf(out, " %c:", letter);
    for (int i = 0; i < n;) {
        int j = i;
        while (j + 1 < n && qs[j + 1] == qs[j] + 1) ++j;
        len += sprintf(out + len, i ? ",%d" : "%d", qs[i]);
        if (j > i) len += sprintf(out + len, "-%d", qs[j]);
        i = j + 1;
    }
    return len;
}

static int by_int(const void *a, const void *b)
{
    return (*(const int *)a > *(const int *)b) - (*(const int *)a < *(const int *)b);
}

/* Canonical version-2 spelling, as the programs of the suite write it. */
static void pauli(long terms, int qubits, int fixed_weight)
{
    printf("#%% lamina-op 2\n#%% kind: pauli\n#%% qubits: %d\n", qubits);
    char *used = calloc((size_t)qubits, 1);
    int *chosen = malloc(sizeof(int) * 3 * 64);
    char *line = malloc(64 * 12 + 64);
    if (!used || !chosen || !line) exit(70);
    for (long t = 0; t < terms; ++t) {
        int weight = fixed_weight > 0 ? fixed_weight : 1 + (int)(next() % 8);
        if (weight > qubits) weight = qubits;
        if (weight > 64) weight = 64;
        int count[3] = {0, 0, 0};
        for (int k = 0; k < weight; ++k) {
            int q;
            do q = (int)(next() % (uint64_t)qubits); while (used[q]);
            used[q] = 1;
            int l = (int)(next() % 3);
            chosen[l * 64 + count[l]++] = q;
        }
        int len = sprintf(line, "%.17g", uniform() * 0.5);
        for (int l = 0; l < 3; ++l) {
            qsort(chosen + l * 64, (size_t)count[l], sizeof(int), by_int);
            for (int k = 0; k < count[l]; ++k) used[chosen[l * 64 + k]] = 0;
            if (count[l]) len += letter_field(line + len, "xyz"[l], chosen + l * 64, count[l]);
        }
        line[len++] = '\n';
        fwrite(line, 1, (size_t)len, stdout);
    }
    printf("#%% end\n");
    free(used);
    free(chosen);
    free(line);
}

/* Integrals decay with the index distance, like those of a real molecule,
 * but none is zero. */
static void spinfree(int n)
{
    size_t nn = (size_t)n * n;
    double *h = malloc(nn * sizeof *h);
    double *g = malloc(nn * nn * sizeof *g);
    if (!h || !g) exit(70);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q) h[p * n + q] = h[q * n + p] = uniform() / (1 + p - q);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s <= r; ++s) {
                    size_t pq = (size_t)p * n + q, rs = (size_t)r * n + s;
                    if (rs > pq) continue;
                    double v = (p == q && r == s ? 0.5 : 0.05) * (1.0 + 0.5 * uniform()) /
                               (1 + (p - q) + (r - s));
                    size_t qp = (size_t)q * n + p, sr = (size_t)s * n + r;
                    g[pq * nn + rs] = g[qp * nn + rs] = g[pq * nn + sr] = g[qp * nn + sr] = v;
                    g[rs * nn + pq] = g[sr * nn + pq] = g[rs * nn + qp] = g[sr * nn + qp] = v;
                }
    printf("#%% lamina-op 2\n#%% kind: spinfree\n#%% orbitals: %d\n#%% electrons: %d\n", n, n);
    printf("%.17g\n", 10.0);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q) printf("%.17g %d %d\n", h[p * n + q], p, q);
    /* each (pq|rs) once for (pq) <= (rs): the term c e_pqrs + c e_rspq */
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s < n; ++s) {
                    size_t pq = (size_t)p * n + q, rs = (size_t)r * n + s;
                    if (pq > rs) continue;
                    double v = g[pq * nn + rs];
                    printf("%.17g %d %d %d %d\n", pq == rs ? 0.5 * v : v, p, q, r, s);
                }
    printf("#%% end\n");
    free(h);
    free(g);
}

int main(int argc, char **argv)
{
    if (argc >= 4 && strcmp(argv[1], "pauli") == 0) {
        if (argc > 4) state += strtoull(argv[4], NULL, 10);
        pauli(atol(argv[2]), atoi(argv[3]), argc > 5 ? atoi(argv[5]) : 0);
        return 0;
    }
    if (argc >= 3 && strcmp(argv[1], "spinfree") == 0) {
        if (argc > 3) state += strtoull(argv[3], NULL, 10);
        spinfree(atoi(argv[2]));
        return 0;
    }
    fprintf(stderr, "usage: gen-ops pauli TERMS QUBITS [SEED [WEIGHT]] | gen-ops spinfree ORBITALS [SEED]\n");
    return 64;
}
