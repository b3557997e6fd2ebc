/* cli.c - the command-line options every program shares (see cli.h). */
#include "cli.h"

#include <string.h>

#include "util.h"

/* The short-option string the table implies, after mode (":" or "-:"):
 * the letter of each entry that has one, followed by ':' when it takes a
 * value ("::" when the value is optional). */
static const char *short_options(const struct option *longopts, const char *mode, char *buf)
{
    char seen[128] = {0};
    size_t n = strlen(strcpy(buf, mode));
    for (const struct option *e = longopts; e->name; ++e) {
        if (e->flag || e->val <= 0 || e->val >= 128 || seen[e->val]) continue;
        seen[e->val] = 1;
        buf[n++] = (char)e->val;
        if (e->has_arg != no_argument) buf[n++] = ':';
        if (e->has_arg == optional_argument) buf[n++] = ':';
    }
    buf[n] = '\0';
    return buf;
}

/* getopt_long with getopt's own messages off (opterr = 0).  The first
 * call names the program after argv[0] for every message that follows. */
static int next_option(int argc, char **argv, const char *mode, const struct option *longopts)
{
    char shortopts[3 + 3 * 128];
    if (optind <= 1) lam_set_program(argv[0]);
    opterr = 0;
    return getopt_long(argc, argv, short_options(longopts, mode, shortopts), longopts, NULL);
}

int lam_cli_next(int argc, char **argv, const struct option *longopts)
{
    return next_option(argc, argv, ":", longopts);
}

int lam_cli_next_in_order(int argc, char **argv, const struct option *longopts)
{
    return next_option(argc, argv, "-:", longopts);
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

/* The value of a shared option into v: 1, or 0 when c is none of them. */
static int store_option(int c, lam_cli_values *v)
{
    switch (c) {
    case 'o': v->output = optarg; break;
    case 'z': v->gzip = 1; break;
    case 'r': v->report = optarg; break;
    case 't': v->tsv = 1; break;
    case 'l': v->label = optarg; break;
    case 'j': v->threads = lam_opt_long("--threads", optarg, 1, 1024); break;
    case 'M': v->max_memory = lam_opt_size("--max-memory", optarg); break;
    case 'q': v->quiet = 1; return 0; /* and progress off: */
    default: return 0;
    }
    return 1;
}

void lam_cli_option(int c, char **argv, void (*usage)(void), lam_cli_values *v)
{
    if (!store_option(c, v)) lam_cli_common(c, argv, usage);
}

static int is_stdout(const char *path)
{
    return !path || strcmp(path, "-") == 0;
}

void lam_cli_report_needs(const lam_cli_values *v, const char *what)
{
    const char *report = v->report;
    if (!report && (v->tsv || v->label))
        lam_usage_error("%s formats the --report; give --report FILE",
                        v->tsv ? "--tsv" : "--label");
    if (report && strcmp(report, "-") == 0 && is_stdout(v->output))
        lam_usage_error("--report - needs -o FILE: stdout carries the %s", what);
}

lam_kind lam_cli_kind(const char *arg, unsigned allowed)
{
    lam_kind k = lam_kind_parse(arg);
    if (k != LAM_KIND_UNKNOWN && (allowed & LAM_CLI_KIND_BIT(k))) return k;
    const char *name[LAM_KIND_FRAGMENTS + 1];
    int n = 0;
    for (int i = LAM_KIND_SPINFREE; i <= LAM_KIND_FRAGMENTS; ++i)
        if (allowed & LAM_CLI_KIND_BIT(i)) name[n++] = lam_kind_name((lam_kind)i);
    char names[128] = ""; /* "a, b or c" */
    for (int i = 0; i < n; ++i) {
        strcat(names, name[i]);
        strcat(names, i + 2 < n ? ", " : i + 2 == n ? " or " : "");
    }
    lam_usage_error("--kind wants %s, not '%s'", names, arg);
}

lam_spin_order lam_cli_spin_order(const char *arg)
{
    lam_spin_order order;
    if (lam_spin_order_parse(arg, &order) != 0)
        lam_usage_error("--spin-order wants interleaved or blocked, not '%s'", arg);
    return order;
}

const char *lam_cli_operand(int argc, char **argv, const char *too_many)
{
    if (argc - optind > 1) lam_usage_error("%s", too_many);
    return optind < argc ? argv[optind] : NULL;
}
