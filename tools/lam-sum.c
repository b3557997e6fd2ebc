/* lam-sum - add, scale, merge and tidy operator streams of one kind. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "fermion.h"
#include "pauli.h"
#include "report.h"
#include "spinfree.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [[--scale F] FILE]...\n"
           "Add operator streams of one kind (spinfree, fermion or pauli), each FILE times\n"
           "the factor F of a --scale just before it (default 1), merge repeated terms,\n"
           "remove terms that cancel, and write one stream.  With one input it tidies that\n"
           "stream.  '-' is stdin; with no FILE stdin is read.  Coefficients are in\n"
           "hartree (Eh).\n\n"
           "      --scale F       multiply the next FILE (only that one) by F\n"
           "  -d, --drop TOL      also remove terms with |c| <= TOL Eh after adding (never\n"
           "                      the constant); the count and one-norm removed go to stderr\n"
           "      --sort          order terms by |coefficient|, largest first (the\n"
           "                      constant or identity stays first)\n"
           "  -k, --kind KIND     kind of header-less input: spinfree, fermion, pauli\n"
           "  -o, --output FILE   write to FILE instead of stdout\n"
           "  -z, --gzip          gzip the output\n"
           "  -h, --help          show this help\n"
           "      --allow-empty   read an empty input as the zero operator\n"
           "  -V, --version       show the version\n\n"
           "Example (H minus a shift K, both spinfree, rounding leftovers removed):\n"
           "  %s H.op --scale -1 K.op --drop 1e-15 > HK.op\n",
           lam_program(), lam_program());
    exit(0);
}

typedef struct {
    const char *path;
    double factor;
} input;

typedef struct {
    int sort;
    lam_kind forced;
    lam_cli_values cli; /* -o, -z */
    lam_drop drop;
    input *inputs;
    int ninputs;
} options;

/* Metadata of the result: the first input's, with what must agree
 * across inputs checked. */
static int merge_meta(lam_meta *into, lam_reader *r, int first, lam_error *err)
{
    lam_meta *m = lam_reader_meta(r);
    if (first) {
        lam_meta_copy(into, m);
        return 0;
    }
    static const char *const must_agree[] = {"electrons", "ms2", "encoding", "spin-order"};
    for (size_t i = 0; i < sizeof must_agree / sizeof *must_agree; ++i) {
        const char *a = lam_meta_get(into, must_agree[i]);
        const lam_meta_entry *b = lam_meta_find(m, must_agree[i]);
        if (a && b && strcmp(a, b->value) != 0)
            return lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), b->line,
                                "%s: %s differs from %s in the first input", must_agree[i],
                                b->value, a);
    }
    return 0;
}

/* ---- spinfree ---- */

static void add_spinfree(lam_spinfree **acc, const lam_spinfree *sf, double f)
{
    if (!*acc) {
        *acc = lam_spinfree_new(sf->n);
        (*acc)->electrons = sf->electrons;
        (*acc)->ms2 = sf->ms2;
    }
    lam_spinfree *a = *acc;
    if (sf->n > a->n) {
        lam_spinfree *bigger = lam_spinfree_new(sf->n);
        bigger->electrons = a->electrons;
        bigger->ms2 = a->ms2;
        bigger->e0 = a->e0;
        for (int p = 0; p < a->n; ++p)
            for (int q = 0; q < a->n; ++q) {
                LAM_H(bigger, p, q) = LAM_H(a, p, q);
                for (int r = 0; r < a->n; ++r)
                    for (int s = 0; s < a->n; ++s) LAM_G(bigger, p, q, r, s) = LAM_G(a, p, q, r, s);
            }
        lam_spinfree_free(a);
        *acc = a = bigger;
    }
    a->e0 += f * sf->e0;
    for (int p = 0; p < sf->n; ++p)
        for (int q = 0; q < sf->n; ++q) {
            LAM_H(a, p, q) += f * LAM_H(sf, p, q);
            for (int r = 0; r < sf->n; ++r)
                for (int s = 0; s < sf->n; ++s) LAM_G(a, p, q, r, s) += f * LAM_G(sf, p, q, r, s);
        }
}

typedef struct {
    double c;
    int nidx;
    int idx[4];
} sf_term;

typedef struct {
    sf_term *t;
    size_t n, cap;
} sf_list;

