#!/bin/bash
# gather.sh DIR [N] - join the per-sector reports of range-array.sh into the
# Fock-space (and, with an electron number N, the N-electron) extremes, in
# the key<TAB>value form of lam-range.
#
# Only the sectors present are used: the Fock-space figures are those of the
# whole space only when every sector (or its spin-flip mirror, for a
# spin-free operator) was computed; the script counts them and says so.
set -euo pipefail
dir=${1:?usage: gather.sh DIR [N]}
n=${2:-}
shopt -s nullglob
files=("$dir"/sector-*.report)
if [ ${#files[@]} -eq 0 ]; then
    echo "gather.sh: no sector-*.report in $dir" >&2
    exit 66
fi
awk -F'\t' -v n="$n" '
    $1 == "sector" {
        na = $2; nb = $3; lo = $4 + 0; hi = $5 + 0; ++sectors
        if (!seen++ || lo < fmin) fmin = lo
        if (seen == 1 || hi > fmax) fmax = hi
        if ($6 != "exact") bound = 1
        if (n != "" && na + nb == n) {
            if (!nseen++ || lo < nmin) nmin = lo
            if (nseen == 1 || hi > nmax) nmax = hi
        }
    }
    $1 == "status" && $2 != "exact" { bound = 1 }
    END {
        printf "sectors\t%d\n", sectors
        printf "fock_min\t%.17g\nfock_max\t%.17g\nfock_half_range\t%.17g\n", fmin, fmax, (fmax - fmin) / 2
        if (n != "") {
            if (!nseen) { print "gather.sh: no sector with " n " electrons" > "/dev/stderr"; exit 65 }
            printf "electrons\t%s\nn_min\t%.17g\nn_max\t%.17g\nn_half_range\t%.17g\n", n, nmin, nmax, (nmax - nmin) / 2
        }
        printf "status\t%s\n", bound ? "bound" : "exact"
    }' "${files[@]}"
