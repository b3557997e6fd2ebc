/* pauli.c - Pauli strings in the symplectic bit representation, sets of
 * weighted strings, hash merge, and the pauli stream terms. */
#define _DEFAULT_SOURCE /* madvise */
#include "pauli.h"

#include <limits.h>
#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>

#include "norm.h"
#include "util.h"

/* The largest qubit index a stream may name; keeps 64-bit word counts and
 * sizes far from overflow. */
#define LAM_PAULI_MAX_QUBITS (1L << 24)

static inline int popcount64(uint64_t w) { return __builtin_popcountll(w); }

int lam_pauli_anticommute(int nw, const uint64_t *x1, const uint64_t *z1,
                          const uint64_t *x2, const uint64_t *z2)
{
    uint64_t acc = 0;
    for (int w = 0; w < nw; ++w) acc ^= (x1[w] & z2[w]) ^ (z1[w] & x2[w]);
    return popcount64(acc) & 1;
}

/* With P(x,z) = i^(x.z) X^x Z^z (so that x=z=1 is Y):
 *   P1 P2 = i^(x1.z1 + x2.z2) (-1)^(z1.x2) X^(x1^x2) Z^(z1^z2)
 *         = i^(x1.z1 + x2.z2 + 2 z1.x2 - xo.zo) P(xo, zo). */
int lam_pauli_mul(int nw, const uint64_t *x1, const uint64_t *z1,
                  const uint64_t *x2, const uint64_t *z2, uint64_t *xo,
                  uint64_t *zo)
{
    long k = 0;
    for (int w = 0; w < nw; ++w) {
        uint64_t a = x1[w], b = z1[w], c = x2[w], d = z2[w];
        uint64_t xr = a ^ c, zr = b ^ d;
        k += popcount64(a & b) + popcount64(c & d) + 2 * popcount64(b & c) -
             popcount64(xr & zr);
        xo[w] = xr;
        zo[w] = zr;
    }
    return (int)(((k % 4) + 4) % 4);
}

int lam_pauli_weight(int nw, const uint64_t *x, const uint64_t *z)
{
    int n = 0;
    for (int w = 0; w < nw; ++w) n += popcount64(x[w] | z[w]);
    return n;
}

int lam_pauli_is_identity(int nw, const uint64_t *x, const uint64_t *z)
{
    uint64_t any = 0;
    for (int w = 0; w < nw; ++w) any |= x[w] | z[w];
    return any == 0;
}

/* Decimal digits of v into buf (no terminator); returns the count. */
static int put_index(char *buf, unsigned long v)
{
    char tmp[24];
    int n = 0;
    do {
        tmp[n++] = (char)('0' + v % 10);
        v /= 10;
    } while (v);
    for (int i = 0; i < n; ++i) buf[i] = tmp[n - 1 - i];
    return n;
}

/* The qubits that carry one letter: X alone, Y (both bits) or Z alone. */
static inline uint64_t letter_word(char letter, const uint64_t *x, const uint64_t *z, int w)
{
    return letter == 'x' ? x[w] & ~z[w] : letter == 'y' ? x[w] & z[w] : z[w] & ~x[w];
}

/* First qubit from q on whose bit in the letter's set equals `want` (1 or
 * 0); 64*nw when there is none. */
static long next_qubit(char letter, const uint64_t *x, const uint64_t *z, int nw, long q,
                       int want)
{
    for (int w = (int)(q >> 6); w < nw; ++w) {
        uint64_t word = letter_word(letter, x, z, w);
        if (!want) word = ~word;
        if (w == (int)(q >> 6)) word &= ~(uint64_t)0 << (q & 63);
        if (word) return (long)w * 64 + __builtin_ctzll(word);
    }
    return 64L * nw;
}

/* Canonical spelling: one field per letter in the order x, y, z, sorted
 * indices, every maximal run of two or more consecutive qubits as a-b. */
int lam_pauli_format(char *buf, size_t size, int nw, const uint64_t *x,
                     const uint64_t *z)
{
    size_t len = 0;
    if (size == 0) return -1;
    static const char letters[3] = {'x', 'y', 'z'};
    for (int l = 0; l < 3; ++l) {
        char letter = letters[l];
        long q = next_qubit(letter, x, z, nw, 0, 1);
        if (q >= 64L * nw) continue;
        /* space, letter, colon */
        if (len + 3 >= size) return -1;
        if (len) buf[len++] = ' ';
        buf[len++] = letter;
        buf[len++] = ':';
        int first = 1;
        while (q < 64L * nw) {
            long end = next_qubit(letter, x, z, nw, q, 0) - 1; /* last of the run */
            char digits[52];
            int nd = 0;
            if (!first) digits[nd++] = ',';
            nd += put_index(digits + nd, (unsigned long)q);
            if (end > q) {
                digits[nd++] = '-';
                nd += put_index(digits + nd, (unsigned long)end);
            }
            if (len + (size_t)nd + 1 > size) return -1;
            memcpy(buf + len, digits, (size_t)nd);
            len += (size_t)nd;
            first = 0;
            q = next_qubit(letter, x, z, nw, end + 1, 1);
        }
    }
    buf[len] = '\0';
    return (int)len;
}

/* ---------------------------------------------------------------- sets */

void lam_pauli_set_init(lam_pauli_set *s, int nqubits)
{
    memset(s, 0, sizeof *s);
    s->nqubits = nqubits < 0 ? 0 : nqubits;
    s->nwords = lam_pauli_words(s->nqubits);
    if (s->nwords == 0) s->nwords = 1; /* room for qubit 0 from the start */
}

void lam_pauli_set_free(lam_pauli_set *s)
{
    LAM_FREE_ALL(s->bits, s->coef, s->group);
    memset(s, 0, sizeof *s);
}

static void reserve(lam_pauli_set *s, size_t need)
{
    if (need <= s->cap) return;
    size_t cap = s->cap ? s->cap : 64;
    while (cap < need) cap = lam_mul_size(cap, 2);
    s->bits = lam_realloc(s->bits,
                          lam_mul_size(cap, lam_mul_size(2 * (size_t)s->nwords,
                                                         sizeof(uint64_t))));
    s->coef = lam_realloc(s->coef, lam_mul_size(cap, sizeof(double)));
    if (s->group) s->group = lam_realloc(s->group, lam_mul_size(cap, sizeof(int32_t)));
    s->cap = cap;
}

void lam_pauli_set_reserve(lam_pauli_set *s, size_t count) { reserve(s, count); }

/* Widen every stored string to the word count of nqubits; strings keep
 * their qubits, the new words are zero. */
void lam_pauli_set_grow_qubits(lam_pauli_set *s, int nqubits)
{
    if (nqubits <= s->nqubits) return;
    int nw_new = lam_pauli_words(nqubits);
    if (nw_new > s->nwords) {
        int nw_old = s->nwords;
        uint64_t *bits = lam_calloc(
            s->cap ? s->cap : 1, lam_mul_size(2 * (size_t)nw_new, sizeof(uint64_t)));
        for (size_t t = 0; t < s->count; ++t) {
            const uint64_t *src = s->bits + t * 2 * (size_t)nw_old;
            uint64_t *dst = bits + t * 2 * (size_t)nw_new;
            memcpy(dst, src, (size_t)nw_old * sizeof(uint64_t));
            memcpy(dst + nw_new, src + nw_old, (size_t)nw_old * sizeof(uint64_t));
        }
        free(s->bits);
        s->bits = bits;
        s->nwords = nw_new;
    }
    s->nqubits = nqubits;
}

void lam_pauli_set_add(lam_pauli_set *s, const uint64_t *x, const uint64_t *z,
                       double coef, int32_t group)
{
    reserve(s, s->count + 1);
    if (group >= 0 && !s->group) {
        s->group = lam_malloc(lam_mul_size(s->cap, sizeof(int32_t)));
        for (size_t t = 0; t < s->count; ++t) s->group[t] = -1;
    }
    uint64_t *dx = lam_pauli_x(s, s->count), *dz = lam_pauli_z(s, s->count);
    for (int w = 0; w < s->nwords; ++w) {
        dx[w] = x[w];
        dz[w] = z[w];
    }
    s->coef[s->count] = coef;
    if (s->group) s->group[s->count] = group;
    ++s->count;
}

/* ---------------------------------------------------------------- merge */

static inline uint64_t mix64(uint64_t h)
{
    h ^= h >> 33;
    h *= 0xff51afd7ed558ccdULL;
    h ^= h >> 33;
    h *= 0xc4ceb9fe1a85ec53ULL;
    h ^= h >> 33;
    return h;
}

static inline uint64_t row_hash(const uint64_t *row, size_t width, int32_t tag)
{
    uint64_t h = (uint64_t)(uint32_t)tag * 0x9e3779b97f4a7c15ULL;
    for (size_t w = 0; w < width; ++w) h = mix64(h ^ row[w]) + w;
    return h;
}

