#!/usr/bin/env bash
# The stream on the command line, program by program: version-2 spellings
# and the ones refused, version-1 files still read, coefficients too large
# for safe arithmetic refused, empty input refused unless --allow-empty.
source "$(dirname "$0")/lib/tap.sh"
SZ="$TESTS_DIR/data/h2-sto3g-r1.4bohr.fcidump"
lam lam-ints "$SZ" > "$TMP/h.op"
lam lam-map "$TMP/h.op" > "$TMP/h.pauli"

# ---- version 2 pauli: any valid spelling, the canonical one on output
runlam_in $'0.25 z:2,1 y:5 x:3,0\n0.25 x:0,3 y:5 z:1-2\n' lam-sum
is "$(printf '%s\n' "$OUT" | grep -v '^#')" "0.5 x:0,3 y:5 z:1-2" \
   "letters and indices in any order merge with the canonical spelling"
runlam_in $'1 z:0,1,2,3,7,8,10\n' lam-sum
is "$(printf '%s\n' "$OUT" | grep -v '^#')" "1 z:0-3,7-8,10" "maximal runs written a-b (a run of two too)"
runlam_in $'1 x:0-1\n1 x:1,0\n' lam-norm
is "$(report_get terms <<<"$OUT")" 1 "a run and its list are one string"

bad_pauli() { # bad_pauli TERM MESSAGE-REGEX NAME
    printf '#%% kind: pauli\n0.5 z:0\n%s\n' "$1" > "$TMP/bad.op"
    runlam lam-norm "$TMP/bad.op"
    is "$RC" 65 "$3: exit 65"
    like "$ERR" "^lam-norm: $TMP/bad.op:3: $2" "$3: file, line and reason"
}
bad_pauli '1 x:1 z:1' "qubit 1 appears twice" "a qubit under two letters"
bad_pauli '1 z:1,3,1' "qubit 1 appears twice" "a qubit twice in one list"
bad_pauli '1 z:0-4 x:2' "qubit 2 appears twice" "a qubit inside a range named again"
bad_pauli '1 x:5-3' "backward range 5-3" "a backward range"
bad_pauli '1 x:' "empty qubit list" "an empty list"
bad_pauli '1 x:1,' "bad qubit list .*trailing comma" "a trailing comma"
bad_pauli '1 x:1 x:3' "letter 'x' has two fields" "a letter twice"
bad_pauli '1 w:3' "unknown Pauli field 'w:3'" "an unknown letter"
bad_pauli '1 Z:3' "unknown Pauli field 'Z:3'" "an upper-case letter"
bad_pauli '1 z:03' "bad qubit list in 'z:03'" "a leading zero"
bad_pauli '1 z:1-2-3' "bad qubit list" "a range of three ends"
bad_pauli '1 z:1 @2 x:3' "group label '@2' must be the last field" "a label before a letter"

# ---- version 2 fermion
runlam_in $'0.5 1 3 / 2 0\n' lam-sum --kind fermion
is "$(printf '%s\n' "$OUT" | grep -v '^#')" "0.5 3 1 / 0 2" \
   "fermion: canonical order, creators descending, annihilators ascending (two swaps: sign +)"
runlam_in $'0.5 1 3 / 0\n' lam-sum --kind fermion
is "$(printf '%s\n' "$OUT" | grep -v '^#')" "-0.5 3 1 / 0" "fermion: one swap brings a minus sign"
bad_fermion() { # bad_fermion TERM MESSAGE-REGEX NAME
    printf '#%% kind: fermion\n0.5 1 / 0\n%s\n' "$1" > "$TMP/badf.op"
    runlam lam-norm "$TMP/badf.op"
    is "$RC" 65 "$3: exit 65"
    like "$ERR" "^lam-norm: $TMP/badf.op:3: $2" "$3: file, line and reason"
}
bad_fermion '1 1 0' "a fermion term needs a '/'" "a fermion term without '/'"
bad_fermion '1 1 / 0 / 2' "a fermion term has one '/', this one two" "two '/'"
bad_fermion '1 2 2 / 0' "mode 2 is created twice" "a mode created twice"
bad_fermion '1 2 / 0 0' "mode 0 is annihilated twice" "a mode annihilated twice"
bad_fermion '1 2 / x' "'x' is not a mode" "a field that is not a mode"
bad_fermion '1 2+ 0-' "a version-1 term in a version-2 stream" "a version-1 term among version-2 terms"

