/* libFuzzer target: the FCIDUMP reader. */
#include "fcidump.h"
#include "fuzz-common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_input_file(data, size);
    jmp_buf jb;
    lam_fail_jump(&jb);
    if (setjmp(jb) == 0) {
        lam_fcidump *fd = lam_fcidump_read(path);
        lam_fcidump_free(fd);
    }
    lam_fail_jump(NULL);
    return 0;
}
