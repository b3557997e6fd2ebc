/* report.h - key/value reports (lam-norm, lam-range, lam-cost, ...).
 *
 * Text form: one "key<TAB>value" line per entry, in insertion order;
 * numbers with 17 significant digits.  --tsv form: one header row of keys
 * and one row of values (entries added with lam_report_line, such as
 * lam-range's per-sector lines, are left out of the TSV form: they are
 * printed only in the text form).
 */
#ifndef LAM_REPORT_H
#define LAM_REPORT_H

#include <stdio.h>

#include "util.h"

typedef struct lam_report lam_report;

lam_report *lam_report_new(void);
void lam_report_free(lam_report *rep);
void lam_report_num(lam_report *rep, const char *key, double value);
void lam_report_int(lam_report *rep, const char *key, long long value);
void lam_report_str(lam_report *rep, const char *key, const char *value);
/* A repeated-key line (e.g. "sector"), text form only; value is the
 * whole rest of the line (tabs allowed). */
void lam_report_line(lam_report *rep, const char *key, const char *value);
/* The fixed TSV columns of a program (NULL-terminated, kept by pointer):
 * the TSV form then has exactly these columns in this order whatever the
 * input, with LAM_REPORT_ABSENT where a value does not apply.  A TSV entry
 * whose key is not a column is an internal error (an assertion), so the set
 * cannot drift from what the program reports. */
#define LAM_REPORT_ABSENT "NA"
void lam_report_columns(lam_report *rep, const char *const *columns);
/* 1 and the number of key (a TSV entry) when present and numeric, else 0
 * and NAN: for a program that adds figures derived from its own report. */
int lam_report_value(const lam_report *rep, const char *key, double *value);
/* Write to out in text or TSV form; a write error is seen when the output
 * is closed (lam_output_close, output.h: ferror). */
void lam_report_write(const lam_report *rep, FILE *out, int tsv);
/* The two halves of the TSV form, for a program that writes one row per
 * input under one header (every report given the same columns). */
void lam_report_write_header(const lam_report *rep, FILE *out);
void lam_report_write_row(const lam_report *rep, FILE *out);
/* Write to path ("-" or NULL: stdout), whole or not at all; 0, or 74 with
 * err filled.  A program that must open its report before its main output
 * (so that an unwritable path fails before a byte of that goes out) opens
 * it with lam_output_open and closes it with lam_output_close. */
int lam_report_save(const lam_report *rep, const char *path, int tsv, lam_error *err);

/* --drop TOL of the programs that remove small terms (lam-map, lam-sum):
 * the tolerance, and what was removed, counted so that the program can say
 * it on stderr.  Nothing is dropped while no --drop was given. */
typedef struct {
    int on;
    double tol;
    const char *text; /* TOL as given */
    size_t count;
    double norm;
} lam_drop;
/* Parse the option's value (a number >= 0; exit 64 otherwise). */
void lam_drop_parse(lam_drop *d, const char *arg);
/* 1 (and counted) when a term of coefficient c is to be removed; the
 * constant or identity (is_constant) never is. */
int lam_drop_takes(lam_drop *d, double c, int is_constant);
/* "dropped N terms with |c| <= TOL Eh, one-norm removed X Eh" on stderr. */
void lam_drop_say(const lam_drop *d);

/* Read a text report (as written above; path NULL or "-" is stdin).
 * lam_report_get returns 1 and the value when key is present and numeric,
 * else 0 and NAN.  Used by programs that take a report as input. */
typedef struct lam_report_in lam_report_in;
int lam_report_read(const char *path, lam_report_in **out, lam_error *err);
int lam_report_get(const lam_report_in *in, const char *key, double *value);
const char *lam_report_get_str(const lam_report_in *in, const char *key);
void lam_report_in_free(lam_report_in *in);
/* A report built entry by entry, for a program that reads its lines
 * through another reader (lam-cost reads a report and a stream through the
 * stream reader); line is kept for messages as lam_report_read keeps it. */
lam_report_in *lam_report_in_new(void);
void lam_report_in_add(lam_report_in *in, const char *key, const char *value, long line);

/* ---- the floor: half the spectral range, from a lam-range report ----
 * lam-norm and lam-cost --floor REPORT.  The report is lam-range's text
 * form or its --tsv form (one header row, one value row; NA is absent).
 * The half range used is the N-electron one (n_half_range) when the
 * report has it, else the one sector's (sector_half_range), else the
 * Fock space's (fock_half_range).  It is exact when both ends' status
 * keys say exact, and otherwise a certified lower bound on the floor
 * (lam-range's values are Rayleigh quotients), so that lambda/floor is
 * then an upper bound on the true ratio ("at-most"). */
typedef struct {
    const char *path;  /* as given */
    const char *from;  /* the report key used, e.g. "n_half_range" */
    double value;      /* Eh, > 0 */
    int exact;         /* both ends certified by lam-range */
} lam_floor;
/* 0, 65 (bad or missing values, with file:line) or 66 (cannot open). */
int lam_floor_read(const char *path, lam_floor *fl, lam_error *err);
/* The floor's keys: floor, floor<sep>status, floor<sep>from, and for each
 * named one-norm the ratio and its status (exact or at-most), e.g. with
 * sep '_' and name "ratio": ratio, ratio_status.  fl NULL: every key with
 * LAM_REPORT_ABSENT, so that --tsv keeps its columns. */
void lam_floor_report(lam_report *rep, const lam_floor *fl, char sep);
void lam_floor_ratio(lam_report *rep, const lam_floor *fl, char sep, const char *name,
                     double lambda);

#endif
