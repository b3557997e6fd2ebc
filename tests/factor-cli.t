#!/bin/bash
# lam-factor on the command line: good input, bad input, exit codes.
source "$(dirname "$0")/lib/tap.sh"

# H2, STO-3G, R = 1.4 bohr, MO integrals of the textbook worked example
# (Szabo and Ostlund, Modern Quantum Chemistry (1989), ch. 3; from memory,
# four figures).  (12|12) = 0.1813 fills (12|21), (21|12), (21|21) by the
# format's 8-fold symmetry.
cp "$TESTS_DIR/data/h2-sto3g-r1.4bohr.fcidump" "$TMP/h2.fcidump"
lam lam-ints "$TMP/h2.fcidump" >"$TMP/h2.sf"
ok $? "lam-ints turns the FCIDUMP into a spinfree stream"

runlam lam-factor --help
is "$RC" 0 "--help exits 0"
like "$OUT" "Usage: lam-factor" "--help shows the synopsis"
like "$OUT" "Eh" "--help names the unit"
like "$OUT" "Example" "--help has an example"
runlam lam-factor --version
is "$RC" 0 "--version exits 0"
like "$OUT" "^lam-factor .*[0-9]+\.[0-9]+" "--version prints the version"

# Good input, both methods.
for m in double full-rank; do
    runlam lam-factor --method "$m" --report "$TMP/rep.$m" -o "$TMP/h2.$m" "$TMP/h2.sf"
    is "$RC" 0 "$m: exit 0"
    is "$(head -2 "$TMP/h2.$m" | tail -1)" "#% kind: fragments" "$m: kind fragments"
    is "$(tail -1 "$TMP/h2.$m")" "#% end" "$m: stream closed with #% end"
    like "$(cat "$TMP/h2.$m")" "^#% method: $m$" "$m: method in the header"
    lam_rep=$(report_get lambda <"$TMP/rep.$m")
    lam_sum=$(awk '$2 == "R" { s += ($1 < 0 ? -$1 : $1) } END { printf "%.17g", s }' "$TMP/h2.$m")
    near "$lam_rep" "$lam_sum" 1e-12 "$m: reported lambda is the sum of |c| over the R lines"
    n_rep=$(report_get unitaries <"$TMP/rep.$m")
    n_sum=$(awk '$2 == "R"' "$TMP/h2.$m" | wc -l)
    is "$n_rep" "$n_sum" "$m: reported unitaries is the number of R lines"
    # The identity coefficient of any Majorana-based form of H (common
    # practice): E0 + sum_p h_pp + 1/2 sum_pr (pp|rr) - 1/4 sum_pq (pq|qp)
    # = 0.7143 - 1.7284 + 1/2 (0.6746 + 2*0.6636 + 0.6975)
    #   - 1/4 (0.6746 + 0.6975 + 2*0.1813) = -0.098125.
    near "$(report_get constant <"$TMP/rep.$m")" -0.098125 1e-9 "$m: identity coefficient"
    # Fact of the trade (common practice): lambda >= (E_max - E_min)/2 of
    # the Fock space.  E_max >= E(empty) = 0.7143 and E_min <= E_FCI =
    # -1.1373 (Szabo and Ostlund, from memory), so the half range, and
    # lambda with it, is at least 0.9258 Eh.
    awk -v l="$lam_rep" 'BEGIN { exit !(l >= 0.9258) }'
    ok $? "$m: lambda $lam_rep >= 0.9258, a lower bound on the half range"
done

# Same operator from stdin, gzip output, TSV report.
runlam lam-factor -z -o "$TMP/h2.gz" --report "$TMP/rep.tsv" --tsv <"$TMP/h2.sf"
is "$RC" 0 "stdin input, gzip output"
is "$(gzip -dc "$TMP/h2.gz" | tail -1)" "#% end" "gzip output decompresses to a whole stream"
is "$(wc -l <"$TMP/rep.tsv" | tr -d ' ')" 2 "--tsv report: header row and value row"
like "$(head -1 "$TMP/rep.tsv")" "lambda" "--tsv header names lambda"
like "$(sed -n 2p "$TMP/rep.tsv")" "^<stdin>"$'\t' "--tsv label column: the input's name by default"

# The TSV columns are one fixed set whatever the method, NA where a figure
# does not apply; -t and -l are the short forms, -l sets the label.
runlam lam-factor -m full-rank -r "$TMP/rep.fr" -t -l fr -o /dev/null "$TMP/h2.sf"
runlam lam-factor -m double -r "$TMP/rep.df" -t -l df -o /dev/null "$TMP/h2.sf"
is "$(head -1 "$TMP/rep.fr")" "$(head -1 "$TMP/rep.df")" "--tsv: the same header for double and full-rank"
col() { awk -F'\t' -v k="$1" 'NR == 1 { for (i = 1; i <= NF; i++) if ($i == k) c = i; next } { print $c }' "$2"; }
is "$(col label "$TMP/rep.fr")/$(col trunc.weight "$TMP/rep.fr")/$(col fit.iterations "$TMP/rep.df")" "fr/NA/NA" \
    "--tsv: -l sets the label; figures of the other method are NA"
for k in lambda.h1 lambda.h2 lambda.pauli fragments.h2 residual.h2 error.max dropped.lambda; do
    is "$(col "$k" "$TMP/rep.df" | grep -Ec '^-?[0-9]')" 1 "--tsv: $k is a number for double factorization"
