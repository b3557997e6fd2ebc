/* scf.h - closed-shell restricted Hartree-Fock and molecular-orbital
 * integrals.
 *
 * Roothaan-Hall equations in an orthonormal basis (canonical
 * orthogonalization), started from a superposition of atomic densities
 * (spherically averaged atomic Hartree-Fock in the molecule's own
 * functions) or from the core Hamiltonian, Pulay DIIS (P. Pulay, Chem.
 * Phys. Lett. 73, 393 (1980)) on the commutator FDS - SDF.  Two-electron
 * integrals are computed once and stored with the 8-fold symmetry; the
 * Fock matrix comes from the "PK" supermatrix
 *     P_{ij,kl} = (ij|kl) - 1/4 [(ik|jl) + (il|jk)]
 * as one packed symmetric matrix-vector product per iteration.
 */
#ifndef LAM_SCF_H
#define LAM_SCF_H

#include "basis.h"
#include "molecule.h"
#include "spinfree.h"
#include "util.h"

/* Where the iterations start: atomic densities or the core Hamiltonian. */
enum { LAM_START_CORE, LAM_START_ATOMS };
/* What is done with the orbital-Hessian stability test. */
enum { LAM_STABILITY_FOLLOW, LAM_STABILITY_CHECK, LAM_STABILITY_OFF };

/* A lowest orbital-Hessian eigenvalue below this (Eh) is an instability. */
#define LAM_STABILITY_TOL 1e-6

typedef struct {
    int max_iter;        /* iterations before giving up */
    double energy_tol;   /* |energy change| in Eh */
    double gradient_tol; /* largest element of the orbital gradient FDS - SDF */
    int diis_depth;      /* stored Fock matrices, 0 turns DIIS off */
    double schwarz;      /* integral screening threshold, Eh */
    double s_tol;        /* overlap eigenvalues below are dropped */
    int start;           /* LAM_START_ATOMS or LAM_START_CORE */
    int stability;       /* LAM_STABILITY_FOLLOW, _CHECK or _OFF */
    int max_follow;      /* instabilities followed before giving up */
    int report;          /* iteration table on stderr */
} lam_scf_options;

void lam_scf_options_default(lam_scf_options *o);

typedef struct {
    int nbf, nmo, nocc;     /* nmo < nbf after linear dependencies */
    double e_nuc, energy;   /* Eh, energy includes e_nuc */
    double *hcore;          /* nbf x nbf */
    double *eri;            /* packed AO integrals (lam_int_eri) */
    double *pk;             /* packed PK supermatrix */
    double *c;              /* nbf x nmo, orbital p in column p */
    double *eps;            /* nmo orbital energies, ascending */
    int iterations;
    double seconds_integrals, seconds_iterations;
    /* stability test: lowest eigenvalue of the real RHF orbital Hessian
     * (A+B) of the final solution (NAN when not run), its residual, and
     * the number of instabilities followed to reach it */
    double hessian_lowest, hessian_residual;
    int instabilities_followed;
    /* energy and Hessian eigenvalue of the first unstable solution */
    double unstable_energy, unstable_eigenvalue;
} lam_scf;

/* Number of electrons of a closed shell into *electrons; fails with exit
 * 65 and the reason when mol with its charge is an open shell or has no
 * electrons. */
int lam_scf_closed_shell_electrons(const lam_molecule *mol, int *electrons, lam_error *err);

/* RHF ground state into *out.  Fails with exit 65 when the molecule is
 * not a closed shell, when the iterations do not converge, or when the
 * solution is unstable and o->stability is CHECK, or an instability could
 * not be followed to a stable solution. */
int lam_scf_run(const lam_molecule *mol, const lam_basis *b, const lam_scf_options *o, lam_scf **out,
                lam_error *err);
void lam_scf_free(lam_scf *s);

/* Bytes lam_scf_run keeps (integrals, supermatrix, matrices) for nbf
 * functions, for --max-memory. */
double lam_scf_bytes(int nbf);

/* Hamiltonian on orbitals frozen .. frozen+active-1: the frozen orbitals
 * (doubly occupied) fold into the constant and the one-body part,
 *   e0   = E_nuc + sum_c [2 h_cc + sum_d (2 (cc|dd) - (cd|dc))]
 *   h_pq = h_pq + sum_c [2 (pq|cc) - (pc|cq)],
 * (pq|rs) by a BLAS four-index transformation.  electrons is set to the
 * electrons left in the active orbitals. */
lam_spinfree *lam_scf_mo_hamiltonian(const lam_scf *s, int frozen, int active);

/* Default cutoff of the written integrals, relative to the largest one:
 * integrals that vanish by symmetry come out of the transformation as
 * rounding noise (measured up to 1e-12 of the largest integral; N2 in
 * STO-3G: 4290 of 5151 spin-free terms), real ones are many orders larger. */
#define LAM_SCF_CUTOFF_RELATIVE 1e-10

typedef struct {
    double scale;       /* largest |h_pq| or |(pq|rs)| */
    double cutoff;      /* what was applied, Eh */
    size_t kept, dropped; /* unique integrals (one per class of the 8-fold symmetry) */
    double largest_dropped;
} lam_scf_cleaning;

/* Largest |h_pq| or |(pq|rs)| of sf. */
double lam_scf_integral_scale(const lam_spinfree *sf);
/* Set every h_pq and (pq|rs) with |value| <= cutoff to exactly zero (all
 * symmetric copies alike) and count what was kept and dropped. */
void lam_scf_clean_integrals(lam_spinfree *sf, double cutoff, lam_scf_cleaning *out);

#endif
