/* stream.c - reader and writer of the lamina operator stream, version 2
 * (version 1 still read). */
#include "stream.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include <fcntl.h>
#include <sys/stat.h>
#include <zlib.h>

#include "output.h"
#include "util.h"

/* ------------------------------------------------------------------ */
/* kinds */

static const char *const kind_names[] = {"unknown", "spinfree", "fermion",
                                         "pauli", "fragments"};

const char *lam_kind_name(lam_kind kind)
{
    return (unsigned)kind < sizeof kind_names / sizeof *kind_names
               ? kind_names[kind]
               : "unknown";
}

lam_kind lam_kind_parse(const char *name)
{
    int k = lam_name_index(kind_names + LAM_KIND_SPINFREE, LAM_KIND_FRAGMENTS, name);
    return k < 0 ? LAM_KIND_UNKNOWN : (lam_kind)(k + LAM_KIND_SPINFREE);
}

/* ------------------------------------------------------------------ */
/* metadata */

void lam_meta_init(lam_meta *m) { memset(m, 0, sizeof *m); }

void lam_meta_free(lam_meta *m)
{
    for (size_t i = 0; i < m->count; ++i) {
        free(m->items[i].key);
        free(m->items[i].value);
    }
    free(m->items);
    lam_meta_init(m);
}

void lam_meta_append(lam_meta *m, const char *key, const char *value, long line)
{
    if (m->count == m->cap) {
        m->cap = m->cap ? 2 * m->cap : 8;
        m->items = lam_realloc(m->items, lam_mul_size(m->cap, sizeof *m->items));
    }
    lam_meta_entry *e = &m->items[m->count++];
    e->key = lam_strdup(key);
    e->value = lam_strdup(value);
    e->line = line;
}

void lam_meta_copy(lam_meta *dst, const lam_meta *src)
{
    lam_meta_init(dst);
    for (size_t i = 0; i < src->count; ++i)
        lam_meta_append(dst, src->items[i].key, src->items[i].value, src->items[i].line);
}

const lam_meta_entry *lam_meta_find(const lam_meta *m, const char *key)
{
    for (size_t i = m->count; i-- > 0;)
        if (strcmp(m->items[i].key, key) == 0) return &m->items[i];
    return NULL;
}

const char *lam_meta_get(const lam_meta *m, const char *key)
{
    const lam_meta_entry *e = lam_meta_find(m, key);
    return e ? e->value : NULL;
}

void lam_meta_set(lam_meta *m, const char *key, const char *value)
{
    for (size_t i = 0; i < m->count; ++i)
        if (strcmp(m->items[i].key, key) == 0) {
            char *v = lam_strdup(value);
            free(m->items[i].value);
            m->items[i].value = v;
            m->items[i].line = 0;
            return;
        }
    lam_meta_append(m, key, value, 0);
}

void lam_meta_setf(lam_meta *m, const char *key, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    char *buf = lam_malloc(n > 0 ? (size_t)n + 1 : 1);
    buf[0] = '\0';
    va_start(ap, fmt);
    if (n > 0) vsnprintf(buf, (size_t)n + 1, fmt, ap);
    va_end(ap);
    lam_meta_set(m, key, buf);
    free(buf);
}

void lam_meta_add(lam_meta *m, const char *key, const char *value)
{
    lam_meta_append(m, key, value, 0);
}

void lam_meta_remove(lam_meta *m, const char *key)
{
    size_t j = 0;
    for (size_t i = 0; i < m->count; ++i) {
        if (strcmp(m->items[i].key, key) == 0) {
            free(m->items[i].key);
            free(m->items[i].value);
        } else {
            m->items[j++] = m->items[i];
        }
    }
    m->count = j;
}

/* ------------------------------------------------------------------ */
/* reader */

typedef struct {
    char *text;
    long line;
} pending_line;

