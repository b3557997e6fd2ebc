/* stream.h - the lamina operator stream, version 2 (see man/lamina-stream.5).
 *
 * A stream is line oriented: "#%" lines are metadata (key: value), other
 * "#" lines are comments, blank lines are ignored, every other line is one
 * term with its real coefficient in column 1.  A stream that starts with
 * "#% lamina-op 2" must end with "#% end"; a reader that meets EOF first
 * fails with "truncated stream" (exit 65).  gzip input is read
 * transparently through zlib.  Version-1 streams ("#% lamina-op 1", or
 * headerless terms spelled X0 Y1 / 3+ 0-) are still read, for one release.
 */
#ifndef LAM_STREAM_H
#define LAM_STREAM_H

#include <stddef.h>

#include "util.h"

/* The largest coefficient magnitude a reader accepts: with |c| <= 1e100
 * sums of squares and products of a few coefficients stay far from
 * overflow in every program.  Tiny values (subnormals too) are read as
 * they are. */
#define LAM_COEF_MAX 1e100

typedef enum {
    LAM_KIND_UNKNOWN = 0,
    LAM_KIND_SPINFREE,
    LAM_KIND_FERMION,
    LAM_KIND_PAULI,
    LAM_KIND_FRAGMENTS
} lam_kind;

const char *lam_kind_name(lam_kind kind);
/* The kind a name stands for; LAM_KIND_UNKNOWN for any other name
 * ("unknown" included). */
lam_kind lam_kind_parse(const char *name);

/* ---- metadata: ordered key/value list; keys may repeat (history) ---- */
typedef struct {
    char *key;
    char *value;
    long line; /* line it was read from, 0 if set by a program */
} lam_meta_entry;

typedef struct {
    lam_meta_entry *items;
    size_t count, cap;
} lam_meta;

void lam_meta_init(lam_meta *m);
void lam_meta_free(lam_meta *m);
void lam_meta_copy(lam_meta *dst, const lam_meta *src);
/* Last value for key, or NULL. */
const char *lam_meta_get(const lam_meta *m, const char *key);
const lam_meta_entry *lam_meta_find(const lam_meta *m, const char *key);
/* Replace the value of the first entry with this key, or append. */
void lam_meta_set(lam_meta *m, const char *key, const char *value);
void lam_meta_setf(lam_meta *m, const char *key, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
/* Append (keys such as history may repeat). */
void lam_meta_add(lam_meta *m, const char *key, const char *value);
/* Append with the line the entry was read from (0: set by a program). */
void lam_meta_append(lam_meta *m, const char *key, const char *value, long line);
void lam_meta_remove(lam_meta *m, const char *key);

/* ---- reader ---- */
typedef struct lam_reader lam_reader;

/* One term line, tokenized in place; valid until the next call. */
typedef struct {
    double coef;
    int nfields;   /* tokens after the coefficient */
    char **fields;
    long line;
} lam_line;

/* Functions that can fail on bad input take a lam_error *err last, fill
 * it and return its code (65 bad data with "file:line", 66 cannot open,
 * 74 read error); 0 is success.  Out of memory still exits (util.h). */

/* Open path (NULL or "-" for stdin) into *out and read the leading
 * metadata and comments; 66 if it cannot be opened. */
int lam_reader_open(const char *path, lam_reader **out, lam_error *err);
void lam_reader_close(lam_reader *r);
const char *lam_reader_name(const lam_reader *r);
long lam_reader_lineno(const lam_reader *r);
/* Metadata read so far (header, plus any #% lines met between terms). */
lam_meta *lam_reader_meta(lam_reader *r);
/* The kind into *kind: from "#% kind:", else the forced kind, else
 * inferred from the first term with fields (x:/y:/z: or @g -> pauli, a "/"
 * field -> fermion, integers -> spinfree, U or R -> fragments; version-1
 * X0 -> pauli, 3+ -> fermion).  A forced kind that contradicts the header
 * is an error (65), and so is an empty input (see lam_reader_next). */
void lam_reader_force_kind(lam_reader *r, lam_kind kind);
int lam_reader_kind(lam_reader *r, lam_kind *kind, lam_error *err);
/* Next term: 1 and *out filled, 0 at the end of the stream (the "#% end"
 * trailer checked), else the error code (65, 74).  A coefficient that does
 * not parse, NaN, Inf or |c| > LAM_COEF_MAX is 65 with file and line.  An
 * input with no "#%" line and no term (empty, or comments only) is 65
 * "empty input" unless lam_reader_allow_empty(1) was called
 * (--allow-empty).  Loop with `while ((rc = lam_reader_next(...)) == 1)`
 * and check rc after the loop. */
int lam_reader_next(lam_reader *r, lam_line *out, lam_error *err);
/* lam_reader_next in two steps, for a reader that parses the text itself:
 * the next term line as text (NUL terminated, writable, valid until the
 * next call; 1, 0 at the end, else the code, as lam_reader_next), and the
 * split into fields with the coefficient checked (0 or 65). */
int lam_reader_next_text(lam_reader *r, char **text, long *line, lam_error *err);
int lam_reader_split(lam_reader *r, char *text, long line, lam_line *out, lam_error *err);
/* 0 and *out for a coefficient the reader accepts (as lam_reader_next),
 * -1 otherwise (the caller splits the line to get the message). */
int lam_reader_coefficient(const char *tok, double *out);
/* Process-wide: let an empty input read as the zero operator. */
void lam_reader_allow_empty(int allow);
/* The first term line as lam_reader_open read it ahead, as written (NULL
 * when the input has none, or once a term has been read): for a program
 * that tells a stream from another text form on the same input (lam-cost:
 * a key<TAB>value report) before reading the terms. */
const char *lam_reader_first_text(const lam_reader *r);
/* Term spelling of the stream: 2, 1 (version 1), or 0 while neither the
 * header nor a term has told it. */
int lam_reader_syntax(const lam_reader *r);
/* Note that this term is spelled in version `syntax`; the first spelled
 * term of a headerless stream fixes it, a term of the other version is
 * 65 at its line. */
int lam_reader_term_syntax(lam_reader *r, const lam_line *ln, int syntax, lam_error *err);
/* Raw text, for a reader that finds lines itself (several threads at a
 * time): once lam_reader_raw_ready (no line read ahead is waiting, no
 * "#% end" met), lam_reader_raw_read hands out the bytes after the last
 * line read, up to size into dst (*got 0 at the end; 0 or the code of a
 * read error).  The caller counts the lines, tells the reader the last
 * line's number (lam_reader_raw_seen, after at least one term), gives it
 * every "#%" line (lam_reader_raw_control: metadata taken in, *end set
 * for "#% end"; 0 or 65), checks what follows the end itself ("term after
 * '#% end'"), and calls lam_reader_raw_finish at the end of the input
 * (the "truncated stream" check; 0 or 65). */
int lam_reader_raw_ready(const lam_reader *r);
int lam_reader_raw_read(lam_reader *r, char *dst, size_t size, size_t *got, lam_error *err);
void lam_reader_raw_seen(lam_reader *r, long lineno);
int lam_reader_raw_control(lam_reader *r, char *text, long line, int *end, lam_error *err);
int lam_reader_raw_finish(lam_reader *r, lam_error *err);
/* Bytes of a plain regular file not read yet, -1 when unknown (gzip,
 * pipes); and the bytes read so far.  For sizing tables ahead. */
long long lam_reader_bytes_left(const lam_reader *r);
long long lam_reader_bytes_read(const lam_reader *r);
/* Fill *err with "file:line: message" (bad data, 65) and return 65. */
int lam_reader_error(const lam_reader *r, long line, lam_error *err, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));
/* Integer metadata value (e.g. "orbitals") into *value; dflt if absent,
 * 65 naming the line if present and not an integer in [min, max]. */
