/* lam-ints - FCIDUMP integrals to a spinfree (or fermion) operator stream. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "fcidump.h"
#include "fermion.h"
#include "spinfree.h"
#include "stream.h"
#include "util.h"

static _Noreturn void usage(void)
{
    printf("Usage: %s [OPTION]... [FCIDUMP]\n"
           "Read molecular integrals in the FCIDUMP format (file or stdin, gzip allowed)\n"
           "and write the Hamiltonian H = E0 + sum h_pq E_pq + 1/2 sum (pq|rs) e_pqrs\n"
           "(hartree, Eh) as a lamina operator stream.\n\n"
           "  -n, --electrons N    target electron number (default: NELEC of the file;\n"
           "                       its parity must match MS2)\n"
           "      --fermion        write spin-orbital ladder terms (kind fermion) instead\n"
           "                       of spin-free terms\n"
           "      --spin-order O   for --fermion: interleaved (default, mode 2p is orbital p\n"
           "                       spin up) or blocked (all spin-up modes first)\n"
           "  -o, --output FILE    write to FILE instead of stdout\n"
           "  -z, --gzip           gzip the output\n"
           "  -h, --help           show this help\n"
           "  -V, --version        show the version\n\n"
           "Example:\n"
           "  %s h4.fcidump | lam-map | lam-norm\n",
           lam_program(), lam_program());
    exit(0);
}

int main(int argc, char **argv)
{
    static const struct option opts[] = {
        LAM_CLI_ELECTRONS, LAM_CLI_FERMION, LAM_CLI_SPIN_ORDER, LAM_CLI_STREAM_OUT, LAM_CLI_HELP,
        LAM_CLI_VERSION, LAM_CLI_END};
    long electrons = -1;
    int fermion = 0, c;
    lam_spin_order order = LAM_SPIN_INTERLEAVED;
    lam_cli_values cli = {0};
    while ((c = lam_cli_next(argc, argv, opts)) != -1) {
        switch (c) {
        case 'n': electrons = lam_opt_long("--electrons", optarg, 0, 8192); break;
        case LAM_OPT_FERMION: fermion = 1; break;
        case LAM_OPT_SPIN_ORDER: order = lam_cli_spin_order(optarg); break;
        default: lam_cli_option(c, argv, usage, &cli);
        }
    }
    const char *path = lam_cli_operand(argc, argv, "one FCIDUMP at a time");

    lam_error err;
    lam_fcidump *fd;
    if (lam_fcidump_read(path, &fd, &err)) lam_error_exit(&err);
    lam_spinfree *sf = fd->op;
    if (electrons >= 0) {
        int bad = 0;
        if (electrons > 2L * sf->n)
            bad = lam_error_set(&err, LAM_EX_USAGE, "--electrons %ld exceeds 2 x %d orbitals",
                                electrons, sf->n);
        else if ((electrons + fd->ms2) % 2 != 0)
            bad = lam_error_at(&err, LAM_EX_DATA, fd->source, fd->ms2_line,
                               "--electrons %ld and MS2=%d differ in parity (an electron count and "
                               "twice its spin projection are both even or both odd)",
                               electrons, fd->ms2);
        if (bad) {
            lam_fcidump_free(fd);
            lam_error_exit(&err);
        }
        sf->electrons = (int)electrons;
    }
    if (fd->orbital_energy_lines)
        lam_warn("note: %ld orbital-energy lines (i 0 0 0) skipped: they are not part of the Hamiltonian",
                 fd->orbital_energy_lines);

    lam_meta meta;
    lam_meta_init(&meta);
    lam_spinfree_describe(sf, &meta);
    if (fermion) {
        lam_meta_setf(&meta, "modes", "%d", 2 * sf->n);
        lam_meta_set(&meta, "spin-order", lam_spin_order_name(order));
    }
    char *history = lam_history_from_argv(argc, argv);
    lam_writer *w;
    if (lam_writer_open(cli.output, cli.gzip, &w, &err)) {
        free(history);
        lam_meta_free(&meta);
        lam_fcidump_free(fd);
        lam_error_exit(&err);
    }
    lam_writer_header(w, fermion ? LAM_KIND_FERMION : LAM_KIND_SPINFREE, &meta, history);
    if (fermion) {
        lam_fermion_op op;
        lam_fermion_from_spinfree(sf, order, &op);
        lam_fermion_write_terms(w, &op);
        lam_fermion_free(&op);
    } else {
        lam_spinfree_write_terms(w, sf);
    }
    int rc = lam_writer_close(w, &err);
    free(history);
    lam_meta_free(&meta);
    lam_fcidump_free(fd);
    if (rc) lam_error_exit(&err);
    return 0;
}
