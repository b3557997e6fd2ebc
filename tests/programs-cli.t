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
ok "$([ -f "$ROOT/man/lamina-stream.5" ]; echo $?)" "man/lamina-stream.5"
ok "$([ -f "$ROOT/man/lamina.7" ]; echo $?)" "man/lamina.7"
done_testing
