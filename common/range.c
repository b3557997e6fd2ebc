/* range.c - the spectrum range block by block: sizes, memory, solve loop. */
#include "range.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ci.h"
#include "eigen.h"
#include "norm.h"
#include "sci.h"

/* Seconds per vector element and operator application, measured on our
 * machines (the CI sigma of 12 orbitals: 0.5 s for 853,776 determinants,
 * 78 merged pairs); the generic path per element and term group. */
#define CI_UNIT_PER_PAIR2 9.6e-11
#define FOCK_UNIT_PER_GROUP 2e-9

/* ---- running the plan ---- */

typedef struct {
    const lam_range_options *o;
    lam_plan *p;
    lam_plan_clock clock;
    double unit;
    uint64_t fingerprint;
    int ends;
} run_state;

static void run_start(run_state *rs, const lam_range_options *o, lam_plan *p, double unit, uint64_t fp)
{
    rs->o = o;
    rs->p = p;
    rs->unit = unit;
    rs->ends = o->want_low + o->want_high;
    /* what changes the values: the options, besides the operator */
    uint64_t opt[7] = {(uint64_t)o->want_low, (uint64_t)o->want_high, (uint64_t)o->check_steps,
                       (uint64_t)o->bounds, (uint64_t)o->bound_subspace, 0, 0};
    memcpy(&opt[5], &o->tol, sizeof o->tol);
    memcpy(&opt[6], &o->bound_energy_tol, sizeof o->bound_energy_tol);
    rs->fingerprint = lam_plan_fingerprint(fp, opt, sizeof opt);
    if (o->resume)
        for (int i = 0; i < p->count; ++i) {
            lam_plan_entry *e = &p->s[i];
            if (e->skipped || e->mirror_of >= 0) continue;
            if (lam_plan_resume_read(o->resume, rs->fingerprint, e)) {
                char label[48];
                lam_plan_label(e, label, sizeof label);
                lam_progress("%s: read back from %s", label, o->resume);
            }
        }
    lam_plan_clock_start(&rs->clock, p, rs->ends, o->check_steps, unit);
}

static int run_wants(const lam_plan_entry *e) { return !e->skipped && e->mirror_of < 0 && !e->resumed; }

static int run_block_done(run_state *rs, lam_plan_entry *e, lam_error *err)
{
    if (rs->o->resume && lam_plan_resume_write(rs->o->resume, rs->fingerprint, e, err)) return err->code;
    lam_plan_clock_block(&rs->clock, e, rs->ends, rs->o->check_steps, rs->unit, 1);
    return 0;
}

static void eigen_template(const lam_range_options *o, double spread, lam_eigen_problem *t)
{
    lam_eigen_defaults(t);
    t->tol = o->tol;
    t->max_iter = 1000;
    t->spread = spread;
    t->check_steps = o->check_steps;
    /* dense up to here: a whole spectrum is a deterministic certificate,
     * and below this size it costs less than the check's Lanczos steps on
     * a near-degenerate level */
    t->dense_limit = 2100;
}

static void take_results(lam_plan_entry *e, const lam_eigen_result *lo, const lam_eigen_result *hi,
                         const lam_range_options *o)
{
    if (o->want_low) {
        e->lo = lo->value;
        e->res_lo = lo->residual;
        e->exact_lo = lo->extreme;
    }
    if (o->want_high) {
        e->hi = hi->value;
        e->res_hi = hi->residual;
        e->exact_hi = hi->extreme;
    }
}

/* ---- inner bounds past --max-memory (--bounds) ---- */

/* The one place where a spin-free block gets bounds instead of a solve:
 * each end by selected CI, whose value is the Rayleigh quotient of its
 * vector (lowest >= E_min, highest <= E_max). */
