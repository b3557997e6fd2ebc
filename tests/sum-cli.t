#!/usr/bin/env bash
# lam-sum on the command line, and the stream reader's error handling.
source "$(dirname "$0")/lib/tap.sh"
SZ="$TESTS_DIR/data/h2-sto3g-r1.4bohr.fcidump"
lam lam-ints "$SZ" > "$TMP/h.op"
terms() { grep -v '^#' "$1"; }

runlam lam-sum "$TMP/h.op" --scale -1 "$TMP/h.op"
is "$RC" 0 "H - H: exit 0"
is "$(printf '%s\n' "$OUT" | grep -v '^#')" "0" "H - H leaves only the zero constant (exact zeros dropped)"
runlam lam-sum "$TMP/h.op" --scale 0.5 "$TMP/h.op"
is "$(printf '%s\n' "$OUT" | awk '$2 == 0 && $3 == 0 && NF == 3 { print $1 }')" "-1.8792" "1.5 x h11 = 1.5 x -1.2528"
like "$OUT" '#% history: lam-sum ' "history appended"
runlam lam-sum --sort "$TMP/h.op"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | awk 'NR > 1 { print ($1 < 0 ? -$1 : $1) }' | sort -gr | tr '\n' ' ')" \
   "$(printf '%s\n' "$OUT" | grep -v '^#' | awk 'NR > 1 { print ($1 < 0 ? -$1 : $1) }' | tr '\n' ' ')" "--sort: |c| descending after the constant"

# Pauli: repeated terms merge, a term and its negative vanish.
printf '0.5 x:0 z:1\n0.25 x:0 z:1\n-0.1 y:2\n0.1 y:2\n1.0\n' > "$TMP/p.txt"
runlam lam-sum "$TMP/p.txt"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | tr '\n' ';')" "0.75 x:0 z:1;1;" "pauli: merged in order of first appearance, zeros dropped"
like "$OUT" '#% kind: pauli' "kind inferred from the terms"
runlam lam-sum "$TMP/p.txt" --scale 2 "$TMP/p.txt"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | tr '\n' ';')" "2.25 x:0 z:1;3;" "pauli: factors"

# Fermion: canonical order merges a+_2 a+_0 a_1 written two ways (with its sign).
printf '0.5 2 0 / 1\n0.5 0 2 / 1\n0.25 1 / 0\n' > "$TMP/f.txt"
runlam lam-sum "$TMP/f.txt"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | tr '\n' ';')" "0.25 1 / 0;" "fermion: a+_0 a+_2 = -a+_2 a+_0 cancels"

runlam lam-sum "$TMP/h.op" "$TMP/p.txt"
is "$RC" 65 "mixed kinds: exit 65"
like "$ERR" 'kind pauli differs from spinfree' "says which kinds"
runlam lam-sum - - < "$TMP/h.op"
is "$RC" 64 "stdin twice: exit 64"

