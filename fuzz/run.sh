#!/usr/bin/env bash
# fuzz/run.sh TARGET-BINARY CORPUS-DIR SECONDS LOG
# Runs a libFuzzer target for SECONDS in short processes of RUNS inputs
# each, sharing one corpus directory (so coverage guidance carries over).
# The readers hand rejected input back as an error and free what they
# read on every path, so LeakSanitizer is on: a leak is a crash.  Exit 1
# on the first crash, with the tail of the log.
set -u
bin=$1 corpus=$2 seconds=$3 log=$4
runs=${FUZZ_RUNS_PER_PROCESS:-400}
start=$(date +%s)
total=0
: > "$log"
while :; do
    left=$((seconds - ($(date +%s) - start)))
    [ "$left" -le 0 ] && break
    ASAN_OPTIONS=detect_leaks=1 "$bin" -runs="$runs" -max_total_time="$left" -rss_limit_mb=2048 \
        -detect_leaks=1 -print_final_stats=1 -artifact_prefix="$(dirname "$log")/" "$corpus" >> "$log" 2>&1
    rc=$?
    if [ $rc -ne 0 ]; then
        tail -40 "$log"
        echo "$(basename "$bin"): crash (exit $rc); the input is in $(dirname "$log")/"
        exit 1
    fi
    n=$(grep -o 'stat::number_of_executed_units: [0-9]*' "$log" | tail -1 | awk '{print $2}')
    total=$((total + ${n:-0}))
done
echo "$(basename "$bin"): $total inputs in $seconds s, corpus $(ls "$corpus" | wc -l) units, no crash"
