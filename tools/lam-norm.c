/* lam-norm - one-norm, constant and term count of an operator stream. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "fermion.h"
#include "fragments.h"
#include "norm.h"
#include "output.h"
#include "pauli.h"
#include "report.h"
#include "spinfree.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [STREAM]...\n"
           "Report the one-norm lambda of each operator stream (files or stdin, gzip allowed)\n"
           "as key<TAB>value lines: label, kind, terms, constant (Eh), lambda (Eh), and the\n"
           "size (orbitals, modes or qubits); one block per stream, blocks separated by a\n"
           "blank line.  lambda is the sum of |c| over the Pauli strings (or Majorana\n"
           "monomials) of the operator, the identity left out; for spinfree and fermion input\n"
           "it is the value any Majorana-monomial encoding (Jordan-Wigner, Bravyi-Kitaev,\n"
           "parity) gives, computed without a Pauli expansion.  Pauli streams with group\n"
           "labels (@N) also get groups and lambda_grouped.\n\n"
           "  -k, --kind K         kind of a stream without header\n"
           "  -t, --tsv            one header row, then one row per stream; the columns are\n"
           "                       the same for every kind, NA where a value does not apply\n"
           "  -l, --label TEXT     label of the stream (default: its file name); give it once\n"
           "                       per stream, in order\n"
           "      --floor REPORT   a lam-range report (text or --tsv) of the same operator:\n"
           "                       print its half range (the floor) and lambda/floor, exact\n"
           "                       when the floor is, else at-most; once for every stream\n"
           "                       or once per stream, in order\n"
           "  -o, --output FILE    write to FILE instead of stdout\n"
           "      --progress       report progress on stderr (default: when a terminal)\n"
           LAM_CLI_HELP_TAIL
           "Example:\n"
           "  lam-ints h2.fcidump | %s\n",
           lam_program(), lam_program());
    exit(0);
}

/* The --tsv columns, whatever the kind (lam-norm(1) lists them). */
static const char *const tsv_columns[] = {
    "label", "kind", "terms", "constant", "lambda", "method", "groups", "lambda_grouped",
    "grouping", "unitaries", "fragments", "orbitals", "electrons", "modes", "qubits",
    "max_weight", "floor", "floor_status", "floor_from", "ratio", "ratio_status",
    "ratio_grouped", "ratio_grouped_status", NULL};

static int norm_spinfree(lam_report *rep, lam_reader *r, lam_error *err)
{
    lam_spinfree *sf;
    int rc = lam_spinfree_read(r, &sf, err);
    if (rc) return rc;
    if ((rc = lam_spinfree_validate(sf, lam_reader_name(r), NULL, err)) != 0) {
        lam_spinfree_free(sf);
        return rc;
    }
    lam_report_int(rep, "terms", (long long)lam_spinfree_term_count(sf));
    /* the closed form needs the 8-fold symmetry of real integrals */
    if (lam_spinfree_is_real(sf)) {
        lam_report_num(rep, "constant", lam_spinfree_constant(sf));
        lam_report_num(rep, "lambda", lam_spinfree_lambda(sf));
        lam_report_str(rep, "method", "closed-form");
    } else {
        /* without the symmetry: the general Majorana expansion */
        lam_majorana_set m;
        lam_majorana_from_spinfree_any(sf, LAM_SPIN_INTERLEAVED, &m);
        rc = lam_majorana_require_hermitian(&m, lam_reader_name(r), err);
        lam_report_num(rep, "constant", lam_majorana_constant(&m));
        lam_report_num(rep, "lambda", lam_majorana_lambda(&m));
        lam_report_str(rep, "method", "majorana");
        lam_majorana_free(&m);
    }
    lam_report_int(rep, "orbitals", sf->n);
    if (sf->electrons >= 0) lam_report_int(rep, "electrons", sf->electrons);
    lam_spinfree_free(sf);
    return rc;
}

static int norm_fermion(lam_report *rep, lam_reader *r, lam_error *err)
{
    lam_fermion_op op, ordered;
    int rc = lam_fermion_read(r, &op, err);
    if (rc) return rc;
    lam_fermion_normal_order(&op, &ordered);
    lam_report_int(rep, "terms", (long long)ordered.count);
    lam_majorana_set m;
    lam_majorana_from_fermion(&op, &m);
    rc = lam_majorana_require_hermitian(&m, lam_reader_name(r), err);
    lam_report_num(rep, "constant", lam_majorana_constant(&m));
    lam_report_num(rep, "lambda", lam_majorana_lambda(&m));
    lam_report_str(rep, "method", "majorana");
    lam_report_int(rep, "modes", op.nmodes);
    lam_majorana_free(&m);
    lam_fermion_free(&ordered);
    lam_fermion_free(&op);
    return rc;
}

