#!/bin/bash
# cost-cli.t - lam-cost on the command line: good input, bad input, exit codes.
# Every count below is worked out by hand from the accounting of lam-cost(1).
source "$(dirname "$0")/lib/tap.sh"

# H2/STO-3G at 1.4 bohr, Jordan-Wigner, from the Szabo-Ostlund integrals (derivation in the file).
cp "$TESTS_DIR/data/h2-sto3g-r1.4bohr-jw.op" "$TMP/h2.pauli"

# Walk steps ceil(pi lambda / (2 eps.phase)) (Babbush et al., PRX 8, 041015
# (2018), from memory), eps.phase = 0.8 x 1.6 mEh by default:
# pi * 1.885925 / 0.00256 = 2314.4 -> 2315.
runlam lam-cost "$TMP/h2.pauli"
is "$RC" 0 "pauli stream: exit 0"
is "$(report_get walk.steps <<< "$OUT")" 2315 "H2 walk steps at eps.phase 1.28 mEh by hand: 2315"
near "$(report_get lambda <<< "$OUT")" 1.885925 1e-10 "lambda is the sum of |c| without the identity"
is "$(report_get unitaries <<< "$OUT")" 14 "14 unitaries (identity not counted)"
is "$(report_get form <<< "$OUT")" pauli "form pauli"
is "$(report_get construction <<< "$OUT")" sparse "a pauli stream is priced as sparse"
near "$(report_get eps.total <<< "$OUT")" 0.0016 1e-15 "eps.total 1.6 mEh"
near "$(report_get eps.phase <<< "$OUT")" 0.00128 1e-15 "eps.phase 0.8 of it"
near "$(report_get eps.synth <<< "$OUT")" 0.00016 1e-15 "eps.synth 0.1 of it"
is "$(report_get trunc.input <<< "$OUT")" unknown "truncation of a pauli stream: unknown"
# keep bits ceil(log2(1.886 / 1.6e-4)) = ceil(13.52) = 14; sparse step with
# d = 14, data 2*4 + 2 = 10, SELECT 9: m = 34, read 14 (k 1), erase 8 (k'
# 4), usp 2*14, keep test 2*14, swap 2*10 -> 98; reflection 4 + 14 + 2 = 20;
# per step 98 + 9 + 20 = 127.
is "$(report_get prep.bits <<< "$OUT")" 14 "keep bits from eps.synth: 14"
is "$(report_get step.toffoli <<< "$OUT")" 127 "H2 sparse per step by hand: 127"
is "$(report_get run.toffoli <<< "$OUT")" $((127 * 2315)) "total = per step x walk steps"
is "$(report_get qroam.block <<< "$OUT")" 1 "QROAM block printed: 1"
like "$(report_get assumes <<< "$OUT")" "estimate of one construction.*distillation, routing, layout" \
    "report says what it is and leaves out"
like "$ERR" "estimates" "note on stderr"
for old in toffoli_per_step toffoli_total logical_qubits walk_steps; do
    is "$(grep -c "^$old" <<< "$OUT")" 0 "no old key $old"
done
# pi * 1.885925 / 0.016 = 370.3 -> 371 (same source), --split 1,0,... refused
runlam lam-cost --error 0.01 -q "$TMP/h2.pauli"
is "$(report_get walk.steps <<< "$OUT")" 371 "H2 walk steps at 10 mEh (phase 8 mEh) by hand: 371"
is "$ERR" "" "--quiet leaves stderr empty"
runlam lam-cost -q --split 0.5,0.25,0.25 "$TMP/h2.pauli"
# pi * 1.885925 / 0.0016 = 3703.0 -> 3704
is "$(report_get walk.steps <<< "$OUT")" 3704 "--split 0.5,0.25,0.25: 3704 walk steps"
near "$(report_get eps.trunc <<< "$OUT")" 0.0004 1e-15 "--split sets eps.trunc"

runlam lam-cost -q --construction flat "$TMP/h2.pauli"
# flat (lam-cost(1)): keep bits 14, b = 4: SELECT 13, PREPARE 2 (13 + 14 + 4
# + usp(14) = 14) = 90, reflection 4 + (4 + 29) - 1 = 36: per step 139.
is "$(report_get construction <<< "$OUT")" flat "--construction flat"
is "$(report_get step.toffoli <<< "$OUT")" 139 "H2 flat per step by hand: 139"

OUT2=$(lam lam-cost -q < "$TMP/h2.pauli")
is "$OUT2" "$(lam lam-cost -q "$TMP/h2.pauli")" "stdin and file give the same report"
is "$(lam lam-cost -q <(cat "$TMP/h2.pauli"))" "$OUT2" "a pipe given by name, <(...)"
gzip -c "$TMP/h2.pauli" > "$TMP/h2.pauli.gz"
is "$(lam lam-cost -q < "$TMP/h2.pauli.gz")" "$OUT2" "gzip stream on stdin"

