/* lam-range - extreme eigenvalues by (Na, Nb) sector, the Fock space and an
 * electron-number block, certified by residuals. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ci.h"
#include "cli.h"
#include "fockop.h"
#include "norm.h"
#include "pauli.h"
#include "plan.h"
#include "range.h"
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
           "                       smallest |Sz| per electron number (the default, which\n"
           "                       --multiplets asks for by name)\n"
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
    lam_range_options run; /* every option that changes the values */
    long electrons;
    int multiplets, threads;
    lam_kind kind;
    const char *input;
    lam_cli_values cli; /* -o, -t, -l, -M (-j is the program's own) */
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
    o->run.sector_na = (int)a;
    o->run.sector_nb = (int)b;
}

static void parse_options(int argc, char **argv, options *o)
{
    static const struct option opts[] = {
        LAM_CLI_ALLOW_EMPTY, LAM_CLI_SECTOR, LAM_CLI_ELECTRONS, LAM_CLI_LOWEST, LAM_CLI_HIGHEST,
        LAM_CLI_TOL, LAM_CLI_MAX_MEMORY, LAM_CLI_BOUNDS, LAM_CLI_BOUND_SUBSPACE,
        LAM_CLI_BOUND_ENERGY_TOL, LAM_CLI_MULTIPLETS, LAM_CLI_NO_MULTIPLETS, LAM_CLI_THREADS,
        LAM_CLI_KIND, LAM_CLI_CHECK_STEPS, LAM_CLI_RESUME, LAM_CLI_TSV, LAM_CLI_LABEL,
        LAM_CLI_OUTPUT, LAM_CLI_STANDARD, LAM_CLI_END};
    memset(o, 0, sizeof *o);
    o->run.sector_na = o->run.sector_nb = -1;
    o->electrons = -1;
    o->run.tol = 1e-9;
    o->run.bound_subspace = -1;
    o->run.bound_energy_tol = 1e-6;
    o->run.check_steps = 300;
    o->multiplets = -1; /* default: on for spinfree input without --sector */
    int low = 0, high = 0, c;
    while ((c = lam_cli_next(argc, argv, opts)) != -1) {
        switch (c) {
        case 's': parse_sector(optarg, o); break;
        case 'n': o->electrons = lam_opt_long("--electrons", optarg, 0, 128); break;
        case LAM_OPT_LOWEST: low = 1; break;
        case LAM_OPT_HIGHEST: high = 1; break;
        case LAM_OPT_TOL:
            o->run.tol = lam_opt_double("--tol", optarg);
            if (!(o->run.tol > 0)) lam_usage_error("--tol must be positive");
            break;
        case LAM_OPT_BOUNDS:
            /* --bounds=always: inner bounds even where an exact solve fits
             * (to compare the two, or when the exact one would be slow) */
            if (optarg && strcmp(optarg, "always") && strcmp(optarg, "past-memory"))
                lam_usage_error("--bounds takes always or past-memory, not '%s'", optarg);
            o->run.bounds = optarg && !strcmp(optarg, "always") ? 2 : 1;
            break;
        case LAM_OPT_BOUND_SUBSPACE: o->run.bound_subspace = (int)lam_opt_long("--bound-subspace", optarg, 1, 100000000); break;
        case LAM_OPT_BOUND_ENERGY_TOL:
            o->run.bound_energy_tol = lam_opt_double("--bound-energy-tol", optarg);
            if (!(o->run.bound_energy_tol >= 0)) lam_usage_error("--bound-energy-tol must not be negative");
            break;
        case LAM_OPT_MULTIPLETS: o->multiplets = 1; break;
        case LAM_OPT_NO_MULTIPLETS: o->multiplets = 0; break;
        case LAM_OPT_CHECK_STEPS: o->run.check_steps = (int)lam_opt_long("--check-steps", optarg, 0, 1000000); break;
        case LAM_OPT_RESUME: o->run.resume = optarg; break;
        case 'j': o->threads = (int)lam_opt_long("--threads", optarg, 1, 64); break;
        case 'k':
            o->kind = lam_cli_kind(optarg, ~LAM_CLI_KIND_BIT(LAM_KIND_FRAGMENTS));
            break;
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    o->input = lam_cli_operand(argc, argv, "one stream at a time");
    o->run.want_low = low || !high;
    o->run.want_high = high || !low;
    o->run.max_memory = o->cli.max_memory ? o->cli.max_memory : lam_machine_memory();
    if (o->multiplets == 1 && o->run.sector_na >= 0) lam_usage_error("--multiplets and --sector do not go together");
}

/* ---- report ---- */

static void format_value(char *buf, size_t size, double v)
{
    if (isnan(v)) snprintf(buf, size, "-");
    else lam_format_double(buf, size, v);
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
        format_value(a, sizeof a, o->run.want_low ? elo : NAN);
        format_value(b, sizeof b, o->run.want_high ? ehi : NAN);
        snprintf(line, sizeof line, "%d\t%d\t%zu\t%zu\t%s\t%s", e->na, e->nb, lo->dets, hi->dets, a, b);
        lam_report_line(rep, "sci", line);
        return;
    }
    if (o->run.want_low) {
        lam_report_int(rep, "sci.dets_min", (long)lo->dets);
        lam_report_str(rep, "sci.stop_min", lam_sci_stop_name(lo->stop));
        lam_report_num(rep, "sci.estimate_min", elo);
    }
    if (o->run.want_high) {
        lam_report_int(rep, "sci.dets_max", (long)hi->dets);
        lam_report_str(rep, "sci.stop_max", lam_sci_stop_name(hi->stop));
        lam_report_num(rep, "sci.estimate_max", ehi);
    }
    if (o->run.want_low && o->run.want_high) lam_report_num(rep, "sci.half_range_estimate", 0.5 * (ehi - elo));
}

static void sector_line(lam_report *rep, const lam_plan *p, const lam_plan_entry *e, const options *o)
{
    char lo[LAM_DOUBLE_BUF], hi[LAM_DOUBLE_BUF], how[48], line[256], nb[16];
    format_value(lo, sizeof lo, e->lo);
    format_value(hi, sizeof hi, e->hi);
    if (e->nb >= 0) snprintf(nb, sizeof nb, "%d", e->nb);
    else snprintf(nb, sizeof nb, "*");
    const char *status = lam_range_entry_exact(e, &o->run) ? "exact" : "bound";
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

static void add_extremes(lam_report *rep, const char *prefix, const lam_range_extremes *x, const options *o)
{
    char key[48];
    if (o->run.want_low) {
        snprintf(key, sizeof key, "%s_min", prefix);
        lam_report_num(rep, key, x->lo);
        snprintf(key, sizeof key, "%s_min_status", prefix);
        lam_report_str(rep, key, x->exact_lo ? "exact" : "bound");
    }
    if (o->run.want_high) {
        snprintf(key, sizeof key, "%s_max", prefix);
        lam_report_num(rep, key, x->hi);
        snprintf(key, sizeof key, "%s_max_status", prefix);
        lam_report_str(rep, key, x->exact_hi ? "exact" : "bound");
    }
    if (o->run.want_low && o->run.want_high) {
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

/* The report; *bounds counts the values that are not certified. */
static int write_report(const lam_plan *p, int electrons, const options *o, int *nbounds, lam_error *err)
{
    lam_report *rep = lam_report_new();
    lam_report_columns(rep, tsv_columns);
    lam_report_str(rep, "label", o->cli.label ? o->cli.label : o->input ? o->input : "<stdin>");
    int solved = 0, bounds = 0;
    double max_res = 0;
    for (int i = 0; i < p->count; ++i) {
        const lam_plan_entry *e = &p->s[i];
        if (e->na >= 0) sector_line(rep, p, e, o);
        if (o->run.sector_na < 0 && e->mirror_of < 0) sci_report(rep, e, o, 0);
        if (e->skipped || e->mirror_of >= 0) continue;
        bounds += (o->run.want_low && (e->use_bounds || !e->exact_lo)) + (o->run.want_high && (e->use_bounds || !e->exact_hi));
        if (!e->use_bounds) {
            max_res = fmax(max_res, fmax(o->run.want_low ? e->res_lo : 0, o->run.want_high ? e->res_hi : 0));
            solved = 1;
        }
    }
    if (o->run.sector_na >= 0 && p->count == 1) {
        /* one sector: its values as keys too, so that --tsv carries them */
        const lam_plan_entry *e = &p->s[0];
        lam_report_int(rep, "sector_na", e->na);
        lam_report_int(rep, "sector_nb", e->nb);
        lam_range_extremes x = lam_range_extremes_of(p, -1, &o->run);
        add_extremes(rep, "sector", &x, o);
        sci_report(rep, e, o, 1);
    }
    if (o->run.sector_na < 0) {
        lam_range_extremes x = lam_range_extremes_of(p, -1, &o->run);
        add_extremes(rep, "fock", &x, o);
        if (electrons >= 0) {
            x = lam_range_extremes_of(p, electrons, &o->run);
            lam_report_int(rep, "electrons", electrons);
            add_extremes(rep, "n", &x, o);
        }
    }
    if (solved) lam_report_num(rep, "max_residual", max_res);
    lam_report_str(rep, "status", bounds ? "bound" : "exact");
    int rc = lam_report_save(rep, o->cli.output, o->cli.tsv, err);
    lam_report_free(rep);
    *nbounds = bounds;
    return rc;
}

/* ---- main ---- */

/* What main holds, freed on every way out. */
typedef struct {
    lam_reader *r;
    lam_spinfree *sf;
    lam_fockop *op;
    lam_pauli_set set;
    int have_set;
    lam_plan p;
} held;

static void release(held *h)
{
    lam_fockop_free(h->op);
    if (h->have_set) lam_pauli_set_free(&h->set);
    if (h->sf) lam_spinfree_free(h->sf);
    if (h->r) lam_reader_close(h->r);
    lam_plan_free(&h->p);
    memset(h, 0, sizeof *h);
}

static int range_of_spinfree(held *h, const char *src, options *o, int *electrons, lam_error *err)
{
    int rc = lam_spinfree_read(h->r, &h->sf, err);
    if (rc) return rc;
    if (h->sf->n > 64)
        return lam_error_at(err, LAM_EX_DATA, src, 0, "%d orbitals: lam-range handles at most 64", h->sf->n);
    if ((rc = lam_spinfree_validate(h->sf, src, NULL, err))) return rc;
    h->sf = lam_ci_hermitian(h->sf);
    if (*electrons < 0 && o->electrons < 0) *electrons = h->sf->electrons;
    if (*electrons > 2 * h->sf->n)
        return lam_error_set(err, LAM_EX_USAGE, "%d electrons do not fit in %d orbitals", *electrons, h->sf->n);
    if (o->multiplets < 0) o->multiplets = o->run.sector_na < 0;
    lam_plan_spinfree(&h->p, h->sf->n, o->run.sector_na, o->run.sector_nb, o->multiplets);
    return lam_range_solve_spinfree(&h->p, h->sf, &o->run, err);
}

static int range_of_pauli(held *h, lam_kind kind, const char *src, const options *o, int *electrons,
                          lam_error *err)
{
    if (o->multiplets == 1) lam_usage_error("--multiplets needs a spinfree stream");
    lam_spin_order order;
    int jw;
    long header_electrons;
    if (lam_reader_meta_long(h->r, "electrons", -1, 0, 128, &header_electrons, err)) return err->code;
    if (lam_fockop_read_stream(h->r, kind, &h->set, &order, &jw, err)) return err->code;
    h->have_set = 1;
    if (*electrons < 0) *electrons = (int)header_electrons;
    if (lam_fockop_new(&h->set, src, &h->op, err)) return err->code;
    lam_fock_conservation c = lam_fockop_conservation(h->op, order, jw);
    if (*electrons > h->op->nqubits)
        return lam_error_set(err, LAM_EX_USAGE, "%d electrons do not fit in %d modes", *electrons,
                             h->op->nqubits);
    /* the header's electron number is a wish, not a demand: without
     * number conservation, report the Fock space only */
    if (o->electrons < 0 && !c.number_blocks) {
        if (*electrons >= 0)
            lam_warn("note: %s, so only the Fock-space range is reported",
                     jw ? "the operator does not conserve the particle number"
                        : "not a Jordan-Wigner stream (no Hamming-weight sectors)");
        *electrons = -1;
    }
    if (lam_range_plan_generic(&h->p, &c, h->op->nqubits, *electrons, &o->run, src, err)) return err->code;
    return lam_range_solve_generic(&h->p, h->op, &c, &o->run, err);
}

int main(int argc, char **argv)
{
    options o;
    parse_options(argc, argv, &o);
    /* one thread unless asked: measured, a second BLAS or loop thread
     * gains little on this work and loses much on a shared machine */
    int threads = o.threads ? o.threads : 1;
    lam_blas_threads(threads);
    lam_ci_set_threads(threads);
    lam_fockop_set_threads(threads);
    held h;
    memset(&h, 0, sizeof h);
    lam_error err;
    lam_error_clear(&err);
    lam_kind kind;
    if (lam_reader_open(o.input, &h.r, &err)) lam_error_exit(&err);
    if (o.kind) lam_reader_force_kind(h.r, o.kind);
    if (lam_reader_kind(h.r, &kind, &err)) {
        release(&h);
        lam_error_exit(&err);
    }
    const char *src = lam_reader_name(h.r);
    int electrons = (int)o.electrons;
    if (kind == LAM_KIND_SPINFREE)
        range_of_spinfree(&h, src, &o, &electrons, &err);
    else if (kind == LAM_KIND_PAULI || kind == LAM_KIND_FERMION)
        range_of_pauli(&h, kind, src, &o, &electrons, &err);
    else
        lam_error_at(&err, LAM_EX_DATA, src, 0, "lam-range reads spinfree, fermion or pauli streams, not %s",
                     lam_kind_name(kind));
    if (err.code) {
        release(&h);
        lam_error_exit(&err);
    }
    lam_reader_close(h.r);
    h.r = NULL;
    lam_range_resolve_mirrors(&h.p);
    int bounds;
    if (write_report(&h.p, electrons, &o, &bounds, &err)) {
        release(&h);
        lam_error_exit(&err);
    }
    if (bounds)
        lam_warn("note: %d value%s not certified as the extreme eigenvalue (status bound: a Rayleigh "
                 "quotient, or an inner bound); see lam-range(1), section CERTIFICATE",
                 bounds, bounds > 1 ? "s are" : " is");
    release(&h);
    return 0;
}