/* A label names an anticommuting group unless the header says the groups
 * only commute (measurement groups are not unitaries up to scale, so they
 * have no grouped one-norm). */
static void report_groups(lam_report *rep, lam_reader *r, size_t groups, double grouped)
{
    const char *grouping = lam_meta_get(lam_reader_meta(r), "grouping");
    lam_report_int(rep, "groups", (long long)groups);
    if (!grouping || strcmp(grouping, "anticommuting") == 0)
        lam_report_num(rep, "lambda_grouped", grouped);
    else
        lam_report_str(rep, "grouping", grouping);
}

/* A stream whose writer stated "distinct: yes" has no string twice, so its
 * one-norm is a running sum: no terms held, no merging. */
static int norm_fragments(lam_report *rep, lam_reader *r, lam_error *err)
{
    lam_fragments *fr;
    int rc = lam_fragments_read(r, &fr, err);
    if (rc) return rc;
    lam_fragments_report(fr, rep);
    lam_fragments_free(fr);
    return 0;
}

static int norm_pauli(lam_report *rep, lam_reader *r, lam_error *err)
{
    /* a stream whose writer stated "distinct: yes" is summed as it is read;
     * any other merges repeated strings first */
    const char *distinct = lam_meta_get(lam_reader_meta(r), "distinct");
    lam_pauli_summary sum;
    double t0 = lam_seconds();
    int rc = distinct && strcmp(distinct, "yes") == 0 ? lam_pauli_summarize(r, &sum, err)
                                                      : lam_pauli_summarize_merged(r, &sum, err);
    if (rc) return rc;
    lam_progress("%zu terms read in %.1f s", sum.terms, lam_seconds() - t0);
    lam_report_int(rep, "terms", (long long)sum.terms);
    lam_report_num(rep, "constant", sum.constant);
    lam_report_num(rep, "lambda", sum.lambda);
    if (sum.labelled) report_groups(rep, r, sum.groups, sum.lambda_grouped);
    lam_report_int(rep, "qubits", sum.nqubits);
    lam_report_int(rep, "max_weight", sum.max_weight);
    return 0;
}

typedef struct {
    lam_kind forced;
    lam_cli_values cli; /* -o, -t */
    const char **labels, **floors;
    int nlabels, nfloors;
} options;

