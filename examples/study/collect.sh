#!/bin/bash
# collect.sh - turn the reports of one study directory into table rows.
#
#   collect.sh row DIR REP     one line: key, REP, lambda, unitaries, walk
#                              steps, Toffolis, logical qubits (from
#                              DIR/REP.norm and DIR/REP.cost, both --tsv)
#   collect.sh floors DIR      one line: key, n_half_range, fock_half_range
#                              of H and fock_half_range of H - K (from the
#                              lam-range reports)
#   collect.sh table ROWS FLOORS    join them into the study table (stdout)
#   collect.sh wide TABLE      one line per geometry, one column per
#                              representation (for the plots)
#
# The key is MOLECULE:R, from the directory name MOLECULE-R.
set -euo pipefail
TAB=$'\t'

key_of() { local d; d=$(basename "$1"); printf '%s:%s' "${d%%-*}" "${d#*-}"; }

# text_get FILE KEY: the value of a key<TAB>value report line.
text_get() {
    awk -F'\t' -v k="$2" -v f="$1" '$1 == k { print $2; found = 1; exit }
        END { if (!found) { print "collect.sh: " f ": no line " k > "/dev/stderr"; exit 65 } }' "$1"
}

# One awk reads both --tsv reports: lam-norm's lambda (lambda_grouped for
# a grouped stream) must agree with the lambda lam-cost used.
row() {
    local dir=$1 rep=$2 lamkey=lambda
    case $rep in *grouped) lamkey=lambda_grouped ;; esac
    awk -F'\t' -v OFS='\t' -v key="$(key_of "$dir")" -v rep="$rep" -v lamkey="$lamkey" '
        FNR == 1 { delete col; for (i = 1; i <= NF; i++) col[$i] = i; next }
        FNR == 2 { for (k in col) v[FILENAME == ARGV[1] ? "norm" : "cost", k] = $col[k] }
        END {
            if (!(("norm", lamkey) in v) || !(("cost", "lambda") in v) || !(("cost", "toffoli_total") in v)) {
                print "collect.sh: " ARGV[1] " or " ARGV[2] ": missing columns" > "/dev/stderr"; exit 65 }
            a = v["norm", lamkey]; b = v["cost", "lambda"]; d = a - b; if (d < 0) d = -d
            if (d > 1e-9 * (a < 0 ? -a : a)) {
                print "collect.sh: " ARGV[1] ": lam-norm says lambda " a ", lam-cost " b > "/dev/stderr"; exit 65 }
            print key, rep, a, v["cost", "unitaries"], v["cost", "walk_steps"], v["cost", "toffoli_total"], v["cost", "logical_qubits"]
        }' "$dir/$rep.norm" "$dir/$rep.cost"
}

floors() {
    local dir=$1
    printf '%s\t%s\t%s\t%s\n' "$(key_of "$dir")" "$(text_get "$dir/range.report" n_half_range)" \
        "$(text_get "$dir/range.report" fock_half_range)" \
        "$(text_get "$dir/shift-range.report" fock_half_range)"
}

# The floor of a row is the Fock-space half range of the operator it
# represents (H, or H - K for the shifted ones); n_half_range, the half
# range of H on the N-electron block, is below both.
table() {
    local rows=$1 floors=$2
    printf 'molecule\tr_angstrom\trepresentation\tlambda\tunitaries\tfloor_fock\tfloor_n\tlambda_over_floor_n\twalk_steps\ttoffoli_total\tlogical_qubits\n'
    LC_ALL=C join -t "$TAB" <(LC_ALL=C sort -t "$TAB" -k1,1 "$rows") <(LC_ALL=C sort -t "$TAB" -k1,1 "$floors") |
        awk -F'\t' -v OFS='\t' '{
            split($1, k, ":"); floor = ($2 ~ /^shift/) ? $10 : $9
            print k[1], k[2], $2, $3, $4, floor, $8, sprintf("%.6f", $3 / $8), $5, $6, $7 }' |
        LC_ALL=C sort -t "$TAB" -k1,1 -k2,2g -k3,3
}

wide() {
    awk -F'\t' -v OFS='\t' '
        NR == 1 { next }
        { g = $1 "\t" $2; if (!(g in seen)) { seen[g] = 1; order[++n] = g }
          lam[g, $3] = $4; fn[g] = $7; if ($3 == "pauli") ff[g] = $6; if ($3 == "shift-pauli") fs[g] = $6 }
        END {
            print "molecule", "r_angstrom", "pauli", "grouped", "shift-pauli", "shift-grouped", "df", "shift-df", "floor_n", "floor_fock", "floor_fock_shifted"
            for (i = 1; i <= n; i++) { g = order[i]
                print g, lam[g, "pauli"], lam[g, "grouped"], lam[g, "shift-pauli"], lam[g, "shift-grouped"], lam[g, "df"], lam[g, "shift-df"], fn[g], ff[g], fs[g] } }' "$1"
}

case ${1:-} in
row) row "$2" "$3" ;;
floors) floors "$2" ;;
table) table "$2" "$3" ;;
wide) wide "$2" ;;
*) echo "usage: collect.sh row DIR REP | floors DIR | table ROWS FLOORS | wide TABLE" >&2; exit 64 ;;
esac
