#!/bin/sh
# sectors.sh OPERATOR > sectors.txt
#
# One line "NA,NB" per particle-number sector of an operator stream
# (NA spin-up and NB spin-down electrons, 0..orbitals each).  For a
# spin-free operator the sectors (NA,NB) and (NB,NA) have the same
# spectrum (spin flip), so only NA >= NB is listed; pass --all to list
# every sector (for a fermion or pauli operator that is not spin-free).
set -eu
all=0
if [ "${1:-}" = --all ]; then all=1; shift; fi
op=${1:?usage: sectors.sh [--all] OPERATOR}
n=$(awk -F': *' '/^#% orbitals:/ { print $2; exit } /^#% modes:/ { print $2 / 2; exit }' "$op")
if [ -z "$n" ]; then
    echo "sectors.sh: $op: no 'orbitals:' or 'modes:' line in the header" >&2
    exit 65
fi
awk -v n="$n" -v all="$all" 'BEGIN {
    for (a = 0; a <= n; a++) for (b = 0; b <= n; b++) if (all || a >= b) print a "," b }'