runlam lam-cost -q --tsv -l h2 "$TMP/h2.pauli"
is "$(printf '%s\n' "$OUT" | wc -l | tr -d ' ')" 2 "--tsv: two rows"
is "$(printf '%s\n' "$OUT" | awk -F'\t' '{print NF}' | sort -u | wc -l | tr -d ' ')" 1 "--tsv: rows of equal width"
is "$(printf '%s\n' "$OUT" | awk -F'\t' 'NR == 2 { print $1 }')" h2 "-l puts a label column first"
lam lam-cost -q -o "$TMP/out.txt" "$TMP/h2.pauli"
is "$(cat "$TMP/out.txt")" "$OUT2" "-o writes the report"

# Anticommuting groups: {x:0 z:1, z:0-1} costs sqrt(3^2 + 4^2) = 5 (fact of
# the trade, common practice); the unlabelled z:1 adds 0.5.  Rotations: the
# group of two is R P R^dagger with one Pauli rotation each side, each
# controlled in its branch (two rotations): 4.
printf '2.0\n3 x:0 z:1 @0\n-4 z:0-1 @0\n0.5 z:1\n' > "$TMP/grouped.pauli"
runlam lam-cost -q --kind pauli "$TMP/grouped.pauli"
is "$RC" 0 "header-less grouped stream: exit 0"
is "$(report_get construction <<< "$OUT")" grouped "a grouped stream is priced by groups"
near "$(report_get lambda <<< "$OUT")" 5.5 1e-12 "grouped lambda 5.5"
is "$(report_get groups <<< "$OUT")" 2 "two groups"
is "$(report_get step.rotations <<< "$OUT")" 4 "one group of two: 4 rotations"
# rot bits ceil(log2(pi 5.5 4 / 8e-5)) = 20 -> 18 Toffolis each
is "$(report_get step.toffoli.rotations <<< "$OUT")" 72 "rotations as Toffolis: 4 x (20 - 2)"
runlam lam-cost -q --ungrouped "$TMP/grouped.pauli"
near "$(report_get lambda <<< "$OUT")" 7.5 1e-12 "--ungrouped: lambda 7.5"
is "$(report_get construction <<< "$OUT")" sparse "--ungrouped: sparse"

# A lam-norm style report.
printf 'kind\tpauli\nterms\t15\nconstant\t-0.098125\nlambda\t1.8859250000000003\nqubits\t4\n' > "$TMP/h2.norm"
runlam lam-cost -q "$TMP/h2.norm"
is "$RC" 0 "report input: exit 0"
is "$(report_get walk.steps <<< "$OUT")" 2315 "report input: same walk steps"
is "$(report_get unitaries <<< "$OUT")" 14 "report input: terms minus the identity"
is "$(printf '%s' "$OUT")" "$OUT2" "report and stream give the same estimate"

# A report whose first key is scope-first (the dot scheme) is still a report.
printf 'lambda.h1\t0.5\nkind\tpauli\nterms\t15\nconstant\t-0.0988639698\nlambda\t1.8850504924\nqubits\t4\n' > "$TMP/dotted.norm"
runlam lam-cost -q "$TMP/dotted.norm"
is "$(report_get walk.steps <<< "$OUT")" 2314 "report with dotted keys: same walk steps"

# Issue 13 item 4: the input is read once, through the stream reader; no
# temporary file (TMPDIR that does not exist is never asked for; called
# without LAM_WRAP, whose valgrind would want TMPDIR itself).
is "$(TMPDIR=$TMP/no-such-dir "$LAM_BIN/lam-cost" -q < "$TMP/h2.pauli")" "$OUT2" "stdin stream read without a temporary file"
is "$(TMPDIR=$TMP/no-such-dir "$LAM_BIN/lam-cost" -q < "$TMP/h2.norm")" "$OUT2" "stdin report read without a temporary file"
is "$(lam lam-cost -q <(cat "$TMP/h2.norm"))" "$OUT2" "a report through a pipe given by name"
gzip -c "$TMP/h2.norm" > "$TMP/h2.norm.gz"
is "$(lam lam-cost -q < "$TMP/h2.norm.gz")" "$OUT2" "a gzip report, as a gzip stream"
printf '# lam-norm report\n\nkind\tpauli\nterms\t15\nconstant\t-0.098125\nlambda\t1.8859250000000003\nqubits\t4\n' > "$TMP/comment.norm"
is "$(lam lam-cost -q < "$TMP/comment.norm")" "$OUT2" "a report after a comment and a blank line"
printf 'kind\tpauli\nterms 15\n' > "$TMP/notab.norm"
runlam lam-cost < "$TMP/notab.norm"
is "$RC/${#OUT}" "65/0" "report line without a tab on stdin: exit 65, nothing written"
like "$ERR" "^lam-cost: <stdin>:2: report line without a tab between key and value" "names <stdin> and the line"
runlam lam-cost <(printf 'nan z:1\n')
like "$ERR" "^lam-cost: /dev/fd/[0-9]+:1: coefficient 'nan' is not finite" "a pipe given by name is named by its path"

