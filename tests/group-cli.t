#!/bin/bash
# lam-group on the command line: good input, bad input, exit codes.
#
# Reference values: the Jordan-Wigner Hamiltonian of H2/STO-3G at 1.4 bohr
# (interleaved spin order), derived by hand from the Szabo-Ostlund integrals
# (tests/data/h2-sto3g-r1.4bohr-jw.op says how).  Its only anticommuting pairs are a single Z
# with an XXYY-type term (common practice: two strings anticommute when
# they differ on an odd number of qubits where both act), and the XXYY-type
# terms commute with each other, so the best grouping pairs each Z_i with
# one XXYY-type term and leaves the six ZZ terms alone.
source "$(dirname "$0")/lib/tap.sh"

H2="$TMP/h2.pauli"
cp "$TESTS_DIR/data/h2-sto3g-r1.4bohr-jw.op" "$H2"
want=$(awk 'BEGIN { a = 0.171275; b = 0.22305; x = 0.045325
  printf "%.10f", 2 * sqrt(a*a + x*x) + 2 * sqrt(b*b + x*x) + 0.16865 + 0.174375 + 2 * 0.120575 + 2 * 0.1659 }')

runlam lam-group --help
is "$RC" 0 "--help exits 0"
like "$OUT" "Eh" "--help names the unit"
like "$OUT" "Example" "--help has an example"
runlam lam-group --version
is "$RC" 0 "--version exits 0"

runlam lam-group -r "$TMP/r" "$H2"
is "$RC" 0 "groups the H2 Hamiltonian"
is "$(report_get groups <"$TMP/r")" 10 "H2: 10 groups (4 pairs, 6 single ZZ)"
near "$(report_get lambda_grouped <"$TMP/r")" "$want" 1e-9 "H2: lambda_grouped of the best pairing"
near "$(report_get lambda <"$TMP/r")" 1.885925 1e-9 "H2: lambda, the sum of |c| of the file"
like "$OUT" "grouping: anticommuting" "header says how it is grouped"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | head -1)" "-0.098125000000000004" "identity first, unlabelled"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | grep -vc '@[0-9]*$')" 1 "every other term labelled"
is "$(printf '%s\n' "$OUT" | tail -1)" "#% end" "stream closed"
printf '%s\n' "$OUT" >"$TMP/h2.g"

runlam lam-group --check "$TMP/h2.g"
is "$RC" 0 "--check accepts lam-group's output"
near "$(printf '%s\n' "$OUT" | report_get lambda_grouped)" "$want" 1e-9 "--check reports the same lambda_grouped"

# z:0 and z:1 commute: put them in one group
awk '/ z:0 @/ { sub(/@[0-9]+$/, "@4") } / z:1 @/ { sub(/@[0-9]+$/, "@4") } { print }' "$TMP/h2.g" >"$TMP/bad.g"
zline=$(grep -n ' z:1 @' "$TMP/bad.g" | cut -d: -f1)
runlam lam-group --check "$TMP/bad.g"
is "$RC" 65 "--check: a commuting pair is exit 65"
like "$ERR" "^lam-group: .*bad.g:$zline: group 4: 'z:1' commutes with 'z:0'" "--check names the pair and the line"

runlam lam-group --check --tsv "$TMP/h2.g"
is "$(printf '%s\n' "$OUT" | wc -l)" 2 "--tsv: header row and value row"

runlam lam-group -o "$TMP/out.g" -z --report "$TMP/rep" "$H2"
is "$RC" 0 "-o, -z and --report"
is "$(zcat "$TMP/out.g" | tail -1)" "#% end" "-z writes gzip"
is "$(report_get groups <"$TMP/rep")" 10 "--report writes the report to a file"
runlam lam-group --check "$TMP/out.g"
is "$RC" 0 "gzip input read back"

a=$(lam lam-group "$H2" 2>/dev/null | md5sum)
b=$(lam lam-group "$H2" 2>/dev/null | md5sum)
is "$a" "$b" "same input, same output"

runlam lam-group --commuting -r "$TMP/r" "$H2"
is "$RC" 0 "--commuting"
like "$OUT" "grouping: commuting" "--commuting header"
# the Z terms all commute, the XXYY-type terms too: two groups suffice
is "$(report_get groups <"$TMP/r")" 2 "--commuting: Z strings and XXYY strings"
printf '%s\n' "$OUT" >"$TMP/c.g"
runlam lam-group --check "$TMP/c.g"
is "$RC" 0 "--check reads the grouping from the header"

