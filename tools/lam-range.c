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
#include "pauli.h"
#include "report.h"
#include "sci.h"
#include "spinfree.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [STREAM]\n"
           "Lowest and highest eigenvalue (Eh) of an operator stream (spinfree, fermion or\n"
           "pauli) in every particle-number sector, over the whole Fock space and over the\n"
           "block of N electrons, each certified by the residual of its eigenvector.\n\n"
           "  -s, --sector NA,NB   only the sector of NA spin-up and NB spin-down electrons\n"
           "  -e, --electrons N    also report the N-electron block (default: the stream's\n"
           "                       electrons: line)\n"
           "      --lowest         only the lowest eigenvalues\n"
           "      --highest        only the highest eigenvalues\n"
           "      --tol T          residual norm that certifies a value, Eh (default 1e-9)\n"
           "      --max-memory M   refuse (exit 75) work needing more than M bytes (K, M, G\n"
           "                       suffixes; default: the machine's memory)\n"
           "      --bounds[=always]  past --max-memory (always: for every sector), report\n"
           "                       inner bounds (status bound) by selected CI instead\n"
           "                       (spinfree input; others: a small Rayleigh-Ritz)\n"
           "      --bound-subspace K  determinant budget of each end (default 100000; 200\n"
           "                       for the Rayleigh-Ritz of the generic path)\n"
           "      --bound-energy-tol E  stop selecting when a round changes the value by\n"
           "                       less than E Eh (default 1e-6)\n"
           "      --multiplets     spinfree input: per electron number solve only the\n"
           "                       sector of smallest |Sz| (enough for every extreme)\n"
           "      --threads T      threads for the matrix products (OpenBLAS) and for the\n"
           "                       CI and Pauli loops (default: 1 for the loops)\n"
           "      --kind K         kind of a stream without header (spinfree, fermion, pauli)\n"
           "      --progress       progress on stderr even when it is not a terminal\n"
           "      --quiet          no progress\n"
           "      --tsv            one header row and one value row (no sector lines)\n"
           "  -o, --output FILE    write the report to FILE instead of stdout\n"
           "  -h, --help           show this help\n"
           "      --version        show the version\n\n"
           "Sector lines: sector NA NB min max status how (tab separated; how: computed,\n"
           "mirror:NB,NA, within:NA,NB, selected-ci or rayleigh-ritz).  Then fock_min,\n"
           "fock_max, fock_half_range and, with an electron number, n_min, n_max,\n"
           "n_half_range (with --sector: sector_min, sector_max, sector_half_range);\n"
           "status: exact or bound.  Selected CI adds sci.dets_*, sci.stop_*,\n"
           "sci.estimate_* (second order: estimates, not bounds) or sci lines.\n\n"
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
    int bounds, bound_subspace, multiplets, threads, tsv;
    double bound_energy_tol;
    lam_kind kind;
    const char *output, *input;
} options;

static void parse_sector(const char *arg, options *o)
{
    char *comma = strchr(arg, ',');
    long a, b;
    if (!comma) lam_usage_error("--sector wants NA,NB, not '%s'", arg);
    char *left = lam_strdup(arg);
    left[comma - arg] = 0;
    int bad = lam_parse_long(left, &a) || lam_parse_long(comma + 1, &b) || a < 0 || b < 0 ||
              a > 64 || b > 64;
    free(left);
    if (bad) lam_usage_error("--sector wants two electron counts NA,NB, not '%s'", arg);
    o->sector_na = (int)a;
    o->sector_nb = (int)b;
}

