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
    if (rc == 0 && !fd) abort();
    if (rc != 0 && (fd || (rc != LAM_EX_DATA && rc != LAM_EX_NOINPUT && rc != LAM_EX_IOERR) ||
                    err.code != rc))
        abort(); /* an error is one of the reader's codes, with nothing handed out */
    lam_fcidump_free(fd);
    return 0;
}
