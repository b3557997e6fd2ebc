/* lam-scf - geometry to restricted Hartree-Fock to FCIDUMP. */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "basis.h"
#include "cli.h"
#include "fcidump.h"
#include "output.h"
#include "report.h"
#include "molecule.h"
#include "scf.h"
#include "spinfree.h"
#include "linalg.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [XYZ]\n"
           "Read a molecule (xyz file or stdin, angstrom), solve closed-shell restricted\n"
           "Hartree-Fock and write the molecular-orbital integrals as FCIDUMP (hartree, Eh).\n"
           "The constant holds the nuclear repulsion and the frozen-core energy.\n\n"
           "  -b, --basis NAME      sto-3g (default), 6-31g (H-Ar) or cc-pvdz (H-Ne)\n"
           "  -c, --charge Q        molecular charge (default 0)\n"
           "      --bohr            coordinates are in bohr\n"
           "      --cartesian       Cartesian d shells (6 functions)\n"
           "      --spherical       spherical d shells (5 functions); default: as the\n"
           "                        set is defined (Pople sets Cartesian, cc-pVDZ spherical)\n"
           "  -f, --frozen K        fold the K lowest orbitals (doubly occupied) into the\n"
           "                        constant and the one-body integrals (default 0)\n"
           "  -a, --active N        keep N orbitals after the frozen ones (default: all)\n"
           "      --energy-tol E    converged when the energy changes by less than E Eh\n"
           "                        between iterations (default 1e-10) ...\n"
           "      --gradient-tol G  ... and no element of the orbital gradient FDS-SDF\n"
           "                        (orthonormal basis, Eh) exceeds G (default 1e-8)\n"
           "      --max-iter N      give up after N iterations (default 100)\n"
           "      --diis-depth N    Fock matrices kept for DIIS, 0 (off) to 8 (default 8)\n"
           "      --start FROM      atoms (superposition of atomic densities, default) or\n"
           "                        core (core Hamiltonian)\n"
           "      --stability WHAT  follow (default): test the solution with the orbital\n"
           "                        Hessian and follow an instability down to a stable\n"
           "                        solution; check: stop (exit 65) on an instability;\n"
           "                        off: no test\n"
           "      --schwarz T       skip integral blocks bounded below T Eh (default 1e-12)\n"
           "      --cutoff T        write integrals with |value| > T Eh only (default:\n"
           "                        1e-10 x the largest integral; 0 writes every non-zero)\n"
           "  -M, --max-memory SIZE refuse (exit 75) work that needs more than SIZE bytes\n"
           "                        (suffix K, M or G; default: the installed memory)\n"
           "      --energy-only     write a key/value report (basis_functions, orbitals,\n"
           "                        electrons, nuclear_repulsion, scf_energy, iterations,\n"
           "                        homo, lumo, stability; energies in Eh) instead of the\n"
           "                        FCIDUMP\n"
           "  -t, --tsv             with --energy-only: one header row and one value row\n"
           "  -o, --output FILE     write to FILE instead of stdout\n"
           "      --progress        iteration table on stderr even when not a terminal\n"
           "  -j, --threads N       BLAS threads (default 1; OPENBLAS_NUM_THREADS is not read)\n"
           "  -q, --quiet           no progress and no summary line on stderr\n"
           "  -h, --help            show this help\n"
           "  -V, --version         show the version\n\n"
           "Example:\n"
           "  %s --basis 6-31g --frozen 1 water.xyz | lam-ints | lam-norm\n",
           lam_program(), lam_program());
    exit(0);
}


typedef struct {
    const char *basis, *input;
    int bohr, pure, energy_only;
    long charge, frozen, active;
    double cutoff;      /* < 0: LAM_SCF_CUTOFF_RELATIVE x the largest integral */
    lam_cli_values cli; /* -o, -t, -j, -M, -q */
    lam_scf_options scf;
} options;

