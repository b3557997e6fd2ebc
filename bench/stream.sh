#!/bin/bash
# bench/stream.sh - reading speed: lam-norm on a large pauli stream against
# awk summing |c| over the same file, with `cat FILE >/dev/null` as the floor.
# Goal (issue 2): lam-norm at most half of awk's time.  Prints figures only.
#   BENCH_TERMS   number of terms (default 10000000)
#   BENCH_QUBITS  qubits (default 50)
set -euo pipefail
ROOT=$(cd "$(dirname "$0")/.." && pwd)
LAM_BIN=${LAM_BIN:-$ROOT/bin}
TERMS=${BENCH_TERMS:-10000000}
QUBITS=${BENCH_QUBITS:-50}
DIR=$ROOT/build/bench
mkdir -p "$DIR"
gcc -std=c11 -O2 -o "$DIR/gen-ops" "$ROOT/bench/gen-ops.c"
RAW=$DIR/pauli-$TERMS-$QUBITS.op
FILE=$DIR/pauli-$TERMS-$QUBITS-merged.op
[ -s "$RAW" ] || "$DIR/gen-ops" pauli "$TERMS" "$QUBITS" > "$RAW"
# The stream as a program of the suite writes it: merged, so its header
# says "distinct: yes" and lam-norm sums it in one pass.  The raw
# generator output (no such line) takes lam-norm's merging path.
[ -s "$FILE" ] || "$LAM_BIN/lam-sum" -o "$FILE" "$RAW"

# wall seconds, user+system seconds, peak resident KB of one command
measure() {
    local out=$DIR/time.$$
    /usr/bin/time -f "%e %U %S %M" -o "$out" "$@" > "$DIR/stdout.$$"
    awk '{ printf "%8.2f %8.2f %9d", $1, $2 + $3, $4 }' "$out"
    rm -f "$out"
}

printf 'file: %s (%d terms, %d qubits, %s bytes)\n' "$FILE" "$TERMS" "$QUBITS" "$(stat -c %s "$FILE")"
printf '%-34s %8s %8s %9s\n' "command" "wall_s" "cpu_s" "peak_kb"
cat "$FILE" > /dev/null # warm the page cache once
printf '%-34s %s\n' "cat FILE >/dev/null (floor)" "$(measure cat "$FILE")"
AWK=$(measure awk '{s += ($1 < 0 ? -$1 : $1)} END {printf "%.17g\n", s}' "$FILE")
printf '%-34s %s\n' "awk sum |c|" "$AWK"
NORM=$(measure "$LAM_BIN/lam-norm" "$FILE")
printf '%-34s %s\n' "lam-norm (distinct: one pass)" "$NORM"
MERGE=$(measure "$LAM_BIN/lam-norm" "$RAW")
printf '%-34s %s\n' "lam-norm, raw file (hash merge)" "$MERGE"
printf 'lambda: awk %s, lam-norm %s\n' "$(awk '{s += ($1 < 0 ? -$1 : $1)} END {printf "%.17g", s}' "$FILE")" \
    "$("$LAM_BIN/lam-norm" "$FILE" | awk -F'\t' '$1 == "lambda" || $1 == "constant" { s += ($2 < 0 ? -$2 : $2) } END { printf "%.17g", s }')"
awk -v a="$AWK" -v n="$NORM" 'BEGIN { split(a, x, " "); split(n, y, " ");
    printf "lam-norm / awk: wall %.2f, cpu %.2f (goal <= 0.5)\n", y[1] / x[1], y[2] / x[2] }'
rm -f "$DIR/stdout.$$"
