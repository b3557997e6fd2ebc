#!/bin/bash
# bench/scf.sh - lam-scf against psi4 (Debian package, scf_type pk) on the
# same molecules, 24 to 100 basis functions.  Prints energies and times side
# by side; asserts nothing about time.
#
# Columns: basis functions; RHF energies and their difference; wall and CPU
# (user+sys) seconds of `lam-scf --energy-only` and of one psi4 process running
# psi4.energy("scf") (import included); psi4's own time inside the process
# (geometry to energy); lam-scf writing the whole FCIDUMP; stab_cpu: CPU
# seconds of lam-scf's orbital-Hessian stability test (the run with the
# test minus the run with --stability off).  Both programs
# run on one thread (OMP_NUM_THREADS=OPENBLAS_NUM_THREADS=1).  The machine
# may be shared: CPU seconds are the steadier figure.
# Geometries (angstrom) are ours; the cyclopentadiene ring is idealized.
set -u
LAM_BIN=${LAM_BIN:-$(cd "$(dirname "$0")/.." && pwd)/bin}
export OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 MKL_NUM_THREADS=1
TMP=$(mktemp -d)
trap 'rm -rf "$TMP"' EXIT

# water: r(OH) 0.960 A, H-O-H 105.0 degrees (examples/data/water.xyz)
cat >"$TMP/water.xyz" <<'EOF'
O 0 0 0
H 0 0.76161921 0.58441097
H 0 -0.76161921 0.58441097
EOF
cat >"$TMP/methanol.xyz" <<'EOF'
C -0.0467 0.6617 0
O -0.0467 -0.7530 0
H -1.0874 0.9838 0
H 0.4415 1.0780 0.8856
H 0.4415 1.0780 -0.8856
H 0.8563 -1.0881 0
EOF
cat >"$TMP/ethanol.xyz" <<'EOF'
C -1.1756 -0.3946 0
C 0.0139 0.5508 0
O 1.2096 -0.2164 0
H -2.1106 0.1705 0
H -1.1480 -1.0337 0.8858
H -1.1480 -1.0337 -0.8858
H -0.0110 1.1936 0.8856
H -0.0110 1.1936 -0.8856
H 1.9680 0.3720 0
EOF
awk 'BEGIN { pi = atan2(0, -1)
  for (k = 0; k < 6; ++k) { t = k * pi / 3
    printf "C %.6f %.6f 0\nH %.6f %.6f 0\n", 1.397 * cos(t), 1.397 * sin(t), 2.481 * cos(t), 2.481 * sin(t) } }' >"$TMP/benzene.xyz"
awk 'BEGIN { pi = atan2(0, -1); r = 1.45 / (2 * sin(pi / 5))
  for (k = 0; k < 5; ++k) { t = pi / 2 + k * 2 * pi / 5; x = r * cos(t); y = r * sin(t)
    printf "C %.6f %.6f 0\n", x, y
    if (k == 0) { printf "H %.6f %.6f 0.88\nH %.6f %.6f -0.88\n", x + 0.63 * cos(t), y + 0.63 * sin(t), x + 0.63 * cos(t), y + 0.63 * sin(t) }
    else printf "H %.6f %.6f 0\n", x + 1.08 * cos(t), y + 1.08 * sin(t) } }' >"$TMP/cyclopentadiene.xyz"

cat >"$TMP/psi4run.py" <<'EOF'
import sys, time
t0 = time.time()
import psi4
geom, basis = sys.argv[1], sys.argv[2]
psi4.set_output_file(sys.argv[3], False)
psi4.set_memory("2 GB")
t1 = time.time()
psi4.geometry("0 1\n%s\nsymmetry c1\nno_reorient\nno_com\n" % open(geom).read())
psi4.set_options({"basis": basis, "scf_type": "pk", "e_convergence": 1e-10,
                  "d_convergence": 1e-8})
e = psi4.energy("scf")
print("%.12f %.3f" % (e, time.time() - t1))
EOF

# seconds WALL CPU of a command (stdout to $TMP/out)
timed() {
    /usr/bin/time -f "%e %U %S" -o "$TMP/time" "$@" >"$TMP/out" 2>"$TMP/err" || {
        echo "failed: $*" >&2; cat "$TMP/err" >&2; return 1; }
    awk '{ printf "%.2f %.2f", $1, $2 + $3 }' "$TMP/time"
}

printf '%-16s %-8s %4s  %-18s %-18s %8s  %6s %6s %8s  %6s %6s %6s  %9s %9s  %7s %6s\n' \
    molecule basis nbf E_lam/Eh E_psi4/Eh dE \
    lam_s lam_cpu stab_cpu psi4_s psi_cpu psi_in ratio_wall ratio_cpu fcid_s fcid_MB
for spec in water:cc-pvdz methanol:cc-pvdz benzene:6-31g ethanol:cc-pvdz cyclopentadiene:cc-pvdz; do
    mol=${spec%%:*} basis=${spec#*:}
    read -r sw sc <<<"$(timed "$LAM_BIN/lam-scf" -q --energy-only --stability off --basis "$basis" "$TMP/$mol.xyz")" || exit 1
    read -r lw lc <<<"$(timed "$LAM_BIN/lam-scf" -q --energy-only --basis "$basis" "$TMP/$mol.xyz")" || exit 1
    el=$(awk -F'\t' '$1 == "scf_energy" { print $2 }' "$TMP/out")
    nbf=$(awk -F'\t' '$1 == "basis_functions" { print $2 }' "$TMP/out")
    read -r pw pc <<<"$(timed env PYTHONPATH=/usr/lib/x86_64-linux-gnu /usr/bin/python3 "$TMP/psi4run.py" \
        "$TMP/$mol.xyz" "$basis" "$TMP/psi4.out")" || exit 1
    read -r ep pin <"$TMP/out"
    read -r fw fc <<<"$(timed "$LAM_BIN/lam-scf" -q --basis "$basis" "$TMP/$mol.xyz" -o "$TMP/f.fcidump")" || exit 1
    mb=$(du -m "$TMP/f.fcidump" | cut -f1)
    awk -v m="$mol" -v b="$basis" -v n="$nbf" -v el="$el" -v ep="$ep" -v lw="$lw" -v lc="$lc" \
        -v pw="$pw" -v pc="$pc" -v pin="$pin" -v fw="$fw" -v mb="$mb" -v sc="$sc" 'BEGIN {
        d = el - ep; if (d < 0) d = -d
        printf "%-16s %-8s %4d  %-18.12f %-18.12f %8.1e  %6.2f %6.2f %8.2f  %6.2f %6.2f %6.2f  %9.2f %9.2f  %7.2f %6d\n",
            m, b, n, el, ep, d, lw, lc, lc - sc, pw, pc, pin, lw / pw, lc / pc, fw, mb }'
    rm -f "$TMP/f.fcidump"
done
echo "ratio_wall, ratio_cpu: lam-scf --energy-only against the psi4 process (goal <= 1)."
echo "psi_in: psi4's own seconds from geometry to energy, without the Python start."
echo "fcid_s: lam-scf writing the full FCIDUMP (all orbitals active) of fcid_MB megabytes."
echo "stab_cpu: CPU seconds of the stability test (difference of two runs; noise about 0.05 s)."
echo "dE: lam-scf and psi4 reach the same (stable) RHF state on these molecules."
echo "threads: one (OMP_NUM_THREADS=OPENBLAS_NUM_THREADS=1); load: $(cut -d' ' -f1-3 /proc/loadavg) (shared machine)."
