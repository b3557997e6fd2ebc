#!/bin/bash
# lam-norm on the command line: reports, kinds, bad input, exit codes.
source "$(dirname "$0")/lib/tap.sh"

runlam lam-norm --help
is "$RC" 0 "--help exits 0"
like "$OUT" "Usage: lam-norm" "--help shows the synopsis"
like "$OUT" "Eh" "--help names the unit"
runlam lam-norm --version
is "$RC" 0 "--version exits 0"
runlam lam-norm --kind matrix
is "$RC" 64 "an unknown kind is a usage error"
runlam lam-norm "$TMP/none.op"
is "$RC" 66 "a missing input exits 66"

# --- pauli: merged terms, identity apart, weight, qubits
P=$'#% lamina-op 2\n#% kind: pauli\n#% qubits: 5\n'
printf '%s-1.5\n0.25 x:0 y:1\n-0.5 z:4\n0.25 x:0 y:1\n0.5\n#%% end\n' "$P" > "$TMP/p.op"
runlam lam-norm "$TMP/p.op"
is "$RC" 0 "a pauli stream"
is "$(report_get kind <<<"$OUT")" pauli "kind pauli"
is "$(report_get terms <<<"$OUT")" 3 "repeated strings merge: 3 terms (identity included)"
is "$(report_get constant <<<"$OUT")" -1 "constant -1.5 + 0.5"
is "$(report_get lambda <<<"$OUT")" 1 "lambda |0.5| + |-0.5|, identity left out"
is "$(report_get qubits <<<"$OUT")" 5 "qubits from the header"
is "$(report_get max_weight <<<"$OUT")" 2 "max_weight 2"
is "$(report_get groups <<<"$OUT")" "" "no groups key without labels"
is "$(head -5 <<<"$OUT")" "label	$TMP/p.op"$'\nkind\tpauli\nterms\t3\nconstant\t-1\nlambda\t1' "pinned keys first, in order: label (the file name) first"

# --tsv: one header row, one value row
runlam lam-norm --tsv "$TMP/p.op"
is "$(wc -l <<<"$OUT")" 2 "--tsv gives two rows"
is "$(head -1 <<<"$OUT" | cut -f1-5)" $'label\tkind\tterms\tconstant\tlambda' "--tsv header row"
is "$(tail -1 <<<"$OUT" | cut -f1-5)" "$TMP/p.op"$'\tpauli\t3\t-1\t1' "--tsv value row"

# groups: lambda_grouped = sum over groups of sqrt(sum c^2) + unlabelled |c|
# (anticommuting groups, fact of the trade: (sum c P)^2 = sum c^2)
printf '%s0.3 x:0 @1\n0.4 z:0 @1\n1 y:3\n2 x:2 @7\n7\n#%% end\n' "$P" > "$TMP/g.op"
runlam lam-norm "$TMP/g.op"
is "$(report_get groups <<<"$OUT")" 2 "two group labels"
near "$(report_get lambda_grouped <<<"$OUT")" 3.5 1e-15 "lambda_grouped 0.5 + 2 + 1"
near "$(report_get lambda <<<"$OUT")" 3.7 1e-15 "lambda 0.3 + 0.4 + 1 + 2"
printf '#%% lamina-op 2\n#%% kind: pauli\n#%% grouping: commuting\n0.3 x:0 @1\n0.4 x:1 @1\n#%% end\n' > "$TMP/gc.op"
runlam lam-norm "$TMP/gc.op"
is "$(report_get lambda_grouped <<<"$OUT")" "" "commuting groups: no lambda_grouped"
is "$(report_get grouping <<<"$OUT")" commuting "commuting groups are reported as such"

# header-less pauli: qubits from the largest index
runlam_in $'1 x:9\n' lam-norm
is "$(report_get qubits <<<"$OUT")" 10 "header-less: qubits = largest index + 1"