struct lam_reader {
    gzFile gz;
    int fd;
    char *name;
    long lineno;
    /* input buffer: bytes [pos, len) are unread */
    char *buf;
    size_t cap, len, pos;
    int eof;
    /* lines read ahead while inferring the kind */
    pending_line *pending;
    size_t npending, pending_next;
    char *pending_current;
    lam_meta meta;
    lam_kind kind, forced;
    int kind_resolved;
    int suite_stream; /* started with "#% lamina-op N" */
    int syntax;       /* term spelling: 1 or 2, 0 while unknown */
    int saw_meta;     /* any "#%" line */
    int saw_term;     /* any term line */
    int ended;        /* met "#% end" */
    char **fields;
    int fields_cap;
};

/* The buffer starts small (many streams are short) and doubles only for
 * lines longer than it. */
enum { READ_START = 1 << 16, READ_MIN = 1 << 12 };

const char *lam_reader_name(const lam_reader *r) { return r->name; }
long lam_reader_lineno(const lam_reader *r) { return r->lineno; }
lam_meta *lam_reader_meta(lam_reader *r) { return &r->meta; }

int lam_reader_error(const lam_reader *r, long line, lam_error *err, const char *fmt, ...)
{
    char msg[1024];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    return lam_error_at(err, LAM_EX_DATA, r->name, line, "%s", msg);
}

/* The code and message of a failed gzread. */
static int read_error(lam_reader *r, lam_error *err)
{
    int zerr;
    const char *msg = gzerror(r->gz, &zerr);
    return lam_error_at(err, zerr == Z_DATA_ERROR ? LAM_EX_DATA : LAM_EX_IOERR, r->name,
                        r->lineno, "read error: %s", zerr == Z_ERRNO ? strerror(errno) : msg);
}

/* Refill so that [pos, len) holds at least a whole line or everything
 * left; 0, or the code of a read error. */
static int refill(lam_reader *r, lam_error *err)
{
    if (r->pos > 0) {
        memmove(r->buf, r->buf + r->pos, r->len - r->pos);
        r->len -= r->pos;
        r->pos = 0;
    }
    if (r->eof) return 0;
    if (r->cap - r->len < READ_MIN) {
        r->cap = r->cap ? 2 * r->cap : READ_START;
        r->buf = lam_realloc(r->buf, r->cap + 1);
    }
    int got = gzread(r->gz, r->buf + r->len, (unsigned)(r->cap - r->len));
    if (got < 0) return read_error(r, err);
    if (got == 0) r->eof = 1;
    r->len += (size_t)got;
    return 0;
}

/* Next raw line from the input (NUL terminated, without the newline) in
 * *out, NULL at EOF; 0 or an error code. */
static int raw_line(lam_reader *r, char **out, lam_error *err)
{
    int rc;
    *out = NULL;
    if (!r->buf && (rc = refill(r, err)) != 0) return rc;
    for (;;) {
        char *start = r->buf + r->pos;
        char *nl = r->len > r->pos ? memchr(start, '\n', r->len - r->pos) : NULL;
        if (nl || (r->eof && r->len > r->pos)) {
            size_t n = nl ? (size_t)(nl - start) : r->len - r->pos;
            start[n] = '\0'; /* buffer has one spare byte past cap */
            r->pos += n + (nl ? 1 : 0);
            r->lineno++;
            if (n > 0 && start[n - 1] == '\r') start[--n] = '\0';
            if (strlen(start) != n) return lam_reader_error(r, r->lineno, err, "NUL byte in line");
            *out = start;
            return 0;
        }
        if (r->eof) return 0;
        if ((rc = refill(r, err)) != 0) return rc;
    }
}

/* Next line, from the read-ahead queue first (*s NULL at EOF). */
static int next_line(lam_reader *r, char **s, long *line, lam_error *err)
{
    if (r->pending_next < r->npending) {
        pending_line *p = &r->pending[r->pending_next++];
        free(r->pending_current);
        r->pending_current = p->text;
        *line = p->line;
        if (r->pending_next == r->npending) r->npending = r->pending_next = 0;
        *s = r->pending_current;
        return 0;
    }
    int rc = raw_line(r, s, err);
    *line = r->lineno;
    return rc;
}

static int is_blank(const char *s)
{
    while (*s == ' ' || *s == '\t') ++s;
    return *s == '\0';
}

