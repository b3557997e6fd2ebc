/* Unit tests of common/stream.c and common/util.c. */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "rng.h"
#include "stream.h"
#include "tap.h"
#include "util.h"

static char path[] = "/tmp/lam-test-stream-XXXXXX";

static void write_file(const char *text)
{
    FILE *f = fopen(path, "w");
    fputs(text, f);
    fclose(f);
}

static lam_reader *open_or_die(void)
{
    lam_reader *r;
    lam_error err;
    if (lam_reader_open(path, &r, &err)) {
        printf("# %s\n", err.msg);
        exit(66);
    }
    return r;
}

/* The kind a reader finds for text, and the spelling version it read. */
static lam_kind kind_of(const char *text, int *syntax)
{
    write_file(text);
    lam_reader *r = open_or_die();
    lam_error err;
    lam_kind kind = LAM_KIND_UNKNOWN;
    if (lam_reader_kind(r, &kind, &err)) printf("# %s\n", err.msg);
    if (syntax) *syntax = lam_reader_syntax(r);
    lam_reader_close(r);
    return kind;
}

/* Read text to its end: 0, or the code with err filled (the reader is
 * closed either way; the leak checkers see what it forgets). */
static int read_all(const char *text, lam_error *err)
{
    write_file(text);
    lam_reader *r;
    lam_kind kind;
    lam_line ln;
    int rc = lam_reader_open(path, &r, err);
    if (rc) return rc;
    if ((rc = lam_reader_kind(r, &kind, err)) == 0)
        while ((rc = lam_reader_next(r, &ln, err)) == 1) {
        }
    lam_reader_close(r);
    return rc;
}

static void expect_refused(const char *text, int code, long line, const char *msg,
                           const char *name)
{
    lam_error err;
    int rc = read_all(text, &err);
    int ok = rc == code && err.code == code && err.line == line &&
             strcmp(err.file, path) == 0 && strstr(err.msg, msg) != NULL;
    tap_ok(ok, name);
    if (!ok) printf("#   got %d at %s:%ld: %s\n", rc, err.file, err.line, err.msg);
}

/* Errors come back to the caller with code, file, line and message. */
static void test_returned_errors(void)
{
    lam_error err;
    tap_ok(read_all("#% lamina-op 2\n0.5 x:0\n#% end\n", &err) == 0, "a good stream reads to 0");
    expect_refused("#% lamina-op 2\n0.5 x:0\n", 65, 2, "truncated stream",
                   "a stream without '#% end': 65 at its last line");
    expect_refused("#% lamina-op 2\n0.5 x:0\nnan z:1\n#% end\n", 65, 3,
                   "coefficient 'nan' is not finite", "a NaN coefficient: 65 at its line");
    expect_refused("#% lamina-op 2\n#% kind: pauli\n#% kind: fermion\n#% end\n", 65, 3,
                   "second kind 'fermion' contradicts 'pauli'", "two kinds: 65 at the second");
    expect_refused("#% lamina-op 2\n0.5 x:0\n#% end\n1 y:1\n", 65, 4, "term after '#% end'",
                   "a term after the trailer: 65 at its line");
    expect_refused("# only a comment\n", 65, 0, "empty input", "an empty input: 65, no line");
    lam_reader *r = (lam_reader *)1;
    int rc = lam_reader_open("/nonexistent/lam-stream", &r, &err);
    tap_ok(rc == LAM_EX_NOINPUT && r == NULL && err.file[0] == '\0' &&
               strstr(err.msg, "cannot open /nonexistent/lam-stream") != NULL,
           "a missing file: 66, cannot open, no reader");
    lam_writer *w = (lam_writer *)1;
    rc = lam_writer_open("/nonexistent/dir/out.op", 0, &w, &err);
    tap_ok(rc == LAM_EX_IOERR && w == NULL &&
               strstr(err.msg, "cannot open /nonexistent/dir/out.op for writing") != NULL,
           "an unwritable output: 74, no writer");
    {
        /* inf or NaN is never written (no reader takes it); close says which
         * term, and nothing is left at the path */
        char inf_path[] = "/tmp/lam-test-inf-XXXXXX";
        int fd = mkstemp(inf_path);
        if (fd >= 0) close(fd);
        unlink(inf_path);
        rc = lam_writer_open(inf_path, 0, &w, &err);
        if (rc == 0) {
            lam_writer_term(w, 0.5, "x:0");
            lam_writer_term(w, -HUGE_VAL, "z:1");
            lam_writer_term(w, 0.25, "y:2");
            rc = lam_writer_close(w, &err);
        }
        tap_ok(rc == LAM_EX_DATA &&
                   strstr(err.msg, "the coefficient of the term 'z:1' is -inf") != NULL &&
                   access(inf_path, F_OK) != 0,
               "a coefficient -inf: close returns 65, names the term, leaves no file");
    }
    if (access("/dev/full", W_OK) == 0) {
        /* a write error is kept by the writer and reported by close */
        rc = lam_writer_open("/dev/full", 0, &w, &err);
        for (int i = 0; rc == 0 && i < 100000; ++i) lam_writer_term(w, 0.5, "x:0 z:1");
        rc = rc ? rc : lam_writer_close(w, &err);
        tap_ok(rc == LAM_EX_IOERR && strstr(err.msg, "cannot write /dev/full") != NULL,
               "a full device: close returns 74, cannot write");
    }
}