static void collect_spinfree(void *ctx, double c, int nidx, const int *idx)
{
    sf_list *l = ctx;
    if (l->n == l->cap) {
        l->cap = l->cap ? 2 * l->cap : 1024;
        l->t = lam_realloc(l->t, lam_mul_size(l->cap, sizeof *l->t));
    }
    sf_term *t = &l->t[l->n++];
    t->c = c;
    t->nidx = nidx;
    memcpy(t->idx, idx, (size_t)nidx * sizeof(int));
}

/* ---- --sort: constant first, then |c| descending, ties in input order ---- */

static const double *sort_coef;
static const char *sort_constant;

static int by_magnitude(const void *a, const void *b)
{
    size_t i = *(const size_t *)a, j = *(const size_t *)b;
    if (sort_constant[i] != sort_constant[j]) return sort_constant[j] - sort_constant[i];
    double d = fabs(sort_coef[j]) - fabs(sort_coef[i]);
    if (d != 0) return (d > 0) - (d < 0);
    return (i > j) - (i < j);
}

static size_t *order_by_magnitude(size_t n, const double *coef, const char *constant)
{
    size_t *order = lam_malloc(lam_mul_size(n ? n : 1, sizeof *order));
    for (size_t t = 0; t < n; ++t) order[t] = t;
    sort_coef = coef;
    sort_constant = constant;
    qsort(order, n, sizeof *order, by_magnitude);
    return order;
}

static void write_spinfree_sorted(lam_writer *w, const lam_spinfree *sf)
{
    sf_list l = {0};
    lam_spinfree_foreach_term(sf, collect_spinfree, &l);
    double *coef = lam_malloc(lam_mul_size(l.n ? l.n : 1, sizeof *coef));
    char *constant = lam_malloc(l.n ? l.n : 1);
    for (size_t i = 0; i < l.n; ++i) {
        coef[i] = l.t[i].c;
        constant[i] = l.t[i].nidx == 0;
    }
    size_t *order = order_by_magnitude(l.n, coef, constant);
    char rest[64];
    for (size_t k = 0; k < l.n; ++k) {
        const sf_term *t = &l.t[order[k]];
        lam_spinfree_format_indices(rest, sizeof rest, t->nidx, t->idx);
        lam_writer_term(w, t->c, rest);
    }
    free(order);
    free(constant);
    free(coef);
    free(l.t);
}

/* ---- pauli ---- */

static void add_pauli(lam_pauli_set *acc, lam_pauli_set *s, double f)
{
    if (s->nqubits > acc->nqubits) lam_pauli_set_grow_qubits(acc, s->nqubits);
    if (acc->nqubits > s->nqubits) lam_pauli_set_grow_qubits(s, acc->nqubits);
    lam_pauli_set_reserve(acc, acc->count + s->count);
    for (size_t t = 0; t < s->count; ++t)
        lam_pauli_set_add(acc, lam_pauli_x(s, t), lam_pauli_z(s, t), f * s->coef[t],
                          s->group ? s->group[t] : -1);
}

static void sort_pauli(lam_pauli_set *s)
{
    char *constant = lam_malloc(s->count ? s->count : 1);
    for (size_t t = 0; t < s->count; ++t)
        constant[t] = (char)lam_pauli_is_identity(s->nwords, lam_pauli_x(s, t), lam_pauli_z(s, t));
    size_t *order = order_by_magnitude(s->count, s->coef, constant);
    lam_pauli_set sorted;
    lam_pauli_set_init(&sorted, s->nqubits);
    lam_pauli_set_reserve(&sorted, s->count);
    for (size_t k = 0; k < s->count; ++k) {
        size_t t = order[k];
        lam_pauli_set_add(&sorted, lam_pauli_x(s, t), lam_pauli_z(s, t), s->coef[t], s->group ? s->group[t] : -1);
    }
    free(order);
    free(constant);
    lam_pauli_set_free(s);
    *s = sorted;
}

/* ---- fermion ---- */

static void add_fermion(lam_fermion_op *acc, const lam_fermion_op *s, double f)
{
    if (s->nmodes > acc->nmodes) acc->nmodes = s->nmodes;
    for (size_t t = 0; t < s->count; ++t)
        lam_fermion_add(acc, f * s->coef[t], s->ops + s->first[t], (int)lam_fermion_length(s, t), s->line[t]);
}

