/* pauli.h - Pauli strings in the symplectic bit representation.
 *
 * A string on nq qubits is two bit vectors x and z of nw = (nq+63)/64
 * words each: qubit j carries X when x_j=1,z_j=0, Z when x_j=0,z_j=1 and
 * Y when both are set (Y = i X Z).  Two strings anticommute exactly when
 * popcount((x1 & z2) ^ (z1 & x2)) is odd.
 */
#ifndef LAM_PAULI_H
#define LAM_PAULI_H

#include <stddef.h>
#include <stdint.h>
#include "stream.h"

static inline int lam_pauli_words(int nqubits) { return (nqubits + 63) / 64; }

/* 1 when the strings anticommute, 0 when they commute. */
int lam_pauli_anticommute(int nw, const uint64_t *x1, const uint64_t *z1,
                          const uint64_t *x2, const uint64_t *z2);
/* (x1,z1)(x2,z2) = i^k (xo,zo); returns k in 0..3.  Output may alias an
 * input. */
int lam_pauli_mul(int nw, const uint64_t *x1, const uint64_t *z1,
                  const uint64_t *x2, const uint64_t *z2, uint64_t *xo,
                  uint64_t *zo);
/* 1 when the string is the identity. */
int lam_pauli_is_identity(int nw, const uint64_t *x, const uint64_t *z);
/* Number of qubits acted on non-trivially. */
int lam_pauli_weight(int nw, const uint64_t *x, const uint64_t *z);
/* The canonical version-2 spelling "x:0,3 y:5 z:1-2" (empty for the
 * identity) into buf: one field per letter in the order x, y, z, sorted
 * indices, every maximal run of two or more consecutive qubits as a-b.
 * Returns the length, or -1 if it does not fit. */
int lam_pauli_format(char *buf, size_t size, int nw, const uint64_t *x,
                     const uint64_t *z);

/* A set of weighted strings, stored contiguously: term t has words
 * bits[t*2*nw .. +nw) for x and [+nw .. +2nw) for z. */
typedef struct {
    int nqubits, nwords;
    size_t count, cap;
    uint64_t *bits;
    double *coef;
    int32_t *group; /* NULL when unlabelled; else -1 for "no label" */
} lam_pauli_set;

/* Empty set; nwords is at least 1 even for 0 qubits. */
void lam_pauli_set_init(lam_pauli_set *s, int nqubits);
void lam_pauli_set_free(lam_pauli_set *s);
static inline uint64_t *lam_pauli_x(const lam_pauli_set *s, size_t t)
{
    return s->bits + t * 2 * (size_t)s->nwords;
}
static inline uint64_t *lam_pauli_z(const lam_pauli_set *s, size_t t)
{
    return s->bits + t * 2 * (size_t)s->nwords + s->nwords;
}
/* Append a term (group -1 for none; the group array is created on the
 * first labelled term). */
void lam_pauli_set_add(lam_pauli_set *s, const uint64_t *x, const uint64_t *z,
                       double coef, int32_t group);
/* Room for count terms without reallocation. */
void lam_pauli_set_reserve(lam_pauli_set *s, size_t count);
/* Raise the qubit count (widening every stored string when the word count
 * grows); never lowers it. */
void lam_pauli_set_grow_qubits(lam_pauli_set *s, int nqubits);
/* Sum of the identity terms, as stored (the one-norms are in norm.h). */
double lam_pauli_set_constant(const lam_pauli_set *s);
/* Largest weight of any term. */
int lam_pauli_set_max_weight(const lam_pauli_set *s);
/* Merge repeated (string, group) pairs by hashing, in order of first
 * appearance; drop exact zeros when drop_zeros. */
void lam_pauli_set_merge(lam_pauli_set *s, int drop_zeros);