/* A slot holds the row number + 1 in its low 40 bits (0 = empty) and the
 * top 24 bits of the row's hash, so that most probes that miss never touch
 * the row itself (a cache miss each). */
#define SLOT_INDEX_BITS 40
#define SLOT_INDEX_MASK ((UINT64_C(1) << SLOT_INDEX_BITS) - 1)
#define SLOT_FP(h) ((h) >> SLOT_INDEX_BITS)

void lam_rowhash_free(lam_rowhash *h)
{
    free(h->slot);
    memset(h, 0, sizeof *h);
}

/* Keep the table at most half full so that linear probing stays short;
 * the fingerprints are kept, the positions come from them and the rows. */
/* The slot of a hash is taken from its top bits, which the fingerprint
 * keeps: up to 2^24 slots a table can be resized without reading a row. */
static inline size_t slot_of(uint64_t hv, size_t size)
{
    return size > 1 ? (size_t)(hv >> (64 - __builtin_ctzll(size))) : 0;
}

static void rowhash_resize(lam_rowhash *h, const uint64_t *rows, size_t width,
                           const int32_t *tags, size_t new_size)
{
    size_t old_size = h->size;
    uint64_t *old = h->slot;
    h->size = new_size;
    h->slot = lam_calloc(h->size, sizeof(uint64_t));
    size_t mask = h->size - 1;
    int from_fp = new_size <= ((size_t)1 << (64 - SLOT_INDEX_BITS));
    for (size_t i = 0; i < old_size; ++i) {
        if (!old[i]) continue;
        size_t j;
        if (from_fp) {
            j = slot_of(old[i] & ~SLOT_INDEX_MASK, new_size);
        } else {
            size_t k = (size_t)(old[i] & SLOT_INDEX_MASK) - 1;
            j = slot_of(row_hash(rows + k * width, width, tags ? tags[k] : 0), new_size);
        }
        while (h->slot[j]) j = (j + 1) & mask;
        h->slot[j] = old[i];
    }
    free(old);
}

static inline int rows_equal(const uint64_t *a, const uint64_t *b, size_t width)
{
    for (size_t w = 0; w < width; ++w)
        if (a[w] != b[w]) return 0;
    return 1;
}

void lam_rowhash_reserve(lam_rowhash *h, const uint64_t *rows, size_t width,
                         const int32_t *tags, size_t count)
{
    if (2 * count <= h->size) return;
    size_t size = h->size ? h->size : 64;
    while (size < 2 * count) size = lam_mul_size(size, 2);
    rowhash_resize(h, rows, width, tags, size);
}

void lam_rowhash_prefetch(const lam_rowhash *h, const uint64_t *row, size_t width,
                          int32_t tag)
{
    if (h->size) __builtin_prefetch(&h->slot[slot_of(row_hash(row, width, tag), h->size)]);
}

size_t lam_rowhash_insert(lam_rowhash *h, const uint64_t *rows, size_t width,
                          const int32_t *tags, size_t cand)
{
    if (2 * (h->used + 1) > h->size)
        rowhash_resize(h, rows, width, tags, h->size ? lam_mul_size(h->size, 2) : 64);
    /* the slots address 2^40 rows, at least 8 TiB of keys: the table's
     * limit is a memory limit, reported as out of memory */
    if (cand >= SLOT_INDEX_MASK) lam_out_of_memory(lam_mul_size(cand + 1, lam_mul_size(width, sizeof(uint64_t))));
    const uint64_t *row = rows + cand * width;
    int32_t tag = tags ? tags[cand] : 0;
    uint64_t hv = row_hash(row, width, tag), fp = SLOT_FP(hv);
    size_t mask = h->size - 1;
    size_t i = slot_of(hv, h->size);
    for (;;) {
        uint64_t e = h->slot[i];
        if (!e) {
            h->slot[i] = (fp << SLOT_INDEX_BITS) | (uint64_t)(cand + 1);
            ++h->used;
            return cand;
        }
        if ((e >> SLOT_INDEX_BITS) == fp) {
            size_t k = (size_t)(e & SLOT_INDEX_MASK) - 1;
            if ((!tags || tags[k] == tag) && rows_equal(rows + k * width, row, width)) return k;
        }
        i = (i + 1) & mask;
    }
}

static void move_term(lam_pauli_set *s, size_t to, size_t from)
{
    if (to == from) return;
    uint64_t *dst = lam_pauli_x(s, to);
    const uint64_t *src = lam_pauli_x(s, from);
    for (int w = 0; w < 2 * s->nwords; ++w) dst[w] = src[w];
    s->coef[to] = s->coef[from];
    if (s->group) s->group[to] = s->group[from];
}

static void drop_zeros(lam_pauli_set *s)
{
    size_t out = 0;
    for (size_t t = 0; t < s->count; ++t)
        if (s->coef[t] != 0.0) move_term(s, out++, t);
    s->count = out;
}

/* Rows [0, from) are distinct and indexed in h; merge rows [from, count)
 * into them in place.  Kept terms are compacted in order of first
 * appearance; the candidate is moved to its would-be place before the
 * look-up, so that the index only ever names kept terms.  The table is
 * sized first so that slots can be prefetched a few terms ahead: the
 * look-ups are cache misses, and overlapping them is most of the speed. */
static void merge_tail(lam_pauli_set *s, lam_rowhash *h, size_t from)
{
    size_t kept = from, width = 2 * (size_t)s->nwords;
    lam_rowhash_reserve(h, s->bits, width, s->group, s->count);
    enum { AHEAD = 16 };
    for (size_t t = from; t < s->count; ++t) {
        if (t + AHEAD < s->count)
            lam_rowhash_prefetch(h, lam_pauli_x(s, t + AHEAD), width,
                                 s->group ? s->group[t + AHEAD] : 0);
        move_term(s, kept, t);
        size_t k = lam_rowhash_insert(h, s->bits, width, s->group, kept);
        if (k == kept)
            ++kept;
        else
            s->coef[k] += s->coef[kept];
    }
    s->count = kept;
}

void lam_pauli_set_merge(lam_pauli_set *s, int drop)
{
    lam_rowhash h = {0};
    merge_tail(s, &h, 0);
    lam_rowhash_free(&h);
    if (drop) drop_zeros(s);
}

/* ---------------------------------------------------------------- stream */

/* Parse a qubit index made of decimal digits only; -1 if it is not one or
 * exceeds the limit of the suite. */
static long parse_qubit(const char *p)
{
    long v = 0;
    if (*p < '0' || *p > '9') return -1;
    if (*p == '0' && p[1] != '\0') return -1; /* no leading zeros: X01 is a typo */
    for (; *p; ++p) {
        if (*p < '0' || *p > '9') return -1;
        v = v * 10 + (*p - '0');
        if (v >= LAM_PAULI_MAX_QUBITS) return -1;
    }
    return v;
}

static int parse_group(const lam_reader *r, const lam_line *ln, const char *tok,
                       int32_t *group, lam_error *err)
{
    long g;
    if (lam_parse_long(tok + 1, &g) != 0 || g < 0 || g > INT32_MAX || tok[1] == '+' ||
        tok[1] == ' ')
        return lam_reader_error(r, ln->line, err, "bad group label '%s' (want @N, N >= 0)",
                                tok);
    *group = (int32_t)g;
    return 0;
}

static inline void clear_words(int nw, uint64_t *x, uint64_t *z)
{
    /* a few words in practice: a call to memset per term was measured at a
     * tenth of the reading time */
    for (int w = 0; w < nw; ++w) x[w] = z[w] = 0;
}

/* Where a term's qubits go: the bounds, the words, and the qubit count an
 * index beyond the words would need (unbounded reading only). */
typedef struct {
    const lam_reader *r;
    const lam_line *ln;
    int nqubits, nw;
    uint64_t *x, *z;
    long need;
    lam_error *err;
} term_target;

/* Put qubit q under a letter ('X','Y','Z' of either case). */
static inline int set_qubit(term_target *t, long q, char letter)
{
    if (t->nqubits >= 0 && q >= t->nqubits)
        return lam_reader_error(t->r, t->ln->line, t->err,
                                "qubit index %ld out of range (the stream has %d qubits)", q,
                                t->nqubits);
    if (q >= 64L * t->nw) {
        if (t->nqubits >= 0)
            return lam_error_set(t->err, LAM_EX_SOFTWARE,
                                 "internal: %d words too few for %d qubits", t->nw,
                                 t->nqubits);
        if (q + 1 > t->need) t->need = q + 1;
        return 0;
    }
    uint64_t bit = (uint64_t)1 << (q & 63);
    size_t w = (size_t)(q >> 6);
    if ((t->x[w] | t->z[w]) & bit)
        return lam_reader_error(t->r, t->ln->line, t->err,
                                "qubit %ld appears twice in one term", q);
    letter |= 0x20; /* lower case */
    if (letter != 'z') t->x[w] |= bit;
    if (letter != 'x') t->z[w] |= bit;
    return 0;
}