# The stream reader's errors (shared by every program).
printf '#%% lamina-op 2\n#%% kind: pauli\n0.5 x:0\n' > "$TMP/cut.op"
runlam lam-sum "$TMP/cut.op"
is "$RC" 65 "stream cut before '#% end': exit 65"
like "$ERR" "cut.op:3: truncated stream" "says truncated, with file and line"
is "$OUT" "" "and writes nothing on stdout"
printf '0.5 x:0\nnan z:1\n' > "$TMP/nan.op"
runlam lam-sum "$TMP/nan.op"
is "$RC" 65 "NaN coefficient: exit 65"
like "$ERR" "nan.op:2: coefficient 'nan' is not finite" "NaN named"
printf '0.5 x:0\n-Inf z:1\n' > "$TMP/inf.op"
runlam lam-sum "$TMP/inf.op"
like "$ERR" "inf.op:2: coefficient '-Inf' is not finite" "Inf named"
printf '0.5 x:0\n0.5q z:1\n' > "$TMP/junk.op"
runlam lam-sum "$TMP/junk.op"
is "$RC" 65 "coefficient that does not parse: exit 65"
like "$ERR" "junk.op:2: coefficient '0.5q' is not a number" "junk named"
printf '#%% lamina-op 2\n#%% kind: spinfree\n#%% orbitals: 2\n0.5 0 2\n#%% end\n' > "$TMP/idx.op"
runlam lam-sum "$TMP/idx.op"
is "$RC" 65 "orbital index out of range: exit 65"
like "$ERR" "idx.op:4: orbital index 2 out of range 0..1" "index named"
printf '#%% lamina-op 2\n#%% kind: spinfree\n0.5 0 1 2\n#%% end\n' > "$TMP/three.op"
runlam lam-sum "$TMP/three.op"
like "$ERR" "three.op:3: a spinfree term has 0, 2 or 4 orbital indices, not 3" "wrong index count"
printf '#%% lamina-op 3\n0.5\n#%% end\n' > "$TMP/v3.op"
runlam lam-sum "$TMP/v3.op"
like "$ERR" "v3.op:1: stream version '3' is not supported" "unknown version refused"
printf '#%% lamina-op 2\n#%% kind: pauli\n0.5 x:0\n#%% end\n0.1 z:0\n' > "$TMP/after.op"
runlam lam-sum "$TMP/after.op"
like "$ERR" "after.op:5: term after '#% end'" "term after the trailer refused"
printf '#%% lamina-op 2\n#%% kind: quaternion\n#%% end\n' > "$TMP/kind.op"
runlam lam-sum "$TMP/kind.op"
like "$ERR" "kind.op:2: unknown stream kind 'quaternion'" "unknown kind refused"
runlam lam-sum --kind fragments "$TMP/p.txt"
is "$RC" 64 "--kind fragments: exit 64"
gzip -c "$TMP/h.op" > "$TMP/h.op.gz"
runlam lam-sum "$TMP/h.op.gz"
is "$(printf '%s\n' "$OUT" | grep -v '^#')" "$(terms "$TMP/h.op")" "gzip stream read transparently"
runlam lam-sum "$TMP/missing"
is "$RC" 66 "missing input: exit 66"

# Issue 13 item 4: a plain getopt_long interface; options anywhere, short
# options bundled; --scale F belongs to the one FILE after it.
runlam lam-sum "$TMP/p.txt" --output "$TMP/o1.op"
is "$RC/${#OUT}" "0/0" "FILE --output X: options after the file"
is "$(terms "$TMP/o1.op" | tr '\n' ';')" "0.75 x:0 z:1;1;" "FILE --output X: the stream in X"
runlam lam-sum -zo "$TMP/o2.op.gz" "$TMP/p.txt"
is "$(gzip -dc "$TMP/o2.op.gz" | terms /dev/stdin | tr '\n' ';')" "0.75 x:0 z:1;1;" "-zo X: gzip and output bundled"
runlam lam-sum --scale 2 "$TMP/p.txt" "$TMP/p.txt"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | tr '\n' ';')" "2.25 x:0 z:1;3;" "--scale applies to the next FILE only"
runlam lam-sum --scale=-0.5 "$TMP/p.txt" -- "$TMP/p.txt"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | tr '\n' ';')" "0.375 x:0 z:1;0.5;" "--scale=F and a FILE after --"
runlam lam-sum "$TMP/p.txt" --scale 2
is "$RC" 64 "--scale with no FILE after it: exit 64"
like "$ERR" "^lam-sum: --scale 2 applies to the FILE after it, and none follows" "--scale with no FILE: message"
runlam lam-sum --scale 2 --scale 3 "$TMP/p.txt"
is "$RC" 64 "two --scale before one FILE: exit 64"
runlam lam-sum --scale two "$TMP/p.txt"
is "$RC" 64 "--scale two: exit 64"

# Issue 15 item 13: FACTOR:FILE is not read; the message says what to write.
for arg in "-1:$TMP/p.txt" "0.5:$TMP/p.txt"; do
    runlam lam-sum "$TMP/p.txt" "$arg"
    is "$RC/${#OUT}" "64/0" "'$arg': exit 64, nothing written"
    like "$ERR" "^lam-sum: '$arg': a factor is given as --scale F FILE \(here --scale [-0-9.]+ $TMP/p.txt\)" "'$arg': the message shows the new form"
done
runlam lam-sum abc:F
is "$RC" 66 "abc:F (no such file): exit 66"
like "$ERR" "^lam-sum: cannot open abc:F: no such file \(a factor is given as --scale F FILE" "abc:F: says there is no such file and how factors are written"

