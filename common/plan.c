/* plan.c - blocks of a lam-range run: sectors, memory, time, resume. */
#include "plan.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "output.h"
#include "util.h"

void lam_plan_add(lam_plan *p, int na, int nb)
{
    p->s = lam_realloc(p->s, (size_t)(p->count + 1) * sizeof *p->s);
    lam_plan_entry *e = &p->s[p->count++];
    memset(e, 0, sizeof *e);
    e->na = na;
    e->nb = nb;
    e->mirror_of = -1;
    e->lo = e->hi = NAN;
}

int lam_plan_find(const lam_plan *p, int na, int nb)
{
    for (int i = 0; i < p->count; ++i)
        if (p->s[i].na == na && p->s[i].nb == nb) return i;
    return -1;
}

void lam_plan_free(lam_plan *p)
{
    free(p->s);
    p->s = NULL;
    p->count = 0;
}

int lam_plan_smallest_sz_alpha(int n_electrons) { return (n_electrons + 1) / 2; }

void lam_plan_spinfree(lam_plan *p, int n, int na, int nb, int multiplets)
{
    if (na >= 0) {
        lam_plan_add(p, na, nb);
        return;
    }
    for (int a = 0; a <= n; ++a)
        for (int b = 0; b <= n; ++b) lam_plan_add(p, a, b);
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        int N = e->na + e->nb;
        if (multiplets && e->na != lam_plan_smallest_sz_alpha(N)) {
            e->skipped = 1;
            continue;
        }
        if (e->na < e->nb && !multiplets) e->mirror_of = lam_plan_find(p, e->nb, e->na);
    }
}

void lam_plan_label(const lam_plan_entry *e, char *buf, size_t size)
{
    if (e->na < 0) snprintf(buf, size, "the Fock space");
    else if (e->nb < 0) snprintf(buf, size, "the %d-electron block", e->na);
    else snprintf(buf, size, "sector (%d,%d)", e->na, e->nb);
}

static char *format_bytes(double b, char *buf, size_t size)
{
    const char *u[] = {"bytes", "KiB", "MiB", "GiB", "TiB", "PiB"};
    int k = 0;
    while (b >= 1024 && k < 5) {
        b /= 1024;
        ++k;
    }
    snprintf(buf, size, k ? "%.1f %s" : "%.0f %s", b, u[k]);
    return buf;
}

int lam_plan_check_memory(lam_plan *p, double base, double max_memory, int allow_bounds, lam_error *err)
{
    for (int i = 0; i < p->count; ++i) {
        lam_plan_entry *e = &p->s[i];
        if (e->skipped || e->mirror_of >= 0) continue;
        double need = e->bytes == SIZE_MAX ? INFINITY : base + (double)e->bytes;
        if (need <= max_memory && allow_bounds != 2) continue;
        if (allow_bounds) {
            e->use_bounds = 1;
            continue;
        }
        char b1[32], b2[32], what[48];
        lam_plan_label(e, what, sizeof what);
        if (isinf(need))
            return lam_error_set(err, LAM_EX_MEMORY,
                                 "%s cannot be held (dimension beyond reach); --bounds gives inner bounds", what);
        return lam_error_set(err, LAM_EX_MEMORY,
                             "%s would need %s for an exact solve (dimension %zu), over --max-memory %s; "
                             "--bounds gives inner bounds instead",
                             what, format_bytes(need, b1, sizeof b1), e->dim,
                             format_bytes(max_memory, b2, sizeof b2));
    }
    return 0;
}

/* ---- time ---- */

/* Davidson iterations per end, typical of our molecules at --tol 1e-9. */
enum { TYPICAL_DAVIDSON = 40 };

double lam_plan_entry_seconds(const lam_plan_entry *e, int ends, int check_steps, double unit)
{
    if (e->skipped || e->mirror_of >= 0 || e->resumed) return 0;
    if (e->use_bounds) return 0.01;
    double applications = (double)ends * (TYPICAL_DAVIDSON + check_steps);
    if (e->dim <= 300) applications = (double)e->dim; /* dense: one column each */
    return applications * (double)e->dim * unit;
}

double lam_plan_now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static void format_seconds(double s, char *buf, size_t size)
{
    if (s < 90) snprintf(buf, size, "%.0f s", s);
    else if (s < 5400) snprintf(buf, size, "%.0f min", s / 60);
    else if (s < 172800) snprintf(buf, size, "%.1f h", s / 3600);
    else snprintf(buf, size, "%.1f days", s / 86400);
}

void lam_plan_clock_start(lam_plan_clock *c, const lam_plan *p, int ends, int check_steps, double unit)
{
    memset(c, 0, sizeof *c);
    c->start = lam_plan_now();
    for (int i = 0; i < p->count; ++i) {
        const lam_plan_entry *e = &p->s[i];
        if (e->skipped || e->mirror_of >= 0 || e->resumed) continue;
        c->total_weight += lam_plan_entry_seconds(e, ends, check_steps, unit);
        ++c->total;
    }
    char t[32];
    format_seconds(c->total_weight, t, sizeof t);
    if (c->total_weight > 3600)
        lam_warn("warning: this run is estimated at about %s (%d blocks to solve); --sector runs one "
                 "block a job, --resume DIR keeps finished blocks",
                 t, c->total);
    else
        lam_progress("%d blocks to solve, estimated %s", c->total, t);
}

