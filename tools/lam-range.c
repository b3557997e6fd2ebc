/* lam-range - extreme eigenvalues by (Na, Nb) sector, the Fock space and an
 * electron-number block, certified by residuals. */
#include <cblas.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ci.h"
#include "eigen.h"
#include "fermion.h"
#include "fockop.h"
#include "norm.h"
#include "pauli.h"
#include "plan.h"
#include "report.h"
#include "sci.h"
#include "spinfree.h"
#include "stream.h"
#include "linalg.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [STREAM]\n"
           "Lowest and highest eigenvalue (Eh) of an operator stream (spinfree, fermion or\n"
           "pauli) in every particle-number sector, over the whole Fock space and over the\n"
           "block of N electrons; a value is exact only when certified to be the extreme.\n\n"
           "  -s, --sector NA,NB   only the sector of NA spin-up and NB spin-down electrons\n"
           "  -n, --electrons N    also report the N-electron block (default: the stream's\n"
           "                       electrons: line)\n"
           "      --lowest         only the lowest eigenvalues\n"
           "      --highest        only the highest eigenvalues\n"
           "      --tol T          certified distance to the extreme eigenvalue and Davidson\n"
           "                       residual norm, Eh (default 1e-9)\n"
           "      --check-steps K  Lanczos steps of the extremality check per root (default\n"
           "                       300; 0: no check, Davidson values are bounds)\n"
           "  -M, --max-memory M   refuse (exit 75) work needing more than M bytes (K, M, G\n"
           "                       suffixes; default: the machine's memory)\n"
           "      --bounds[=always]  past --max-memory (always: for every sector), report\n"
           "                       inner bounds (status bound) by selected CI instead\n"
           "                       (spinfree input; others: a small Rayleigh-Ritz)\n"
           "      --bound-subspace K  determinant budget of each end (default 100000; 200\n"
           "                       for the Rayleigh-Ritz of the generic path)\n"
           "      --bound-energy-tol E  stop selecting when a round changes the value by\n"
           "                       less than E Eh (default 1e-6)\n"
           "      --no-multiplets  spinfree input: solve every sector, not only the one of\n"
           "                       smallest |Sz| per electron number (the default)\n"
           "      --resume DIR     keep each finished block in DIR and read back the blocks\n"
           "                       a killed run left there\n"
           "  -j, --threads T      threads for the CI and Pauli loops and the matrix\n"
           "                       products (default 1)\n"
           "  -k, --kind K         kind of a stream without header (spinfree, fermion, pauli)\n"
           "      --progress       progress on stderr even when it is not a terminal\n"
           "  -q, --quiet          no progress\n"
           "  -t, --tsv            one header row and one value row (no sector lines;\n"
           "                       the same columns whatever the input, NA where a value\n"
           "                       does not apply)\n"
           "  -l, --label TEXT     the label column (default: the input file name)\n"
           "  -o, --output FILE    write the report to FILE instead of stdout\n"
           "  -h, --help           show this help\n"
           "      --allow-empty    read an empty input as the zero operator\n"
           "  -V, --version        show the version\n\n"
           "Sector lines: sector NA NB min max status how (tab separated; how: computed,\n"
           "mirror:NB,NA, within:NA,NB, selected-ci or rayleigh-ritz).  Then fock_min, fock_max,\n"
           "fock_half_range and, with an electron number, n_min, n_max, n_half_range (with\n"
           "--sector: sector_min, sector_max, sector_half_range), each value followed by its\n"
           "own KEY_status (exact or bound); status: exact when every value is.  Selected\n"
           "CI adds sci.dets_*, sci.stop_*, sci.estimate_* (second order: estimates, not\n"
           "bounds) or sci lines.\n\n"
           "Example:\n"
           "  lam-ints h4.fcidump | %s --electrons 4\n",
           lam_program(), lam_program());
    exit(0);
}

/* ---- options ---- */

typedef struct {
    int sector_na, sector_nb; /* -1 when not given */
    long electrons;
    int want_low, want_high;
    double tol;
    double max_memory;
    int bounds, bound_subspace, multiplets, threads, tsv, check_steps;
    double bound_energy_tol;
    lam_kind kind;
    const char *output, *input, *resume, *label;
} options;

