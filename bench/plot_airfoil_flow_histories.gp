# Residual histories of bench_airfoil_flow: nkit's pseudo-transient
# Newton-GMRES (the example's default: block ILU(0) of the first-order
# Jacobian set up every fifth Newton step) against explicit RK4 pseudo-time marching with local time
# steps, NACA 0012 at M = 0.5, alpha = 2 deg, three grids, against work units
# (wall time / one residual evaluation). Run inside the folder given to
#   bench_airfoil_flow --nkit_history_folder=<folder>
# as (cd <folder> && gnuplot <path>/plot_airfoil_flow_histories.gp).
set terminal pngcairo size 1000,620 enhanced font 'Sans,11'
set output 'airfoil_explicit_comparison.png'
set datafile separator ','
set logscale xy
set format y '10^{%L}'
set format x '10^{%L}'
set grid
set key bottom left
set title 'NACA 0012, M = 0.5, {/Symbol a} = 2°: residual against work units (wall time / one residual evaluation)'
set xlabel 'work units'
set ylabel '||R|| / ||R_0||'
set yrange [1e-11:10]
set xrange [10:2e5]
plot for [n in "48 64 96"] 'newton_krylov_block_ilu_lagged_'.n.'.csv' using 2:3 skip 2 with linespoints lw 2 pt 7 ps 0.6 \
       lc (n/16 - 2) title sprintf('nkit Newton-GMRES, lagged block ILU(0), %s x %d', n, n/2), \
     for [n in "48 64 96"] 'explicit_runge_kutta_'.n.'.csv' using 2:3 skip 2 with lines lw 2 dt 2 \
       lc (n/16 - 2) title sprintf('explicit RK4, local time steps, %s x %d', n, n/2)
