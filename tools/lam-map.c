/* lam-map - spinfree or fermion operator stream to Pauli strings. */
#include <assert.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "encoding.h"
#include "fermion.h"
#include "pauli.h"
#include "report.h"
#include "spinfree.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [STREAM]\n"
           "Map a spinfree or fermion operator stream (file or stdin, gzip allowed) to qubits\n"
           "and write it as a pauli stream: one Pauli string a line, coefficients in hartree\n"
           "(Eh), the identity as the bare constant.  Every Majorana monomial becomes one\n"
           "Pauli string, so the one-norm is the same under every encoding.\n\n"
           "  -e, --encoding E     jordan-wigner (default), bravyi-kitaev or parity\n"
           "      --spin-order O   interleaved (default: qubit 2p is orbital p spin up,\n"
           "                       2p+1 spin down) or blocked (spin-up modes first); a\n"
           "                       fermion stream is relabelled from its own spin-order\n"
           "  -d, --drop TOL       remove terms with |c| <= TOL Eh (never the identity);\n"
           "                       the count and one-norm removed go to stderr\n"
           "  -k, --kind K         kind of a stream without header (spinfree or fermion)\n"
           "  -o, --output FILE    write to FILE instead of stdout\n"
           "  -z, --gzip           gzip the output\n"
           "      --progress       report progress on stderr (default: when a terminal)\n"
           LAM_CLI_HELP_TAIL
           "Example:\n"
           "  lam-ints h2.fcidump | %s --encoding bravyi-kitaev | lam-norm\n",
           lam_program(), lam_program());
    exit(0);
}

typedef struct {
    lam_encoding_kind encoding;
    int spin_given;
    lam_spin_order spin;
    lam_drop drop;
    lam_kind kind;
    const char *input;
    lam_cli_values cli; /* -o, -z */
} options;

static void parse_options(int argc, char **argv, options *o)
{
    static const struct option opts[] = {
        LAM_CLI_ENCODING, LAM_CLI_SPIN_ORDER, LAM_CLI_DROP, LAM_CLI_KIND, LAM_CLI_STREAM_OUT,
        LAM_CLI_ALLOW_EMPTY, LAM_CLI_STANDARD, LAM_CLI_END};
    int c;
    while ((c = lam_cli_next(argc, argv, opts)) != -1) {
        switch (c) {
        case 'e':
            if (lam_encoding_parse(optarg, &o->encoding) != 0)
                lam_usage_error("--encoding wants jordan-wigner, bravyi-kitaev or parity, not '%s'",
                                optarg);
            break;
        case LAM_OPT_SPIN_ORDER:
            o->spin = lam_cli_spin_order(optarg);
            o->spin_given = 1;
            break;
        case 'd':
            lam_drop_parse(&o->drop, optarg);
            break;
        case 'k':
            o->kind = lam_cli_kind(optarg, LAM_CLI_KIND_BIT(LAM_KIND_SPINFREE) |
                                               LAM_CLI_KIND_BIT(LAM_KIND_FERMION));
            break;
        default: lam_cli_option(c, argv, usage, &o->cli);
        }
    }
    o->input = lam_cli_operand(argc, argv, "one stream at a time");
}

/* Past this size the dense h and (pq|rs) of a spinfree stream are not
 * built: its terms go one by one into ladder operators, so the memory
 * follows the terms written, not n^4 (a sparse stream that declares 3000
 * orbitals would otherwise ask for 650 TB). */
#define DENSE_SPINFREE_BYTES (256.0 * 1024 * 1024)

static int wants_term_by_term(lam_reader *r, lam_kind kind, int *yes, lam_error *err)
{
    long n = -1;
    int rc = kind == LAM_KIND_SPINFREE ? lam_reader_meta_long(r, "orbitals", -1, 0, 4096, &n, err)
                                       : 0;
    *yes = n >= 0 && (double)lam_spinfree_bytes((int)n) > DENSE_SPINFREE_BYTES;
    return rc;
}

typedef struct {
    lam_fermion_op op;
    lam_spin_order order;
    int n;
} sparse_ctx;

static void add_sparse_term(void *ctx, double c, int nidx, const int *idx, long line)
{
    sparse_ctx *s = ctx;
    lam_fermion_add_spinfree_term(&s->op, s->order, s->n, c, nidx, idx, line);
}

/* The Majorana monomials of a large spinfree stream, term by term (m is
 * left empty on error). */