# Issue 15 item 13: cancelled terms are removed, never written as zeros;
# --drop TOL removes rounding leftovers and says what it removed.
printf '0.1 x:0\n0.2 x:0\n-0.3 x:0\n0.5 z:1 @0\n-0.5 z:1 @0\n0.25 y:1 @0\n2\n' > "$TMP/left.txt"
runlam lam-sum "$TMP/left.txt"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | awk '$1 == 0' | wc -l)" 0 "cancelled terms (also labelled ones) are not written"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | wc -l)" 3 "without --drop the 5.6e-17 leftover of 0.1 + 0.2 - 0.3 stays"
runlam lam-sum -d 1e-15 "$TMP/left.txt"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | tr '\n' ';')" "0.25 y:1 @0;2;" "--drop 1e-15: the leftover goes, the constant stays"
like "$ERR" "^lam-sum: dropped 1 terms with \|c\| <= 1e-15 Eh, one-norm removed 5.55[0-9]*e-17 Eh" "--drop: count and one-norm on stderr"
is "$(printf '%s\n' "$OUT" | lam lam-norm | report_get terms)" 2 "--drop: lam-norm counts the identity and one string"
runlam lam-sum --drop 0.3 "$TMP/h.op"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | awk 'NR > 1 && ($1 < 0 ? -$1 : $1) <= 0.3' | wc -l)" 0 "spinfree --drop 0.3: no term left at or below 0.3"
near "$(printf '%s\n' "$OUT" | grep -v '^#' | head -1)" "$(terms "$TMP/h.op" | head -1)" 0 "spinfree --drop: the constant stays"
printf '1e-16 0+ 1-\n1e-16 1+ 0-\n0.5 0+ 0-\n' > "$TMP/fl.txt"
runlam lam-sum --drop 1e-15 "$TMP/fl.txt"
is "$(printf '%s\n' "$OUT" | grep -v '^#' | wc -l)" 1 "fermion --drop: the two tiny hops go"
runlam lam-sum --drop -1 "$TMP/p.txt"
is "$RC" 64 "--drop -1: exit 64"
runlam lam-sum -s "$TMP/p.txt"
is "$RC" 64 "-s is not --sort (it is --sector in the suite's table)"
one_bad_option_message lam-sum -d

