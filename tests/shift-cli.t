#!/bin/bash
# lam-shift on the command line: good input, bad input, exit codes.
source "$(dirname "$0")/lib/tap.sh"

# H2 in a minimal basis at R = 1.4 bohr: Szabo and Ostlund, Modern Quantum
# Chemistry (Dover 1996), section 3.5.2 (values from memory).
cp "$TESTS_DIR/data/h2-sto3g-r1.4bohr.fcidump" "$TMP/h2.fcidump"
lam lam-ints "$TMP/h2.fcidump" >"$TMP/h2.sf"

runlam lam-shift --help
is "$RC" 0 "--help exits 0"
like "$OUT" "Usage: lam-shift" "--help shows the synopsis"
like "$OUT" "Eh" "--help names the unit"
like "$OUT" "Example" "--help shows an example"
runlam lam-shift --version
is "$RC" 0 "--version exits 0"
like "$OUT" "lam-shift \\(lamina\\)" "--version names the program"

# ---- good input ----
runlam lam-shift -r "$TMP/rep" "$TMP/h2.sf"
is "$RC" 0 "shift of H2 exits 0"
printf '%s\n' "$OUT" >"$TMP/hk.sf"
like "$OUT" "^#% lamina-op 2" "stream header written"
like "$OUT" "#% kind: spinfree" "H - K is spinfree"
like "$OUT" "#% shift-a1: " "a1 in the metadata"
like "$OUT" "#% shift-xi: 0 0 " "xi in the metadata"
like "$OUT" "#% end" "stream closed"
before=$(report_get lambda_before <"$TMP/rep")
after=$(report_get lambda_after <"$TMP/rep")
gap=$(report_get relative_gap <"$TMP/rep")
for k in lambda_before lambda_after gap a1 a2 xi_trace xi_max_abs iterations; do
    like "$(cut -f1 "$TMP/rep")" "^$k\$" "report has $k"
done
# the closed-form one-norm of H from lam-norm (another program)
lbefore=$(lam lam-norm "$TMP/h2.sf" | report_get lambda)
near "$before" "$lbefore" 1e-12 "lambda_before = lam-norm of H"
lafter=$(lam lam-norm "$TMP/hk.sf" | report_get lambda)
near "$after" "$lafter" 1e-10 "lambda_after = lam-norm of the written H - K"
awk -v a="$after" -v b="$before" 'BEGIN { exit !(a < b) }'
ok $? "the shift lowers lambda ($before -> $after)"
awk -v g="$gap" 'BEGIN { exit !(g >= 0 && g <= 1e-10) }'
ok $? "relative gap within the default 1e-10 ($gap)"

# the N block is untouched (lam-range, another program)
if [ -x "$LAM_BIN/lam-range" ]; then
    n1=$(lam lam-range "$TMP/h2.sf" | report_get n_min)
    n2=$(lam lam-range "$TMP/hk.sf" | report_get n_min)
    near "$n2" "$n1" 1e-9 "lam-range n_min of H - K = of H"
    # Szabo-Ostlund full CI, -1.1373 Eh (from memory), 4 decimals
    near "$n1" -1.1373 5e-5 "H2 ground state -1.1373 Eh (Szabo-Ostlund)"
    runlam lam-shift --emit-shift "$TMP/h2.sf"
    printf '%s\n' "$OUT" >"$TMP/k.sf"
    kmin=$(lam lam-range "$TMP/k.sf" | report_get n_min)
    kmax=$(lam lam-range "$TMP/k.sf" | report_get n_max)
    near "$kmin" 0 1e-12 "K: n_min is 0 on the N block"
    near "$kmax" 0 1e-12 "K: n_max is 0 on the N block"
fi

runlam lam-shift -t -r "$TMP/r.tsv" "$TMP/h2.sf"
is "$(wc -l <"$TMP/r.tsv")" 2 "--tsv: one header row and one value row"
like "$(head -1 "$TMP/r.tsv")" "lambda_before" "--tsv header names the keys"
runlam lam-shift --spin -t -r "$TMP/rs.tsv" -l spin "$TMP/h2.sf"
is "$(head -1 "$TMP/rs.tsv")" "$(head -1 "$TMP/r.tsv")" "--tsv: the same columns with and without --spin"
is "$(cut -f1 "$TMP/r.tsv" | tail -1)/$(cut -f1 "$TMP/rs.tsv" | tail -1)" "$TMP/h2.sf/spin" "--tsv: label column, the input's name by default, -l sets it"
is "$(awk -F'\t' 'NR == 1 { for (i = 1; i <= NF; i++) if ($i == "b1") c = i } NR == 2 { print $c }' "$TMP/r.tsv")" NA "--tsv: b1 is NA without --spin"
runlam lam-shift "$TMP/h2.sf"
is "$RC/$ERR" "0/" "no --report: no report, nothing on stderr"
runlam lam-shift -t "$TMP/h2.sf"
is "$RC" 64 "--tsv without --report: exit 64"
runlam lam-shift -r - "$TMP/h2.sf"
is "$RC" 64 "-r - without -o: exit 64"
# Issue 15 item 4: an unwritable report path fails before the operator is written.
runlam lam-shift -r "$TMP/no-such-dir/rep" "$TMP/h2.sf"
is "$RC/${#OUT}" "74/0" "unwritable --report: exit 74, nothing on stdout"
like "$ERR" "^lam-shift: cannot open .*no-such-dir/rep" "unwritable --report: message names the path"
runlam lam-shift --dump-lp "$TMP/no-such-dir/lp" -r "$TMP/lp.rep" "$TMP/h2.sf"
is "$RC/${#OUT}" "74/0" "unwritable --dump-lp: exit 74, nothing on stdout"
runlam lam-shift --dump-lp "$TMP/lp" -o /dev/null "$TMP/h2.sf"
like "$(grep "^params" "$TMP/lp")" "^params [0-9]+$" "--dump-lp writes the linear program"
one_bad_option_message lam-shift -n

