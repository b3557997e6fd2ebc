/* libFuzzer target: the FCIDUMP reader, which hands rejected input back
 * as an error (nothing may stay allocated: the leak checker runs). */
#include "fcidump.h"
#include "fuzz-common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_input_file(data, size);
    lam_fcidump *fd = NULL;
    lam_error err;
    int rc = lam_fcidump_read(path, &fd, &err);
    if ((rc == 0) != (fd != NULL)) abort(); /* an error hands nothing out */
    fuzz_check_error(rc, &err);
    lam_fcidump_free(fd);
    return 0;
}