static void parse_sector(const char *arg, options *o)
{
    char *comma = strchr(arg, ',');
    long a, b;
    if (!comma) lam_usage_error("--sector wants NA,NB, not '%s'", arg);
    char *left = lam_strdup(arg);
    left[comma - arg] = 0;
    int bad = lam_parse_long(left, &a) || lam_parse_long(comma + 1, &b) || a < 0 || b < 0 ||
              a > 100000 || b > 100000;
    free(left);
    if (bad) lam_usage_error("--sector wants two electron counts NA,NB, not '%s'", arg);
    o->sector_na = (int)a;
    o->sector_nb = (int)b;
}

static void parse_options(int argc, char **argv, options *o)
{
    enum { O_LOW = 256, O_HIGH, O_TOL, O_BOUNDS, O_BSUB, O_BTOL, O_MULT, O_NOMULT, O_PROGRESS, O_CHECK,
           O_RESUME };
    static const struct option opts[] = {
        {"allow-empty", no_argument, 0, LAM_OPT_ALLOW_EMPTY},
        {"sector", required_argument, 0, 's'}, {"electrons", required_argument, 0, 'n'},
        {"lowest", no_argument, 0, O_LOW}, {"highest", no_argument, 0, O_HIGH},
        {"tol", required_argument, 0, O_TOL}, {"max-memory", required_argument, 0, 'M'},
        {"bounds", optional_argument, 0, O_BOUNDS}, {"bound-subspace", required_argument, 0, O_BSUB},
        {"bound-energy-tol", required_argument, 0, O_BTOL},
        {"multiplets", no_argument, 0, O_MULT}, {"no-multiplets", no_argument, 0, O_NOMULT},
        {"threads", required_argument, 0, 'j'}, {"kind", required_argument, 0, 'k'},
        {"progress", no_argument, 0, O_PROGRESS}, {"quiet", no_argument, 0, 'q'},
        {"tsv", no_argument, 0, 't'}, {"label", required_argument, 0, 'l'},
        {"output", required_argument, 0, 'o'},
        {"check-steps", required_argument, 0, O_CHECK}, {"resume", required_argument, 0, O_RESUME},
        {"help", no_argument, 0, 'h'}, {"version", no_argument, 0, 'V'}, {0, 0, 0, 0}};
    memset(o, 0, sizeof *o);
    o->sector_na = o->sector_nb = -1;
    o->electrons = -1;
    o->tol = 1e-9;
    o->bound_subspace = -1;
    o->bound_energy_tol = 1e-6;
    o->check_steps = 300;
    o->multiplets = -1; /* default: on for spinfree input without --sector */
    int low = 0, high = 0, c;
    opterr = 0;
    while ((c = getopt_long(argc, argv, ":s:n:M:j:k:qtl:o:hV", opts, NULL)) != -1) {
        switch (c) {
        case LAM_OPT_ALLOW_EMPTY: lam_reader_allow_empty(1); break;
        case 's': parse_sector(optarg, o); break;
        case 'n': o->electrons = lam_opt_long("--electrons", optarg, 0, 128); break;
        case O_LOW: low = 1; break;
        case O_HIGH: high = 1; break;
        case O_TOL:
            o->tol = lam_opt_double("--tol", optarg);
            if (!(o->tol > 0)) lam_usage_error("--tol must be positive");
            break;
        case 'M': o->max_memory = lam_opt_size("--max-memory", optarg); break;
        case O_BOUNDS:
            /* --bounds=always: inner bounds even where an exact solve fits
             * (to compare the two, or when the exact one would be slow) */
            if (optarg && strcmp(optarg, "always") && strcmp(optarg, "past-memory"))
                lam_usage_error("--bounds takes always or past-memory, not '%s'", optarg);
            o->bounds = optarg && !strcmp(optarg, "always") ? 2 : 1;
            break;
        case O_BSUB: o->bound_subspace = (int)lam_opt_long("--bound-subspace", optarg, 1, 100000000); break;
        case O_BTOL:
            o->bound_energy_tol = lam_opt_double("--bound-energy-tol", optarg);
            if (!(o->bound_energy_tol >= 0)) lam_usage_error("--bound-energy-tol must not be negative");
            break;
        case O_MULT: o->multiplets = 1; break;
        case O_NOMULT: o->multiplets = 0; break;
        case O_CHECK: o->check_steps = (int)lam_opt_long("--check-steps", optarg, 0, 1000000); break;
        case O_RESUME: o->resume = optarg; break;
        case 'j': o->threads = (int)lam_opt_long("--threads", optarg, 1, 64); break;
        case 'k':
            if (lam_kind_parse(optarg, &o->kind) || o->kind == LAM_KIND_FRAGMENTS)
                lam_usage_error("--kind wants spinfree, fermion or pauli, not '%s'", optarg);
            break;
        case O_PROGRESS: lam_progress_set(1); break;
        case 'q': lam_progress_set(0); break;
        case 't': o->tsv = 1; break;
        case 'l': o->label = optarg; break;
        case 'o': o->output = optarg; break;
        case 'h': usage();
        case 'V': lam_print_version();
        default: lam_bad_option(argv[optind - 1], optopt, c == ':');
        }
    }
    if (argc - optind > 1) lam_usage_error("one stream at a time");
    o->input = optind < argc ? argv[optind] : NULL;
    o->want_low = low || !high;
    o->want_high = high || !low;
    if (!o->max_memory) o->max_memory = lam_machine_memory();
    if (o->multiplets == 1 && o->sector_na >= 0) lam_usage_error("--multiplets and --sector do not go together");
}