# --- spinfree and fermion: the Majorana one-norm without a Pauli expansion
S=$'#% lamina-op 2\n#% kind: spinfree\n#% orbitals: 2\n'
printf '%s0.5\n-1 0 0\n0.25 0 1\n0.25 1 0\n#%% end\n' "$S" > "$TMP/s.op"
runlam lam-norm "$TMP/s.op"
is "$(report_get kind <<<"$OUT")" spinfree "kind spinfree"
is "$(report_get method <<<"$OUT")" closed-form "symmetric input: closed form"
near "$(report_get lambda <<<"$OUT")" 1.5 1e-15 "spinfree lambda"
near "$(report_get constant <<<"$OUT")" -0.5 1e-15 "spinfree constant"
is "$(report_get orbitals <<<"$OUT")" 2 "orbitals reported"
MAPPED=$(lam lam-map "$TMP/s.op" | lam lam-norm)
is "$(report_get lambda <<<"$MAPPED")" "$(report_get lambda <<<"$OUT")" "lam-map | lam-norm gives the same lambda"
printf '#%% lamina-op 2\n#%% kind: fermion\n#%% modes: 4\n0.5 1 / 0\n0.5 0 / 1\n2 3 2 / 2 3\n#%% end\n' > "$TMP/f.op"
runlam lam-norm "$TMP/f.op"
is "$(report_get kind <<<"$OUT")" fermion "kind fermion"
is "$(report_get modes <<<"$OUT")" 4 "modes reported"
is "$(report_get terms <<<"$OUT")" 3 "normal-ordered terms"
# hopping: 1/2 (XX+YY)/2 -> 0.5; 2 n2 n3 = 2 (1-Z_2)(1-Z_3)/4 -> 0.5 + 0.5 + 0.5 (common practice)
near "$(report_get lambda <<<"$OUT")" 2 1e-15 "fermion lambda"
near "$(report_get constant <<<"$OUT")" 0.5 1e-15 "fermion constant"

# --- bad input
printf '%s1 x:0,0\n#%% end\n' "$P" > "$TMP/b1.op"
runlam lam-norm "$TMP/b1.op"
is "$RC" 65 "a repeated qubit: exit 65"
is "$ERR" "lam-norm: $TMP/b1.op:4: qubit 0 appears twice in one term" "repeated qubit named with its line"
printf '%s1 x:7\n#%% end\n' "$P" > "$TMP/b2.op"
runlam lam-norm "$TMP/b2.op"
is "$RC" 65 "a qubit index out of range: exit 65"
like "$ERR" "^lam-norm: $TMP/b2.op:4: qubit index 7 out of range" "index out of range named"
printf '%s1 w:2\n#%% end\n' "$P" > "$TMP/b3.op"
runlam lam-norm "$TMP/b3.op"
is "$RC" 65 "an unknown Pauli letter: exit 65"
like "$ERR" "^lam-norm: $TMP/b3.op:4: unknown Pauli field 'w:2'" "unknown letter named"
printf '%s0x1g x:2\n#%% end\n' "$P" > "$TMP/b4.op"
runlam lam-norm "$TMP/b4.op"
is "$RC" 65 "a number that does not parse: exit 65"
like "$ERR" "^lam-norm: $TMP/b4.op:4: coefficient" "bad number named"
printf '%sinf x:2\n#%% end\n' "$P" > "$TMP/b5.op"
runlam lam-norm "$TMP/b5.op"
is "$RC" 65 "Inf: exit 65"
like "$ERR" "^lam-norm: $TMP/b5.op:4: coefficient 'inf' is not finite" "Inf named"
printf '%s1 x:2\n' "$P" > "$TMP/b6.op"
runlam lam-norm "$TMP/b6.op"
is "$RC" 65 "a stream cut before #% end: exit 65"
like "$ERR" "^lam-norm: $TMP/b6.op:[0-9]+: truncated stream" "truncation named"
is "$OUT" "" "no partial report"
printf '%s1 x:2 @3 z:1\n#%% end\n' "$P" > "$TMP/b7.op"
runlam lam-norm "$TMP/b7.op"
is "$RC" 65 "a group label before the last field: exit 65"
like "$ERR" "^lam-norm: $TMP/b7.op:4: group label '@3' must be the last field" "misplaced label named"
printf '%s1 x:2 @x\n#%% end\n' "$P" > "$TMP/b8.op"
runlam lam-norm "$TMP/b8.op"
is "$RC" 65 "a bad group label: exit 65"
printf '1 foo\n' > "$TMP/b9.op"
runlam lam-norm "$TMP/b9.op"
is "$RC" 65 "a stream of no known kind: exit 65"
like "$ERR" "^lam-norm: $TMP/b9.op:[0-9]+: cannot tell the kind" "unknown kind named"
printf '#%% lamina-op 2\n#%% kind: fermion\n#%% modes: 2\n1 1 / 0\n#%% end\n' > "$TMP/b10.op"
runlam lam-norm "$TMP/b10.op"
is "$RC" 65 "a non-Hermitian fermion operator: exit 65"
like "$ERR" "^lam-norm: $TMP/b10.op:4: the operator is not Hermitian" "offending line named"
printf '%s1 0 2\n#%% end\n' "$S" > "$TMP/b11.op"
runlam lam-norm "$TMP/b11.op"
is "$RC" 65 "spinfree index out of range: exit 65"