# Issue 13 item 4: sums checked by number.  Every expected figure is a hand
# computation (source: hand computation, written out beside each case).
# Pauli: A = 0.5 x0z1 - 0.25 y1 + 2, B = 0.125 x0z1 + 0.75 z2 - 1;
# A - 2B = 0.25 x0z1 - 0.25 y1 - 1.5 z2 + 4: lambda 2 (identity left out),
# constant 4, four terms.
printf '0.5 x:0 z:1\n-0.25 y:1\n2\n' > "$TMP/pa.txt"
printf '0.125 x:0 z:1\n0.75 z:2\n-1\n' > "$TMP/pb.txt"
runlam lam-sum "$TMP/pa.txt" --scale -2 "$TMP/pb.txt" --output "$TMP/ps.op"
is "$RC/${#OUT}" "0/0" "pauli A - 2B into --output after the files"
near "$(lam lam-norm "$TMP/ps.op" | report_get lambda)" 2 1e-15 "pauli A - 2B: lambda 2 (hand computation)"
near "$(lam lam-norm "$TMP/ps.op" | report_get constant)" 4 1e-15 "pauli A - 2B: constant 4 (hand computation)"
# Spinfree, one orbital: H = e0 + h E00 + 1/2 g e0000 maps under
# Jordan-Wigner to (e0 + h + g/4) - (h/2 + g/4)(z0 + z1) + (g/4) z0 z1, so
# lambda = |h + g/2| + |g|/4 and constant e0 + h + g/4.  A: e0 0.5, h -1,
# g 1 (the line "0.5 0 0 0 0" is g/2); B: h 0.25, g 2.  A + 2B: e0 0.5,
# h -0.5, g 5: lambda |2| + 1.25 = 3.25, constant 0.5 - 0.5 + 1.25 = 1.25.
printf '#%% lamina-op 2\n#%% kind: spinfree\n#%% orbitals: 1\n0.5\n-1 0 0\n0.5 0 0 0 0\n#%% end\n' > "$TMP/sa.op"
printf '#%% lamina-op 2\n#%% kind: spinfree\n#%% orbitals: 1\n0.25 0 0\n1 0 0 0 0\n#%% end\n' > "$TMP/sb.op"
runlam lam-sum -zo "$TMP/ss.op.gz" "$TMP/sa.op" --scale=2 "$TMP/sb.op"
is "$RC/${#OUT}" "0/0" "spinfree A + 2B with -zo X"
near "$(lam lam-norm "$TMP/ss.op.gz" | report_get lambda)" 3.25 1e-14 "spinfree A + 2B: lambda 3.25 (hand computation)"
near "$(lam lam-norm "$TMP/ss.op.gz" | report_get constant)" 1.25 1e-14 "spinfree A + 2B: constant 1.25 (hand computation)"
# Fermion on two modes: t (a+1 a0 + a+0 a1) is t (x0x1 + y0y1)/2 (lambda
# |t|) and u a+0 a0 is u (1 - z0)/2.  A: t 0.5, u 0.4; B: t 0.125, u 0.3.
# A - 2B: t 0.25, u -0.2: lambda 0.25 + 0.1 = 0.35, constant -0.1.
printf '0.5 1 / 0\n0.5 0 / 1\n0.4 0 / 0\n' > "$TMP/fa.txt"
printf '0.125 1 / 0\n0.125 0 / 1\n0.3 0 / 0\n' > "$TMP/fb.txt"
runlam lam-sum "$TMP/fa.txt" --scale -2 "$TMP/fb.txt"
near "$(printf '%s\n' "$OUT" | lam lam-norm | report_get lambda)" 0.35 1e-15 "fermion A - 2B: lambda 0.35 (hand computation)"
near "$(printf '%s\n' "$OUT" | lam lam-norm | report_get constant)" -0.1 1e-15 "fermion A - 2B: constant -0.1 (hand computation)"
# Bad command lines: one message each, the documented exit code.
for args in "--scale nan" "--scale 1e999" "--scale 2x" "--scale="; do
    runlam lam-sum $args "$TMP/pa.txt"
    is "$RC/${#OUT}" "64/0" "bad factor '$args': exit 64, nothing written"
    is "$(printf '%s\n' "$ERR" | grep -c '^lam-sum:')" 1 "bad factor '$args': one message"
done
runlam lam-sum --bogus "$TMP/pa.txt"
is "$RC" 64 "unknown long option: exit 64"
is "$ERR" "lam-sum: unknown option '--bogus'
Try 'lam-sum --help'." "unknown long option: the one message"
# A sum that overflows (two factors of 1e308) is refused, not written with
# an inf its readers would refuse (IEEE 754: 1e308 + 1e308 is inf).
runlam lam-sum --scale 1e308 "$TMP/p.txt" --scale 1e308 "$TMP/p.txt"
is "$RC/$(printf '%s\n' "$OUT" | grep -c '^#% end')" "65/0" "an overflowing sum: exit 65, no whole stream on stdout"
like "$ERR" "^lam-sum: <stdout>: the coefficient of the term 'x:0 z:1' is 1.5e\\+308, and a reader takes \\|c\\| <= 1e100 only" "names the term that overflowed"
# and so is a finite one past the readers' limit (lamina-stream(5): 1e100)
runlam lam-sum --scale 1e200 "$TMP/p.txt"
is "$RC/$(printf '%s\n' "$OUT" | grep -c '^#% end')" "65/0" "a sum past |c| <= 1e100: exit 65, no whole stream on stdout"
like "$ERR" "the coefficient of the term 'x:0 z:1' is 7.5e\\+199" "names the term and its value"
runlam lam-sum --scale 1e308 "$TMP/p.txt" --scale 1e308 "$TMP/p.txt" -o "$TMP/overflow.op"
is "$RC/$([ -e "$TMP/overflow.op" ]; echo $?)" "65/1" "-o FILE: exit 65, no file"
runlam lam-sum "$TMP/pa.txt" --scale -2 "$TMP/missing.txt"
is "$RC/${#OUT}" "66/0" "a missing second file: exit 66, nothing written"
like "$ERR" "^lam-sum: cannot open .*missing.txt" "names the missing file"
done_testing
