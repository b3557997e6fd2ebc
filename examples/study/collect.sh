#!/bin/bash
# collect.sh - turn the reports of one study directory into table rows.
#
#   collect.sh row DIR REP     one line: key, REP, lambda (lam-norm), unitaries,
#                              construction, lambda.walk, walk.steps,
#                              step.toffoli, run.toffoli, run.qubits (from
#                              DIR/REP.norm and DIR/REP.cost, both --tsv)
#   collect.sh floors DIR      one line: key, n_half_range, then
#                              fock_half_range of H, of H - K, and of the
#                              two rotated shifted operators (rs, rg) (from
#                              the lam-range reports)
#   collect.sh table ROWS FLOORS    join them into the study table (stdout)
#   collect.sh big ROWS BOUNDS the 30-orbital table: the rows of one
#                              geometry with the floor interval of its
#                              N-electron block (lam-range --sector bounds)
#   collect.sh wide TABLE      one line per geometry, one column per
#                              representation: lambda, the floors, then
#                              run.toffoli (for the plots)
#
# The key is MOLECULE:R, from the directory name MOLECULE-R.  lam-cost
# prices each representation by its own construction (lam-cost(1)):
# lambda.walk is the one-norm that construction's walk sees (for double
# factorization it counts the diagonal of each squared factor too, so it
# is not below lam-norm's lambda); run.toffoli includes the rotations.
set -euo pipefail
TAB=$'\t'

key_of() { local d; d=$(basename "$1"); printf '%s:%s' "${d%%-*}" "${d#*-}"; }

# text_get FILE KEY: the value of a key<TAB>value report line.
text_get() {
    awk -F'\t' -v k="$2" -v f="$1" '$1 == k { print $2; found = 1; exit }
        END { if (!found) { print "collect.sh: " f ": no line " k > "/dev/stderr"; exit 65 } }' "$1"
}

# One awk reads both --tsv reports: lam-norm's lambda (lambda_grouped for
# a grouped stream) must agree with the lambda lam-cost used, or, for the
# double-factorization walk, not exceed it.
row() {
    local dir=$1 rep=$2 lamkey=lambda
    case $rep in *grouped) lamkey=lambda_grouped ;; esac
    awk -F'\t' -v OFS='\t' -v key="$(key_of "$dir")" -v rep="$rep" -v lamkey="$lamkey" '
        FNR == 1 { delete col; for (i = 1; i <= NF; i++) col[$i] = i; next }
        FNR == 2 { for (k in col) v[FILENAME == ARGV[1] ? "norm" : "cost", k] = $col[k] }
        END {
            split("lambda construction walk.steps step.toffoli run.toffoli run.qubits unitaries", need, " ")
            for (i in need) if (!(("cost", need[i]) in v)) {
                print "collect.sh: " ARGV[2] ": no column " need[i] > "/dev/stderr"; exit 65 }
            if (!(("norm", lamkey) in v)) {
                print "collect.sh: " ARGV[1] ": no column " lamkey > "/dev/stderr"; exit 65 }
            a = v["norm", lamkey]; b = v["cost", "lambda"]; d = a - b; if (d < 0) d = -d
            tol = 1e-9 * (a < 0 ? -a : a)
            if (v["cost", "construction"] == "df" ? b < a - tol : d > tol) {
                print "collect.sh: " ARGV[1] ": lam-norm says lambda " a ", lam-cost (" v["cost", "construction"] ") " b > "/dev/stderr"; exit 65 }
            print key, rep, a, v["cost", "unitaries"], v["cost", "construction"], b, v["cost", "walk.steps"],
                  v["cost", "step.toffoli"], v["cost", "run.toffoli"], v["cost", "run.qubits"]
        }' "$dir/$rep.norm" "$dir/$rep.cost"
}

floors() {
    local dir=$1 r line
    line="$(key_of "$dir")\t$(text_get "$dir/range.report" n_half_range)"
    for r in range shift-range rs-shift-range rg-shift-range; do
        line+="\t$(text_get "$dir/$r.report" fock_half_range)"
    done
    printf '%b\n' "$line"
}

