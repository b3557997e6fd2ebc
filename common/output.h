/* output.h - output files that appear whole or not at all.
 *
 * A program opens every output before its first byte is written, so that a
 * bad path fails at once, and a program that fails later must leave no
 * half-written result (DEVELOPERS.md).  An output named by a path that is
 * a plain file, or nothing yet, is therefore written to a temporary file
 * beside it (".NAME.XXXXXX" in the same directory) and renamed onto the
 * path when it is closed whole: a reader sees the old file or the new one,
 * never a part, and a failed run leaves the old file as it was.  The new
 * file gets the old file's permission bits, or 0666 less the umask.
 *
 * A path that is something else (a device such as /dev/full, a pipe, a
 * symbolic link such as /dev/stdout), or a plain file in a directory where
 * no file can be made, is written in place, as fopen(path, "w") would, and
 * never removed.  No path, or "-", is standard output.
 */
#ifndef LAM_OUTPUT_H
#define LAM_OUTPUT_H

#include <stdio.h>

#include "util.h"

typedef struct {
    FILE *fp;   /* what to write to: the temporary file, the path or stdout */
    char *path; /* the path given (NULL: standard output) */
    char *tmp;  /* the temporary file, NULL when written in place */
} lam_output;

/* Open the output at path (NULL or "-": standard output).  On error
 * (LAM_EX_IOERR, "cannot open PATH for writing: REASON") o->fp is NULL and
 * there is nothing to close. */
int lam_output_open(const char *path, lam_output *o, lam_error *err);

/* The same for an output whose path is always a file name, "-" included
 * (an extra output of a program whose stdout carries its main one). */
int lam_output_open_file(const char *path, lam_output *o, lam_error *err);

/* Close o->fp (standard output is flushed, not closed, and not even
 * flushed when written_ok is 0) and, when all was
 * written (written_ok, and no write, flush or close failed), rename the
 * temporary file onto the path; else remove it.  Returns 0, or
 * LAM_EX_IOERR with "cannot write PATH: REASON" (PATH "<stdout>" for
 * standard output).  Closing an output that is not open does nothing. */
int lam_output_close(lam_output *o, int written_ok, lam_error *err);

/* Give the output up: close it and remove the temporary file (standard
 * output is left unflushed, so that nothing half-written reaches it). */
void lam_output_discard(lam_output *o);

#endif