static char *trim(char *s)
{
    while (*s == ' ' || *s == '\t') ++s;
    char *e = s + strlen(s);
    while (e > s && (e[-1] == ' ' || e[-1] == '\t')) --e;
    *e = '\0';
    return s;
}

/* "#% key: value" (s points past "#%"). */
static int take_meta(lam_reader *r, char *s, long line, lam_error *err)
{
    char *colon = strchr(s, ':');
    if (!colon) return lam_reader_error(r, line, err, "metadata line without 'key: value'");
    *colon = '\0';
    char *key = trim(s), *value = trim(colon + 1);
    if (!*key) return lam_reader_error(r, line, err, "metadata line with an empty key");
    if (strcmp(key, "kind") == 0) {
        lam_kind k = lam_kind_parse(value);
        if (k == LAM_KIND_UNKNOWN)
            return lam_reader_error(r, line, err, "unknown stream kind '%s'", value);
        if (r->kind != LAM_KIND_UNKNOWN && r->kind != k)
            return lam_reader_error(r, line, err, "second kind '%s' contradicts '%s'", value,
                                    lam_kind_name(r->kind));
        r->kind = k;
    }
    lam_meta_append(&r->meta, key, value, line);
    return 0;
}

enum line_class { LINE_SKIP, LINE_TERM, LINE_END };

/* Classify a line into *c; metadata is taken in, "#% end" noted. */
static int classify(lam_reader *r, char *s, long line, enum line_class *c, lam_error *err)
{
    *c = LINE_SKIP;
    if (s[0] == '#') {
        if (s[1] != '%') return 0;
        char *body = trim(s + 2);
        if (strcmp(body, "end") == 0) {
            *c = LINE_END;
            return 0;
        }
        if (strncmp(body, "lamina-op", 9) == 0 && (body[9] == ' ' || body[9] == '\t')) {
            if (line != 1)
                return lam_reader_error(r, line, err,
                                        "'#%% lamina-op' is only allowed on the first line");
            char *ver = trim(body + 9);
            if (strcmp(ver, "1") != 0 && strcmp(ver, "2") != 0)
                return lam_reader_error(
                    r, line, err, "stream version '%s' is not supported (this reader reads 2, and 1)",
                    ver);
            r->suite_stream = 1;
            r->saw_meta = 1;
            r->syntax = ver[0] - '0';
            return 0;
        }
        r->saw_meta = 1;
        return take_meta(r, body, line, err);
    }
    if (!is_blank(s)) *c = LINE_TERM;
    return 0;
}

static int read_after_end(lam_reader *r, lam_error *err)
{
    long line;
    char *s;
    int rc;
    while ((rc = next_line(r, &s, &line, err)) == 0 && s != NULL)
        if (!is_blank(s) && s[0] != '#')
            return lam_reader_error(r, line, err, "term after '#%% end'");
    return rc;
}

static void queue_line(lam_reader *r, const char *s, long line)
{
    r->pending = lam_realloc(r->pending, lam_mul_size(r->npending + 1, sizeof *r->pending));
    r->pending[r->npending].text = lam_strdup(s);
    r->pending[r->npending].line = line;
    r->npending++;
}

/* Next term line in *s, taking in metadata and skipping comments on the
 * way; NULL at "#% end" (the rest checked) or at the end of the input. */
static int next_term_line(lam_reader *r, char **s, long *line, lam_error *err)
{
    int rc;
    while ((rc = next_line(r, s, line, err)) == 0 && *s != NULL) {
        enum line_class c;
        if ((rc = classify(r, *s, *line, &c, err)) != 0) return rc;
        if (c == LINE_TERM) return 0;
        if (c == LINE_END) {
            r->ended = 1;
            *s = NULL;
            return read_after_end(r, err);
        }
    }
    return rc;
}

/* Read the leading metadata: stop at the first term line, queued. */
static int read_header(lam_reader *r, lam_error *err)
{
    long line;
    char *s;
    int rc = next_term_line(r, &s, &line, err);
    if (rc == 0 && s) queue_line(r, s, line);
    return rc;
}