# ---- version 1, read for one release of grace
printf '#%% lamina-op 1\n#%% kind: pauli\n-0.5\n0.25 X0 Z1 Z2 X3 Y5 @1\n0.5 Z4 @1\n#%% end\n' > "$TMP/v1.op"
printf '#%% lamina-op 2\n#%% kind: pauli\n-0.5\n0.25 x:0,3 y:5 z:1-2 @1\n0.5 z:4 @1\n#%% end\n' > "$TMP/v2.op"
runlam lam-norm -l same "$TMP/v1.op"
is "$RC" 0 "a version-1 pauli stream is read"
V1=$OUT
runlam lam-norm -l same "$TMP/v2.op"
is "$V1" "$OUT" "version 1 and its version-2 spelling report the same"
runlam lam-sum "$TMP/v1.op"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | tr '\n' ';')" "-0.5;0.25 x:0,3 y:5 z:1-2 @1;0.5 z:4 @1;" \
   "a version-1 stream is written back in version 2"
like "$OUT" '^#% lamina-op 2' "every writer writes version 2"
runlam_in $'0.5 3+ 1+ 0- 2-\n-0.5 1- 0+\n' lam-sum
is "$(printf '%s\n' "$OUT" | grep -v '^#' | tr '\n' ';')" "0.5 3 1 / 0 2;0.5 0 / 1;" \
   "headerless version-1 fermion terms, one not normal ordered, written in version 2"
runlam_in $'0.5 X0 Y1\n0.5 x:2\n' lam-norm
is "$RC" 65 "a version-2 term in a version-1 stream: exit 65"
like "$ERR" "<stdin>:2: a version-2 term in a version-1 stream" "mixed spellings named at the line"
printf '#%% lamina-op 1\n#%% kind: pauli\n0.5 x:0\n#%% end\n' > "$TMP/v1bad.op"
runlam lam-norm "$TMP/v1bad.op"
like "$ERR" "v1bad.op:3: a version-2 term in a version-1 stream" "a version-1 header fixes the spelling"

# ---- coefficients too large: every program that reads streams refuses
# them at their line (|c| > 1e100), never computes inf or NaN
printf '0.5 z:0\n0.25 x:1\n1e200 z:1\n' > "$TMP/huge.pauli"
printf '#%% kind: spinfree\n#%% orbitals: 2\n#%% electrons: 2\n-0.5 0 0\n1e200 1 1\n' > "$TMP/huge.sf"
huge() { # huge PROG FILE ARGS...
    local p=$1 f=$2; shift 2
    runlam "$p" "$@" "$f"
    is "$RC" 65 "$p: |c| = 1e200 refused with exit 65"
    like "$ERR" "^$p: $f:[35]: coefficient '1e200' is too large" "$p: names file and line"
    is "$OUT" "" "$p: nothing on stdout"
}
huge lam-norm "$TMP/huge.pauli"
huge lam-group "$TMP/huge.pauli"
huge lam-sum "$TMP/huge.pauli"
huge lam-range "$TMP/huge.pauli" --quiet
huge lam-cost "$TMP/huge.pauli" --quiet
huge lam-map "$TMP/huge.sf"
huge lam-shift "$TMP/huge.sf" --quiet
huge lam-factor "$TMP/huge.sf"
runlam_in $'1e100 z:0\n-1e100 x:0\n' lam-norm
is "$(report_get lambda <<<"$OUT")" 2e+100 "|c| = 1e100 is still read"
runlam_in $'1e100 z:0 @0\n1e100 x:0 @0\n' lam-group --quiet
is "$RC" 0 "lam-group: 1e100 at the limit, no crash"
# tiny magnitudes, subnormal included, are read as they are
runlam_in $'4.9406564584124654e-324 z:0\n1e-310 x:1\n-2e-320 y:2\n' lam-norm
is "$RC" 0 "subnormal coefficients read"
# every subnormal is a multiple of the smallest, so this sum is exact
# (awk cannot compare numbers this small: compare the 17 digits)
is "$(report_get lambda <<<"$OUT")" 1.0000000002000441e-310 "subnormal coefficients summed exactly"
runlam_in $'1e-310 z:0 @0\n1e-310 x:0 @0\n' lam-norm
like "$(report_get lambda_grouped <<<"$OUT")" '^1\.41421356[0-9]*e-310$' \
   "grouped norm of subnormal coefficients: sqrt(2) x 1e-310, no underflow to zero"

