#!/bin/bash
# lam-range on the command line: good input, bad input, exit codes.
# Values checked here are facts of the trade (common practice): the
# eigenvalues of single Pauli matrices are +-1, of a Z + b Y are
# +-sqrt(a^2 + b^2); Szabo-Ostlund H2 full CI -1.1373 Eh (Modern Quantum
# Chemistry, 1989, ch. 3, from memory, 4 decimals).
source "$(dirname "$0")/lib/tap.sh"

# H2, Szabo-Ostlund MO integrals written as a spinfree stream by hand:
# 1/2 (pq|rs) on e_pqrs for every index order of the 8-fold symmetry.
H2='#% lamina-op 2
#% kind: spinfree
#% orbitals: 2
#% electrons: 2
0.7143
-1.2528 0 0
-0.4756 1 1
0.3373 0 0 0 0
0.3318 0 0 1 1
0.3318 1 1 0 0
0.09065 0 1 0 1
0.09065 1 0 1 0
0.09065 0 1 1 0
0.09065 1 0 0 1
0.34875 1 1 1 1
#% end
'

runlam lam-range --help
is "$RC" 0 "--help exits 0"
like "$OUT" "Usage: lam-range" "--help shows the synopsis"
like "$OUT" "Eh" "--help names the unit"
runlam lam-range --version
is "$RC" 0 "--version exits 0"
runlam lam-range -V
like "$OUT" "^lam-range .*[0-9]+\.[0-9]+" "-V prints the version"
like "$OUT" "^lam-range .*[0-9]+\.[0-9]+" "--version prints the version"

runlam_in "$H2" lam-range --quiet
is "$RC" 0 "H2 stream: exit 0"
near "$(report_get n_min <<<"$OUT")" -1.1373 5e-5 "H2: n_min is the Szabo-Ostlund full CI -1.1373 Eh"
is "$(report_get status <<<"$OUT")" exact "H2: status exact"
is "$(grep -c '^sector' <<<"$OUT")" 9 "H2: one line for each of the 9 sectors"
like "$OUT" $'sector\t0\t1\t-\t-\t-\twithin:1,0' "multiplets by default: (0,1) lies within (1,0)"
is "$(report_get n_min_status <<<"$OUT")" exact "H2: n_min_status exact"
is "$(report_get fock_max_status <<<"$OUT")" exact "H2: fock_max_status exact"
runlam_in "$H2" lam-range --quiet --no-multiplets
like "$OUT" $'sector\t0\t1\t[-0-9.e]+\t[-0-9.e]+\texact\tmirror:1,0' "--no-multiplets: sector (0,1) inferred from (1,0)"
near "$(report_get n_min <<<"$OUT")" -1.1373 5e-5 "--no-multiplets: same n_min"
like "$OUT" $'sector\t1\t1\t[-0-9.e]+\t[-0-9.e]+\texact\tcomputed' "sector (1,1) computed"
half=$(report_get fock_half_range <<<"$OUT")
lo=$(report_get fock_min <<<"$OUT"); hi=$(report_get fock_max <<<"$OUT")
near "$half" "$(awk -v a="$lo" -v b="$hi" 'BEGIN { printf "%.17g", (b - a) / 2 }')" 1e-15 "fock_half_range = (fock_max - fock_min)/2"

runlam_in "$H2" lam-range --quiet --tsv
is "$(wc -l <<<"$OUT")" 2 "--tsv: header row and value row"
like "$(head -1 <<<"$OUT")" $'^label\tsector_na\t.*\tfock_min\tfock_min_status\tfock_max\tfock_max_status\tfock_half_range\telectrons\tn_min' "--tsv header: label first, the fixed column set"
is "$(tail -1 <<<"$OUT" | cut -f2)" NA "--tsv without --sector: sector_na is NA"
runlam_in "$H2" lam-range -q -t -n 2 -j 1 -M 1G -k spinfree
is "$RC" 0 "short options -q -t -n -j -M -k: exit 0"
is "$(wc -l <<<"$OUT")" 2 "-t: header row and value row"

