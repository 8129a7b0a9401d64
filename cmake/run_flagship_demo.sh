#!/usr/bin/env bash
# Sets up a fresh Debian machine, builds nkit's flagship demo in Release and runs it.
# Extra arguments are passed to the demo (try --help).
set -euo pipefail

source_dir=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
build_dir=${NKIT_BUILD_ROOT:-$source_dir/build}/release

bash "$source_dir/cmake/install_dependencies.sh"
cmake -S "$source_dir" -B "$build_dir" -DCMAKE_BUILD_TYPE=Release -DNKIT_BUILD_TESTS=OFF -DNKIT_BUILD_BENCHMARKS=OFF
cmake --build "$build_dir" -j "$(nproc)" --target model_problem_demo
"$build_dir/examples/model_problem_demo" "$@"