/* The sorts must order by weight (key) and settle ties by position, the
 * same order a stable sort gives; checked against a plain insertion sort
 * of the same items. */
static void test_sorts(void)
{
    enum { N = 2000 };
    unsigned long long st = 4242424242ULL;
    lam_weighted *w = malloc(N * sizeof *w), *wref = malloc(N * sizeof *wref);
    lam_keyed *k = malloc(N * sizeof *k), *kref = malloc(N * sizeof *kref);
    for (size_t i = 0; i < N; ++i) {
        test_xorshift(&st);
        /* few distinct values, so that most items tie; keys above 2^63
         * catch a signed comparison */
        w[i] = (lam_weighted){(double)(st % 7) * 0.25, (i * 7919) % N};
        k[i] = (lam_keyed){(st % 5) << 61, (i * 104729) % N};
    }
    memcpy(wref, w, N * sizeof *w);
    memcpy(kref, k, N * sizeof *k);
    for (size_t i = 1; i < N; ++i)
        for (size_t j = i; j > 0; --j) {
            lam_weighted a = wref[j - 1], b = wref[j];
            if (a.weight > b.weight || (a.weight == b.weight && a.at < b.at)) break;
            wref[j - 1] = b, wref[j] = a;
        }
    for (size_t i = 1; i < N; ++i)
        for (size_t j = i; j > 0; --j) {
            lam_keyed a = kref[j - 1], b = kref[j];
            if (a.key < b.key || (a.key == b.key && a.at < b.at)) break;
            kref[j - 1] = b, kref[j] = a;
        }
    lam_sort_heaviest_first(w, N);
    lam_sort_by_key(k, N);
    tap_ok(memcmp(w, wref, N * sizeof *w) == 0, "heaviest first, ties by position");
    tap_ok(memcmp(k, kref, N * sizeof *k) == 0, "smallest key first, keys >= 2^63 too, ties by position");
    tap_ok(k[0].key == 0 && k[N - 1].key == (uint64_t)4 << 61, "key order spans the unsigned range");
    LAM_FREE_ALL(w, wref, k, kref, NULL);
}

static void test_names(void)
{
    static const char *const names[] = {"flat", "sparse", "grouped"};
    tap_ok(lam_name_index(names, 3, "sparse") == 1 && lam_name_index(names, 3, "grouped") == 2,
           "a name's index in its table");
    tap_ok(lam_name_index(names, 3, "Sparse") == -1 && lam_name_index(names, 3, "") == -1 &&
               lam_name_index(names, 2, "grouped") == -1,
           "case, empty and names past count are unknown");
    tap_ok(lam_kind_parse("fragments") == LAM_KIND_FRAGMENTS &&
               lam_kind_parse("spinfree") == LAM_KIND_SPINFREE,
           "stream kinds parse");
    tap_ok(lam_kind_parse("unknown") == LAM_KIND_UNKNOWN && lam_kind_parse("pauli ") == LAM_KIND_UNKNOWN,
           "'unknown' and near misses are no kind");
}

