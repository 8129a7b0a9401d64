#!/usr/bin/env bash
# Installs the Debian packages nkit needs, skipping those already present.
#
#   bash cmake/install_dependencies.sh            compiler, CMake, Eigen, Boost, Catch2, Google Benchmark
#   bash cmake/install_dependencies.sh --flagship the same plus gnuplot, which draws the flagship demo's
#                                                 pictures (cmake/run_flagship_demo.sh)
#   bash cmake/install_dependencies.sh --all      also the optional tools the full test run uses:
#                                                 gnuplot, clang + sanitizer runtime, valgrind,
#                                                 SuiteSparse, Open MPI, hypre, nlohmann-json,
#                                                 gfortran (the Fortran interface), ADOL-C
#                                                 (reverse-mode transposed products)
#
# Runs apt-get non-interactively; uses sudo when not run as root.
set -euo pipefail

required=(g++ make cmake python3 libeigen3-dev libboost-dev catch2 libbenchmark-dev)
optional=(gnuplot-nox clang libclang-rt-14-dev valgrind libsuitesparse-dev openmpi-bin libopenmpi-dev libhypre-dev
          nlohmann-json3-dev gfortran libadolc-dev)

packages=("${required[@]}")
if [[ "${1:-}" == "--all" ]]; then
  packages+=("${optional[@]}")
elif [[ "${1:-}" == "--flagship" ]]; then
  packages+=(gnuplot-nox)
elif [[ -n "${1:-}" ]]; then
  echo "usage: $0 [--flagship | --all]" >&2
  exit 2
fi

missing=()
for package in "${packages[@]}"; do
  if ! dpkg-query -W -f='${Status}' "$package" 2>/dev/null | grep -q "install ok installed"; then
    missing+=("$package")
  fi
done

if ((${#missing[@]} == 0)); then
  echo "nkit: all ${#packages[@]} packages are already installed"
  exit 0
fi

run_as_root=()
if [[ "$(id -u)" -ne 0 ]]; then
  run_as_root=(sudo)
fi
echo "nkit: installing ${missing[*]}"
"${run_as_root[@]}" env DEBIAN_FRONTEND=noninteractive apt-get update -q
"${run_as_root[@]}" env DEBIAN_FRONTEND=noninteractive apt-get install -y -q --no-install-recommends "${missing[@]}"
