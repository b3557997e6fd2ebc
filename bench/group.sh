#!/bin/bash
# bench/group.sh - lam-group on large synthetic Jordan-Wigner streams.
#
#   bench/group.sh [ORBITALS...]     (default: 20 30; add 50 for ~10^7 terms)
#
# Each operator is a synthetic FCIDUMP (bench/group-fcidump.awk: every
# integral of the 8-fold symmetry present, magnitudes falling off with
# orbital distance), turned into a pauli stream by lam-ints | lam-map:
# 20 orbitals give about 2.3e5 terms, 30 about 1.2e6, 50 about 9e6.
# For each method: wall and CPU seconds, peak memory (/usr/bin/time), groups
# and lambda_grouped beside the ungrouped lambda.  Nothing is asserted.
set -eu
BIN=${LAM_BIN:-$(cd "$(dirname "$0")/.." && pwd)/bin}
HERE=$(cd "$(dirname "$0")" && pwd)
WORK=${LAM_BENCH_DIR:-$HERE/../build/bench}
mkdir -p "$WORK"
sizes=${*:-20 30}

stream() { # orbitals -> path of the pauli stream (built once)
    local n=$1 f="$WORK/group-syn$1.pauli.gz"
    if [ ! -s "$f" ]; then
        awk -v n="$n" -f "$HERE/group-fcidump.awk" >"$WORK/group-syn$n.fcidump"
        "$BIN/lam-ints" "$WORK/group-syn$n.fcidump" | "$BIN/lam-map" -z -o "$f.tmp"
        mv "$f.tmp" "$f"
        rm -f "$WORK/group-syn$n.fcidump"
    fi
    echo "$f"
}

printf '%-8s %-10s %-26s %9s %9s %9s %8s %20s %20s %7s\n' orbitals terms method wall_s cpu_s rss_MB \
    groups lambda lambda_grouped ratio
for n in $sizes; do
    f=$(stream "$n")
    for method in "sorted:-m sorted --refine 0 --no-split" "best:-m best --refine 0 --no-split" \
                  "sorted+refine+split:-m sorted --refine 8 --split"; do
        name=${method%%:*} args=${method#*:}
        # the full treatment on ~10^7 terms takes far longer; run it by hand
        if [ "$n" -ge 50 ] && [ "$name" != sorted ]; then continue; fi
        /usr/bin/time -f '%e %U %M' -o "$WORK/time" "$BIN/lam-group" $args --quiet \
            --report "$WORK/report" "$f" >/dev/null
        read -r wall cpu rss <"$WORK/time"
        get() { awk -F'\t' -v k="$1" '$1 == k { print $2 }' "$WORK/report"; }
        printf '%-8s %-10s %-26s %9s %9s %9d %8s %20s %20s %7.4f\n' "$n" "$(get terms)" "$name" \
            "$wall" "$cpu" $((rss / 1024)) "$(get groups)" "$(get lambda)" "$(get lambda_grouped)" \
            "$(awk -v a="$(get lambda_grouped)" -v b="$(get lambda)" 'BEGIN { print a / b }')"
    done
done
