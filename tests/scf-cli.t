#!/bin/bash
# lam-scf on the command line: good input, bad input, exit codes.
# Values from outside the project:
# - H2, STO-3G, R = 1.4 bohr: A. Szabo, N. S. Ostlund, Modern Quantum
#   Chemistry (1989), chapter 3 (from memory): MO integrals h11 -1.2528,
#   h22 -0.4756, (11|11) 0.6746, (11|22) 0.6636, (12|12) 0.1813,
#   (22|22) 0.6975, orbital energies -0.5782 and 0.6703, E_HF -1.1167 Eh;
#   compared to 4 decimals.
# - Water, STO-3G, in the bohr geometry published with T. D. Crawford's
#   "Programming Projects" (CrawfordGroup/ProgrammingProjects, Project #3,
#   the Hartree-Fock SCF method: input geom.dat and its reference output;
#   from memory): E_nuc 8.002367061810450, E_SCF -74.942079928192 Eh.  A
#   published value, so this test keeps that published geometry.
# - FCIDUMP header layout (Knowles and Handy 1989; common practice).
source "$(dirname "$0")/lib/tap.sh"

# integral I J K L < FCIDUMP: the value on the line of (IJ|KL) in any of
# its 8 index orders (h_IJ with K = L = 0).
integral() {
    awk -v i="$1" -v j="$2" -v k="$3" -v l="$4" '
        function same(a, b, c, d) { return (a == i && b == j && c == k && d == l) }
        NF == 5 && $2 ~ /^[0-9]+$/ {
            a = $2; b = $3; c = $4; d = $5
            if (same(a, b, c, d) || same(b, a, c, d) || same(a, b, d, c) || same(b, a, d, c) ||
                same(c, d, a, b) || same(d, c, a, b) || same(c, d, b, a) || same(d, c, b, a)) {
                v = $1; sub(/[dD]/, "e", v); print v + 0; exit
            }
        }'
}

cat >"$TMP/h2.xyz" <<'EOF'
H 0 0 0
H 0 0 1.4
EOF
cat >"$TMP/water.xyz" <<'EOF'
3
water, Crawford programming projects (bohr)
O  0.000000000000 -0.143225816552 0.000000000000
H  1.638036840407  1.136548822547 0.000000000000
H -1.638036840407  1.136548822547 0.000000000000
EOF

runlam lam-scf --help
is "$RC" 0 "--help exits 0"
like "$OUT" "Usage: lam-scf" "--help shows the synopsis"
like "$OUT" "Eh" "--help names the unit"
like "$OUT" "Example" "--help has an example"
runlam lam-scf --version
is "$RC" 0 "--version exits 0"
like "$OUT" "^lam-scf .*[0-9]+\.[0-9]+" "--version prints the version"

# ---- Szabo-Ostlund H2
runlam lam-scf --quiet --bohr "$TMP/h2.xyz"
is "$RC" 0 "H2: exit 0"
printf '%s\n' "$OUT" >"$TMP/h2.fcidump"
like "$(head -1 "$TMP/h2.fcidump")" "^ *&FCI NORB=2, *NELEC=2, *MS2=0" "H2: FCIDUMP header"
near "$(integral 1 1 0 0 <"$TMP/h2.fcidump")" -1.2528 5e-5 "H2: h11 = -1.2528 (Szabo-Ostlund)"
near "$(integral 2 2 0 0 <"$TMP/h2.fcidump")" -0.4756 5e-5 "H2: h22 = -0.4756 (Szabo-Ostlund)"
near "$(integral 1 1 1 1 <"$TMP/h2.fcidump")" 0.6746 5e-5 "H2: (11|11) = 0.6746 (Szabo-Ostlund)"
near "$(integral 1 1 2 2 <"$TMP/h2.fcidump")" 0.6636 5e-5 "H2: (11|22) = 0.6636 (Szabo-Ostlund)"
near "$(integral 1 2 1 2 <"$TMP/h2.fcidump")" 0.1813 5e-5 "H2: (12|12) = 0.1813 (Szabo-Ostlund)"
near "$(integral 2 2 2 2 <"$TMP/h2.fcidump")" 0.6975 5e-5 "H2: (22|22) = 0.6975 (Szabo-Ostlund)"
near "$(integral 0 0 0 0 <"$TMP/h2.fcidump")" 0.7143 5e-5 "H2: constant 1/R = 0.7143 (Szabo-Ostlund)"
runlam lam-scf --quiet --bohr --energy-only "$TMP/h2.xyz"
near "$(report_get scf_energy <<<"$OUT")" -1.1167 5e-5 "H2: E_HF = -1.1167 Eh (Szabo-Ostlund)"
near "$(report_get homo <<<"$OUT")" -0.5782 5e-5 "H2: orbital energy -0.5782 (Szabo-Ostlund)"
near "$(report_get lumo <<<"$OUT")" 0.6703 5e-5 "H2: orbital energy 0.6703 (Szabo-Ostlund)"
# the one orbital-Hessian element of minimal-basis H2 (Seeger and Pople
# 1977, from memory): (A+B) = e2 - e1 + 4 (12|12) - (11|22) - (12|21)
# = 0.6703 + 0.5782 + 3 x 0.1813 - 0.6636 = 1.1288 from Szabo-Ostlund's numbers
near "$(report_get stability_eigenvalue <<<"$OUT")" 1.1288 5e-4 "H2: orbital Hessian 1.1288 Eh from Szabo-Ostlund's integrals"
is "$(report_get instabilities_followed <<<"$OUT")" 0 "H2: stable, nothing followed"

