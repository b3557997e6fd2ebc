/* libFuzzer target: the FCIDUMP reader. */
#include "fcidump.h"
#include "fuzz-common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static void read_fcidump(const char *path)
{
    lam_fcidump_free(lam_fcidump_read(path));
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    fuzz_run(data, size, read_fcidump);
    return 0;
}
