#!/bin/bash
# lam-range --bounds by selected CI on the command line: good input, bad
# input, exit codes.  The checks are the variational principle (common
# practice): a Rayleigh quotient lies between the lowest and the highest
# eigenvalue, here those of the exact solve of the same sector.
source "$(dirname "$0")/lib/tap.sh"

# a hydrogen chain of our own: 8 atoms 1.0 angstrom apart, STO-3G
XYZ=$(printf '8\nH8 chain\n'; for i in 0 1 2 3 4 5 6 7; do echo "H 0 0 $i.0"; done)
OP=$(lam lam-scf <<<"$XYZ" 2>/dev/null | lam lam-ints)
[ -n "$OP" ] || { echo "Bail out! cannot build the H8 operator"; exit 1; }

runlam_in "$OP" lam-range --quiet --sector 4,4
exact_min=$(report_get sector_min <<<"$OUT"); exact_max=$(report_get sector_max <<<"$OUT")
is "$(report_get status <<<"$OUT")" exact "exact solve of (4,4) for reference"

runlam_in "$OP" lam-range --quiet --sector 4,4 --bounds=always --bound-subspace 400
is "$RC" 0 "--bounds=always: exit 0"
is "$(report_get status <<<"$OUT")" bound "--bounds=always: status bound"
like "$OUT" $'sector\t4\t4\t[-0-9.e]+\t[-0-9.e]+\tbound\tselected-ci' "sector line says selected-ci"
lo=$(report_get sector_min <<<"$OUT"); hi=$(report_get sector_max <<<"$OUT")
ok "$(awk -v a="$lo" -v b="$exact_min" 'BEGIN { exit !(a >= b - 1e-10) }'; echo $?)" "lowest bound $lo >= exact $exact_min"
ok "$(awk -v a="$hi" -v b="$exact_max" 'BEGIN { exit !(a <= b + 1e-10) }'; echo $?)" "highest bound $hi <= exact $exact_max"
ok "$(awk -v d="$(report_get sci.dets_min <<<"$OUT")" 'BEGIN { exit !(d > 1 && d <= 400) }'; echo $?)" "space size within the budget"
like "$OUT" $'sci.estimate_min\t-[0-9.e]+' "second-order estimate reported"
like "$OUT" $'sci.stop_max\t(budget|energy|memory|saturated)' "stop reason reported"
half=$(report_get sector_half_range <<<"$OUT")
near "$half" "$(awk -v a="$lo" -v b="$hi" 'BEGIN { printf "%.17g", (b - a) / 2 }')" 1e-14 "sector_half_range = (max - min)/2"

# past --max-memory: the exact solve does not fit, the bounds do
runlam_in "$OP" lam-range --quiet --sector 4,4 --max-memory 300K
is "$RC" 75 "exact solve over --max-memory: exit 75"
runlam_in "$OP" lam-range --quiet --sector 4,4 --max-memory 300K --bounds
is "$RC" 0 "--bounds past --max-memory: exit 0"
is "$(report_get status <<<"$OUT")" bound "--bounds past --max-memory: status bound"

runlam_in "$OP" lam-range --quiet --sector 4,4 --bounds=always --lowest --tsv
is "$RC" 0 "--lowest --tsv: exit 0"
like "$(head -1 <<<"$OUT")" "sci.dets_min" "--tsv header carries the selected-CI keys"

# a sector of 8 determinants: the space ends where nothing more couples
# (the chain's symmetry splits the sector) or at the whole sector
runlam_in "$OP" lam-range --quiet --sector 1,0 --bounds=always
near "$(report_get sector_min <<<"$OUT")" "$(lam lam-range --quiet --sector 1,0 <<<"$OP" | report_get sector_min)" 1e-9 "(1,0): whole sector gives the exact lowest"
like "$(report_get sci.stop_min <<<"$OUT")" '^(complete|saturated)$' "(1,0): stop complete or saturated"

# bad input
runlam_in "$OP" lam-range --quiet --sector 4,4 --bounds=always --bound-subspace 0
is "$RC" 64 "determinant budget 0: exit 64"
runlam_in "$OP" lam-range --quiet --sector 4,4 --bounds --max-memory 0
is "$RC" 64 "memory budget 0: exit 64"
runlam_in "$OP" lam-range --quiet --sector 4,4 --bounds=sometimes
is "$RC" 64 "--bounds=sometimes: exit 64"
like "$ERR" "always or past-memory" "--bounds=sometimes: says what it takes"
runlam_in "$OP" lam-range --quiet --sector 4,4 --bounds=always --bound-energy-tol -1
is "$RC" 64 "negative energy tolerance: exit 64"
runlam_in "$OP" lam-range --quiet --sector 9,0 --bounds=always
is "$RC" 64 "sector (9,0) of 8 orbitals: exit 64"
like "$ERR" "needs 9 spin-up electrons but the operator has 8 orbitals" "sector (9,0): says why it does not exist"
runlam_in "$OP" lam-range --quiet --electrons 17 --bounds=always
is "$RC" 64 "17 electrons in 8 orbitals: exit 64"
runlam_in "$OP" lam-range --quiet --sector 4,4 --bounds=always --max-memory 20K
is "$RC" 75 "selected CI over a 20K memory budget: exit 75"
like "$ERR" "max-memory" "20K: names --max-memory"

done_testing
