#!/bin/bash
# Errors found after a program has read its input: the message and exit
# code of each, and (under valgrind, when it is installed) nothing leaked
# on the way out: the library returns its errors and main frees what it
# holds before it exits.
source "$(dirname "$0")/lib/tap.sh"

# water of our own scenario (examples/data, STO-3G, O 1s frozen: 6 orbitals)
XYZ="$TESTS_DIR/../examples/data/water.xyz"
lam lam-ints "$TESTS_DIR/../examples/data/water.fcidump" >"$TMP/w.sf"
lam lam-shift -q "$TMP/w.sf" >"$TMP/shifted.sf"

# expect CODE MESSAGE-REGEX PROG ARGS...: exit code, one message naming
# the program, nothing on stdout
expect() {
    local code=$1 re=$2 p=$3; shift 3
    runlam "$p" "$@"
    is "$RC" "$code" "$p $*: exit $code"
    like "$ERR" "^$p: $re" "$p $*: says why"
    is "$OUT" "" "$p $*: nothing on stdout"
}

expect 64 "99 electrons do not fit in 6 orbitals" lam-rotate --electrons 99 "$TMP/w.sf"
like "$ERR" "Try 'lam-rotate --help'" "a usage error found after reading still shows the hint"
expect 64 "--within: '0-99' is not a list of orbital blocks" lam-rotate --within 0-99 "$TMP/w.sf"
expect 66 "/nonexistent/u.txt: cannot open" lam-rotate --start /nonexistent/u.txt "$TMP/w.sf"
expect 74 "cannot open $TMP/no/m.txt for writing" lam-rotate --matrix "$TMP/no/m.txt" "$TMP/w.sf"
expect 64 "99 electrons do not fit in 6 orbitals" lam-shift --electrons 99 "$TMP/w.sf"
expect 65 ".*already shifted for 8 electrons" lam-shift --electrons 6 "$TMP/shifted.sf"
expect 64 "--frozen 9 exceeds the 5 doubly occupied orbitals" lam-scf -q --frozen 9 "$XYZ"
expect 64 "--active 99 exceeds the 7 orbitals above the frozen ones" lam-scf -q --active 99 "$XYZ"
expect 75 "7 basis functions, 7 active orbitals need about" lam-scf -q -M 1K "$XYZ"
expect 74 "cannot open $TMP/no/w.fcidump for writing" lam-scf -q -o "$TMP/no/w.fcidump" "$XYZ"

# valgrind on the exits: the code stays the program's (99 would be a
# definite leak or a memory error), and no block of ours is even still
# reachable (memory main kept pointing at would not count as a leak: the
# loss records name lam_* or main only for our own allocations; OpenBLAS
# and libgfortran keep theirs).  A wrapper given by make valgrind-check is
# not stacked on ours.
leak_free() { # leak_free CODE PROG ARGS...
    local code=$1 p=$2; shift 2
    local why=
    command -v valgrind >/dev/null || why="valgrind is not installed"
    # a sanitizer build checks leaks itself and cannot run under valgrind
    ldd "$LAM_BIN/$p" 2>/dev/null | grep -q libasan && why="AddressSanitizer build"
    if [ -n "$why" ]; then
        ok 0 "$p $*: no leak on exit $code # SKIP $why"
        ok 0 "$p $*: nothing held on exit $code # SKIP $why"
        return
    fi
    valgrind -q --leak-check=full --show-leak-kinds=all --errors-for-leak-kinds=definite,indirect \
        --error-exitcode=99 "$LAM_BIN/$p" "$@" >/dev/null 2>"$TMP/vg"
    local rc=$?
    is "$rc" "$code" "$p $*: no leak or memory error on exit $code (valgrind)"
    [ "$rc" = "$code" ] || sed 's/^/#   /' "$TMP/vg" | head -20
    is "$(grep -cE '(at|by) 0x[0-9A-F]+: (lam_|main )' "$TMP/vg")" 0 \
        "$p $*: no block of ours still held on exit $code"
}

leak_free 64 lam-rotate --electrons 99 "$TMP/w.sf"
leak_free 66 lam-rotate --start /nonexistent/u.txt "$TMP/w.sf"
leak_free 74 lam-rotate --matrix "$TMP/no/m.txt" "$TMP/w.sf"
leak_free 64 lam-shift --electrons 99 "$TMP/w.sf"
leak_free 65 lam-shift --electrons 6 "$TMP/shifted.sf"
leak_free 64 lam-scf -q --frozen 9 "$XYZ"
leak_free 75 lam-scf -q -M 1K "$XYZ"
done_testing
