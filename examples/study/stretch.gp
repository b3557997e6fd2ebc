# stretch.gp - along the stretch coordinate, one column of panels per
# molecule: lambda of each representation with the N-electron DeltaE/2
# floor (top), and the total Toffolis lam-cost estimates for each
# representation priced by its own construction, rotations included
# (bottom; estimates of one construction each, no distillation, routing or
# layout: lam-cost(1)).
# gnuplot -e "data='out/wide.tsv'; out='out/stretch.png'; molecules='h4 lih'" stretch.gp
load "style.gp"
n = words(molecules)
set terminal pngcairo size (n > 1 ? 560 * n : 700),1140 font ",11"
set output out
set datafile separator "\t"
set multiplot layout 2, n
set grid
set key outside top center horizontal maxrows 3 font ",9"
set xlabel "R, angstrom"
set offsets graph 0.03, graph 0.03, 0, 0
pick(c, m) = (strcol(1) eq m) ? column(c) : NaN
set ylabel "lambda, Eh"
set yrange [0:*]
do for [i = 1:n] {
    m = word(molecules, i)
    set title sprintf("%s: lambda along the stretch (STO-3G)", m)
    plot data using (pick(2, m)):(pick(3, m)) skip 1 with linespoints ls 1 title "Pauli", \
         data using (pick(2, m)):(pick(4, m)) skip 1 with linespoints ls 2 title "groups", \
         data using (pick(2, m)):(pick(5, m)) skip 1 with linespoints ls 3 title "shift", \
         data using (pick(2, m)):(pick(6, m)) skip 1 with linespoints ls 4 title "shift + groups", \
         data using (pick(2, m)):(pick(7, m)) skip 1 with linespoints ls 5 title "double fact.", \
         data using (pick(2, m)):(pick(8, m)) skip 1 with linespoints ls 6 title "shift + DF", \
         data using (pick(2, m)):(pick(9, m)) skip 1 with linespoints ls 8 title "floor N dE/2"
}
set ylabel "total Toffolis (estimate, run.toffoli)"
set logscale y
set format y "10^{%T}"
set yrange [*:*]
do for [i = 1:n] {
    m = word(molecules, i)
    set title sprintf("%s: total Toffolis, each form by its own construction", m)
    plot data using (pick(2, m)):(pick(12, m)) skip 1 with linespoints ls 1 title "Pauli (sparse)", \
         data using (pick(2, m)):(pick(13, m)) skip 1 with linespoints ls 2 title "groups", \
         data using (pick(2, m)):(pick(14, m)) skip 1 with linespoints ls 3 title "shift (sparse)", \
         data using (pick(2, m)):(pick(15, m)) skip 1 with linespoints ls 4 title "shift + groups", \
         data using (pick(2, m)):(pick(16, m)) skip 1 with linespoints ls 5 title "double fact.", \
         data using (pick(2, m)):(pick(17, m)) skip 1 with linespoints ls 6 title "shift + DF"
}
unset multiplot