/* Decimal digits at *p (no sign, no leading zero); advances *p; -1 when
 * there are none or the value passes the suite's limit. */
static inline long scan_qubit(const char **p)
{
    const char *c = *p;
    long v = 0;
    if (*c < '0' || *c > '9') return -1;
    if (*c == '0' && c[1] >= '0' && c[1] <= '9') return -1;
    for (; *c >= '0' && *c <= '9'; ++c) {
        v = v * 10 + (*c - '0');
        if (v >= LAM_PAULI_MAX_QUBITS) return -1;
    }
    *p = c;
    return v;
}

/* "x:0,3-5": the qubit list of one letter field, items a or a-b (a <= b),
 * in any order. */
static int parse_letter_field(term_target *t, const char *tok)
{
    const char *p = tok + 2;
    if (!*p) return lam_reader_error(t->r, t->ln->line, t->err, "empty qubit list in '%s'", tok);
    for (;;) {
        long a = scan_qubit(&p), b = a;
        if (a >= 0 && *p == '-') {
            ++p;
            b = scan_qubit(&p);
        }
        if (a < 0 || b < 0 || (*p != ',' && *p != '\0'))
            return lam_reader_error(t->r, t->ln->line, t->err,
                                    "bad qubit list in '%s' (want indices and ranges such as "
                                    "%c:0,3-5)",
                                    tok, tok[0]);
        if (b < a)
            return lam_reader_error(t->r, t->ln->line, t->err,
                                    "backward range %ld-%ld in '%s'", a, b, tok);
        for (long q = a; q <= b; ++q) {
            int rc = set_qubit(t, q, tok[0]);
            if (rc) return rc;
        }
        if (*p == '\0') return 0;
        if (*++p == '\0')
            return lam_reader_error(t->r, t->ln->line, t->err,
                                    "bad qubit list in '%s' (a trailing comma)", tok);
    }
}

/* The spelling of a term from its first Pauli field: 2 for x:/y:/z:, 1
 * for the version-1 X0, 0 when the term has none. */
static int term_spelling(const lam_line *ln)
{
    for (int f = 0; f < ln->nfields; ++f) {
        const char *tok = ln->fields[f];
        if (tok[0] == '@') continue;
        return (tok[0] == 'X' || tok[0] == 'Y' || tok[0] == 'Z') &&
                       tok[1] >= '0' && tok[1] <= '9'
                   ? 1
                   : 2;
    }
    return 0;
}

/* Parse the fields of one term into x, z (nw words).  *need is -1 when
 * the term fits, else the qubit count it needs (only when nqubits < 0,
 * i.e. unbounded, and an index lies beyond the nw words given).  Returns
 * 0, or the code of a malformed term. */
static int parse_fields(lam_reader *r, const lam_line *ln, int nqubits, int nw,
                        uint64_t *x, uint64_t *z, int32_t *group, long *need,
                        lam_error *err)
{
    term_target t = {r, ln, nqubits, nw, x, z, -1, err};
    int rc = 0;
    clear_words(nw, x, z);
    *group = -1;
    *need = -1;
    int spelling = term_spelling(ln);
    if (spelling && (rc = lam_reader_term_syntax(r, ln, spelling, err)) != 0) return rc;
    unsigned letters_seen = 0;
    for (int f = 0; f < ln->nfields; ++f) {
        const char *tok = ln->fields[f];
        if (tok[0] == '@') {
            if (f != ln->nfields - 1)
                return lam_reader_error(r, ln->line, err,
                                        "group label '%s' must be the last field", tok);
            if ((rc = parse_group(r, ln, tok, group, err)) != 0) return rc;
            continue;
        }
        char letter = tok[0];
        if (spelling == 1) { /* version 1: X0 Y1 Z5, one factor a field */
            long q = -1;
            if (letter == 'X' || letter == 'Y' || letter == 'Z') q = parse_qubit(tok + 1);
            if (q < 0)
                return lam_reader_error(r, ln->line, err,
                                        "unknown Pauli factor '%s' in a version-1 term "
                                        "(want X, Y or Z and a qubit index)",
                                        tok);
            if ((rc = set_qubit(&t, q, letter)) != 0) return rc;
            continue;
        }
        if ((letter != 'x' && letter != 'y' && letter != 'z') || tok[1] != ':')
            return lam_reader_error(r, ln->line, err,
                                    "unknown Pauli field '%s' (want x:, y: or z: and a qubit "
                                    "list, such as z:1-3,7)",
                                    tok);
        unsigned bit = 1u << (letter - 'x');
        if (letters_seen & bit)
            return lam_reader_error(r, ln->line, err, "letter '%c' has two fields in one term",
                                    letter);
        letters_seen |= bit;
        if ((rc = parse_letter_field(&t, tok)) != 0) return rc;
    }
    *need = t.need;
    return 0;
}

int lam_pauli_parse_fields(lam_reader *r, const lam_line *ln, int nqubits, int nw,
                           uint64_t *x, uint64_t *z, int32_t *group, lam_error *err)
{
    long need;
    int rc = parse_fields(r, ln, nqubits, nw, x, z, group, &need, err);
    if (rc) return rc;
    if (need >= 0)
        return lam_reader_error(r, ln->line, err,
                                "qubit index %ld beyond the %d qubits this reader holds",
                                need - 1, 64 * nw);
    return 0;
}

/* Highest qubit + 1 of a string, 0 for the identity. */
static int top_qubit(int nw, const uint64_t *x, const uint64_t *z)
{
    for (int k = nw - 1; k >= 0; --k)
        if (x[k] | z[k]) return k * 64 + 64 - __builtin_clzll(x[k] | z[k]);
    return 0;
}

/* Highest qubit index named in the set + 1. */
static int highest_qubit(const lam_pauli_set *s)
{
    int top = 0;
    for (size_t t = 0; t < s->count; ++t) {
        int q = top_qubit(s->nwords, lam_pauli_x(s, t), lam_pauli_z(s, t));
        if (q > top) top = q;
    }
    return top;
}

/* The reader behind lam_pauli_read*: lines optional.  With merge, the
 * terms read so far are merged every few thousand lines, so repeated
 * strings never pile up and the fresh rows are still in cache. */
static int read_terms(lam_reader *r, lam_pauli_set *s, long **lines, int merge,
                      lam_error *err)
{
    enum { BATCH = 4096 };
    long declared = -1;
    if (lines) *lines = NULL;
    int rc = lam_reader_meta_long(r, "qubits", -1, 0, LAM_PAULI_MAX_QUBITS, &declared, err);
    lam_pauli_set_init(s, declared < 0 ? 0 : (int)declared);
    if (rc) return rc;
    int bounded = declared >= 0;
    size_t lines_cap = 0, merged = 0;
    lam_rowhash h = {0};
    lam_line ln;
    while ((rc = lam_reader_next(r, &ln, err)) == 1) {
        int32_t group;
        long need;
        /* parse straight into the next row */
        reserve(s, s->count + 1);
        for (;;) {
            rc = parse_fields(r, &ln, bounded ? s->nqubits : -1, s->nwords,
                              lam_pauli_x(s, s->count), lam_pauli_z(s, s->count), &group,
                              &need, err);
            if (rc || need < 0) break;
            int nw = s->nwords;
            lam_pauli_set_grow_qubits(s, (int)need);
            if (s->nwords != nw) { /* the rows changed width: index them again */
                lam_rowhash_free(&h);
                merged = 0;
            }
        }
        if (rc) break;
        if (lines && s->count == lines_cap) {
            lines_cap = lines_cap ? lam_mul_size(lines_cap, 2) : 1024;
            *lines = lam_realloc(*lines, lam_mul_size(lines_cap, sizeof(long)));
        }
        if (lines) (*lines)[s->count] = ln.line;
        if (group >= 0 && !s->group) {
            s->group = lam_malloc(lam_mul_size(s->cap, sizeof(int32_t)));
            for (size_t t = 0; t < s->count; ++t) s->group[t] = -1;
        }
        s->coef[s->count] = ln.coef;
        if (s->group) s->group[s->count] = group;
        ++s->count;
        if (merge && s->count - merged >= BATCH) {
            merge_tail(s, &h, merged);
            merged = s->count;
        }
    }
    if (rc) {
        lam_rowhash_free(&h);
        lam_pauli_set_free(s);
        if (lines) {
            free(*lines);
            *lines = NULL;
        }
        return rc;
    }
    if (merge) merge_tail(s, &h, merged);
    lam_rowhash_free(&h);
    if (!bounded) s->nqubits = highest_qubit(s);
    return 0;
}

