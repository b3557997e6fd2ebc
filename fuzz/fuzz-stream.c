/* libFuzzer target: the operator stream reader and the term parsers of
 * every kind it feeds (spinfree tensors, Pauli strings, fermion terms), in
 * both spellings (version 2, and version 1 still read), and the writers'
 * canonical spellings of what was read.  Rejected input comes back as an
 * error; what was read is freed either way. */
#include <stdlib.h>

#include "fermion.h"
#include "fuzz-common.h"
#include "norm.h"
#include "pauli.h"
#include "spinfree.h"
#include "stream.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static int read_terms(lam_reader *r, lam_error *err)
{
    lam_line ln;
    int rc;
    while ((rc = lam_reader_next(r, &ln, err)) == 1) {
    }
    return rc;
}

/* The Pauli reader, then the strings' canonical spellings. */
static int read_pauli(lam_reader *r, lam_error *err)
{
    lam_pauli_set s;
    int rc = lam_pauli_read(r, &s, err);
    if (rc) {
        if (s.bits || s.coef || s.group || s.count) abort(); /* an error leaves nothing behind */
        return rc;
    }
    lam_pauli_set_merge(&s, 1);
    (void)lam_pauli_set_lambda_grouped(&s, NULL);
    size_t size = (size_t)s.nqubits * 10 + 48;
    char *buf = malloc(size);
    for (size_t t = 0; buf && t < s.count; ++t)
        if (lam_pauli_format(buf, size, s.nwords, lam_pauli_x(&s, t), lam_pauli_z(&s, t)) < 0)
            abort(); /* the writer's buffer rule must always hold */
    free(buf);
    lam_pauli_set_free(&s);
    return 0;
}

/* The merging summary (lam-norm's path, its own fast parser) must give
 * the verdict of the full reader: the same code at the same line. */
static void check_summary(const char *path, int rc, const lam_error *err)
{
    lam_error e;
    lam_reader *r;
    lam_kind kind;
    if (lam_reader_open(path, &r, &e) || lam_reader_kind(r, &kind, &e)) abort();
    lam_pauli_summary sum;
    int again = lam_pauli_summarize_merged(r, &sum, &e);
    lam_reader_close(r);
    if (again != rc || (rc && e.line != err->line)) abort();
}

static int read_body(lam_reader *r, lam_kind kind, lam_error *err)
{
    if (kind == LAM_KIND_PAULI) return read_pauli(r, err);
    if (kind == LAM_KIND_FERMION) {
        lam_fermion_op op;
        int rc = lam_fermion_read(r, &op, err);
        if (rc == 0) lam_fermion_free(&op);
        else if (op.coef || op.count) abort(); /* an error leaves nothing behind */
        return rc;
    }
    long orbitals = -1;
    int rc = kind == LAM_KIND_SPINFREE
                 ? lam_reader_meta_long(r, "orbitals", -1, -1, 12, &orbitals, err)
                 : 0;
    if (rc == 0 && orbitals >= 0) {
        /* only with a small "orbitals:" header: the dense tensor of a
         * header-less stream is sized by its largest index */
        lam_spinfree *sf = (lam_spinfree *)1;
        rc = lam_spinfree_read(r, &sf, err);
        if (rc == 0) (void)lam_spinfree_lambda(sf);
        else if (sf) abort();
        lam_spinfree_free(sf);
        return rc;
    }
    return rc ? rc : read_terms(r, err);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_input_file(data, size);
    lam_error err;
    lam_reader *r;
    lam_kind kind = LAM_KIND_UNKNOWN;
    int rc = lam_reader_open(path, &r, &err);
    if (rc == 0) {
        rc = lam_reader_kind(r, &kind, &err);
        if (rc == 0) rc = read_body(r, kind, &err);
        lam_reader_close(r);
        if (kind == LAM_KIND_PAULI) check_summary(path, rc, &err);
    }
    fuzz_check_error(rc, &err);
    return 0;
}
