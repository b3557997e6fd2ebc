/* molecule.h - nuclei of a molecule: xyz reader, element table, nuclear
 * repulsion.  Coordinates are kept in bohr.
 */
#ifndef LAM_MOLECULE_H
#define LAM_MOLECULE_H

#include "util.h"

/* bohr in angstrom, CODATA 2014 (the value psi4 1.3 uses, so that the same
 * xyz file gives the same geometry in both programs). */
#define LAM_BOHR_ANGSTROM 0.52917721067

typedef struct {
    int natom;
    int *z;        /* atomic numbers */
    double *xyz;   /* 3*natom coordinates, bohr */
    long *line;    /* line of each atom in the source, for messages */
    char *source;  /* file name as given ("-" shown as "stdin") */
    int charge;
} lam_molecule;

/* Read an xyz file (NULL or "-" for stdin).  Either the common layout
 * (atom count, comment line, atoms) or atom lines only; an atom line is
 * "Symbol x y z" (symbol in any case, or an atomic number).  Coordinates
 * in angstrom unless bohr is non-zero.  0 and *out, or 66 when the file
 * cannot be opened, 65 with file:line for anything malformed (two atoms at
 * one place too), 74 on a read error; nothing is left allocated. */
int lam_molecule_read_xyz(const char *path, int bohr, lam_molecule **out, lam_error *err);
void lam_molecule_free(lam_molecule *mol);

/* Atomic number of an element symbol (H..Ar, case-insensitive), 0 if the
 * symbol is not in the table. */
int lam_element_z(const char *symbol);
/* Symbol of Z (1..18), "?" outside. */
const char *lam_element_symbol(int z);
#define LAM_MAX_Z 18

/* sum_{A<B} Z_A Z_B / R_AB in Eh; exit 65 when two nuclei coincide. */
double lam_molecule_nuclear_repulsion(const lam_molecule *mol);
/* sum Z - charge. */
int lam_molecule_electrons(const lam_molecule *mol);

#endif