static void sort_fermion(lam_fermion_op *op)
{
    char *constant = lam_malloc(op->count ? op->count : 1);
    for (size_t t = 0; t < op->count; ++t) constant[t] = lam_fermion_length(op, t) == 0;
    size_t *order = order_by_magnitude(op->count, op->coef, constant);
    lam_fermion_op sorted;
    lam_fermion_init(&sorted, op->nmodes);
    for (size_t k = 0; k < op->count; ++k) {
        size_t t = order[k];
        lam_fermion_add(&sorted, op->coef[t], op->ops + op->first[t], (int)lam_fermion_length(op, t), op->line[t]);
    }
    free(order);
    free(constant);
    lam_fermion_free(op);
    *op = sorted;
}

/* ---- --drop: what is removed is counted, never the constant ---- */

static void drop_spinfree(lam_spinfree *sf, lam_drop *d)
{
    int n = sf->n;
    for (int p = 0; p < n; ++p)
        for (int q = 0; q < n; ++q)
            if (LAM_H(sf, p, q) != 0.0 && lam_drop_takes(d, LAM_H(sf, p, q), 0)) LAM_H(sf, p, q) = 0.0;
    /* a written two-body line merges e_pqrs and e_rspq: drop both halves */
    for (int pq = 0; pq < n * n; ++pq)
        for (int rs = pq; rs < n * n; ++rs) {
            int p = pq / n, q = pq % n, r = rs / n, s = rs % n;
            double c = pq == rs ? 0.5 * LAM_G(sf, p, q, r, s)
                                : 0.5 * (LAM_G(sf, p, q, r, s) + LAM_G(sf, r, s, p, q));
            if (c != 0.0 && lam_drop_takes(d, c, 0)) LAM_G(sf, p, q, r, s) = LAM_G(sf, r, s, p, q) = 0.0;
        }
}

static void drop_pauli(lam_pauli_set *s, lam_drop *d)
{
    lam_pauli_set kept;
    lam_pauli_set_init(&kept, s->nqubits);
    lam_pauli_set_reserve(&kept, s->count);
    for (size_t t = 0; t < s->count; ++t)
        if (!lam_drop_takes(d, s->coef[t],
                   lam_pauli_is_identity(s->nwords, lam_pauli_x(s, t), lam_pauli_z(s, t))))
            lam_pauli_set_add(&kept, lam_pauli_x(s, t), lam_pauli_z(s, t), s->coef[t],
                              s->group ? s->group[t] : -1);
    lam_pauli_set_free(s);
    *s = kept;
}

static void drop_fermion(lam_fermion_op *op, lam_drop *d)
{
    lam_fermion_op kept;
    lam_fermion_init(&kept, op->nmodes);
    for (size_t t = 0; t < op->count; ++t) {
        int len = (int)lam_fermion_length(op, t);
        if (!lam_drop_takes(d, op->coef[t], len == 0))
            lam_fermion_add(&kept, op->coef[t], op->ops + op->first[t], len, op->line[t]);
    }
    lam_fermion_free(op);
    *op = kept;
}

/* ---- command line ---- */

/* "2:K.op" or "-1:K.op", the FACTOR:FILE form of earlier versions */
static int looks_like_factor_prefix(const char *a)
{
    const char *colon = strchr(a, ':');
    char num[64];
    double f;
    size_t k = colon ? (size_t)(colon - a) : 0;
    if (!colon || k == 0 || k >= sizeof num) return 0;
    memcpy(num, a, k);
    num[k] = '\0';
    return lam_parse_double(num, &f) == 0;
}

static _Noreturn void old_factor_syntax(const char *a)
{
    const char *colon = strchr(a, ':');
    lam_usage_error("'%s': a factor is given as --scale F FILE (here --scale %.*s %s), "
                    "not as FACTOR:FILE",
                    a, (int)(colon - a), a, colon + 1);
}

/* "-1:K.op" reaches getopt as the options -1 -: -K ...: name the old form
 * rather than an unknown option '-1'. */
static void refuse_factor_prefix(int argc, char **argv)
{
    for (int i = optind - 1; i <= optind && i < argc; ++i)
        if (i > 0 && argv[i][0] == '-' && looks_like_factor_prefix(argv[i]))
            old_factor_syntax(argv[i]);
}

static void add_input(options *o, const char *path, int *scaled, double factor)
{
    o->inputs[o->ninputs].path = path;
    o->inputs[o->ninputs].factor = *scaled ? factor : 1.0;
    o->ninputs++;
    *scaled = 0;
}

/* Options and FILEs come back in order (the '-' of the option string), so
 * that a --scale belongs to the FILE right after it. */
