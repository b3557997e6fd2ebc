/* cli.c - the command-line options every program shares (see cli.h). */
#include "cli.h"

#include "stream.h"
#include "util.h"

int lam_cli_next(int argc, char **argv, const char *shortopts, const struct option *longopts)
{
    opterr = 0;
    return getopt_long(argc, argv, shortopts, longopts, NULL);
}

void lam_cli_common(int c, char **argv, void (*usage)(void))
{
    switch (c) {
    case 'h': usage(); break;
    case 'V': lam_print_version();
    case 'q': lam_progress_set(0); break;
    case LAM_OPT_PROGRESS: lam_progress_set(1); break;
    case LAM_OPT_ALLOW_EMPTY: lam_reader_allow_empty(1); break;
    default: lam_bad_option(argv[optind - 1], optopt, c == ':');
    }
}