int lam_reader_open(const char *path, lam_reader **out, lam_error *err)
{
    *out = NULL;
    lam_reader *r = lam_calloc(1, sizeof *r);
    int use_stdin = !path || strcmp(path, "-") == 0;
    r->name = lam_strdup(use_stdin ? "<stdin>" : path);
    lam_meta_init(&r->meta);
    r->fd = use_stdin ? 0 : open(path, O_RDONLY);
    int rc = 0;
    if (r->fd < 0) {
        rc = lam_error_set(err, LAM_EX_NOINPUT, "cannot open %s: %s", r->name, strerror(errno));
    } else if (!(r->gz = gzdopen(r->fd, "rb"))) {
        rc = lam_error_set(err, LAM_EX_NOINPUT, "cannot open %s: %s", r->name,
                           errno ? strerror(errno) : "out of memory");
        if (!use_stdin) close(r->fd);
    } else {
        gzbuffer(r->gz, 1 << 17);
        rc = read_header(r, err);
    }
    if (rc) lam_reader_close(r);
    else *out = r;
    return rc;
}

void lam_reader_close(lam_reader *r)
{
    if (!r) return;
    if (r->gz) gzclose(r->gz);
    for (size_t i = r->pending_next; i < r->npending; ++i) free(r->pending[i].text);
    LAM_FREE_ALL(r->pending, r->pending_current, r->buf, r->name, r->fields);
    lam_meta_free(&r->meta);
    free(r);
}

static int split_fields(lam_reader *r, char *s)
{
    int n = 0;
    for (;;) {
        while (*s == ' ' || *s == '\t') ++s;
        if (!*s) break;
        if (n == r->fields_cap) {
            r->fields_cap = r->fields_cap ? 2 * r->fields_cap : 16;
            r->fields = lam_realloc(r->fields, lam_mul_size((size_t)r->fields_cap, sizeof *r->fields));
        }
        r->fields[n++] = s;
        while (*s && *s != ' ' && *s != '\t') ++s;
        if (*s) *s++ = '\0';
    }
    return n;
}

static int parse_coefficient(const lam_reader *r, const char *tok, long line, double *out,
                             lam_error *err)
{
    if (lam_parse_double(tok, out) == 0) {
        if (*out > LAM_COEF_MAX || *out < -LAM_COEF_MAX)
            return lam_reader_error(r, line, err,
                                    "coefficient '%s' is too large (|c| > 1e100: sums of squares "
                                    "and products could overflow)",
                                    tok);
        return 0;
    }
    char low[8] = {0};
    for (int i = 0; i < 7 && tok[i]; ++i) low[i] = (char)tolower((unsigned char)tok[i]);
    const char *t = low[0] == '+' || low[0] == '-' ? low + 1 : low;
    if (strncmp(t, "nan", 3) == 0 || strncmp(t, "inf", 3) == 0)
        return lam_reader_error(r, line, err, "coefficient '%s' is not finite", tok);
    return lam_reader_error(r, line, err, "coefficient '%s' is not a number", tok);
}

static int allow_empty;

void lam_reader_allow_empty(int allow) { allow_empty = allow; }

/* A failed step upstream in a shell pipeline leaves nothing at all: that
 * is refused rather than read as the zero operator. */
static int check_not_empty(const lam_reader *r, lam_error *err)
{
    if (!r->saw_meta && !r->saw_term && !allow_empty)
        return lam_error_at(err, LAM_EX_DATA, r->name, 0,
                            "empty input: no header and no terms (--allow-empty reads it as the "
                            "zero operator)");
    return 0;
}

int lam_reader_next_text(lam_reader *r, char **text, long *line, lam_error *err)
{
    if (r->ended) return 0;
    char *s;
    int rc = next_term_line(r, &s, line, err);
    if (rc) return rc;
    if (s) {
        r->saw_term = 1;
        r->lineno = *line;
        *text = s;
        return 1;
    }
    if (r->suite_stream && !r->ended)
        return lam_error_at(err, LAM_EX_DATA, r->name, r->lineno,
                            "truncated stream: it ends without '#%% end'");
    return check_not_empty(r, err);
}

