/* tap.h - a minimal TAP producer for the C unit tests (run by prove). */
#ifndef LAM_TAP_H
#define LAM_TAP_H

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

static int tap_count, tap_failed;

static inline void tap_ok(int cond, const char *name)
{
    ++tap_count;
    if (!cond) ++tap_failed;
    printf("%sok %d - %s\n", cond ? "" : "not ", tap_count, name);
    fflush(stdout);
}

/* |got - want| <= tol, printing both on failure. */
static inline void tap_near(double got, double want, double tol, const char *name)
{
    int ok = fabs(got - want) <= tol;
    tap_ok(ok, name);
    if (!ok) printf("#   got %.17g, want %.17g (tol %g)\n", got, want, tol);
}

static inline int tap_done(void)
{
    printf("1..%d\n", tap_count);
    return tap_failed ? 1 : 0;
}

#endif