int lam_pauli_read_lines(lam_reader *r, lam_pauli_set *s, long **lines, lam_error *err)
{
    return read_terms(r, s, lines, 0, err);
}

int lam_pauli_read(lam_reader *r, lam_pauli_set *s, lam_error *err)
{
    return read_terms(r, s, NULL, 0, err);
}

int lam_pauli_read_merged(lam_reader *r, lam_pauli_set *s, int drop, lam_error *err)
{
    int rc = read_terms(r, s, NULL, 1, err);
    if (rc) return rc;
    if (drop) drop_zeros(s);
    return 0;
}

int lam_pauli_write_terms(lam_writer *w, const lam_pauli_set *s, lam_error *err)
{
    /* a factor takes a space, a letter and at most 8 digits; room for the
     * group label on top */
    size_t size = (size_t)s->nqubits * 10 + 48;
    char *buf = lam_malloc(size);
    for (size_t t = 0; t < s->count; ++t) {
        int len = lam_pauli_format(buf, size - 16, s->nwords, lam_pauli_x(s, t),
                                   lam_pauli_z(s, t));
        if (len < 0) {
            free(buf);
            return lam_error_set(err, LAM_EX_SOFTWARE, "internal: Pauli string buffer too small");
        }
        if (s->group && s->group[t] >= 0) {
            if (len) buf[len++] = ' ';
            buf[len++] = '@';
            len += put_index(buf + len, (unsigned long)s->group[t]);
            buf[len] = '\0';
        }
        lam_writer_term(w, s->coef[t], buf);
    }
    free(buf);
    return 0;
}

double lam_pauli_set_constant(const lam_pauli_set *s)
{
    double sum = 0.0;
    for (size_t t = 0; t < s->count; ++t)
        if (lam_pauli_is_identity(s->nwords, lam_pauli_x(s, t), lam_pauli_z(s, t)))
            sum += s->coef[t];
    return sum;
}

int lam_pauli_set_max_weight(const lam_pauli_set *s)
{
    int top = 0;
    for (size_t t = 0; t < s->count; ++t) {
        int w = lam_pauli_weight(s->nwords, lam_pauli_x(s, t), lam_pauli_z(s, t));
        if (w > top) top = w;
    }
    return top;
}

int lam_pauli_summarize(lam_reader *r, lam_pauli_summary *out, lam_error *err)
{
    long declared = -1;
    memset(out, 0, sizeof *out);
    int rc = lam_reader_meta_long(r, "qubits", -1, 0, LAM_PAULI_MAX_QUBITS, &declared, err);
    if (rc) return rc;
    int nw = declared > 0 ? lam_pauli_words((int)declared) : 1;
    uint64_t *xz = lam_calloc(2 * (size_t)nw, sizeof(uint64_t));
    lam_grouped_norm norms = {0};
    lam_line ln;
    while ((rc = lam_reader_next(r, &ln, err)) == 1) {
        int32_t group;
        long need;
        while ((rc = parse_fields(r, &ln, (int)declared, nw, xz, xz + nw, &group, &need,
                                  err)) == 0 &&
               need >= 0) {
            nw = lam_pauli_words((int)need);
            xz = lam_realloc(xz, lam_mul_size(2 * (size_t)nw, sizeof(uint64_t)));
        }
        if (rc) break;
        int weight = lam_pauli_weight(nw, xz, xz + nw);
        int top = top_qubit(nw, xz, xz + nw);
        if (top > out->nqubits) out->nqubits = top;
        if (ln.coef == 0) continue;
        ++out->terms;
        if (weight == 0) {
            out->constant += ln.coef;
            continue;
        }
        if (weight > out->max_weight) out->max_weight = weight;
        if (group >= 0) out->labelled = 1;
        lam_grouped_norm_add(&norms, group, ln.coef);
    }
    out->lambda = norms.plain;
    out->lambda_grouped = lam_grouped_norm_finish(&norms, &out->groups);
    if (declared >= 0) out->nqubits = (int)declared;
    free(xz);
    return rc;
}

/* ------------------------------------------------- merging while summing */

/* A term as a short byte key: every qubit in ascending order as the
 * varint of (gap from the previous qubit) * 4 + letter (1 x, 2 y, 3 z),
 * then, for a labelled term, a 0 byte and the varint of the label.  Equal
 * (string, label) pairs have equal keys; a 5-factor string on 200 qubits
 * takes 5 to 10 bytes instead of 64 of bits. */
static size_t put_varint(uint8_t *p, uint64_t v)
{
    size_t n = 0;
    while (v >= 0x80) {
        p[n++] = (uint8_t)(v | 0x80);
        v >>= 7;
    }
    p[n++] = (uint8_t)v;
    return n;
}

static size_t encode_key(uint8_t *key, int nw, const uint64_t *x, const uint64_t *z,
                         int32_t group)
{
    size_t n = 0;
    uint64_t prev = 0;
    for (int w = 0; w < nw; ++w) {
        uint64_t xw = x[w], zw = z[w], any = xw | zw;
        while (any) {
            unsigned b = (unsigned)__builtin_ctzll(any);
            any &= any - 1;
            uint64_t q = (uint64_t)w * 64 + b, xb = (xw >> b) & 1, zb = (zw >> b) & 1;
            /* x 1, y 2, z 3 without a branch: the letters are random */
            uint64_t v = ((q - prev) << 2) | (3 - 2 * xb + (xb & zb));
            if (v < (1u << 14)) {
                /* one byte or two, without a branch on which: the gaps are
                 * random, and a mispredicted branch per qubit was measured
                 * at a fifth of the encoding (the caller leaves a spare
                 * byte) */
                size_t two = v >= 0x80;
                key[n] = (uint8_t)(v | two << 7);
                key[n + 1] = (uint8_t)(v >> 7);
                n += 1 + two;
            } else {
                n += put_varint(key + n, v);
            }
            prev = q;
        }
    }
    if (group >= 0) {
        key[n++] = 0;
        n += put_varint(key + n, (uint64_t)group);
    }
    return n;
}

static inline uint64_t key_hash(const uint8_t *key, size_t n)
{
    uint64_t h = 0x9e3779b97f4a7c15ULL ^ n;
    size_t i = 0;
    for (; i + 8 <= n; i += 8) {
        uint64_t v;
        memcpy(&v, key + i, 8);
        h = mix64(h ^ v);
    }
    uint64_t tail = 0;
    for (size_t k = 0; i + k < n; ++k) tail |= (uint64_t)key[i + k] << (8 * k);
    return mix64(h ^ tail ^ 0x5bd1e995);
}

/* Distinct keys with their summed coefficients, end to end in one arena
 * in the order of first appearance: an entry is the coefficient (8 bytes,
 * unaligned), the varint of its term's number less that of the entry
 * before (so that the entries of several tables can be put back in the
 * order of the input), the key's length as a varint, the key.  The open-addressing
 * table holds 24 bits of each key's hash and its entry's offset + 1.  One
 * arena instead of separate offset and coefficient arrays: the table's
 * memory is touched for the first time while merging, and the kernel's
 * zeroing of those pages was measured at a quarter of all the work. */
typedef struct {
    uint8_t *arena;
    size_t arena_len, arena_cap;
    size_t count;
    uint64_t *slot;
    size_t size;
    uint64_t last_seq; /* term number of the last entry */
} key_table;

/* The table is kept at most 70 % full: with the fingerprints a probe
 * sequence still stays within a cache line or two. */
static int key_table_full(const key_table *kt, size_t count)
{
    return 10 * count > 7 * kt->size;
}

/* Large arrays on huge pages where the system lends them: every table
 * look-up lands on a page of its own, and the page faults and page-table
 * walks of 4 KB pages were measured to cost as much as the cache misses.
 * Growing copies old_bytes over (the arrays grow rarely: they are sized
 * from the file ahead). */
static void *big_realloc(void *old, size_t old_bytes, size_t bytes)
{
    size_t huge = (size_t)2 << 20;
    if (bytes < 2 * huge) return lam_realloc(old, bytes);
    size_t rounded = (bytes + huge - 1) / huge * huge;
    void *p = aligned_alloc(huge, rounded);
    if (!p) lam_out_of_memory(rounded);
#ifdef MADV_HUGEPAGE
    madvise(p, rounded, MADV_HUGEPAGE); /* a hint: without it, 4 KB pages */
#endif
    if (old) memcpy(p, old, old_bytes < bytes ? old_bytes : bytes);
    free(old);
    return p;
}

static uint64_t *alloc_slots(size_t size)
{
    size_t bytes = lam_mul_size(size, sizeof(uint64_t));
    uint64_t *slot = big_realloc(NULL, 0, bytes);
    memset(slot, 0, bytes);
    return slot;
}

