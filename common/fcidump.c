/* fcidump.c - FCIDUMP reader and writer. */
#include "fcidump.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <zlib.h>

#include "util.h"

typedef struct {
    gzFile gz;
    const char *name;
    long line;
    char *buf;
    size_t cap;
    lam_error *err;
} text_in;

/* Bad data at the current line: fill the error, return its code. */
static int bad_at(const text_in *in, long line, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
static int bad_at(const text_in *in, long line, const char *fmt, ...)
{
    char msg[512];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    return lam_error_at(in->err, LAM_EX_DATA, in->name, line, "%s", msg);
}
#define BAD(in, ...) bad_at((in), (in)->line, __VA_ARGS__)

/* Next line without its newline in *out, NULL at EOF; 0 or the code of a
 * read error. */
static int read_line(text_in *in, char **out)
{
    size_t len = 0;
    *out = NULL;
    for (;;) {
        if (in->cap - len < 256) {
            in->cap = in->cap ? 2 * in->cap : 4096;
            in->buf = lam_realloc(in->buf, in->cap);
        }
        if (!gzgets(in->gz, in->buf + len, (int)(in->cap - len))) {
            int err;
            const char *msg = gzerror(in->gz, &err);
            if (err != Z_OK && err != Z_STREAM_END)
                return lam_error_at(in->err, LAM_EX_IOERR, in->name, in->line, "read error: %s", msg);
            if (len == 0) return 0;
            break;
        }
        len += strlen(in->buf + len);
        if (len > 0 && in->buf[len - 1] == '\n') break;
    }
    in->line++;
    while (len > 0 && (in->buf[len - 1] == '\n' || in->buf[len - 1] == '\r')) in->buf[--len] = '\0';
    *out = in->buf;
    return 0;
}

/* ---- namelist header ---- */

typedef struct {
    long norb, nelec, ms2, isym;
    long first_line, nelec_line, ms2_line;
    int have_norb, have_nelec;
    long *orbsym;
    size_t norbsym, orbsym_cap;
    int uhf;
} header;

static void upcase(char *s)
{
    for (; *s; ++s) *s = (char)toupper((unsigned char)*s);
}

static int is_terminator(const char *tok)
{
    return strcmp(tok, "&END") == 0 || strcmp(tok, "/") == 0 ||
           strcmp(tok, "$END") == 0 || strcmp(tok, "&") == 0;
}

static void push_orbsym(header *h, long v)
{
    if (h->norbsym == h->orbsym_cap) {
        h->orbsym_cap = h->orbsym_cap ? 2 * h->orbsym_cap : 64;
        h->orbsym = lam_realloc(h->orbsym, lam_mul_size(h->orbsym_cap, sizeof *h->orbsym));
    }
    h->orbsym[h->norbsym++] = v;
}

/* One value of the current key; "k*v" is Fortran's repeat count. */
static int take_value(text_in *in, header *h, const char *key, const char *tok)
{
    long v, repeat = 1;
    const char *star = strchr(tok, '*');
    char num[64];
    if (star) {
        size_t k = (size_t)(star - tok);
        if (k == 0 || k >= sizeof num) goto bad;
        memcpy(num, tok, k);
        num[k] = '\0';
        if (lam_parse_long(num, &repeat) != 0 || repeat < 1 || repeat > 100000) goto bad;
        tok = star + 1;
    }
    if (strcmp(key, "UHF") == 0 || strcmp(key, "IUHF") == 0) {
        h->uhf = strcmp(tok, ".TRUE.") == 0 || strcmp(tok, "T") == 0 ||
                 strcmp(tok, ".T.") == 0 || strcmp(tok, "1") == 0;
        return 0;
    }
    if (strcmp(key, "NORB") && strcmp(key, "NELEC") && strcmp(key, "MS2") &&
        strcmp(key, "ISYM") && strcmp(key, "ORBSYM"))
        return 0; /* other keys (point group, TREL, ...) do not shape the operator */
    if (lam_parse_long(tok, &v) != 0) goto bad;
    if (strcmp(key, "ORBSYM") == 0) {
        for (long i = 0; i < repeat; ++i) push_orbsym(h, v);
        return 0;
    }
    if (repeat != 1) goto bad;
    if (strcmp(key, "NORB") == 0) h->norb = v, h->have_norb = 1;
    else if (strcmp(key, "NELEC") == 0) h->nelec = v, h->have_nelec = 1, h->nelec_line = in->line;
    else if (strcmp(key, "MS2") == 0) h->ms2 = v, h->ms2_line = in->line;
    else h->isym = v;
    return 0;
bad:
    return BAD(in, "header value '%s' for %s is not an integer", tok, key);
}

/* Split on commas, blanks and '='; a token followed by '=' is a key.
 * *done is set at the terminator; 0 or the error code. */
static int header_line(text_in *in, header *h, char *s, char *key, int *started, int *done)
{
    upcase(s);
    size_t n = strlen(s);
    char *spaced = lam_malloc(3 * n + 1), *o = spaced;
    for (char *c = s; *c; ++c) {
        if (*c == '=') *o++ = ' ', *o++ = '=', *o++ = ' ';
        else *o++ = *c == ',' ? ' ' : *c;
    }
    *o = '\0';
    char *save = NULL, *prev = NULL;
    int rc = 0;
    *done = 0;
    for (char *tok = strtok_r(spaced, " \t", &save); tok && !*done && !rc;
         tok = strtok_r(NULL, " \t", &save)) {
        if (!*started) {
            if (strcmp(tok, "&FCI") != 0 && strcmp(tok, "$FCI") != 0) {
                rc = BAD(in, "FCIDUMP header must start with '&FCI', found '%s'", tok);
                break;
            }
            *started = 1;
            h->first_line = in->line;
            continue;
        }
        if (strncmp(tok, "&FCI", 4) == 0 && tok[4]) tok += 4;
        if (is_terminator(tok)) {
            *done = 1;
        } else if (strcmp(tok, "=") == 0) {
            if (!prev) {
                rc = BAD(in, "'=' without a key in the header");
                break;
            }
            snprintf(key, 32, "%s", prev);
            prev = NULL;
        } else {
            if (prev)
                rc = *key ? take_value(in, h, key, prev)
                          : BAD(in, "header value '%s' before any key", prev);
            prev = tok;
        }
    }
    if (prev && !rc)
        rc = *key ? take_value(in, h, key, prev) : BAD(in, "header value '%s' before any key", prev);
    free(spaced);
    return rc;
}

/* The header into *h (h->orbsym is the caller's to free, also on error). */
static int read_header(text_in *in, header *h)
{
    char key[32] = "";
    int started = 0, done = 0, rc;
    char *s;
    memset(h, 0, sizeof *h);
    h->isym = 1;
    while ((rc = read_line(in, &s)) == 0 && s != NULL) {
        char *t = s;
        while (*t == ' ' || *t == '\t') ++t;
        if (!*t && !started) continue;
        if ((rc = header_line(in, h, t, key, &started, &done)) != 0) return rc;
        if (done) break;
    }
    if (rc) return rc;
    if (!s) return BAD(in, "FCIDUMP header is not closed by '&END' or '/'");
    if (!h->have_norb || h->norb < 1 || h->norb > 4096)
        return BAD(in, "FCIDUMP header needs NORB between 1 and 4096");
    if (!h->have_nelec || h->nelec < 0 || h->nelec > 2 * h->norb)
        return BAD(in, "FCIDUMP header needs NELEC between 0 and 2*NORB");
    if (h->uhf) return BAD(in, "spin-unrestricted (UHF) integrals are not supported");
    if (!h->ms2_line) h->ms2_line = h->first_line;
    if ((h->nelec + h->ms2) % 2 != 0)
        return bad_at(in, h->ms2_line > h->nelec_line ? h->ms2_line : h->nelec_line,
                      "NELEC=%ld and MS2=%ld differ in parity (an electron count and twice "
                      "its spin projection are both even or both odd)", h->nelec, h->ms2);
    long most = h->nelec < 2 * h->norb - h->nelec ? h->nelec : 2 * h->norb - h->nelec;
    if (labs(h->ms2) > most)
        return bad_at(in, h->ms2_line,
                      "MS2=%ld is impossible for NELEC=%ld in NORB=%ld orbitals (|MS2| <= %ld)",
                      h->ms2, h->nelec, h->norb, most);
    if (h->norbsym && h->norbsym != (size_t)h->norb)
        return BAD(in, "ORBSYM has %zu entries for NORB=%ld", h->norbsym, h->norb);
    return 0;
}

/* ---- integrals ---- */

static size_t pair_index(int i, int j) { return i >= j ? (size_t)i * (i + 1) / 2 + j : (size_t)j * (j + 1) / 2 + i; }

/* Fill all eight permutations of a real two-electron integral. */
static void set_eightfold(lam_spinfree *sf, int i, int j, int k, int l, double v)
{
    LAM_G(sf, i, j, k, l) = v; LAM_G(sf, j, i, k, l) = v;
    LAM_G(sf, i, j, l, k) = v; LAM_G(sf, j, i, l, k) = v;
    LAM_G(sf, k, l, i, j) = v; LAM_G(sf, l, k, i, j) = v;
    LAM_G(sf, k, l, j, i) = v; LAM_G(sf, l, k, j, i) = v;
}

/* A value read twice for the same integral (writers often repeat
 * symmetric partners) must agree; else the file is not real-symmetric. */
static int check_repeat(text_in *in, long *seen, size_t slot, double old, double v, const char *what)
{
    if (!seen[slot]) {
        seen[slot] = in->line;
        return 0;
    }
    if (fabs(old - v) > 1e-10 * fmax(1.0, fabs(v)))
        return BAD(in, "%s = %.17g contradicts %.17g read at line %ld (the format assumes real orbitals, 8-fold symmetry)",
                   what, v, old, seen[slot]);
    return 0;
}

static int read_integral_line(text_in *in, lam_fcidump *fd, char *s, long *seen2, long *seen1,
                               long *seen0, char *named)
{
    char *tok[6];
    int nt = 0;
    char *save = NULL;
    for (char *t = strtok_r(s, " \t,", &save); t; t = strtok_r(NULL, " \t,", &save)) {
        if (nt == 5) return BAD(in, "integral line has more than 5 fields");
        tok[nt++] = t;
    }
    if (nt == 0) return 0;
    if (nt != 5) return BAD(in, "integral line needs 'value i j k l', found %d fields", nt);
    double v;
    if (lam_parse_double(tok[0], &v) != 0)
        return BAD(in, "integral value '%s' is not a finite number", tok[0]);
    long idx[4];
    for (int a = 0; a < 4; ++a)
        if (lam_parse_long(tok[a + 1], &idx[a]) != 0 || idx[a] < 0 || idx[a] > fd->norb)
            return BAD(in, "orbital index '%s' is not in 0..%d", tok[a + 1], fd->norb);
    int rc = 0;
    lam_spinfree *sf = fd->op;
    int i = (int)idx[0] - 1, j = (int)idx[1] - 1, k = (int)idx[2] - 1, l = (int)idx[3] - 1;
    char what[96];
    for (int a = 0; a < 4; ++a)
        if (idx[a] > 0) named[idx[a] - 1] = 1;
    if (i >= 0 && j >= 0 && k >= 0 && l >= 0) {
        snprintf(what, sizeof what, "(%d %d|%d %d)", i + 1, j + 1, k + 1, l + 1);
        size_t slot = pair_index((int)pair_index(i, j), (int)pair_index(k, l));
        if ((rc = check_repeat(in, seen2, slot, LAM_G(sf, i, j, k, l), v, what)) == 0)
            set_eightfold(sf, i, j, k, l, v);
    } else if (i >= 0 && j >= 0 && k < 0 && l < 0) {
        snprintf(what, sizeof what, "h(%d %d)", i + 1, j + 1);
        if ((rc = check_repeat(in, seen1, pair_index(i, j), LAM_H(sf, i, j), v, what)) == 0)
            LAM_H(sf, i, j) = LAM_H(sf, j, i) = v;
    } else if (i >= 0 && j < 0 && k < 0 && l < 0) {
        fd->orbital_energy_lines++;
    } else if (i < 0 && j < 0 && k < 0 && l < 0) {
        if ((rc = check_repeat(in, seen0, 0, sf->e0, v, "the constant")) == 0) sf->e0 = v;
    } else {
        rc = BAD(in, "indices %ld %ld %ld %ld do not name an integral", idx[0], idx[1], idx[2],
                 idx[3]);
    }
    return rc;
}

int lam_fcidump_read(const char *path, lam_fcidump **out, lam_error *err)
{
    text_in in = {0};
    *out = NULL;
    int use_stdin = !path || strcmp(path, "-") == 0;
    in.name = use_stdin ? "<stdin>" : path;
    in.err = err;
    in.gz = use_stdin ? gzdopen(0, "rb") : gzopen(path, "rb");
    if (!in.gz)
        return lam_error_set(err, LAM_EX_NOINPUT, "cannot open %s: %s", in.name,
                             errno ? strerror(errno) : "out of memory");
    header h;
    int rc = read_header(&in, &h);
    if (rc) {
        free(h.orbsym);
        free(in.buf);
        gzclose(in.gz);
        return rc;
    }
    lam_fcidump *fd = lam_calloc(1, sizeof *fd);
    fd->norb = (int)h.norb;
    fd->nelec = (int)h.nelec;
    fd->ms2 = (int)h.ms2;
    fd->isym = (int)h.isym;
    fd->orbsym = lam_malloc(lam_mul_size((size_t)fd->norb, sizeof(int)));
    for (int i = 0; i < fd->norb; ++i) fd->orbsym[i] = h.norbsym ? (int)h.orbsym[i] : 1;
    free(h.orbsym);
    fd->op = lam_spinfree_new(fd->norb);
    fd->op->electrons = fd->nelec;
    fd->op->ms2 = fd->ms2;
    size_t npair = pair_index(fd->norb - 1, fd->norb - 1) + 1;
    long *seen2 = lam_calloc(npair * (npair + 1) / 2, sizeof(long));
    long *seen1 = lam_calloc(npair, sizeof(long));
    long seen0 = 0;
    char *named = lam_calloc((size_t)fd->norb, 1);
    char *s;
    while ((rc = read_line(&in, &s)) == 0 && s != NULL)
        if ((rc = read_integral_line(&in, fd, s, seen2, seen1, &seen0, named)) != 0) break;
    if (rc == 0) {
        for (int p = 0; p < fd->norb; ++p) fd->idle_orbitals += !named[p];
        fd->has_constant = seen0 != 0;
        fd->source = lam_strdup(in.name);
        fd->ms2_line = h.ms2_line;
        if (fd->idle_orbitals)
            lam_warn("%s: warning: NORB=%d, but no integral line names %d of the orbitals (all "
                     "their integrals are zero)", in.name, fd->norb, fd->idle_orbitals);
        if (!fd->has_constant)
            lam_warn("%s:%ld: warning: no constant line (0 0 0 0): the constant is taken as 0; "
                     "complete files end with it, so the file may have been cut short",
                     in.name, in.line);
    }
    LAM_FREE_ALL(named, seen2, seen1, in.buf);
    gzclose(in.gz);
    if (rc) lam_fcidump_free(fd);
    else *out = fd;
    return rc;
}

void lam_fcidump_free(lam_fcidump *fd)
{
    if (!fd) return;
    lam_spinfree_free(fd->op);
    LAM_FREE_ALL(fd->orbsym, fd->source, fd);
}

static void write_header(FILE *out, const lam_fcidump *fd)
{
    fprintf(out, "&FCI NORB=%d,NELEC=%d,MS2=%d,\n ORBSYM=", fd->norb, fd->nelec, fd->ms2);
    for (int i = 0; i < fd->norb; ++i) {
        fprintf(out, "%d,", fd->orbsym ? fd->orbsym[i] : 1);
        if (i % 20 == 19 && i + 1 < fd->norb) fputs("\n ", out);
    }
    fprintf(out, "\n ISYM=%d,\n&END\n", fd->isym > 0 ? fd->isym : 1);
}

static void write_integral(FILE *out, double v, int i, int j, int k, int l)
{
    fprintf(out, "%24.16E %4d %4d %4d %4d\n", v, i, j, k, l);
}

int lam_fcidump_write(FILE *out, const lam_fcidump *fd, double tol, lam_error *err)
{
    const lam_spinfree *sf = fd->op;
    int n = fd->norb;
    write_header(out, fd);
    for (int i = 0; i < n; ++i)
        for (int j = 0; j <= i; ++j)
            for (int k = 0; k <= i; ++k)
                for (int l = 0; l <= k; ++l) {
                    if (pair_index(i, j) < pair_index(k, l)) continue;
                    double v = LAM_G(sf, i, j, k, l);
                    if (v != 0 && fabs(v) > tol) write_integral(out, v, i + 1, j + 1, k + 1, l + 1);
                }
    for (int i = 0; i < n; ++i)
        for (int j = 0; j <= i; ++j) {
            double v = LAM_H(sf, i, j);
            if (v != 0 && fabs(v) > tol) write_integral(out, v, i + 1, j + 1, 0, 0);
        }
    write_integral(out, sf->e0, 0, 0, 0, 0);
    if (fflush(out) != 0 || ferror(out))
        return lam_error_set(err, LAM_EX_IOERR, "cannot write the FCIDUMP: %s", strerror(errno));
    return 0;
}