int lam_reader_split(lam_reader *r, char *text, long line, lam_line *out, lam_error *err)
{
    int n = split_fields(r, text);
    out->nfields = n - 1;
    out->fields = r->fields + 1;
    out->line = line;
    return parse_coefficient(r, r->fields[0], line, &out->coef, err);
}

int lam_reader_coefficient(const char *tok, double *out)
{
    return lam_parse_double(tok, out) == 0 && *out <= LAM_COEF_MAX && *out >= -LAM_COEF_MAX
               ? 0
               : -1;
}

int lam_reader_next(lam_reader *r, lam_line *out, lam_error *err)
{
    char *text = NULL;
    long line;
    int rc = lam_reader_next_text(r, &text, &line, err);
    if (rc != 1) return rc;
    rc = lam_reader_split(r, text, line, out, err);
    return rc ? rc : 1;
}

int lam_reader_syntax(const lam_reader *r) { return r->syntax; }

/* ---- raw text, for a reader that finds the lines itself */

int lam_reader_raw_ready(const lam_reader *r)
{
    return !r->ended && r->pending_next >= r->npending;
}

int lam_reader_raw_read(lam_reader *r, char *dst, size_t size, size_t *got, lam_error *err)
{
    size_t n = 0;
    *got = 0;
    if (r->len > r->pos) { /* what the line reader holds comes first */
        n = r->len - r->pos < size ? r->len - r->pos : size;
        memcpy(dst, r->buf + r->pos, n);
        r->pos += n;
    }
    while (n < size && !r->eof) {
        size_t want = size - n < ((size_t)1 << 30) ? size - n : (size_t)1 << 30;
        int g = gzread(r->gz, dst + n, (unsigned)want);
        if (g < 0) return read_error(r, err);
        if (g == 0) r->eof = 1;
        n += (size_t)g;
    }
    *got = n;
    return 0;
}

void lam_reader_raw_seen(lam_reader *r, long lineno)
{
    r->lineno = lineno;
    r->saw_term = 1;
}

int lam_reader_raw_control(lam_reader *r, char *text, long line, int *end, lam_error *err)
{
    enum line_class c;
    int rc = classify(r, text, line, &c, err);
    *end = !rc && c == LINE_END;
    if (*end) r->ended = 1;
    return rc;
}

int lam_reader_raw_finish(lam_reader *r, lam_error *err)
{
    if (r->ended) return 0;
    if (r->suite_stream)
        return lam_error_at(err, LAM_EX_DATA, r->name, r->lineno,
                            "truncated stream: it ends without '#%% end'");
    return check_not_empty(r, err);
}

const char *lam_reader_first_text(const lam_reader *r)
{
    if (r->saw_term) return NULL;
    for (size_t i = r->pending_next; i < r->npending; ++i) {
        const char *s = r->pending[i].text;
        if (s[0] != '#' && !is_blank(s)) return s;
    }
    return NULL;
}

long long lam_reader_bytes_left(const lam_reader *r)
{
    struct stat st;
    if (!gzdirect(r->gz) || fstat(r->fd, &st) != 0 || !S_ISREG(st.st_mode)) return -1;
    long long consumed = (long long)gztell(r->gz) - (long long)(r->len - r->pos);
    return consumed <= st.st_size ? st.st_size - consumed : 0;
}

long long lam_reader_bytes_read(const lam_reader *r)
{
    return (long long)gztell(r->gz) - (long long)(r->len - r->pos);
}

int lam_reader_term_syntax(lam_reader *r, const lam_line *ln, int syntax, lam_error *err)
{
    if (r->syntax == syntax) return 0;
    if (r->syntax == 0) {
        r->syntax = syntax;
        return 0;
    }
    return lam_reader_error(r, ln->line, err,
                            "a version-%d term in a version-%d stream (one spelling a stream; "
                            "see lamina-stream(5))",
                            syntax, r->syntax);
}