static int bound_spinfree_block(const lam_spinfree *sf, lam_plan_entry *e, const lam_range_options *o,
                                lam_error *err)
{
    lam_sci_options so;
    lam_sci_defaults(&so);
    so.max_dets = o->bound_subspace > 0 ? (size_t)o->bound_subspace : 100000;
    so.max_bytes = o->max_memory;
    so.energy_tol = o->bound_energy_tol;
    for (int top = 0; top < 2; ++top) {
        if (!(top ? o->want_high : o->want_low)) continue;
        char l[96];
        snprintf(l, sizeof l, "sector (%d,%d) %s", e->na, e->nb, top ? "highest" : "lowest");
        so.label = l;
        so.highest = top;
        lam_sci_result *r = top ? &e->sci_hi : &e->sci_lo;
        int rc = lam_sci_solve(sf, e->na, e->nb, &so, r, err);
        if (rc) return rc;
        *(top ? &e->hi : &e->lo) = r->value;
    }
    return 0;
}

static int bound_generic_block(const lam_fockop *op, const lam_fock_sector *s, lam_plan_entry *e,
                               const lam_range_options *o, lam_error *err)
{
    return lam_fock_bounds(op, s, o->bound_subspace > 0 ? o->bound_subspace : 200, o->want_low ? &e->lo : NULL,
                           o->want_high ? &e->hi : NULL, err);
}

/* ---- the spin-free path ---- */

static int sector_must_fit(const lam_plan_entry *e, int orbitals, const char *what, lam_error *err)
{
    if (e->na > orbitals)
        return lam_error_set(err, LAM_EX_USAGE,
                             "sector (%d,%d) needs %d spin-up electrons but the operator has %d %s", e->na,
                             e->nb, e->na, orbitals, what);
    if (e->nb > orbitals)
        return lam_error_set(err, LAM_EX_USAGE,
                             "sector (%d,%d) needs %d spin-down electrons but the operator has %d %s", e->na,
                             e->nb, e->nb, orbitals, what);
    return 0;
}

static uint64_t spinfree_fingerprint(const lam_spinfree *sf)
{
    size_t nn = (size_t)sf->n * sf->n;
    uint64_t h = lam_plan_fingerprint(0, &sf->n, sizeof sf->n);
    h = lam_plan_fingerprint(h, &sf->e0, sizeof sf->e0);
    h = lam_plan_fingerprint(h, sf->h, nn * sizeof(double));
    return lam_plan_fingerprint(h, sf->g, nn * nn * sizeof(double));
}

/* Dimension and Davidson subspace of each entry: fewer vectors (more
 * iterations) before refusing; bytes then holds what the solve needs. */
static int size_spinfree(lam_plan *p, const lam_spinfree *sf, const lam_ci_ham *h, lam_eigen_problem *t,
                         double base, const lam_range_options *o, lam_error *err)
{
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        if (sector_must_fit(e, sf->n, "orbitals", err)) return err->code;
        e->dim = lam_ci_sector_dim(sf->n, e->na, e->nb);
        for (e->subspace = 8; e->subspace >= 4; --e->subspace) {
            t->max_subspace = e->subspace;
            e->bytes = lam_ci_solve_bytes(h, e->na, e->nb, t);
            if (e->subspace == 4 || (e->bytes != SIZE_MAX && base + (double)e->bytes <= o->max_memory)) break;
        }
    }
    return lam_plan_check_memory(p, base, o->max_memory, o->bounds, err);
}

static int run_spinfree(lam_plan *p, const lam_spinfree *sf, const lam_ci_ham *h, lam_eigen_problem *t,
                        const lam_range_options *o, lam_error *err)
{
    run_state rs;
    run_start(&rs, o, p, CI_UNIT_PER_PAIR2 * h->npair * h->npair, spinfree_fingerprint(sf));
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        if (!run_wants(e)) continue;
        char label[64];
        lam_plan_label(e, label, sizeof label);
        lam_plan_clock_block(&rs.clock, e, rs.ends, o->check_steps, rs.unit, 0);
        if (e->use_bounds) {
            if (bound_spinfree_block(sf, e, o, err)) return err->code;
        } else {
            lam_eigen_result lo, hi;
            t->label = label;
            t->max_subspace = e->subspace;
            if (lam_ci_solve(h, e->na, e->nb, t, o->want_low ? &lo : NULL, o->want_high ? &hi : NULL, err))
                return err->code;
            take_results(e, &lo, &hi, o);
        }
        if (run_block_done(&rs, e, err)) return err->code;
    }
    return 0;
}