static void parse_options(int argc, char **argv, options *o)
{
    enum { O_LOW = 256, O_HIGH, O_TOL, O_MEM, O_BOUNDS, O_BSUB, O_BTOL, O_MULT, O_THREADS, O_KIND,
           O_PROGRESS, O_QUIET, O_TSV, O_VERSION };
    static const struct option opts[] = {
        {"sector", required_argument, 0, 's'}, {"electrons", required_argument, 0, 'e'},
        {"lowest", no_argument, 0, O_LOW}, {"highest", no_argument, 0, O_HIGH},
        {"tol", required_argument, 0, O_TOL}, {"max-memory", required_argument, 0, O_MEM},
        {"bounds", optional_argument, 0, O_BOUNDS}, {"bound-subspace", required_argument, 0, O_BSUB},
        {"bound-energy-tol", required_argument, 0, O_BTOL},
        {"multiplets", no_argument, 0, O_MULT}, {"threads", required_argument, 0, O_THREADS},
        {"kind", required_argument, 0, O_KIND}, {"progress", no_argument, 0, O_PROGRESS},
        {"quiet", no_argument, 0, O_QUIET}, {"tsv", no_argument, 0, O_TSV},
        {"output", required_argument, 0, 'o'}, {"help", no_argument, 0, 'h'},
        {"version", no_argument, 0, O_VERSION}, {0, 0, 0, 0}};
    memset(o, 0, sizeof *o);
    o->sector_na = o->sector_nb = -1;
    o->electrons = -1;
    o->tol = 1e-9;
    o->bound_subspace = -1;
    o->bound_energy_tol = 1e-6;
    int low = 0, high = 0, c;
    while ((c = getopt_long(argc, argv, "s:e:o:h", opts, NULL)) != -1) {
        switch (c) {
        case 's': parse_sector(optarg, o); break;
        case 'e': o->electrons = lam_opt_long("--electrons", optarg, 0, 128); break;
        case O_LOW: low = 1; break;
        case O_HIGH: high = 1; break;
        case O_TOL:
            o->tol = lam_opt_double("--tol", optarg);
            if (!(o->tol > 0)) lam_usage_error("--tol must be positive");
            break;
        case O_MEM: o->max_memory = lam_opt_size("--max-memory", optarg); break;
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
        case O_THREADS: o->threads = (int)lam_opt_long("--threads", optarg, 1, 1024); break;
        case O_KIND:
            if (lam_kind_parse(optarg, &o->kind) || o->kind == LAM_KIND_FRAGMENTS)
                lam_usage_error("--kind wants spinfree, fermion or pauli, not '%s'", optarg);
            break;
        case O_PROGRESS: lam_progress_set(1); break;
        case O_QUIET: lam_progress_set(0); break;
        case O_TSV: o->tsv = 1; break;
        case 'o': o->output = optarg; break;
        case 'h': usage();
        case O_VERSION: lam_print_version();
        default: lam_usage_error("unknown option");
        }
    }
    if (argc - optind > 1) lam_usage_error("one stream at a time");
    o->input = optind < argc ? argv[optind] : NULL;
    o->want_low = low || !high;
    o->want_high = high || !low;
    if (!o->max_memory) o->max_memory = lam_machine_memory();
}

/* ---- the plan: one entry a sector ---- */

typedef struct {
    int na, nb;        /* nb = -1: a total-number block (spin not conserved) */
    int mirror_of;     /* index of the entry whose values it copies, or -1 */
    int skipped;       /* --multiplets: not solved */
    int use_bounds;
    int subspace;      /* Davidson vectors that fit the memory */
    size_t dim, bytes;
    double lo, hi, res_lo, res_hi;
    int exact_lo, exact_hi;
    lam_sci_result sci_lo, sci_hi; /* --bounds on spinfree input */
} sector_plan;

typedef struct {
    sector_plan *s;
    int count;
} plan;

static void plan_add(plan *p, int na, int nb)
{
    p->s = lam_realloc(p->s, (size_t)(p->count + 1) * sizeof *p->s);
    sector_plan *e = &p->s[p->count++];
    memset(e, 0, sizeof *e);
    e->na = na;
    e->nb = nb;
    e->mirror_of = -1;
    e->lo = e->hi = NAN;
}

static int plan_find(const plan *p, int na, int nb)
{
    for (int i = 0; i < p->count; ++i)
        if (p->s[i].na == na && p->s[i].nb == nb) return i;
    return -1;
}

static int smallest_sz_alpha(int n_electrons) { return (n_electrons + 1) / 2; }

/* Spin-free operators: a sector with Na < Nb has the spectrum of (Nb, Na)
 * (spin flip), and with --multiplets only the smallest |Sz| is solved. */