/* ---- running the plan ---- */

/* Seconds per vector element and operator application, measured on our
 * machines (the CI sigma of 12 orbitals: 0.5 s for 853,776 determinants,
 * 78 merged pairs); the generic path per element and term group. */
#define CI_UNIT_PER_PAIR2 9.6e-11
#define FOCK_UNIT_PER_GROUP 2e-9

typedef struct {
    const options *o;
    lam_plan *p;
    lam_plan_clock clock;
    double unit;
    uint64_t fingerprint;
    int ends;
} run_state;

static void run_start(run_state *rs, const options *o, lam_plan *p, double unit, uint64_t fp)
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

static void run_block_done(run_state *rs, lam_plan_entry *e)
{
    if (rs->o->resume) lam_plan_resume_write(rs->o->resume, rs->fingerprint, e);
    lam_plan_clock_block(&rs->clock, e, rs->ends, rs->o->check_steps, rs->unit, 1);
}

static void eigen_template(const options *o, double spread, lam_eigen_problem *t)
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
                         const options *o)
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
static void bound_spinfree_block(const lam_spinfree *sf, lam_plan_entry *e, const options *o)
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
        lam_error err;
        if (lam_sci_solve(sf, e->na, e->nb, &so, r, &err)) lam_error_exit(&err);
        *(top ? &e->hi : &e->lo) = r->value;
    }
}

static void bound_generic_block(const lam_fockop *op, const lam_fock_sector *s, lam_plan_entry *e,
                                const options *o)
{
    lam_fock_bounds(op, s, o->bound_subspace > 0 ? o->bound_subspace : 200, o->want_low ? &e->lo : NULL,
                    o->want_high ? &e->hi : NULL);
}

/* ---- the spin-free path ---- */

static void sector_must_fit(const lam_plan_entry *e, int orbitals, const char *what)
{
    if (e->na > orbitals) {
        lam_error fail_err;
        lam_error_set(&fail_err, LAM_EX_USAGE, "sector (%d,%d) needs %d spin-up electrons but the operator has %d %s",
                      e->na, e->nb, e->na, orbitals, what);
        lam_error_exit(&fail_err);
    }
    if (e->nb > orbitals) {
        lam_error fail_err;
        lam_error_set(&fail_err, LAM_EX_USAGE, "sector (%d,%d) needs %d spin-down electrons but the operator has %d %s",
                      e->na, e->nb, e->nb, orbitals, what);
        lam_error_exit(&fail_err);
    }
}

static uint64_t spinfree_fingerprint(const lam_spinfree *sf)
{
    size_t nn = (size_t)sf->n * sf->n;
    uint64_t h = lam_plan_fingerprint(0, &sf->n, sizeof sf->n);
    h = lam_plan_fingerprint(h, &sf->e0, sizeof sf->e0);
    h = lam_plan_fingerprint(h, sf->h, nn * sizeof(double));
    return lam_plan_fingerprint(h, sf->g, nn * nn * sizeof(double));
}