# ---- Crawford water
runlam lam-scf --quiet --bohr --energy-only "$TMP/water.xyz"
is "$RC" 0 "water --energy: exit 0"
near "$(report_get nuclear_repulsion <<<"$OUT")" 8.002367061810450 1e-9 "water: E_nuc 8.002367061810450 (Crawford)"
near "$(report_get scf_energy <<<"$OUT")" -74.942079928192 1e-8 "water: E_SCF -74.942079928192 Eh (Crawford)"
is "$(report_get basis_functions <<<"$OUT")" 7 "water STO-3G: 7 basis functions"
is "$(report_get electrons <<<"$OUT")" 10 "water: 10 electrons"
runlam lam-scf --quiet --bohr --energy-only --tsv "$TMP/water.xyz"
is "$(wc -l <<<"$OUT")" 2 "--tsv: header row and value row"
like "$(head -1 <<<"$OUT")" $'scf_energy' "--tsv header names scf_energy"

runlam lam-scf --quiet --bohr --energy-only --start core "$TMP/water.xyz"
near "$(report_get scf_energy <<<"$OUT")" -74.942079928192 1e-8 "water from the core guess: same E_SCF"

# angstrom is the default unit: the same geometry in angstrom (CODATA 2014 bohr)
awk 'NR > 2 { printf "%s %.12f %.12f %.12f\n", $1, $2 * 0.52917721067, $3 * 0.52917721067, $4 * 0.52917721067 }' \
    "$TMP/water.xyz" >"$TMP/water-angstrom.xyz"
runlam lam-scf --quiet --energy-only "$TMP/water-angstrom.xyz"
near "$(report_get scf_energy <<<"$OUT")" -74.942079928192 1e-8 "water in angstrom: same E_SCF"
OUT=$(lam lam-scf --quiet --energy-only <"$TMP/water-angstrom.xyz" 2>/dev/null); RC=$?
is "$RC" 0 "molecule on stdin: exit 0"
near "$(report_get scf_energy <<<"$OUT")" -74.942079928192 1e-8 "molecule on stdin: same E_SCF"

# frozen core and active space in the FCIDUMP header
runlam lam-scf --quiet --bohr --frozen 1 --active 4 "$TMP/water.xyz"
is "$RC" 0 "--frozen 1 --active 4: exit 0"
like "$(head -1 <<<"$OUT")" "NORB=4, *NELEC=8, *MS2=0" "--frozen 1 --active 4: NORB=4 NELEC=8"
lam lam-scf --quiet --bohr --frozen 1 "$TMP/water.xyz" -o "$TMP/w.fcidump" >"$TMP/stdout" 2>/dev/null
is "$?" 0 "-o FILE: exit 0"
is "$(wc -c <"$TMP/stdout")" 0 "-o FILE: nothing on stdout"
like "$(head -1 "$TMP/w.fcidump")" "NORB=6, *NELEC=8" "-o FILE: FCIDUMP written"
lam lam-ints "$TMP/w.fcidump" >"$TMP/w.op" 2>/dev/null
is "$?" 0 "lam-ints reads lam-scf's FCIDUMP"

