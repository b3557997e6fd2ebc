#!/bin/bash
# lam-norm and lam-cost --floor REPORT: lam-range's half range beside lambda,
# the ratio lambda/floor and what it promises (exact over a certified floor,
# at-most over an inner bound); bad reports and exit codes.
source "$(dirname "$0")/lib/tap.sh"

# rel_near GOT WANT RELTOL NAME: |GOT - WANT| <= RELTOL |WANT|
rel_near() {
    local got=$1 want=$2 tol=$3; shift 3
    awk -v g="$got" -v w="$want" -v t="$tol" 'BEGIN { d = g - w; if (d < 0) d = -d; a = w < 0 ? -w : w
        exit !(g != "" && w != "" && d <= t * a) }'
    local st=$?
    ok $st "$*"
    [ $st -eq 0 ] || printf '#   got %s, want %s (relative tol %s)\n' "$got" "$want" "$tol"
}
# ge A B NAME: A >= B (numbers)
ge() {
    local a=$1 b=$2; shift 2
    awk -v a="$a" -v b="$b" 'BEGIN { exit !(a != "" && b != "" && a + 0 >= b + 0) }'
    local st=$?
    ok $st "$*"
    [ $st -eq 0 ] || printf '#   %s is not >= %s\n' "$a" "$b"
}
ratio_of() { awk -v a="$1" -v b="$2" 'BEGIN { printf "%.17g", a / b }'; }

# Our own H4 and H6 chains (STO-3G, H-H 0.95 angstrom), orbitals from lam-scf.
chain() {
    printf '%d\nH%d chain\n' "$1" "$1"
    for ((i = 0; i < $1; ++i)); do awk -v i=$i 'BEGIN { printf "H 0 0 %.2f\n", 0.95 * i }'; done
}
chain 4 | lam lam-scf 2>/dev/null | lam lam-ints > "$TMP/h4.op"
chain 6 | lam lam-scf 2>/dev/null | lam lam-ints > "$TMP/h6.op"
lam lam-map "$TMP/h4.op" > "$TMP/h4.pauli"
lam lam-group --quiet "$TMP/h4.pauli" > "$TMP/h4.grouped"
lam lam-range --quiet "$TMP/h4.op" > "$TMP/h4.range"
is "$(report_get status < "$TMP/h4.range")" exact "H4: full CI of every sector, certified"
floor=$(report_get n_half_range < "$TMP/h4.range")

# --- exact floor: the ratio is lambda / (Delta E / 2), marked exact
runlam lam-norm --floor "$TMP/h4.range" "$TMP/h4.op"
is "$RC" 0 "lam-norm --floor with an exact report"
lambda=$(report_get lambda <<<"$OUT")
is "$(report_get floor <<<"$OUT")" "$floor" "floor is the report's n_half_range"
is "$(report_get floor_from <<<"$OUT")" n_half_range "floor_from says which half range (N electrons first)"
is "$(report_get floor_status <<<"$OUT")" exact "floor_status exact: both ends certified"
rel_near "$(report_get ratio <<<"$OUT")" "$(ratio_of "$lambda" "$floor")" 1e-12 "ratio = lambda / floor to 1e-12"
is "$(report_get ratio_status <<<"$OUT")" exact "ratio_status exact over an exact floor"
is "$(report_get ratio_grouped <<<"$OUT")" "" "no grouped ratio for an ungrouped stream"

# grouped Pauli stream: both lambdas get their ratio
runlam lam-norm --floor "$TMP/h4.range" "$TMP/h4.grouped"
lg=$(report_get lambda_grouped <<<"$OUT")
rel_near "$(report_get ratio_grouped <<<"$OUT")" "$(ratio_of "$lg" "$floor")" 1e-12 "ratio_grouped = lambda_grouped / floor"
is "$(report_get ratio_grouped_status <<<"$OUT")" exact "ratio_grouped_status exact"
rel_near "$(report_get ratio <<<"$OUT")" "$(ratio_of "$(report_get lambda <<<"$OUT")" "$floor")" 1e-12 "and the ungrouped ratio beside it"

# one floor for several streams; --tsv keeps its columns (NA without floor)
runlam lam-norm --tsv --floor "$TMP/h4.range" "$TMP/h4.op" "$TMP/h4.pauli" "$TMP/h4.grouped"
is "$RC/$(wc -l <<<"$OUT")" "0/4" "--tsv: header and one row per stream"
col() { awk -F'\t' -v k="$1" -v r="$2" 'NR == 1 { for (i = 1; i <= NF; ++i) if ($i == k) c = i } NR == r { print (c ? $c : "MISSING") }' <<<"$OUT"; }
is "$(col ratio_status 2)/$(col ratio_status 3)/$(col ratio_grouped_status 4)" exact/exact/exact "--tsv: the ratio status of every stream"
is "$(col floor_from 3)" n_half_range "--tsv: floor_from column"
is "$(col ratio_grouped 2)" NA "--tsv: NA where no grouped lambda"
runlam lam-norm --tsv "$TMP/h4.op"
is "$(col floor 2)/$(col ratio 2)/$(col ratio_status 2)/$(col ratio_grouped 2)" NA/NA/NA/NA "--tsv without --floor: the same columns, NA"
runlam lam-norm "$TMP/h4.op"
is "$(report_get floor <<<"$OUT")" "" "text form without --floor: no floor lines"