# A stream written by lam-map says "distinct: yes" and is summed in one pass;
# the same terms without that line go through the hash merge: same report.
SZ="$TESTS_DIR/data/h2-sto3g-r1.4bohr.fcidump"
lam lam-ints "$SZ" | lam lam-map > "$TMP/d.op"
like "$(cat "$TMP/d.op")" '#% distinct: yes' "lam-map states that its strings are distinct"
is "$(lam lam-norm -l d "$TMP/d.op")" "$(grep -v '^#% distinct' "$TMP/d.op" | lam lam-norm -l d)" \
   "one-pass sum and hash merge give the same report"
# distinct is never passed through: a tool must state it of its own output.
lam lam-group "$TMP/d.op" 2>/dev/null > "$TMP/g.op"
ok "$(grep -q '^#% distinct' "$TMP/g.op"; [ $? -ne 0 ]; echo $?)" "lam-group output does not inherit distinct"
# Repeated strings without the header line are merged (0.25 + 0.25 - 0.5 = 0).
runlam_in "$(printf '0.25 x:0\n0.25 x:0\n-0.5 x:0\n0.1 z:1\n')" lam-norm
is "$(printf '%s\n' "$OUT" | report_get lambda)" "0.10000000000000001" "repeated strings merged before the one-norm"

# Fragments streams (lam-factor): lam-norm reports the LCU of reflections.
lam lam-ints "$SZ" | lam lam-factor --report "$TMP/frep" > "$TMP/f.op" 2>/dev/null
runlam lam-norm "$TMP/f.op"
is "$RC" 0 "fragments stream: exit 0"
is "$(printf '%s\n' "$OUT" | report_get kind)" fragments "kind fragments"
near "$(printf '%s\n' "$OUT" | report_get lambda)" "$(report_get lambda < "$TMP/frep")" 1e-12 \
   "lambda of the fragments equals lam-factor's own report"
like "$OUT" 'unitaries	[0-9]+' "unitary count reported"

