#!/bin/bash
# bench/cost.sh - how the per-step Toffolis of each construction of
# lam-cost grow with the orbital count, on linear hydrogen chains H_n
# (STO-3G, one orbital per atom, 0.9 A spacing: our own geometry), n from
# 10 to 60 (BENCH_COST_SIZES to change; grouping only up to
# BENCH_COST_GROUP_MAX atoms, it is the slow step).
#
# Pipelines from this tree's bin/: lam-scf -> lam-ints -> lam-map
# (-> lam-group) and lam-ints -> lam-factor, each priced by lam-cost -C.
# The fit is least squares of log(step.toffoli) on log(orbitals); the
# published exponents beside it are those of the constructions' papers for
# a dense Hamiltonian (from memory).  A chain is sparse, so the measured
# exponents of the term-based forms fall below the dense ones.  Nothing is
# asserted.  Times are wall and CPU seconds of lam-cost alone, one thread.
set -euo pipefail
LAM_BIN=${LAM_BIN:-$(cd "$(dirname "$0")/.." && pwd)/bin}
SIZES=${BENCH_COST_SIZES:-10 20 30 40 50 60}
GROUP_MAX=${BENCH_COST_GROUP_MAX:-20}
export OPENBLAS_NUM_THREADS=1
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT

chain() { # chain N: xyz of H_N along z
    awk -v n="$1" 'BEGIN { print n; print "H" n " chain, 0.9 A"
        for (i = 0; i < n; i++) printf "H 0 0 %.4f\n", 0.9 * i }'
}

# timed OUT CMD...: run CMD with stdout to OUT; prints "wall cpu"
timed() {
    local out=$1; shift
    local t
    t=$( { TIMEFORMAT='%R %U %S'; time "$@" > "$out" 2>/dev/null; } 2>&1 )
    awk -v t="$t" 'BEGIN { split(t, a, " "); printf "%.2f %.2f", a[1], a[2] + a[3] }'
}

# row N CONSTRUCTION FORM TABLE: step.toffoli of that row of a -C table
step_of() {
    awk -F'\t' -v c="$1" -v f="$2" '$3 == c && $2 == f { print $6 }' "$3"
}

printf '# load: %s (2 cores shared; times are indicative only)\n' "$(cut -d' ' -f1-3 /proc/loadavg)"
printf '%-5s %8s %9s %10s %10s %10s %10s %10s %14s %14s\n' atoms orbitals strings sparse flat-pauli \
    grouped df flat-df cost_pauli_s cost_frag_s
: > "$dir/fit.txt"
for n in $SIZES; do
    chain "$n" | "$LAM_BIN/lam-scf" -q 2>/dev/null > "$dir/h.fcidump"
    "$LAM_BIN/lam-ints" "$dir/h.fcidump" > "$dir/h.sf"
    "$LAM_BIN/lam-factor" "$dir/h.sf" > "$dir/h.frag"
    "$LAM_BIN/lam-map" "$dir/h.sf" > "$dir/h.pauli"
    strings=$(grep -vc '^#' "$dir/h.pauli")
    tp=$(timed "$dir/p.tab" "$LAM_BIN/lam-cost" -q -C "$dir/h.pauli")
    tf=$(timed "$dir/f.tab" "$LAM_BIN/lam-cost" -q -C "$dir/h.frag")
    grouped=-
    if [ "$n" -le "$GROUP_MAX" ]; then
        "$LAM_BIN/lam-group" -q --report /dev/null "$dir/h.pauli" > "$dir/h.grouped"
        "$LAM_BIN/lam-cost" -q "$dir/h.grouped" | awk -F'\t' '$1 == "step.toffoli" { print $2 }' > "$dir/g"
        grouped=$(cat "$dir/g")
    fi
    rm -f "$dir/h.pauli" "$dir/h.grouped"
    sparse=$(step_of sparse pauli "$dir/p.tab")
    flatp=$(step_of flat pauli "$dir/p.tab")
    df=$(step_of df fragments "$dir/f.tab")
    flatf=$(step_of flat fragments "$dir/f.tab")
    printf '%-5s %8s %9s %10s %10s %10s %10s %10s %14s %14s\n' "$n" "$n" "$strings" "$sparse" "$flatp" \
        "$grouped" "$df" "$flatf" "$tp" "$tf"
    printf '%s %s %s %s %s %s\n' "$n" "$sparse" "$flatp" "$grouped" "$df" "$flatf" >> "$dir/fit.txt"
done

# Least-squares slope of log(y) on log(orbitals), per column.
echo
printf '%-12s %10s   %s\n' construction exponent "published, dense Hamiltonian (from memory)"
fit() {
    awk -v col="$1" '$col != "-" { x = log($1); y = log($col); n++; sx += x; sy += y; sxx += x * x; sxy += x * y }
        END { if (n < 2) { print "-"; exit } printf "%.2f", (n * sxy - sx * sy) / (n * sxx - sx * sx) }' "$dir/fit.txt"
}
printf '%-12s %10s   %s\n' sparse "$(fit 2)" "~2: O(sqrt(d m)), d ~ N^4 terms, m ~ log N index bits (Berry et al., Quantum 3, 208 (2019)); ~2.5 with the 2N-bit Pauli masks loaded here"
printf '%-12s %10s   %s\n' flat-pauli "$(fit 3)" "~4: O(L), L ~ N^4 unitaries (unary iteration; Babbush et al., PRX 8, 041015 (2018))"
printf '%-12s %10s   %s\n' grouped "$(fit 4)" "no published exponent; O(strings) rotations in the branches of this construction"
printf '%-12s %10s   %s\n' df "$(fit 5)" "~1.5: O(sqrt(N Xi beta) + N beta), Xi ~ N^2 (von Burg et al. 2021; Lee et al. 2021); beta grows with log N here"
printf '%-12s %10s   %s\n' flat-df "$(fit 6)" "~4: O(L), L ~ N^4 unitaries (N^2 factors x 2N^2 pairs each)"
