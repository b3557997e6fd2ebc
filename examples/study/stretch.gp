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
    plot for [j = 1:words(reps)] data using (pick(2, m)):(pick(j + 2, m)) skip 1 \
             with linespoints ls rep_style(j) title rep_title(j), \
         data using (pick(2, m)):(pick(11, m)) skip 1 with linespoints ls 8 title "floor N dE/2"
}
set ylabel "total Toffolis (estimate, run.toffoli)"
set logscale y
set format y "10^{%T}"
set yrange [*:*]
do for [i = 1:n] {
    m = word(molecules, i)
    set title sprintf("%s: total Toffolis, each form by its own construction", m)
    plot for [j = 1:words(reps)] data using (pick(2, m)):(pick(j + 13, m)) skip 1 \
             with linespoints ls rep_style(j) title rep_title(j)
}
unset multiplot
