/* libFuzzer target: the operator stream reader and the term parsers of
 * every kind it feeds (spinfree tensors, Pauli strings). */
#include "fuzz-common.h"
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
        lam_pauli_set_free(&s);
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
