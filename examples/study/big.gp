# big.gp - the 30-orbital case: lambda of each representation of one
# geometry against the floor interval of the N-electron block: dE/2 lies
# between floor_low (half the distance of lam-range's inner bounds of the
# extreme eigenvalues: certified) and floor_high (the least lambda of an
# exact representation).
# gnuplot -e "data='out/big.tsv'; out='out/big.png'" big.gp
load "style.gp"
nr = words(reps)
set terminal pngcairo size 900,640 font ",11"
set output out
set datafile separator "\t"
# big.tsv: 1 molecule, 2 r, 3 representation, 4 lambda, 9 floor_low,
# 10 floor_high
stats data using 9:10 skip 1 nooutput
low = STATS_min_x
high = STATS_min_y
stats data using 4 skip 1 nooutput
top = STATS_max
mol = system(sprintf("awk -F'\t' 'NR == 2 { print $1 \" at \" $2 \" A\" }' '%s'", data))
set title sprintf("%s (STO-3G): lambda of each representation and the floor of the N-electron block", mol)
set logscale y
set yrange [low / 1.5 : top * 1.5]
set xrange [0.5 : nr + 0.5]
set xtics rotate by -40 left font ",10"
set xtics (rep_title(1) 1)
do for [i = 2:nr] { set xtics add (rep_title(i) i) }
set bmargin 9
set rmargin 8
set grid ytics
set ytics (0.5, 1, 2, 3, 5, 7, 10, 15, 20, 30, 50, 70, 100, 150, 200, 300, 500, 700, 1000, 1500, 2000)
set ylabel "Eh"
set key top right box opaque font ",10"
set object 1 rectangle from graph 0, first low to graph 1, first high fc rgb "#fdb863" fs transparent solid 0.3 noborder behind
set label 1 sprintf("dE/2 of the block lies in [%.2f, %.2f] Eh", low, high) at graph 0.02, first sqrt(low * high) font ",10"
pick(i) = strcol(3) eq word(reps, i) ? column(4) : NaN
plot for [i = 1:nr] data using (i):(pick(i)) skip 1 with points ls rep_style(i) ps 2 notitle, \
     low with lines ls 8 title sprintf("certified lower bound of dE/2 (lam-range inner bounds): %.3f Eh", low), \
     high with lines ls 7 dt 2 title sprintf("least lambda of an exact form: %.3f Eh", high)