# Issue 15 item 12: --tsv has one fixed column set whatever the kind, NA
# where a value does not apply; several streams give one row each, labelled
# by -l (once per stream) or by the file name.
lam lam-ints "$SZ" > "$TMP/sf.op"
printf '%s0.3 x:0 @1\n0.4 z:0 @1\n1 y:3\n2 x:2 @7\n7\n#%% end\n' "$P" > "$TMP/g.op"
runlam lam-norm -t -l pauli -l spinfree -l grouped "$TMP/p.op" "$TMP/sf.op" "$TMP/g.op"
is "$RC/$(wc -l <<<"$OUT")" "0/4" "--tsv with three streams: a header and three rows"
is "$(awk -F'\t' '{ print NF }' <<<"$OUT" | sort -u | wc -l)" 1 "--tsv: every row has as many fields as the header"
col() { awk -F'\t' -v k="$1" 'NR == 1 { for (i = 1; i <= NF; i++) if ($i == k) c = i; next } { printf "%s ", $c }' <<<"$OUT"; }
is "$(col label)" "pauli spinfree grouped " "--tsv: -l labels the rows in order"
is "$(col orbitals)" "NA 2 NA " "--tsv: orbitals only for the spinfree stream, NA elsewhere"
is "$(col lambda_grouped)" "NA NA 3.5 " "--tsv: lambda_grouped only for the labelled stream"
for f in "$TMP/p.op" "$TMP/sf.op" "$TMP/g.op"; do lam lam-norm -t "$f" | head -1; done | sort -u > "$TMP/headers"
is "$(wc -l <"$TMP/headers")" 1 "--tsv: the same header for pauli, spinfree and labelled pauli streams"
runlam lam-norm -t "$TMP/p.op" "$TMP/sf.op"
is "$(cut -f1 <<<"$OUT" | tail -2 | tr '\n' ' ')" "$TMP/p.op $TMP/sf.op " "--tsv: the label defaults to the file name"
runlam lam-norm "$TMP/p.op" "$TMP/sf.op"
is "$(grep -c '^label' <<<"$OUT")/$(grep -c '^$' <<<"$OUT")" "2/1" "key/value: one block per stream, a blank line between"
runlam lam-norm -l a "$TMP/p.op" "$TMP/sf.op"
is "$RC" 64 "one --label for two streams: exit 64"
runlam lam-norm -o "$TMP/two.rep" "$TMP/p.op" "$TMP/none.op"
ok "$([ "$RC" = 66 ] && [ ! -e "$TMP/two.rep" ]; echo $?)" "a missing second stream: exit 66, no partial output file"

# ---- a long stream merged in two threads (from 16384 lines on): the
# reading thread passes the coefficients' text on, converted later; the
# first bad line is still the one reported, before any later error
long_pauli() { # long_pauli FILE LINES: repeats of 1000 strings, no "distinct"
    awk -v n="$2" 'BEGIN { print "#% lamina-op 2"; print "#% kind: pauli"
        for (i = 0; i < n; ++i) printf "%s%d.%03d x:%d z:%d\n", (i % 3 ? "" : "-"), i % 7, i % 1000, i % 1000, 1000 + i % 7 }' > "$1"
}
long_pauli "$TMP/long.op" 40000
printf '#%% end\n' >> "$TMP/long.op"
runlam lam-norm "$TMP/long.op"
# reference: the same sums formed by awk (merged by string, then |c|)
REF=$(awk '/^#/ { next } { k = $2 " " $3; s[k] += $1 } END { for (k in s) t += (s[k] < 0 ? -s[k] : s[k]); printf "%.10e", t }' "$TMP/long.op")
ok "$(awk -v a="$(report_get lambda <<<"$OUT")" -v b="$REF" 'BEGIN { d = a - b; print (d < 0 ? -d : d) <= 1e-9 * b ? 0 : 1 }')" \
   "two threads: lambda of 40000 repeated lines = awk's merged sum within 1e-9 ($REF)"
is "$(report_get terms <<<"$OUT")" 6999 "two threads: 7000 distinct strings, one of them (0.000 x:0 z:1000) zero"
long_pauli "$TMP/long2.op" 40000
sed -i '30002s/^[^ ]*/abc/; 30003s/ z:/ z:1,/; 35000s/ x:/ q:/' "$TMP/long2.op"
runlam lam-norm "$TMP/long2.op"
is "$RC/$ERR" "65/lam-norm: $TMP/long2.op:30002: coefficient 'abc' is not a number" \
   "two threads: a bad coefficient is reported at its line, before a later bad field"
long_pauli "$TMP/long3.op" 40000
sed -i '25002s/^[^ ]*/1.5e100/' "$TMP/long3.op"
runlam lam-norm "$TMP/long3.op"
like "$RC/$ERR" "^65/lam-norm: $TMP/long3.op:25002: coefficient '1.5e100' is too large" \
   "two threads: a coefficient above 1e100 at its line, before the missing '#% end'"
