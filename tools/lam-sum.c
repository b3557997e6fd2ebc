/* lam-sum - add, scale, merge and tidy operator streams of one kind. */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "fermion.h"
#include "pauli.h"
#include "spinfree.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [FACTOR:]FILE...\n"
           "Add operator streams of one kind (spinfree, fermion or pauli), each times an\n"
           "optional FACTOR, merge repeated terms, drop terms that are exactly zero, and\n"
           "write one stream.  With one input it tidies that stream.  '-' is stdin; with\n"
           "no FILE stdin is read.  Coefficients are in hartree (Eh).\n\n"
           "  -s, --sort          order terms by |coefficient|, largest first (the\n"
           "                      constant or identity stays first)\n"
           "  -k, --kind KIND     kind of header-less input: spinfree, fermion, pauli\n"
           "  -o, --output FILE   write to FILE instead of stdout\n"
           "  -z, --gzip          gzip the output\n"
           "  -h, --help          show this help\n"
           "      --allow-empty   read an empty input as the zero operator\n"
           "      --version       show the version\n\n"
           "Example (H minus a shift K, both spinfree):\n"
           "  %s H.op -1:K.op > HK.op\n",
           lam_program(), lam_program());
    exit(0);
}

typedef struct {
    const char *path;
    double factor;
} input;

/* "FACTOR:FILE" when the part before the first ':' is a number, else the
 * whole argument is a file name. */
static input parse_input(const char *arg)
{
    input in = {arg, 1.0};
    const char *colon = strchr(arg, ':');
    if (colon && colon != arg) {
        char num[64];
        size_t k = (size_t)(colon - arg);
        if (k < sizeof num) {
            memcpy(num, arg, k);
            num[k] = '\0';
            double f;
            if (lam_parse_double(num, &f) == 0) {
                in.factor = f;
                in.path = colon + 1;
            }
        }
    }
    return in;
}

/* Metadata of the result: the first input's, with what must agree
 * across inputs checked. */