static lam_kind kind_of_field(const char *f)
{
    size_t n = strlen(f);
    if ((f[0] == 'U' || f[0] == 'R') && f[1] == '\0') return LAM_KIND_FRAGMENTS;
    if ((f[0] == 'x' || f[0] == 'y' || f[0] == 'z') && f[1] == ':') return LAM_KIND_PAULI;
    if (f[0] == '@') return LAM_KIND_PAULI;
    if (f[0] == '/' && f[1] == '\0') return LAM_KIND_FERMION;
    /* version 1 spellings (X0, 3+), read for one release of grace */
    if ((f[0] == 'X' || f[0] == 'Y' || f[0] == 'Z') && isdigit((unsigned char)f[1]))
        return LAM_KIND_PAULI;
    if (n > 1 && (f[n - 1] == '+' || f[n - 1] == '-')) return LAM_KIND_FERMION;
    if (isdigit((unsigned char)f[0])) return LAM_KIND_SPINFREE;
    return LAM_KIND_UNKNOWN;
}

/* The kind a term line's fields tell (s points past the coefficient): a
 * "/" field anywhere makes a fermion term, else the first field decides;
 * LAM_KIND_UNKNOWN when the line has no fields. */
static lam_kind kind_of_fields(const char *s)
{
    lam_kind first = LAM_KIND_UNKNOWN;
    for (;;) {
        while (*s == ' ' || *s == '\t') ++s;
        if (!*s) return first;
        char f[64] = {0};
        size_t k = 0;
        while (s[k] && s[k] != ' ' && s[k] != '\t') {
            if (k < sizeof f - 1) f[k] = s[k];
            ++k;
        }
        s += k;
        lam_kind kind = kind_of_field(f);
        if (kind == LAM_KIND_FERMION && f[0] == '/') return kind;
        if (first == LAM_KIND_UNKNOWN) {
            first = kind;
            if (kind != LAM_KIND_SPINFREE) return first; /* only digits can precede "/" */
        }
    }
}

/* Look ahead for the first term with fields; its first field tells the
 * kind.  Lines read stay queued for lam_reader_next. */
static int infer_kind(lam_reader *r, lam_kind *kind, lam_error *err)
{
    *kind = LAM_KIND_UNKNOWN;
    for (size_t i = r->pending_next;; ++i) {
        if (i >= r->npending) {
            char *raw = NULL;
            int rc = r->ended ? 0 : raw_line(r, &raw, err);
            if (rc || !raw) return rc;
            queue_line(r, raw, r->lineno);
        }
        const char *s = r->pending[i].text;
        if (s[0] == '#' || is_blank(s)) continue;
        while (*s == ' ' || *s == '\t') ++s;
        while (*s && *s != ' ' && *s != '\t') ++s; /* coefficient */
        *kind = kind_of_fields(s);
        if (*kind != LAM_KIND_UNKNOWN || !is_blank(s)) return 0;
    }
}

void lam_reader_force_kind(lam_reader *r, lam_kind kind) { r->forced = kind; }

/* A metadata or term line among those read ahead. */
static int pending_has_content(const lam_reader *r)
{
    for (size_t i = r->pending_next; i < r->npending; ++i) {
        const char *s = r->pending[i].text;
        if ((s[0] == '#' && s[1] == '%') || (s[0] != '#' && !is_blank(s))) return 1;
    }
    return 0;
}

int lam_reader_kind(lam_reader *r, lam_kind *kind, lam_error *err)
{
    if (!r->kind_resolved) {
        if (r->kind != LAM_KIND_UNKNOWN) {
            const lam_meta_entry *e = lam_meta_find(&r->meta, "kind");
            if (r->forced != LAM_KIND_UNKNOWN && r->forced != r->kind)
                return lam_reader_error(r, e ? e->line : 0, err,
                                        "stream kind is '%s' but '%s' was asked for",
                                        lam_kind_name(r->kind), lam_kind_name(r->forced));
        } else if (r->forced != LAM_KIND_UNKNOWN) {
            r->kind = r->forced;
        } else {
            int rc = infer_kind(r, &r->kind, err);
            if (rc) return rc;
        }
        if (r->kind == LAM_KIND_UNKNOWN && !pending_has_content(r)) {
            int rc = check_not_empty(r, err);
            if (rc) return rc;
        }
        r->kind_resolved = 1;
    }
    *kind = r->kind;
    return 0;
}