for m in sorted best; do
    runlam lam-group -m "$m" --refine 0 --no-split -r "$TMP/r" "$H2"
    near "$(report_get lambda_grouped <"$TMP/r")" "$want" 1e-9 "--method $m"
done

# bad input
runlam lam-group --method fastest "$H2"
is "$RC" 64 "unknown method: exit 64"
runlam lam-group --bogus
is "$RC" 64 "unknown option: exit 64"
runlam lam-group "$H2" "$H2"
is "$RC" 64 "two inputs: exit 64"
runlam lam-group "$TMP/missing"
is "$RC" 66 "missing file: exit 66"
printf '#%% lamina-op 2\n#%% kind: spinfree\n1.0 0 0\n#%% end\n' >"$TMP/sf"
runlam lam-group "$TMP/sf"
is "$RC" 65 "spinfree input: exit 65"
like "$ERR" "pauli" "says what it wants"
printf '0.5 x:0\n0.25 Q1\n' >"$TMP/badletter"
runlam lam-group "$TMP/badletter"
is "$RC" 65 "unknown letter: exit 65"
like "$ERR" "badletter:2:" "names the line"
printf '#%% lamina-op 2\n#%% kind: pauli\n0.5 x:0\n' >"$TMP/trunc"
runlam lam-group "$TMP/trunc"
is "$RC" 65 "truncated stream: exit 65"
printf '0.5 x:0\nnan z:1\n' >"$TMP/nan"
runlam lam-group "$TMP/nan"
is "$RC" 65 "NaN coefficient: exit 65"

# header-less input on stdin, already labelled input re-grouped
runlam_in $'0.5 x:0 @7\n0.5 z:0 @9\n0.25 z:1\n' lam-group -r "$TMP/r"
is "$RC" 0 "stdin without header"
is "$(report_get groups <"$TMP/r")" 2 "old labels replaced: x:0 with z:0, z:1 alone"
runlam_in $'0.5 x:0 @1\n0.5 z:0 @1\n0.25 z:1 @1\n' lam-group --check
is "$RC" 65 "--check on stdin without qubits: exit 65"
like "$ERR" "<stdin>:3: group 1: 'z:1' commutes with 'x:0' of line 1" "names both lines, also without a qubits line"

# Issue 15 item 11: the report goes to --report only, never to stderr, so
# errors stay visible; without --report there is none.
runlam lam-group "$H2"
is "$RC/$ERR" "0/" "no --report: nothing on stderr"
runlam lam-group -r - -o "$TMP/s.g" "$H2"
is "$(report_get groups <<<"$OUT")" 10 "-r - with -o FILE: the report on stdout"
runlam lam-group -r - "$H2"
is "$RC" 64 "-r - without -o: exit 64 (stdout carries the stream)"
runlam lam-group -t "$H2"
is "$RC" 64 "--tsv without --report: exit 64"

# Issue 15 item 4: an unwritable report path fails before the stream is written.
runlam lam-group -r "$TMP/no-such-dir/rep" "$H2"
is "$RC/${#OUT}" "74/0" "unwritable --report: exit 74, nothing on stdout"
like "$ERR" "^lam-group: cannot open .*no-such-dir/rep" "unwritable --report: message names the path"

# Issue 15 item 12: one fixed TSV column set for every mode, a label column.
runlam lam-group -r "$TMP/a.tsv" -t -l anti -o /dev/null "$H2"
runlam lam-group --commuting -r "$TMP/c.tsv" -t -o /dev/null "$H2"
runlam lam-group --check -t "$TMP/c.g"
printf '%s\n' "$OUT" >"$TMP/k.tsv"
is "$(head -qn1 "$TMP/a.tsv" "$TMP/c.tsv" "$TMP/k.tsv" | sort -u | wc -l)" 1 "--tsv: the same header for anticommuting, commuting and --check"
col() { awk -F'\t' -v k="$1" 'NR == 1 { for (i = 1; i <= NF; i++) if ($i == k) c = i; next } { print $c }' "$2"; }
is "$(col label "$TMP/a.tsv")/$(col label "$TMP/c.tsv")" "anti/$H2" "--tsv: -l sets the label, the input's name by default"
is "$(col group_norm_sum "$TMP/a.tsv")/$(col lambda_grouped "$TMP/c.tsv")/$(col status "$TMP/k.tsv")" "NA/NA/ok" \
    "--tsv: values of the other grouping are NA"
near "$(col lambda_grouped "$TMP/a.tsv")" "$want" 1e-9 "--tsv: lambda_grouped in its column"

one_bad_option_message lam-group -r

done_testing
