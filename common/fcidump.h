/* fcidump.h - the FCIDUMP integral format (Knowles and Handy, 1989).
 *
 * Header: a Fortran namelist "&FCI NORB=..,NELEC=..,MS2=..,ORBSYM=..,
 * ISYM=.. &END" on one or many lines ("/" or "$END" also close it).
 * Body: "value i j k l" lines, orbitals from 1: i j k l > 0 is (ij|kl),
 * "i j 0 0" is h_ij, "0 0 0 0" the constant, "i 0 0 0" an orbital energy
 * (not part of the operator; counted and reported).  Every permutation of
 * the 8-fold symmetry of real orbitals is filled from one line.  Absent
 * integrals are zero by the format.
 */
#ifndef LAM_FCIDUMP_H
#define LAM_FCIDUMP_H

#include <stdio.h>
#include "spinfree.h"
#include "util.h"

typedef struct {
    lam_spinfree *op;   /* e0, h, g with electrons and ms2 set */
    int norb, nelec, ms2, isym;
    int *orbsym;        /* norb entries, 1 when absent */
    long orbital_energy_lines;
    char *source;       /* file name for messages ("<stdin>") */
    long ms2_line;      /* header line of MS2 (of &FCI when absent) */
    int idle_orbitals;  /* orbitals no integral line names */
    int has_constant;   /* a "0 0 0 0" line was read */
} lam_fcidump;

/* Read path (NULL or "-" for stdin, gzip allowed) into *out; 0, or 66
 * (err filled) when it cannot be opened, 65 with file:line for anything
 * malformed, 74 on a read error, including
 * NELEC and MS2 of different parity or |MS2| above what NELEC electrons in
 * NORB orbitals allow.  Warnings on stderr (not errors: the file can be
 * right) for orbitals that no integral line names and for a missing
 * constant line (the last line of a complete file; without it a file cut
 * at a line boundary would pass for a complete one). */
int lam_fcidump_read(const char *path, lam_fcidump **out, lam_error *err);
void lam_fcidump_free(lam_fcidump *fd);
/* Write header and the unique integrals with |value| > tol (tol = 0 writes
 * every non-zero), 17 significant digits.  0, or 74 on write errors. */
int lam_fcidump_write(FILE *out, const lam_fcidump *fd, double tol, lam_error *err);

#endif
