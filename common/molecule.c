/* molecule.c - xyz reader, element table, nuclear repulsion. */
#include "molecule.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "util.h"

static const char *const element_symbols[LAM_MAX_Z + 1] = {
    "?",  "H",  "He", "Li", "Be", "B",  "C",  "N",  "O",  "F",
    "Ne", "Na", "Mg", "Al", "Si", "P",  "S",  "Cl", "Ar"};

int lam_element_z(const char *symbol)
{
    for (int z = 1; z <= LAM_MAX_Z; ++z)
        if (strcasecmp(symbol, element_symbols[z]) == 0) return z;
    return 0;
}

const char *lam_element_symbol(int z)
{
    return z >= 1 && z <= LAM_MAX_Z ? element_symbols[z] : "?";
}

/* Split line into at most max whitespace-separated tokens (in place). */
static int split_fields(char *line, char **tok, int max)
{
    int n = 0;
    for (char *s = strtok(line, " \t\r\n"); s; s = strtok(NULL, " \t\r\n")) {
        if (n == max) return max + 1;
        tok[n++] = s;
    }
    return n;
}

static int is_blank(const char *s)
{
    for (; *s; ++s)
        if (!isspace((unsigned char)*s)) return 0;
    return 1;
}

static void add_atom(lam_molecule *mol, int *cap, int z, const double r[3],
                     long line)
{
    if (mol->natom == *cap) {
        *cap = *cap ? 2 * *cap : 16;
        mol->z = lam_realloc(mol->z, lam_mul_size((size_t)*cap, sizeof *mol->z));
        mol->line = lam_realloc(mol->line, lam_mul_size((size_t)*cap, sizeof *mol->line));
        mol->xyz = lam_realloc(mol->xyz, lam_mul_size((size_t)*cap, 3 * sizeof *mol->xyz));
    }
    mol->z[mol->natom] = z;
    mol->line[mol->natom] = line;
    memcpy(mol->xyz + 3 * (size_t)mol->natom, r, 3 * sizeof *r);
    ++mol->natom;
}

/* Element from a symbol or an atomic number; 0 when neither. */
static int parse_element(const char *tok)
{
    long zn;
    if (lam_parse_long(tok, &zn) == 0) return zn >= 1 && zn <= LAM_MAX_Z ? (int)zn : 0;
    return lam_element_z(tok);
}

static int parse_atom_line(lam_molecule *mol, int *cap, char *text, long lineno, double scale,
                           lam_error *err)
{
    char *tok[5];
    int n = split_fields(text, tok, 4);
    if (n != 4)
        return lam_error_at(err, LAM_EX_DATA, mol->source, lineno,
                            "expected \"element x y z\", found %s fields",
                            n > 4 ? "more than 4" : n == 3 ? "3" : n == 2 ? "2" : "1");
    int z = parse_element(tok[0]);
    if (!z)
        return lam_error_at(err, LAM_EX_DATA, mol->source, lineno,
                            "unknown element '%s' (lam-scf knows H to Ar)", tok[0]);
    double r[3];
    for (int k = 0; k < 3; ++k)
        if (lam_parse_double(tok[k + 1], &r[k]) != 0)
            return lam_error_at(err, LAM_EX_DATA, mol->source, lineno,
                                "coordinate '%s' is not a number", tok[k + 1]);
    for (int k = 0; k < 3; ++k) r[k] *= scale;
    add_atom(mol, cap, z, r, lineno);
    return 0;
}

/* Two atoms at one place would make the nuclear repulsion infinite. */
static int check_distinct_atoms(const lam_molecule *mol, lam_error *err)
{
    for (int a = 0; a < mol->natom; ++a)
        for (int b = 0; b < a; ++b) {
            const double *ra = mol->xyz + 3 * a, *rb = mol->xyz + 3 * b;
            double dx = ra[0] - rb[0], dy = ra[1] - rb[1], dz = ra[2] - rb[2];
            if (sqrt(dx * dx + dy * dy + dz * dz) < 1e-8)
                return lam_error_at(err, LAM_EX_DATA, mol->source, mol->line[a],
                                    "this atom sits on the atom of line %ld", mol->line[b]);
        }
    return 0;
}