static void plan_spinfree(plan *p, int n, const options *o)
{
    if (o->sector_na >= 0) {
        plan_add(p, o->sector_na, o->sector_nb);
        return;
    }
    for (int na = 0; na <= n; ++na)
        for (int nb = 0; nb <= n; ++nb) plan_add(p, na, nb);
    for (int i = 0; i < p->count; ++i) {
        sector_plan *e = &p->s[i];
        int N = e->na + e->nb;
        if (o->multiplets && e->na != smallest_sz_alpha(N)) {
            e->skipped = 1;
            continue;
        }
        if (e->na < e->nb && !o->multiplets) e->mirror_of = plan_find(p, e->nb, e->na);
    }
}

/* ---- memory ---- */

static char *format_bytes(double b, char *buf, size_t size)
{
    const char *u[] = {"bytes", "KiB", "MiB", "GiB", "TiB", "PiB"};
    int k = 0;
    while (b >= 1024 && k < 5) {
        b /= 1024;
        ++k;
    }
    snprintf(buf, size, k ? "%.1f %s" : "%.0f %s", b, u[k]);
    return buf;
}

static void check_memory(plan *p, double base, const options *o)
{
    for (int i = 0; i < p->count; ++i) {
        sector_plan *e = &p->s[i];
        if (e->skipped || e->mirror_of >= 0) continue;
        double need = e->bytes == SIZE_MAX ? INFINITY : base + (double)e->bytes;
        if (need <= o->max_memory && o->bounds != 2) continue;
        if (o->bounds) {
            e->use_bounds = 1;
            continue;
        }
        char b1[32], b2[32], what[48];
        if (e->nb >= 0) snprintf(what, sizeof what, "sector (%d,%d)", e->na, e->nb);
        else snprintf(what, sizeof what, "the %d-electron block", e->na);
        if (isinf(need))
            lam_fail(LAM_EX_MEMORY, "%s cannot be held (dimension beyond reach); --bounds gives inner bounds",
                     what);
        lam_fail(LAM_EX_MEMORY,
                 "%s would need %s for an exact solve (dimension %zu), over --max-memory %s; "
                 "--bounds gives inner bounds instead",
                 what, format_bytes(need, b1, sizeof b1), e->dim,
                 format_bytes(o->max_memory, b2, sizeof b2));
    }
}

/* ---- solving ---- */

static void eigen_template(const options *o, lam_eigen_problem *t)
{
    lam_eigen_defaults(t);
    t->tol = o->tol;
    t->max_iter = 1000;
}

static void take_results(sector_plan *e, const lam_eigen_result *lo, const lam_eigen_result *hi,
                         const options *o)
{
    if (o->want_low) {
        e->lo = lo->value;
        e->res_lo = lo->residual;
        e->exact_lo = lo->converged;
    }
    if (o->want_high) {
        e->hi = hi->value;
        e->res_hi = hi->residual;
        e->exact_hi = hi->converged;
    }
}

/* --bounds past exact size: each end by selected CI, whose value is the
 * Rayleigh quotient of its vector (lowest >= E_min, highest <= E_max). */
static void selected_ci_bounds(const lam_spinfree *sf, sector_plan *e, const options *o, const char *label)
{
    lam_sci_options so;
    lam_sci_defaults(&so);
    so.max_dets = o->bound_subspace > 0 ? (size_t)o->bound_subspace : 100000;
    so.max_bytes = o->max_memory;
    so.energy_tol = o->bound_energy_tol;
    for (int top = 0; top < 2; ++top) {
        if (!(top ? o->want_high : o->want_low)) continue;
        char l[96];
        snprintf(l, sizeof l, "%s %s", label, top ? "highest" : "lowest");
        so.label = l;
        so.highest = top;
        lam_sci_result *r = top ? &e->sci_hi : &e->sci_lo;
        lam_sci_solve(sf, e->na, e->nb, &so, r);
        *(top ? &e->hi : &e->lo) = r->value;
    }
}

