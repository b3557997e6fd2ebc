#!/bin/bash
# lam-map on the command line: good input, bad input, exit codes.
source "$(dirname "$0")/lib/tap.sh"

H=$'#% lamina-op 2\n#% kind: spinfree\n#% orbitals: 2\n#% electrons: 2\n'

# --- help, version, usage (exit codes: sysexits, common practice)
runlam lam-map --help
is "$RC" 0 "--help exits 0"
like "$OUT" "Usage: lam-map" "--help shows the synopsis"
like "$OUT" "Eh" "--help names the unit"
like "$OUT" "Example" "--help has an example"
runlam lam-map --version
is "$RC" 0 "--version exits 0"
like "$OUT" "^lam-map \\(lamina\\) [0-9]" "--version prints the version"
runlam lam-map --encoding bk
is "$RC" 64 "an unknown encoding is a usage error (64)"
like "$ERR" "^lam-map: --encoding wants" "the message names the option"
runlam lam-map --spin-order sideways
is "$RC" 64 "an unknown spin order is a usage error"
runlam lam-map --drop -1
is "$RC" 64 "a negative --drop is a usage error"
runlam lam-map "$TMP/none.op"
is "$RC" 66 "a missing input file exits 66"

# --- good input: one hopping term and a number operator on 2 orbitals
printf '%s0.5\n-1 0 0\n0.25 0 1\n0.25 1 0\n#%% end\n' "$H" > "$TMP/a.op"
runlam lam-map "$TMP/a.op"
is "$RC" 0 "a spinfree stream maps"
like "$OUT" $'#% kind: pauli\n' "kind pauli in the header"
like "$OUT" $'#% qubits: 4\n' "qubits: 4 for 2 orbitals"
like "$OUT" $'#% encoding: jordan-wigner\n' "default encoding jordan-wigner"
like "$OUT" $'#% spin-order: interleaved\n' "default spin order interleaved"
like "$OUT" $'#% electrons: 2\n' "electrons passed through"
like "$OUT" $'#% history: lam-map' "history line appended"
like "$OUT" $'\n#% end$' "closes with #% end"
# identity: 0.5 - 2 x 1/2 (n_0up + n_0down = 1 - (Z_0 + Z_1)/2) = -0.5, bare number
like "$OUT" $'\n-0.5\n' "the identity is the bare constant line"
# -E_00 = -(n0 + n1) -> +0.5 z:0 + 0.5 z:1 under Jordan-Wigner, (1-Z)/2 for n (common practice)
like "$OUT" $'\n0.5 z:0\n' "number operator gives +1/2 z:0"
# 1/4 (E_01 + E_10) spin up = 1/8 (X_0 Z_1 X_2 + Y_0 Z_1 Y_2) (textbook hopping, common practice)
like "$OUT" $'\n0.125 x:0,2 z:1\n' "hopping gives x:0,2 z:1 with 1/8"
like "$OUT" $'\n0.125 y:0,2 z:1\n' "hopping gives y:0,2 z:1 with 1/8"

runlam lam-map --spin-order blocked "$TMP/a.op"
like "$OUT" $'\n0.125 x:0-1\n' "blocked: orbitals 0 and 1 spin up are qubits 0 and 1"
like "$OUT" $'#% spin-order: blocked\n' "blocked in the header"
runlam lam-map -e parity "$TMP/a.op"
like "$OUT" $'#% encoding: parity\n' "parity in the header"

# --drop reports what it removed, on stderr
runlam lam-map --drop 0.2 "$TMP/a.op"
is "$RC" 0 "--drop exits 0"
like "$ERR" "dropped 4 terms with \|c\| <= 0.2 Eh, one-norm removed 0.5 Eh" "--drop reports count and one-norm"
like "$OUT" $'\n-0.5\n' "--drop keeps the identity"

# -o and -z: gzip output readable by lam-norm
runlam lam-map -z -o "$TMP/a.op.gz" "$TMP/a.op"
is "$RC" 0 "-z -o writes a file"
gzip -t "$TMP/a.op.gz"; ok $? "the file is gzip"
runlam lam-norm "$TMP/a.op.gz"
like "$OUT" $'lambda\t1.5' "gzip output reads back (lambda 1 + 4 x 1/8)"

# a stream without header: the kind from the terms or --kind
runlam_in $'1 0 0\n' lam-map
is "$RC" 0 "a header-less spinfree stream maps"
like "$OUT" $'#% qubits: 2\n' "header-less: orbitals from the largest index"
runlam_in $'0.5 1 / 0\n0.5 0 / 1\n' lam-map --kind fermion
is "$RC" 0 "--kind fermion"
like "$OUT" $'\n0.25 x:0-1\n' "fermion hopping under Jordan-Wigner"

# fermion stream with blocked spin order relabelled to interleaved
printf '#%% lamina-op 2\n#%% kind: fermion\n#%% modes: 4\n#%% spin-order: blocked\n1 2 / 2\n#%% end\n' > "$TMP/f.op"
runlam lam-map --spin-order interleaved "$TMP/f.op"
like "$OUT" $'\n-0.5 z:1\n' "blocked mode 2 (orbital 0 down) becomes qubit 1 interleaved"