static void parse_options(int argc, char **argv, options *o)
{
    static const struct option opts[] = {
        LAM_CLI_SCALE, LAM_CLI_DROP, LAM_CLI_SORT, LAM_CLI_KIND, LAM_CLI_STREAM_OUT,
        LAM_CLI_ALLOW_EMPTY, LAM_CLI_HELP, LAM_CLI_VERSION, LAM_CLI_END};
    int c, scaled = 0;
    double factor = 1.0;
    const char *scale_text = NULL;
    memset(o, 0, sizeof *o);
    o->forced = LAM_KIND_UNKNOWN;
    o->inputs = lam_malloc(lam_mul_size((size_t)argc + 1, sizeof *o->inputs));
    while ((c = lam_cli_next_in_order(argc, argv, opts)) != -1) {
        switch (c) {
        case 1: add_input(o, optarg, &scaled, factor); break;
        case LAM_OPT_SCALE:
            if (scaled)
                lam_usage_error("--scale %s and --scale %s before one FILE: one factor a FILE",
                                scale_text, optarg);
            factor = lam_opt_double("--scale", optarg);
            scale_text = optarg;
            scaled = 1;
            break;
        case 'd': lam_drop_parse(&o->drop, optarg); break;
        case LAM_OPT_SORT: o->sort = 1; break;
        case 'k':
            o->forced = lam_cli_kind(optarg, ~LAM_CLI_KIND_BIT(LAM_KIND_FRAGMENTS));
            break;
        case '?':
        case ':': refuse_factor_prefix(argc, argv); /* fall through */
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    for (int i = optind; i < argc; ++i) add_input(o, argv[i], &scaled, factor); /* after "--" */
    if (scaled)
        lam_usage_error("--scale %s applies to the FILE after it, and none follows", scale_text);
    if (o->ninputs == 0) o->inputs[o->ninputs++] = (input){"-", 1.0};
}

/* A FILE that does not exist but contains ':' gets a precise message
 * rather than a bare "cannot open". */
static int check_inputs(const options *o, lam_error *err)
{
    int stdin_uses = 0;
    for (int i = 0; i < o->ninputs; ++i) {
        const char *p = o->inputs[i].path;
        stdin_uses += strcmp(p, "-") == 0;
        if (strchr(p, ':') && access(p, F_OK) != 0) {
            if (looks_like_factor_prefix(p)) old_factor_syntax(p);
            return lam_error_set(err, LAM_EX_NOINPUT,
                                 "cannot open %s: no such file (a factor is given as --scale F "
                                 "FILE, not with ':')", p);
        }
    }
    if (stdin_uses > 1) lam_usage_error("stdin ('-') can be read only once");
    return 0;
}

/* ---- the library calls that can fail on bad input ---- */

static int open_input(const char *path, lam_kind forced, lam_reader **r, lam_error *err)
{
    int rc = lam_reader_open(path, r, err);
    if (rc == 0) lam_reader_force_kind(*r, forced);
    return rc;
}

static int read_spinfree(lam_reader *r, lam_spinfree **sf, lam_error *err)
{
    int rc = lam_spinfree_read(r, sf, err);
    if (rc) return rc;
    if ((rc = lam_spinfree_validate(*sf, lam_reader_name(r), NULL, err)) != 0) {
        lam_spinfree_free(*sf);
        *sf = NULL;
    }
    return rc;
}

/* ---- the sum ---- */

typedef struct {
    lam_kind kind;
    lam_meta meta;
    lam_spinfree *sf;
    lam_pauli_set pauli;
    lam_fermion_op fermion;
} sum;

static void sum_init(sum *s)
{
    memset(s, 0, sizeof *s);
    s->kind = LAM_KIND_UNKNOWN;
    lam_meta_init(&s->meta);
    lam_pauli_set_init(&s->pauli, 0);
    lam_fermion_init(&s->fermion, 0);
}

static void sum_free(sum *s)
{
    lam_spinfree_free(s->sf);
    lam_pauli_set_free(&s->pauli);
    lam_fermion_free(&s->fermion);
    lam_meta_free(&s->meta);
}

/* The terms of one open input of kind k into one (a sum of one input). */
static int read_terms(sum *one, lam_reader *r, lam_kind k, lam_error *err)
{
    if (k == LAM_KIND_SPINFREE) return read_spinfree(r, &one->sf, err);
    if (k == LAM_KIND_PAULI) return lam_pauli_read(r, &one->pauli, err);
    return lam_fermion_read(r, &one->fermion, err);
}

/* The terms of one open input, times factor, into the sum. */
static int add_terms(sum *s, lam_reader *r, lam_kind k, double factor, lam_error *err)
{
    sum one;
    sum_init(&one);
    int rc = read_terms(&one, r, k, err);
    if (rc == 0 && k == LAM_KIND_SPINFREE) add_spinfree(&s->sf, one.sf, factor);
    else if (rc == 0 && k == LAM_KIND_PAULI) add_pauli(&s->pauli, &one.pauli, factor);
    else if (rc == 0) add_fermion(&s->fermion, &one.fermion, factor);
    sum_free(&one);
    return rc;
}

/* Input number i (its kind checked against the first's) into the sum. */
static int add_input_file(sum *s, const input *in, int i, lam_kind forced, lam_error *err)
{
    lam_reader *r = NULL;
    lam_kind k;
    int rc = open_input(in->path, forced, &r, err);
    if (rc == 0) rc = lam_reader_kind(r, &k, err);
    if (rc == 0) {
        if (k == LAM_KIND_UNKNOWN) k = s->kind != LAM_KIND_UNKNOWN ? s->kind : LAM_KIND_PAULI;
        if (k == LAM_KIND_FRAGMENTS)
            rc = lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), lam_reader_lineno(r),
                              "fragments streams cannot be added term by term (their "
                              "unitaries differ)");
        else if (i > 0 && k != s->kind)
            rc = lam_error_at(err, LAM_EX_DATA, lam_reader_name(r), lam_reader_lineno(r),
                              "kind %s differs from %s in the first input", lam_kind_name(k),
                              lam_kind_name(s->kind));
    }
    if (rc == 0) {
        s->kind = k;
        rc = merge_meta(&s->meta, r, i == 0, err);
    }
    if (rc == 0) rc = add_terms(s, r, k, in->factor, err);
    lam_reader_close(r);
    return rc;
}