int main(void)
{
    int fd = mkstemp(path);
    close(fd);
    double v;

    /* Strict numbers: Fortran D exponents are common in FCIDUMP files
     * (common practice); NaN, Inf, hex and trailing junk are refused. */
    tap_ok(lam_parse_double("1.5D-3", &v) == 0 && v == 1.5e-3, "D exponent accepted");
    tap_ok(lam_parse_double("-2.25e+01", &v) == 0 && v == -22.5, "E exponent accepted");
    tap_ok(lam_parse_double("nan", &v) != 0, "nan refused");
    tap_ok(lam_parse_double("inf", &v) != 0, "inf refused");
    tap_ok(lam_parse_double("0x10", &v) != 0, "hex refused");
    tap_ok(lam_parse_double("1.0abc", &v) != 0, "trailing junk refused");
    tap_ok(lam_parse_double("1e999", &v) != 0, "overflow refused");
    tap_ok(lam_parse_double("", &v) != 0, "empty refused");

    /* The parser's fast path must agree bit for bit with the C library's
     * strtod (correct rounding, IEEE 754) on every kind of decimal. */
    {
        unsigned long long st = 88172645463325252ULL;
        long checked = 0, wrong = 0;
        char num[64];
        for (int i = 0; i < 400000; ++i) {
            test_xorshift(&st);
            double x;
            memcpy(&x, &st, sizeof x);
            if (isnan(x) || isinf(x)) continue;
            switch (i % 4) {
            case 0: snprintf(num, sizeof num, "%.17g", x); break;
            case 1: snprintf(num, sizeof num, "%.17g", (double)(st % 1000000007) * 1e-9); break;
            case 2: snprintf(num, sizeof num, "%.16E", (double)(int64_t)st * 1e-19); break;
            default: snprintf(num, sizeof num, "%.*g", (int)(st % 17) + 1, (double)(st >> 11) * 0x1p-53);
            }
            double want = strtod(num, NULL), got;
            if (lam_parse_double(num, &got) != 0) {
                wrong += fabs(want) >= 2.3e-308; /* only subnormals may be refused... */
                continue;
            }
            ++checked;
            wrong += memcmp(&got, &want, sizeof got) != 0;
        }
        tap_ok(wrong == 0 && checked > 300000, "fast decimal parser agrees with strtod bit for bit");
    }
    tap_ok(lam_parse_double("1e-320", &v) == 0 && v == strtod("1e-320", NULL), "subnormal parsed by the slow path");
    tap_ok(lam_parse_double("0.30000000000000004", &v) == 0 && v == 0.30000000000000004, "17-digit value exact");
    tap_ok(lam_parse_double("-0.0", &v) == 0 && v == 0 && signbit(v), "negative zero");
    tap_ok(lam_parse_double("12345678901234567890123", &v) == 0 && v == 12345678901234567890123.0,
           "more than 19 digits by the slow path");
    tap_ok(lam_parse_double("1.", &v) == 0 && v == 1.0, "trailing point");
    tap_ok(lam_parse_double(".5", &v) == 0 && v == 0.5, "leading point");
    tap_ok(lam_parse_double(".", &v) != 0 && lam_parse_double("e5", &v) != 0 && lam_parse_double("1e", &v) != 0,
           "point alone, exponent alone, exponent without digits refused");

    /* 17 significant digits round-trip every double exactly (IEEE 754). */
    char buf[LAM_DOUBLE_BUF];
    double samples[] = {0.1, 1.0 / 3.0, -2.1034568123456789, 6.02214076e23, 5e-324};
    int exact = 1;
    for (size_t i = 0; i < sizeof samples / sizeof *samples; ++i) {
        lam_format_double(buf, sizeof buf, samples[i]);
        double back = strtod(buf, NULL);
        exact &= back == samples[i];
    }
    tap_ok(exact, "17 significant digits round-trip");
    lam_format_double(buf, sizeof buf, -0.0);
    tap_ok(strcmp(buf, "0") == 0, "negative zero written as 0");

    /* A full suite stream: header, comment, blank line, terms, trailer. */
    write_file("#% lamina-op 2\n#% kind: pauli\n#% qubits: 4\n# a comment\n\n"
               "-0.5\n0.25 x:0 z:3\n#% late: yes\n1e-3 y:1 @2\n#% end\n");
    lam_reader *r = open_or_die();
    lam_error err;
    lam_kind kind;
    tap_ok(lam_reader_kind(r, &kind, &err) == 0 && kind == LAM_KIND_PAULI, "kind from header");
    tap_ok(strcmp(lam_meta_get(lam_reader_meta(r), "qubits"), "4") == 0, "metadata read");
    lam_line ln;
    int n = 0;
    double sum = 0;
    int rc;
    while ((rc = lam_reader_next(r, &ln, &err)) == 1) {
        ++n;
        sum += ln.coef;
    }
    tap_ok(n == 3 && rc == 0, "three terms, then the end (0)");
    tap_near(sum, -0.249, 1e-15, "coefficients parsed");
    tap_ok(lam_meta_get(lam_reader_meta(r), "late") != NULL, "metadata between terms kept");
    lam_reader_close(r);

    /* Kind inferred from the terms of a stream without header. */
    write_file("0.5\n0.25 3 1 / 0 2\n");
    r = open_or_die();
    tap_ok(lam_reader_kind(r, &kind, &err) == 0 && kind == LAM_KIND_FERMION,
           "fermion kind inferred past a bare constant");
    n = 0;
    while (lam_reader_next(r, &ln, &err) == 1) ++n;
    tap_ok(n == 2, "inferred-kind stream still yields every term");
    tap_ok(lam_reader_syntax(r) == 0, "the generic reader leaves the spelling to the kind's parser");
    lam_reader_close(r);
    tap_ok(kind_of("0.25 2 /\n", NULL) == LAM_KIND_FERMION, "a lone creator with its '/' is fermion");
    tap_ok(kind_of("0.25 z:1-3 @2\n", NULL) == LAM_KIND_PAULI, "pauli kind inferred from z:");
    /* version 1, read for one release of grace */
    int syntax;
    tap_ok(kind_of("#% lamina-op 1\n0.25 X0 Y1\n#% end\n", &syntax) == LAM_KIND_PAULI && syntax == 1,
           "version-1 header read, pauli kind inferred from X0");
    tap_ok(kind_of("0.25 3+ 1-\n", NULL) == LAM_KIND_FERMION,
           "headerless version-1 fermion term inferred");
    tap_ok(kind_of("1.0 0 1 1 0\n", NULL) == LAM_KIND_SPINFREE, "spinfree kind inferred");
    tap_ok(kind_of("-1.5\n1 U 0 0 0\n0.25 R 0 1a\n", NULL) == LAM_KIND_FRAGMENTS,
           "fragments kind inferred from U/R");

    /* Metadata editing. */
    lam_meta m;
    lam_meta_init(&m);
    lam_meta_set(&m, "orbitals", "4");
    lam_meta_add(&m, "history", "a");
    lam_meta_add(&m, "history", "b");
    lam_meta_set(&m, "orbitals", "6");
    tap_ok(m.count == 3 && strcmp(lam_meta_get(&m, "orbitals"), "6") == 0, "set replaces, add appends");
    tap_ok(strcmp(lam_meta_get(&m, "history"), "b") == 0, "get returns the last value");
    lam_meta_remove(&m, "history");
    tap_ok(m.count == 1, "remove drops every entry of a key");
    lam_meta_free(&m);

    char *argv[] = {"/usr/bin/lam-map", "--encoding", "parity", "a b"};
    char *h = lam_history_from_argv(4, argv);
    tap_ok(strcmp(h, "lam-map --encoding parity 'a b'") == 0, "history line from argv");
    free(h);

    test_returned_errors();
    test_sorts();
    test_names();
    unlink(path);
    return tap_done();
}