# a --tsv report of one sector is read too: the sector's half range
lam lam-range --quiet --tsv --sector 2,2 "$TMP/h4.op" > "$TMP/h4.sector.tsv"
runlam lam-norm --floor "$TMP/h4.sector.tsv" "$TMP/h4.op"
is "$RC" 0 "a lam-range --tsv report as the floor"
is "$(report_get floor_from <<<"$OUT")" sector_half_range "--sector report: sector_half_range used"
is "$(report_get floor <<<"$OUT")" "$floor" "(2,2) holds both N = 4 extremes of H4: the same floor"
# the Fock space's when that is all the report has
grep -Ev '^(n_|electrons)' "$TMP/h4.range" > "$TMP/h4.fock"
runlam lam-norm --floor "$TMP/h4.fock" "$TMP/h4.op"
is "$(report_get floor_from <<<"$OUT")/$(report_get floor <<<"$OUT")" \
    "fock_half_range/$(report_get fock_half_range < "$TMP/h4.range")" "else fock_half_range"

# --- bounded floor: selected CI on a chain whose full CI is known
lam lam-range --quiet --sector 3,3 "$TMP/h6.op" > "$TMP/h6.exact"
lam lam-range --quiet --sector 3,3 --bounds=always --bound-subspace 12 "$TMP/h6.op" > "$TMP/h6.bound" 2>/dev/null
is "$(report_get status < "$TMP/h6.exact")/$(report_get sector_min_status < "$TMP/h6.bound")" exact/bound \
    "H6 (3,3): full CI exact, --bounds=always gives bounds"
runlam lam-norm --floor "$TMP/h6.exact" "$TMP/h6.op"
exact_ratio=$(report_get ratio <<<"$OUT")
runlam lam-norm --floor "$TMP/h6.bound" "$TMP/h6.op"
is "$(report_get floor_status <<<"$OUT")/$(report_get ratio_status <<<"$OUT")" bound/at-most \
    "a bounded floor: floor_status bound, ratio_status at-most (never exact)"
ge "$(report_get ratio <<<"$OUT")" "$exact_ratio" "the at-most ratio is >= the exact one ($exact_ratio)"
ge "$(report_get sector_half_range < "$TMP/h6.exact")" "$(report_get floor <<<"$OUT")" \
    "the inner floor is <= the exact one"
# one exact end is not enough: the floor is exact only when both are
sed 's/^sector_max_status\tbound/sector_max_status\texact/' "$TMP/h6.bound" > "$TMP/h6.half"
runlam lam-norm --floor "$TMP/h6.half" "$TMP/h6.op"
is "$(report_get ratio_status <<<"$OUT")" at-most "one end exact, the other a bound: at-most"

# --- lam-cost: the same lines, the figures still estimates
lam lam-map "$TMP/h6.op" | lam lam-group --quiet > "$TMP/h6.grouped"
runlam lam-cost --floor "$TMP/h6.bound" "$TMP/h6.grouped"
is "$RC" 0 "lam-cost --floor"
rel_near "$(report_get ratio <<<"$OUT")" "$(ratio_of "$(report_get lambda <<<"$OUT")" "$(report_get floor <<<"$OUT")")" 1e-12 \
    "lam-cost: ratio = lambda (of the construction priced) / floor"
is "$(report_get ratio.status <<<"$OUT")/$(report_get floor.status <<<"$OUT")/$(report_get floor.from <<<"$OUT")" \
    at-most/bound/sector_half_range "lam-cost: ratio.status, floor.status, floor.from"
like "$(report_get assumes <<<"$OUT")" "^estimate" "lam-cost: the assumes line still says estimate"
like "$ERR" "estimates" "lam-cost: the note on stderr still says estimates"
runlam lam-cost --floor "$TMP/h6.exact" "$TMP/h6.grouped"
is "$(report_get ratio.status <<<"$OUT")" exact "lam-cost over an exact floor: ratio.status exact"
runlam lam-cost --tsv "$TMP/h6.grouped"
is "$(col floor 2)/$(col ratio 2)/$(col ratio.status 2)" NA/NA/NA "lam-cost --tsv without --floor: NA columns"
runlam lam-cost -C --floor "$TMP/h6.exact" "$TMP/h6.grouped"
is "$RC" 0 "lam-cost -C --floor"
is "$(head -1 <<<"$OUT" | cut -f16-)" $'floor\tfloor.status\tfloor.from\tratio\tratio.status' "-C: floor columns last"
bad=$(awk -F'\t' 'NR > 1 && !/^#/ { if (($19 - $4 / $16) ^ 2 > 1e-20 * ($19 ^ 2) || $20 != "exact") n++ } END { print n + 0 }' <<<"$OUT")
is "$bad" 0 "-C: every row's ratio is its lambda / floor, exact"
like "$(tail -1 <<<"$OUT")" "^# estimates" "-C: the table still ends saying estimates"