# --- bad input: exit 65 and "lam-map: FILE:LINE: reason"
printf '%s1.2.3 0 0\n#%% end\n' "$H" > "$TMP/b1.op"
runlam lam-map "$TMP/b1.op"
is "$RC" 65 "a coefficient that does not parse: exit 65"
is "$ERR" "lam-map: $TMP/b1.op:5: coefficient '1.2.3' is not a number" "message names file and line"
printf '%s1 0 0\nNaN 0 1\n#%% end\n' "$H" > "$TMP/b2.op"
runlam lam-map "$TMP/b2.op"
is "$RC" 65 "NaN: exit 65"
like "$ERR" "^lam-map: $TMP/b2.op:6: coefficient 'NaN' is not finite" "NaN named with its line"
printf '%s-inf 0 1\n#%% end\n' "$H" > "$TMP/b3.op"
runlam lam-map "$TMP/b3.op"
is "$RC" 65 "Inf: exit 65"
printf '%s1 0 5\n#%% end\n' "$H" > "$TMP/b4.op"
runlam lam-map "$TMP/b4.op"
is "$RC" 65 "an orbital index out of range: exit 65"
like "$ERR" "^lam-map: $TMP/b4.op:5: .*out of range" "index out of range named with its line"
printf '%s1 0 1\n1 1 0\n' "$H" > "$TMP/b5.op"
runlam lam-map "$TMP/b5.op"
is "$RC" 65 "a stream cut before #% end: exit 65"
like "$ERR" "^lam-map: $TMP/b5.op:[0-9]+: truncated stream" "truncation named"
is "$OUT" "" "nothing on stdout for a truncated stream"
printf '#%% lamina-op 2\n#%% kind: pauli\n1 x:0\n#%% end\n' > "$TMP/b6.op"
runlam lam-map "$TMP/b6.op"
is "$RC" 65 "a pauli stream is the wrong kind: exit 65"
like "$ERR" "^lam-map: $TMP/b6.op:[0-9]+: a pauli stream" "wrong kind named"
printf '#%% lamina-op 2\n#%% kind: fermion\n#%% modes: 4\n0.5 1 / 0\n0.5 2 / 3\n0.5 3 / 2\n#%% end\n' > "$TMP/b7.op"
runlam lam-map "$TMP/b7.op"
is "$RC" 65 "a non-Hermitian fermion operator: exit 65"
like "$ERR" "^lam-map: $TMP/b7.op:4: the operator is not Hermitian" "the offending term's line is named"
printf '%s1 0 1\n#%% end\n' "$H" > "$TMP/b8.op"
runlam lam-map "$TMP/b8.op"
is "$RC" 65 "a non-Hermitian spinfree operator: exit 65"
like "$ERR" "not Hermitian: term '0 1'" "the offending spinfree term is named"
runlam_in $'1 3x / 0\n' lam-map --kind fermion
is "$RC" 65 "a malformed ladder operator: exit 65"
like "$ERR" "^lam-map: <stdin>:1: '3x' is not a mode" "malformed ladder operator named"
printf '#%% lamina-op 2\n#%% kind: fermion\n#%% modes: 2\n1 2 / 2\n#%% end\n' > "$TMP/b9.op"
runlam lam-map "$TMP/b9.op"
is "$RC" 65 "a mode out of range: exit 65"
like "$ERR" "^lam-map: $TMP/b9.op:4: mode 2 out of range" "mode out of range named"

# Issue 15 item 5: a sparse spinfree stream that declares 3000 orbitals is
# mapped term by term, never as dense n^4 arrays (650 TB here).  The H2
# terms placed in such a stream give the Pauli one-norm of H2 itself.
lam lam-ints "$TESTS_DIR/data/h2-sto3g-r1.4bohr.fcidump" >"$TMP/h2.sf"
sed 's/^#% orbitals: 2$/#% orbitals: 3000/' "$TMP/h2.sf" >"$TMP/h2-3000.sf"
like "$(cat "$TMP/h2-3000.sf")" "#% orbitals: 3000" "a 3000-orbital stream with the H2 terms"
# The limit applies only where the build under test runs in 400 MB at all
# (a sanitizer build or valgrind reserves far more address space); without
# it the dense path still fails, asking calloc for 650 TB.
limit="ulimit -v 400000"
(eval "$limit"; lam lam-map --version >/dev/null 2>&1) || limit=":"
(eval "$limit"; lam lam-map -o "$TMP/h2-3000.p" "$TMP/h2-3000.sf" 2>"$TMP/err")
is "$?/$(cat "$TMP/err")" "0/" "3000 orbitals: lam-map finishes (address space: $limit)"
is "$(lam lam-norm "$TMP/h2-3000.p" | report_get qubits)" 6000 "3000 orbitals: 6000 qubits"
near "$(lam lam-norm "$TMP/h2-3000.p" | report_get lambda)" "$(lam lam-map "$TMP/h2.sf" | lam lam-norm | report_get lambda)" 1e-12 \
    "3000 orbitals: the same one-norm as the dense map of H2"
near "$(lam lam-norm "$TMP/h2-3000.p" | report_get constant)" "$(lam lam-map "$TMP/h2.sf" | lam lam-norm | report_get constant)" 1e-12 \
    "3000 orbitals: the same constant as the dense map of H2"
printf '#%% lamina-op 1\n#%% kind: spinfree\n#%% orbitals: 3000\n0.5 0 2999\n#%% end\n' >"$TMP/nh.sf"
(eval "$limit"; lam lam-map "$TMP/nh.sf" >"$TMP/nh.out" 2>"$TMP/err"); rc=$?
is "$rc/$(wc -c <"$TMP/nh.out" | tr -d ' ')" "65/0" "3000 orbitals, not Hermitian: exit 65, nothing written"
like "$(cat "$TMP/err")" "^lam-map: $TMP/nh.sf:4: .*not Hermitian" "3000 orbitals, not Hermitian: file and line"

# --spin-order is long-only (-s is --sector in the suite's table).
runlam lam-map -s blocked "$TMP/h2.sf"
is "$RC" 64 "-s is not --spin-order"
one_bad_option_message lam-map -e

done_testing
