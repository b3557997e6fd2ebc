# lambda-vs-pauli.gp - lambda of each representation against the Pauli
# lambda of the same geometry, with the DeltaE/2 floors.
# gnuplot -e "data='out/wide.tsv'; out='out/lambda-vs-pauli.png'" lambda-vs-pauli.gp
load "style.gp"
set terminal pngcairo size 1100,720 font ",12"
set output out
set datafile separator "\t"
set key outside right top box spacing 1.2
# log scales: molecules, representations and floors span decades
set logscale xy
set xtics (1, 1.5, 2, 3, 5, 7, 10, 15, 20, 30, 50, 70, 100, 150, 200)
set ytics (0.2, 0.3, 0.5, 0.7, 1, 1.5, 2, 3, 5, 7, 10, 15, 20, 30, 50, 70, 100, 150, 200)
set autoscale fix
set offsets graph 0.04, graph 0.04, graph 0.04, graph 0.04
set grid xtics ytics
set xlabel "Pauli one-norm lambda (Jordan-Wigner), Eh"
set ylabel "one-norm lambda, Eh"
set title "lambda of each representation against the Pauli lambda of the same geometry"
# wide.tsv: 3 pauli, 4-10 the other representations (collect.sh REPS order),
# 11 floor_n, 12 floor_fock
plot x with lines ls 1 dt 2 title "Pauli (y = x)", \
     for [i = 2:words(reps)] data using 3:(column(i + 2)) skip 1 with points ls rep_style(i) \
         title rep_title(i), \
     data using 3:12 skip 1 with points ls 7 title "floor: Fock-space dE/2 of H", \
     data using 3:11 skip 1 with points ls 8 title "floor: N-electron dE/2"