static void solve_spinfree(lam_plan *p, const lam_spinfree *sf, const options *o)
{
    lam_eigen_problem t;
    /* |H - c| <= lambda (the Pauli one-norm) bounds every spread by 2 lambda */
    eigen_template(o, 2 * lam_spinfree_lambda(sf), &t);
    lam_ci_ham *h = lam_ci_ham_new(sf);
    double base = (double)lam_spinfree_bytes(sf->n) +
                  (double)h->npair * h->npair * sizeof(double) * 2;
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        sector_must_fit(e, sf->n, "orbitals");
        e->dim = lam_ci_sector_dim(sf->n, e->na, e->nb);
        /* fewer Davidson vectors (more iterations) before refusing */
        for (e->subspace = 8; e->subspace >= 4; --e->subspace) {
            t.max_subspace = e->subspace;
            e->bytes = lam_ci_solve_bytes(h, e->na, e->nb, &t);
            if (e->subspace == 4 || (e->bytes != SIZE_MAX && base + (double)e->bytes <= o->max_memory)) break;
        }
    }
    lam_plan_check_memory(p, base, o->max_memory, o->bounds);
    run_state rs;
    run_start(&rs, o, p, CI_UNIT_PER_PAIR2 * h->npair * h->npair, spinfree_fingerprint(sf));
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        if (!run_wants(e)) continue;
        char label[64];
        lam_plan_label(e, label, sizeof label);
        lam_plan_clock_block(&rs.clock, e, rs.ends, o->check_steps, rs.unit, 0);
        if (e->use_bounds) {
            bound_spinfree_block(sf, e, o);
        } else {
            lam_eigen_result lo, hi;
            t.label = label;
            t.max_subspace = e->subspace;
            lam_ci_solve(h, e->na, e->nb, &t, o->want_low ? &lo : NULL, o->want_high ? &hi : NULL);
            take_results(e, &lo, &hi, o);
        }
        run_block_done(&rs, e);
    }
    lam_ci_ham_free(h);
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

static void plan_generic(lam_plan *p, const lam_fock_conservation *c, int nq, const options *o,
                         const char *src)
{
    if ((o->sector_na >= 0 || o->electrons >= 0) && !c->number_blocks) {
        lam_error fail_err;
        lam_error_at(&fail_err, LAM_EX_DATA, src, 0,
                     "the operator changes the particle number (or is not a Jordan-Wigner "
                     "stream): it has no electron-number sectors");
        lam_error_exit(&fail_err);
    }
    if (o->sector_na >= 0) {
        if (!c->spin_sectors) {
            lam_error fail_err;
            lam_error_at(&fail_err, LAM_EX_DATA, src, 0,
                         "the operator does not conserve the spin-up and spin-down numbers "
                         "separately: --sector has no meaning for it");
            lam_error_exit(&fail_err);
        }
        lam_plan_add(p, o->sector_na, o->sector_nb);
        return;
    }
    if (c->spin_sectors) {
        for (int na = 0; na <= nq / 2; ++na)
            for (int nb = 0; nb <= nq / 2; ++nb) lam_plan_add(p, na, nb);
    } else if (c->number_blocks) {
        for (int n = 0; n <= nq; ++n) lam_plan_add(p, n, -1);
    } else {
        lam_plan_add(p, -1, -1); /* the whole Fock space */
    }
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

static void solve_generic(lam_plan *p, const lam_fockop *op, const lam_fock_conservation *c,
                          const options *o)
{
    lam_eigen_problem t;
    eigen_template(o, 2 * lam_fockop_lambda(op), &t);
    double base = (double)op->first[op->nflip] * 40;
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        lam_fock_sector s = fock_sector_of(e, c);
        if (e->nb >= 0) sector_must_fit(e, __builtin_popcountll(c->mask_a), "spin-up modes");
        e->dim = lam_fock_sector_dim(op, &s);
        for (e->subspace = 8; e->subspace >= 4; --e->subspace) {
            t.max_subspace = e->subspace;
            e->bytes = lam_fock_solve_bytes(op, &s, &t);
            if (e->subspace == 4 || (e->bytes != SIZE_MAX && base + (double)e->bytes <= o->max_memory)) break;
        }
    }
    lam_plan_check_memory(p, base, o->max_memory, o->bounds);
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
            bound_generic_block(op, &s, e, o);
        } else {
            lam_eigen_result lo, hi;
            t.label = label;
            t.max_subspace = e->subspace;
            lam_fock_solve(op, &s, &t, o->want_low ? &lo : NULL, o->want_high ? &hi : NULL);
            take_results(e, &lo, &hi, o);
        }
        run_block_done(&rs, e);
    }
}