int lam_reader_meta_long(lam_reader *r, const char *key, long dflt, long min, long max,
                         long *value, lam_error *err)
{
    const lam_meta_entry *e = lam_meta_find(&r->meta, key);
    *value = dflt;
    if (!e) return 0;
    long v;
    if (lam_parse_long(e->value, &v) != 0 || v < min || v > max)
        return lam_reader_error(r, e->line, err, "'%s: %s' wants an integer from %ld to %ld", key,
                                e->value, min, max);
    *value = v;
    return 0;
}

int lam_reader_index(const lam_reader *r, const lam_line *ln, int field, long limit,
                     const char *what, int *index, lam_error *err)
{
    const char *tok = ln->fields[field];
    long v;
    if (lam_parse_long(tok, &v) != 0)
        return lam_reader_error(r, ln->line, err, "%s index '%s' is not an integer", what, tok);
    if (v < 0 || v >= limit)
        return lam_reader_error(r, ln->line, err, "%s index %ld out of range 0..%ld", what, v,
                                limit - 1);
    *index = (int)v;
    return 0;
}

/* ------------------------------------------------------------------ */
/* writer */

struct lam_writer {
    lam_output out; /* the file (whole or not at all) or stdout */
    FILE *fp;       /* out.fp, unless gz writes to it */
    gzFile gz;
    char *name;
    int distinct;
    int failed_errno; /* the first write error, kept until close reports it */
    int failed;
    char *refused; /* the first coefficient no reader takes, and its term */
};

void lam_writer_set_distinct(lam_writer *w) { w->distinct = 1; }

int lam_writer_open(const char *path, int gzip, lam_writer **out, lam_error *err)
{
    *out = NULL;
    lam_output file;
    if (gzip) fflush(stdout); /* what is in stdout's buffer comes before the gzip stream */
    if (lam_output_open(path, &file, err)) return err->code;
    const char *name = file.path ? file.path : "<stdout>";
    gzFile gz = NULL;
    if (gzip) {
        int fd = dup(fileno(file.fp));
        if (fd < 0 || !(gz = gzdopen(fd, "wb6"))) {
            int errnum = errno;
            if (fd >= 0) close(fd);
            lam_error_set(err, LAM_EX_IOERR, "cannot open %s for writing: %s", name, strerror(errnum));
            lam_output_discard(&file);
            return err->code;
        }
        gzbuffer(gz, 1 << 17);
    } else if (file.fp != stdout) {
        setvbuf(file.fp, NULL, _IOFBF, 1 << 17);
    }
    lam_writer *w = lam_calloc(1, sizeof *w);
    w->name = lam_strdup(name);
    w->out = file;
    w->fp = gz ? NULL : file.fp;
    w->gz = gz;
    *out = w;
    return 0;
}

/* A write error is kept and the rest of the output dropped; close reports
 * it, so writing code need not check every term. */
static void write_failed(lam_writer *w)
{
    if (!w->failed) w->failed_errno = errno;
    w->failed = 1;
}

static int write_error(const lam_writer *w, int errnum, lam_error *err)
{
    return lam_error_set(err, LAM_EX_IOERR, "cannot write %s: %s", w->name,
                         errnum ? strerror(errnum) : "write error");
}

void lam_writer_write(lam_writer *w, const char *buf, size_t len)
{
    if (w->failed) return;
    errno = 0;
    if (w->gz) {
        if (len && gzwrite(w->gz, buf, (unsigned)len) != (int)len) write_failed(w);
    } else if (fwrite(buf, 1, len, w->fp) != len) {
        write_failed(w);
    }
}

void lam_writer_printf(lam_writer *w, const char *fmt, ...)
{
    char small[1024];
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(small, sizeof small, fmt, ap);
    va_end(ap);
    if (n < 0) {
        write_failed(w);
        return;
    }
    if ((size_t)n < sizeof small) {
        lam_writer_write(w, small, (size_t)n);
        return;
    }
    char *big = lam_malloc((size_t)n + 1);
    va_start(ap, fmt);
    vsnprintf(big, (size_t)n + 1, fmt, ap);
    va_end(ap);
    lam_writer_write(w, big, (size_t)n);
    free(big);
}

