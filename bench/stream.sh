#!/bin/bash
# bench/stream.sh - the operator stream: size and reading speed.  Prints
# figures only, asserts nothing.
#
# 1. Size (issue 11): a 40-orbital Jordan-Wigner stream (lam-map of a
#    synthetic spinfree operator with every integral non-zero,
#    bench/gen-ops.c) in version 2, against the same terms spelled as in
#    version 1 (one field per factor, converted here with awk).
#    Goal: version 2 at least 30 % smaller.
# 2. Speed (issue 11): lam-norm on a Pauli stream that does not declare its
#    terms distinct, so that lam-norm merges repeats (10^7 strings of 5
#    factors on 200 qubits), beside awk's plain one-line sum of |c| and
#    `cat FILE >/dev/null` as the floor; wall and CPU seconds and peak
#    resident memory (/usr/bin/time), BENCH_REPEAT runs each.
#    Goal: lam-norm at most half of awk in wall seconds.  lam-norm runs
#    two threads from 16384 terms on: both parse blocks of whole lines
#    (about 1 MB each, a round of two at a time) into short keys, and the
#    table is two halves by a hash bit, each filled by one thread in the
#    order of the input; the first thread also reads the file, settles
#    any line the quick parser left (errors, metadata) in order, and sums
#    the halves up in the order of first appearance at the end.  Its CPU
#    seconds are the sum of both threads: on an idle machine with 2 cores
#    its wall time is about half of that.  On a loaded machine the wall
#    figures mean little: the last line gives each thread's CPU seconds
#    (perf, when installed) to hold against awk's.
#    Measured on the shared 2-core machine (load average 7 to 12, six
#    runs, the threads' CPU clocks from two): first thread 1.4-1.8 s,
#    second 1.3-1.6 s, both 2.7-3.4 CPU s, peak 314 MB (the reading thread
#    2.4 s and the merging thread 1.6 s, 296 MB, when one thread read and
#    the other merged); awk 3.8-5.5 CPU s at that load.
#
#   BENCH_ORBITALS  orbitals of the size test (default 40; 0 skips it)
#   BENCH_TERMS     terms of the speed test (default 10000000; 0 skips it)
#   BENCH_QUBITS    qubits (default 200)     BENCH_WEIGHT  factors (default 5)
#   BENCH_REPEAT    runs of each command (default 3)
set -euo pipefail
ROOT=$(cd "$(dirname "$0")/.." && pwd)
LAM_BIN=${LAM_BIN:-$ROOT/bin}
ORB=${BENCH_ORBITALS:-40}
TERMS=${BENCH_TERMS:-10000000}
QUBITS=${BENCH_QUBITS:-200}
WEIGHT=${BENCH_WEIGHT:-5}
REPEAT=${BENCH_REPEAT:-3}
DIR=$ROOT/build/bench
mkdir -p "$DIR"
gcc -std=c11 -O2 -o "$DIR/gen-ops" "$ROOT/bench/gen-ops.c"
echo "machine: $(nproc) cores, load average $(cut -d' ' -f1-3 /proc/loadavg) (shared: CPU seconds are the steadier figure)"