# d shells: cc-pVDZ spherical by definition, --cartesian overrides
# (beryllium atom, 3s2p1d in cc-pVDZ: Dunning 1989 / Prascher et al. 2011)
printf 'Be 0 0 0\n' >"$TMP/be.xyz"
runlam lam-scf --quiet --energy-only --basis cc-pvdz "$TMP/be.xyz"
is "$(report_get basis_functions <<<"$OUT")" 14 "Be cc-pVDZ: 14 functions (spherical d)"
runlam lam-scf --quiet --energy-only --basis cc-pvdz --cartesian "$TMP/be.xyz"
is "$(report_get basis_functions <<<"$OUT")" 15 "Be cc-pVDZ --cartesian: 15 functions"
runlam lam-scf --quiet --bohr --energy-only --basis 6-31g --spherical "$TMP/water.xyz"
is "$(report_get basis_functions <<<"$OUT")" 13 "water 6-31G: 13 functions"

# convergence report on stderr
runlam lam-scf --progress --bohr --energy-only "$TMP/water.xyz"
like "$ERR" "iter +energy" "--progress: iteration table on stderr"
like "$ERR" "RHF energy -74.94207992" "summary line on stderr"
runlam lam-scf --quiet --bohr --energy-only "$TMP/water.xyz"
is "$ERR" "" "--quiet: nothing on stderr"

# ---- the demo's integrals are lam-scf's, from the demo's geometry
DEMO="$TESTS_DIR/../examples/data"
lam lam-scf --quiet --frozen 1 "$DEMO/water.xyz" >"$TMP/demo.fcidump"
# (same lines, values to 1e-12 Eh: BLAS threads change the last digits)
is "$(awk 'NF == 5 && $2 ~ /^[0-9]+$/ { k = $2 " " $3 " " $4 " " $5; v = $1 + 0
          if (FNR == NR) { a[k] = v; next } if (!(k in a)) { print "extra " k; next }
          d = a[k] - v; if (d < 0) d = -d; if (d > 1e-12) print "differs " k; delete a[k] }
          END { for (k in a) print "missing " k }' "$TMP/demo.fcidump" "$DEMO/water.fcidump")" "" \
    "examples/data/water.fcidump = lam-scf --frozen 1 examples/data/water.xyz"

# ---- bad input: message with file:line and the documented exit code
# refuses NAME XYZ-TEXT WHAT [REGEX]: lam-scf exits 65 on NAME.xyz, with a
# message that matches REGEX
refuses() {
    printf '%b' "$2" >"$TMP/$1.xyz"
    runlam lam-scf --quiet "$TMP/$1.xyz"
    is "$RC" 65 "$3: exit 65"
    [ -z "$4" ] || like "$ERR" "$4" "$3: file:line and reason"
}
refuses bad-element 'H 0 0 0\nXx 0 0 1\n' "unknown element" "bad-element.xyz:2: unknown element 'Xx'"
refuses short 'H 0 0 0\nH 0 0\n' "atom line with 3 fields" 'short.xyz:2: expected "element x y z"'
refuses nan 'H 0 0 0\nH 0 0 0.7x\n' "coordinate that is not a number" "nan.xyz:2: coordinate '0.7x'"
refuses count '3\ncomment\nH 0 0 0\nH 0 0 0.74\n' "atom count does not match" \
    "count.xyz:1: 3 atoms declared, 2 found"
refuses same 'H 0 0 0\nH 0 0 0\n' "two nuclei on one point"

runlam lam-scf --quiet --bohr --charge 1 "$TMP/water.xyz"
is "$RC" 65 "open shell (water cation): exit 65"
like "$ERR" "water.xyz: 9 electrons .*open shell" "open shell: the reason"
runlam lam-scf --quiet --bohr --charge 2 "$TMP/h2.xyz"
is "$RC" 65 "no electrons left: exit 65"

printf 'Na 0 0 0\nH 0 0 1.89\n' >"$TMP/nah.xyz"
runlam lam-scf --quiet --basis cc-pvdz "$TMP/nah.xyz"
is "$RC" 65 "cc-pVDZ has no Na: exit 65"
like "$ERR" "nah.xyz:1: basis cc-pvdz has no functions for Na" "missing element in the basis: file:line"
runlam lam-scf --quiet --basis 6-31g --energy-only "$TMP/nah.xyz"
is "$RC" 0 "6-31G has Na: exit 0"

