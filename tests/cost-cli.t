#!/bin/bash
# cost-cli.t - lam-cost on the command line: good input, bad input, exit codes.
source "$(dirname "$0")/lib/tap.sh"

# H2/STO-3G at 1.4 bohr, Jordan-Wigner, from the Szabo-Ostlund integrals (derivation in the file).
cp "$TESTS_DIR/data/h2-sto3g-r1.4bohr-jw.op" "$TMP/h2.pauli"

# Walk steps ceil(pi lambda / (2 eps)) (Babbush et al., PRX 8, 041015
# (2018), from memory), by hand: pi * 1.885925 / 0.0032 = 1851.50 -> 1852.
runlam lam-cost "$TMP/h2.pauli"
is "$RC" 0 "pauli stream: exit 0"
is "$(report_get walk_steps <<< "$OUT")" 1852 "H2 walk steps at 1.6 mEh by hand: 1852"
near "$(report_get lambda <<< "$OUT")" 1.885925 1e-10 "lambda is the sum of |c| without the identity"
is "$(report_get unitaries <<< "$OUT")" 14 "14 unitaries (identity not counted)"
is "$(report_get form <<< "$OUT")" pauli "form pauli"
like "$(report_get assumes <<< "$OUT")" "estimate" "report says what it assumes"
like "$ERR" "estimates" "note on stderr"
# pi * 1.885925 / 0.02 = 296.24 -> 297 (same source).
runlam lam-cost --error 0.01 -q "$TMP/h2.pauli"
is "$(report_get walk_steps <<< "$OUT")" 297 "H2 walk steps at 10 mEh by hand: 297"
is "$ERR" "" "--quiet leaves stderr empty"

OUT2=$(lam lam-cost -q < "$TMP/h2.pauli")
is "$OUT2" "$(lam lam-cost -q "$TMP/h2.pauli")" "stdin and file give the same report"
is "$(lam lam-cost -q <(cat "$TMP/h2.pauli"))" "$OUT2" "a pipe given by name, <(...)"
gzip -c "$TMP/h2.pauli" > "$TMP/h2.pauli.gz"
is "$(lam lam-cost -q < "$TMP/h2.pauli.gz")" "$OUT2" "gzip stream on stdin"

runlam lam-cost -q --tsv "$TMP/h2.pauli"
is "$(printf '%s\n' "$OUT" | wc -l | tr -d ' ')" 2 "--tsv: two rows"
is "$(printf '%s\n' "$OUT" | awk -F'\t' '{print NF}' | sort -u | wc -l | tr -d ' ')" 1 "--tsv: rows of equal width"
lam lam-cost -q -o "$TMP/out.txt" "$TMP/h2.pauli"
is "$(cat "$TMP/out.txt")" "$OUT2" "-o writes the report"

# Anticommuting groups: {X0 Z1, Z0 Z1} costs sqrt(3^2 + 4^2) = 5 (fact of
# the trade, common practice); the unlabelled Z1 adds 0.5.
printf '2.0\n3 X0 Z1 @0\n-4 Z0 Z1 @0\n0.5 Z1\n' > "$TMP/grouped.pauli"
runlam lam-cost -q --kind pauli "$TMP/grouped.pauli"
is "$RC" 0 "header-less grouped stream: exit 0"
near "$(report_get lambda <<< "$OUT")" 5.5 1e-12 "grouped lambda 5.5"
is "$(report_get unitaries <<< "$OUT")" 2 "two unitaries"
is "$(report_get rotations_per_step <<< "$OUT")" 2 "one group of two: 2 rotations"
is "$(report_get form <<< "$OUT")" pauli_grouped "form pauli_grouped"
runlam lam-cost -q --ungrouped "$TMP/grouped.pauli"
near "$(report_get lambda <<< "$OUT")" 7.5 1e-12 "--ungrouped: lambda 7.5"

# A lam-norm style report.
printf 'kind\tpauli\nterms\t15\nconstant\t-0.098125\nlambda\t1.8859250000000003\nqubits\t4\n' > "$TMP/h2.norm"
runlam lam-cost -q "$TMP/h2.norm"
is "$RC" 0 "report input: exit 0"
is "$(report_get walk_steps <<< "$OUT")" 1852 "report input: same walk steps"
is "$(report_get unitaries <<< "$OUT")" 14 "report input: terms minus the identity"
is "$(printf '%s' "$OUT")" "$OUT2" "report and stream give the same estimate"

