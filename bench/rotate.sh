#!/bin/bash
# bench/rotate.sh - lam-rotate on hydrogen chains (1.0 A spacing, STO-3G,
# canonical RHF integrals from lam-scf): Pauli lambda before and after,
# CPU and wall seconds, threads.
#
# Goals (issue 12): 50 atoms: lambda <= 161.5 Eh (the figure of
# symmetrically orthogonalized atomic orbitals, measured with an independent
# reference; canonical orbitals give 1923.5 Eh) in under 5 minutes on 2
# cores; 100 atoms finish in under 30 minutes.  Nothing is asserted.
#
# ATOMS overrides the chain lengths (default "50 100"); ROTATE_ARGS the
# options (default --start er).  The machine may be shared: CPU seconds are
# the figure to compare, wall seconds depend on the load.
set -e
LAM_BIN=${LAM_BIN:-$(cd "$(dirname "$0")/.." && pwd)/bin}
ATOMS=${ATOMS:-"50 100"}
THREADS=${THREADS:-2}
ROTATE_ARGS=${ROTATE_ARGS:-"--start er"}
WORK=$(mktemp -d "${TMPDIR:-/tmp}/lam-rotate-bench.XXXXXX")
trap 'rm -rf "$WORK"' EXIT

echo "# machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ //')"
echo "# load: $(cut -d' ' -f1-3 /proc/loadavg)"
printf 'atoms\torbitals\tlambda_before\tlambda_after\treference\titerations\tcpu_s\twall_s\tthreads\tpeak_MB\n'
for n in $ATOMS; do
    awk -v n="$n" 'BEGIN { print n; print "hydrogen chain, 1.0 A"; for (i = 0; i < n; ++i) printf "H 0 0 %.4f\n", i }' \
        >"$WORK/h$n.xyz"
    OPENBLAS_NUM_THREADS=$THREADS "$LAM_BIN/lam-scf" "$WORK/h$n.xyz" 2>/dev/null \
        | "$LAM_BIN/lam-ints" >"$WORK/h$n.op"
    # shellcheck disable=SC2086
    /usr/bin/time -v -o "$WORK/time" "$LAM_BIN/lam-rotate" -j "$THREADS" $ROTATE_ARGS -q \
        -r "$WORK/rep" "$WORK/h$n.op" >"$WORK/h$n.rot"
    get() { awk -F'\t' -v k="$1" '$1 == k { print $2 }' "$WORK/rep"; }
    peak=$(awk -F': ' '/Maximum resident/ { printf "%.0f", $2 / 1024 }' "$WORK/time")
    ref=$([ "$n" = 50 ] && echo "<=161.5" || echo "-")
    printf '%s\t%s\t%.4f\t%.4f\t%s\t%s\t%.1f\t%.1f\t%s\t%s\n' "$n" "$(get orbitals)" \
        "$(get lambda_before)" "$(get lambda_after)" "$ref" "$(get iterations)" \
        "$(get cpu_seconds)" "$(get seconds)" "$(get threads)" "$peak"
done
