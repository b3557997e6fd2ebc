/* rng.h - the reproducible random numbers of the unit tests and of the
 * bench streams: Marsaglia's 64-bit xorshift with shifts 13, 7, 17 (G.
 * Marsaglia, "Xorshift RNGs", J. Stat. Softw. 8(14), 2003; from memory).
 * Plain C without lamina headers, so bench/gen-ops.c builds on its own. */
#ifndef LAM_TEST_RNG_H
#define LAM_TEST_RNG_H

/* The next state (any nonzero seed; a given seed gives the same sequence
 * on every machine). */
static inline unsigned long long test_xorshift(unsigned long long *state)
{
    *state ^= *state << 13;
    *state ^= *state >> 7;
    *state ^= *state << 17;
    return *state;
}

/* Uniform in [0, 1): the top 53 bits of the next state. */
static inline double test_unit(unsigned long long *state)
{
    return (double)(test_xorshift(state) >> 11) / 9007199254740992.0;
}

/* Uniform in [-1, 1). */
static inline double test_uniform(unsigned long long *state)
{
    return test_unit(state) * 2 - 1;
}

#endif