runlam_in "$H2" lam-range --quiet --lowest
like "$OUT" "n_min" "--lowest reports n_min"
ok $(grep -q fock_max <<<"$OUT"; echo $((! $?))) "--lowest leaves out fock_max"

runlam_in "$H2" lam-range --quiet --sector 1,1 -o "$TMP/rep"
is "$RC" 0 "-o FILE: exit 0"
is "$OUT" "" "-o FILE: nothing on stdout"
is "$(grep -c $'^sector\t' "$TMP/rep")" 1 "--sector: one sector line"
near "$(awk -F'\t' '$1 == "sector" { print $4 }' "$TMP/rep")" -1.1373 5e-5 "--sector 1,1: the full CI energy"

runlam_in "$H2" lam-range --quiet --sector 1,1 --tsv
like "$(head -1 <<<"$OUT")" $'^label\tsector_na\tsector_nb\tsector_min\tsector_min_status\tsector_max\tsector_max_status\tsector_half_range' "--sector --tsv: the sector's keys, in the same column set"
near "$(tail -1 <<<"$OUT" | cut -f4)" -1.1373 5e-5 "--sector --tsv: sector_min is the full CI energy"

runlam_in "$H2" lam-range --quiet --multiplets
like "$OUT" $'sector\t2\t0\t-\t-\t-\twithin:1,1' "--multiplets: (2,0) lies within (1,1)"
near "$(report_get n_min <<<"$OUT")" -1.1373 5e-5 "--multiplets: same n_min"

# a zero operator: its half range is 0, never a rounding -1e-16
runlam_in $'0 z:0
0 x:0-1
' lam-range --quiet
is "$(report_get fock_half_range <<<"$OUT")" 0 "zero pauli operator: fock_half_range 0"
runlam_in $'#% kind: spinfree
#% orbitals: 3
0 0 0
' lam-range --quiet
is "$(report_get fock_half_range <<<"$OUT")" 0 "zero spinfree operator: fock_half_range 0"

# the certificate: with no extremality check, Davidson values are bounds,
# each with its own status, a note on stderr and exit 0 (lam-range(1))
# a hand-made spin-free chain of N orbitals (ramp, on-site repulsion, hopping)
chain_op() {
    awk -v n="$1" 'BEGIN { print "#% lamina-op 2"; print "#% kind: spinfree"; print "#% orbitals: " n;
  for (p = 0; p < n; ++p) { printf "%.3f %d %d\n", -1 - 0.1 * p, p, p; printf "0.5 %d %d %d %d\n", p, p, p, p }
  for (p = 0; p + 1 < n; ++p) { printf "-0.3 %d %d\n-0.3 %d %d\n", p, p + 1, p + 1, p }
  print "#% end" }'
}
HCHAIN=$(chain_op 8)
runlam_in "$HCHAIN" lam-range --sector 4,4 --check-steps 0 --progress
is "$RC" 0 "--check-steps 0: exit 0"
is "$(report_get sector_min_status <<<"$OUT")" bound "--check-steps 0: sector_min_status bound (Davidson alone)"
is "$(report_get status <<<"$OUT")" bound "--check-steps 0: status bound"
like "$ERR" "note: 2 values are not certified" "--check-steps 0: a note on stderr"
runlam_in "$HCHAIN" lam-range --quiet --sector 4,4
is "$(report_get status <<<"$OUT")" exact "default check: sector (4,4) of dimension 4900 certified exact"
lo_checked=$(report_get sector_min <<<"$OUT")
runlam_in "$HCHAIN" lam-range --quiet --sector 4,4 --check-steps 0
near "$(report_get sector_min <<<"$OUT")" "$lo_checked" 1e-9 "the check does not move a value that was right"

# progress: block i of m, time so far, an estimate
runlam_in "$H2" lam-range --progress
like "$ERR" "block 1 of [0-9]+ \(sector \(0,0\)" "progress names the block and how many"
like "$ERR" "so far, about .* left" "progress gives the time so far and an estimate"

