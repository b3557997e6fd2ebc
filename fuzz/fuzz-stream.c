/* libFuzzer target: the operator stream reader and the term parsers of
 * every kind it feeds (spinfree tensors, Pauli strings, fermion terms), in
 * both spellings (version 2, and version 1 still read), and the writers'
 * canonical spellings of what was read. */
#include <stdlib.h>

#include "fermion.h"
#include "fuzz-common.h"
#include "norm.h"
#include "pauli.h"
#include "spinfree.h"
#include "stream.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static void read_terms(lam_reader *r)
{
    lam_line ln;
    while (lam_reader_next(r, &ln)) {
    }
}

static void read_stream(const char *path)
{
    lam_reader *r = lam_reader_open(path);
    lam_kind kind = lam_reader_kind(r);
    if (kind == LAM_KIND_PAULI) {
        lam_pauli_set s;
        lam_pauli_set_init(&s, 1);
        lam_pauli_read(r, &s);
        lam_pauli_set_merge(&s, 1);
        (void)lam_pauli_set_lambda_grouped(&s, NULL);
        size_t size = (size_t)s.nqubits * 10 + 48;
        char *buf = malloc(size);
        for (size_t t = 0; buf && t < s.count; ++t)
            if (lam_pauli_format(buf, size, s.nwords, lam_pauli_x(&s, t), lam_pauli_z(&s, t)) < 0)
                abort(); /* the writer's buffer rule must always hold */
        free(buf);
        lam_pauli_set_free(&s);
    } else if (kind == LAM_KIND_FERMION) {
        lam_fermion_op op;
        lam_fermion_read(r, &op);
        lam_fermion_free(&op);
    } else if (kind == LAM_KIND_SPINFREE && lam_reader_meta_long(r, "orbitals", -1, -1, 12) >= 0) {
        /* only with a small "orbitals:" header: the dense tensor of a
         * header-less stream is sized by its largest index */
        lam_spinfree *sf = lam_spinfree_read(r);
        (void)lam_spinfree_lambda(sf);
        lam_spinfree_free(sf);
    } else {
        read_terms(r);
    }
    lam_reader_close(r);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    fuzz_run(data, size, read_stream);
    return 0;
}
