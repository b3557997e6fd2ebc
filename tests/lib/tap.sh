# tap.sh - TAP helpers for the shell tests.  Source it, then call ok/is/...
# and done_testing at the end.  LAM_BIN points at the programs; LAM_WRAP
# (e.g. valgrind) wraps every program call made through lam.
LAM_BIN=${LAM_BIN:-$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)/bin}
TESTS_DIR=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
_tap_n=0
_tap_failed=0
TMP=$(mktemp -d)
trap 'rm -rf "$TMP"' EXIT

lam() { local p=$1; shift; ${LAM_WRAP:-} "$LAM_BIN/$p" "$@"; }

ok() { # ok CONDITION-EXIT-STATUS NAME
    local st=$1; shift
    _tap_n=$((_tap_n + 1))
    if [ "$st" -eq 0 ]; then echo "ok $_tap_n - $*"; else echo "not ok $_tap_n - $*"; _tap_failed=$((_tap_failed + 1)); fi
}
is() { # is GOT WANT NAME
    local got=$1 want=$2; shift 2
    [ "$got" = "$want" ]; local st=$?
    ok $st "$*"
    [ $st -eq 0 ] || printf '#   got:  %s\n#   want: %s\n' "$got" "$want"
}
near() { # near GOT WANT TOL NAME
    local got=$1 want=$2 tol=$3; shift 3
    awk -v g="$got" -v w="$want" -v t="$tol" 'BEGIN { d = g - w; if (d < 0) d = -d; exit !(g != "" && d <= t) }'
    local st=$?
    ok $st "$*"
    [ $st -eq 0 ] || printf '#   got %s, want %s (tol %s)\n' "$got" "$want" "$tol"
}
like() { # like TEXT REGEX NAME
    local text=$1 re=$2; shift 2
    printf '%s' "$text" | grep -Eq -- "$re"; local st=$?
    ok $st "$*"
    [ $st -eq 0 ] || printf '#   %s\n#   does not match /%s/\n' "$(printf '%s' "$text" | head -3)" "$re"
}
# exits PROG ARGS... : run, capture rc/out/err into $RC $OUT $ERR
runlam() {
    local p=$1; shift
    OUT=$(lam "$p" "$@" 2>"$TMP/err"); RC=$?; ERR=$(cat "$TMP/err")
}
runlam_in() { # runlam_in INPUT PROG ARGS...
    local input=$1 p=$2; shift 2
    OUT=$(printf '%s' "$input" | lam "$p" "$@" 2>"$TMP/err"); RC=$?; ERR=$(cat "$TMP/err")
}
report_get() { # report_get KEY <<< report
    awk -F'\t' -v k="$1" '$1 == k { print $2; exit }'
}
done_testing() {
    echo "1..$_tap_n"
    [ $_tap_failed -eq 0 ]
    exit $?
}
# one_bad_option_message PROG VALUE-OPTION: an unknown long option, an
# unknown short option and VALUE-OPTION without its value each exit 64
# with one message and the --help hint (two lines), nothing on stdout.
one_bad_option_message() {
    local p=$1 valopt=$2 args
    for args in --no-such-option -8 "$valopt"; do
        OUT=$(lam "$p" $args </dev/null 2>"$TMP/err"); RC=$?; ERR=$(cat "$TMP/err")
        is "$RC/$(wc -l <"$TMP/err" | tr -d ' ')/${#OUT}" "64/2/0" "$p $args: exit 64, one message and the hint, no output"
        like "$(head -1 "$TMP/err")" "^$p: (unknown option '$args'|option '$args' needs a value)\$" "$p $args: the message names the option"
    done
}