# a run estimated past an hour warns before it starts (14 orbitals, all
# sectors); stopped as soon as it has said so
chain_op 14 > "$TMP/c14.op"
"$LAM_BIN/lam-range" --quiet "$TMP/c14.op" > /dev/null 2> "$TMP/c14.err" & pid=$!
for i in $(seq 300); do grep -q warning "$TMP/c14.err" && break; sleep 0.1; done
kill "$pid" 2>/dev/null; wait "$pid" 2>/dev/null
like "$(cat "$TMP/c14.err")" "warning: this run is estimated at about [0-9.]+ (h|days)" "14 orbitals: a warning with the estimate before the run, even with --quiet"

# --resume: a run killed after some blocks loses nothing
mkdir -p "$TMP/resume"
# (6 orbitals: 49 sectors, each small)
chain_op 6 > "$TMP/chain.op"
lam lam-range --quiet --no-multiplets "$TMP/chain.op" > "$TMP/whole.rep"
# the program itself in the background (not the lam function, whose
# subshell would be killed while the program ran on beside the second run)
( ${LAM_WRAP:-} "$LAM_BIN/lam-range" --quiet --no-multiplets --resume "$TMP/resume" "$TMP/chain.op" > /dev/null 2>&1 & pid=$!
  for i in $(seq 600); do
      [ "$(ls "$TMP/resume" | grep -c '\.block$')" -ge 6 ] && break
      sleep 0.1
  done
  kill "$pid" 2>/dev/null; wait "$pid" 2>/dev/null )
kept=$(ls "$TMP/resume" | grep -c '\.block$')
ok $([ "$kept" -ge 1 ]; echo $?) "--resume: the killed run kept $kept finished blocks"
runlam lam-range --progress --no-multiplets --resume "$TMP/resume" "$TMP/chain.op"
is "$RC" 0 "--resume: the second run exits 0"
like "$ERR" "read back from" "--resume: finished blocks are read back"
# numbers to 12 digits: under valgrind OpenBLAS may take other kernels,
# which moves the last bits between runs
round12() { awk -F'\t' -v OFS='\t' '{ for (i = 2; i <= NF; ++i) if ($i ~ /^-?[0-9.]+(e[-+]?[0-9]+)?$/) $i = sprintf("%.12g", $i); print }'; }
is "$(round12 <<<"$OUT")" "$(round12 < "$TMP/whole.rep")" "--resume: the same report as one uninterrupted run (to 12 digits)"

# complex Pauli operator: z:0 + y:0 has eigenvalues +-sqrt(2)
runlam_in $'1 z:0\n1 y:0\n' lam-range --quiet
is "$RC" 0 "z:0 + y:0: exit 0"
near "$(report_get fock_min <<<"$OUT")" -1.4142135623730951 1e-12 "z:0 + y:0: lowest -sqrt(2)"
near "$(report_get fock_max <<<"$OUT")" 1.4142135623730951 1e-12 "z:0 + y:0: highest +sqrt(2)"

# hopping between the two spin qubits of one orbital: conserves the total
# number only (1 electron: z:0-1 = -1 plus hopping +-1, so -2 and 0)
runlam_in $'1 z:0-1\n0.5 x:0-1\n0.5 y:0-1\n' lam-range --quiet
is "$RC" 0 "total-number-conserving Pauli operator: exit 0"
like "$OUT" $'sector\t1\t\\*\t-2\t0\texact\tcomputed' "total-number block: NB is *, one electron gives -2 and 0"
runlam_in $'1 z:0-1\n0.5 x:0-1\n0.5 y:0-1\n' lam-range --quiet --sector 1,0
is "$RC" 65 "--sector on an operator that mixes the spins: exit 65"
like "$ERR" "spin-up and spin-down numbers" "--sector on an operator that mixes the spins: message"

# number-changing operator without sectors: only the Fock space
runlam_in $'0.5 x:0\n' lam-range --quiet
is "$RC" 0 "x:0 without sectors: exit 0"
near "$(report_get fock_min <<<"$OUT")" -0.5 1e-12 "0.5 x:0: lowest -0.5"