# --- bad floors
bad_floor() { # bad_floor FILE WANT-RC REGEX NAME
    local f=$1 want=$2 re=$3; shift 3
    for p in lam-norm lam-cost; do
        runlam $p --floor "$f" -o "$TMP/out" "$TMP/h4.grouped"
        is "$RC/${#OUT}/$([ -e "$TMP/out" ] && echo written || echo none)" "$want/0/none" "$p: $* exits $want, no output"
        like "$ERR" "^$p: $re" "$p: $* says so"
        rm -f "$TMP/out"
    done
}
lam lam-range --quiet --lowest "$TMP/h4.op" > "$TMP/low.range"
bad_floor "$TMP/low.range" 65 "$TMP/low.range: no half range" "a report without a half range (--lowest)"
awk -F'\t' -v OFS='\t' '$1 == "n_max_status" { $2 = "certain" } 1' "$TMP/h4.range" > "$TMP/status.range"
line=$(grep -n '^n_max_status' "$TMP/status.range" | cut -d: -f1)
bad_floor "$TMP/status.range" 65 "$TMP/status.range:$line: unknown status 'certain'" "an unknown status value"
grep -v '^n_min_status' "$TMP/h4.range" > "$TMP/nostatus.range"
bad_floor "$TMP/nostatus.range" 65 "$TMP/nostatus.range:[0-9]+: report has n_half_range but no n_min_status" "a half range without its status"
for v in 0 -1.5 nan x; do
    awk -F'\t' -v OFS='\t' -v v=$v '$1 == "n_half_range" { $2 = v } 1' "$TMP/h4.range" > "$TMP/zero.range"
    line=$(grep -n '^n_half_range' "$TMP/zero.range" | cut -d: -f1)
    bad_floor "$TMP/zero.range" 65 "$TMP/zero.range:$line: n_half_range (is $v: a floor must be > 0|is not a number)" "floor '$v'"
done
cat "$TMP/h4.range" "$TMP/h4.range" > "$TMP/two.range"
line=$(grep -n '^n_half_range' "$TMP/two.range" | tail -1 | cut -d: -f1)
bad_floor "$TMP/two.range" 65 "$TMP/two.range:$line: two floors in one report" "two reports run together (two floors)"
cat "$TMP/h4.sector.tsv" "$TMP/h4.sector.tsv" > "$TMP/two.tsv"
bad_floor "$TMP/two.tsv" 65 "$TMP/two.tsv:3: two floors in one report" "two --tsv reports run together"
printf 'n_half_range 1.5\n' > "$TMP/notab.range"
bad_floor "$TMP/notab.range" 65 "$TMP/notab.range:1: report line without a tab" "a line without a tab"
bad_floor "$TMP/none.range" 66 "cannot open $TMP/none.range" "an unreadable report"
runlam lam-norm --floor "$TMP/h4.range" --floor "$TMP/h4.range" "$TMP/h4.op" "$TMP/h4.pauli" "$TMP/h4.grouped"
is "$RC" 64 "lam-norm: two floors for three streams is a usage error"
like "$ERR" "2 --floor for 3 streams" "lam-norm: and says so"
runlam lam-norm --floor "$TMP/h4.range" --floor "$TMP/h6.exact" "$TMP/h4.op" "$TMP/h6.op"
is "$RC/$(awk -F'\t' '$1 == "floor_from" { printf "%s,", $2 }' <<<"$OUT")" "0/n_half_range,sector_half_range," "lam-norm: one floor per stream, in order"
runlam lam-cost --floor "$TMP/h4.range" --floor "$TMP/h4.range" "$TMP/h4.grouped"
is "$RC" 64 "lam-cost: two --floor is a usage error"
like "$ERR" "^lam-cost: --floor given twice" "lam-cost: and says so"
runlam_in "$(cat "$TMP/h4.range")" lam-norm --floor - "$TMP/h4.op"
is "$RC/$(report_get ratio_status <<<"$OUT")" 0/exact "lam-norm: the floor from standard input"
runlam_in "$(cat "$TMP/h4.range")" lam-norm --floor -
is "$RC" 64 "lam-norm: floor and stream both from standard input is a usage error"
runlam_in "$(cat "$TMP/h4.range")" lam-cost --floor - "$TMP/h4.grouped"
is "$RC/$(report_get ratio.status <<<"$OUT")" 0/exact "lam-cost: the floor from standard input"
runlam_in "$(cat "$TMP/h4.range")" lam-cost --floor -
is "$RC" 64 "lam-cost: floor and input both from standard input is a usage error"
like "$ERR" "standard input can be read once only" "lam-cost: and says so"
done_testing