# A fragments stream (format of lam-factor(1)).
cat > "$TMP/f.op" <<'OP'
#% lamina-op 1
#% kind: fragments
#% orbitals: 2
#% fragments: 1
1.5
0.6 U 0 0 0
0.8 U 0 0 1
-0.8 U 0 1 0
0.6 U 0 1 1
0.25 R 0 0a
-0.5 R 0 0a 1b
#% end
OP
runlam lam-cost -q "$TMP/f.op"
is "$RC" 0 "fragments stream: exit 0"
near "$(report_get lambda <<< "$OUT")" 0.75 1e-15 "fragments lambda 0.75"
is "$(report_get unitaries <<< "$OUT")" 2 "fragments: 2 unitaries"
is "$(report_get rotations_per_step <<< "$OUT")" 8 "one rotated fragment of 2 orbitals: 4*2*1 rotations"
is "$(report_get qubits_system <<< "$OUT")" 4 "2 orbitals: 4 system qubits"

# Bad input.
printf '#%% lamina-op 1\n#%% kind: pauli\n0.5 X0\n0.x Z1\n#%% end\n' > "$TMP/badnum.pauli"
runlam lam-cost "$TMP/badnum.pauli"
is "$RC" 65 "coefficient that does not parse: exit 65"
like "$ERR" "^lam-cost: .*badnum.pauli:4: " "message names file and line"
printf '#%% lamina-op 1\n#%% kind: pauli\n0.5 X0\n0.25 Z1\n' > "$TMP/cut.pauli"
runlam lam-cost "$TMP/cut.pauli"
is "$RC" 65 "stream cut before #% end: exit 65"
like "$ERR" "truncated" "says truncated"
printf '#%% lamina-op 1\n#%% kind: spinfree\n#%% orbitals: 1\n-1.0 0 0\n#%% end\n' > "$TMP/sf.op"
runlam lam-cost "$TMP/sf.op"
is "$RC" 65 "spinfree stream: exit 65"
like "$ERR" "lam-map" "says to map it first"
printf '#%% lamina-op 1\n#%% kind: pauli\n-1.25\n#%% end\n' > "$TMP/id.pauli"
runlam lam-cost "$TMP/id.pauli"
is "$RC" 65 "identity only: exit 65"
like "$ERR" "nothing to estimate" "says there is nothing to estimate"
printf 'kind\tspinfree\nterms\t3\nconstant\t0\nlambda\t1\n' > "$TMP/sf.norm"
runlam lam-cost "$TMP/sf.norm"
is "$RC" 65 "report of a spinfree stream: exit 65"
printf 'kind\tpauli\nterms\t3\nconstant\t0\nqubits\t2\n' > "$TMP/nolambda.norm"
runlam lam-cost "$TMP/nolambda.norm"
is "$RC" 65 "report without lambda: exit 65"
like "$ERR" "no 'lambda'" "names the missing key"
printf 'kind\tpauli\nterms\t3\nconstant\t0\nqubits\t2\nlambda\tnan\n' > "$TMP/nan.norm"
runlam lam-cost "$TMP/nan.norm"
is "$RC" 65 "report with lambda nan: exit 65"
printf 'kind\tterms\tconstant\tlambda\tqubits\npauli\t15\t-0.1\t1.885\t4\n' > "$TMP/tsv.norm"
runlam lam-cost "$TMP/tsv.norm"
is "$RC" 65 "a --tsv report: exit 65"
like "$ERR" "tsv.norm:1: a --tsv report" "says it is the TSV form"
runlam lam-cost --error -1 "$TMP/h2.pauli"
is "$RC" 64 "negative --error: exit 64"
runlam lam-cost --error abc "$TMP/h2.pauli"
is "$RC" 64 "--error abc: exit 64"
runlam lam-cost --keep-bits 0 "$TMP/h2.pauli"
is "$RC" 64 "--keep-bits 0: exit 64"
runlam lam-cost --kind spinfree "$TMP/h2.pauli"
is "$RC" 64 "--kind spinfree: exit 64"
runlam lam-cost "$TMP/h2.pauli" "$TMP/h2.pauli"
is "$RC" 64 "two inputs: exit 64"
runlam lam-cost "$TMP/does-not-exist"
is "$RC" 66 "missing file: exit 66"
like "$ERR" "^lam-cost: cannot open .*does-not-exist" "names the missing file"
runlam lam-cost "$TMP"
is "$RC" 66 "a directory: exit 66"
runlam lam-cost "$TMP/sf.op"
like "$ERR" "^lam-cost: [^ ]*sf.op:4: lam-cost reads pauli or fragments" "wrong kind: file:line and reason"
runlam lam-cost --error 1e-300 "$TMP/h2.pauli"
is "$RC" 65 "walk steps past 2^53: exit 65"

runlam lam-cost --help
is "$RC" 0 "--help: exit 0"
like "$OUT" "Eh" "help gives units"
like "$OUT" "Example" "help has an example"
runlam lam-cost --version
is "$RC" 0 "--version: exit 0"
like "$OUT" "^lam-cost" "version names the program"

done_testing