/* ---- report ---- */

static void format_value(char *buf, size_t size, double v)
{
    if (isnan(v)) snprintf(buf, size, "-");
    else lam_format_double(buf, size, v);
}

static void resolve_mirrors(lam_plan *p)
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

/* Selected-CI sizes and the second-order estimates (value plus the
 * Epstein-Nesbet energy: estimates, not bounds): keys for one sector, a
 * `sci` line per sector otherwise. */
static void sci_report(lam_report *rep, const lam_plan_entry *e, const options *o, int keys)
{
    if (!e->sci_lo.dets && !e->sci_hi.dets) return;
    const lam_sci_result *lo = &e->sci_lo, *hi = &e->sci_hi;
    double elo = lo->value + lo->pt2, ehi = hi->value + hi->pt2;
    if (!keys) {
        char a[LAM_DOUBLE_BUF], b[LAM_DOUBLE_BUF], line[256];
        format_value(a, sizeof a, o->want_low ? elo : NAN);
        format_value(b, sizeof b, o->want_high ? ehi : NAN);
        snprintf(line, sizeof line, "%d\t%d\t%zu\t%zu\t%s\t%s", e->na, e->nb, lo->dets, hi->dets, a, b);
        lam_report_line(rep, "sci", line);
        return;
    }
    if (o->want_low) {
        lam_report_int(rep, "sci.dets_min", (long)lo->dets);
        lam_report_str(rep, "sci.stop_min", lam_sci_stop_name(lo->stop));
        lam_report_num(rep, "sci.estimate_min", elo);
    }
    if (o->want_high) {
        lam_report_int(rep, "sci.dets_max", (long)hi->dets);
        lam_report_str(rep, "sci.stop_max", lam_sci_stop_name(hi->stop));
        lam_report_num(rep, "sci.estimate_max", ehi);
    }
    if (o->want_low && o->want_high) lam_report_num(rep, "sci.half_range_estimate", 0.5 * (ehi - elo));
}

static int entry_exact(const lam_plan_entry *e, const options *o)
{
    return !e->use_bounds && (!o->want_low || e->exact_lo) && (!o->want_high || e->exact_hi);
}

static void sector_line(lam_report *rep, const lam_plan *p, const lam_plan_entry *e, const options *o)
{
    char lo[LAM_DOUBLE_BUF], hi[LAM_DOUBLE_BUF], how[48], line[256], nb[16];
    format_value(lo, sizeof lo, e->lo);
    format_value(hi, sizeof hi, e->hi);
    if (e->nb >= 0) snprintf(nb, sizeof nb, "%d", e->nb);
    else snprintf(nb, sizeof nb, "*");
    const char *status = entry_exact(e, o) ? "exact" : "bound";
    if (e->skipped) {
        int N = e->na + e->nb, a = lam_plan_smallest_sz_alpha(N);
        snprintf(how, sizeof how, "within:%d,%d", a, N - a);
        status = "-";
    } else if (e->mirror_of >= 0) {
        snprintf(how, sizeof how, "mirror:%d,%d", p->s[e->mirror_of].na, p->s[e->mirror_of].nb);
    } else {
        snprintf(how, sizeof how, "%s",
                 !e->use_bounds ? "computed" : e->sci_lo.dets || e->sci_hi.dets ? "selected-ci" : "rayleigh-ritz");
    }
    snprintf(line, sizeof line, "%d\t%s\t%s\t%s\t%s\t%s", e->na, nb, lo, hi, status, how);
    lam_report_line(rep, "sector", line);
}

/* The extremes over the entries that belong (all when electrons < 0), each
 * with whether it is certified: the lowest is exact when the entry that
 * holds it is, and no other entry has a bound below it. */
typedef struct {
    double lo, hi;
    int exact_lo, exact_hi;
} extremes_t;

