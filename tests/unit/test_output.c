/* Unit tests of output.c: an output file appears whole or not at all.
 *
 * The checks rest on POSIX facts (common practice, not a value from a
 * source): rename(2) replaces a file in one step, a file's mode and the
 * umask are what stat(2) and umask(2) say, and /dev/full refuses writes
 * with ENOSPC (Linux, null(4)/full(4)). */
#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <signal.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include "output.h"
#include "tap.h"

static char dir[] = "/tmp/lam-test-output-XXXXXX";

static void path_in_dir(char *buf, size_t size, const char *name)
{
    snprintf(buf, size, "%s/%s", dir, name);
}

static void put(const char *path, const char *text)
{
    FILE *f = fopen(path, "w");
    if (!f || fputs(text, f) < 0 || fclose(f) != 0) {
        perror(path);
        exit(99);
    }
}

/* The file's whole content, or "" when it cannot be read. */
static const char *content(const char *path)
{
    static char buf[256];
    buf[0] = '\0';
    FILE *f = fopen(path, "r");
    if (!f) return buf;
    size_t n = fread(buf, 1, sizeof buf - 1, f);
    buf[n] = '\0';
    fclose(f);
    return buf;
}

/* How many entries the test directory holds (no temporary file is left). */
static int entries(void)
{
    char cmd[128];
    snprintf(cmd, sizeof cmd, "ls -A %s | wc -l", dir);
    FILE *p = popen(cmd, "r");
    int n = -1;
    if (!p || fscanf(p, "%d", &n) != 1) n = -1;
    if (p) pclose(p);
    return n;
}

static void test_new_file(void)
{
    char path[256];
    path_in_dir(path, sizeof path, "new.op");
    lam_output o;
    lam_error err;
    int rc = lam_output_open(path, &o, &err);
    tap_ok(rc == 0 && o.fp && o.fp != stdout, "a new file opens");
    tap_ok(access(path, F_OK) != 0, "a new file is not at its path while it is written");
    fputs("whole\n", o.fp);
    rc = lam_output_close(&o, 1, &err);
    tap_ok(rc == 0 && strcmp(content(path), "whole\n") == 0, "closed whole, it is at its path");
    tap_ok(entries() == 1, "no temporary file is left");
    struct stat st;
    mode_t mask = umask(022);
    umask(mask);
    tap_ok(stat(path, &st) == 0 && (st.st_mode & 0777) == (0666 & ~mask),
           "a new file gets 0666 less the umask, as fopen gives");
    tap_ok(o.fp == NULL && o.tmp == NULL && o.path == NULL, "a closed output is empty");
    tap_ok(lam_output_close(&o, 1, &err) == 0, "closing it again does nothing");
    unlink(path);
}

static void test_failed_run_keeps_old_file(void)
{
    char path[256];
    path_in_dir(path, sizeof path, "old.op");
    put(path, "old\n");
    chmod(path, 0640);
    lam_output o;
    lam_error err;
    tap_ok(lam_output_open(path, &o, &err) == 0, "an existing file opens");
    fputs("half", o.fp);
    lam_output_discard(&o);
    tap_ok(strcmp(content(path), "old\n") == 0, "discarded: the old file is as it was");
    tap_ok(entries() == 1, "discarded: no temporary file is left");

    tap_ok(lam_output_open(path, &o, &err) == 0, "it opens again");
    fputs("half", o.fp);
    int rc = lam_output_close(&o, 0, &err);
    tap_ok(rc == 0 && strcmp(content(path), "old\n") == 0,
           "closed as not written whole: the old file is as it was");

    tap_ok(lam_output_open(path, &o, &err) == 0, "and once more");
    fputs("new\n", o.fp);
    rc = lam_output_close(&o, 1, &err);
    struct stat st;
    tap_ok(rc == 0 && strcmp(content(path), "new\n") == 0, "closed whole: the new content");
    tap_ok(stat(path, &st) == 0 && (st.st_mode & 0777) == 0640, "the file keeps its mode (0640)");
    tap_ok(entries() == 1, "no temporary file is left");
    unlink(path);
}

static void test_in_place(void)
{
    char fifo[256], link[256], target[256];
    path_in_dir(fifo, sizeof fifo, "pipe");
    lam_output o;
    lam_error err;
    if (mkfifo(fifo, 0600) == 0) {
        int keep = open(fifo, O_RDWR); /* a reader, so that opening for writing does not wait */
        int rc = lam_output_open(fifo, &o, &err);
        tap_ok(rc == 0 && o.tmp == NULL, "a pipe is written in place");
        lam_output_discard(&o);
        struct stat st;
        tap_ok(lstat(fifo, &st) == 0 && S_ISFIFO(st.st_mode), "a discarded pipe stays");
        if (keep >= 0) close(keep);
        unlink(fifo);
    }
    path_in_dir(target, sizeof target, "target");
    path_in_dir(link, sizeof link, "link");
    put(target, "old\n");
    if (symlink(target, link) == 0) {
        int rc = lam_output_open(link, &o, &err);
        tap_ok(rc == 0 && o.tmp == NULL, "a symbolic link is written in place");
        fputs("new\n", o.fp);
        rc = lam_output_close(&o, 1, &err);
        struct stat st;
        tap_ok(rc == 0 && lstat(link, &st) == 0 && S_ISLNK(st.st_mode) &&
                   strcmp(content(target), "new\n") == 0,
               "the link stays a link and its target gets the content");
        unlink(link);
    }
    unlink(target);
    struct stat st;
    if (stat("/dev/full", &st) == 0 && S_ISCHR(st.st_mode) && access("/dev/full", W_OK) == 0) {
        int rc = lam_output_open("/dev/full", &o, &err);
        tap_ok(rc == 0 && o.tmp == NULL, "a device is written in place");
        for (int i = 0; i < 20000; ++i) fputs("0.5 x:0 z:1\n", o.fp);
        rc = lam_output_close(&o, 1, &err);
        tap_ok(rc == LAM_EX_IOERR && strstr(err.msg, "cannot write /dev/full: ") != NULL,
               "a full device: close returns 74, cannot write /dev/full");
        tap_ok(stat("/dev/full", &st) == 0 && S_ISCHR(st.st_mode), "the device stays");
    }
}