# ---- empty input: refused unless --allow-empty; a header alone is zero
: > "$TMP/empty"
printf '# a comment only\n\n' > "$TMP/comment"
printf '#%% lamina-op 2\n#%% kind: pauli\n#%% end\n' > "$TMP/zero.pauli"
empty() { # empty PROG ARGS...
    local p=$1; shift
    runlam "$p" "$@" "$TMP/empty"
    is "$RC" 65 "$p: empty input: exit 65"
    like "$ERR" "^$p: $TMP/empty: empty input: no header and no terms" "$p: empty input named"
    is "$OUT" "" "$p: empty input: nothing on stdout"
    runlam "$p" "$@" "$TMP/comment"
    like "$ERR" "^$p: $TMP/comment: empty input" "$p: comments only is empty too"
    runlam "$p" --allow-empty "$@" "$TMP/empty"
    unlike=$(printf '%s' "$ERR" | grep -c "empty input")
    is "$unlike" 0 "$p --allow-empty: the empty input is not refused as empty"
}
empty lam-norm
empty lam-group
empty lam-map
empty lam-sum
empty lam-shift --quiet
empty lam-range --quiet
empty lam-factor
empty lam-cost --quiet
# the zero operator of no kind: a program that needs one wants --kind
runlam lam-norm --allow-empty "$TMP/empty"
like "$ERR" "give --kind" "lam-norm --allow-empty without a kind asks for --kind"
runlam lam-norm --allow-empty --kind pauli "$TMP/empty"
is "$RC" 0 "lam-norm --allow-empty: exit 0"
is "$(report_get lambda <<<"$OUT")" 0 "lam-norm --allow-empty: the zero operator"
runlam lam-sum --allow-empty "$TMP/empty"
is "$RC" 0 "lam-sum --allow-empty: exit 0"
runlam lam-norm "$TMP/zero.pauli"
is "$RC" 0 "a header and no terms: a valid zero operator"
is "$(report_get lambda <<<"$OUT")" 0 "a header and no terms: lambda 0"
OUT=$( (lam lam-ints "$TMP/missing.fcidump" | lam lam-sum | lam lam-norm) 2>"$TMP/err"); RC=$?
isnt_zero=$([ "$RC" -ne 0 ] && echo yes || echo no)
is "$isnt_zero" yes "lam-ints missing | lam-sum | lam-norm fails"
is "$OUT" "" "the failed pipeline prints no lambda"
like "$(cat "$TMP/err")" "lam-sum: <stdin>: empty input" "lam-sum names the empty input"
OUT=$(printf '' | lam lam-group 2>"$TMP/err"); RC=$?
is "$RC" 65 "lam-group writes no empty stream for an empty input"
is "$OUT" "" "lam-group: nothing on stdout"

done_testing
