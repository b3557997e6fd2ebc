#!/bin/bash
# bench/map.sh - lam-map and lam-norm on synthetic spinfree operators with
# 10, 20, 30 and 40 orbitals, every integral non-zero with the 8-fold
# symmetry of real orbitals (bench/gen-ops.c).  Prints time and peak memory
# side by side; the lambda of the closed form and of the mapped Pauli
# strings are printed together (they must agree).  Asserts nothing.
# Goals (issue 2): 40 orbitals mapped in under a minute on 2 cores; lambda
# of 40 orbitals from the closed form in under a second.
#   BENCH_ORBITALS   list of orbital counts (default "10 20 30 40")
#   BENCH_ENCODING   encoding for lam-map (default jordan-wigner)
set -euo pipefail
ROOT=$(cd "$(dirname "$0")/.." && pwd)
LAM_BIN=${LAM_BIN:-$ROOT/bin}
SIZES=${BENCH_ORBITALS:-10 20 30 40}
ENC=${BENCH_ENCODING:-jordan-wigner}
DIR=$ROOT/build/bench
mkdir -p "$DIR"
gcc -std=c11 -O2 -o "$DIR/gen-ops" "$ROOT/bench/gen-ops.c"

# "wall_s cpu_s peak_kb" of one command, its stdout to $2
measure() {
    local out=$DIR/time.$$ dest=$1; shift
    /usr/bin/time -f "%e %U %S %M" -o "$out" "$@" > "$dest"
    awk '{ printf "%8.2f %8.2f %9d", $1, $2 + $3, $4 }' "$out"
    rm -f "$out"
}
key() { awk -F'\t' -v k="$1" '$1 == k { print $2 }' "$2"; }

printf '%4s %10s | %-28s | %-28s | %-28s | %10s %-21s %s\n' orb sf_terms \
    "lam-map: wall cpu peak_kb" "lam-norm spinfree" "lam-norm pauli" pauli_terms lambda rel_diff
for n in $SIZES; do
    SF=$DIR/spinfree-$n.op
    [ -s "$SF" ] || "$DIR/gen-ops" spinfree "$n" > "$SF"
    SFTERMS=$(grep -vc '^#' "$SF")
    MAP=$(measure /dev/null "$LAM_BIN/lam-map" --quiet -e "$ENC" -o "$DIR/pauli-$n.op" "$SF")
    NSF=$(measure "$DIR/norm-sf-$n" "$LAM_BIN/lam-norm" "$SF")
    NP=$(measure "$DIR/norm-p-$n" "$LAM_BIN/lam-norm" "$DIR/pauli-$n.op")
    L1=$(key lambda "$DIR/norm-sf-$n")
    L2=$(key lambda "$DIR/norm-p-$n")
    REL=$(awk -v a="$L1" -v b="$L2" 'BEGIN { d = (a - b) / a; printf "%.1e", d < 0 ? -d : d }')
    printf '%4d %10d | %s | %s | %s | %10s %-21s %s\n' "$n" "$SFTERMS" "$MAP" "$NSF" "$NP" \
        "$(key terms "$DIR/norm-p-$n")" "$L1" "$REL"
    rm -f "$DIR/pauli-$n.op" "$DIR/norm-sf-$n" "$DIR/norm-p-$n"
done