/* The key table's fingerprint is the low 24 bits of the hash, apart from
 * the top bits that choose the slot: keys that meet at one slot then
 * still differ in their fingerprints, and a probe that misses rarely reads
 * a key. */
#define KEY_FP(h) ((h) & ((UINT64_C(1) << (64 - SLOT_INDEX_BITS)) - 1))

/* The key of the entry at e, and its length. */
static inline const uint8_t *entry_key(const uint8_t *e, size_t *len)
{
    const uint8_t *p = e + sizeof(double);
    while (*p++ >= 0x80) {} /* the term number's step */
    if (*p < 0x80) { /* a key below 128 bytes: the common case */
        *len = *p;
        return p + 1;
    }
    size_t n = 0;
    for (unsigned shift = 0;; shift += 7) {
        n |= (size_t)(*p & 0x7f) << shift;
        if (*p++ < 0x80) break;
    }
    *len = n;
    return p;
}

static inline double entry_coef(const uint8_t *e)
{
    double c;
    memcpy(&c, e, sizeof c);
    return c;
}

/* Rehash from the keys, in the order of the entries (the arena is read
 * from start to end). */
static void key_table_resize(key_table *kt, size_t size)
{
    uint64_t *slot = alloc_slots(size);
    for (size_t at = 0; at < kt->arena_len;) {
        size_t len;
        const uint8_t *key = entry_key(kt->arena + at, &len);
        uint64_t hv = key_hash(key, len);
        size_t j = slot_of(hv, size);
        while (slot[j]) j = (j + 1) & (size - 1);
        slot[j] = (KEY_FP(hv) << SLOT_INDEX_BITS) | (uint64_t)(at + 1);
        at = (size_t)(key - kt->arena) + len;
    }
    free(kt->slot);
    kt->slot = slot;
    kt->size = size;
}

static void key_table_reserve(key_table *kt, size_t count)
{
    size_t size = kt->size ? kt->size : 1 << 12;
    while (10 * count > 7 * size) size = lam_mul_size(size, 2);
    if (size != kt->size) key_table_resize(kt, size);
}

static inline void key_table_prefetch(const key_table *kt, uint64_t hv)
{
    __builtin_prefetch(&kt->slot[slot_of(hv, kt->size)]);
}

/* Room for len more bytes from arena + at on. */
static void key_table_room(key_table *kt, size_t at, size_t len)
{
    if (kt->arena && at + len <= kt->arena_cap) return;
    size_t cap = kt->arena_cap ? kt->arena_cap : 1 << 16;
    while (cap < at + len) cap = lam_mul_size(cap, 2);
    kt->arena = big_realloc(kt->arena, kt->arena_len, cap);
    kt->arena_cap = cap;
}

/* Add c to the key (len bytes at key, outside the table): a new entry at
 * the arena's end, or the sum of an equal one. */
static int key_table_add(key_table *kt, const uint8_t *key, size_t len, uint64_t hv, double c,
                         uint64_t seq, lam_error *err)
{
    if (key_table_full(kt, kt->count + 1)) key_table_reserve(kt, kt->count + 1);
    uint64_t fp = KEY_FP(hv);
    size_t i = slot_of(hv, kt->size), mask = kt->size - 1;
    for (;; i = (i + 1) & mask) {
        uint64_t e = kt->slot[i];
        if (!e) break;
        if ((e >> SLOT_INDEX_BITS) != fp) continue;
        uint8_t *entry = kt->arena + (e & SLOT_INDEX_MASK) - 1;
        size_t have;
        const uint8_t *other = entry_key(entry, &have);
        if (have == len && memcmp(other, key, len) == 0) {
            double sum = entry_coef(entry) + c;
            memcpy(entry, &sum, sizeof sum);
            return 0;
        }
    }
    /* coefficient, two varints, key, and 8 spare bytes for key_weight */
    size_t most = sizeof(double) + 20 + len + 8;
    if (kt->arena_len + most >= SLOT_INDEX_MASK)
        return lam_error_set(err, LAM_EX_SOFTWARE, "hash index: too many rows");
    key_table_room(kt, kt->arena_len, most);
    uint8_t *entry = kt->arena + kt->arena_len;
    memcpy(entry, &c, sizeof c);
    size_t head = sizeof c + put_varint(entry + sizeof c, seq - kt->last_seq);
    head += put_varint(entry + head, len);
    kt->last_seq = seq;
    memcpy(entry + head, key, len);
    kt->slot[i] = (fp << SLOT_INDEX_BITS) | (uint64_t)(kt->arena_len + 1);
    kt->arena_len += head + len;
    ++kt->count;
    return 0;
}

static void key_table_free(key_table *kt)
{
    free(kt->arena);
    free(kt->slot);
}

/* Bytes of w with the top bit set, without a popcount instruction (not
 * in the baseline instruction set). */
static inline size_t top_bits(uint64_t w)
{
    return (size_t)((((w >> 7) & UINT64_C(0x0101010101010101)) * UINT64_C(0x0101010101010101)) >>
                    56);
}

/* Weight and label of a key in the arena (label -1 when it has none).
 * Every byte of a qubit's varint but its last has the top bit set, and no
 * byte before the label's 0 is 0: the weight is the bytes before the 0
 * less the set top bits.  A key of up to 8 bytes without a label is
 * counted as one word (the arena keeps 8 spare bytes past its end). */
static int key_weight(const uint8_t *key, size_t len, int32_t *group)
{
    *group = -1;
    if (len <= 8) {
        uint64_t w, mask = len == 8 ? ~UINT64_C(0) : (UINT64_C(1) << (8 * len)) - 1;
        memcpy(&w, key, 8);
        w &= mask;
        uint64_t zero = (w - UINT64_C(0x0101010101010101)) & ~w & UINT64_C(0x8080808080808080);
        if (!(zero & mask)) return (int)(len - top_bits(w));
    }
    size_t n = 0, more = 0;
    for (; n < len && key[n] != 0; ++n) more += key[n] >> 7;
    if (n < len) {
        uint64_t g = 0;
        for (size_t i = n; ++i < len;) g |= (uint64_t)(key[i] & 0x7f) << (7 * (i - n - 1));
        *group = (int32_t)g;
    }
    return (int)(n - more);
}

/* The length of the coefficient token at p when lam_reader_coefficient is
 * certain to accept it: a sign, digits with at most one point, at least
 * one digit, an exponent (e, E, d or D) of at most 3 digits, a magnitude
 * below 10^100 by the digits before the point and the exponent, at most 40
 * bytes, then a blank or the end.  0 for anything else: the caller then
 * parses it at once, so that a bad coefficient is reported before any
 * later line is read.  A scan of the characters only: the conversion
 * itself is left to the merging thread. */
static size_t plain_coefficient(const char *p)
{
    const char *c = p;
    if (*c == '+' || *c == '-') ++c;
    const char *start = c;
    while (*c == '0') ++c;
    const char *lead = c;
    while ((unsigned)(*c - '0') < 10) ++c;
    long magnitude = (long)(c - lead);
    long digits = (long)(c - start);
    if (*c == '.') {
        const char *f = ++c;
        while ((unsigned)(*c - '0') < 10) ++c;
        digits += (long)(c - f);
    }
    if (digits == 0) return 0;
    if ((*c | 0x20) == 'e' || (*c | 0x20) == 'd') {
        ++c;
        int negative = 0;
        if (*c == '+' || *c == '-') negative = *c++ == '-';
        const char *e = c;
        long ev = 0;
        while ((unsigned)(*c - '0') < 10 && c - e < 4) ev = 10 * ev + (*c++ - '0');
        if (c == e || c - e > 3) return 0;
        magnitude += negative ? -ev : ev;
    }
    if (*c != ' ' && *c != '\t' && *c != '\0') return 0;
    return magnitude <= 100 && c - p <= 40 ? (size_t)(c - p) : 0;
}

/* The Pauli fields of a well-formed version-2 term, from p (past the
 * coefficient) into x, z (nw words, all qubits below `limit`) and its
 * label, without splitting the text: 0 when they parsed (*stop at the
 * terminating NUL, which tells a NUL inside a line), -1 for anything
 * else (another spelling, an error, a qubit beyond the words), which the
 * caller hands to the full parser for its message or its growth. */
