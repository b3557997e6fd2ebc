/* plan.h - the blocks of a spectrum-range run: which (Na, Nb) sectors are
 * solved, copied or skipped, what each needs in memory, how long the run
 * will take, and finished blocks kept on disk so that a killed run loses
 * nothing (lam-range). */
#ifndef LAM_PLAN_H
#define LAM_PLAN_H

#include <stddef.h>
#include <stdint.h>
#include "sci.h"
#include "util.h"

typedef struct {
    int na, nb;        /* nb = -1: a total-number block; na = -1: the Fock space */
    int mirror_of;     /* index of the entry whose values it copies, or -1 */
    int skipped;       /* multiplets: not solved, its spectrum lies elsewhere */
    int use_bounds;    /* past the memory limit: inner bounds only */
    int resumed;       /* read back from the resume directory */
    int subspace;      /* Davidson vectors that fit the memory */
    size_t dim, bytes;
    double lo, hi, res_lo, res_hi;
    int exact_lo, exact_hi;
    lam_sci_result sci_lo, sci_hi; /* bounds of a spin-free block by selected CI */
} lam_plan_entry;

typedef struct {
    lam_plan_entry *s;
    int count;
} lam_plan;

void lam_plan_add(lam_plan *p, int na, int nb);
int lam_plan_find(const lam_plan *p, int na, int nb);
void lam_plan_free(lam_plan *p);

/* Na of the sector of smallest |Sz| with N electrons. */
int lam_plan_smallest_sz_alpha(int n_electrons);

/* Every (Na, Nb) of n orbitals, or the one sector (na >= 0).  A spin-free
 * operator has the spectrum of (Nb, Na) in (Na, Nb) (spin flip): those
 * with Na < Nb are mirrors; with multiplets, only the smallest |Sz| of
 * each N is solved (a spin-free operator commutes with S^2, so every
 * eigenvalue of an N-electron sector appears in it). */
void lam_plan_spinfree(lam_plan *p, int n, int na, int nb, int multiplets);

/* "sector (a,b)", "the N-electron block" or "the Fock space". */
void lam_plan_label(const lam_plan_entry *e, char *buf, size_t size);

/* Marks entries past max_memory (base + bytes) for bounds when allowed
 * (allow_bounds 1), every entry when allow_bounds is 2 (--bounds=always),
 * else fails with exit 75 and what the solve would need. */
int lam_plan_check_memory(lam_plan *p, double base, double max_memory, int allow_bounds, lam_error *err);

/* ---- time ---- */

/* Estimated seconds of one entry: applications of the operator (the
 * Davidson iterations and the extremality check, per end) times a cost per
 * application of `unit` seconds per vector element. */
double lam_plan_entry_seconds(const lam_plan_entry *e, int ends, int check_steps, double unit);

/* Progress of a run: "block 3 of 12 (sector (4,3), dimension 1225): 2.1 s
 * so far, about 9 s left".  Start with lam_plan_clock_start. */
typedef struct {
    double start, done_weight, total_weight;
    int done, total;
} lam_plan_clock;

void lam_plan_clock_start(lam_plan_clock *c, const lam_plan *p, int ends, int check_steps, double unit);
void lam_plan_clock_block(lam_plan_clock *c, const lam_plan_entry *e, int ends, int check_steps,
                          double unit, int finished);
double lam_plan_now(void);

/* ---- keeping finished blocks (--resume DIR) ---- */

/* A fingerprint of the operator and of every option that changes values,
 * so that a block is only read back into the run that made it. */
uint64_t lam_plan_fingerprint(uint64_t h, const void *data, size_t bytes);

/* Read entry e back from dir when a block of the same fingerprint was
 * kept; 1 when it was. */
int lam_plan_resume_read(const char *dir, uint64_t fp, lam_plan_entry *e);
/* Keep entry e in dir (written to a temporary file and renamed, so that a
 * kill never leaves half a block); fails with exit 74 when it cannot. */
int lam_plan_resume_write(const char *dir, uint64_t fp, const lam_plan_entry *e, lam_error *err);

#endif
