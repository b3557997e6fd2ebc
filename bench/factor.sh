#!/bin/bash
# lam-factor: one-norm of the fragments (double factorization, greedy
# full-rank) beside the Pauli one-norm of the same operator and the
# Fock-space floor (E_max - E_min)/2 from lam-range, for H and for H - K from
# lam-shift; fragment and unitary counts; wall time of lam-factor.
# Measures only: nothing is asserted.
set -u
ROOT=$(cd "$(dirname "$0")/.." && pwd)
BIN=${LAM_BIN:-$ROOT/bin}
TMP=$(mktemp -d)
trap 'rm -rf "$TMP"' EXIT
export OPENBLAS_NUM_THREADS=${OPENBLAS_NUM_THREADS:-1}
MOLS=${FACTOR_BENCH_MOLECULES:-"h2 h3plus h4chain lih h2o"}

key() { awk -F'\t' -v k="$1" '$1 == k { print $2; exit }' "$2"; }

printf '%-8s %-5s %9s %9s %9s %9s %7s %7s %8s %8s\n' molecule op pauli double full_rank floor \
    F_dbl F_full t_dbl_s t_full_s
for m in $MOLS; do
    fcid=$(/usr/bin/python3 "$ROOT/tests/lib/molecules.py" "$m" | awk '{ print $2 }') || exit 1
    "$BIN/lam-ints" "$fcid" >"$TMP/H.sf" || exit 1
    "$BIN/lam-shift" --report /dev/null "$TMP/H.sf" >"$TMP/HK.sf" || exit 1
    for op in H HK; do
        t0=$(date +%s.%N)
        "$BIN/lam-factor" -r "$TMP/d" -o /dev/null "$TMP/$op.sf" || exit 1
        t1=$(date +%s.%N)
        "$BIN/lam-factor" -m full-rank -r "$TMP/f" -o /dev/null "$TMP/$op.sf" || exit 1
        t2=$(date +%s.%N)
        floor=$("$BIN/lam-range" "$TMP/$op.sf" | awk -F'\t' '$1 == "fock_half_range" { print $2 }')
        printf '%-8s %-5s %9.4f %9.4f %9.4f %9.4f %7d %7d %8.2f %8.2f\n' "$m" \
            "$([ $op = H ] && echo H || echo H-K)" \
            "$(key lambda.pauli "$TMP/d")" "$(key lambda "$TMP/d")" "$(key lambda "$TMP/f")" \
            "${floor:-nan}" "$(key fragments "$TMP/d")" "$(key fragments "$TMP/f")" \
            "$(echo "$t1 - $t0" | bc)" "$(echo "$t2 - $t1" | bc)"
    done
done
echo "pauli: closed-form Majorana one-norm (Koridon et al. 2021); floor: lam-range fock_half_range;"
echo "F: fragments including the one-body fragment; lambda in Eh; every lambda must stay >= floor."
