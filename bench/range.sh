#!/bin/bash
# bench/range.sh - lam-range against psi4's FCI, side by side in one run.
#
# 1. The N, Sz = 0 ground state of a 12-orbital, 12-electron problem
#    (sector dimension 853,776): a stretched H12 chain (H-H 1.2 angstrom,
#    STO-3G, our own scenario).  psi4 writes the FCIDUMP; its FCI step alone
#    is timed (in the same determinant space, symmetry c1, and with the
#    molecule's own point group, which psi4 exploits and lam-range does not).
#    lam-range --lowest --sector 6,6 on the same integrals, default --tol
#    (1e-9 Eh), three ways: Davidson alone (--check-steps 0: status bound,
#    the work psi4 does), with the extremality check (the default: status
#    exact when certified), and at psi4's r_convergence 1e-7.
# 2. All sectors, both ends, 10 orbitals (H10 chain): time and peak memory
#    against the size of one vector of the largest sector.
# Prints wall and CPU seconds (the machine may be shared: CPU time is the
# fairer figure); asserts no time.  Default threads of each program unless
# THREADS=N is set (then -j N and psi4's set_num_threads(N)).
set -u
LAM_BIN=${LAM_BIN:-$(cd "$(dirname "$0")/.." && pwd)/bin}
ROOT=$(cd "$(dirname "$0")/.." && pwd)
W=$ROOT/build/bench-range
THREADS=${THREADS:-}
JOPT=(); [ -n "$THREADS" ] && JOPT=(-j "$THREADS")
mkdir -p "$W"
cd "$W" || exit 1

PSI4_ENV=(env PYTHONPATH=/usr/lib/x86_64-linux-gnu)
[ -n "$THREADS" ] && PSI4_ENV+=(OMP_NUM_THREADS="$THREADS")
cat > chain.py <<'EOF'
import sys, time, psi4
n, sym, do_fci = int(sys.argv[1]), sys.argv[2], sys.argv[3] == "1"
threads = int(sys.argv[4]) if sys.argv[4] else 0
psi4.set_output_file("h%d-%s.out" % (n, sym), False)
psi4.set_memory("4 GB")
if threads:
    psi4.set_num_threads(threads)
geom = "\n".join("H 0 0 %.4f" % (1.2 * i) for i in range(n))
if sym == "auto":   # psi4 finds and uses the point group (D2h here)
    psi4.geometry("0 1\n%s\n" % geom)
else:
    psi4.geometry("0 1\n%s\nsymmetry %s\nno_reorient\nno_com\n" % (geom, sym))
psi4.set_options({"basis": "sto-3g", "scf_type": "pk", "e_convergence": 1e-10,
                  "d_convergence": 1e-8, "r_convergence": 1e-7, "ci_maxiter": 100})
e_scf, wfn = psi4.energy("scf", return_wfn=True)
if sym == "c1":
    from psi4.driver.p4util.fcidump import fcidump
    fcidump(wfn, "h%d.fcidump" % n)
if do_fci:
    t, c = time.time(), time.process_time()
    e = psi4.energy("fci", ref_wfn=wfn)
    print("%.3f %.12f %.3f" % (time.time() - t, e, time.process_time() - c))
EOF

have_psi4=${PSI4:-1}
[ "$have_psi4" = 1 ] && { "${PSI4_ENV[@]}" /usr/bin/python3 -c "import psi4" 2>/dev/null || have_psi4=0; }

peak_kb() { awk -F': ' '/Maximum resident set size/ { print $2 }' "$1"; }
cpu_s() { awk -F': ' '/User time|System time/ { s += $2 } END { print s }' "$1"; }
wall_s() {
    awk -F': ' '/Elapsed \(wall clock\)/ { n = split($2, t, ":"); s = 0; for (i = 1; i <= n; ++i) s = s * 60 + t[i]; print s }' "$1"
}

echo "== 12 orbitals, 12 electrons, sector (6,6), dimension 853776: lowest eigenvalue"
echo "   stretched H12 chain, H-H 1.2 angstrom, STO-3G; threads: ${THREADS:-default}; load: $(cut -d' ' -f1-3 /proc/loadavg)"
if [ $have_psi4 = 1 ]; then
    read -r psi4_c1_s psi4_c1_e psi4_c1_cpu < <("${PSI4_ENV[@]}" /usr/bin/python3 chain.py 12 c1 1 "$THREADS" | tail -1)
    read -r psi4_pg_s psi4_pg_e psi4_pg_cpu < <("${PSI4_ENV[@]}" /usr/bin/python3 chain.py 12 auto 1 "$THREADS" | tail -1)
else
    echo "   psi4 not available: only lam-range is timed (needs build/bench-range/h12.fcidump)"
fi
[ -f h12.fcidump ] || { echo "no h12.fcidump"; exit 1; }
"$LAM_BIN/lam-ints" h12.fcidump > h12.op
/usr/bin/time -v "$LAM_BIN/lam-range" --lowest --sector 6,6 --check-steps 0 "${JOPT[@]}" --quiet h12.op \
    > h12.range 2> h12.time || { cat h12.time; exit 1; }
/usr/bin/time -v "$LAM_BIN/lam-range" --lowest --sector 6,6 "${JOPT[@]}" --progress h12.op \
    > h12c.range 2> h12c.time || { cat h12c.time; exit 1; }