/* The atom lines of f into mol. */
static int read_atoms(FILE *f, lam_molecule *mol, double scale, lam_error *err)
{
    char *line = NULL;
    size_t bufsize = 0;
    long lineno = 0, declared = -1, declared_line = 0;
    int cap = 0, skip_comment = 0, rc = 0;
    while (!rc && getline(&line, &bufsize, f) >= 0) {
        char *buf = line;
        ++lineno;
        if (skip_comment) { skip_comment = 0; continue; }
        if (is_blank(buf) || buf[strspn(buf, " \t")] == '#') continue;
        if (declared < 0 && mol->natom == 0) {
            char copy[64], *tok[2];
            snprintf(copy, sizeof copy, "%s", buf);
            long count;
            if (split_fields(copy, tok, 1) == 1 && lam_parse_long(tok[0], &count) == 0) {
                if (count < 1)
                    rc = lam_error_at(err, LAM_EX_DATA, mol->source, lineno,
                                      "atom count %ld is not positive", count);
                declared = count;
                declared_line = lineno;
                skip_comment = 1; /* the xyz comment line, whatever it holds */
                continue;
            }
        }
        if (declared >= 0 && mol->natom == declared)
            rc = lam_error_at(err, LAM_EX_DATA, mol->source, lineno,
                              "more atoms than the %ld declared on line %ld", declared,
                              declared_line);
        else
            rc = parse_atom_line(mol, &cap, buf, lineno, scale, err);
    }
    free(line);
    if (rc) return rc;
    if (ferror(f)) return lam_error_set(err, LAM_EX_IOERR, "%s: read error", mol->source);
    if (declared >= 0 && mol->natom != declared)
        return lam_error_at(err, LAM_EX_DATA, mol->source, declared_line,
                            "%ld atoms declared, %d found", declared, mol->natom);
    if (mol->natom == 0) return lam_error_at(err, LAM_EX_DATA, mol->source, lineno, "no atoms");
    return check_distinct_atoms(mol, err);
}

int lam_molecule_read_xyz(const char *path, int bohr, lam_molecule **out, lam_error *err)
{
    *out = NULL;
    int use_stdin = !path || strcmp(path, "-") == 0;
    FILE *f = use_stdin ? stdin : fopen(path, "r");
    if (!f)
        return lam_error_set(err, LAM_EX_NOINPUT, "cannot open %s: %s", path, strerror(errno));
    lam_molecule *mol = lam_calloc(1, sizeof *mol);
    mol->source = lam_strdup(use_stdin ? "stdin" : path);
    int rc = read_atoms(f, mol, bohr ? 1.0 : 1.0 / LAM_BOHR_ANGSTROM, err);
    if (!use_stdin) fclose(f);
    if (rc) lam_molecule_free(mol);
    else *out = mol;
    return rc;
}

void lam_molecule_free(lam_molecule *mol)
{
    if (!mol) return;
    LAM_FREE_ALL(mol->z, mol->xyz, mol->line, mol->source, mol);
}

double lam_molecule_nuclear_repulsion(const lam_molecule *mol)
{
    double e = 0.0;
    for (int a = 0; a < mol->natom; ++a)
        for (int b = 0; b < a; ++b) {
            const double *ra = mol->xyz + 3 * a, *rb = mol->xyz + 3 * b;
            double dx = ra[0] - rb[0], dy = ra[1] - rb[1], dz = ra[2] - rb[2];
            double r = sqrt(dx * dx + dy * dy + dz * dz);
            e += mol->z[a] * mol->z[b] / r; /* the reader refuses atoms at one place */
        }
    return e;
}

int lam_molecule_electrons(const lam_molecule *mol)
{
    int n = -mol->charge;
    for (int a = 0; a < mol->natom; ++a) n += mol->z[a];
    return n;
}