runlam lam-scf --quiet "$TMP/no-such-file.xyz"
is "$RC" 66 "missing input file: exit 66"
runlam lam-scf --quiet --basis 3-21g "$TMP/h2.xyz"
is "$RC" 64 "unknown basis: exit 64"
like "$ERR" "unknown basis '3-21g'" "unknown basis: message"
runlam lam-scf --quiet --no-such-option "$TMP/h2.xyz"
is "$RC" 64 "unknown option: exit 64"
is "$ERR" "lam-scf: unknown option '--no-such-option'
Try 'lam-scf --help'." "unknown option: one message"
runlam lam-scf --quiet -e "$TMP/h2.xyz"
is "$RC" 64 "-e is not lam-scf's (the suite's -e is --encoding)"
runlam lam-scf --quiet --basis
like "$ERR" "option '--basis' needs a value" "missing value: one message"
runlam lam-scf -V
like "$OUT" "^lam-scf .*[0-9]+\.[0-9]+" "-V is --version"
runlam lam-scf --quiet --stability maybe "$TMP/h2.xyz"
is "$RC" 64 "unknown --stability: exit 64"
runlam lam-scf --quiet --diis-depth 9 "$TMP/h2.xyz"
is "$RC" 64 "--diis-depth above 8: exit 64"
runlam lam-scf --quiet --bohr --energy-only --diis-depth 0 --gradient-tol 1e-9 --max-iter 300 "$TMP/water.xyz"
near "$(report_get scf_energy <<<"$OUT")" -74.942079928192 1e-8 "--diis-depth 0 (plain Roothaan iterations): same E_SCF"
runlam lam-scf --quiet --bohr --energy-only -M 2G "$TMP/water.xyz"
is "$RC" 0 "-M 2G: exit 0"
runlam lam-scf --quiet --bohr --energy-only --max-memory 2x "$TMP/water.xyz"
is "$RC" 64 "--max-memory with a bad suffix: exit 64"
runlam lam-scf --quiet --cutoff -1 "$TMP/h2.xyz"
is "$RC" 64 "negative --cutoff: exit 64"

# ---- stability: H2 at 20 A; the iterations reach the ionic H+ H- saddle
printf 'H 0 0 0\nH 0 0 20\n' >"$TMP/h2-far.xyz"
runlam lam-scf --energy-only "$TMP/h2-far.xyz"
is "$RC" 0 "H2 at 20 A: exit 0"
like "$ERR" "note: the first RHF solution \(-0.18501661[0-9]* Eh\) was unstable" "H2 at 20 A: the ionic saddle is named on stderr"
near "$(report_get scf_energy <<<"$OUT")" -0.559090157 1e-8 "H2 at 20 A: the stable sigma_g^2 state (closed form in scf-ref.t)"
runlam lam-scf --quiet --energy-only --stability check "$TMP/h2-far.xyz"
is "$RC" 65 "H2 at 20 A --stability check: exit 65"
like "$ERR" "h2-far.xyz: the RHF solution \(-0.185016615728 Eh\) is unstable: the orbital Hessian has the eigenvalue -7.48" "--stability check: the message"
is "$OUT" "" "--stability check: nothing on stdout"
runlam lam-scf --quiet --energy-only --stability off "$TMP/h2-far.xyz"
near "$(report_get scf_energy <<<"$OUT")" -0.185016616 1e-8 "--stability off: the saddle point stays"
is "$(report_get stability_eigenvalue <<<"$OUT")" "" "--stability off: no stability key"
runlam lam-scf --quiet -o "$TMP/h2-far.fcidump" "$TMP/h2-far.xyz"
runlam lam-ints "$TMP/h2-far.fcidump"
runlam_in "$OUT" lam-range --quiet
near "$(report_get n_min <<<"$OUT")" -0.933164 1e-5 "H2 at 20 A: FCI from the FCIDUMP = 2 x STO-3G hydrogen atom (-0.4666 Eh, Szabo-Ostlund)"

# ---- symmetry noise: the default cutoff and --cutoff
lam lam-scf --bohr "$TMP/water.xyz" >"$TMP/wclean.fcidump" 2>"$TMP/err"
like "$(cat "$TMP/err")" "integrals written, [0-9]+ at or below the cutoff" "cleaning said on stderr"
is "$(awk 'NF == 5 && $2 ~ /^[0-9]+$/ { v = $1 + 0; if (v < 0) v = -v; if (v > 0 && v < 1e-8) n++ } END { print n + 0 }' "$TMP/wclean.fcidump")" 0 \
    "water (C2v): no integral between 0 and 1e-8 Eh by default"
lam lam-scf --quiet --bohr --cutoff 0 "$TMP/water.xyz" >"$TMP/wnoisy.fcidump"
is "$(awk 'NF == 5 && $2 ~ /^[0-9]+$/ { v = $1 + 0; if (v < 0) v = -v; if (v > 0 && v < 1e-8) n++ } END { print (n > 0) }' "$TMP/wnoisy.fcidump")" 1 \
    "--cutoff 0: the rounding noise is written"
