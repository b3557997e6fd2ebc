/* util.c - errors, checked allocation, strict numbers, progress. */
#include "util.h"

#include <errno.h>
#include <float.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

static const char *program_name = "lamina";
static int progress_mode = -1; /* -1: decide from isatty(2) */

/* A failing program ends at once: _exit skips stdio flushing, so no
 * half-written result reaches stdout, and skips the leak check of the
 * sanitizers, which would flag the memory a program still holds when it
 * gives up (leaks are checked on the paths that succeed). */
static void (*on_failure)(void);

void lam_at_failure(void (*fn)(void))
{
    on_failure = fn;
}

static _Noreturn void leave(int code)
{
    if (on_failure) on_failure();
    fflush(stderr);
    _exit(code);
}

void lam_set_program(const char *argv0)
{
    const char *slash = argv0 ? strrchr(argv0, '/') : NULL;
    program_name = slash ? slash + 1 : (argv0 ? argv0 : "lamina");
}

const char *lam_program(void) { return program_name; }

static void vreport(const char *file, long line, const char *fmt, va_list ap)
{
    fprintf(stderr, "%s: ", program_name);
    if (file) {
        if (line > 0)
            fprintf(stderr, "%s:%ld: ", file, line);
        else
            fprintf(stderr, "%s: ", file);
    }
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
}

/* The fatal paths util keeps: out of memory (and sizes that overflow,
 * which no allocation could satisfy), and stdout failing under --version. */
static _Noreturn __attribute__((format(printf, 2, 3))) void fatal(int code, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vreport(NULL, 0, fmt, ap);
    va_end(ap);
    leave(code);
}

void lam_error_clear(lam_error *err)
{
    err->code = LAM_EX_OK;
    err->line = 0;
    err->file[0] = '\0';
    err->msg[0] = '\0';
}

static int verror_at(lam_error *err, int code, const char *file, long line,
                     const char *fmt, va_list ap)
{
    err->code = code;
    err->line = file ? line : 0;
    snprintf(err->file, sizeof err->file, "%s", file ? file : "");
    vsnprintf(err->msg, sizeof err->msg, fmt, ap);
    return code;
}

int lam_error_set(lam_error *err, int code, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    verror_at(err, code, NULL, 0, fmt, ap);
    va_end(ap);
    return code;
}

int lam_error_at(lam_error *err, int code, const char *file, long line,
                 const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    verror_at(err, code, file, line, fmt, ap);
    va_end(ap);
    return code;
}

void lam_error_print(const lam_error *err)
{
    fprintf(stderr, "%s: ", program_name);
    if (err->file[0]) {
        if (err->line > 0)
            fprintf(stderr, "%s:%ld: ", err->file, err->line);
        else
            fprintf(stderr, "%s: ", err->file);
    }
    fprintf(stderr, "%s\n", err->msg);
}

void lam_error_exit(const lam_error *err)
{
    lam_error_print(err);
    leave(err->code ? err->code : LAM_EX_SOFTWARE);
}

void lam_exit_on_error(int rc, const lam_error *err)
{
    if (rc == LAM_EX_USAGE) lam_usage_error("%s", err->msg);
    if (rc) lam_error_exit(err);
}

void lam_warn(const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vreport(NULL, 0, fmt, ap);
    va_end(ap);
}

void lam_out_of_memory(size_t n)
{
    fatal(LAM_EX_SOFTWARE, "out of memory (asked for %zu bytes)", n);
}

void *lam_malloc(size_t n)
{
    void *p = malloc(n ? n : 1);
    if (!p) lam_out_of_memory(n);
    return p;
}

void *lam_calloc(size_t count, size_t size)
{
    void *p = calloc(count ? count : 1, size ? size : 1);
    if (!p) lam_out_of_memory(lam_mul_size(count, size));
    return p;
}

void *lam_realloc(void *p, size_t n)
{
    void *q = realloc(p, n ? n : 1);
    if (!q) lam_out_of_memory(n);
    return q;
}

size_t lam_mul_size(size_t count, size_t size)
{
    if (size && count > SIZE_MAX / size)
        fatal(LAM_EX_SOFTWARE, "size overflow (%zu x %zu)", count, size);
    return count * size;
}

char *lam_strdup(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = lam_malloc(n);
    memcpy(d, s, n);
    return d;
}

void lam_free_each(void *const *buffers, size_t count)
{
    for (size_t i = 0; i < count; ++i) free(buffers[i]);
}

static int compare_positions(size_t a, size_t b) { return (a > b) - (a < b); }

static int heavier_first(const void *pa, const void *pb)
{
    const lam_weighted *a = pa, *b = pb;
    if (a->weight != b->weight) return a->weight > b->weight ? -1 : 1;
    return compare_positions(a->at, b->at);
}

void lam_sort_heaviest_first(lam_weighted *v, size_t n) { qsort(v, n, sizeof *v, heavier_first); }

