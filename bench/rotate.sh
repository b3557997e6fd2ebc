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
#
# `bench/rotate.sh table` prints instead the table of lam-rotate(1): for
# each test molecule (psi4 FCIDUMPs of tests/lib/molecules.py) lambda in
# canonical orbitals and rotated for each objective (pauli, shifted,
# grouped), each measured by the suite's own programs (lam-norm, lam-shift,
# lam-map | lam-group | lam-norm), and the N-block floor of lam-range.
set -e
LAM_BIN=${LAM_BIN:-$(cd "$(dirname "$0")/.." && pwd)/bin}
ATOMS=${ATOMS:-"50 100"}
THREADS=${THREADS:-2}
ROTATE_ARGS=${ROTATE_ARGS:-"--start er"}
WORK=$(mktemp -d "${TMPDIR:-/tmp}/lam-rotate-bench.XXXXXX")
trap 'rm -rf "$WORK"' EXIT

if [ "${1:-}" = table ]; then
    export OPENBLAS_NUM_THREADS=1
    ROOT=$(cd "$(dirname "$0")/.." && pwd)
    MOLS=${MOLS:-"h2 h3plus h4chain lih hf h2o beh2"}
    pauli() { "$LAM_BIN/lam-norm" "$1" | awk -F'\t' '$1 == "lambda" { print $2 }'; }
    shifted() { "$LAM_BIN/lam-shift" --report "$WORK/s.rep" "$1" >"$WORK/s.op"
                awk -F'\t' '$1 == "lambda_after" { print $2 }' "$WORK/s.rep"; }
    grouped() { "$LAM_BIN/lam-shift" --report /dev/null "$1" | "$LAM_BIN/lam-map" \
                | "$LAM_BIN/lam-group" 2>/dev/null | "$LAM_BIN/lam-norm" \
                | awk -F'\t' '$1 == "lambda_grouped" { print $2 }'; }
    printf 'molecule\torbitals\tpauli_can\tpauli_rot\tshifted_can\tshifted_rot\tgrouped_can\tgrouped_rot\tgrouped_change\tfloor\tcpu_s\n'
    for m in $MOLS; do
        f=$(/usr/bin/python3 -c "import sys; sys.path.insert(0, '$ROOT/tests/lib'); import molecules; print(molecules.reference('$m')[0])")
        "$LAM_BIN/lam-ints" "$f" >"$WORK/$m.op"
        cpu=0
        for obj in pauli shifted grouped; do
            # shellcheck disable=SC2086
            "$LAM_BIN/lam-rotate" -q --objective $obj ${TABLE_ARGS:-} -r "$WORK/r.rep" "$WORK/$m.op" >"$WORK/$m.$obj"
            cpu=$(awk -F'\t' -v c="$cpu" '$1 == "cpu_seconds" { print c + $2 }' "$WORK/r.rep")
        done
        gc=$(grouped "$WORK/$m.op"); gr=$(grouped "$WORK/$m.grouped")
        printf '%s\t%s\t%.4f\t%.4f\t%.4f\t%.4f\t%.4f\t%.4f\t%+.1f%%\t%.4f\t%.1f\n' "$m" \
            "$(awk -F': ' '$1 == "#% orbitals" { print $2 }' "$WORK/$m.op")" \
            "$(pauli "$WORK/$m.op")" "$(pauli "$WORK/$m.pauli")" \
            "$(shifted "$WORK/$m.op")" "$(shifted "$WORK/$m.shifted")" \
            "$gc" "$gr" "$(awk -v a="$gr" -v b="$gc" 'BEGIN { print 100 * (a - b) / b }')" \
            "$("$LAM_BIN/lam-range" "$WORK/$m.op" | awk -F'\t' '$1 == "n_half_range" { print $2 }')" "$cpu"
    done
    exit 0
fi

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