lam lam-scf --quiet --bohr --cutoff 0.01 "$TMP/water.xyz" >"$TMP/wcut.fcidump"
is "$(awk 'NF == 5 && $2 ~ /^[1-9]/ { v = $1 + 0; if (v < 0) v = -v; if (v <= 0.01) n++ } END { print n + 0 }' "$TMP/wcut.fcidump")" 0 \
    "--cutoff 0.01: nothing at or below 0.01 Eh"
runlam lam-scf --quiet --bohr --frozen 6 "$TMP/water.xyz"
is "$RC" 64 "--frozen above the occupied orbitals: exit 64"
runlam lam-scf --quiet --bohr --active 9 "$TMP/water.xyz"
is "$RC" 64 "--active above the orbitals: exit 64"
runlam lam-scf --quiet --bohr --active 4 "$TMP/water.xyz"
is "$RC" 64 "10 electrons in 4 orbitals: exit 64"
runlam lam-scf --quiet --tsv "$TMP/h2.xyz"
is "$RC" 64 "--tsv without --energy-only: exit 64"
runlam lam-scf --quiet --start huckel "$TMP/h2.xyz"
is "$RC" 64 "unknown --start: exit 64"
runlam lam-scf --quiet --energy-tol abc "$TMP/h2.xyz"
is "$RC" 64 "--energy-tol not a number: exit 64"
runlam lam-scf --quiet --bohr --max-iter 2 "$TMP/water.xyz"
is "$RC" 65 "no convergence in 2 iterations: exit 65"
like "$ERR" "did not converge in 2 iterations" "no convergence: the reason"
# -o is opened before the work; a failure after that removes it
runlam lam-scf --quiet --bohr --max-iter 2 -o "$TMP/unfinished.fcidump" "$TMP/water.xyz"
is "$RC" 65 "-o FILE, no convergence: exit 65"
[ ! -e "$TMP/unfinished.fcidump" ]; ok $? "-o FILE, no convergence: no file left"
runlam lam-scf --quiet --bohr --active 9 -o "$TMP/unfinished.fcidump" "$TMP/water.xyz"
is "$RC" 64 "-o FILE, --active above the orbitals: exit 64"
[ ! -e "$TMP/unfinished.fcidump" ]; ok $? "-o FILE, a late usage error: no file left"
# an --active far above the orbitals is the same usage error, not an
# overflow in the memory estimate made before the SCF (exit 70 before)
runlam lam-scf --quiet --bohr --active 100000 "$TMP/water.xyz"
is "$RC" 64 "--active 100000: exit 64"
like "$ERR" "exceeds the 7 orbitals above the frozen ones" "--active 100000: the message says why"
printf 'old\n' >"$TMP/kept.fcidump"
runlam lam-scf --quiet --bohr --active 9 -o "$TMP/kept.fcidump" "$TMP/water.xyz"
is "$RC/$(cat "$TMP/kept.fcidump")" "64/old" "-o FILE that exists, a late usage error: FILE as it was"
is "$(ls -A "$TMP" | grep -c '^\.kept')" 0 "and no temporary file beside it"
is "$OUT" "" "no convergence: nothing on stdout"
runlam lam-scf --quiet --bohr -M 1K "$TMP/water.xyz"
is "$RC" 75 "over --max-memory: exit 75"
runlam lam-scf --quiet --bohr -o "$TMP/no/such/dir/out" "$TMP/water.xyz"
is "$RC" 74 "output cannot be opened: exit 74"
if [ -w /dev/full ] && [ -c /dev/full ]; then
    runlam lam-scf --quiet --bohr -o /dev/full "$TMP/water.xyz"
    is "$RC" 74 "write error (full device): exit 74"
    [ -c /dev/full ]; ok $? "a failed run leaves the device it wrote to in place (/dev/full)"
fi
# A failed run removes a half-written plain file only: a pipe (or a device,
# or a link such as /dev/stdout) is not the program's to remove.
mkfifo "$TMP/pipe"
cat "$TMP/pipe" >/dev/null &
runlam lam-scf --quiet --bohr --active 9 -o "$TMP/pipe" "$TMP/water.xyz"
wait
is "$RC" 64 "-o PIPE, a late usage error: exit 64"
[ -p "$TMP/pipe" ]; ok $? "-o PIPE, a late usage error: the pipe stays"

done_testing
