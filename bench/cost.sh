#!/bin/bash
# bench/cost.sh - lam-cost beside lam-norm on the same pauli streams.
#
# lam-cost reads the stream, merges repeated strings and counts; lam-norm
# reads and sums.  The figures show what the estimate costs on top of the
# one-norm (nothing asserted).  Streams: random Pauli strings from
# bench/gen-ops.c, 10^5 and 10^6 terms on 40 qubits, plain and grouped
# through lam-group (10^5 only: grouping is the slow step, not lam-cost).
set -euo pipefail
LAM_BIN=${LAM_BIN:-$(cd "$(dirname "$0")/.." && pwd)/bin}
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT
cc -std=c11 -O2 -o "$dir/gen-ops" "$(dirname "$0")/gen-ops.c"

seconds() { # seconds CMD... : wall-clock seconds of one run, output dropped
    local t0 t1
    t0=$(date +%s.%N); "$@" >/dev/null 2>&1; t1=$(date +%s.%N)
    awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.3f", b - a }'
}

printf '%-22s %10s %10s %10s %14s\n' stream terms lam-norm_s lam-cost_s walk_steps
for n in 100000 1000000; do
    "$dir/gen-ops" pauli "$n" 40 7 > "$dir/p$n.op"
    steps=$("$LAM_BIN/lam-cost" -q "$dir/p$n.op" | awk -F'\t' '$1 == "walk_steps" { print $2 }')
    printf '%-22s %10s %10s %10s %14s\n' "pauli" "$n" \
        "$(seconds "$LAM_BIN/lam-norm" "$dir/p$n.op")" "$(seconds "$LAM_BIN/lam-cost" -q "$dir/p$n.op")" "$steps"
done
"$LAM_BIN/lam-group" --quiet --report /dev/null -o "$dir/g.op" "$dir/p100000.op"
steps=$("$LAM_BIN/lam-cost" -q "$dir/g.op" | awk -F'\t' '$1 == "walk_steps" { print $2 }')
printf '%-22s %10s %10s %10s %14s\n' "pauli, grouped" 100000 \
    "$(seconds "$LAM_BIN/lam-norm" "$dir/g.op")" "$(seconds "$LAM_BIN/lam-cost" -q "$dir/g.op")" "$steps"