int lam_range_solve_spinfree(lam_plan *p, const lam_spinfree *sf, const lam_range_options *o, lam_error *err)
{
    lam_eigen_problem t;
    /* |H - c| <= lambda (the Pauli one-norm) bounds every spread by 2 lambda */
    eigen_template(o, 2 * lam_spinfree_lambda(sf), &t);
    lam_ci_ham *h = lam_ci_ham_new(sf);
    double base = (double)lam_spinfree_bytes(sf->n) + (double)h->npair * h->npair * sizeof(double) * 2;
    int rc = size_spinfree(p, sf, h, &t, base, o, err);
    if (!rc) rc = run_spinfree(p, sf, h, &t, o, err);
    lam_ci_ham_free(h);
    return rc;
}

/* ---- the generic path: pauli and fermion streams ---- */

static lam_fock_sector fock_sector_of(const lam_plan_entry *e, const lam_fock_conservation *c)
{
    lam_fock_sector s = {0, 0, 0, 0, 0};
    if (e->na < 0) {
        s.full = 1;
    } else if (e->nb < 0) {
        s.mask_a = c->all;
        s.na = e->na;
    } else {
        s.mask_a = c->mask_a;
        s.mask_b = c->mask_b;
        s.na = e->na;
        s.nb = e->nb;
    }
    return s;
}

int lam_range_plan_generic(lam_plan *p, const lam_fock_conservation *c, int nq, int electrons,
                           const lam_range_options *o, const char *src, lam_error *err)
{
    if ((o->sector_na >= 0 || electrons >= 0) && !c->number_blocks)
        return lam_error_at(err, LAM_EX_DATA, src, 0,
                            "the operator changes the particle number (or is not a Jordan-Wigner "
                            "stream): it has no electron-number sectors");
    if (o->sector_na >= 0) {
        if (!c->spin_sectors)
            return lam_error_at(err, LAM_EX_DATA, src, 0,
                                "the operator does not conserve the spin-up and spin-down numbers "
                                "separately: --sector has no meaning for it");
        lam_plan_add(p, o->sector_na, o->sector_nb);
        return 0;
    }
    if (c->spin_sectors) {
        for (int na = 0; na <= nq / 2; ++na)
            for (int nb = 0; nb <= nq / 2; ++nb) lam_plan_add(p, na, nb);
    } else if (c->number_blocks) {
        for (int n = 0; n <= nq; ++n) lam_plan_add(p, n, -1);
    } else {
        lam_plan_add(p, -1, -1); /* the whole Fock space */
    }
    return 0;
}

static uint64_t fockop_fingerprint(const lam_fockop *op)
{
    size_t nt = op->first[op->nflip];
    uint64_t h = lam_plan_fingerprint(0, &op->nqubits, sizeof op->nqubits);
    h = lam_plan_fingerprint(h, op->flip, op->nflip * sizeof(uint64_t));
    h = lam_plan_fingerprint(h, op->z, nt * sizeof(uint64_t));
    h = lam_plan_fingerprint(h, op->re, nt * sizeof(double));
    return lam_plan_fingerprint(h, op->im, nt * sizeof(double));
}

