/* report.c - key/value reports in text and TSV form. */
#include "report.h"

#include <assert.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "output.h"
#include "stream.h"
#include "util.h"

/* A report is a key/value list (lam_meta, the list a stream's metadata
 * lives in).  Its entries' line field says where one goes: a figure is in
 * the text form and the TSV form, a text line (lam_report_line) only in
 * the text form. */
enum { TEXT_LINE = 0, FIGURE = 1 };

typedef lam_meta_entry entry;

struct lam_report {
    lam_meta list;
    const char *const *columns; /* fixed TSV columns, or NULL: the figures */
};

lam_report *lam_report_new(void) { return lam_calloc(1, sizeof(lam_report)); }

void lam_report_free(lam_report *rep)
{
    if (!rep) return;
    lam_meta_free(&rep->list);
    free(rep);
}

static entry *find_figure(const lam_report *rep, const char *key)
{
    for (size_t i = 0; i < rep->list.count; ++i)
        if (rep->list.items[i].line == FIGURE && strcmp(rep->list.items[i].key, key) == 0)
            return &rep->list.items[i];
    return NULL;
}

static void add(lam_report *rep, const char *key, const char *value, int where)
{
    entry *e = where == FIGURE ? find_figure(rep, key) : NULL;
    if (!e) {
        lam_meta_append(&rep->list, key, value, where);
        return;
    }
    char *v = lam_strdup(value);
    free(e->value);
    e->value = v;
}

void lam_report_num(lam_report *rep, const char *key, double value)
{
    char buf[LAM_DOUBLE_BUF];
    lam_format_double(buf, sizeof buf, value);
    add(rep, key, buf, FIGURE);
}

void lam_report_int(lam_report *rep, const char *key, long long value)
{
    char buf[32];
    snprintf(buf, sizeof buf, "%lld", value);
    add(rep, key, buf, FIGURE);
}

void lam_report_str(lam_report *rep, const char *key, const char *value)
{
    add(rep, key, value, FIGURE);
}

void lam_report_line(lam_report *rep, const char *key, const char *value)
{
    add(rep, key, value, TEXT_LINE);
}

void lam_report_columns(lam_report *rep, const char *const *columns) { rep->columns = columns; }

int lam_report_value(const lam_report *rep, const char *key, double *value)
{
    const entry *e = find_figure(rep, key);
    *value = NAN;
    return e && lam_parse_double(e->value, value) == 0;
}

static void require_columns_cover(const lam_report *rep)
{
    for (size_t i = 0; i < rep->list.count; ++i) {
        if (rep->list.items[i].line != FIGURE) continue;
        size_t c = 0;
        while (rep->columns[c] && strcmp(rep->columns[c], rep->list.items[i].key) != 0) ++c;
        /* a program's report keys and its TSV columns must not drift apart */
        assert(rep->columns[c] != NULL);
    }
}

/* One TSV line: the keys (header) or the values of the columns. */
static void write_tsv_line(const lam_report *rep, FILE *out, int values)
{
    int first = 1;
    if (rep->columns) {
        require_columns_cover(rep);
        for (size_t c = 0; rep->columns[c]; ++c) {
            const entry *e = values ? find_figure(rep, rep->columns[c]) : NULL;
            fprintf(out, "%s%s", first ? "" : "\t",
                    !values ? rep->columns[c] : e ? e->value : LAM_REPORT_ABSENT);
            first = 0;
        }
    } else {
        for (size_t i = 0; i < rep->list.count; ++i)
            if (rep->list.items[i].line == FIGURE) {
                fprintf(out, "%s%s", first ? "" : "\t",
                        values ? rep->list.items[i].value : rep->list.items[i].key);
                first = 0;
            }
    }
    fputc('\n', out);
}

void lam_report_write_header(const lam_report *rep, FILE *out) { write_tsv_line(rep, out, 0); }

void lam_report_write_row(const lam_report *rep, FILE *out) { write_tsv_line(rep, out, 1); }

void lam_report_write(const lam_report *rep, FILE *out, int tsv)
{
    if (tsv) {
        lam_report_write_header(rep, out);
        lam_report_write_row(rep, out);
        return;
    }
    for (size_t i = 0; i < rep->list.count; ++i)
        fprintf(out, "%s\t%s\n", rep->list.items[i].key, rep->list.items[i].value);
}

int lam_report_save(const lam_report *rep, const char *path, int tsv, lam_error *err)
{
    lam_output out;
    if (lam_output_open(path, &out, err)) return err->code;
    lam_report_write(rep, out.fp, tsv);
    return lam_output_close(&out, 1, err);
}

/* ---- --drop ---- */

void lam_drop_parse(lam_drop *d, const char *arg)
{
    d->tol = lam_opt_double("--drop", arg);
    if (d->tol < 0) lam_usage_error("--drop wants a tolerance >= 0, not '%s'", arg);
    d->text = arg;
    d->on = 1;
}

int lam_drop_takes(lam_drop *d, double c, int is_constant)
{
    if (!d->on || is_constant || fabs(c) > d->tol) return 0;
    d->count++;
    d->norm += fabs(c);
    return 1;
}