runlam lam-shift -q --report "$TMP/r2" -o "$TMP/out.sf" "$TMP/h2.sf"
is "$RC$ERR$OUT" "0" "--report and -o: nothing on stdout or stderr"
like "$(cat "$TMP/r2")" "lambda_after" "--report FILE holds the report"
like "$(cat "$TMP/out.sf")" "#% end" "-o FILE holds the stream"

runlam lam-shift --terms a1 -r "$TMP/rep" "$TMP/h2.sf"
a2=$(report_get a2 <"$TMP/rep")
is "$a2" 0 "--terms a1: a2 stays 0"
like "$(printf '%s\n' "$OUT" | grep -c 'shift-xi:')" "^0$" "--terms a1: no xi"

runlam lam-shift -n 2 --terms a1,a2 "$TMP/h2.sf"
is "$RC" 0 "--electrons and --terms a1,a2"

# fermion input that is spin-free gives the same optimum
lam lam-ints --fermion "$TMP/h2.fcidump" >"$TMP/h2.ferm"
runlam lam-shift -r "$TMP/rep" "$TMP/h2.ferm"
is "$RC" 0 "fermion input accepted"
near "$(report_get lambda_after <"$TMP/rep")" "$after" 1e-12 "fermion input: same optimum"

# spin terms
runlam lam-shift --spin -r "$TMP/rep" "$TMP/h2.sf"
is "$RC" 0 "--spin exits 0"
like "$OUT" "#% kind: fermion" "--spin writes a fermion stream"
like "$OUT" "#% shift-b1: " "--spin: b1 in the metadata"
sa=$(report_get lambda_after <"$TMP/rep")
awk -v a="$sa" -v b="$after" 'BEGIN { exit !(a <= b * (1 + 1e-12)) }'
ok $? "--spin never does worse ($sa <= $after)"
if [ -x "$LAM_BIN/lam-map" ]; then
    sl=$(printf '%s\n' "$OUT" | lam lam-map | lam lam-norm | report_get lambda)
    near "$sl" "$sa" 1e-10 "--spin: lam-map | lam-norm of the output = lambda_after"
fi

# a second shift: the metadata then holds the sum of both (K is linear in
# its parameters), so the original operator can still be rebuilt
lam lam-shift -q --report "$TMP/ra" "$TMP/h2.sf" >"$TMP/s1.sf"
lam lam-shift -q --report "$TMP/rb" "$TMP/s1.sf" >"$TMP/s2.sf"
a1a=$(report_get a1 <"$TMP/ra")
a1b=$(report_get a1 <"$TMP/rb")
a1rec=$(awk '/^#% shift-a1:/ { print $3 }' "$TMP/s2.sf")
near "$a1rec" "$(awk -v a="$a1a" -v b="$a1b" 'BEGIN { printf "%.17g", a + b }')" 1e-15 \
    "second shift: recorded a1 is the sum of both"
is "$(grep -c '^#% shift-terms:' "$TMP/s2.sf")" 1 "second shift: one set of shift metadata"
near "$(report_get lambda_after <"$TMP/rb")" "$(report_get lambda_after <"$TMP/ra")" 1e-10 \
    "second shift: already optimal"
runlam lam-shift --electrons 1 "$TMP/s1.sf"
is "$RC" 65 "second shift for another electron number: exit 65"
like "$ERR" "already shifted for 2 electrons" "second shift for another N: message"

# ... and rebuilt: H = (H - K1 - K2) + the K recorded
runlam lam-shift --emit-recorded "$TMP/s2.sf"
is "$RC" 0 "--emit-recorded exits 0"
printf '%s\n' "$OUT" >"$TMP/krec.sf"
if [ -x "$LAM_BIN/lam-sum" ]; then
    lam lam-sum "$TMP/h2.sf" --scale -1 "$TMP/s2.sf" --scale -1 "$TMP/krec.sf" >"$TMP/diff.sf"
    near "$(lam lam-norm "$TMP/diff.sf" | report_get lambda)" 0 1e-13 \
        "H - (shifted twice + recorded K): lambda 0"
    near "$(lam lam-norm "$TMP/diff.sf" | report_get constant)" 0 1e-13 \
        "H - (shifted twice + recorded K): constant 0"
