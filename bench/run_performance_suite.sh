#!/bin/sh
# The performance suite in one command: configures a Release build with the
# benchmarks (and OpenMP, so that 1 and 2 threads are compared), builds
# bench_model_problem, runs it, and turns its JSON into the README's tables
# and plot.
#
#   bench/run_performance_suite.sh [build-directory] [bench_model_problem options...]
#
# Default build directory: build/performance. Results:
#   <build>/performance_suite.json       Google Benchmark JSON (every figure)
#   <build>/performance/performance_table.md, performance_time.png
# Example, a quick look at small sizes with a short cap:
#   bench/run_performance_suite.sh build/performance --nkit_sizes=128,256 --nkit_time_cap=120
# The full run (n = 128 ... 2048, 600 s cap per solve) takes a few hours on
# one core; the machine should be otherwise idle.
set -eu
source_directory=$(cd "$(dirname "$0")/.." && pwd)
build_directory=${1:-build/performance}
[ $# -gt 0 ] && shift
cmake -S "$source_directory" -B "$build_directory" -DCMAKE_BUILD_TYPE=Release -DNKIT_BUILD_BENCHMARKS=ON \
  -DNKIT_BUILD_TESTS=OFF -DNKIT_BUILD_EXAMPLES=OFF -DNKIT_USE_OPENMP=ON
cmake --build "$build_directory" --target bench_model_problem -j2
"$build_directory/bench/bench_model_problem" --benchmark_out="$build_directory/performance_suite.json" \
  --benchmark_out_format=json "$@"
python3 "$source_directory/bench/make_performance_table.py" "$build_directory/performance_suite.json" \
  --output-directory "$build_directory/performance"