static int read_majorana_term_by_term(lam_reader *r, const options *o, lam_majorana_set *m,
                                      lam_spin_order *used, lam_error *err)
{
    sparse_ctx s;
    long n;
    int norb, rc;
    memset(m, 0, sizeof *m);
    s.order = o->spin;
    if (!o->spin_given && (rc = lam_reader_spin_order(r, LAM_SPIN_INTERLEAVED, &s.order, err)))
        return rc;
    if ((rc = lam_reader_meta_long(r, "orbitals", -1, 0, 4096, &n, err))) return rc;
    s.n = (int)n;
    lam_fermion_init(&s.op, 2 * s.n);
    rc = lam_spinfree_read_each(r, add_sparse_term, &s, &norb, err);
    if (!rc) lam_majorana_from_fermion(&s.op, m);
    lam_fermion_free(&s.op);
    if (!rc) rc = lam_majorana_require_hermitian(m, lam_reader_name(r), err);
    if (rc) {
        lam_majorana_free(m);
        return rc;
    }
    *used = s.order;
    return 0;
}

/* Strings go straight to the output, so no set of them is ever held;
 * --drop removes small non-identity terms and says what went. */
typedef struct {
    lam_writer *w;
    int nwords;
    char *buf;
    size_t size;
    lam_drop *drop;
    size_t kept;
} writer_ctx;

static void write_string(void *ctx, const uint64_t *x, const uint64_t *z, double coef)
{
    writer_ctx *c = ctx;
    if (lam_drop_takes(c->drop, coef, lam_pauli_is_identity(c->nwords, x, z))) return;
    int len = lam_pauli_format(c->buf, c->size, c->nwords, x, z);
    assert(len >= 0); /* the buffer holds 10 bytes a qubit and more */
    (void)len;
    lam_writer_term(c->w, coef, c->buf);
    ++c->kept;
}

int main(int argc, char **argv)
{
    options o = {.encoding = LAM_ENC_JORDAN_WIGNER, .spin = LAM_SPIN_INTERLEAVED,
                 .kind = LAM_KIND_UNKNOWN};
    parse_options(argc, argv, &o);

    lam_error err;
    lam_reader *r = NULL;
    lam_majorana_set m;
    lam_encoding *enc = NULL;
    lam_meta meta;
    char *history = NULL;
    writer_ctx c = {NULL, 0, NULL, 0, &o.drop, 0};
    lam_kind kind;
    lam_spin_order order;
    int rc, by_term = 0;
    memset(&m, 0, sizeof m);
    lam_meta_init(&meta);
    if ((rc = lam_reader_open(o.input, &r, &err))) goto done;
    if (o.kind != LAM_KIND_UNKNOWN) lam_reader_force_kind(r, o.kind);
    if ((rc = lam_reader_kind(r, &kind, &err))) goto done;
    if (kind != LAM_KIND_SPINFREE && kind != LAM_KIND_FERMION) {
        rc = lam_reader_error(r, lam_reader_lineno(r), &err,
                              "a %s stream: lam-map maps spinfree or fermion streams",
                              lam_kind_name(kind));
        goto done;
    }
    double t0 = lam_seconds();
    if ((rc = wants_term_by_term(r, kind, &by_term, &err))) goto done;
    rc = by_term ? read_majorana_term_by_term(r, &o, &m, &order, &err)
                 : lam_majorana_read(r, kind, o.spin_given ? &o.spin : NULL, &m, &order, &err);
    if (rc) goto done;
    lam_progress("%zu Majorana monomials in %.1f s", m.count, lam_seconds() - t0);

    enc = lam_encoding_new(o.encoding, m.nmodes);

    lam_meta_copy(&meta, lam_reader_meta(r));
    lam_meta_remove(&meta, "orbitals");
    lam_meta_remove(&meta, "modes");
    lam_meta_setf(&meta, "qubits", "%d", m.nmodes);
    lam_meta_set(&meta, "encoding", lam_encoding_name(o.encoding));
    lam_meta_set(&meta, "spin-order", lam_spin_order_name(order));
    history = lam_history_from_argv(argc, argv);
    if ((rc = lam_writer_open(o.cli.output, o.cli.gzip, &c.w, &err))) goto done;
    c.nwords = enc->nwords;
    c.size = (size_t)m.nmodes * 10 + 32;
    c.buf = lam_malloc(c.size);
    /* merged Majorana monomials map one to one onto Pauli strings */
    lam_writer_set_distinct(c.w);
    lam_writer_header(c.w, LAM_KIND_PAULI, &meta, history);
    lam_encoding_each_pauli(enc, &m, write_string, &c);
    rc = lam_writer_close(c.w, &err);
    c.w = NULL;
    if (rc) goto done;
    lam_progress("%zu Pauli strings written in %.1f s", c.kept, lam_seconds() - t0);
    lam_drop_say(&o.drop);

done:
    lam_writer_discard(c.w);
    free(c.buf);
    free(history);
    lam_meta_free(&meta);
    lam_encoding_free(enc);
    lam_majorana_free(&m);
    lam_reader_close(r);
    if (rc) lam_error_exit(&err);
    return 0;
}