fi
runlam lam-shift --emit-recorded "$TMP/h2.sf"
is "$RC" 65 "--emit-recorded without shift metadata: exit 65"
like "$ERR" "no shift-\* metadata" "--emit-recorded without shift metadata: message"

sed 's/^#% shift-xi: 0 0 /#% shift-xi: 0 7 /' "$TMP/s1.sf" >"$TMP/bad-meta.sf"
runlam lam-shift "$TMP/bad-meta.sf"
is "$RC" 65 "recorded xi with an orbital out of range: exit 65"
like "$ERR" "lam-shift: .*bad-meta.sf:[0-9]+: orbital out of range: shift-xi" \
    "recorded xi out of range: file:line and reason"

# ---- bad input ----
runlam lam-shift --terms a1,a3 "$TMP/h2.sf"
is "$RC" 64 "unknown --terms word: exit 64"
like "$ERR" "lam-shift: --terms wants" "unknown --terms word: message"
runlam lam-shift --terms b1 "$TMP/h2.sf"
is "$RC" 64 "spin terms without --spin: exit 64"
runlam lam-shift --gap 0 "$TMP/h2.sf"
is "$RC" 64 "--gap 0: exit 64"
runlam lam-shift --spin --sz 0.5 "$TMP/h2.sf"
is "$RC" 64 "--sz 0.5 with 2 electrons: exit 64"
like "$ERR" "Sz = 0.5" "impossible Sz: message"
runlam lam-shift --bogus
is "$RC" 64 "unknown option: exit 64"
runlam lam-shift "$TMP/none.sf"
is "$RC" 66 "missing file: exit 66"

runlam_in $'1.0\n-0.5 0 0\n0.25 0 0 0 0\n' lam-shift
is "$RC" 64 "no electron number: exit 64"
like "$ERR" "give --electrons" "no electron number: message"
runlam_in $'1.0\n-0.5 0 0\n0.25 0 0 0 0\n' lam-shift --electrons 1
is "$RC" 0 "headerless spinfree stream with --electrons"
runlam_in $'1.0\n-0.5 0 0\n0.25 0 0 0 0\n' lam-shift --electrons 3
is "$RC" 64 "3 electrons in 1 orbital: exit 64"

runlam_in $'#% lamina-op 2\n#% kind: pauli\n0.5 z:0\n#% end\n' lam-shift --electrons 1
is "$RC" 65 "pauli input: exit 65"
like "$ERR" "lam-shift: <stdin>.*not pauli" "pauli input: message"
runlam_in $'#% lamina-op 2\n#% kind: spinfree\n#% electrons: 2\n-0.5 0 0\n' lam-shift
is "$RC" 65 "truncated stream: exit 65"
like "$ERR" "truncated" "truncated stream: message"
runlam_in $'#% lamina-op 2\n#% kind: spinfree\n#% electrons: 2\n-0.5 0 0\nnan 0 1\n#% end\n' lam-shift
is "$RC" 65 "NaN coefficient: exit 65"
like "$ERR" "lam-shift: <stdin>:5: " "NaN coefficient: file:line"
runlam_in $'#% lamina-op 2\n#% kind: spinfree\n#% electrons: 2\n-0.5 0 1\n0.25 1 0\n#% end\n' lam-shift
is "$RC" 65 "a non-Hermitian operator: exit 65"
like "$ERR" "not Hermitian: term '0 1'" "a non-Hermitian operator: message"
runlam_in $'#% lamina-op 2\n#% kind: spinfree\n#% electrons: 2\n-0.5 0 0\n0.1 0 1 0 1\n0.1 1 0 1 0\n#% end\n' lam-shift
is "$RC" 65 "integrals without the real symmetry: exit 65"
like "$ERR" "8-fold symmetry" "integrals without the real symmetry: message"
runlam_in $'#% lamina-op 2\n#% kind: fermion\n#% modes: 4\n#% electrons: 2\n-0.5 0 / 0\n0.1 0 / 1\n#% end\n' lam-shift
is "$RC" 65 "fermion term that flips a spin: exit 65"
like "$ERR" "lam-shift: <stdin>:6: the operator is not spin-free" "spin flip: file:line and reason"
runlam_in $'#% lamina-op 2\n#% kind: fermion\n#% modes: 4\n#% electrons: 2\n-0.5 0 / 0\n#% end\n' lam-shift
is "$RC" 65 "fermion one-body term on one spin only: exit 65"
like "$ERR" "not spin-free" "one spin only: reason"

done_testing