static int size_generic(lam_plan *p, const lam_fockop *op, const lam_fock_conservation *c, lam_eigen_problem *t,
                        double base, const lam_range_options *o, lam_error *err)
{
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        lam_fock_sector s = fock_sector_of(e, c);
        if (e->nb >= 0 && sector_must_fit(e, __builtin_popcountll(c->mask_a), "spin-up modes", err))
            return err->code;
        e->dim = lam_fock_sector_dim(op, &s);
        for (e->subspace = 8; e->subspace >= 4; --e->subspace) {
            t->max_subspace = e->subspace;
            e->bytes = lam_fock_solve_bytes(op, &s, t);
            if (e->subspace == 4 || (e->bytes != SIZE_MAX && base + (double)e->bytes <= o->max_memory)) break;
        }
    }
    return lam_plan_check_memory(p, base, o->max_memory, o->bounds, err);
}

static int run_generic(lam_plan *p, const lam_fockop *op, const lam_fock_conservation *c, lam_eigen_problem *t,
                       const lam_range_options *o, lam_error *err)
{
    run_state rs;
    run_start(&rs, o, p, FOCK_UNIT_PER_GROUP * (double)(op->nflip ? op->nflip : 1) * (op->is_complex ? 4 : 1),
              fockop_fingerprint(op));
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        if (!run_wants(e)) continue;
        lam_fock_sector s = fock_sector_of(e, c);
        char label[64];
        lam_plan_label(e, label, sizeof label);
        lam_plan_clock_block(&rs.clock, e, rs.ends, o->check_steps, rs.unit, 0);
        if (e->use_bounds) {
            if (bound_generic_block(op, &s, e, o, err)) return err->code;
        } else {
            lam_eigen_result lo, hi;
            t->label = label;
            t->max_subspace = e->subspace;
            if (lam_fock_solve(op, &s, t, o->want_low ? &lo : NULL, o->want_high ? &hi : NULL, err))
                return err->code;
            take_results(e, &lo, &hi, o);
        }
        if (run_block_done(&rs, e, err)) return err->code;
    }
    return 0;
}

int lam_range_solve_generic(lam_plan *p, const lam_fockop *op, const lam_fock_conservation *c,
                            const lam_range_options *o, lam_error *err)
{
    lam_eigen_problem t;
    eigen_template(o, 2 * lam_fockop_lambda(op), &t);
    double base = (double)op->first[op->nflip] * 40;
    if (size_generic(p, op, c, &t, base, o, err)) return err->code;
    return run_generic(p, op, c, &t, o, err);
}

/* ---- results ---- */

void lam_range_resolve_mirrors(lam_plan *p)
{
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        if (e->mirror_of < 0) continue;
        const lam_plan_entry *m = &p->s[e->mirror_of];
        e->lo = m->lo;
        e->hi = m->hi;
        e->res_lo = m->res_lo;
        e->res_hi = m->res_hi;
        e->exact_lo = m->exact_lo;
        e->exact_hi = m->exact_hi;
        e->use_bounds = m->use_bounds;
        e->dim = m->dim;
        e->sci_lo = m->sci_lo;
        e->sci_hi = m->sci_hi;
    }
}

int lam_range_entry_exact(const lam_plan_entry *e, const lam_range_options *o)
{
    return !e->use_bounds && (!o->want_low || e->exact_lo) && (!o->want_high || e->exact_hi);
}

lam_range_extremes lam_range_extremes_of(const lam_plan *p, int electrons, const lam_range_options *o)
{
    lam_range_extremes x = {INFINITY, -INFINITY, 1, 1};
    int any = 0;
    for (int i = 0; i < p->count; ++i) {
        const lam_plan_entry *e = &p->s[i];
        if (e->skipped) continue;
        int N = e->nb >= 0 ? e->na + e->nb : e->na;
        if (electrons >= 0 && e->na >= 0 && N != electrons) continue;
        any = 1;
        /* an uncertified value of any block may hide a lower one */
        if (o->want_low) {
            if (e->lo < x.lo) x.lo = e->lo;
            x.exact_lo &= !e->use_bounds && e->exact_lo;
        }
        if (o->want_high) {
            if (e->hi > x.hi) x.hi = e->hi;
            x.exact_hi &= !e->use_bounds && e->exact_hi;
        }
    }
    if (!any) x.lo = x.hi = NAN;
    return x;
}