/* Tidy the sum (merge, --drop, --sort) and write it to w; 0 or the code. */
static int write_sum(sum *s, options *o, lam_writer *w, const char *history, lam_error *err)
{
    int rc = 0;
    if (s->kind == LAM_KIND_SPINFREE) {
        if (o->drop.on) drop_spinfree(s->sf, &o->drop);
        lam_spinfree_describe(s->sf, &s->meta);
        lam_writer_header(w, s->kind, &s->meta, history);
        if (o->sort) write_spinfree_sorted(w, s->sf);
        else lam_spinfree_write_terms(w, s->sf);
    } else if (s->kind == LAM_KIND_PAULI) {
        lam_pauli_set_merge(&s->pauli, 1);
        if (o->drop.on) drop_pauli(&s->pauli, &o->drop);
        if (o->sort) sort_pauli(&s->pauli);
        lam_meta_setf(&s->meta, "qubits", "%d", s->pauli.nqubits);
        /* merged by (string, label): strings are distinct only unlabelled */
        if (!s->pauli.group) lam_writer_set_distinct(w);
        lam_writer_header(w, s->kind, &s->meta, history);
        rc = lam_pauli_write_terms(w, &s->pauli, err);
    } else {
        lam_fermion_op ordered;
        lam_fermion_normal_order(&s->fermion, &ordered);
        if (o->drop.on) drop_fermion(&ordered, &o->drop);
        if (o->sort) sort_fermion(&ordered);
        lam_meta_setf(&s->meta, "modes", "%d", ordered.nmodes);
        lam_writer_header(w, s->kind, &s->meta, history);
        lam_fermion_write_terms(w, &ordered);
        lam_fermion_free(&ordered);
    }
    return rc;
}

int main(int argc, char **argv)
{
    options o;
    lam_error err;
    lam_error_clear(&err);
    parse_options(argc, argv, &o);
    sum s;
    sum_init(&s);
    int rc = check_inputs(&o, &err);
    for (int i = 0; rc == 0 && i < o.ninputs; ++i)
        rc = add_input_file(&s, &o.inputs[i], i, o.forced, &err);
    char *history = NULL;
    lam_writer *w = NULL;
    if (rc == 0) {
        history = lam_history_from_argv(argc, argv);
        rc = lam_writer_open(o.cli.output, o.cli.gzip, &w, &err);
    }
    if (rc == 0) {
        rc = write_sum(&s, &o, w, history, &err);
        if (rc == 0) rc = lam_writer_close(w, &err);
        else lam_writer_discard(w);
    }
    if (rc == 0) lam_drop_say(&o.drop);
    sum_free(&s);
    free(history);
    free(o.inputs);
    if (rc != 0) lam_error_exit(&err);
    return 0;
}