void lam_drop_say(const lam_drop *d)
{
    if (!d->on) return;
    char nb[LAM_DOUBLE_BUF];
    lam_format_double(nb, sizeof nb, d->norm);
    lam_warn("dropped %zu terms with |c| <= %s Eh, one-norm removed %s Eh", d->count, d->text, nb);
}

/* ---- reading ---- */

/* The lines read, with their line numbers (a lam_meta list). */
struct lam_report_in {
    lam_meta list;
};

/* Lines are "key<TAB>value"; '#' lines and blank lines are skipped.
 * Keys keep their line number (in .line) for messages. */
int lam_report_read(const char *path, lam_report_in **out, lam_error *err)
{
    *out = NULL;
    FILE *f = (!path || strcmp(path, "-") == 0) ? stdin : fopen(path, "r");
    const char *name = f == stdin ? "<stdin>" : path;
    if (!f) return lam_error_set(err, LAM_EX_NOINPUT, "cannot open %s: %s", name, strerror(errno));
    lam_report_in *in = lam_calloc(1, sizeof *in);
    char *line = NULL;
    size_t linecap = 0;
    long lineno = 0;
    ssize_t n;
    int rc = 0;
    while (!rc && (n = getline(&line, &linecap, f)) >= 0) {
        ++lineno;
        while (n > 0 && (line[n - 1] == '\n' || line[n - 1] == '\r')) line[--n] = '\0';
        if (n == 0 || line[0] == '#') continue;
        char *tab = strchr(line, '\t');
        if (!tab) {
            rc = lam_error_at(err, LAM_EX_DATA, name, lineno,
                              "report line without a tab between key and value");
            break;
        }
        *tab = '\0';
        lam_meta_append(&in->list, line, tab + 1, lineno);
    }
    if (!rc && ferror(f)) rc = lam_error_set(err, LAM_EX_IOERR, "read error on %s", name);
    free(line);
    if (f != stdin) fclose(f);
    if (rc) lam_report_in_free(in);
    else *out = in;
    return rc;
}

const char *lam_report_get_str(const lam_report_in *in, const char *key)
{
    return lam_meta_get(&in->list, key);
}

int lam_report_get(const lam_report_in *in, const char *key, double *value)
{
    const char *s = lam_report_get_str(in, key);
    if (!s) {
        *value = NAN;
        return 0;
    }
    if (lam_parse_double(s, value) != 0) {
        *value = NAN;
        return 0;
    }
    return 1;
}

void lam_report_in_free(lam_report_in *in)
{
    if (!in) return;
    lam_meta_free(&in->list);
    free(in);
}

lam_report_in *lam_report_in_new(void) { return lam_calloc(1, sizeof(lam_report_in)); }

void lam_report_in_add(lam_report_in *in, const char *key, const char *value, long line)
{
    lam_meta_append(&in->list, key, value, line);
}

/* ---- the floor from a lam-range report ---- */

/* The entry of key, or NULL; *dup the second one when the key is there
 * twice (two reports run together). */
static const entry *find_in(const lam_report_in *in, const char *key, const entry **dup)
{
    const entry *first = NULL;
    *dup = NULL;
    for (size_t i = 0; i < in->list.count; ++i)
        if (strcmp(in->list.items[i].key, key) == 0 && strcmp(in->list.items[i].value, LAM_REPORT_ABSENT) != 0) {
            if (!first)
                first = &in->list.items[i];
            else if (!*dup)
                *dup = &in->list.items[i];
        }
    return first;
}

static size_t count_fields(const char *s)
{
    size_t n = 1;
    for (; *s; ++s) n += *s == '\t';
    return n;
}

/* A --tsv form: a header row and value rows of the same width (read as
 * "key<TAB>rest" lines, so more than two fields each). */
static int looks_tsv(const lam_report_in *in)
{
    return in->list.count >= 2 && count_fields(in->list.items[0].value) > 1 &&
           count_fields(in->list.items[0].value) == count_fields(in->list.items[1].value);
}

/* --tsv form: turn the header row and the value row into one entry a
 * column, each with the value row's line number; a second value row (two
 * floors) is an error. */
static int unfold_tsv(lam_report_in *in, const char *path, lam_error *err)
{
    if (!looks_tsv(in)) return 0;
    if (in->list.count > 2)
        return lam_error_at(err, LAM_EX_DATA, path, in->list.items[2].line,
                            "two floors in one report: a --tsv report has one value row (the "
                            "first at line %ld)", in->list.items[1].line);
    const entry *head = &in->list.items[0], *row = &in->list.items[1];
    size_t n = count_fields(head->value) + 1;
    lam_meta cols;
    lam_meta_init(&cols);
    lam_meta_append(&cols, head->key, row->key, row->line);
    char *kp = head->value, *vp = row->value;
    for (size_t c = 1; c < n; ++c) {
        size_t kl = strcspn(kp, "\t"), vl = strcspn(vp, "\t");
        char kend = kp[kl], vend = vp[vl];
        kp[kl] = vp[vl] = '\0';
        lam_meta_append(&cols, kp, vp, row->line);
        kp += kl + (kend != '\0');
        vp += vl + (vend != '\0');
    }
    lam_meta_free(&in->list);
    in->list = cols;
    return 0;
}

