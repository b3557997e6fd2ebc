/* libFuzzer target: the operator stream reader and the term parsers of
 * every kind it feeds (spinfree tensors, Pauli strings). */
#include "fuzz-common.h"
#include "pauli.h"
#include "spinfree.h"
#include "stream.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_input_file(data, size);
    jmp_buf jb;
    lam_fail_jump(&jb);
    if (setjmp(jb) == 0) {
        lam_reader *r = lam_reader_open(path);
        lam_kind kind = lam_reader_kind(r);
        if (kind == LAM_KIND_PAULI) {
            lam_pauli_set s;
            lam_pauli_set_init(&s, 1);
            lam_pauli_read(r, &s);
            lam_pauli_set_merge(&s, 1);
            lam_pauli_set_free(&s);
        } else if (kind == LAM_KIND_SPINFREE) {
            /* only with a small "orbitals:" header: the dense tensor of a
             * header-less stream is sized by its largest index */
            if (lam_reader_meta_long(r, "orbitals", -1, -1, 12) >= 0) {
                lam_spinfree *sf = lam_spinfree_read(r);
                (void)lam_spinfree_lambda(sf);
                lam_spinfree_free(sf);
            } else {
                lam_line ln;
                while (lam_reader_next(r, &ln)) {
                }
            }
        } else {
            lam_line ln;
            while (lam_reader_next(r, &ln)) {
            }
        }
        lam_reader_close(r);
    }
    lam_fail_jump(NULL);
    return 0;
}