# The floor of a row is the Fock-space half range of the operator it
# represents (H; H - K for the shifted ones; for the rotated ones H - K'
# with the shift K' found in their orbitals); n_half_range, the half range
# of H on the N-electron block (the same in every orbital basis), is below
# all of them.
table() {
    local rows=$1 floors=$2
    printf 'molecule\tr_angstrom\trepresentation\tlambda\tunitaries\tfloor_fock\tfloor_n\tlambda_over_floor_n\tconstruction\tlambda.walk\twalk.steps\tstep.toffoli\trun.toffoli\trun.qubits\n'
    LC_ALL=C join -t "$TAB" <(LC_ALL=C sort -t "$TAB" -k1,1 "$rows") <(LC_ALL=C sort -t "$TAB" -k1,1 "$floors") |
        awk -F'\t' -v OFS='\t' '{
            split($1, k, ":")
            floor = $2 == "rot-shift" ? $14 : $2 == "rot-shift-grouped" ? $15 : $2 ~ /^shift/ ? $13 : $12
            print k[1], k[2], $2, $3, $4, floor, $11, sprintf("%.6f", $3 / $11), $5, $6, $7, $8, $9, $10 }' |
        LC_ALL=C sort -t "$TAB" -k1,1 -k2,2g -k3,3
}

# The representations in the order of the wide table and the plots.
REPS="pauli grouped shift-pauli shift-grouped df shift-df rot-shift rot-shift-grouped"

# Columns: molecule, r_angstrom, lambda of each representation (named as
# the representation), floor_n, floor_fock (of H), floor_fock_shifted (of
# H - K), then toffoli.REP: run.toffoli of each representation.
wide() {
    awk -F'\t' -v OFS='\t' -v reps="$REPS" '
        NR == 1 { for (i = 1; i <= NF; i++) col[$i] = i; next }
        { g = $1 "\t" $2; if (!(g in seen)) { seen[g] = 1; order[++n] = g }
          r = $3; lam[g, r] = $4; tof[g, r] = $col["run.toffoli"]; fn[g] = $7
          if (r == "pauli") ff[g] = $6; if (r == "shift-pauli") fs[g] = $6 }
        END {
            nr = split(reps, rep, " ")
            printf "molecule\tr_angstrom"; for (i = 1; i <= nr; i++) printf "\t%s", rep[i]
            printf "\tfloor_n\tfloor_fock\tfloor_fock_shifted"
            for (i = 1; i <= nr; i++) printf "\ttoffoli.%s", rep[i]; printf "\n"
            for (j = 1; j <= n; j++) { g = order[j]; printf "%s", g
                for (i = 1; i <= nr; i++) printf "\t%s", lam[g, rep[i]]
                printf "\t%s\t%s\t%s", fn[g], ff[g], fs[g]
                for (i = 1; i <= nr; i++) printf "\t%s", tof[g, rep[i]]; printf "\n" } }' "$1"
}

# The floor interval of the big case.  Its lower end is half the distance
# between lam-range's inner bounds of the lowest and highest eigenvalue of
# the N-electron sector of smallest |Sz| (which holds a component of every
# spin multiplet of the block, so its extremes are the block's): a
# certified lower bound of dE/2.  Its upper end is the least lambda of an
# exact representation of H on that block (every row but the double
# factorizations, which drop factors below their tolerance): an LCU's
# lambda is never below dE/2 of what it represents.
big() {
    local rows=$1 bounds=$2 low status
    low=$(text_get "$bounds" sector_half_range)
    status=$(text_get "$bounds" status)
    printf 'molecule\tr_angstrom\trepresentation\tlambda\tunitaries\tconstruction\trun.toffoli\trun.qubits\tfloor_low\tfloor_high\tfloor_status\n'
    awk -F'\t' -v OFS='\t' -v low="$low" -v status="$status" '
        { split($1, k, ":"); line[NR] = k[1] OFS k[2] OFS $2 OFS $3 OFS $4 OFS $5 OFS $9 OFS $10
          if ($5 != "df" && (high == "" || $3 + 0 < high + 0)) high = $3 }
        END { if (high == "" || low + 0 > high + 0) {
                  print "collect.sh: floor interval [" low ", " high "] is empty" > "/dev/stderr"; exit 65 }
              for (i = 1; i <= NR; i++) print line[i], low, high, status }' "$rows"
}

case ${1:-} in
row) row "$2" "$3" ;;
big) big "$2" "$3" ;;
floors) floors "$2" ;;
table) table "$2" "$3" ;;
wide) wide "$2" ;;
*) echo "usage: collect.sh row DIR REP | big ROWS BOUNDS | floors DIR | table ROWS FLOORS | wide TABLE" >&2; exit 64 ;;
esac
