#!/bin/sh
# molecules.sh - the molecules of our own study and their stretch coordinate.
#
#   molecules.sh geometry MOL R    xyz (angstrom) of MOL at stretch R (angstrom)
#   molecules.sh scf-options MOL   lam-scf options for MOL (basis, frozen core)
#   molecules.sh sector MOL        NA,NB of the closed-shell ground state
#                                  (the sector lam-range bounds for h30)
#
# h4     linear chain of four hydrogen atoms, equal spacing R (8 qubits)
# lih    lithium hydride, Li-H distance R, Li 1s frozen (10 qubits)
# water  symmetric stretch of water, both O-H = R, H-O-H 104.5 degrees,
#        O 1s frozen (12 qubits)
# h30    linear chain of thirty hydrogen atoms, equal spacing R (60 qubits;
#        the 30-orbital case, `make big`)
# All in STO-3G (Hehre, Stewart and Pople, J. Chem. Phys. 51, 2657 (1969)).
set -eu
geometry() {
    case $1 in
    h4) awk -v r="$2" 'BEGIN { printf "4\nH4 chain, spacing %s A\n", r;
                               for (i = 0; i < 4; i++) printf "H 0 0 %.8f\n", i * r }' ;;
    h30) awk -v r="$2" 'BEGIN { printf "30\nH30 chain, spacing %s A\n", r;
                                for (i = 0; i < 30; i++) printf "H 0 0 %.8f\n", i * r }' ;;
    lih) printf '2\nLiH, R = %s A\nLi 0 0 0\nH 0 0 %s\n' "$2" "$2" ;;
    water) awk -v r="$2" 'BEGIN { half = 104.5 / 2 * atan2(0, -1) / 180;
                                  y = r * sin(half); z = r * cos(half);
                                  printf "3\nwater, O-H = %s A\n", r;
                                  printf "O 0 0 0\nH 0 %.8f %.8f\nH 0 %.8f %.8f\n", y, z, -y, z }' ;;
    *) echo "molecules.sh: unknown molecule '$1'" >&2; exit 64 ;;
    esac
}
scf_options() {
    case $1 in
    h4 | h30) echo "--basis sto-3g" ;;
    lih | water) echo "--basis sto-3g --frozen 1" ;;
    *) echo "molecules.sh: unknown molecule '$1'" >&2; exit 64 ;;
    esac
}
sector() {
    case $1 in
    h4) echo 2,2 ;;
    h30) echo 15,15 ;;
    lih) echo 1,1 ;;
    water) echo 4,4 ;;
    *) echo "molecules.sh: unknown molecule '$1'" >&2; exit 64 ;;
    esac
}
case ${1:-} in
geometry) geometry "$2" "$3" ;;
scf-options) scf_options "$2" ;;
sector) sector "$2" ;;
*) echo "usage: molecules.sh geometry MOL R | scf-options MOL | sector MOL" >&2; exit 64 ;;
esac
