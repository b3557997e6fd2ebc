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
    free(s->bits);
    free(s->coef);
    free(s->group);
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

void lam_rowhash_init(lam_rowhash *h) { memset(h, 0, sizeof *h); }

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
    if (cand >= SLOT_INDEX_MASK) lam_fail(LAM_EX_SOFTWARE, "hash index: too many rows");
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
    lam_rowhash h;
    lam_rowhash_init(&h);
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

/* Highest qubit index named in the set + 1. */
static int highest_qubit(const lam_pauli_set *s)
{
    int top = 0;
    for (size_t t = 0; t < s->count; ++t) {
        const uint64_t *x = lam_pauli_x(s, t), *z = lam_pauli_z(s, t);
        for (int w = s->nwords - 1; w >= 0; --w) {
            uint64_t any = x[w] | z[w];
            if (any) {
                int q = w * 64 + 63 - __builtin_clzll(any) + 1;
                if (q > top) top = q;
                break;
            }
        }
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
    lam_rowhash h;
    lam_rowhash_init(&h);
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
                lam_rowhash_init(&h);
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
        for (int k = nw - 1; k >= 0; --k)
            if (xz[k] | xz[nw + k]) {
                int top = k * 64 + 64 - __builtin_clzll(xz[k] | xz[nw + k]);
                if (top > out->nqubits) out->nqubits = top;
                break;
            }
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
 * unaligned), the key's length as a varint, the key.  The open-addressing
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
                         lam_error *err)
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
    /* coefficient, varint, key, and 8 spare bytes for key_weight */
    size_t most = sizeof(double) + 10 + len + 8;
    if (kt->arena_len + most >= SLOT_INDEX_MASK)
        return lam_error_set(err, LAM_EX_SOFTWARE, "hash index: too many rows");
    key_table_room(kt, kt->arena_len, most);
    uint8_t *entry = kt->arena + kt->arena_len;
    memcpy(entry, &c, sizeof c);
    size_t head = sizeof c + put_varint(entry + sizeof c, len);
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
 * label, without splitting the text: 0 when they parsed, -1 for anything
 * else (another spelling, an error, a qubit beyond the words), which the
 * caller hands to the full parser for its message or its growth. */
