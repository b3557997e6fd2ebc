#!/usr/bin/env bash
# Every program: --help, --version, a man page, unknown options.
# (Project conventions, DEVELOPERS.md.)
source "$(dirname "$0")/lib/tap.sh"
ROOT=$(cd "$TESTS_DIR/.." && pwd)
for src in "$ROOT"/tools/lam-*.c; do
    p=$(basename "$src" .c)
    runlam "$p" --help
    is "$RC" 0 "$p --help: exit 0"
    like "$OUT" "^Usage: $p" "$p --help starts with the synopsis"
    like "$OUT" "Example" "$p --help shows an example"
    runlam "$p" --version
    like "$OUT" "^$p \\(lamina\\) [0-9]+\\.[0-9]+\\.[0-9]+$" "$p --version"
    runlam "$p" --no-such-option
    is "$RC" 64 "$p: unknown option is exit 64"
    like "$ERR" "Try '$p --help'" "$p: usage error points to --help"
    ok "$([ -f "$ROOT/man/$p.1" ]; echo $?)" "$p has man/$p.1"
done
# Issue 11 item 5: the suite's short-option table, as lamina(7) writes it
# (letter and long name), holds for every "-X, --name" line of --help, and
# a bad option prints one message.  The programs converted so far:
TABLE_PROGRAMS="lam-map lam-norm lam-sum lam-shift lam-group lam-factor"
sed -n 's/^\\-\([A-Za-z]\)\t\\-\\-\([a-z-]*\).*/\1 \2/p' "$ROOT/man/lamina.7" >"$TMP/table"
is "$(wc -l <"$TMP/table" | tr -d ' ')" 22 "lamina(7) has the table of 22 short options"
for p in $TABLE_PROGRAMS; do
    lam "$p" --help | sed -n 's/^ *-\([A-Za-z]\), --\([a-z-]*\).*/\1 \2/p' >"$TMP/help"
    bad=$(grep -vxFf "$TMP/table" "$TMP/help" | tr '\n' ' ')
    is "$bad" "" "$p: every short option of --help means what the table says"
    runlam "$p" -V
    like "$OUT" "^$p \\(lamina\\) [0-9]+\\.[0-9]+\\.[0-9]+$" "$p -V is --version"
    one_bad_option_message "$p" --output
done
# Every option a program accepts is in its --help and its man page (project
# conventions, DEVELOPERS.md).  What it accepts is its option table in
# tools/ (LAM_CLI_ entries), the names those entries have in common/cli.h.
cli_groups='s/^LAM_CLI_STANDARD$/LAM_CLI_PROGRESS LAM_CLI_QUIET LAM_CLI_HELP LAM_CLI_VERSION/
s/^LAM_CLI_STREAM_OUT$/LAM_CLI_OUTPUT LAM_CLI_GZIP/
s/^LAM_CLI_REPORT_OUT$/LAM_CLI_REPORT LAM_CLI_TSV LAM_CLI_LABEL/'
for src in "$ROOT"/tools/lam-*.c; do
    p=$(basename "$src" .c)
    names=$(awk '/static const struct option/ { t = 1 } t { print } t && /LAM_CLI_END/ { exit }' "$src" |
        grep -o 'LAM_CLI_[A-Z_]*' | sed "$cli_groups" | tr ' ' '\n' | grep -vx LAM_CLI_END |
        while read -r m; do sed -n "s/^#define $m {\"\([a-z-]*\)\".*/\1/p" "$ROOT/common/cli.h"; done |
        sort -u)
    ok "$([ "$(wc -w <<<"$names")" -ge 7 ]; echo $?)" "$p: its option table is found ($(wc -w <<<"$names") names)"
    lam "$p" --help >"$TMP/help"
    sed 's/\\-/-/g' "$ROOT/man/$p.1" >"$TMP/man"
    missing=
    for n in $names; do
        grep -qE -- "--$n([^a-z-]|\$)" "$TMP/help" || missing="$missing --help:--$n"
        grep -qE -- "--$n([^a-z-]|\$)" "$TMP/man" || missing="$missing man:--$n"
    done
    is "$missing" "" "$p: every option it accepts is in --help and in man/$p.1"
done
ok "$([ -f "$ROOT/man/lamina-stream.5" ]; echo $?)" "man/lamina-stream.5"
ok "$([ -f "$ROOT/man/lamina.7" ]; echo $?)" "man/lamina.7"
# issue 15.10: make demo needs the build packages and, optionally, the
# plotting program, never the test references or the fuzzing compiler
demo_plan=$(make -n -s -C "$ROOT" deps-build deps-plot 2>/dev/null)
is "$(grep -c -E 'psi4|python3-numpy|python3-scipy|clang|valgrind' <<<"$demo_plan")" 0 \
    "make demo's package checks name no test reference, fuzzer or valgrind"
like "$(sed -n '/^demo:/p' "$ROOT/Makefile")" '^demo: deps-build deps-plot$' "make demo depends on the build and plot checks only"
done_testing