static int reserved_key(const char *key)
{
    return strcmp(key, "kind") == 0 || strcmp(key, "lamina-op") == 0 ||
           strcmp(key, "end") == 0 || strcmp(key, "distinct") == 0;
}

void lam_writer_header(lam_writer *w, lam_kind kind, const lam_meta *meta,
                       const char *history)
{
    lam_writer_printf(w, "#%% lamina-op 2\n#%% kind: %s\n", lam_kind_name(kind));
    for (size_t i = 0; meta && i < meta->count; ++i)
        if (!reserved_key(meta->items[i].key))
            lam_writer_printf(w, "#%% %s: %s\n", meta->items[i].key, meta->items[i].value);
    if (w->distinct) lam_writer_printf(w, "#%% distinct: yes\n");
    if (history) lam_writer_printf(w, "#%% history: %s\n", history);
}

/* A coefficient that is inf, NaN or above LAM_COEF_MAX in magnitude (an
 * operator that overflowed, or was scaled out of any physical range) is
 * never written: no reader of the suite would take it.  The first one is
 * kept for close to report, and the rest of the output is dropped. */
static void refuse_coefficient(lam_writer *w, double coef, const char *rest)
{
    if (w->failed) return;
    w->failed = 1;
    size_t n = strlen(rest ? rest : "") + 64;
    w->refused = lam_malloc(n);
    if (rest && *rest)
        snprintf(w->refused, n, "of the term '%s' is %g", rest, coef);
    else
        snprintf(w->refused, n, "of the constant term is %g", coef);
}

void lam_writer_term(lam_writer *w, double coef, const char *rest)
{
    if (!(fabs(coef) <= LAM_COEF_MAX)) {
        refuse_coefficient(w, coef, rest);
        return;
    }
    char line[LAM_DOUBLE_BUF];
    lam_format_double(line, sizeof line, coef);
    lam_writer_write(w, line, strlen(line));
    if (rest && *rest) {
        lam_writer_write(w, " ", 1);
        lam_writer_write(w, rest, strlen(rest));
    }
    lam_writer_write(w, "\n", 1);
}

int lam_writer_close_raw(lam_writer *w, lam_error *err)
{
    if (!w) return 0;
    int failed = w->failed, errnum = w->failed_errno;
    errno = 0;
    if (w->gz && gzclose(w->gz) != Z_OK && !failed) failed = 1, errnum = errno;
    lam_error ignored;
    int rc = w->refused ? lam_error_set(err, LAM_EX_DATA,
                                           "%s: the coefficient %s, and a reader takes "
                                           "|c| <= 1e100 only (lamina-stream(5)); the "
                                           "stream is not written whole",
                                           w->name, w->refused)
             : failed ? write_error(w, errnum, err)
                      : 0;
    /* the file is renamed into place only when all of it was written */
    int closed = lam_output_close(&w->out, !failed, failed ? &ignored : err);
    if (!rc) rc = closed;
    free(w->refused);
    free(w->name);
    free(w);
    return rc;
}

int lam_writer_close(lam_writer *w, lam_error *err)
{
    lam_writer_write(w, "#% end\n", 7);
    return lam_writer_close_raw(w, err);
}

void lam_writer_discard(lam_writer *w)
{
    if (!w) return;
    /* standard output is left unflushed: no half-written result reaches it */
    if (w->gz) gzclose(w->gz);
    lam_output_discard(&w->out);
    free(w->refused);
    free(w->name);
    free(w);
}

char *lam_history_from_argv(int argc, char **argv)
{
    size_t n = 1;
    for (int i = 0; i < argc; ++i) n += strlen(argv[i]) + 3;
    char *s = lam_malloc(n);
    char *p = s;
    for (int i = 0; i < argc; ++i) {
        const char *a = argv[i];
        if (i == 0) {
            const char *slash = strrchr(a, '/');
            a = slash ? slash + 1 : a;
        }
        int quote = a[0] == '\0' || strpbrk(a, " \t") != NULL;
        p += sprintf(p, "%s%s%s%s", i ? " " : "", quote ? "'" : "", a, quote ? "'" : "");
    }
    return s;
}
