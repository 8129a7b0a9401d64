#!/bin/bash
# The sea-ice example at a finer grid (default 100 x 100 cells, 10 km), three
# 2-hour steps, once per Newton-Krylov globalisation (line search, trust
# region, pseudo-transient continuation, and line search after 5 Picard passes),
# then one picture of the first step's residual histories against wall time,
# with Picard run towards the Newton tolerance (300 passes) beside them.
# Invented scenario (problems/sea_ice/cyclone_basin.hpp): a solver demonstration.
#
#   bash examples/sea_ice/compare_globalizations.sh build/examples/sea_ice [output folder] [cells per side]
set -euo pipefail
program=$1
out=${2:-sea_ice_globalizations}
cells=${3:-100}
mkdir -p "$out"
run() {  # name, extra options...
  local name=$1
  shift
  "$program" --cells_per_side="$cells" --days=0.25 --output="$out/$name" "$@" | tee "$out/$name.txt"
}
run line_search --globalization=line_search --convergence_passes=300
run trust_region --globalization=trust_region --convergence_passes=1
run pseudo_transient --globalization=pseudo_transient --convergence_passes=1
run picard_start --globalization=line_search --picard_start_passes=5 --convergence_passes=1
if command -v gnuplot > /dev/null; then
  (
    cd "$out"
    gnuplot <<PLOT
set datafile separator ','
set terminal pngcairo size 900,600 enhanced font 'Sans,11'
set output 'sea_ice_globalizations.png'
set title 'First 2-hour step at ${cells} x ${cells} cells (invented scenario): residual against wall time'
set logscale y
set format y '10^{%L}'
set grid
set xlabel 'wall time (s)'
set ylabel '|R| / |R(u_0)|'
set key top right
plot 'line_search/first_step_newton.csv' using 1:3 skip 1 with lines lw 2 title 'Newton-Krylov, line search', \
     'trust_region/first_step_newton.csv' using 1:3 skip 1 with lines lw 2 title 'Newton-Krylov, trust region', \
     'pseudo_transient/first_step_newton.csv' using 1:3 skip 1 with lines lw 2 title 'Newton-Krylov, pseudo-transient', \
     'line_search/first_step_picard.csv' using 1:3 skip 1 with lines lw 2 dt 2 title 'Picard (frozen viscosities, sparse LU)'
PLOT
  )
  echo "Wrote $out/sea_ice_globalizations.png"
fi
