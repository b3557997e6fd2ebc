# style.gp - one colour and symbol per representation, shared by the plots.
set style line 1 lc rgb "#7b3294" pt 4  ps 1.3 lw 1.5   # Pauli
set style line 2 lc rgb "#008837" pt 5  ps 1.3 lw 1.5   # groups
set style line 3 lc rgb "#2c7bb6" pt 9  ps 1.4 lw 1.5   # shift
set style line 4 lc rgb "#e66101" pt 7  ps 1.3 lw 1.5   # shift + groups
set style line 5 lc rgb "#a6611a" pt 13 ps 1.4 lw 1.5   # double factorization
set style line 6 lc rgb "#018571" pt 11 ps 1.4 lw 1.5   # shift + DF
set style line 7 lc rgb "black"   pt 2  ps 1.6 lw 2     # Fock-space floor of H
set style line 8 lc rgb "red"     pt 1  ps 1.6 lw 2.5   # N-electron floor
set style line 9  lc rgb "#d01c8b" pt 6  ps 1.4 lw 1.5  # rotated + shift
set style line 10 lc rgb "#4d4d4d" pt 15 ps 1.4 lw 1.5  # rotated + shift + groups
# The representations of the study (collect.sh REPS) in order: their style
# line and the title the plots give them.
rep_style(i) = i <= 6 ? i : i + 2
rep_title(i) = i == 1 ? "Pauli" : i == 2 ? "groups" : i == 3 ? "shift" : \
    i == 4 ? "shift + groups" : i == 5 ? "double fact." : i == 6 ? "shift + DF" : \
    i == 7 ? "rotated + shift" : "rotated + shift + groups"
reps = "pauli grouped shift-pauli shift-grouped df shift-df rot-shift rot-shift-grouped"