static int parse_fields_v2(const char *p, long limit, int nw, uint64_t *x, uint64_t *z,
                           int32_t *group, const char **stop)
{
    clear_words(nw, x, z);
    *group = -1;
    unsigned seen = 0;
    for (;;) {
        while (*p == ' ' || *p == '\t') ++p;
        if (!*p) {
            *stop = p;
            return 0;
        }
        if (*group >= 0) return -1; /* the label must come last */
        if (*p == '@') {
            const char *c = p + 1;
            long g = scan_qubit(&c); /* digits, no leading zero */
            if (g < 0 || (*c && *c != ' ' && *c != '\t')) return -1;
            *group = (int32_t)g;
            p = c;
            continue;
        }
        char letter = *p;
        if ((letter != 'x' && letter != 'y' && letter != 'z') || p[1] != ':') return -1;
        unsigned bit = 1u << (letter - 'x');
        if (seen & bit) return -1;
        seen |= bit;
        const char *c = p + 2;
        for (;;) {
            long a = scan_qubit(&c), b = a;
            if (a >= 0 && *c == '-') {
                ++c;
                b = scan_qubit(&c);
            }
            if (a < 0 || b < a || b >= limit) return -1;
            for (long q = a; q <= b; ++q) {
                uint64_t m = (uint64_t)1 << (q & 63);
                size_t w = (size_t)(q >> 6);
                if ((x[w] | z[w]) & m) return -1;
                if (letter != 'z') x[w] |= m;
                if (letter != 'x') z[w] |= m;
            }
            if (*c != ',') break;
            ++c;
        }
        if (*c && *c != ' ' && *c != '\t') return -1;
        p = c;
    }
}

/* ------------------------------------------------ merging on both cores */

/* lam_pauli_summarize_merged reads the first lines in one thread (the
 * spelling and the size of the tables are known after them) and then,
 * on a version-2 stream, uses two.  The text comes in blocks of whole
 * lines, two a round, one for each thread to parse into encoded keys;
 * the table is two tables, one for each value of a bit of the keys' hash,
 * and each thread adds the keys of its half, from both blocks, in the
 * order of the input: no locks, every key in one table, every sum formed
 * in the order of the lines.  The entries keep their term's number, so
 * the final sums walk both tables in the order of first appearance: the
 * result is that of one thread, bit for bit.  A line the quick parser
 * does not take (another spelling, a coefficient written otherwise, an
 * error, "#%" metadata, a NUL byte) keeps a place among the keys and is
 * left to the ordered pass of the first thread, between parsing and
 * adding, which meets such lines in the order of the file: the first bad
 * line is the one reported, at its line. */

/* BLOCK_BYTES: the text of a round, both blocks */
enum { SEQUENTIAL_LINES = 1 << 14, SIZE_AFTER = 4096, BLOCK_BYTES = 1 << 21 };

/* The half of the table a key goes to: a hash bit that neither the slot
 * (top bits) nor the fingerprint (low 24 bits) uses. */
static inline int key_half(uint64_t hv) { return (int)(hv >> 24) & 1; }

/* A parsed term on its way to the table. */
typedef struct {
    uint64_t hash;
    double coef;
    uint64_t seq; /* term number: block << 32 | term within the block */
    size_t at;    /* the key in the block's key bytes */
    uint32_t len; /* key bytes, or REC_LATER / REC_NONE */
} key_rec;

#define REC_LATER UINT32_MAX      /* left to the ordered pass */
#define REC_NONE (UINT32_MAX - 1) /* the place kept in the other half */

/* A line the quick parser left to the ordered pass. */
enum { EV_CONTROL, EV_TERM, EV_NUL };
typedef struct {
    size_t off, len; /* its text in the block, NUL terminated */
    long idx;        /* its line within the block, from 0 */
    long next_term;  /* the first term line after it in the block, -1 */
    uint64_t seq;    /* EV_TERM: the term number */
    size_t rec[2];   /* EV_TERM: its places in both halves */
    int kind;
} line_event;

typedef struct {
    char *text; /* whole lines; room for a NUL past len */
    size_t len, cap;
    uint64_t number;
    key_rec *rec[2];
    size_t nrec[2], caprec[2];
    uint8_t *keys;
    size_t keys_len, keys_cap;
    line_event *ev;
    size_t nev, capev;
    long lines, first_term;
    int top;
} text_block;

static void text_block_free(text_block *b)
{
    LAM_FREE_ALL(b->text, b->rec[0], b->rec[1], b->keys, b->ev);
}

static key_rec *block_rec(text_block *b, int half)
{
    if (b->nrec[half] == b->caprec[half]) {
        b->caprec[half] = b->caprec[half] ? lam_mul_size(b->caprec[half], 2) : 4096;
        b->rec[half] = lam_realloc(b->rec[half], lam_mul_size(b->caprec[half], sizeof(key_rec)));
    }
    return &b->rec[half][b->nrec[half]++];
}

static line_event *block_event(text_block *b, int kind, const char *line, size_t len, long idx)
{
    if (b->nev == b->capev) {
        b->capev = b->capev ? lam_mul_size(b->capev, 2) : 64;
        b->ev = lam_realloc(b->ev, lam_mul_size(b->capev, sizeof(line_event)));
    }
    line_event *ev = &b->ev[b->nev++];
    memset(ev, 0, sizeof *ev);
    ev->off = (size_t)(line - b->text);
    ev->len = len;
    ev->idx = idx;
    ev->next_term = -1;
    ev->kind = kind;
    return ev;
}

/* Encode a term into the block's key bytes and describe it in *rec;
 * returns its half. */
static int encode_rec(text_block *b, int nw, const uint64_t *xz, int32_t group, double coef,
                      uint64_t seq, key_rec *rec)
{
    /* at most 4 varint bytes a qubit (indices below 2^24), the label */
    size_t most = nw <= 4 ? 256 * (size_t)nw : (size_t)lam_pauli_weight(nw, xz, xz + nw);
    size_t room = 4 * most + 16;
    if (b->keys_len + room > b->keys_cap) {
        size_t cap = b->keys_cap ? b->keys_cap : (size_t)1 << 16;
        while (cap < b->keys_len + room) cap = lam_mul_size(cap, 2);
        b->keys = lam_realloc(b->keys, cap);
        b->keys_cap = cap;
    }
    rec->at = b->keys_len;
    rec->len = (uint32_t)encode_key(b->keys + b->keys_len, nw, xz, xz + nw, group);
    b->keys_len += rec->len;
    rec->hash = key_hash(b->keys + rec->at, rec->len);
    rec->coef = coef;
    rec->seq = seq;
    return key_half(rec->hash);
}

/* The quick parse of a block (either thread): every plain version-2 term
 * with a plain coefficient into a key of its half; every other line that
 * is not blank or a comment into an event for the ordered pass.  limit:
 * qubits from it on are left to the ordered pass; xz: 2 nw words. */
static void parse_block(text_block *b, int nw, long limit, int find_top, uint64_t *xz)
{
    b->nrec[0] = b->nrec[1] = b->keys_len = b->nev = 0;
    b->first_term = -1;
    b->top = 0;
    char *p = b->text, *end = b->text + b->len;
    long idx = 0;
    uint32_t terms = 0;
    size_t waiting = 0; /* events before it that wait for the next term line */
    for (; p < end; ++idx) {
        char *nl = memchr(p, '\n', (size_t)(end - p));
        char *e = nl ? nl : end, *line = p;
        p = e + 1;
        *e = '\0';
        if (e > line && e[-1] == '\r') *--e = '\0';
        size_t n = (size_t)(e - line);
        char *s = line;
        if (*s == '#') {
            if (s[1] == '%')
                block_event(b, EV_CONTROL, line, n, idx);
            else if (strlen(line) != n)
                block_event(b, EV_NUL, line, n, idx);
            continue;
        }
        while (*s == ' ' || *s == '\t') ++s;
        if (!*s) {
            if (s != e) block_event(b, EV_NUL, line, n, idx);
            continue;
        }
        for (; waiting < b->nev; ++waiting) b->ev[waiting].next_term = idx;
        if (b->first_term < 0) b->first_term = idx;
        uint64_t seq = b->number << 32 | terms++;
        char *ce = s;
        while ((unsigned char)*ce > ' ') ++ce; /* the coefficient's end */
        double coef = 0;
        int32_t group = -1;
        const char *stop = NULL;
        char save = *ce;
        *ce = '\0';
        int fast = lam_reader_coefficient(s, &coef) == 0;
        *ce = save;
        fast = fast && (save == ' ' || save == '\t' || save == '\0') &&
               parse_fields_v2(ce, limit, nw, xz, xz + nw, &group, &stop) == 0 && stop == e;
        if (fast) {
            key_rec rec;
            int half = encode_rec(b, nw, xz, group, coef, seq, &rec);
            *block_rec(b, half) = rec;
            if (find_top) {
                int top = top_qubit(nw, xz, xz + nw);
                if (top > b->top) b->top = top;
            }
            continue;
        }
        line_event *ev = block_event(b, EV_TERM, line, n, idx);
        ev->seq = seq;
        for (int h = 0; h < 2; ++h) {
            block_rec(b, h)->len = REC_LATER;
            ev->rec[h] = b->nrec[h] - 1;
        }
    }
    b->lines = idx;
}

/* One term line by the full parser (the quick one first) into xz (grown
 * through *xz, *nw when an unbounded stream needs more), its label and
 * coefficient; the code of a malformed term. */
