#!/bin/bash
# bench/sci.sh - inner bounds by selected CI past exact size (lam-range --bounds).
#
# Hydrogen chains of our own (H-H 1.0 angstrom, STO-3G, orbitals from
# lam-scf), the N, Sz = 0 sector, both ends:
#   H30: 30 orbitals, 30 electrons (target: under 5 minutes on 2 cores)
#   H60: 60 orbitals, 60 electrons (target: under 20 minutes)
# with BUDGET determinants a end (default 100000 for H30, 50000 for H60)
# and --max-memory MEM (default 2G).  Prints the bounds, the second-order
# estimates (not bounds), the space sizes, wall and CPU seconds, the peak
# resident memory beside --max-memory, threads and the machine load (the
# machine may be shared: CPU seconds are the fairer figure).  No exact
# value exists at these sizes; bench/range.sh and tests/sci-ref.t compare
# with full CI where it is feasible.  Asserts no time.
set -u
LAM_BIN=${LAM_BIN:-$(cd "$(dirname "$0")/.." && pwd)/bin}
ROOT=$(cd "$(dirname "$0")/.." && pwd)
W=$ROOT/build/bench-sci
MEM=${MEM:-2G}
SIZES=${SIZES:-"30 60"}
mkdir -p "$W"
cd "$W" || exit 1
export OPENBLAS_NUM_THREADS=1

chain() { # chain N: xyz of N hydrogens 1.0 angstrom apart
    printf '%d\nH%d chain\n' "$1" "$1"
    for ((i = 0; i < $1; ++i)); do echo "H 0 0 $i.0"; done
}
get() { awk -F'\t' -v k="$1" '$1 == k { print $2 }' "$2"; }
timing() { # wall cpu peak_kb from /usr/bin/time -v output
    awk -F': ' '/Elapsed \(wall clock\)/ { n = split($2, t, ":"); s = 0; for (i = 1; i <= n; ++i) s = s * 60 + t[i]; w = s }
                /User time|System time/ { c += $2 }
                /Maximum resident set size/ { m = $2 }
                END { printf "%s %.1f %s", w, c, m }' "$1"
}

for n in $SIZES; do
    [ -s h$n.op ] || chain "$n" | "$LAM_BIN/lam-scf" 2>/dev/null | "$LAM_BIN/lam-ints" > h$n.op
    budget=${BUDGET:-$([ "$n" -le 30 ] && echo 100000 || echo 50000)}
    half=$((n / 2))
    echo "== H$n chain, STO-3G: $n orbitals, sector ($half,$half), both ends, budget $budget a end, --max-memory $MEM"
    echo "   threads: 1; load: $(cut -d' ' -f1-3 /proc/loadavg)"
    /usr/bin/time -v "$LAM_BIN/lam-range" --quiet --sector $half,$half --bounds=always \
        --bound-subspace "$budget" --max-memory "$MEM" h$n.op > h$n.report 2> h$n.time
    rc=$?
    read -r wall cpu kb < <(timing h$n.time)
    if [ $rc != 0 ]; then
        echo "   lam-range failed (exit $rc):"; grep lam-range h$n.time; continue
    fi
    printf '   lowest  bound %-22s estimate %-22s dets %s (%s)\n' "$(get sector_min h$n.report)" \
        "$(get sci.estimate_min h$n.report)" "$(get sci.dets_min h$n.report)" "$(get sci.stop_min h$n.report)"
    printf '   highest bound %-22s estimate %-22s dets %s (%s)\n' "$(get sector_max h$n.report)" \
        "$(get sci.estimate_max h$n.report)" "$(get sci.dets_max h$n.report)" "$(get sci.stop_max h$n.report)"
    printf '   certified half range %s Eh (estimate %s)\n' "$(get sector_half_range h$n.report)" \
        "$(get sci.half_range_estimate h$n.report)"
    target=$([ "$n" -le 30 ] && echo 300 || echo 1200)
    printf '   wall %s s, CPU %s s (target: under %s s), peak %.0f MiB (--max-memory %s)\n' \
        "$wall" "$cpu" "$target" "$(echo "$kb / 1024" | bc -l)" "$MEM"
done