long_pauli "$TMP/long4.op" 40000
sed -i '30002s/^[^ ]*/x1/' "$TMP/long4.op"
runlam lam-norm "$TMP/long4.op"
is "$RC/$ERR" "65/lam-norm: $TMP/long4.op:30002: coefficient 'x1' is not a number" \
   "two threads: a bad coefficient, then a stream without '#% end': the coefficient's line"
long_pauli "$TMP/long5.op" 20000
printf '0.00000000001e105 x:1\n-9.99e99 x:2\n1d-3 x:3\n+.5E+2 x:4\n5. x:5\n#%% end\n' >> "$TMP/long5.op"
runlam lam-norm "$TMP/long5.op"
is "$RC" 0 "two threads: coefficient spellings of every form read"
REF5=$(awk '/^#/ { next } { k = $2 " " $3; c = $1; sub(/d/, "e", c); s[k] += c } END { for (k in s) t += (s[k] < 0 ? -s[k] : s[k]); printf "%.10e", t }' "$TMP/long5.op")
ok "$(awk -v a="$(report_get lambda <<<"$OUT")" -v b="$REF5" 'BEGIN { d = a - b; print (d < 0 ? -d : d) <= 1e-9 * b ? 0 : 1 }')" \
   "two threads: 1e94, -9.99e99, 1d-3, +.5E+2 and 5. summed ($REF5)"

one_bad_option_message lam-norm -k

# ---- a stream of several megabytes, parsed by both threads a block of
# about 1 MB each at a time: the halves of the table are summed back in
# the order of the lines, so a stream of distinct strings gives the very
# sum of the one-pass reader ("distinct: yes"), digit for digit
big_pauli() { # big_pauli FILE LINES: distinct strings, 17-digit coefficients
    awk -v n="$2" 'BEGIN { print "#% lamina-op 2"; print "#% kind: pauli"; print "#% qubits: 1300"
        for (i = 0; i < n; ++i) printf "%.17g x:%d z:%d\n", sin(i) * 0.37, i % 997, 1000 + int(i / 997) }' > "$1"
}
big_pauli "$TMP/big.op" 200000
printf '#%% end\n' >> "$TMP/big.op"
sed '1a #% distinct: yes' "$TMP/big.op" > "$TMP/big-distinct.op"
runlam lam-norm "$TMP/big-distinct.op"
ONEPASS=$(report_get lambda <<<"$OUT")
runlam lam-norm "$TMP/big.op"
is "$RC/$(report_get terms <<<"$OUT")" 0/199999 "both threads: 200000 distinct strings of a 4.5 MB stream, the first (sin 0) zero"
is "$(report_get lambda <<<"$OUT")" "$ONEPASS" "both threads: lambda digit for digit that of the one-pass sum in line order"
gzip -c "$TMP/big.op" > "$TMP/big.op.gz"
runlam lam-norm "$TMP/big.op.gz"
is "$RC/$(report_get lambda <<<"$OUT")" "0/$ONEPASS" "both threads: the same stream gzipped, the same lambda"
OUT=$(lam lam-norm - < "$TMP/big.op" 2>"$TMP/err"); RC=$?
is "$RC/$(report_get lambda <<<"$OUT")" "0/$ONEPASS" "both threads: the same stream on standard input, the same lambda"
# CRLF line ends, comments, blank lines, metadata between terms, labels,
# repeats and an undeclared qubit count, spread over the blocks
awk 'NR == 3 { next } /^#% end/ { print; next } /^#/ { print; next }
     { line = $0; if (NR % 50000 == 7) print "#% note: block " NR
       if (NR % 3 == 0) line = line " @" (NR % 5)
       if (NR % 7 == 0) line = line "\r"
       if (NR % 11 == 0) print ""
       if (NR % 13 == 0) print "# comment"
       print line; if (NR % 17 == 0) print line }' "$TMP/big.op" > "$TMP/big-mixed.op"
