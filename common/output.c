/* output.c - output files that appear whole or not at all (see output.h). */
#include "output.h"

#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

/* The temporary files not yet renamed into place: removed when the program
 * gives up, returns from main or is stopped by a signal, so that neither a
 * failed nor an interrupted run leaves one (of a large stream, gigabytes)
 * behind.  A program has a few outputs open at a time. */
#define MAX_LIVE 16
static const char *volatile live[MAX_LIVE];

static void remove_live(void)
{
    for (int i = 0; i < MAX_LIVE; ++i)
        if (live[i]) unlink(live[i]);
}

/* unlink and raise are async-signal-safe; the signal is raised again with
 * its default action (SA_RESETHAND) so that the program ends as it would
 * have. */
static void remove_live_and_stop(int sig)
{
    remove_live();
    raise(sig);
}

static void clean_up_when_stopped(void)
{
    static int done;
    if (done) return;
    done = 1;
    lam_at_failure(remove_live);
    atexit(remove_live);
    static const int signals[] = {SIGINT, SIGTERM, SIGHUP, SIGQUIT};
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = remove_live_and_stop;
    sa.sa_flags = SA_RESETHAND;
    sigemptyset(&sa.sa_mask);
    for (size_t i = 0; i < sizeof signals / sizeof *signals; ++i) {
        struct sigaction old;
        /* a signal ignored (nohup, a background job) stays ignored */
        if (sigaction(signals[i], NULL, &old) == 0 && old.sa_handler != SIG_IGN)
            sigaction(signals[i], &sa, NULL);
    }
}

static int hold(const char *tmp)
{
    clean_up_when_stopped();
    for (int i = 0; i < MAX_LIVE; ++i)
        if (!live[i]) {
            live[i] = tmp;
            return 0;
        }
    return -1;
}

static void release(const char *tmp)
{
    for (int i = 0; i < MAX_LIVE; ++i)
        if (live[i] == tmp) live[i] = NULL;
}

/* Remove the temporary file *tmp (if any) and forget it. */
static void drop_temp(char **tmp)
{
    if (!*tmp) return;
    unlink(*tmp);
    release(*tmp);
    free(*tmp);
    *tmp = NULL;
}

static int names_stdout(const char *path)
{
    return !path || strcmp(path, "-") == 0;
}

/* DIR/.BASE.XXXXXX beside DIR/BASE, for mkstemp. */
static char *temp_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    int dirlen = slash ? (int)(slash - path + 1) : 0;
    size_t n = strlen(path) + sizeof "..XXXXXX";
    char *name = lam_malloc(n);
    snprintf(name, n, "%.*s.%s.XXXXXX", dirlen, path, path + dirlen);
    return name;
}

static mode_t new_file_mode(void)
{
    mode_t mask = umask(0);
    umask(mask);
    return 0666 & ~mask;
}

/* A temporary file beside path with the mode (and, where allowed, the
 * owner) the file at path has or would get: its descriptor, or -1 when
 * none can be made there. */
static int open_beside(const char *path, const struct stat *old, char **tmp)
{
    *tmp = temp_name(path);
    int fd = mkstemp(*tmp);
    if (fd < 0) {
        free(*tmp);
        *tmp = NULL;
        return -1;
    }
    if (hold(*tmp) != 0 || fchmod(fd, old ? old->st_mode & 07777 : new_file_mode()) != 0 ||
        (old && fchown(fd, old->st_uid, old->st_gid) != 0 && errno != EPERM)) {
        close(fd);
        drop_temp(tmp);
        return -1;
    }
    return fd;
}

/* Whether path is written beside and renamed: a plain file that may be
 * written (st from lstat), or a name that is free (lstat said ENOENT; not
 * "" or one ending in '/': those name no file, and open says so). */
static int written_beside(const char *path, int exists, int lstat_errno, const struct stat *st)
{
    size_t len = strlen(path);
    if (!exists) return lstat_errno == ENOENT && len > 0 && path[len - 1] != '/';
    return S_ISREG(st->st_mode) && access(path, W_OK) == 0;
}

static int open_path(const char *path, lam_output *o, lam_error *err)
{
    struct stat st;
    int exists = lstat(path, &st) == 0, lstat_errno = errno;
    int fd = -1;
    if (written_beside(path, exists, lstat_errno, &st))
        fd = open_beside(path, exists ? &st : NULL, &o->tmp);
    if (fd < 0) fd = open(path, O_WRONLY | O_CREAT | O_TRUNC, 0666);
    if (fd < 0 || !(o->fp = fdopen(fd, "w"))) {
        int errnum = errno;
        if (fd >= 0) close(fd);
        drop_temp(&o->tmp);
        return lam_error_set(err, LAM_EX_IOERR, "cannot open %s for writing: %s", path,
                             strerror(errnum));
    }
    o->path = lam_strdup(path);
    return 0;
}

int lam_output_open(const char *path, lam_output *o, lam_error *err)
{
    memset(o, 0, sizeof *o);
    if (names_stdout(path)) {
        o->fp = stdout;
        return 0;
    }
    return open_path(path, o, err);
}

int lam_output_open_file(const char *path, lam_output *o, lam_error *err)
{
    memset(o, 0, sizeof *o);
    return open_path(path, o, err);
}

static void forget(lam_output *o)
{
    release(o->tmp);
    free(o->path);
    free(o->tmp);
    memset(o, 0, sizeof *o);
}

int lam_output_close(lam_output *o, int written_ok, lam_error *err)
{
    if (!o->fp) return 0;
    errno = 0;
    int errnum = 0;
    /* standard output is not flushed after a failure: what is still in its
     * buffer stays out of the pipe */
    int flush = written_ok || o->fp != stdout;
    if (flush && (fflush(o->fp) != 0 || ferror(o->fp))) errnum = errno ? errno : EIO;
    if (o->fp != stdout && fclose(o->fp) != 0 && !errnum) errnum = errno ? errno : EIO;
    if (o->tmp && written_ok && !errnum && rename(o->tmp, o->path) != 0) errnum = errno;
    if (!written_ok || errnum) drop_temp(&o->tmp);
    int rc = errnum ? lam_error_set(err, LAM_EX_IOERR, "cannot write %s: %s",
                                    o->path ? o->path : "<stdout>", strerror(errnum))
                    : 0;
    forget(o);
    return rc;
}

void lam_output_discard(lam_output *o)
{
    if (!o->fp) return;
    if (o->fp != stdout) fclose(o->fp);
    drop_temp(&o->tmp);
    forget(o);
}
