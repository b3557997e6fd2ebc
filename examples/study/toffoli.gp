# toffoli.gp - the total-Toffoli view: run.toffoli (lam-cost's whole phase
# estimation at the study's error budget) of each representation, one panel
# per molecule, one point per geometry of the stretch.  Each figure is an
# estimate of one construction (the one lam-cost prices that form by:
# sparse Pauli LCU, grouped LCU, double factorization), counting Toffolis
# of the walk only: no magic-state distillation, routing or layout
# (lam-cost(1)).
# gnuplot -e "data='out/results.tsv'; out='out/toffoli.png'; molecules='h4 lih'" toffoli.gp
load "style.gp"
n = words(molecules)
nr = words(reps)
set terminal pngcairo size (n > 1 ? 520 * n : 640),640 font ",11"
set output out
set datafile separator "\t"
set multiplot layout 1, n title "total Toffolis of one phase estimation (run.toffoli, estimate of one construction each; no distillation, routing or layout)" font ",12"
set grid ytics
set key off
set logscale y
set format y "10^{%T}"
set ylabel "run.toffoli"
set xrange [0.5:nr + 0.5]
set xtics rotate by -40 left font ",10"
set xtics (rep_title(1) 1)
do for [i = 2:nr] { set xtics add (rep_title(i) i) }
set bmargin 9
set rmargin 8
# results.tsv: 1 molecule, 3 representation, 13 run.toffoli
pick(m, i) = (strcol(1) eq m && strcol(3) eq word(reps, i)) ? column(13) : NaN
do for [k = 1:n] {
    m = word(molecules, k)
    set title sprintf("%s (STO-3G), every geometry", m)
    plot for [i = 1:nr] data using (i):(pick(m, i)) skip 1 with points ls rep_style(i)
}
unset multiplot