/* The status of one end into *exact (1 exact, 0 bound); 0, or 65 when it
 * is missing, repeated or unknown. */
static int end_status(const lam_report_in *in, const char *path, const entry *half,
                      const char *key, int *exact, lam_error *err)
{
    const entry *dup, *e = find_in(in, key, &dup);
    if (!e)
        return lam_error_at(err, LAM_EX_DATA, path, half->line,
                            "report has %s but no %s line: the status of the floor is unknown",
                            half->key, key);
    if (dup)
        return lam_error_at(err, LAM_EX_DATA, path, dup->line,
                            "two floors in one report: %s again (first at line %ld)", key, e->line);
    if (strcmp(e->value, "exact") != 0 && strcmp(e->value, "bound") != 0)
        return lam_error_at(err, LAM_EX_DATA, path, e->line,
                            "unknown status '%s' of %s (lam-range writes exact or bound)",
                            e->value, key);
    *exact = strcmp(e->value, "exact") == 0;
    return 0;
}

static int floor_from(const lam_report_in *in, const char *path, lam_floor *fl, lam_error *err)
{
    static const char *const scopes[] = {"n", "sector", "fock"};
    char key[32], lo[32], hi[32];
    const entry *half = NULL, *dup = NULL;
    size_t s = 0;
    for (; s < 3 && !half; ++s) {
        snprintf(key, sizeof key, "%s_half_range", scopes[s]);
        half = find_in(in, key, &dup);
    }
    if (!half)
        return lam_error_at(err, LAM_EX_DATA, path, 0,
                            "no half range in the report (n_half_range, sector_half_range or "
                            "fock_half_range): is it lam-range's, run without --lowest or "
                            "--highest?");
    if (dup)
        return lam_error_at(err, LAM_EX_DATA, path, dup->line,
                            "two floors in one report: %s again (first at line %ld)", half->key,
                            half->line);
    if (lam_parse_double(half->value, &fl->value) != 0 || !isfinite(fl->value))
        return lam_error_at(err, LAM_EX_DATA, path, half->line, "%s is not a number: '%s'",
                            half->key, half->value);
    if (!(fl->value > 0))
        return lam_error_at(err, LAM_EX_DATA, path, half->line,
                            "%s is %s: a floor must be > 0 to divide by", half->key, half->value);
    snprintf(lo, sizeof lo, "%s_min_status", scopes[s - 1]);
    snprintf(hi, sizeof hi, "%s_max_status", scopes[s - 1]);
    int lo_exact, hi_exact, rc = end_status(in, path, half, lo, &lo_exact, err);
    if (!rc) rc = end_status(in, path, half, hi, &hi_exact, err);
    if (rc) return rc;
    fl->exact = lo_exact && hi_exact;
    fl->from = scopes[s - 1][0] == 'n' ? "n_half_range"
               : scopes[s - 1][0] == 's' ? "sector_half_range"
                                         : "fock_half_range";
    return 0;
}

int lam_floor_read(const char *path, lam_floor *fl, lam_error *err)
{
    lam_report_in *in;
    memset(fl, 0, sizeof *fl);
    fl->path = path;
    int rc = lam_report_read(path, &in, err);
    if (rc) return rc;
    const char *name = path && strcmp(path, "-") != 0 ? path : "<stdin>";
    rc = unfold_tsv(in, name, err);
    if (!rc) rc = floor_from(in, name, fl, err);
    lam_report_in_free(in);
    return rc;
}

static void floor_key(char *buf, size_t size, const char *name, char sep, const char *what)
{
    snprintf(buf, size, "%s%c%s", name, sep, what);
}

void lam_floor_report(lam_report *rep, const lam_floor *fl, char sep)
{
    char k[64];
    if (fl)
        lam_report_num(rep, "floor", fl->value);
    else
        lam_report_str(rep, "floor", LAM_REPORT_ABSENT);
    floor_key(k, sizeof k, "floor", sep, "status");
    lam_report_str(rep, k, !fl ? LAM_REPORT_ABSENT : fl->exact ? "exact" : "bound");
    floor_key(k, sizeof k, "floor", sep, "from");
    lam_report_str(rep, k, fl ? fl->from : LAM_REPORT_ABSENT);
}

void lam_floor_ratio(lam_report *rep, const lam_floor *fl, char sep, const char *name,
                     double lambda)
{
    char k[64];
    if (fl)
        lam_report_num(rep, name, lambda / fl->value);
    else
        lam_report_str(rep, name, LAM_REPORT_ABSENT);
    /* only a certified floor makes the ratio exact; an inner bound on the
     * floor makes it an upper bound */
    floor_key(k, sizeof k, name, sep, "status");
    lam_report_str(rep, k, !fl ? LAM_REPORT_ABSENT : fl->exact ? "exact" : "at-most");
}