# the products the check took, from its progress lines
check_steps=$(awk '/Lanczos steps/ { for (i = 1; i <= NF; ++i) if ($i == "Lanczos") s += $(i - 1) } END { print s + 0 }' h12c.time)
check_kind=$(grep -q "one eigenvalue below sigma" h12c.time && echo "congruence check" || echo "block check")
lam_e=$(awk -F'\t' '$1 == "sector" { print $4 }' h12.range)
lam_s=$(wall_s h12.time)
lam_mb=$(awk -v k="$(peak_kb h12.time)" 'BEGIN { printf "%.0f", k / 1024 }')
# the residual criterion of psi4's run above (r_convergence 1e-7), for a like-for-like line
/usr/bin/time -v "$LAM_BIN/lam-range" --lowest --sector 6,6 --tol 1e-7 --check-steps 0 "${JOPT[@]}" --quiet h12.op \
    > h12t.range 2> h12t.time || { cat h12t.time; exit 1; }
lam_cpu=$(cpu_s h12.time)
printf '   %-34s %8s %8s  %-20s\n' "program" "wall s" "CPU s" "energy (Eh)"
printf '   %-34s %8.1f %8.1f  %-20s  peak %s MB, %s\n' "lam-range, Davidson alone" "$lam_s" "$lam_cpu" "$lam_e" "$lam_mb" \
    "$(awk -F'\t' '$1 == "status" { print "status " $2 }' h12.range)"
printf '   %-34s %8.1f %8.1f  %-20s  %s, %s Lanczos steps (%s)\n' "lam-range, with the check (default)" "$(wall_s h12c.time)" "$(cpu_s h12c.time)" \
    "$(awk -F'\t' '$1 == "sector" { print $4 }' h12c.range)" "$(awk -F'\t' '$1 == "status" { print "status " $2 }' h12c.range)" \
    "$check_steps" "$check_kind"
printf '   %-34s %8.1f %8.1f  %-20s\n' "lam-range, Davidson, --tol 1e-7" "$(wall_s h12t.time)" "$(cpu_s h12t.time)" \
    "$(awk -F'\t' '$1 == "sector" { print $4 }' h12t.range)"
if [ $have_psi4 = 1 ]; then
    printf '   %-34s %8.1f %8.1f  %-20s\n' "psi4 fci, symmetry c1" "$psi4_c1_s" "$psi4_c1_cpu" "$psi4_c1_e"
    printf '   %-34s %8.1f %8.1f  %-20s\n' "psi4 fci, its point group" "$psi4_pg_s" "$psi4_pg_cpu" "$psi4_pg_e"
    awk -v a="$lam_cpu" -v b="$psi4_c1_cpu" -v c="$psi4_pg_cpu" -v e="$lam_e" -v f="$psi4_c1_e" 'BEGIN {
        d = e - f < 0 ? f - e : e - f
        printf "   CPU time ratio lam-range (Davidson) / psi4: %.2f (c1), %.2f (point group); |energy difference| = %.1e Eh (%s 1e-9)\n",
               a / b, a / c, d, d <= 1e-9 ? "agree to" : "NOT within" }'
fi

echo
echo "== 10 orbitals (H10 chain, same spacing): all sectors, both ends"
if [ ! -f h10.fcidump ] && [ $have_psi4 = 1 ]; then
    "${PSI4_ENV[@]}" /usr/bin/python3 chain.py 10 c1 0 "$THREADS" > /dev/null
fi
[ -f h10.fcidump ] || { echo "no h10.fcidump"; exit 1; }
"$LAM_BIN/lam-ints" h10.fcidump > h10.op
/usr/bin/time -v "$LAM_BIN/lam-range" "${JOPT[@]}" --quiet --no-multiplets h10.op > h10.range 2> h10.time || { cat h10.time; exit 1; }
/usr/bin/time -v "$LAM_BIN/lam-range" "${JOPT[@]}" --quiet h10.op > h10m.range 2> h10m.time
# the program's own footprint: the same run on a 2-orbital operator
printf '#%% kind: spinfree\n-1 0 0\n-0.5 1 1\n0.3 0 0 1 1\n' > tiny.op
/usr/bin/time -v "$LAM_BIN/lam-range" "${JOPT[@]}" --quiet tiny.op > /dev/null 2> tiny.time
vec_kb=$(awk 'BEGIN { printf "%.0f", 63504 * 8 / 1024 }')
printf '   %-34s %8s %8s  %8s  %s\n' "run" "wall s" "CPU s" "peak MB" "above a 2-orbital run, in vectors of the (5,5) sector"
for t in h10 h10m; do
    label="--no-multiplets (all sectors)"; [ $t = h10m ] && label="multiplets (the default)"
    printf '   %-34s %8.1f %8.1f  %8.1f  %.1f\n' "$label" "$(wall_s $t.time)" "$(cpu_s $t.time)" \
        "$(awk -v k="$(peak_kb $t.time)" 'BEGIN { print k / 1024 }')" \
        "$(awk -v k="$(peak_kb $t.time)" -v b="$(peak_kb tiny.time)" -v v="$vec_kb" 'BEGIN { print (k - b) / v }')"
done
printf '   sectors: %s lines, %s computed; fock_half_range %s Eh (both runs: %s), status %s / %s\n' \
    "$(grep -c '^sector' h10.range)" "$(grep -c 'computed$' h10.range)" \
    "$(awk -F'\t' '$1 == "fock_half_range" { print $2 }' h10.range)" \
    "$(awk -F'\t' '$1 == "fock_half_range" { print $2 }' h10m.range)" \
    "$(awk -F'\t' '$1 == "status" { print $2 }' h10.range)" "$(awk -F'\t' '$1 == "status" { print $2 }' h10m.range)"