# ---- bad input ----
runlam_in $'#% kind: spinfree\n1.0 0 1\n' lam-range --quiet
is "$RC" 65 "non-Hermitian spinfree operator: exit 65"
like "$ERR" "^lam-range: .*not Hermitian" "non-Hermitian spinfree: message"

runlam_in $'#% kind: fermion\n1.0 0 / 1\n' lam-range --quiet
is "$RC" 65 "non-Hermitian fermion operator: exit 65"
like "$ERR" "^lam-range: " "non-Hermitian fermion: message"

runlam_in $'0.5 x:0\n0.1 z:1\n' lam-range --quiet --sector 1,0
is "$RC" 65 "number-changing operator with --sector: exit 65"
like "$ERR" "^lam-range: .*changes the particle number" "number-changing with --sector: message"
runlam_in $'0.5 x:0-1\n' lam-range --quiet --electrons 1
is "$RC" 65 "number-changing operator with --electrons: exit 65"
like "$ERR" "changes the particle number" "number-changing with --electrons: message"

runlam_in "$H2" lam-range --quiet --sector 3,0
is "$RC" 64 "sector that does not exist: exit 64"
like "$ERR" "^lam-range: sector \(3,0\) needs 3 spin-up electrons but the operator has 2 orbitals" "sector that does not exist: message names the orbital count"
runlam_in "$H2" lam-range --quiet --sector 99,99
is "$RC" 64 "--sector 99,99: exit 64"
like "$ERR" "sector \(99,99\) needs 99 spin-up electrons but the operator has 2 orbitals" "--sector 99,99: names the orbital count"
runlam_in "$H2" lam-range --quiet --sector 1
is "$RC" 64 "--sector without a comma: exit 64"
runlam_in "$H2" lam-range --quiet --electrons 5
is "$RC" 64 "more electrons than spin orbitals: exit 64"
like "$ERR" "do not fit" "more electrons than spin orbitals: message"

runlam_in "$H2" lam-range --quiet --max-memory 100
is "$RC" 75 "over --max-memory: exit 75"
like "$ERR" "^lam-range: sector .* would need [0-9.]+ (KiB|MiB|bytes) .*over --max-memory" "over --max-memory: message with the memory needed"
# (100 bytes stop even the selected CI, whose tables need about 1 KiB here)
runlam_in "$H2" lam-range --quiet --max-memory 100 --bounds
is "$RC" 75 "far below what even the bounds need: exit 75"
runlam_in "$H2" lam-range --quiet --bounds=always
is "$RC" 0 "--bounds=always: exit 0"
is "$(report_get status <<<"$OUT")" bound "--bounds: status bound"
runlam_in "$H2" lam-range --quiet --max-memory lots
is "$RC" 64 "--max-memory that does not parse: exit 64"
runlam_in "$H2" lam-range --quiet --tol -1
is "$RC" 64 "negative --tol: exit 64"
runlam_in "$H2" lam-range --quiet --frobnicate
is "$RC" 64 "unknown option: exit 64"
is "$(head -1 <<<"$ERR")" "lam-range: unknown option '--frobnicate'" "unknown option: one message naming it"
runlam_in "$H2" lam-range --quiet -e 2
is "$RC" 64 "-e is not an option of lam-range (the suite's -e is --encoding): exit 64"
runlam_in "$H2" lam-range --quiet --tol
like "$ERR" "option '--tol' needs a value" "missing value: one message"

runlam_in $'#% kind: spinfree\n1.0 64 64\n' lam-range --quiet
is "$RC" 65 "65 orbitals: exit 65"
like "$ERR" "at most 64" "65 orbitals: message"

runlam_in $'#% lamina-op 2\n#% kind: spinfree\n1.0 0 0\n' lam-range --quiet
is "$RC" 65 "truncated stream: exit 65"
runlam lam-range --quiet "$TMP/does-not-exist"
is "$RC" 66 "missing input file: exit 66"
runlam_in $'#% kind: spinfree\n1.0 0 0\nNaN 1 1\n' lam-range --quiet
is "$RC" 65 "NaN coefficient: exit 65"
like "$ERR" ":3: " "NaN coefficient: message names the line"

done_testing