/* An index of distinct rows for hash merging.  The rows live elsewhere,
 * contiguous, `width` 64-bit words each, with an optional int32 tag per
 * row that takes part in equality; the index holds row numbers only (open
 * addressing, at most half full).  Pass the current base pointer on every
 * call (it may have moved by realloc). */
typedef struct {
    uint64_t *slot;
    size_t size, used;
} lam_rowhash;
/* A zeroed lam_rowhash is an empty index; freeing it makes it one again. */
void lam_rowhash_free(lam_rowhash *h);
/* Room for count rows without growing (rows as for insert). */
void lam_rowhash_reserve(lam_rowhash *h, const uint64_t *rows, size_t width,
                         const int32_t *tags, size_t count);
/* Hint that this row will be looked up soon (no effect on the contents). */
void lam_rowhash_prefetch(const lam_rowhash *h, const uint64_t *row, size_t width,
                          int32_t tag);
/* Row `cand` is already stored at rows + cand*width.  Returns the number
 * of an equal row already indexed, or cand after indexing it. */
size_t lam_rowhash_insert(lam_rowhash *h, const uint64_t *rows, size_t width,
                          const int32_t *tags, size_t cand);

/* Read the terms of a pauli stream ("qubits:" from the header, else the
 * largest index + 1) into s (initialized here); 0, or the code (65 with
 * file:line on a malformed term, ...) in err with s freed. */
int lam_pauli_read(lam_reader *r, lam_pauli_set *s, lam_error *err);
/* The same, and *lines (malloc'd, s->count entries; NULL when the stream
 * has no terms) gets the input line of each term, in order.  lines may be
 * NULL. */
int lam_pauli_read_lines(lam_reader *r, lam_pauli_set *s, long **lines, lam_error *err);
/* lam_pauli_read then lam_pauli_set_merge(s, drop), the same result, but
 * merging as it reads: repeated strings never take room. */
int lam_pauli_read_merged(lam_reader *r, lam_pauli_set *s, int drop, lam_error *err);
/* Parse one term's fields into x,z (zeroed first) and the optional
 * trailing "@g" label (-1 when absent): version 2 ("x:0,3 z:1-2", letters
 * in any order, each at most once, indices and ranges a-b with a <= b in
 * any order) or, by the first field, version 1 ("X0 Z1").  nqubits >= 0: an index from
 * nqubits on is "out of range"; nqubits < 0: any index that fits the nw
 * words.  A repeated qubit, an unknown letter or a bad label: 65 in err. */
int lam_pauli_parse_fields(lam_reader *r, const lam_line *ln, int nqubits, int nw,
                           uint64_t *x, uint64_t *z, int32_t *group, lam_error *err);
/* What lam-norm reports of a pauli stream, gathered in one pass without
 * storing the terms: valid as the operator's one-norm only when no string
 * appears twice (the writer's "distinct: yes").  Exact zeros are not
 * counted. */
typedef struct {
    size_t terms;       /* non-zero term lines, identity included */
    double constant;    /* identity coefficient */
    double lambda;      /* sum |c| over non-identity lines */
    double lambda_grouped; /* sum over labels of sqrt(sum c^2) + unlabelled |c| */
    size_t groups;      /* distinct labels */
    int labelled;       /* any line had a label */
    int nqubits;        /* "qubits:" or the highest index + 1 */
    int max_weight;
} lam_pauli_summary;
int lam_pauli_summarize(lam_reader *r, lam_pauli_summary *out, lam_error *err);
/* The same for any pauli stream: repeated (string, label) pairs are merged
 * (summed) first, as compact keys in one hash table, without storing the
 * strings' bits; terms counts the merged ones that are not zero. */
int lam_pauli_summarize_merged(lam_reader *r, lam_pauli_summary *out, lam_error *err);

/* Write every term (with "@g" when labelled); not the header.  0, or 70
 * should a string outgrow the buffer sized for it (a bug). */
int lam_pauli_write_terms(lam_writer *w, const lam_pauli_set *s, lam_error *err);

#endif