void lam_plan_clock_block(lam_plan_clock *c, const lam_plan_entry *e, int ends, int check_steps,
                          double unit, int finished)
{
    char label[48], sofar[32], left[32];
    lam_plan_label(e, label, sizeof label);
    double elapsed = lam_plan_now() - c->start;
    format_seconds(elapsed, sofar, sizeof sofar);
    if (!finished) {
        lam_progress("block %d of %d (%s, dimension %zu)%s: %s so far", c->done + 1, c->total, label,
                     e->dim, e->use_bounds ? ", bounds only" : "", sofar);
        return;
    }
    ++c->done;
    c->done_weight += lam_plan_entry_seconds(e, ends, check_steps, unit);
    /* the model's shape, scaled by what this machine has shown so far once
     * enough of the work is done for the scale to mean something */
    double rest = c->total_weight - c->done_weight;
    if (c->done_weight > 0.05 * c->total_weight && elapsed > 1) rest *= elapsed / c->done_weight;
    format_seconds(rest, left, sizeof left);
    lam_progress("block %d of %d (%s) done: %s so far, about %s left", c->done, c->total, label, sofar,
                 left);
}

/* ---- resume ---- */

uint64_t lam_plan_fingerprint(uint64_t h, const void *data, size_t bytes)
{
    const unsigned char *b = data;
    if (!h) h = 1469598103934665603ULL; /* FNV-1a */
    for (size_t i = 0; i < bytes; ++i) {
        h ^= b[i];
        h *= 1099511628211ULL;
    }
    return h;
}

static void block_path(const char *dir, const lam_plan_entry *e, char *buf, size_t size)
{
    if (e->na < 0) snprintf(buf, size, "%s/fock.block", dir);
    else if (e->nb < 0) snprintf(buf, size, "%s/n%d.block", dir, e->na);
    else snprintf(buf, size, "%s/sector-%d-%d.block", dir, e->na, e->nb);
}

static int read_value(const char *tok, double *v)
{
    if (!strcmp(tok, "-")) {
        *v = NAN;
        return 0;
    }
    return lam_parse_double(tok, v);
}

int lam_plan_resume_read(const char *dir, uint64_t fp, lam_plan_entry *e)
{
    char path[4096];
    block_path(dir, e, path, sizeof path);
    FILE *f = fopen(path, "r");
    if (!f) return 0;
    char line[1024], v[4][64];
    unsigned long long got = 0;
    int na, nb, xl, xh, ub, ok = 0;
    size_t dim;
    if (fgets(line, sizeof line, f) && !strcmp(line, "lamina-range-block 1\n") && fgets(line, sizeof line, f) &&
        sscanf(line, "%llx %d %d %zu %63s %63s %63s %63s %d %d %d", &got, &na, &nb, &dim, v[0], v[1], v[2],
               v[3], &xl, &xh, &ub) == 11 &&
        got == fp && na == e->na && nb == e->nb && dim == e->dim) {
        double d[4];
        ok = 1;
        for (int i = 0; i < 4; ++i) ok &= read_value(v[i], &d[i]) == 0;
        if (ok) {
            e->lo = d[0];
            e->hi = d[1];
            e->res_lo = d[2];
            e->res_hi = d[3];
            e->exact_lo = xl;
            e->exact_hi = xh;
            e->use_bounds = ub;
            e->resumed = 1;
        }
    }
    fclose(f);
    return ok;
}

static void write_value(FILE *f, double x)
{
    char buf[LAM_DOUBLE_BUF];
    if (isnan(x)) fputs(" -", f);
    else {
        lam_format_double(buf, sizeof buf, x);
        fprintf(f, " %s", buf);
    }
}

int lam_plan_resume_write(const char *dir, uint64_t fp, const lam_plan_entry *e, lam_error *err)
{
    char path[4096];
    if (mkdir(dir, 0777) != 0 && errno != EEXIST)
        return lam_error_set(err, LAM_EX_IOERR, "%s: cannot create the resume directory: %s", dir,
                             strerror(errno));
    block_path(dir, e, path, sizeof path);
    /* written beside under a name of its own (two runs on one directory, a
     * job started twice, must not write into each other's half-written
     * file) and renamed into place whole */
    lam_output out;
    if (lam_output_open(path, &out, err)) return err->code;
    FILE *f = out.fp;
    fprintf(f, "lamina-range-block 1\n%016llx %d %d %zu", (unsigned long long)fp, e->na, e->nb, e->dim);
    write_value(f, e->lo);
    write_value(f, e->hi);
    write_value(f, e->res_lo);
    write_value(f, e->res_hi);
    fprintf(f, " %d %d %d\n", e->exact_lo, e->exact_hi, e->use_bounds);
    return lam_output_close(&out, 1, err);
}
