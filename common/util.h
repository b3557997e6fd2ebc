/* util.h - errors, exit codes, checked allocation, strict numbers, progress.
 *
 * Every program of the suite reports problems the same way:
 *     lam-xxx: FILE:LINE: what is wrong
 * on stderr, and exits with a sysexits code.  These helpers are the only
 * place that prints such messages, so the format stays uniform.
 */
#ifndef LAM_UTIL_H
#define LAM_UTIL_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#define LAMINA_VERSION "0.1.0"

enum lam_exit {
    LAM_EX_OK = 0,
    LAM_EX_USAGE = 64,    /* bad command line */
    LAM_EX_DATA = 65,     /* malformed or unsuitable input data */
    LAM_EX_NOINPUT = 66,  /* cannot open an input file */
    LAM_EX_SOFTWARE = 70, /* internal error, out of memory */
    LAM_EX_IOERR = 74,    /* read or write failed */
    LAM_EX_MEMORY = 75    /* the work would exceed --max-memory */
};

/* fn runs when the program gives up (an error, a usage error, out of
 * memory), before it ends without atexit handlers: output.c removes the
 * temporary files of the outputs not yet written whole.  One at a time. */
void lam_at_failure(void (*fn)(void));

/* Name used as the message prefix; set once from main(). */
void lam_set_program(const char *argv0);
const char *lam_program(void);

/* An error handed back by library code.  Library functions that can fail
 * on bad input take a lam_error *err, fill it and return its code (non-zero);
 * only a program's main prints it and exits (lam_error_exit), after freeing
 * what it holds.  Out of memory is the one failure that still exits inside
 * the library (lam_malloc and friends). */
typedef struct lam_error {
    int code;       /* enum lam_exit; LAM_EX_OK when nothing failed */
    long line;      /* <= 0: no line */
    char file[512]; /* "": no file */
    char msg[512];
} lam_error;

/* Clear *err (code LAM_EX_OK). */
void lam_error_clear(lam_error *err);
/* Fill *err and return code: "msg", or "file:line: msg" via lam_error_at
 * (line <= 0 omits the line, file NULL omits both). */
int lam_error_set(lam_error *err, int code, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
int lam_error_at(lam_error *err, int code, const char *file, long line,
                 const char *fmt, ...) __attribute__((format(printf, 5, 6)));
/* Print "prog: [file:line: ]msg" on stderr. */
void lam_error_print(const lam_error *err);
/* For main: print the error and end the program with its code, without
 * flushing stdout (no half-written result reaches it). */
_Noreturn void lam_error_exit(const lam_error *err);
/* For main, after it freed what it holds: nothing when rc is 0; else the
 * end of the program with err, a usage error (code 64) with the --help hint
 * of lam_usage_error. */
void lam_exit_on_error(int rc, const lam_error *err);

/* Print "prog: msg" as a warning; does not exit. */
void lam_warn(const char *fmt, ...) __attribute__((format(printf, 1, 2)));

/* The one fatal path the library keeps: "out of memory (asked for n
 * bytes)", exit 70; also for allocators of their own (huge pages). */
_Noreturn void lam_out_of_memory(size_t n);
/* Checked allocation: on failure print "out of memory" and exit 70. */
void *lam_malloc(size_t n);
void *lam_calloc(size_t count, size_t size);
void *lam_realloc(void *p, size_t n);
/* count*size with overflow check (exit 70 on overflow). */
size_t lam_mul_size(size_t count, size_t size);
char *lam_strdup(const char *s);
/* A free for each of the count buffers (NULL ones included); LAM_FREE_ALL
 * names them in place: LAM_FREE_ALL(x->a, x->b). */
void lam_free_each(void *const *buffers, size_t count);
#define LAM_FREE_ALL(...)                                                        \
    lam_free_each((void *const[]){__VA_ARGS__},                                 \
                  sizeof((void *const[]){__VA_ARGS__}) / sizeof(void *))

/* Sorting with ties settled by position, so that the order does not
 * depend on the qsort of the C library. */
typedef struct {
    double weight;
    size_t at; /* the position of what it weighs */
} lam_weighted;
/* Largest weight first; equal weights in the order of at. */
void lam_sort_heaviest_first(lam_weighted *v, size_t n);
typedef struct {
    uint64_t key;
    size_t at; /* the position the key belongs to */
} lam_keyed;
/* Smallest key first; equal keys in the order of at. */
void lam_sort_by_key(lam_keyed *v, size_t n);

/* The index of name in the count names of an enumeration (its values in
 * order), -1 when it is none of them. */
int lam_name_index(const char *const *names, int count, const char *name);

/* Strict parsing of a whole token.  Return 0 on success, -1 if the token is
 * not a complete number (trailing junk, empty, NaN, Inf, out of range).
 * lam_parse_double accepts Fortran D/d exponents too. */
int lam_parse_double(const char *tok, double *out);
int lam_parse_long(const char *tok, long *out);

/* Command-line helpers.  Options with numbers call these, which fail with
 * exit 64 naming the option. */
double lam_opt_double(const char *opt, const char *arg);
long lam_opt_long(const char *opt, const char *arg, long min, long max);
/* A size in bytes: a positive number with an optional suffix K, M, G or T
 * (powers of 1024, optionally followed by B or iB); exit 64 naming opt. */
double lam_opt_size(const char *opt, const char *arg);
/* Installed memory in bytes (MemTotal), INFINITY when it cannot be read. */
double lam_machine_memory(void);
/* The one message for a bad option, then exit 64.  Set opterr = 0, start
 * the short-option string with ':' and call, for getopt_long's ':' and '?':
 *     lam_bad_option(argv[optind - 1], optopt, c == ':');            */
_Noreturn void lam_bad_option(const char *word, int optopt_now, int missing_value);
/* Print "prog VERSION" and exit 0. */
_Noreturn void lam_print_version(void);
/* Print "prog: msg\nTry 'prog --help'." and exit 64. */
_Noreturn void lam_usage_error(const char *fmt, ...)
    __attribute__((format(printf, 1, 2)));

/* Progress on stderr: on when stderr is a terminal, forced on by
 * lam_progress_set(1) (--progress) and off by lam_progress_set(0) (--quiet). */
void lam_progress_set(int on);
int lam_progress_enabled(void);
void lam_progress(const char *fmt, ...) __attribute__((format(printf, 1, 2)));

/* Wall-clock seconds from a monotonic clock. */
double lam_seconds(void);

/* Write a double with 17 significant digits (exact round trip). */
void lam_format_double(char *buf, size_t size, double x);
#define LAM_DOUBLE_BUF 32

#endif