static int parse_choice(const char *opt, const char *arg, const char *const *names, int count)
{
    for (int k = 0; k < count; ++k)
        if (strcmp(arg, names[k]) == 0) return k;
    if (count == 2) lam_usage_error("%s wants %s or %s, not '%s'", opt, names[0], names[1], arg);
    lam_usage_error("%s wants %s, %s or %s, not '%s'", opt, names[0], names[1], names[2], arg);
}

static void parse_options(int argc, char **argv, options *o)
{
    static const struct option opts[] = {
        LAM_CLI_BASIS, LAM_CLI_CHARGE, LAM_CLI_BOHR, LAM_CLI_CARTESIAN, LAM_CLI_SPHERICAL,
        LAM_CLI_FROZEN, LAM_CLI_ACTIVE, LAM_CLI_ENERGY_TOL, LAM_CLI_GRADIENT_TOL, LAM_CLI_MAX_ITER,
        LAM_CLI_DIIS_DEPTH, LAM_CLI_START_GUESS, LAM_CLI_STABILITY, LAM_CLI_SCHWARZ,
        LAM_CLI_CUTOFF, LAM_CLI_ENERGY_ONLY, LAM_CLI_MAX_MEMORY, LAM_CLI_TSV, LAM_CLI_OUTPUT,
        LAM_CLI_THREADS, LAM_CLI_STANDARD, LAM_CLI_END};
    static const char *const starts[] = {"core", "atoms"}; /* LAM_START_CORE, _ATOMS */
    static const char *const stabilities[] = {"follow", "check", "off"};
    memset(o, 0, sizeof *o);
    o->basis = "sto-3g";
    o->pure = -1;
    o->active = -1;
    o->cutoff = -1;
    o->cli.max_memory = lam_machine_memory();
    lam_scf_options_default(&o->scf);
    int c;
    while ((c = lam_cli_next(argc, argv, opts)) != -1) {
        switch (c) {
        case 'b': o->basis = optarg; break;
        case 'c': o->charge = lam_opt_long("--charge", optarg, -1000, 1000); break;
        case LAM_OPT_BOHR: o->bohr = 1; break;
        case LAM_OPT_CARTESIAN: o->pure = 0; break;
        case LAM_OPT_SPHERICAL: o->pure = 1; break;
        case 'f': o->frozen = lam_opt_long("--frozen", optarg, 0, 100000); break;
        case 'a': o->active = lam_opt_long("--active", optarg, 1, 100000); break;
        case LAM_OPT_ENERGY_TOL: o->scf.energy_tol = lam_opt_double("--energy-tol", optarg); break;
        case LAM_OPT_GRADIENT_TOL:
            o->scf.gradient_tol = lam_opt_double("--gradient-tol", optarg);
            break;
        case LAM_OPT_MAX_ITER: o->scf.max_iter = (int)lam_opt_long("--max-iter", optarg, 1, 100000); break;
        case LAM_OPT_DIIS_DEPTH:
            o->scf.diis_depth = (int)lam_opt_long("--diis-depth", optarg, 0, 8);
            break;
        case LAM_OPT_START_GUESS: o->scf.start = parse_choice("--start", optarg, starts, 2); break;
        case LAM_OPT_STABILITY:
            o->scf.stability = parse_choice("--stability", optarg, stabilities, 3);
            break;
        case LAM_OPT_SCHWARZ: o->scf.schwarz = lam_opt_double("--schwarz", optarg); break;
        case LAM_OPT_CUTOFF:
            o->cutoff = lam_opt_double("--cutoff", optarg);
            if (o->cutoff < 0) lam_usage_error("--cutoff must not be negative");
            break;
        case LAM_OPT_ENERGY_ONLY: o->energy_only = 1; break;
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    lam_blas_threads(o->cli.threads);
    if (o->scf.energy_tol <= 0 || o->scf.gradient_tol <= 0)
        lam_usage_error("--energy-tol and --gradient-tol must be positive");
    if (o->scf.schwarz < 0) lam_usage_error("--schwarz must not be negative");
    if (o->cli.tsv && !o->energy_only) lam_usage_error("--tsv goes with --energy-only");
    o->input = lam_cli_operand(argc, argv, "one molecule at a time");
    if (!lam_basis_set_find(o->basis))
        lam_usage_error("unknown basis '%s' (known: %s)", o->basis, lam_basis_set_names());
    o->scf.report = !o->cli.quiet && lam_progress_enabled();
}

/* The frozen/active choice must fit the molecule (code 64 otherwise). */
static int check_orbital_space(const options *o, const lam_scf *s, int *active, lam_error *err)
{
    if (o->frozen > s->nocc)
        return lam_error_set(err, LAM_EX_USAGE, "--frozen %ld exceeds the %d doubly occupied orbitals",
                             o->frozen, s->nocc);
    long left = s->nmo - o->frozen;
    if (o->active > left)
        return lam_error_set(err, LAM_EX_USAGE, "--active %ld exceeds the %ld orbitals above the frozen ones",
                             o->active, left);
    *active = (int)(o->active < 0 ? left : o->active);
    long electrons = 2L * (s->nocc - o->frozen);
    if (electrons > 2L * *active)
        return lam_error_set(err, LAM_EX_USAGE, "%ld electrons do not fit in %d active orbitals", electrons,
                             *active);
    if (*active < 1) return lam_error_set(err, LAM_EX_USAGE, "no active orbitals left");
    return 0;
}

static int check_memory(const options *o, int nbf, int active, lam_error *err)
{
    double n2 = 0.5 * nbf * (nbf + 1.0), m2 = 0.5 * active * (active + 1.0);
    /* SCF data, half-transformed and MO pair matrices, the dense operator */
    double bytes = lam_scf_bytes(nbf) + 8.0 * n2 * m2 + 8.0 * m2 * m2 +
                   (double)lam_spinfree_bytes(active);
    if (bytes > o->cli.max_memory)
        return lam_error_set(err, LAM_EX_MEMORY, "%d basis functions, %d active orbitals need about %.1f MiB, "
                             "over --max-memory %.1f MiB", nbf, active, bytes / 1048576.0,
                             o->cli.max_memory / 1048576.0);
    return 0;
}

/* Integrals that vanish by symmetry come out as rounding noise: below the
 * cutoff they are set to exactly zero (said on stderr). */
static void clean_integrals(const options *o, lam_spinfree *sf)
{
    double cutoff = o->cutoff >= 0 ? o->cutoff
                                   : LAM_SCF_CUTOFF_RELATIVE * lam_scf_integral_scale(sf);
    lam_scf_cleaning cl;
    lam_scf_clean_integrals(sf, cutoff, &cl);
    if (!o->cli.quiet)
        fprintf(stderr, "%s: %zu integrals written, %zu at or below the cutoff %.3g Eh set to "
                "zero (largest %.3g Eh)\n", lam_program(), cl.kept, cl.dropped, cutoff,
                cl.largest_dropped);
}

static int write_fcidump(FILE *out, lam_spinfree *sf, lam_error *err)
{
    lam_fcidump fd = {0};
    fd.op = sf;
    fd.norb = sf->n;
    fd.nelec = sf->electrons;
    fd.ms2 = 0;
    fd.isym = 1;
    fd.orbsym = lam_malloc((size_t)sf->n * sizeof *fd.orbsym);
    for (int i = 0; i < sf->n; ++i) fd.orbsym[i] = 1;
    int rc = lam_fcidump_write(out, &fd, 0.0, err);
    free(fd.orbsym);
    return rc;
}

static void write_energy_report(FILE *out, const options *o, const lam_scf *s)
{
    lam_report *rep = lam_report_new();
    lam_report_str(rep, "basis", lam_basis_set_find(o->basis)->name);
    lam_report_int(rep, "basis_functions", s->nbf);
    lam_report_int(rep, "orbitals", s->nmo);
    lam_report_int(rep, "electrons", 2L * s->nocc);
    lam_report_num(rep, "nuclear_repulsion", s->e_nuc);
    lam_report_num(rep, "scf_energy", s->energy);
    lam_report_int(rep, "iterations", s->iterations);
    lam_report_num(rep, "homo", s->eps[s->nocc - 1]);
    if (s->nocc < s->nmo) lam_report_num(rep, "lumo", s->eps[s->nocc]);
    if (!isnan(s->hessian_lowest)) {
        lam_report_num(rep, "stability_eigenvalue", s->hessian_lowest);
        lam_report_int(rep, "instabilities_followed", s->instabilities_followed);
    }
    lam_report_write(rep, out, o->cli.tsv);
    lam_report_free(rep);
}

/* What a run holds; main frees it on every exit path. */
typedef struct {
    lam_molecule *mol;
    lam_basis *basis;
    lam_scf *scf;
    lam_spinfree *op;
    lam_output out; /* -o, open from before the work; whole or not at all */
} scf_run;

static void scf_run_free(scf_run *run)
{
    lam_output_discard(&run->out);
    lam_spinfree_free(run->op);
    lam_scf_free(run->scf);
    lam_basis_free(run->basis);
    lam_molecule_free(run->mol);
}

static void say_energy(const lam_scf *s)
{
    fprintf(stderr, "%s: RHF energy %.12f Eh after %d iterations (%d basis functions, "
            "%d orbitals, E_nuc %.12f Eh; integrals %.2f s, iterations %.2f s)\n",
            lam_program(), s->energy, s->iterations, s->nbf, s->nmo, s->e_nuc,
            s->seconds_integrals, s->seconds_iterations);
    if (s->instabilities_followed)
        fprintf(stderr, "%s: note: the first RHF solution (%.12f Eh) was unstable (orbital "
                "Hessian eigenvalue %.3e Eh); %d instabilit%s followed down to this one\n",
                lam_program(), s->unstable_energy, s->unstable_eigenvalue,
                s->instabilities_followed, s->instabilities_followed == 1 ? "y" : "ies");
}

/* The SCF and its energy report or FCIDUMP; usage errors come back with
 * code LAM_EX_USAGE. */
static int scf(const options *o, scf_run *run, lam_error *err)
{
    if (lam_molecule_read_xyz(o->input, o->bohr, &run->mol, err)) return err->code;
    run->mol->charge = (int)o->charge;
    int electrons;
    if (lam_scf_closed_shell_electrons(run->mol, &electrons, err)) return err->code;
    if (lam_basis_build(run->mol, lam_basis_set_find(o->basis), o->pure, &run->basis, err)) return err->code;
    /* the largest possible active space bounds the memory before any work
     * (an --active above the orbitals is refused once they are known) */
    int nbf = run->basis->nbf;
    long above_frozen = nbf - o->frozen;
    long most_active = o->energy_only ? 1
                       : o->active > 0 && o->active < above_frozen ? o->active : above_frozen;
    if (check_memory(o, nbf, most_active > 0 ? (int)most_active : 1, err)) return err->code;
    if (lam_output_open(o->cli.output, &run->out, err)) return err->code;
    if (lam_scf_run(run->mol, run->basis, &o->scf, &run->scf, err)) return err->code;
    const lam_scf *s = run->scf;
    if (!o->cli.quiet) say_energy(s);
    if (o->energy_only) {
        write_energy_report(run->out.fp, o, s);
    } else {
        int active = 0;
        if (check_orbital_space(o, s, &active, err)) return err->code;
        run->op = lam_scf_mo_hamiltonian(s, (int)o->frozen, active);
        clean_integrals(o, run->op);
        if (write_fcidump(run->out.fp, run->op, err)) return err->code;
    }
    return lam_output_close(&run->out, 1, err);
}

int main(int argc, char **argv)
{
    options o;
    parse_options(argc, argv, &o);
    scf_run run = {0};
    lam_error err;
    int rc = scf(&o, &run, &err);
    scf_run_free(&run); /* a run that failed leaves no file behind */
    lam_exit_on_error(rc, &err);
    return 0;
}