static int parse_fields_v2(const char *p, long limit, int nw, uint64_t *x, uint64_t *z,
                           int32_t *group)
{
    clear_words(nw, x, z);
    *group = -1;
    unsigned seen = 0;
    for (;;) {
        while (*p == ' ' || *p == '\t') ++p;
        if (!*p) return 0;
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

/* Merging runs as a pipeline of two threads once the input is large: the
 * reading thread splits lines into encoded keys and the text of their
 * coefficients (checked to be certain to convert), a chunk at a time, and
 * a merging thread converts the coefficients, hashes the keys and adds
 * whole chunks to the table (its look-ups are cache misses).  The chunks
 * are added in the order of the input by the one merging thread, so every
 * sum is formed in the order of the lines, whatever the timing: the
 * result is the same as with one thread, bit for bit. */
typedef struct {
    size_t at;          /* coefficient text (coef_len bytes and a 0), then the key */
    uint32_t coef_len;  /* 0: the coefficient is already in coef */
    uint32_t len;       /* key bytes */
    double coef;
} pending_key;

enum { CHUNK_KEYS = 1 << 14 };

typedef struct {
    pending_key *keys;
    size_t n;
    uint8_t *bytes;
    size_t len, cap;
    size_t key_bytes;
    size_t expect; /* distinct keys expected in all, 0 when unknown */
    double per_entry; /* arena bytes per key so far */
} key_chunk;

/* The merging thread never ends the process: a failure stops it, is kept
 * in err (failed set) and handed to the reading thread at its next hand
 * over or at the end.  Every bad line is found by the reading thread, in
 * the order of the input, so the first one is the one reported. */
typedef struct {
    pthread_mutex_t mu;
    pthread_cond_t cv;
    key_chunk chunk[2];
    int full[2]; /* handed over, not yet added */
    int done;    /* no chunk will follow */
    int stop;    /* the reading thread gave up: add nothing more */
    int failed;  /* the merging thread stopped on err */
    lam_error err;
    key_table *kt;
} merge_pipe;

/* The coefficient of a pending key into *c. */
static inline int pending_coef(const key_chunk *ch, const pending_key *pk, double *c,
                               lam_error *err)
{
    *c = pk->coef;
    if (pk->coef_len &&
        lam_reader_coefficient((const char *)ch->bytes + pk->at, c) != 0)
        return lam_error_set(err, LAM_EX_SOFTWARE,
                             "internal: a coefficient checked as plain did not convert");
    return 0;
}

/* Size the table for the expected keys, then add the chunk's keys a batch
 * at a time, their slots prefetched first so that the misses overlap. */
static int add_chunk(key_table *kt, const key_chunk *ch, lam_error *err)
{
    enum { BATCH = 32 };
    if (ch->expect) {
        key_table_reserve(kt, ch->expect);
        key_table_room(kt, kt->arena_len, (size_t)((double)ch->expect * ch->per_entry) + 4096);
    }
    for (size_t b = 0; b < ch->n; b += BATCH) {
        size_t e = b + BATCH < ch->n ? b + BATCH : ch->n;
        uint64_t hash[BATCH];
        double coef[BATCH];
        for (size_t i = b; i < e; ++i) {
            const pending_key *pk = &ch->keys[i];
            hash[i - b] = key_hash(ch->bytes + pk->at + pk->coef_len + 1, pk->len);
            key_table_prefetch(kt, hash[i - b]);
        }
        for (size_t i = b; i < e; ++i) {
            int rc = pending_coef(ch, &ch->keys[i], &coef[i - b], err);
            if (rc) return rc;
        }
        for (size_t i = b; i < e; ++i) {
            const pending_key *pk = &ch->keys[i];
            int rc = key_table_add(kt, ch->bytes + pk->at + pk->coef_len + 1, pk->len,
                                   hash[i - b], coef[i - b], err);
            if (rc) return rc;
        }
    }
    return 0;
}

static void *merge_thread(void *arg)
{
    merge_pipe *mp = arg;
    for (int k = 0;; k ^= 1) {
        pthread_mutex_lock(&mp->mu);
        while (!mp->full[k] && !mp->done) pthread_cond_wait(&mp->cv, &mp->mu);
        int have = mp->full[k] && !mp->stop;
        pthread_mutex_unlock(&mp->mu);
        if (!have) return NULL;
        int failed = add_chunk(mp->kt, &mp->chunk[k], &mp->err) != 0;
        pthread_mutex_lock(&mp->mu);
        mp->full[k] = 0;
        mp->failed = failed;
        pthread_cond_broadcast(&mp->cv);
        pthread_mutex_unlock(&mp->mu);
        if (failed) return NULL;
    }
}

/* Hand chunk k to the merging thread and wait until chunk k^1 is free;
 * *behind is 1 when it was not (the merging thread is the slower).
 * Returns the merging thread's code once it has failed, else 0. */
static int pipe_hand_over(merge_pipe *mp, int k, int *behind)
{
    pthread_mutex_lock(&mp->mu);
    mp->full[k] = 1;
    pthread_cond_broadcast(&mp->cv);
    *behind = mp->full[k ^ 1];
    while (mp->full[k ^ 1] && !mp->failed) pthread_cond_wait(&mp->cv, &mp->mu);
    int rc = mp->failed ? mp->err.code : 0;
    pthread_mutex_unlock(&mp->mu);
    return rc;
}

/* Let the merging thread finish (or, with stop, drop what it has not
 * started) and join it; the merging thread's code, 0 when it did not
 * fail. */
static int pipe_finish(merge_pipe *mp, pthread_t th, int stop)
{
    pthread_mutex_lock(&mp->mu);
    mp->done = 1;
    mp->stop = stop;
    pthread_cond_broadcast(&mp->cv);
    pthread_mutex_unlock(&mp->mu);
    pthread_join(th, NULL);
    return mp->failed ? mp->err.code : 0;
}

/* Expected distinct keys, from the bytes a line took so far and the bytes
 * left in the file (plain files only); 0 when unknown. */
static size_t expected_keys(lam_reader *r, size_t lines)
{
    long long left = lam_reader_bytes_left(r), done = lam_reader_bytes_read(r);
    if (left < 0 || done <= 0 || lines == 0) return 0;
    double expect = 1.05 * ((double)lines + (double)left * (double)lines / (double)done);
    return expect < 1e10 ? (size_t)expect : 0;
}

/* Sum the merged table in the order of first appearance. */
static void summarize_table(const key_table *kt, lam_pauli_summary *out)
{
    lam_grouped_norm norms = {0};
    for (size_t at = 0; at < kt->arena_len;) {
        double c = entry_coef(kt->arena + at);
        size_t len;
        const uint8_t *key = entry_key(kt->arena + at, &len);
        at = (size_t)(key - kt->arena) + len;
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

/* Room for `room` more bytes in the chunk. */
static void chunk_room(key_chunk *ch, size_t room)
{
    if (ch->len + room <= ch->cap) return;
    size_t cap = ch->cap ? ch->cap : (size_t)1 << 16;
    while (cap < ch->len + room) cap = lam_mul_size(cap, 2);
    ch->bytes = lam_realloc(ch->bytes, cap);
    ch->cap = cap;
}

/* One term line into x, z (nw words, grown through *xz when an unbounded
 * stream needs more) and its label; unless `convert`, the coefficient's
 * text is copied to the chunk when it is plain (*coef_len > 0); else it is
 * converted into *coef.  A malformed term gets its message from the full
 * parser, and its code is returned. */
static int read_term(lam_reader *r, char *text, long line, long declared, int *nw,
                     uint64_t **xz, int32_t *group, key_chunk *ch, int convert,
                     size_t *coef_len, double *coef, lam_error *err)
{
    char *p = text;
    while (*p == ' ' || *p == '\t') ++p;
    size_t n = convert ? 0 : plain_coefficient(p);
    *coef_len = n;
    int fast = n > 0;
    if (fast) {
        chunk_room(ch, n + 1);
        memcpy(ch->bytes + ch->len, p, n);
        ch->bytes[ch->len + n] = '\0';
        p += n;
    } else { /* converted here, where a failure is reported in order */
        char *tok = p;
        p += strcspn(p, " \t");
        char save = *p;
        *p = '\0';
        fast = lam_reader_coefficient(tok, coef) == 0;
        *p = save;
    }
    long limit = declared >= 0 ? declared : 64L * *nw;
    /* the fast path once the stream is known to be version 2 */
    if (fast && lam_reader_syntax(r) == 2 &&
        parse_fields_v2(p, limit, *nw, *xz, *xz + *nw, group) == 0)
        return 0;
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
    *coef_len = 0;
    *coef = ln.coef;
    return 0;
}

int lam_pauli_summarize_merged(lam_reader *r, lam_pauli_summary *out, lam_error *err)
{
    enum { SIZE_AFTER = 4096 };
    long declared = -1;
    memset(out, 0, sizeof *out);
    int rc = lam_reader_meta_long(r, "qubits", -1, 0, LAM_PAULI_MAX_QUBITS, &declared, err);
    if (rc) return rc;
    int nw = declared > 0 ? lam_pauli_words((int)declared) : 1;
    uint64_t *xz = lam_calloc(2 * (size_t)nw, sizeof(uint64_t));
    key_table kt = {0};
    key_table_reserve(&kt, 1);
    key_table_room(&kt, 0, 1);
    merge_pipe mp;
    memset(&mp, 0, sizeof mp);
    mp.kt = &kt;
    for (int k = 0; k < 2; ++k) mp.chunk[k].keys = lam_malloc(CHUNK_KEYS * sizeof(pending_key));
    pthread_t th;
    int threaded = 0, cur = 0, convert = 0;
    size_t lines = 0;
    char *text;
    long line;
    while ((rc = lam_reader_next_text(r, &text, &line, err)) == 1) {
        int32_t group;
        double coef = 0;
        size_t coef_len;
        key_chunk *ch = &mp.chunk[cur];
        rc = read_term(r, text, line, declared, &nw, &xz, &group, ch, convert, &coef_len, &coef,
                       err);
        if (rc) break;
        /* the highest qubit counts only when the stream declares none */
        for (int k = nw - 1; declared < 0 && k >= 0; --k)
            if (xz[k] | xz[nw + k]) {
                int top = k * 64 + 64 - __builtin_clzll(xz[k] | xz[nw + k]);
                if (top > out->nqubits) out->nqubits = top;
                break;
            }
        /* at most 4 varint bytes a qubit (indices below 2^24), the label;
         * the coefficient's text is already in place */
        size_t most = nw <= 4 ? 256 * (size_t)nw : (size_t)lam_pauli_weight(nw, xz, xz + nw);
        chunk_room(ch, coef_len + 1 + 4 * most + 8);
        pending_key *pk = &ch->keys[ch->n++];
        pk->at = ch->len;
        pk->coef_len = (uint32_t)coef_len;
        pk->coef = coef;
        ch->bytes[ch->len + coef_len] = '\0';
        ch->len += coef_len + 1;
        pk->len = (uint32_t)encode_key(ch->bytes + ch->len, nw, xz, xz + nw, group);
        ch->len += pk->len;
        ch->key_bytes += pk->len;
        if (++lines == SIZE_AFTER) {
            ch->expect = expected_keys(r, lines);
            ch->per_entry = (double)ch->key_bytes / (double)ch->n + sizeof(double) + 1;
        }
        if (ch->n < CHUNK_KEYS) continue;
        if (!threaded) threaded = pthread_create(&th, NULL, merge_thread, &mp) == 0;
        if (threaded) {
            /* the coefficients of the next chunk are converted by the
             * thread that waited less: the balance of the two threads
             * differs from machine to machine (the merging thread's share
             * swings with the kernel's zeroing of the table's pages) */
            rc = pipe_hand_over(&mp, cur, &convert);
            if (rc) *err = mp.err; /* the merging thread stopped: it writes no more */
            cur ^= 1;
        } else {
            rc = add_chunk(&kt, ch, err);
        }
        if (rc) break;
        ch = &mp.chunk[cur];
        ch->n = ch->len = ch->key_bytes = ch->expect = 0;
    }
    /* a line's error (rc, in err) stops the merging thread; else its own
     * failure, if any, is the one reported */
    if (threaded) {
        int merged = pipe_finish(&mp, th, rc != 0);
        if (!rc && merged) {
            *err = mp.err;
            rc = merged;
        }
    }
    if (!rc) rc = add_chunk(&kt, &mp.chunk[cur], err);
    if (!rc) {
        summarize_table(&kt, out);
        if (declared >= 0) out->nqubits = (int)declared;
    }
    key_table_free(&kt);
    for (int k = 0; k < 2; ++k) {
        free(mp.chunk[k].keys);
        free(mp.chunk[k].bytes);
    }
    free(xz);
    return rc;
}