# A spin-symmetric fragments stream (format of lam-factor(1)) on 2
# orbitals: fragment 0 one-body, fragment 1 the rank-one l = eps eps^T,
# eps = (0.6, 0.8), at l/4 on every pair.  Flat lambda 1.5 + 0.09 + 0.16 +
# 4 * 0.12 = 2.23; DF lambda 1.5 + (1/2)(1.4)^2 = 2.48; one factor, 4
# eigenvectors; walk steps pi * 2.48 / 0.00256 = 3043.4 -> 3044.
# Truncation (2n + 1) x discarded weight = 5e-4 > eps.trunc 1.6e-4.
cat > "$TMP/f.op" <<'OP'
#% lamina-op 2
#% kind: fragments
#% orbitals: 2
#% fragments: 2
#% discarded-weight: 1e-4
-0.5 R 0 0a
-0.5 R 0 0b
0.25 R 0 1a
0.25 R 0 1b
0.09 R 1 0a 0b
0.16 R 1 1a 1b
0.12 R 1 0a 1a
0.12 R 1 0a 1b
0.12 R 1 0b 1a
0.12 R 1 0b 1b
#% end
OP
runlam lam-cost "$TMP/f.op"
is "$RC" 0 "fragments stream: exit 0"
is "$(report_get construction <<< "$OUT")" df "fragments are priced by double factorization"
near "$(report_get lambda <<< "$OUT")" 2.48 1e-12 "DF walk lambda 2.48"
is "$(report_get df.factors <<< "$OUT")" 1 "one factor"
is "$(report_get df.eigenvectors <<< "$OUT")" 4 "four eigenvectors"
is "$(report_get walk.steps <<< "$OUT")" 3044 "DF walk steps 3044"
is "$(report_get step.rotations <<< "$OUT")" 16 "8n = 16 rotations"
is "$(report_get run.qubits.system <<< "$OUT")" 4 "2 orbitals: 4 system qubits"
near "$(report_get trunc.input <<< "$OUT")" 5e-4 1e-15 "truncation bound from discarded weight"
is "$(report_get trunc.within <<< "$OUT")" no "truncation beyond its share: no"
like "$ERR" "exceeds its share" "warns that the truncation exceeds eps.trunc"
runlam lam-cost -q --construction flat "$TMP/f.op"
near "$(report_get lambda <<< "$OUT")" 2.23 1e-12 "flat fragments lambda 2.23"
is "$(report_get unitaries <<< "$OUT")" 10 "flat: 10 unitaries"

# A fragment that is not spin symmetric: no DF row, the flat count stays.
printf '#%% lamina-op 2\n#%% kind: fragments\n#%% orbitals: 2\n0.25 R 0 0a\n-0.5 R 0 0a 1b\n#%% end\n' > "$TMP/asym.op"
runlam lam-cost -q "$TMP/asym.op"
is "$RC" 0 "asymmetric fragments: exit 0"
is "$(report_get construction <<< "$OUT")" flat "asymmetric fragments: flat count"
runlam lam-cost -q --construction df "$TMP/asym.op"
is "$RC" 65 "--construction df on asymmetric fragments: exit 65"
like "$ERR" "spin-symmetric" "says why"

# Issue 15.12: --tsv has the same columns whatever the input.
h_p=$(lam lam-cost -q --tsv "$TMP/h2.pauli" | head -1)
h_g=$(lam lam-cost -q --tsv "$TMP/grouped.pauli" | head -1)
h_f=$(lam lam-cost -q --tsv "$TMP/f.op" | head -1)
is "$h_g" "$h_p" "--tsv columns of a grouped stream = those of a pauli stream"
is "$h_f" "$h_p" "--tsv columns of a fragments stream = those of a pauli stream"