static int smaller_key_first(const void *pa, const void *pb)
{
    const lam_keyed *a = pa, *b = pb;
    if (a->key != b->key) return a->key < b->key ? -1 : 1;
    return compare_positions(a->at, b->at);
}

void lam_sort_by_key(lam_keyed *v, size_t n) { qsort(v, n, sizeof *v, smaller_key_first); }

int lam_name_index(const char *const *names, int count, const char *name)
{
    for (int i = 0; i < count; ++i)
        if (strcmp(name, names[i]) == 0) return i;
    return -1;
}

/* Slow, always correct: glibc's strtod on a copy with the exponent letter
 * made 'e' (Fortran writes D). */
static int parse_double_strtod(const char *tok, size_t n, double *out)
{
    char buf[128];
    if (n >= sizeof buf) return -1;
    memcpy(buf, tok, n + 1);
    for (char *c = buf; *c; ++c)
        if (*c == 'd' || *c == 'D') *c = 'e';
    char *end;
    errno = 0;
    double v = strtod(buf, &end);
    if (end == buf || *end != '\0') return -1;
    if (errno == ERANGE && (v == HUGE_VAL || v == -HUGE_VAL)) return -1;
    if (!isfinite(v)) return -1;
    *out = v;
    return 0;
}

/* Fast path: with at most 19 significant digits the mantissa m is exact in
 * x87 extended precision (64-bit significand), and so is 10^k for k <= 27,
 * so m * 10^k or m / 10^k is one correctly rounded extended operation.
 * Rounding that to double is then correct unless the extended result is
 * itself a midpoint between two doubles; such rare cases, and everything
 * outside the fast range, go to strtod. */
static int parse_double_fast(int negative, uint64_t m, int e10, double *out)
{
#if defined(__LDBL_MANT_DIG__) && __LDBL_MANT_DIG__ == 64
    static const long double pow10[] = {
        1e0L,  1e1L,  1e2L,  1e3L,  1e4L,  1e5L,  1e6L,  1e7L,  1e8L,  1e9L,
        1e10L, 1e11L, 1e12L, 1e13L, 1e14L, 1e15L, 1e16L, 1e17L, 1e18L, 1e19L,
        1e20L, 1e21L, 1e22L, 1e23L, 1e24L, 1e25L, 1e26L, 1e27L};
    if (m == 0) {
        *out = negative ? -0.0 : 0.0;
        return 0;
    }
    if (e10 < -27 || e10 > 27) return -1;
    long double v = e10 >= 0 ? (long double)m * pow10[e10] : (long double)m / pow10[-e10];
    double d = (double)v; /* v > 0 */
    uint64_t bits;
    memcpy(&bits, &d, sizeof bits);
    uint64_t exponent = bits >> 52;
    if (exponent <= 53 || exponent >= 0x7ff) return -1; /* tiny, subnormal or inf */
    /* v is the exact value rounded once to 64 bits; rounding v to 53 bits
     * rounds the exact value the same way unless v is itself a midpoint
     * (its 11 dropped bits are 10000000000): a midpoint nearer to the
     * exact value than v would be a 64-bit number between them */
    uint64_t significand;
    memcpy(&significand, &v, sizeof significand); /* x87: the low 8 bytes */
    if ((significand & 0x7ff) == 0x400) return -1;
    *out = negative ? -d : d;
    return 0;
#else
    (void)negative, (void)m, (void)e10, (void)out;
    return -1;
#endif
}

int lam_parse_double(const char *tok, double *out)
{
    const char *c = tok;
    int negative = 0;
    if (*c == '+' || *c == '-') negative = *c++ == '-';
    /* the common form first: at most 19 digits in all (leading zeros add
     * nothing to m), a point, no exponent */
    uint64_t m = 0;
    const char *first = c;
    for (; (unsigned)(*c - '0') < 10; ++c) m = 10 * m + (uint64_t)(*c - '0');
    int whole = (int)(c - first), fraction = 0;
    if (*c == '.') {
        const char *point = ++c;
        for (; (unsigned)(*c - '0') < 10; ++c) m = 10 * m + (uint64_t)(*c - '0');
        fraction = (int)(c - point);
    }
    if (*c == '\0' && whole + fraction > 0 && whole + fraction <= 19 &&
        parse_double_fast(negative, m, -fraction, out) == 0)
        return 0;
    /* any other form: significant digits counted, the exponent read */
    int digits = 0, significant = 0, e10 = 0;
    m = 0;
    c = first;
    for (; *c >= '0' && *c <= '9'; ++c, ++digits) {
        if (significant || *c != '0') {
            if (significant < 19) m = 10 * m + (uint64_t)(*c - '0');
            else ++e10;
            ++significant;
        }
    }
    if (*c == '.')
        for (++c; *c >= '0' && *c <= '9'; ++c, ++digits) {
            if (significant || *c != '0') {
                if (significant < 19) {
                    m = 10 * m + (uint64_t)(*c - '0');
                    --e10;
                }
                ++significant;
            } else {
                --e10;
            }
        }
    if (digits == 0) return -1;
    if (*c == 'e' || *c == 'E' || *c == 'd' || *c == 'D') {
        ++c;
        int eneg = 0, edigits = 0;
        long ev = 0;
        if (*c == '+' || *c == '-') eneg = *c++ == '-';
        for (; *c >= '0' && *c <= '9'; ++c, ++edigits)
            if (ev < 100000) ev = 10 * ev + (*c - '0');
        if (edigits == 0) return -1;
        e10 += (int)(eneg ? -ev : ev);
    }
    if (*c != '\0') return -1; /* nan, inf, hex, trailing junk */
    if (significant <= 19 && parse_double_fast(negative, m, e10, out) == 0) return 0;
    return parse_double_strtod(tok, (size_t)(c - tok), out);
}