static void solve_spinfree(plan *p, const lam_spinfree *sf, const options *o)
{
    lam_eigen_problem t;
    eigen_template(o, &t);
    lam_ci_ham *h = lam_ci_ham_new(sf);
    double base = (double)lam_spinfree_bytes(sf->n) +
                  (double)h->npair * h->npair * sizeof(double) * 2;
    for (int i = 0; i < p->count; ++i) {
        sector_plan *e = &p->s[i];
        if (e->na > sf->n || e->nb > sf->n)
            lam_fail(LAM_EX_USAGE, "sector (%d,%d) does not exist: %d orbitals hold at most %d electrons of each spin",
                     e->na, e->nb, sf->n, sf->n);
        e->dim = lam_ci_sector_dim(sf->n, e->na, e->nb);
        /* fewer Davidson vectors (more iterations) before refusing */
        for (e->subspace = 8; e->subspace >= 4; --e->subspace) {
            t.max_subspace = e->subspace;
            e->bytes = lam_ci_solve_bytes(h, e->na, e->nb, &t);
            if (e->subspace == 4 || (e->bytes != SIZE_MAX && base + (double)e->bytes <= o->max_memory)) break;
        }
    }
    check_memory(p, base, o);
    for (int i = 0; i < p->count; ++i) {
        sector_plan *e = &p->s[i];
        if (e->skipped || e->mirror_of >= 0) continue;
        char label[64];
        snprintf(label, sizeof label, "sector (%d,%d)", e->na, e->nb);
        lam_progress("%s: dimension %zu%s", label, e->dim, e->use_bounds ? ", bounds only" : "");
        if (e->use_bounds) {
            selected_ci_bounds(sf, e, o, label);
            continue;
        }
        lam_eigen_result lo, hi;
        t.label = label;
        t.max_subspace = e->subspace;
        lam_ci_solve(h, e->na, e->nb, &t, o->want_low ? &lo : NULL, o->want_high ? &hi : NULL);
        take_results(e, &lo, &hi, o);
    }
    lam_ci_ham_free(h);
}

/* ---- the generic path: pauli and fermion streams ---- */

static lam_fock_sector fock_sector_of(const sector_plan *e, const lam_fock_conservation *c)
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

static void plan_generic(plan *p, const lam_fock_conservation *c, int nq, const options *o, const char *src)
{
    if ((o->sector_na >= 0 || o->electrons >= 0) && !c->number_blocks)
        lam_fail_at(LAM_EX_DATA, src, 0,
                    "the operator changes the particle number (or is not a Jordan-Wigner "
                    "stream): it has no electron-number sectors");
    if (o->sector_na >= 0) {
        if (!c->spin_sectors)
            lam_fail_at(LAM_EX_DATA, src, 0,
                        "the operator does not conserve the spin-up and spin-down numbers "
                        "separately: --sector has no meaning for it");
        plan_add(p, o->sector_na, o->sector_nb);
        return;
    }
    if (c->spin_sectors) {
        for (int na = 0; na <= nq / 2; ++na)
            for (int nb = 0; nb <= nq / 2; ++nb) plan_add(p, na, nb);
    } else if (c->number_blocks) {
        for (int n = 0; n <= nq; ++n) plan_add(p, n, -1);
    } else {
        plan_add(p, -1, -1); /* the whole Fock space */
    }
}

static void solve_generic(plan *p, const lam_fockop *op, const lam_fock_conservation *c, const options *o)
{
    lam_eigen_problem t;
    eigen_template(o, &t);
    double base = (double)op->first[op->nflip] * 40;
    for (int i = 0; i < p->count; ++i) {
        sector_plan *e = &p->s[i];
        lam_fock_sector s = fock_sector_of(e, c);
        if (e->nb >= 0 && (e->na > __builtin_popcountll(c->mask_a) || e->nb > __builtin_popcountll(c->mask_b)))
            lam_fail(LAM_EX_USAGE, "sector (%d,%d) does not exist: %d qubits hold at most %d electrons of each spin",
                     e->na, e->nb, op->nqubits, op->nqubits / 2);
        e->dim = lam_fock_sector_dim(op, &s);
        for (e->subspace = 8; e->subspace >= 4; --e->subspace) {
            t.max_subspace = e->subspace;
            e->bytes = lam_fock_solve_bytes(op, &s, &t);
            if (e->subspace == 4 || (e->bytes != SIZE_MAX && base + (double)e->bytes <= o->max_memory)) break;
        }
    }
    check_memory(p, base, o);
    for (int i = 0; i < p->count; ++i) {
        sector_plan *e = &p->s[i];
        lam_fock_sector s = fock_sector_of(e, c);
        char label[64];
        if (e->na < 0) snprintf(label, sizeof label, "Fock space");
        else if (e->nb < 0) snprintf(label, sizeof label, "%d-electron block", e->na);
        else snprintf(label, sizeof label, "sector (%d,%d)", e->na, e->nb);
        lam_progress("%s: dimension %zu%s", label, e->dim, e->use_bounds ? ", bounds only" : "");
        if (e->use_bounds) {
            lam_fock_bounds(op, &s, o->bound_subspace > 0 ? o->bound_subspace : 200, o->want_low ? &e->lo : NULL,
                            o->want_high ? &e->hi : NULL);
            continue;
        }
        lam_eigen_result lo, hi;
        t.label = label;
        t.max_subspace = e->subspace;
        lam_fock_solve(op, &s, &t, o->want_low ? &lo : NULL, o->want_high ? &hi : NULL);
        take_results(e, &lo, &hi, o);
    }
}