static extremes_t extremes(const lam_plan *p, int electrons, const options *o)
{
    extremes_t x = {INFINITY, -INFINITY, 1, 1};
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

static void add_extremes(lam_report *rep, const char *prefix, const extremes_t *x, const options *o)
{
    char key[48];
    if (o->want_low) {
        snprintf(key, sizeof key, "%s_min", prefix);
        lam_report_num(rep, key, x->lo);
        snprintf(key, sizeof key, "%s_min_status", prefix);
        lam_report_str(rep, key, x->exact_lo ? "exact" : "bound");
    }
    if (o->want_high) {
        snprintf(key, sizeof key, "%s_max", prefix);
        lam_report_num(rep, key, x->hi);
        snprintf(key, sizeof key, "%s_max_status", prefix);
        lam_report_str(rep, key, x->exact_hi ? "exact" : "bound");
    }
    if (o->want_low && o->want_high) {
        /* (high - low)/2 bounds Delta E/2 from below whatever the status;
         * the same eigenvalue from both ends may differ in the last bit,
         * and a range is never negative */
        double half = 0.5 * (x->hi - x->lo);
        snprintf(key, sizeof key, "%s_half_range", prefix);
        lam_report_num(rep, key, half > 0 ? half : 0.0);
    }
}

/* Writes the report; returns the number of values that are bounds. */
/* The --tsv columns, the same for every input and option. */
static const char *const tsv_columns[] = {
    "label", "sector_na", "sector_nb", "sector_min", "sector_min_status", "sector_max",
    "sector_max_status", "sector_half_range", "sci.dets_min", "sci.stop_min", "sci.estimate_min",
    "sci.dets_max", "sci.stop_max", "sci.estimate_max", "sci.half_range_estimate", "fock_min",
    "fock_min_status", "fock_max", "fock_max_status", "fock_half_range", "electrons", "n_min",
    "n_min_status", "n_max", "n_max_status", "n_half_range", "max_residual", "status", NULL};

static int write_report(const lam_plan *p, int electrons, const options *o)
{
    lam_report *rep = lam_report_new();
    lam_report_columns(rep, tsv_columns);
    lam_report_str(rep, "label", o->label ? o->label : o->input ? o->input : "<stdin>");
    int solved = 0, bounds = 0;
    double max_res = 0;
    for (int i = 0; i < p->count; ++i) {
        const lam_plan_entry *e = &p->s[i];
        if (e->na >= 0) sector_line(rep, p, e, o);
        if (o->sector_na < 0 && e->mirror_of < 0) sci_report(rep, e, o, 0);
        if (e->skipped || e->mirror_of >= 0) continue;
        bounds += (o->want_low && (e->use_bounds || !e->exact_lo)) + (o->want_high && (e->use_bounds || !e->exact_hi));
        if (!e->use_bounds) {
            max_res = fmax(max_res, fmax(o->want_low ? e->res_lo : 0, o->want_high ? e->res_hi : 0));
            solved = 1;
        }
    }
    if (o->sector_na >= 0 && p->count == 1) {
        /* one sector: its values as keys too, so that --tsv carries them */
        const lam_plan_entry *e = &p->s[0];
        lam_report_int(rep, "sector_na", e->na);
        lam_report_int(rep, "sector_nb", e->nb);
        extremes_t x = extremes(p, -1, o);
        add_extremes(rep, "sector", &x, o);
        sci_report(rep, e, o, 1);
    }
    if (o->sector_na < 0) {
        extremes_t x = extremes(p, -1, o);
        add_extremes(rep, "fock", &x, o);
        if (electrons >= 0) {
            x = extremes(p, electrons, o);
            lam_report_int(rep, "electrons", electrons);
            add_extremes(rep, "n", &x, o);
        }
    }
    if (solved) lam_report_num(rep, "max_residual", max_res);
    lam_report_str(rep, "status", bounds ? "bound" : "exact");
    lam_error err;
    int rc = lam_report_save(rep, o->output, o->tsv, &err);
    lam_report_free(rep);
    if (rc) lam_error_exit(&err); /* the plan stays reachable from alive */
    return bounds;
}

/* ---- main ---- */

/* Objects alive while a check may still exit: reachable from here, so
 * that an error exit does not look like a leak to valgrind.  Still needed
 * while ci.c, fockop.c and the checks of this file exit; the stream reader
 * returns its errors (issue 13). */
static struct {
    lam_fockop *volatile op;
    lam_spinfree *volatile sf;
    lam_plan *volatile p;
} alive;

int main(int argc, char **argv)
{
    lam_set_program(argv[0]);
    options o;
    parse_options(argc, argv, &o);
    /* one thread unless asked: measured, a second BLAS or loop thread
     * gains little on this work and loses much on a shared machine */
    int threads = o.threads ? o.threads : 1;
    lam_blas_threads(threads);
    lam_ci_set_threads(threads);
    lam_fockop_set_threads(threads);
    lam_error err;
    lam_reader *r;
    lam_kind kind;
    if (lam_reader_open(o.input, &r, &err)) lam_error_exit(&err);
    if (o.kind) lam_reader_force_kind(r, o.kind);
    if (lam_reader_kind(r, &kind, &err)) {
        lam_reader_close(r);
        lam_error_exit(&err);
    }
    const char *src = lam_reader_name(r);
    lam_plan p = {NULL, 0};
    alive.p = &p;
    int electrons = (int)o.electrons;
    if (kind == LAM_KIND_SPINFREE) {
        lam_spinfree *sf;
        if (lam_spinfree_read(r, &sf, &err)) {
            lam_reader_close(r);
            lam_error_exit(&err);
        }
        alive.sf = sf;
        if (sf->n > 64) {
            lam_error_at(&err, LAM_EX_DATA, src, 0, "%d orbitals: lam-range handles at most 64", sf->n);
            lam_error_exit(&err);
        }
        if (lam_spinfree_validate(sf, src, NULL, &err) != 0) lam_error_exit(&err);
        sf = lam_ci_hermitian(sf);
        alive.sf = sf;
        if (electrons < 0 && o.electrons < 0) electrons = sf->electrons;
        if (electrons > 2 * sf->n) {
            lam_error fail_err;
            lam_error_set(&fail_err, LAM_EX_USAGE, "%d electrons do not fit in %d orbitals", electrons, sf->n);
            lam_error_exit(&fail_err);
        }
        if (o.multiplets < 0) o.multiplets = o.sector_na < 0;
        lam_plan_spinfree(&p, sf->n, o.sector_na, o.sector_nb, o.multiplets);
        solve_spinfree(&p, sf, &o);
        lam_spinfree_free(sf);
    } else if (kind == LAM_KIND_PAULI || kind == LAM_KIND_FERMION) {
        if (o.multiplets == 1) lam_usage_error("--multiplets needs a spinfree stream");
        lam_pauli_set set;
        lam_spin_order order;
        int jw;
        long header_electrons;
        if (lam_reader_meta_long(r, "electrons", -1, 0, 128, &header_electrons, &err)) {
            lam_reader_close(r);
            lam_error_exit(&err);
        }
        lam_fockop_read_stream(r, kind, &set, &order, &jw);
        if (electrons < 0) electrons = (int)header_electrons;
        lam_fockop *op = lam_fockop_new(&set, src);
        alive.op = op;
        lam_fock_conservation c = lam_fockop_conservation(op, order, jw);
        if (electrons > op->nqubits) {
            lam_error fail_err;
            lam_error_set(&fail_err, LAM_EX_USAGE, "%d electrons do not fit in %d modes", electrons, op->nqubits);
            lam_error_exit(&fail_err);
        }
        /* the header's electron number is a wish, not a demand: without
         * number conservation, report the Fock space only */
        if (o.electrons < 0 && !c.number_blocks) {
            if (electrons >= 0)
                lam_warn("note: %s, so only the Fock-space range is reported",
                         jw ? "the operator does not conserve the particle number"
                            : "not a Jordan-Wigner stream (no Hamming-weight sectors)");
            electrons = -1;
        }
        options og = o;
        og.electrons = electrons;
        plan_generic(&p, &c, op->nqubits, &og, src);
        solve_generic(&p, op, &c, &o);
        lam_fockop_free(op);
        lam_pauli_set_free(&set);
    } else { {
        lam_error fail_err;
        lam_error_at(&fail_err, LAM_EX_DATA, src, 0, "lam-range reads spinfree, fermion or pauli streams, not %s",
                     lam_kind_name(kind));
        lam_error_exit(&fail_err);
    }
    }
    lam_reader_close(r);
    resolve_mirrors(&p);
    int bounds = write_report(&p, electrons, &o);
    if (bounds)
        lam_warn("note: %d value%s not certified as the extreme eigenvalue (status bound: a Rayleigh "
                 "quotient, or an inner bound); see lam-range(1), section CERTIFICATE",
                 bounds, bounds > 1 ? "s are" : " is");
    lam_plan_free(&p);
    return 0;
}