static void merge_meta(lam_meta *into, lam_reader *r, int first)
{
    lam_meta *m = lam_reader_meta(r);
    if (first) {
        lam_meta_copy(into, m);
        return;
    }
    static const char *const must_agree[] = {"electrons", "ms2", "encoding", "spin-order"};
    for (size_t i = 0; i < sizeof must_agree / sizeof *must_agree; ++i) {
        const char *a = lam_meta_get(into, must_agree[i]);
        const lam_meta_entry *b = lam_meta_find(m, must_agree[i]);
        if (a && b && strcmp(a, b->value) != 0)
            lam_reader_fail_line(r, b->line, "%s: %s differs from %s in the first input", must_agree[i],
                                 b->value, a);
    }
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

/* "-1:K.op" and "-0.5:X" are inputs, not options: take them (and every
 * other non-option) out of argv before getopt sees it, in order. */
static int looks_like_factor(const char *a)
{
    return a[0] == '-' && (a[1] == '.' || (a[1] >= '0' && a[1] <= '9'));
}

static int takes_value(const char *a)
{
    return strcmp(a, "-k") == 0 || strcmp(a, "-o") == 0 || strcmp(a, "--kind") == 0 ||
           strcmp(a, "--output") == 0;
}

static int split_inputs(int argc, char **argv, char **opts, int *nopts_out, input *inputs)
{
    int nopts = 0, ninputs = 0, only_inputs = 0;
    opts[nopts++] = argv[0];
    for (int i = 1; i < argc; ++i) {
        const char *a = argv[i];
        if (!only_inputs && strcmp(a, "--") == 0) {
            only_inputs = 1;
        } else if (only_inputs || a[0] != '-' || a[1] == '\0' || looks_like_factor(a)) {
            inputs[ninputs++] = parse_input(a);
        } else {
            opts[nopts++] = argv[i];
            if (takes_value(a) && i + 1 < argc) opts[nopts++] = argv[++i];
        }
    }
    opts[nopts] = NULL;
    *nopts_out = nopts;
    return ninputs;
}

int main(int argc, char **argv)
{
    lam_set_program(argv[0]);
    static const struct option opts[] = {
        {"allow-empty", no_argument, 0, LAM_OPT_ALLOW_EMPTY},
        {"sort", no_argument, 0, 's'},     {"kind", required_argument, 0, 'k'},
        {"output", required_argument, 0, 'o'}, {"gzip", no_argument, 0, 'z'},
        {"help", no_argument, 0, 'h'},     {"version", no_argument, 0, 'V'},
        {0, 0, 0, 0}};
    int sort = 0, gzip = 0, c;
    lam_kind forced = LAM_KIND_UNKNOWN;
    const char *out = NULL;
    char **optv = lam_malloc(lam_mul_size((size_t)argc + 1, sizeof *optv));
    input *inputs = lam_malloc(lam_mul_size((size_t)argc, sizeof *inputs));
    int optc;
    int ninputs = split_inputs(argc, argv, optv, &optc, inputs);
    while ((c = getopt_long(optc, optv, "sk:o:zh", opts, NULL)) != -1) {
        switch (c) {
        case LAM_OPT_ALLOW_EMPTY: lam_reader_allow_empty(1); break;
        case 's': sort = 1; break;
        case 'k':
            if (lam_kind_parse(optarg, &forced) != 0 || forced == LAM_KIND_FRAGMENTS)
                lam_usage_error("--kind wants spinfree, fermion or pauli, not '%s'", optarg);
            break;
        case 'o': out = optarg; break;
        case 'z': gzip = 1; break;
        case 'h': usage();
        case 'V': lam_print_version();
        default: lam_usage_error("unknown option");
        }
    }
    if (optind < optc) lam_usage_error("unexpected argument '%s'", optv[optind]);
    free(optv);
    if (ninputs == 0) inputs[ninputs++] = (input){"-", 1.0};
    int stdin_uses = 0;
    for (int i = 0; i < ninputs; ++i) stdin_uses += strcmp(inputs[i].path, "-") == 0;
    if (stdin_uses > 1) lam_usage_error("stdin ('-') can be read only once");

    lam_meta meta;
    lam_kind kind = LAM_KIND_UNKNOWN;
    lam_spinfree *sf_acc = NULL;
    lam_pauli_set pauli_acc;
    lam_fermion_op fermion_acc;
    lam_pauli_set_init(&pauli_acc, 0);
    lam_fermion_init(&fermion_acc, 0);
    for (int i = 0; i < ninputs; ++i) {
        lam_reader *r = lam_reader_open(inputs[i].path);
        lam_reader_force_kind(r, forced);
        lam_kind k = lam_reader_kind(r);
        if (k == LAM_KIND_UNKNOWN) k = kind != LAM_KIND_UNKNOWN ? kind : LAM_KIND_PAULI;
        if (k == LAM_KIND_FRAGMENTS)
            lam_reader_fail(r, "fragments streams cannot be added term by term (their unitaries differ)");
        if (i > 0 && k != kind)
            lam_reader_fail(r, "kind %s differs from %s in the first input", lam_kind_name(k), lam_kind_name(kind));
        kind = k;
        merge_meta(&meta, r, i == 0);
        if (k == LAM_KIND_SPINFREE) {
            lam_spinfree *sf = lam_spinfree_read(r);
            add_spinfree(&sf_acc, sf, inputs[i].factor);
            lam_spinfree_free(sf);
        } else if (k == LAM_KIND_PAULI) {
            lam_pauli_set s;
            lam_pauli_set_init(&s, 0);
            lam_pauli_read(r, &s);
            add_pauli(&pauli_acc, &s, inputs[i].factor);
            lam_pauli_set_free(&s);
        } else {
            lam_fermion_op s;
            lam_fermion_init(&s, 0);
            lam_fermion_read(r, &s);
            add_fermion(&fermion_acc, &s, inputs[i].factor);
            lam_fermion_free(&s);
        }
        lam_reader_close(r);
    }

    char *history = lam_history_from_argv(argc, argv);
    lam_writer *w = lam_writer_open(out, gzip);
    if (kind == LAM_KIND_SPINFREE) {
        lam_spinfree_describe(sf_acc, &meta);
        lam_writer_header(w, kind, &meta, history);
        if (sort) write_spinfree_sorted(w, sf_acc);
        else lam_spinfree_write_terms(w, sf_acc);
        lam_spinfree_free(sf_acc);
    } else if (kind == LAM_KIND_PAULI) {
        lam_pauli_set_merge(&pauli_acc, 1);
        if (sort) sort_pauli(&pauli_acc);
        lam_meta_setf(&meta, "qubits", "%d", pauli_acc.nqubits);
        /* merged by (string, label): strings are distinct only unlabelled */
        if (!pauli_acc.group) lam_writer_set_distinct(w);
        lam_writer_header(w, kind, &meta, history);
        lam_pauli_write_terms(w, &pauli_acc);
    } else {
        lam_fermion_op ordered;
        lam_fermion_normal_order(&fermion_acc, &ordered);
        if (sort) sort_fermion(&ordered);
        lam_meta_setf(&meta, "modes", "%d", ordered.nmodes);
        lam_writer_header(w, kind, &meta, history);
        lam_fermion_write_terms(w, &ordered);
        lam_fermion_free(&ordered);
    }
    lam_writer_close(w);
    lam_pauli_set_free(&pauli_acc);
    lam_fermion_free(&fermion_acc);
    lam_meta_free(&meta);
    free(history);
    free(inputs);
    return 0;
}