/* ---- report ---- */

static void format_value(char *buf, size_t size, double v)
{
    if (isnan(v)) snprintf(buf, size, "-");
    else lam_format_double(buf, size, v);
}

static void resolve_mirrors(plan *p)
{
    for (int i = 0; i < p->count; ++i) {
        sector_plan *e = &p->s[i];
        if (e->mirror_of < 0) continue;
        const sector_plan *m = &p->s[e->mirror_of];
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
static void sci_report(lam_report *rep, const sector_plan *e, const options *o, int keys)
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

static int entry_exact(const sector_plan *e, const options *o)
{
    return !e->use_bounds && (!o->want_low || e->exact_lo) && (!o->want_high || e->exact_hi);
}

static void sector_line(lam_report *rep, const plan *p, const sector_plan *e, const options *o)
{
    char lo[LAM_DOUBLE_BUF], hi[LAM_DOUBLE_BUF], how[48], line[256], nb[16];
    format_value(lo, sizeof lo, e->lo);
    format_value(hi, sizeof hi, e->hi);
    if (e->nb >= 0) snprintf(nb, sizeof nb, "%d", e->nb);
    else snprintf(nb, sizeof nb, "*");
    const char *status = entry_exact(e, o) ? "exact" : "bound";
    if (e->skipped) {
        int N = e->na + e->nb, a = smallest_sz_alpha(N);
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

/* Extremes over the entries that belong (all when electrons < 0). */
static int extremes(const plan *p, int electrons, const options *o, double *lo, double *hi)
{
    int exact = 1, any = 0;
    *lo = INFINITY;
    *hi = -INFINITY;
    for (int i = 0; i < p->count; ++i) {
        const sector_plan *e = &p->s[i];
        if (e->skipped) continue;
        int N = e->nb >= 0 ? e->na + e->nb : e->na;
        if (electrons >= 0 && e->na >= 0 && N != electrons) continue;
        any = 1;
        if (o->want_low && e->lo < *lo) *lo = e->lo;
        if (o->want_high && e->hi > *hi) *hi = e->hi;
        exact &= entry_exact(e, o);
    }
    if (!any) *lo = *hi = NAN;
    return exact;
}

static void add_extremes(lam_report *rep, const char *prefix, double lo, double hi, const options *o)
{
    char key[32];
    if (o->want_low) {
        snprintf(key, sizeof key, "%s_min", prefix);
        lam_report_num(rep, key, lo);
    }
    if (o->want_high) {
        snprintf(key, sizeof key, "%s_max", prefix);
        lam_report_num(rep, key, hi);
    }
    if (o->want_low && o->want_high) {
        snprintf(key, sizeof key, "%s_half_range", prefix);
        lam_report_num(rep, key, 0.5 * (hi - lo));
    }
}

static void write_report(const plan *p, int electrons, const options *o)
{
    lam_report *rep = lam_report_new();
    int exact = 1, solved = 0;
    double max_res = 0;
    for (int i = 0; i < p->count; ++i) {
        const sector_plan *e = &p->s[i];
        if (e->na >= 0) sector_line(rep, p, e, o);
        if (o->sector_na < 0 && e->mirror_of < 0) sci_report(rep, e, o, 0);
        if (e->skipped) continue;
        exact &= entry_exact(e, o);
        if (!e->use_bounds) {
            max_res = fmax(max_res, fmax(e->res_lo, e->res_hi));
            solved = 1;
        }
    }
    if (o->sector_na >= 0 && p->count == 1) {
        /* one sector: its values as keys too, so that --tsv carries them */
        const sector_plan *e = &p->s[0];
        lam_report_int(rep, "sector_na", e->na);
        lam_report_int(rep, "sector_nb", e->nb);
        add_extremes(rep, "sector", e->lo, e->hi, o);
        sci_report(rep, e, o, 1);
    }
    if (o->sector_na < 0) {
        double lo, hi;
        extremes(p, -1, o, &lo, &hi);
        add_extremes(rep, "fock", lo, hi, o);
        if (electrons >= 0) {
            extremes(p, electrons, o, &lo, &hi);
            lam_report_int(rep, "electrons", electrons);
            add_extremes(rep, "n", lo, hi, o);
        }
    }
    if (solved) lam_report_num(rep, "max_residual", max_res);
    lam_report_str(rep, "status", exact ? "exact" : "bound");
    lam_report_save(rep, o->output, o->tsv);
    lam_report_free(rep);
}

/* ---- main ---- */

/* Objects alive while a check may still exit: reachable from here, so
 * that an error exit does not look like a leak to valgrind. */
static struct {
    lam_fockop *volatile op;
    lam_spinfree *volatile sf;
    plan *volatile p;
} alive;

int main(int argc, char **argv)
{
    lam_set_program(argv[0]);
    options o;
    parse_options(argc, argv, &o);
    if (o.threads) {
        openblas_set_num_threads(o.threads);
        lam_ci_set_threads(o.threads);
        lam_fockop_set_threads(o.threads);
    }
    lam_reader *r = lam_reader_open(o.input);
    if (o.kind) lam_reader_force_kind(r, o.kind);
    lam_kind kind = lam_reader_kind(r);
    const char *src = lam_reader_name(r);
    plan p = {NULL, 0};
    alive.p = &p;
    int electrons = (int)o.electrons;
    if (kind == LAM_KIND_SPINFREE) {
        lam_spinfree *sf = lam_spinfree_read(r);
        alive.sf = sf;
        if (sf->n > 64)
            lam_fail_at(LAM_EX_DATA, src, 0, "%d orbitals: lam-range handles at most 64", sf->n);
        sf = lam_ci_hermitian(sf, src);
        alive.sf = sf;
        if (electrons < 0 && o.electrons < 0) electrons = sf->electrons;
        if (electrons > 2 * sf->n)
            lam_fail(LAM_EX_USAGE, "%d electrons do not fit in %d orbitals", electrons, sf->n);
        if (o.multiplets && o.sector_na >= 0)
            lam_usage_error("--multiplets and --sector do not go together");
        plan_spinfree(&p, sf->n, &o);
        solve_spinfree(&p, sf, &o);
        lam_spinfree_free(sf);
    } else if (kind == LAM_KIND_PAULI || kind == LAM_KIND_FERMION) {
        if (o.multiplets) lam_usage_error("--multiplets needs a spinfree stream");
        lam_pauli_set set;
        lam_spin_order order;
        int jw;
        long header_electrons = lam_reader_meta_long(r, "electrons", -1, 0, 128);
        lam_fockop_read_stream(r, kind, &set, &order, &jw);
        if (electrons < 0) electrons = (int)header_electrons;
        lam_fockop *op = lam_fockop_new(&set, src);
        alive.op = op;
        lam_fock_conservation c = lam_fockop_conservation(op, order, jw);
        if (electrons > op->nqubits)
            lam_fail(LAM_EX_USAGE, "%d electrons do not fit in %d modes", electrons, op->nqubits);
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
    } else {
        lam_fail_at(LAM_EX_DATA, src, 0, "lam-range reads spinfree, fermion or pauli streams, not %s",
                    lam_kind_name(kind));
    }
    lam_reader_close(r);
    resolve_mirrors(&p);
    write_report(&p, electrons, &o);
    free(p.s);
    return 0;
}
