/* basis.c - place the shells of a basis set on the atoms, normalized. */
#include "basis.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "util.h"

const double lam_d_spherical[5][6] = {
    /* xx        xy   xz   yy                  yz   zz */
    {-0.5, 0, 0, -0.5, 0, 1},                       /* d0  (2z2-x2-y2)/2 */
    {0, 0, 1, 0, 0, 0},                             /* d+1 xz */
    {0, 0, 0, 0, 1, 0},                             /* d-1 yz */
    {0.86602540378443864676, 0, 0, -0.86602540378443864676, 0, 0}, /* d+2 (x2-y2) sqrt3/2 */
    {0, 1, 0, 0, 0, 0},                             /* d-2 xy */
};

const lam_basis_set_data *lam_basis_set_find(const char *name)
{
    for (const lam_basis_set_data *s = lam_basis_sets; s->name; ++s)
        if (strcasecmp(s->name, name) == 0) return s;
    return NULL;
}

const char *lam_basis_set_names(void)
{
    return "sto-3g, 6-31g, cc-pvdz";
}

static double double_factorial_odd(int n) /* (2n-1)!!, 1 for n <= 0 */
{
    double f = 1.0;
    for (int k = 2 * n - 1; k > 1; k -= 2) f *= k;
    return f;
}

double lam_cart_norm_ratio(int lx, int ly, int lz)
{
    return sqrt(double_factorial_odd(lx + ly + lz) /
                (double_factorial_odd(lx) * double_factorial_odd(ly) *
                 double_factorial_odd(lz)));
}

void lam_cart_powers(int l, int k, int *lx, int *ly, int *lz)
{
    int idx = 0;
    for (int a = l; a >= 0; --a)
        for (int b = l - a; b >= 0; --b, ++idx)
            if (idx == k) {
                *lx = a;
                *ly = b;
                *lz = l - a - b;
                return;
            }
    *lx = *ly = *lz = -1;
}

/* Coefficients of normalized x^l primitives, rescaled so that the
 * contracted function has unit norm. */
static void normalize_contraction(lam_shell *sh, const lam_shell_data *d)
{
    int l = sh->l;
    double dfact = double_factorial_odd(l);
    for (int i = 0; i < d->nprim; ++i) {
        double a = d->exp[i];
        sh->exp[i] = a;
        sh->coef[i] = d->coef[i] * pow(2.0 * a / LAM_PI, 0.75) *
                      pow(4.0 * a, 0.5 * l) / sqrt(dfact);
    }
    double norm2 = 0.0;
    for (int i = 0; i < d->nprim; ++i)
        for (int j = 0; j < d->nprim; ++j) {
            double p = sh->exp[i] + sh->exp[j];
            norm2 += sh->coef[i] * sh->coef[j] * pow(LAM_PI / p, 1.5) * dfact /
                     pow(2.0 * p, l);
        }
    for (int i = 0; i < d->nprim; ++i) sh->coef[i] /= sqrt(norm2);
}

int lam_basis_build(const lam_molecule *mol, const lam_basis_set_data *set, int pure,
                    lam_basis **out, lam_error *err)
{
    int use_pure = pure < 0 ? set->spherical : pure;
    *out = NULL;
    for (int a = 0; a < mol->natom; ++a) {
        int z = mol->z[a];
        if (z > set->maxz || !set->elements[z])
            return lam_error_at(err, LAM_EX_DATA, mol->source, mol->line[a],
                                "basis %s has no functions for %s", set->name,
                                lam_element_symbol(z));
    }
    lam_basis *b = lam_calloc(1, sizeof *b);
    int cap = 0;
    for (int a = 0; a < mol->natom; ++a) {
        for (const lam_shell_data *d = set->elements[mol->z[a]]; d->l >= 0; ++d) {
            if (b->nshell == cap) {
                cap = cap ? 2 * cap : 32;
                b->shell = lam_realloc(b->shell, lam_mul_size((size_t)cap, sizeof *b->shell));
            }
            lam_shell *sh = &b->shell[b->nshell++];
            memset(sh, 0, sizeof *sh);
            sh->l = d->l;
            sh->nprim = d->nprim;
            sh->atom = a;
            memcpy(sh->center, mol->xyz + 3 * a, sizeof sh->center);
            sh->ncart = (d->l + 1) * (d->l + 2) / 2;
            sh->pure = use_pure && d->l >= 2;
            sh->nfunc = sh->pure ? 2 * d->l + 1 : sh->ncart;
            sh->first = b->nbf;
            b->nbf += sh->nfunc;
            if (d->l > b->max_l) b->max_l = d->l;
            normalize_contraction(sh, d);
        }
    }
    *out = b;
    return 0;
}

void lam_basis_free(lam_basis *b)
{
    if (!b) return;
    free(b->shell);
    free(b);
}