# Table mode: one row per construction and input, sorted by run.toffoli.
runlam lam-cost -q -C "$TMP/h2.pauli" "$TMP/grouped.pauli" "$TMP/f.op"
is "$RC" 0 "-C: exit 0"
is "$(head -1 <<< "$OUT" | cut -f1-3,9,10)" "$(printf 'input\tform\tconstruction\trun.toffoli\trun.qubits')" "-C header"
is "$(grep -vc '^#' <<< "$OUT")" 8 "-C: header + 2 + 3 + 2 rows"
is "$(awk -F'\t' 'NR > 1 && !/^#/ { print $9 }' <<< "$OUT" | sort -n -c 2>&1 && echo sorted)" sorted "rows sorted by run.toffoli"
like "$(tail -1 <<< "$OUT")" "^# estimates of one construction.*distillation, routing, layout" "-C says what the rows leave out"
runlam lam-cost -q -C --construction flat "$TMP/h2.pauli" "$TMP/f.op"
is "$(grep -vc '^#' <<< "$OUT")" 3 "-C --construction flat: one row per input"
runlam lam-cost -q -C -l water "$TMP/h2.pauli"
is "$(awk -F'\t' 'NR == 2 { print $1 }' <<< "$OUT")" water "-C -l: label column"

# Issue 15.1: a coefficient of 1e200 must be refused for what it is, not
# blamed on the target error.
printf '#%% lamina-op 2\n#%% kind: pauli\n1e200 x:0\n0.5 z:1\n#%% end\n' > "$TMP/huge.pauli"
runlam lam-cost "$TMP/huge.pauli"
is "$RC" 65 "1e200 coefficient: exit 65"
like "$ERR" "coefficient|one-norm" "names the coefficient or the one-norm"
is "$(grep -c 'target error too small' <<< "$ERR")" 0 "does not blame the target error"
printf '#%% lamina-op 2\n#%% kind: pauli\n1e308 x:0\n1e308 z:0\n#%% end\n' > "$TMP/inf.pauli"
runlam lam-cost "$TMP/inf.pauli"
is "$RC" 65 "one-norm overflowing a double: exit 65"
like "$ERR" "coefficient|one-norm" "names the coefficient or the one-norm"

# Bad input.
printf '#%% lamina-op 2\n#%% kind: pauli\n0.5 x:0\n0.x z:1\n#%% end\n' > "$TMP/badnum.pauli"
runlam lam-cost "$TMP/badnum.pauli"
is "$RC" 65 "coefficient that does not parse: exit 65"
like "$ERR" "^lam-cost: .*badnum.pauli:4: " "message names file and line"
printf '#%% lamina-op 2\n#%% kind: pauli\n0.5 x:0\n0.25 z:1\n' > "$TMP/cut.pauli"
runlam lam-cost "$TMP/cut.pauli"
is "$RC" 65 "stream cut before #% end: exit 65"
like "$ERR" "truncated" "says truncated"
printf '#%% lamina-op 2\n#%% kind: spinfree\n#%% orbitals: 1\n-1.0 0 0\n#%% end\n' > "$TMP/sf.op"
runlam lam-cost "$TMP/sf.op"
is "$RC" 65 "spinfree stream: exit 65"
like "$ERR" "^lam-cost: [^ ]*sf.op:4: lam-cost reads pauli or fragments" "wrong kind: file:line and reason"
printf '#%% lamina-op 2\n#%% kind: pauli\n-1.25\n#%% end\n' > "$TMP/id.pauli"
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
runlam lam-cost --error 1e-300 "$TMP/h2.pauli"
is "$RC" 65 "walk steps past 2^53: exit 65"
runlam lam-cost -q -C "$TMP/h2.pauli" "$TMP/sf.op"
is "$RC" 65 "-C with one bad input: exit 65"
is "$OUT" "" "-C with one bad input: no table"

# Bad command lines: one message, exit 64.
for args in "--error -1" "--error abc" "--prep-bits 0" "--rot-bits 2" "--kind spinfree" \
            "--split 0.8,0.1" "--split 0.8,0.3,0.1" "--split 1,0,0" "--construction tensor" \
            "-C --tsv" "-e 0.001" "-b 10" "--bogus"; do
    runlam lam-cost $args "$TMP/h2.pauli"
    is "$RC" 64 "$args: exit 64"
    is "$(printf '%s\n' "$ERR" | grep -c '^lam-cost:')" 1 "$args: one message"
done
runlam lam-cost "$TMP/h2.pauli" "$TMP/h2.pauli"
is "$RC" 64 "two inputs without -C: exit 64"
runlam lam-cost -C - - < "$TMP/h2.pauli"
is "$RC" 64 "stdin twice: exit 64"
runlam lam-cost "$TMP/does-not-exist"
is "$RC" 66 "missing file: exit 66"
like "$ERR" "^lam-cost: cannot open .*does-not-exist" "names the missing file"
runlam lam-cost "$TMP"
is "$RC" 66 "a directory: exit 66"

runlam lam-cost --help
is "$RC" 0 "--help: exit 0"
like "$OUT" "Eh" "help gives units"
like "$OUT" "Example" "help has an example"
runlam lam-cost -V
is "$RC" 0 "-V: exit 0"
like "$OUT" "^lam-cost" "version names the program"

done_testing
