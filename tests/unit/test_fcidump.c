/* Unit tests of common/fcidump.c: header variants and symmetry filling. */
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "fcidump.h"
#include "tap.h"

static char path[] = "/tmp/lam-test-fcidump-XXXXXX";

static lam_fcidump *read_text(const char *text)
{
    FILE *f = fopen(path, "w");
    fputs(text, f);
    fclose(f);
    lam_fcidump *fd = NULL;
    lam_error err;
    if (lam_fcidump_read(path, &fd, &err) != 0) printf("# unexpected error: %s\n", err.msg);
    return fd;
}

/* The error a bad file returns: code, line and message; nothing is left
 * allocated (the leak checkers see it). */
static void check_refused(const char *text, long line, const char *msg, const char *name)
{
    FILE *f = fopen(path, "w");
    fputs(text, f);
    fclose(f);
    lam_fcidump *fd = (lam_fcidump *)1;
    lam_error err;
    int rc = lam_fcidump_read(path, &fd, &err);
    int ok = rc == LAM_EX_DATA && err.code == LAM_EX_DATA && err.line == line &&
             strcmp(err.file, path) == 0 && strstr(err.msg, msg) != NULL && fd == NULL;
    tap_ok(ok, name);
    if (!ok) printf("#   got %d at line %ld: %s\n", rc, err.line, err.msg);
}

int main(void)
{
    int fd = mkstemp(path);
    close(fd);

    /* One-line header, lower case, D exponents, "/" terminator: the
     * variants of the format's original definition (Knowles and Handy,
     * Comput. Phys. Commun. 54, 75 (1989)) and of later writers. */
    lam_fcidump *d = read_text(" &fci norb=2, nelec=2, ms2=0, orbsym=1,1, isym=1 /\n"
                               "0.5D0 1 1 1 1\n0.25D0 2 1 2 1\n-1.0 1 1 0 0\n0.7 0 0 0 0\n");
    tap_ok(d->norb == 2 && d->nelec == 2 && d->ms2 == 0, "one-line header");
    tap_near(LAM_G(d->op, 0, 1, 0, 1), 0.25, 0, "(21|21) filled into (12|12)");
    tap_near(LAM_G(d->op, 1, 0, 0, 1), 0.25, 0, "(21|21) filled into (21|12)");
    tap_near(LAM_H(d->op, 0, 0), -1.0, 0, "one-body integral");
    tap_near(d->op->e0, 0.7, 0, "constant");
    tap_near(lam_spinfree_real_symmetry_error(d->op), 0, 0, "8-fold symmetry filled");
    lam_fcidump_free(d);

    /* Multi-line header with ORBSYM continued and a repeat count, the
     * UHF key, and an orbital energy line (i 0 0 0). */
    d = read_text("&FCI\nNORB=3,\nNELEC=4,\nMS2=0,\nUHF=.FALSE.,\nORBSYM=1,\n2*3,\nISYM=1,\n&END\n"
                  " 1.0 3 3 3 3\n 2.0 1 0 0 0\n");
    tap_ok(d->norb == 3 && d->orbsym[0] == 1 && d->orbsym[1] == 3 && d->orbsym[2] == 3,
           "ORBSYM over several lines with a repeat count");
    tap_ok(d->orbital_energy_lines == 1, "orbital-energy line counted, not added");
    /* orbital 2 is named by no line, and there is no constant line: both
     * recorded (and warned about on stderr) */
    tap_ok(d->idle_orbitals == 1, "one orbital without integral lines counted");
    tap_ok(!d->has_constant, "missing constant line recorded");
    tap_ok(d->ms2_line == 4, "MS2 header line kept for messages");
    lam_fcidump_free(d);
    d = read_text("&FCI NORB=2,NELEC=1,MS2=-1,&END\n0.5 1 1 1 1\n0.1 2 2 0 0\n0 0 0 0 0\n");
    tap_ok(d->nelec == 1 && d->ms2 == -1 && d->idle_orbitals == 0 && d->has_constant,
           "odd NELEC with odd MS2, every orbital named, constant line read (even if 0)");
    lam_fcidump_free(d);

    /* Write, read back: the same integrals to the last bit. */
    d = read_text("&FCI NORB=2,NELEC=2,MS2=0, &END\n0.67448876628999743 1 1 1 1\n"
                  "0.18128880823111065 2 1 2 1\n0.66346809636271198 2 2 1 1\n"
                  "-1.2524635733533045 1 1 0 0\n0.71375399335041823 0 0 0 0\n");
    FILE *f = fopen(path, "w");
    lam_error err;
    tap_ok(lam_fcidump_write(f, d, 0, &err) == 0, "write returns 0");
    fclose(f);
    lam_fcidump *e = NULL;
    tap_ok(lam_fcidump_read(path, &e, &err) == 0, "read back returns 0");
    int same = e->op->e0 == d->op->e0;
    for (int i = 0; i < 16; ++i) same &= e->op->g[i] == d->op->g[i];
    for (int i = 0; i < 4; ++i) same &= e->op->h[i] == d->op->h[i];
    tap_ok(same, "write then read gives the same integrals exactly");
    lam_fcidump_free(e);
    lam_fcidump_free(d);

    check_refused("&FCI NORB=2,NELEC=2,MS2=0 &END\n0.5 1 1 1 1\n0.6 1 1 1 1\n0 0 0 0 0\n", 3,
                  "contradicts 0.5 read at line 2", "a repeated integral that disagrees");
    check_refused("&FCI NORB=2,NELEC=2,MS2=0 &END\n0.5 1 1 1\n", 2,
                  "needs 'value i j k l', found 4 fields", "a short integral line");
    check_refused("&FCI NORB=2,NELEC=x &END\n", 1, "header value 'X' for NELEC is not an integer",
                  "a header value that is not an integer");
    check_refused("&FCI NORB=2,NELEC=2\n", 1, "not closed", "an unclosed header");
    lam_error err2;
    lam_fcidump *none = NULL;
    tap_ok(lam_fcidump_read("/nonexistent/lam-fcidump", &none, &err2) == LAM_EX_NOINPUT &&
               none == NULL && err2.file[0] == '\0' &&
               strstr(err2.msg, "cannot open /nonexistent/lam-fcidump") != NULL,
           "a missing file: 66, cannot open");
    unlink(path);
    return tap_done();
}