static int read_term(lam_reader *r, char *text, long line, long declared, int *nw,
                     uint64_t **xz, int32_t *group, double *coef, lam_error *err)
{
    char *p = text;
    while (*p == ' ' || *p == '\t') ++p;
    size_t n = plain_coefficient(p);
    long limit = declared >= 0 ? declared : 64L * *nw;
    if (n && lam_reader_syntax(r) == 2) {
        char save = p[n];
        p[n] = '\0';
        int fast = lam_reader_coefficient(p, coef) == 0;
        p[n] = save;
        const char *stop;
        if (fast && parse_fields_v2(p + n, limit, *nw, *xz, *xz + *nw, group, &stop) == 0)
            return 0;
    }
    lam_line ln;
    int rc = lam_reader_split(r, text, line, &ln, err);
    if (rc) return rc;
    long need;
    while ((rc = parse_fields(r, &ln, (int)declared, *nw, *xz, *xz + *nw, group, &need,
                              err)) == 0 &&
           need >= 0) {
        *nw = lam_pauli_words((int)need);
        *xz = lam_realloc(*xz, lam_mul_size(2 * (size_t)*nw, sizeof(uint64_t)));
    }
    if (rc) return rc;
    *coef = ln.coef;
    return 0;
}

/* What the first thread keeps while it meets the lines in order. */
typedef struct {
    lam_reader *r;
    long declared;
    int nw;       /* words of every parser (grows for an unbounded stream) */
    uint64_t *xz; /* the ordered pass's words */
    long lineno;  /* lines before the next block */
    int ended;    /* met "#% end" */
    int top;      /* highest qubit + 1 so far */
} ordered_pass;

/* A term line the quick parser left: parsed in full into its place. */
static int settle_term(ordered_pass *op, text_block *b, const line_event *ev, long line,
                       lam_error *err)
{
    int32_t group;
    double coef;
    int rc = read_term(op->r, b->text + ev->off, line, op->declared, &op->nw, &op->xz, &group,
                       &coef, err);
    if (rc) return rc;
    key_rec rec;
    int half = encode_rec(b, op->nw, op->xz, group, coef, ev->seq, &rec);
    b->rec[half][ev->rec[half]] = rec;
    b->rec[!half][ev->rec[!half]].len = REC_NONE;
    int top = top_qubit(op->nw, op->xz, op->xz + op->nw);
    if (top > op->top) op->top = top;
    return 0;
}

/* The ordered pass over a parsed block: its events in the order of the
 * lines, the first failure returned; a term line after "#% end" fails. */
static int settle_block(ordered_pass *op, text_block *b, lam_error *err)
{
    long base = op->lineno;
    long bad = op->ended ? b->first_term : -1; /* a term line after the end */
    int rc = 0;
    for (size_t i = 0; i < b->nev && !rc; ++i) {
        const line_event *ev = &b->ev[i];
        if (bad >= 0 && ev->idx > bad) break;
        char *text = b->text + ev->off;
        long line = base + ev->idx + 1;
        if (strlen(text) != ev->len) {
            rc = lam_reader_error(op->r, line, err, "NUL byte in line");
        } else if (op->ended) {
            continue; /* comments and metadata after the end are not read */
        } else if (ev->kind == EV_CONTROL) {
            int end;
            rc = lam_reader_raw_control(op->r, text, line, &end, err);
            if (!rc && end) {
                op->ended = 1;
                bad = ev->next_term;
            }
        } else if (ev->kind == EV_TERM) {
            rc = settle_term(op, b, ev, line, err);
        }
    }
    if (!rc && bad >= 0)
        rc = lam_reader_error(op->r, base + bad + 1, err, "term after '#%% end'");
    op->lineno += b->lines;
    if (b->top > op->top) op->top = b->top;
    return rc;
}

/* The bytes after the last whole line handed out. */
typedef struct {
    char *bytes;
    size_t len, cap;
} carry_text;

/* The next block: the carried part of a line, then whole lines up to
 * about `bytes` (more for a longer line); at the end of the input the
 * last line may lack its newline.  A read error is returned with the
 * whole lines before it in the block. */
static int fill_block(lam_reader *r, text_block *b, carry_text *carry, uint64_t number,
                      size_t bytes, lam_error *err)
{
    b->number = number;
    b->len = 0;
    if (b->cap < bytes + carry->len + 1) {
        b->cap = bytes + carry->len + 1;
        b->text = lam_realloc(b->text, b->cap);
    }
    if (carry->len) memcpy(b->text, carry->bytes, carry->len);
    b->len = carry->len;
    carry->len = 0;
    for (;;) {
        size_t want = b->len < bytes ? bytes - b->len : b->len;
        if (b->cap < b->len + want + 1) {
            b->cap = lam_mul_size(b->len + want, 1) + 1;
            b->text = lam_realloc(b->text, b->cap);
        }
        size_t got;
        int rc = lam_reader_raw_read(r, b->text + b->len, want, &got, err);
        if (!rc && got == 0) return 0; /* the end of the input */
        b->len += got;
        size_t last = b->len;
        while (last > 0 && b->text[last - 1] != '\n') --last;
        if (last > 0 || rc) {
            size_t rest = b->len - last;
            if (carry->cap < rest) {
                carry->cap = rest;
                carry->bytes = lam_realloc(carry->bytes, carry->cap);
            }
            if (rest) memcpy(carry->bytes, b->text + last, rest);
            carry->len = rc ? 0 : rest;
            b->len = last;
            return rc;
        }
    }
}

/* The size of each half for the keys expected, from the bytes a line
 * took so far and the bytes left in the file (plain files only); 0 when
 * unknown. */
typedef struct {
    size_t keys, bytes;
} table_plan;

static table_plan plan_tables(lam_reader *r, const key_table kt[2], size_t lines)
{
    table_plan plan = {0, 0};
    long long left = lam_reader_bytes_left(r), done = lam_reader_bytes_read(r);
    if (left < 0 || done <= 0 || lines == 0) return plan;
    double expect = 1.05 * ((double)lines + (double)left * (double)lines / (double)done);
    if (expect >= 1e10) return plan;
    size_t count = kt[0].count + kt[1].count;
    double per_entry = (double)(kt[0].arena_len + kt[1].arena_len) / (double)(count ? count : 1);
    plan.keys = (size_t)(expect / 2 * 1.01);
    plan.bytes = (size_t)((double)plan.keys * per_entry) + 4096;
    return plan;
}

/* Size a half as planned: done by the thread that owns it, so that the
 * kernel's zeroing of the new pages (a fifth of all the work) is shared. */
static void size_table(key_table *kt, table_plan plan)
{
    if (!plan.keys) return;
    key_table_reserve(kt, plan.keys);
    key_table_room(kt, kt->arena_len, plan.bytes);
}

/* What both threads share. */
typedef struct {
    text_block blk[2][2]; /* [round & 1][thread] */
    key_table *kt;        /* [2]: one half each */
    table_plan plan;
    pthread_barrier_t bar;
    int nw;
    long declared;
    int stop;          /* no more rounds */
    int skip;          /* the round failed: add nothing */
    int failed[2];     /* a thread's failure adding its half (70) */
    lam_error err[2];
} both_cores;

typedef struct {
    both_cores *bc;
    uint64_t *xz;
    int nw;
} core_words;

static void parse_turn(both_cores *bc, text_block *b, core_words *cw)
{
    if (cw->nw != bc->nw) {
        cw->nw = bc->nw;
        cw->xz = lam_realloc(cw->xz, lam_mul_size(2 * (size_t)cw->nw, sizeof(uint64_t)));
    }
    parse_block(b, cw->nw, bc->declared >= 0 ? bc->declared : 64L * cw->nw, bc->declared < 0,
                cw->xz);
}

/* Add one half of a block's keys, a batch at a time, their slots
 * prefetched first so that the cache misses overlap. */
static int add_half(key_table *kt, const text_block *b, int half, lam_error *err)
{
    enum { BATCH = 32 };
    const key_rec *rec = b->rec[half];
    size_t n = b->nrec[half];
    for (size_t s = 0; s < n; s += BATCH) {
        size_t e = s + BATCH < n ? s + BATCH : n;
        for (size_t i = s; i < e; ++i)
            if (rec[i].len < REC_NONE) key_table_prefetch(kt, rec[i].hash);
        for (size_t i = s; i < e; ++i) {
            if (rec[i].len >= REC_NONE) continue;
            int rc = key_table_add(kt, b->keys + rec[i].at, rec[i].len, rec[i].hash,
                                   rec[i].coef, rec[i].seq, err);
            if (rc) return rc;
        }
    }
    return 0;
}