static void parse_options(int argc, char **argv, options *o)
{
    static const struct option opts[] = {
        LAM_CLI_ALLOW_EMPTY, LAM_CLI_KIND, LAM_CLI_FLOOR, LAM_CLI_TSV, LAM_CLI_LABEL,
        LAM_CLI_OUTPUT, LAM_CLI_STANDARD, LAM_CLI_END};
    int c;
    memset(o, 0, sizeof *o);
    o->forced = LAM_KIND_UNKNOWN;
    o->labels = lam_malloc(lam_mul_size((size_t)argc, sizeof *o->labels));
    o->floors = lam_malloc(lam_mul_size((size_t)argc, sizeof *o->floors));
    while ((c = lam_cli_next(argc, argv, opts)) != -1) {
        switch (c) {
        case 'k': o->forced = lam_cli_kind(optarg, ~0u); break;
        case 'l': o->labels[o->nlabels++] = optarg; break; /* one per stream */
        case LAM_OPT_FLOOR: o->floors[o->nfloors++] = optarg; break;
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    int streams = argc - optind > 0 ? argc - optind : 1;
    if (o->nlabels > 0 && o->nlabels != streams)
        lam_usage_error("%d --label for %d stream%s: give one per stream, in order", o->nlabels,
                        streams, streams == 1 ? "" : "s");
}

/* The report of one stream into *out (NULL on error). */
static int norm_stream(const char *path, const char *label, lam_kind forced, lam_report **out,
                       lam_error *err)
{
    lam_reader *r;
    lam_kind kind;
    *out = NULL;
    int rc = lam_reader_open(path, &r, err);
    if (rc) return rc;
    if (forced != LAM_KIND_UNKNOWN) lam_reader_force_kind(r, forced);
    if ((rc = lam_reader_kind(r, &kind, err))) {
        lam_reader_close(r);
        return rc;
    }
    lam_report *rep = lam_report_new();
    lam_report_columns(rep, tsv_columns);
    lam_report_str(rep, "label", label ? label : lam_reader_name(r));
    lam_report_str(rep, "kind", lam_kind_name(kind));
    switch (kind) {
    case LAM_KIND_SPINFREE: rc = norm_spinfree(rep, r, err); break;
    case LAM_KIND_FERMION: rc = norm_fermion(rep, r, err); break;
    case LAM_KIND_PAULI: rc = norm_pauli(rep, r, err); break;
    case LAM_KIND_FRAGMENTS: rc = norm_fragments(rep, r, err); break;
    case LAM_KIND_UNKNOWN:
        rc = lam_reader_error(r, lam_reader_lineno(r), err,
                              "cannot tell the kind of the stream: give --kind");
        break;
    default:
        rc = lam_reader_error(r, lam_reader_lineno(r), err, "%s streams are not supported",
                              lam_kind_name(kind));
    }
    lam_reader_close(r);
    if (rc) {
        lam_report_free(rep);
        return rc;
    }
    *out = rep;
    return 0;
}

/* The floors given: one for every stream, or one per stream (64
 * otherwise); each read once.  Standard input serves one reader only. */
static int read_floors(const options *o, char **streams, int nstreams, lam_floor *floors,
                       lam_error *err)
{
    if (o->nfloors > 1 && o->nfloors != nstreams)
        lam_usage_error("%d --floor for %d stream%s: give one for all or one per stream, in order",
                        o->nfloors, nstreams, nstreams == 1 ? "" : "s");
    int stdin_uses = !streams;
    for (int i = 0; streams && i < nstreams; ++i) stdin_uses += strcmp(streams[i], "-") == 0;
    for (int i = 0; i < o->nfloors; ++i) stdin_uses += strcmp(o->floors[i], "-") == 0;
    if (o->nfloors && stdin_uses > 1) lam_usage_error("standard input can be read once only");
    for (int i = 0; i < o->nfloors; ++i) {
        int rc = lam_floor_read(o->floors[i], &floors[i], err);
        if (rc) return rc;
    }
    return 0;
}

/* The floor's lines and lambda/floor (and the grouped lambda's) of one
 * stream. */
static void report_floor(lam_report *rep, const lam_floor *fl)
{
    double lambda;
    lam_floor_report(rep, fl, '_');
    if (lam_report_value(rep, "lambda", &lambda)) lam_floor_ratio(rep, fl, '_', "ratio", lambda);
    if (lam_report_value(rep, "lambda_grouped", &lambda))
        lam_floor_ratio(rep, fl, '_', "ratio_grouped", lambda);
}

/* Every stream is read before the output is opened, so a bad one leaves
 * no partial table behind. */
int main(int argc, char **argv)
{
    options o;
    parse_options(argc, argv, &o);
    int nstreams = argc - optind > 0 ? argc - optind : 1;
    lam_report **reps = lam_calloc((size_t)nstreams, sizeof *reps);
    lam_error err;
    lam_output out = {0};
    lam_floor *floors = lam_calloc((size_t)nstreams, sizeof *floors);
    int rc = read_floors(&o, optind < argc ? argv + optind : NULL, nstreams, floors, &err);
    for (int i = 0; i < nstreams && !rc; ++i) {
        rc = norm_stream(optind < argc ? argv[optind + i] : NULL, o.nlabels ? o.labels[i] : NULL,
                         o.forced, &reps[i], &err);
        if (!rc && o.nfloors) report_floor(reps[i], &floors[o.nfloors > 1 ? i : 0]);
    }
    free(floors);
    if (!rc) rc = lam_output_open(o.cli.output, &out, &err);
    if (rc) {
        for (int i = 0; i < nstreams; ++i) lam_report_free(reps[i]);
        free(reps);
        free(o.labels);
        free(o.floors);
        lam_error_exit(&err);
    }
    for (int i = 0; i < nstreams; ++i) {
        if (o.cli.tsv) {
            if (i == 0) lam_report_write_header(reps[i], out.fp);
            lam_report_write_row(reps[i], out.fp);
        } else {
            if (i > 0) fputc('\n', out.fp);
            lam_report_write(reps[i], out.fp, 0);
        }
        lam_report_free(reps[i]);
    }
    rc = lam_output_close(&out, 1, &err);
    free(reps);
    free(o.labels);
    free(o.floors);
    if (rc) lam_error_exit(&err);
    return 0;
}