# ---- 1. size
if [ "$ORB" -gt 0 ]; then
    SF=$DIR/spinfree-$ORB.op
    [ -s "$SF" ] || "$DIR/gen-ops" spinfree "$ORB" > "$SF"
    JW=$DIR/jw-$ORB.op
    [ -s "$JW" ] || "$LAM_BIN/lam-map" --quiet -o "$JW" "$SF"
    V2=$(stat -c %s "$JW")
    # version 1 spelled each factor as its upper-case letter glued to the
    # qubit, one field a factor, in qubit order
    V1=$(awk '
        /^#% lamina-op/ { print "#% lamina-op 1"; next }
        /^#/ || NF == 1 { print; next }
        {
            top = -1; delete letter
            for (f = 2; f <= NF; ++f) {
                if (substr($f, 1, 1) == "@") continue
                split(substr($f, 3), items, ",")
                for (i in items) {
                    if (split(items[i], ab, "-") == 1) ab[2] = ab[1]
                    for (q = ab[1] + 0; q <= ab[2] + 0; ++q) letter[q] = toupper(substr($f, 1, 1))
                    if (ab[2] + 0 > top) top = ab[2] + 0
                }
            }
            line = $1
            for (q = 0; q <= top; ++q) if (q in letter) line = line " " letter[q] q
            if (substr($NF, 1, 1) == "@") line = line " " $NF
            print line
        }' "$JW" | wc -c)
    LINES=$(grep -vc '^#' "$JW")
    printf '\nsize of a %d-orbital Jordan-Wigner stream (%d terms):\n' "$ORB" "$LINES"
    printf '  version 1 spelling  %12d bytes\n  version 2 (written) %12d bytes\n' "$V1" "$V2"
    awk -v a="$V1" -v b="$V2" 'BEGIN { printf "  version 2 is %.1f %% smaller (goal >= 30 %%)\n", 100 * (a - b) / a }'
fi

# ---- 2. speed
[ "$TERMS" -gt 0 ] || exit 0
RAW=$DIR/pauli-$TERMS-$QUBITS-w$WEIGHT.op
[ -s "$RAW" ] || "$DIR/gen-ops" pauli "$TERMS" "$QUBITS" 0 "$WEIGHT" > "$RAW"
grep -q '^#% distinct' "$RAW" && { echo "the raw stream must not declare distinct terms"; exit 1; }

# wall seconds, user+system seconds, peak resident KB of one command
measure() {
    local out=$DIR/time.$$
    /usr/bin/time -f "%e %U %S %M" -o "$out" "$@" > "$DIR/stdout.$$"
    awk '{ printf "%8.2f %8.2f %9d", $1, $2 + $3, $4 }' "$out"
    rm -f "$out"
}

printf '\nfile: %s (%d terms, %d qubits, %d factors, %s bytes, no "distinct" line)\n' \
    "$RAW" "$TERMS" "$QUBITS" "$WEIGHT" "$(stat -L -c %s "$RAW")"
printf '%-36s %3s %8s %8s %9s\n' "command" run wall_s cpu_s peak_kb
cat "$RAW" > /dev/null # warm the page cache once
SUMS=$DIR/sums.$$
: > "$SUMS"
for run in $(seq "$REPEAT"); do
    C=$(measure cat "$RAW")
    A=$(measure awk '{s += ($1 < 0 ? -$1 : $1)} END {printf "%.17g\n", s}' "$RAW")
    N=$(measure "$LAM_BIN/lam-norm" "$RAW")
    printf '%-36s %3d %s\n' "cat FILE >/dev/null (floor)" "$run" "$C"
    printf '%-36s %3d %s\n' "awk plain sum of |c|" "$run" "$A"
    printf '%-36s %3d %s\n' "lam-norm (merges repeats, 2 threads)" "$run" "$N"
    echo "$A $N" >> "$SUMS"
done
awk '{ wa += $1; ca += $2; wn += $4; cn += $5 }
     END { printf "lam-norm / awk over %d runs: wall %.2f (goal <= 0.5), cpu of both threads %.2f\n", NR, wn / wa, cn / ca }' "$SUMS"
printf 'lambda: awk plain sum %s (repeats not merged), lam-norm %s (%s distinct terms)\n' \
    "$(awk '{s += ($1 < 0 ? -$1 : $1)} END {printf "%.17g", s}' "$RAW")" \
    "$("$LAM_BIN/lam-norm" "$RAW" | awk -F'\t' '$1 == "lambda" { print $2 }')" \
    "$("$LAM_BIN/lam-norm" "$RAW" | awk -F'\t' '$1 == "terms" { print $2 }')"
# CPU seconds of each of lam-norm's threads (perf's task-clock samples,
# one run): on a loaded machine the figure to hold against awk's CPU
if command -v perf > /dev/null 2>&1 &&
    perf record -q -F 1000 -e task-clock -o "$DIR/perf.$$" "$LAM_BIN/lam-norm" "$RAW" > /dev/null 2>&1; then
    perf report -i "$DIR/perf.$$" --stdio --sort pid -F sample,pid 2>/dev/null |
        awk '/^#/ || NF < 2 { next } { split($2, t, ":"); n[t[1]] = $1 }
             END { m = -1; for (k in n) if (m < 0 || k + 0 < m + 0) m = k # the first thread
                   g = -1; for (k in n) if (k != m && (g < 0 || n[k] > n[g])) g = k
                   for (k in n) if (k != m && k != g) o += n[k]
                   printf "lam-norm CPU seconds per thread (perf, one run): first %.2f, second %.2f, other %.2f\n",
                          n[m] / 1000, n[g] / 1000, o / 1000 }'
    rm -f "$DIR/perf.$$"
fi
rm -f "$DIR/stdout.$$" "$SUMS"