static void test_refused_and_stdout(void)
{
    lam_output o;
    lam_error err;
    int rc = lam_output_open("/nonexistent/dir/out.op", &o, &err);
    tap_ok(rc == LAM_EX_IOERR && o.fp == NULL &&
               strcmp(err.msg, "cannot open /nonexistent/dir/out.op for writing: "
                               "No such file or directory") == 0,
           "a missing directory: 74, cannot open ... for writing, the reason");
    rc = lam_output_open("", &o, &err);
    tap_ok(rc == LAM_EX_IOERR && o.fp == NULL && entries() == 0 &&
               strcmp(err.msg, "cannot open  for writing: No such file or directory") == 0,
           "an empty name: 74 at once, as fopen refuses it, and nothing is made");
    char cwd[4096];
    if (getcwd(cwd, sizeof cwd) && chdir(dir) == 0) {
        rc = lam_output_open_file("-", &o, &err);
        tap_ok(rc == 0 && o.fp != stdout, "lam_output_open_file: '-' is a file name");
        fputs("x\n", o.fp);
        rc = lam_output_close(&o, 1, &err);
        tap_ok(rc == 0 && strcmp(content("-"), "x\n") == 0, "a file named '-' is written");
        unlink("-");
        if (chdir(cwd) != 0) perror(cwd);
    }
    rc = lam_output_open("-", &o, &err);
    tap_ok(rc == 0 && o.fp == stdout && o.tmp == NULL, "'-' is standard output");
    lam_output_discard(&o);
    rc = lam_output_open(NULL, &o, &err);
    tap_ok(rc == 0 && o.fp == stdout, "no path is standard output");
    tap_ok(lam_output_close(&o, 1, &err) == 0, "standard output closes (flushed)");
    if (geteuid() != 0) {
        char path[256];
        path_in_dir(path, sizeof path, "read-only");
        put(path, "old\n");
        chmod(path, 0444);
        rc = lam_output_open(path, &o, &err);
        tap_ok(rc == LAM_EX_IOERR && strstr(err.msg, "Permission denied") != NULL,
               "a read-only file is refused, as fopen refuses it");
        tap_ok(strcmp(content(path), "old\n") == 0, "and stays as it was");
        unlink(path);
    }
}

/* A child that opens an output on an existing file, writes part of it
 * and then ends as how says; what it leaves is checked by the parent. */
static void child_ends(int how)
{
    char path[256];
    path_in_dir(path, sizeof path, "stopped.op");
    lam_output o;
    lam_error err;
    if (lam_output_open(path, &o, &err) != 0) _exit(99);
    fputs("half", o.fp);
    fflush(o.fp);
    if (how == 0) raise(SIGTERM);
    if (how == 1) {
        lam_error_set(&err, LAM_EX_DATA, "a failure after the output was opened");
        lam_error_exit(&err);
    }
    exit(0); /* returns without closing it */
}

static void test_stopped_runs(void)
{
    static const char *const what[] = {"stopped by SIGTERM", "giving up (lam_error_exit)",
                                       "exiting without closing it"};
    char path[256];
    path_in_dir(path, sizeof path, "stopped.op");
    for (int how = 0; how < 3; ++how) {
        put(path, "old\n");
        fflush(stdout);
        pid_t pid = fork();
        if (pid == 0) {
            int devnull = open("/dev/null", O_WRONLY);
            if (devnull >= 0) dup2(devnull, 2); /* the child's error message */
            child_ends(how);
        }
        int status = 0;
        waitpid(pid, &status, 0);
        int ended = how == 0 ? WIFSIGNALED(status) && WTERMSIG(status) == SIGTERM
                  : how == 1 ? WIFEXITED(status) && WEXITSTATUS(status) == LAM_EX_DATA
                             : WIFEXITED(status) && WEXITSTATUS(status) == 0;
        char name[160];
        snprintf(name, sizeof name, "%s: the old file stays, no temporary file is left", what[how]);
        tap_ok(ended && strcmp(content(path), "old\n") == 0 && entries() == 1, name);
        unlink(path);
    }
}

int main(void)
{
    if (!mkdtemp(dir)) {
        perror("mkdtemp");
        return 99;
    }
    test_new_file();
    test_failed_run_keeps_old_file();
    test_in_place();
    test_refused_and_stdout();
    test_stopped_runs();
    rmdir(dir);
    return tap_done();
}