done
# lambda = lambda.h1 + lambda.h2 (the one- and two-body unitaries).
runlam lam-factor -r "$TMP/rep.kv" -o /dev/null "$TMP/h2.sf"
near "$(awk -F'\t' '$1 == "lambda.h1" { a = $2 } $1 == "lambda.h2" { b = $2 } END { printf "%.15g", a + b }' "$TMP/rep.kv")" \
    "$(report_get lambda <"$TMP/rep.kv")" 1e-12 "lambda = lambda.h1 + lambda.h2"
# Issue 11: none of the old snake-case key names is left.
like "$(cut -f1 "$TMP/rep.kv" | tr '\n' ' ')" "^[a-z0-9.]+( [a-z0-9.]+)* \$" "report keys: scope-first dot names only"

# An unwritable report path fails before a byte of the stream is written.
runlam lam-factor -r "$TMP/no-such-dir/rep" "$TMP/h2.sf"
is "$RC/${#OUT}" "74/0" "unwritable --report: exit 74 and nothing on stdout"
like "$ERR" "^lam-factor: cannot open .*no-such-dir/rep" "unwritable --report: message names the path"
runlam lam-factor -r "$TMP/no-such-dir/rep" -o "$TMP/fr.out" "$TMP/h2.sf"
ok "$([ ! -e "$TMP/fr.out" ]; echo $?)" "unwritable --report: -o FILE not created"

# Truncation.
runlam lam-factor --tol 0.1 --report "$TMP/rep.t" -o "$TMP/h2.t" "$TMP/h2.sf"
is "$RC" 0 "--tol 0.1 runs"
dw=$(report_get trunc.weight <"$TMP/rep.t")
err=$(report_get error.max <"$TMP/rep.t")
awk -v d="$dw" -v e="$err" 'BEGIN { exit !(d > 0 && d <= 0.1 && e <= d + 1e-12) }'
ok $? "--tol 0.1: discarded weight in (0, 0.1], integral error within it (got $dw, $err)"

# Bad input.
runlam_in $'#% lamina-op 2\n#% kind: pauli\n#% qubits: 2\n0.5 z:0\n#% end\n' lam-factor
is "$RC" 65 "pauli stream: exit 65"
like "$ERR" "^lam-factor: .*spinfree" "pauli stream: message names the kind wanted"

runlam_in $'#% lamina-op 2\n#% kind: spinfree\n#% orbitals: 2\n0.1 0 1 0 0\n#% end\n' lam-factor
is "$RC" 65 "a non-Hermitian operator: exit 65"
like "$ERR" "^lam-factor: <stdin>: the operator is not Hermitian: \\(0 0\\|0 1\\)" "a non-Hermitian operator: the pair named"
# Hermitian, (01|01) = (10|10), but (10|01) = 0: no real symmetry
runlam_in $'#% lamina-op 2\n#% kind: spinfree\n#% orbitals: 2\n0.1 0 1 0 1\n0.1 1 0 1 0\n#% end\n' lam-factor
is "$RC" 65 "integrals without real symmetry: exit 65"
like "$ERR" "^lam-factor: <stdin>: the integrals lack the 8-fold symmetry of real orbitals .*; the factorization needs it" "integrals without real symmetry: message"

runlam_in $'#% lamina-op 2\n#% kind: spinfree\n#% orbitals: 2\n0.1 0 0\n' lam-factor
is "$RC" 65 "truncated stream: exit 65"
like "$ERR" "truncated" "truncated stream: message"

runlam_in $'#% lamina-op 2\n#% kind: spinfree\n#% orbitals: 2\nnan 0 0\n#% end\n' lam-factor
is "$RC" 65 "NaN coefficient: exit 65"

runlam_in '' lam-factor
is "$RC" 65 "empty input: exit 65"
like "$ERR" "^lam-factor: <stdin>: .*empty" "empty input: message"

runlam lam-factor "$TMP/does-not-exist"
is "$RC" 66 "missing input: exit 66"

for bad in -1 abc nan inf ""; do
    runlam lam-factor --tol "$bad" "$TMP/h2.sf"
    is "$RC" 64 "--tol '$bad': exit 64"
done
like "$ERR" "^lam-factor: .*--tol" "bad --tol: message names the option"
runlam lam-factor --method full-rank --tol 0 "$TMP/h2.sf"
is "$RC" 64 "full-rank --tol 0: exit 64"
runlam lam-factor --method triple "$TMP/h2.sf"
is "$RC" 64 "unknown method: exit 64"
like "$ERR" "double or full-rank" "unknown method: message lists the methods"
runlam lam-factor --cutoff -1 "$TMP/h2.sf"
is "$RC" 64 "negative --cutoff: exit 64"
runlam lam-factor --max-fragments 0 "$TMP/h2.sf"
is "$RC" 64 "--max-fragments 0: exit 64"
runlam lam-factor "$TMP/h2.sf" "$TMP/h2.sf"
is "$RC" 64 "two inputs: exit 64"
runlam lam-factor --report - "$TMP/h2.sf"
is "$RC" 64 "--report - without -o: exit 64"
runlam lam-factor --tsv "$TMP/h2.sf"
is "$RC" 64 "--tsv without --report: exit 64"
runlam lam-factor -t 0.1 "$TMP/h2.sf"
is "$RC" 64 "-t is --tsv now, not --tol: a stray value is an error"
one_bad_option_message lam-factor -m

# Full rank that cannot reach --tol within --max-fragments.
runlam lam-factor --method full-rank --tol 1e-12 --max-fragments 1 "$TMP/h2.sf"
is "$RC" 65 "full-rank over --max-fragments: exit 65"
like "$ERR" "max-fragments" "full-rank over --max-fragments: message"
is "$OUT" "" "full-rank over --max-fragments: nothing on stdout"

done_testing
