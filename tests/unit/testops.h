/* testops.h - random test operators shared by the unit tests: a
 * reproducible xorshift generator and spin-free operators with the 8-fold
 * symmetry of real integrals; streams written to temporary files. */
#ifndef LAM_TESTOPS_H
#define LAM_TESTOPS_H

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "rng.h"
#include "spinfree.h"
#include "stream.h"
#include "util.h"

/* text in a new temporary file; its path (static, until the next call),
 * NULL when none can be made.  The caller unlinks it. */
static inline char *test_write_temp(const char *text)
{
    static char path[64];
    strcpy(path, "/tmp/lam_unit_XXXXXX");
    int fd = mkstemp(path);
    if (fd < 0) return NULL;
    FILE *f = fdopen(fd, "w");
    fputs(text, f);
    fclose(f);
    return path;
}

/* A reader on path; a test that cannot open its own file stops (66). */
static inline lam_reader *test_open_reader(const char *path)
{
    lam_error e;
    lam_reader *r;
    if (lam_reader_open(path, &r, &e)) {
        lam_error_print(&e);
        exit(66);
    }
    return r;
}

/* 1 when a reader returned 0; else 0, its message on stderr (a test that
 * expects good input fails on it). */
static inline int test_read_ok(int rc, const lam_error *e)
{
    if (rc) lam_error_print(e);
    return rc == 0;
}

/* h uniform in [-1, 1), (pq|rs) in [-0.3, 0.3), e0 uniform, with the
 * 8-fold symmetry of real orbitals. */
static inline lam_spinfree *test_random_real_operator(int n, int electrons,
                                                      unsigned long long *state)
{
    lam_spinfree *h = lam_spinfree_new(n);
    h->electrons = electrons;
    h->e0 = test_uniform(state);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q) LAM_H(h, p, q) = LAM_H(h, q, p) = test_uniform(state);
    for (int p = 0; p < n; ++p)
        for (int q = 0; q <= p; ++q)
            for (int r = 0; r < n; ++r)
                for (int s = 0; s <= r; ++s) {
                    if (r * n + s > p * n + q) continue;
                    double v = 0.3 * test_uniform(state);
                    int idx[8][4] = {{p, q, r, s}, {q, p, r, s}, {p, q, s, r}, {q, p, s, r},
                                     {r, s, p, q}, {s, r, p, q}, {r, s, q, p}, {s, r, q, p}};
                    for (int i = 0; i < 8; ++i)
                        LAM_G(h, idx[i][0], idx[i][1], idx[i][2], idx[i][3]) = v;
                }
    return h;
}

#endif
