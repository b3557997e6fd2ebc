/* fuzz-common.h - shared by the libFuzzer targets: the readers take file
 * names, so each input is written to a private temporary file first, and
 * lam_fail is turned into a longjmp so that rejected input returns. */
#ifndef LAM_FUZZ_COMMON_H
#define LAM_FUZZ_COMMON_H

#include <setjmp.h>
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

/* Run body on the input file with lam_fail turned into a return. */
static void fuzz_run(const uint8_t *data, size_t size, void (*body)(const char *path))
{
    const char *path = fuzz_input_file(data, size);
    jmp_buf jb;
    lam_fail_jump(&jb);
    if (setjmp(jb) == 0) body(path);
    lam_fail_jump(NULL);
}

#endif
