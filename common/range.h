/* range.h - the spectrum range of an operator, block by block: which
 * (Na, Nb) sectors or electron-number blocks a run solves, what each needs
 * in memory, and the solving loop (exact solve with a certificate, or
 * inner bounds past the memory limit), keeping finished blocks on disk
 * (lam-range).  The bookkeeping of the blocks themselves is plan.h. */
#ifndef LAM_RANGE_H
#define LAM_RANGE_H

#include "fockop.h"
#include "plan.h"
#include "spinfree.h"
#include "util.h"

/* What a run asks for: every option that changes the values. */
typedef struct {
    int sector_na, sector_nb; /* one sector only; -1 when not given */
    int want_low, want_high;  /* which ends */
    double tol;               /* certified distance and Davidson residual, Eh */
    int check_steps;          /* Lanczos steps of the extremality check */
    double max_memory;        /* bytes */
    int bounds;               /* 0: refuse past max_memory; 1: bounds there; 2: bounds always */
    int bound_subspace;       /* determinant budget of each end (<= 0: the default) */
    double bound_energy_tol;  /* selected CI stops below this change, Eh */
    const char *resume;       /* directory of finished blocks, or NULL */
} lam_range_options;

/* Sizes, memory check and solve of every entry of p (planned by
 * lam_plan_spinfree) for a spin-free operator.  Fails with exit 64 when a
 * sector does not fit the orbitals, 75 past max_memory without bounds, 74
 * when a finished block cannot be kept. */
int lam_range_solve_spinfree(lam_plan *p, const lam_spinfree *sf, const lam_range_options *o,
                             lam_error *err);

/* The blocks of a pauli or fermion operator of nq qubits: the one asked
 * sector, every (Na, Nb) sector, every electron-number block or the whole
 * Fock space, as far as the operator conserves them (c).  electrons >= 0
 * (asked for a block) needs number conservation; fails with exit 65 naming
 * src when the operator lacks what is asked. */
int lam_range_plan_generic(lam_plan *p, const lam_fock_conservation *c, int nq, int electrons,
                           const lam_range_options *o, const char *src, lam_error *err);

/* Sizes, memory check and solve of every entry of p (lam_range_plan_generic);
 * the failures of lam_range_solve_spinfree. */
int lam_range_solve_generic(lam_plan *p, const lam_fockop *op, const lam_fock_conservation *c,
                            const lam_range_options *o, lam_error *err);

/* Copy into every mirror entry the values of the entry it mirrors. */
void lam_range_resolve_mirrors(lam_plan *p);

/* 1 when every asked end of e is certified exact. */
int lam_range_entry_exact(const lam_plan_entry *e, const lam_range_options *o);

/* The extremes over the entries that belong (all when electrons < 0), each
 * with whether it is certified: the lowest is exact when the entry that
 * holds it is, and no other entry has a bound below it.  NaN when no entry
 * belongs. */
typedef struct {
    double lo, hi;
    int exact_lo, exact_hi;
} lam_range_extremes;

lam_range_extremes lam_range_extremes_of(const lam_plan *p, int electrons, const lam_range_options *o);

#endif
