#!/usr/bin/env bash
# Sets up a fresh Debian machine, builds nkit's flagship demo in Release and runs it:
# steady nonlinear conduction in a power-module baseplate (invented data), Newton-GMRES
# against the Picard loop it replaces (examples/baseplate). It names the folder with
# its PNG/VTK/CSV files on exit. Extra arguments are passed to the demo (try --help).
# Second part: power cycling of the same module with nkit's implicit time stepper
# (examples/baseplate_transient, invented heat capacities); NKIT_SKIP_TRANSIENT=1 skips it.
set -euo pipefail

source_dir=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
build_dir=${NKIT_BUILD_ROOT:-$source_dir/build}/release

bash "$source_dir/cmake/install_dependencies.sh" --flagship   # gnuplot draws the pictures
cmake -S "$source_dir" -B "$build_dir" -DCMAKE_BUILD_TYPE=Release -DNKIT_BUILD_TESTS=OFF -DNKIT_BUILD_BENCHMARKS=OFF
cmake --build "$build_dir" -j "$(nproc)" --target baseplate_demo baseplate_power_cycling
"$build_dir/examples/baseplate_demo" "$@"
if [ "${NKIT_SKIP_TRANSIENT:-0}" != "1" ]; then
  echo
  "$build_dir/examples/baseplate_power_cycling" --output=power_cycling_output
fi
