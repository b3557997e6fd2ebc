/* Unit tests for range.c and plan.c: the failures come back to the caller
 * as errors (code, message), and the extremes over blocks carry their
 * certificate. */
#include <math.h>
#include <string.h>

#include "plan.h"
#include "range.h"
#include "spinfree.h"
#include "tap.h"
#include "util.h"

static void defaults(lam_range_options *o)
{
    memset(o, 0, sizeof *o);
    o->sector_na = o->sector_nb = -1;
    o->want_low = o->want_high = 1;
    o->tol = 1e-9;
    o->check_steps = 300;
    o->max_memory = 1e12;
    o->bound_subspace = -1;
    o->bound_energy_tol = 1e-6;
}

static void memory_check_returns(void)
{
    lam_plan p = {NULL, 0};
    lam_plan_add(&p, 2, 1);
    p.s[0].dim = 10;
    p.s[0].bytes = 2048;
    lam_error err;
    int rc = lam_plan_check_memory(&p, 0, 1024, 0, &err);
    tap_ok(rc == LAM_EX_MEMORY && strstr(err.msg, "sector (2,1) would need 2.0 KiB") &&
               strstr(err.msg, "over --max-memory 1.0 KiB"),
           "past --max-memory without bounds: exit 75 with what the solve needs");
    rc = lam_plan_check_memory(&p, 0, 1024, 1, &err);
    tap_ok(rc == 0 && p.s[0].use_bounds, "with bounds allowed the block gets bounds instead");
    p.s[0].use_bounds = 0;
    rc = lam_plan_check_memory(&p, 0, 4096, 0, &err);
    tap_ok(rc == 0 && !p.s[0].use_bounds, "a block within the memory is solved");
    lam_plan_free(&p);
}

static void generic_plan_returns(void)
{
    lam_range_options o;
    defaults(&o);
    lam_fock_conservation c = {0, 0, 0xf, 0, 0};
    lam_plan p = {NULL, 0};
    lam_error err;
    int rc = lam_range_plan_generic(&p, &c, 4, 2, &o, "in.op", &err);
    tap_ok(rc == LAM_EX_DATA && !strcmp(err.file, "in.op") && err.line <= 0 &&
               strstr(err.msg, "it has no electron-number sectors") && p.count == 0,
           "an electron number asked of a non-conserving operator: exit 65 naming the input");
    rc = lam_range_plan_generic(&p, &c, 4, -1, &o, "in.op", &err);
    tap_ok(rc == 0 && p.count == 1 && p.s[0].na == -1, "without it: the whole Fock space");
    lam_plan_free(&p);
    c.number_blocks = 1;
    o.sector_na = 1;
    o.sector_nb = 0;
    rc = lam_range_plan_generic(&p, &c, 4, -1, &o, "in.op", &err);
    tap_ok(rc == LAM_EX_DATA && strstr(err.msg, "--sector has no meaning for it"),
           "--sector on an operator without spin sectors: exit 65");
    lam_plan_free(&p);
}

static void sector_must_fit_returns(void)
{
    lam_spinfree *sf = lam_spinfree_new(2);
    LAM_H(sf, 0, 0) = -1;
    LAM_H(sf, 1, 1) = 0.5;
    lam_range_options o;
    defaults(&o);
    lam_plan p = {NULL, 0};
    lam_plan_spinfree(&p, 2, 3, 0, 0);
    lam_error err;
    int rc = lam_range_solve_spinfree(&p, sf, &o, &err);
    tap_ok(rc == LAM_EX_USAGE &&
               !strcmp(err.msg, "sector (3,0) needs 3 spin-up electrons but the operator has 2 orbitals"),
           "a sector larger than the orbitals: exit 64");
    lam_plan_free(&p);
    /* one electron in the diagonal one-body operator: eigenvalues -1, 0.5 */
    lam_plan_spinfree(&p, 2, 1, 0, 0);
    rc = lam_range_solve_spinfree(&p, sf, &o, &err);
    tap_ok(rc == 0, "sector (1,0) solves");
    tap_near(p.s[0].lo, -1, 1e-12, "sector (1,0) lowest is h_00");
    tap_near(p.s[0].hi, 0.5, 1e-12, "sector (1,0) highest is h_11");
    tap_ok(lam_range_entry_exact(&p.s[0], &o), "a dense solve is certified");
    lam_plan_free(&p);
    lam_spinfree_free(sf);
}

static void extremes_carry_certificate(void)
{
    lam_range_options o;
    defaults(&o);
    lam_plan p = {NULL, 0};
    lam_plan_add(&p, 1, 0);
    lam_plan_add(&p, 1, 1);
    lam_plan_add(&p, 0, 1);
    p.s[0].lo = -1, p.s[0].hi = 2, p.s[0].exact_lo = p.s[0].exact_hi = 1;
    p.s[1].lo = -3, p.s[1].hi = 1, p.s[1].exact_lo = 1, p.s[1].use_bounds = 0;
    p.s[2].mirror_of = 0;
    lam_range_resolve_mirrors(&p);
    tap_ok(p.s[2].lo == -1 && p.s[2].hi == 2 && p.s[2].exact_hi, "a mirror takes the values it mirrors");
    lam_range_extremes x = lam_range_extremes_of(&p, -1, &o);
    tap_ok(x.lo == -3 && x.hi == 2 && x.exact_lo && !x.exact_hi,
           "Fock extremes: the lowest certified, the highest not (one block's highest is a bound)");
    x = lam_range_extremes_of(&p, 1, &o);
    tap_ok(x.lo == -1 && x.hi == 2 && x.exact_lo && x.exact_hi, "the one-electron blocks alone");
    x = lam_range_extremes_of(&p, 5, &o);
    tap_ok(isnan(x.lo) && isnan(x.hi), "no block of that electron number: NaN");
    lam_plan_free(&p);
}

int main(void)
{
    lam_set_program("test_range");
    lam_progress_set(0);
    memory_check_returns();
    generic_plan_returns();
    sector_must_fit_returns();
    extremes_carry_certificate();
    return tap_done();
}