int lam_reader_meta_long(lam_reader *r, const char *key, long dflt, long min, long max,
                         long *value, lam_error *err);

/* Parse a field as an index in [0, limit) into *index; 65 otherwise. */
int lam_reader_index(const lam_reader *r, const lam_line *ln, int field, long limit,
                     const char *what, int *index, lam_error *err);

/* ---- writer ---- */
typedef struct lam_writer lam_writer;

/* Open path (NULL or "-" for stdout) into *out; gzip != 0 writes gzip.
 * 74 when it cannot be opened. */
int lam_writer_open(const char *path, int gzip, lam_writer **out, lam_error *err);
/* "#% lamina-op 2", "#% kind: K", every entry of meta except the reserved
 * keys (lamina-op, kind, end, distinct), then "#% history: <history>".
 * "distinct: yes" is written only after lam_writer_set_distinct: a program
 * states it of its own output, it never passes through.
 * The writing functions return nothing: the first write error is kept and
 * reported by lam_writer_close (74). */
void lam_writer_set_distinct(lam_writer *w);
void lam_writer_header(lam_writer *w, lam_kind kind, const lam_meta *meta,
                       const char *history);
/* One term: coefficient with 17 significant digits, then rest (may be
 * NULL or "") separated by one space. */
void lam_writer_term(lam_writer *w, double coef, const char *rest);
void lam_writer_printf(lam_writer *w, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));
void lam_writer_write(lam_writer *w, const char *buf, size_t len);
/* Write "#% end", flush and close (w is freed in any case); 74 on any
 * write error, now or earlier. */
int lam_writer_close(lam_writer *w, lam_error *err);
/* Flush and close without the trailer (for reports). */
int lam_writer_close_raw(lam_writer *w, lam_error *err);
/* Free a writer on a failure path: standard output is not flushed, a file
 * is closed as it is. */
void lam_writer_discard(lam_writer *w);

/* "lam-xxx arg1 arg2 ..." from argv (program basename); caller frees. */
char *lam_history_from_argv(int argc, char **argv);

#endif