static void add_round(both_cores *bc, int k, int half)
{
    for (int t = 0; t < 2 && !bc->failed[half]; ++t)
        bc->failed[half] = add_half(&bc->kt[half], &bc->blk[k & 1][t], half, &bc->err[half]) != 0;
}

/* The second thread: parse its block of each round, wait for the ordered
 * pass, add its half of the round's keys. */
static void *second_core(void *arg)
{
    core_words *cw = arg;
    both_cores *bc = cw->bc;
    for (unsigned k = 0;; ++k) {
        pthread_barrier_wait(&bc->bar); /* the round's text is read */
        if (bc->stop || bc->failed[0] || bc->failed[1]) return NULL;
        if (k == 0) size_table(&bc->kt[1], bc->plan);
        parse_turn(bc, &bc->blk[k & 1][1], cw);
        pthread_barrier_wait(&bc->bar); /* both blocks are parsed */
        pthread_barrier_wait(&bc->bar); /* the ordered pass is done */
        if (!bc->skip) add_round(bc, (int)k, 1);
    }
}

static int read_round(lam_reader *r, text_block round[2], carry_text *carry, uint64_t *number,
                      lam_error *err)
{
    /* the first thread also reads, settles and sums up: a smaller block */
    round[1].len = 0;
    round[1].number = *number + 1;
    int rc = fill_block(r, &round[0], carry, (*number)++, BLOCK_BYTES / 16 * 7, err);
    if (!rc && round[0].len) rc = fill_block(r, &round[1], carry, *number, BLOCK_BYTES / 16 * 9, err);
    ++*number;
    return rc;
}

/* The rest of the stream on both cores, from line op->lineno + 1 on;
 * 0 or the code of the first failure, -1 when the second thread could
 * not start (nothing read: the caller goes on alone). */
static int run_both_cores(lam_reader *r, key_table kt[2], table_plan plan, ordered_pass *op,
                          lam_error *err)
{
    both_cores bc;
    memset(&bc, 0, sizeof bc);
    bc.kt = kt;
    bc.plan = plan;
    bc.nw = op->nw;
    bc.declared = op->declared;
    if (pthread_barrier_init(&bc.bar, NULL, 2) != 0) return -1;
    core_words second = {&bc, NULL, 0}, first = {&bc, NULL, 0};
    pthread_t th;
    if (pthread_create(&th, NULL, second_core, &second) != 0) {
        pthread_barrier_destroy(&bc.bar);
        return -1;
    }
    carry_text carry = {0};
    uint64_t number = 1; /* block 0: the lines read alone */
    lam_error read_err;
    int rc = 0, read_rc = read_round(r, bc.blk[0], &carry, &number, &read_err);
    for (unsigned k = 0;; ++k) {
        text_block *round = bc.blk[k & 1];
        if (!rc && read_rc && !round[0].len) { /* the read error, after every line before it */
            rc = read_rc;
            *err = read_err;
        }
        bc.stop = rc || !round[0].len;
        pthread_barrier_wait(&bc.bar);
        /* a failure to add is read here, where neither thread writes */
        if (bc.stop || bc.failed[0] || bc.failed[1]) break;
        if (k == 0) size_table(&kt[0], plan);
        parse_turn(&bc, &round[0], &first);
        pthread_barrier_wait(&bc.bar);
        rc = settle_block(op, &round[0], err);
        if (!rc) rc = settle_block(op, &round[1], err);
        bc.nw = op->nw;
        if (!rc && read_rc) {
            rc = read_rc;
            *err = read_err;
        }
        bc.skip = rc != 0;
        pthread_barrier_wait(&bc.bar);
        /* the next round is read while the second thread adds its half */
        if (!rc) read_rc = read_round(r, bc.blk[(k + 1) & 1], &carry, &number, &read_err);
        if (!rc) add_round(&bc, (int)k, 0);
    }
    pthread_join(th, NULL);
    pthread_barrier_destroy(&bc.bar);
    for (int h = 0; !rc && h < 2; ++h)
        if (bc.failed[h]) {
            *err = bc.err[h];
            rc = err->code;
        }
    lam_reader_raw_seen(r, op->lineno);
    if (!rc) rc = lam_reader_raw_finish(r, err);
    for (int k = 0; k < 2; ++k)
        for (int t = 0; t < 2; ++t) text_block_free(&bc.blk[k][t]);
    LAM_FREE_ALL(carry.bytes, first.xz, second.xz);
    return rc;
}


/* The step of an entry's term number from the entry before. */
static inline uint64_t entry_step(const uint8_t *e)
{
    const uint8_t *p = e + sizeof(double);
    uint64_t v = 0;
    for (unsigned shift = 0;; shift += 7) {
        v |= (uint64_t)(*p & 0x7f) << shift;
        if (*p++ < 0x80) return v;
    }
}

/* Sum the merged tables in the order of first appearance. */
static void summarize_tables(const key_table kt[2], lam_pauli_summary *out)
{
    lam_grouped_norm norms = {0};
    size_t at[2] = {0, 0};
    uint64_t seq[2] = {0, 0};
    for (int h = 0; h < 2; ++h)
        if (kt[h].arena_len) seq[h] = entry_step(kt[h].arena);
    /* a half that is done waits behind every term number */
    for (int h = 0; h < 2; ++h)
        if (!kt[h].arena_len) seq[h] = UINT64_MAX;
    for (;;) {
        /* which half comes next is a coin toss: chosen without a branch */
        int h = seq[1] < seq[0];
        if (seq[h] == UINT64_MAX) break;
        const uint8_t *e = kt[h].arena + at[h];
        double c = entry_coef(e);
        size_t len;
        const uint8_t *key = entry_key(e, &len);
        at[h] = (size_t)(key - kt[h].arena) + len;
        seq[h] = at[h] < kt[h].arena_len ? seq[h] + entry_step(kt[h].arena + at[h]) : UINT64_MAX;
        if (c == 0) continue;
        ++out->terms;
        int32_t group;
        int weight = key_weight(key, len, &group);
        if (weight == 0) {
            out->constant += c;
            continue;
        }
        if (weight > out->max_weight) out->max_weight = weight;
        if (group >= 0) out->labelled = 1;
        lam_grouped_norm_add(&norms, group, c);
    }
    out->lambda = norms.plain;
    out->lambda_grouped = lam_grouped_norm_finish(&norms, &out->groups);
}

int lam_pauli_summarize_merged(lam_reader *r, lam_pauli_summary *out, lam_error *err)
{
    long declared = -1;
    memset(out, 0, sizeof *out);
    int rc = lam_reader_meta_long(r, "qubits", -1, 0, LAM_PAULI_MAX_QUBITS, &declared, err);
    if (rc) return rc;
    ordered_pass op = {r, declared, declared > 0 ? lam_pauli_words((int)declared) : 1, NULL,
                       0, 0, 0};
    op.xz = lam_calloc(2 * (size_t)op.nw, sizeof(uint64_t));
    key_table kt[2];
    memset(kt, 0, sizeof kt);
    for (int h = 0; h < 2; ++h) {
        key_table_reserve(&kt[h], 1);
        key_table_room(&kt[h], 0, 1);
    }
    uint8_t *key = NULL;
    size_t key_cap = 0, lines = 0;
    table_plan plan = {0, 0};
    char *text;
    long line;
    while ((rc = lam_reader_next_text(r, &text, &line, err)) == 1) {
        int32_t group;
        double coef;
        rc = read_term(r, text, line, declared, &op.nw, &op.xz, &group, &coef, err);
        if (rc) break;
        int top = top_qubit(op.nw, op.xz, op.xz + op.nw);
        if (top > op.top) op.top = top;
        size_t most = 4 * (size_t)lam_pauli_weight(op.nw, op.xz, op.xz + op.nw) + 16;
        if (most > key_cap) {
            key_cap = most;
            key = lam_realloc(key, key_cap);
        }
        size_t len = encode_key(key, op.nw, op.xz, op.xz + op.nw, group);
        uint64_t hv = key_hash(key, len);
        rc = key_table_add(&kt[key_half(hv)], key, len, hv, coef, lines, err);
        if (rc) break;
        if (++lines == SIZE_AFTER) plan = plan_tables(r, kt, lines);
        if (lines != SEQUENTIAL_LINES) continue;
        if (lam_reader_syntax(r) == 2 && lam_reader_raw_ready(r)) {
            op.lineno = lam_reader_lineno(r);
            rc = run_both_cores(r, kt, plan, &op, err);
            if (rc >= 0) break;
            rc = 0; /* no second thread: go on alone */
        }
        for (int h = 0; h < 2; ++h) size_table(&kt[h], plan);
    }
    if (!rc) {
        summarize_tables(kt, out);
        out->nqubits = declared >= 0 ? (int)declared : op.top;
    }
    for (int h = 0; h < 2; ++h) key_table_free(&kt[h]);
    free(key);
    free(op.xz);
    return rc;
}
