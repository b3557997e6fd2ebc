/* fuzz-common.h - shared by the libFuzzer targets: the readers take file
 * names, so each input is written to a private temporary file first.  The
 * readers hand rejected input back as a lam_error; fuzz_check_error
 * insists that it is one of their codes. */
#ifndef LAM_FUZZ_COMMON_H
#define LAM_FUZZ_COMMON_H

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

#include "util.h"

static const char *fuzz_input_file(const uint8_t *data, size_t size)
{
    static char path[64];
    if (!path[0]) snprintf(path, sizeof path, "/tmp/lam-fuzz-%ld", (long)getpid());
    FILE *f = fopen(path, "wb");
    if (!f) abort();
    if (size && fwrite(data, 1, size, f) != size) abort();
    fclose(f);
    return path;
}

/* A reader's result: 0, or bad data / cannot open / read error with err
 * filled accordingly; anything else is a bug. */
static void fuzz_check_error(int rc, const lam_error *err)
{
    if (rc == 0) return;
    if ((rc != LAM_EX_DATA && rc != LAM_EX_NOINPUT && rc != LAM_EX_IOERR) || err->code != rc ||
        !err->msg[0])
        abort();
}

#endif