int lam_parse_long(const char *tok, long *out)
{
    if (!*tok) return -1;
    char *end;
    errno = 0;
    long v = strtol(tok, &end, 10);
    if (end == tok || *end != '\0' || errno == ERANGE) return -1;
    *out = v;
    return 0;
}

double lam_opt_double(const char *opt, const char *arg)
{
    double v;
    if (lam_parse_double(arg, &v) != 0)
        lam_usage_error("option %s wants a number, not '%s'", opt, arg);
    return v;
}

long lam_opt_long(const char *opt, const char *arg, long min, long max)
{
    long v;
    if (lam_parse_long(arg, &v) != 0)
        lam_usage_error("option %s wants an integer, not '%s'", opt, arg);
    if (v < min || v > max)
        lam_usage_error("option %s wants an integer from %ld to %ld, not %ld",
                        opt, min, max, v);
    return v;
}

double lam_opt_size(const char *opt, const char *arg)
{
    char *end;
    double v = strtod(arg, &end);
    double unit = 1;
    if (end != arg && *end) {
        switch (*end) {
        case 'k': case 'K': unit = 1024.0; break;
        case 'm': case 'M': unit = 1024.0 * 1024; break;
        case 'g': case 'G': unit = 1024.0 * 1024 * 1024; break;
        case 't': case 'T': unit = 1024.0 * 1024 * 1024 * 1024; break;
        default: unit = 0;
        }
        if (unit && end[1] && strcmp(end + 1, "B") && strcmp(end + 1, "iB")) unit = 0;
    }
    if (end == arg || unit == 0 || !(v > 0) || !isfinite(v))
        lam_usage_error("option %s wants a size such as 2G, 512M or 1000000, not '%s'", opt, arg);
    return v * unit;
}

double lam_machine_memory(void)
{
    FILE *f = fopen("/proc/meminfo", "r");
    double kb = 0;
    if (f) {
        char line[256];
        while (fgets(line, sizeof line, f))
            if (sscanf(line, "MemTotal: %lf kB", &kb) == 1) break;
        fclose(f);
    }
    return kb > 0 ? kb * 1024 : INFINITY;
}

void lam_bad_option(const char *word, int optopt_now, int missing_value)
{
    int is_long = word && strncmp(word, "--", 2) == 0;
    if (missing_value) {
        if (is_long) lam_usage_error("option '%s' needs a value", word);
        lam_usage_error("option '-%c' needs a value", optopt_now);
    }
    if (is_long) {
        size_t len = strcspn(word, "=");
        lam_usage_error("unknown option '%.*s'", (int)len, word);
    }
    if (optopt_now > ' ' && optopt_now < 127) lam_usage_error("unknown option '-%c'", optopt_now);
    lam_usage_error("unknown option '%s'", word ? word : "");
}

void lam_print_version(void)
{
    printf("%s (lamina) %s\n", program_name, LAMINA_VERSION);
    if (fflush(stdout) != 0 || ferror(stdout))
        fatal(LAM_EX_IOERR, "cannot write to standard output");
    exit(0);
}

void lam_usage_error(const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vreport(NULL, 0, fmt, ap);
    va_end(ap);
    fprintf(stderr, "Try '%s --help'.\n", program_name);
    leave(LAM_EX_USAGE);
}

void lam_progress_set(int on) { progress_mode = on ? 1 : 0; }

int lam_progress_enabled(void)
{
    if (progress_mode < 0) progress_mode = isatty(2) ? 1 : 0;
    return progress_mode;
}

void lam_progress(const char *fmt, ...)
{
    if (!lam_progress_enabled()) return;
    va_list ap;
    va_start(ap, fmt);
    fprintf(stderr, "%s: ", program_name);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
    va_end(ap);
}

double lam_seconds(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

void lam_format_double(char *buf, size_t size, double x)
{
    if (x == 0) x = 0; /* no "-0" */
    snprintf(buf, size, "%.17g", x);
}