runlam lam-norm "$TMP/big-mixed.op"
REFM=$(awk '/^#/ || NF == 0 { next } { sub(/\r$/, ""); k = $2 " " $3 " " $4; s[k] += $1; g = $4 }
    END { for (k in s) if (s[k] != 0) { n++; t += (s[k] < 0 ? -s[k] : s[k]) }; printf "%d %.10e", n, t }' "$TMP/big-mixed.op")
ok "$(awk -v a="$(report_get terms <<<"$OUT") $(report_get lambda <<<"$OUT")" -v b="$REFM" 'BEGIN {
    split(a, x, " "); split(b, y, " "); d = x[2] - y[2]; print x[1] == y[1] && (d < 0 ? -d : d) <= 1e-9 * y[2] ? 0 : 1 }')" \
   "both threads: CRLF, comments, blank lines, metadata, labels and repeats: terms and lambda as awk's merge ($REFM)"
is "$(report_get qubits <<<"$OUT")" 1201 "both threads: no 'qubits:' line: the highest index + 1"
# the first bad line of the file is the one reported, wherever the
# blocks and threads fall
cp "$TMP/big.op" "$TMP/bad.op"
sed -i '150000s/ z:/ q:/; 180000s/^[^ ]*/abc/' "$TMP/bad.op"
runlam lam-norm "$TMP/bad.op"
like "$RC/$ERR" "^65/lam-norm: $TMP/bad.op:150000: unknown Pauli field 'q:" "both threads: a bad field in a later block, before a bad coefficient after it"
cp "$TMP/big.op" "$TMP/bad2.op"
sed -i '120000s/^[^ ]*/1e101/; 120001s/ z:/ z:1,/; 190000s/ x:/ X:/' "$TMP/bad2.op"
runlam lam-norm "$TMP/bad2.op"
like "$RC/$ERR" "^65/lam-norm: $TMP/bad2.op:120000: coefficient '1e101' is too large" "both threads: a coefficient above 1e100 deep in the stream"
cp "$TMP/big.op" "$TMP/bad3.op"
sed -i '100000s/$/ x:5/; 100001s/^/#% end\n/' "$TMP/bad3.op"
runlam lam-norm "$TMP/bad3.op"
is "$RC/$ERR" "65/lam-norm: $TMP/bad3.op:100000: letter 'x' has two fields in one term" "both threads: a letter twice, reported before a later '#% end'"
cp "$TMP/big.op" "$TMP/bad4.op"
sed -i '170000s/^/#% end\n/' "$TMP/bad4.op"
runlam lam-norm "$TMP/bad4.op"
is "$RC/$ERR" "65/lam-norm: $TMP/bad4.op:170001: term after '#% end'" "both threads: a term after a '#% end' in the middle"
head -n 160000 "$TMP/big.op" > "$TMP/bad5.op"
runlam lam-norm "$TMP/bad5.op"
is "$RC/$ERR" "65/lam-norm: $TMP/bad5.op:160000: truncated stream: it ends without '#% end'" "both threads: a stream cut short"
cp "$TMP/big.op" "$TMP/bad6.op"
printf '%s' "$(sed -n 130000p "$TMP/big.op")" | tr ' ' '\000' > "$TMP/nul"
awk -v f="$TMP/nul" 'NR == 130000 { getline l < f; printf "%s\n", l; next } { print }' "$TMP/big.op" > "$TMP/bad6.op"
runlam lam-norm "$TMP/bad6.op"
is "$RC/$ERR" "65/lam-norm: $TMP/bad6.op:130000: NUL byte in line" "both threads: a NUL byte in a line deep in the stream"
# a version-1 stream of the same size is read by one thread
awk '/^#% lamina-op/ { print "#% lamina-op 1"; next } /^#/ { print; next }
     { split($2, a, ":"); split($3, b, ":"); print $1, "X" a[2], "Z" b[2] }' "$TMP/big.op" > "$TMP/big-v1.op"
runlam lam-norm "$TMP/big-v1.op"
is "$RC/$(report_get lambda <<<"$OUT")" "0/$ONEPASS" "one thread (a version-1 stream): the same lambda, digit for digit"

done_testing
