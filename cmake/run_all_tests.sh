#!/usr/bin/env bash
# Sets up a fresh Debian machine and runs every nkit test:
#   1. installs the Debian packages (cmake/install_dependencies.sh --all)
#   2. g++ Release build with warnings as errors, then the whole ctest suite
#   3. clang++ build with AddressSanitizer + UndefinedBehaviorSanitizer and
#      warnings as errors, then the whole ctest suite again
# Build folders: build/ci-gcc and build/ci-clang-sanitize (override with NKIT_BUILD_ROOT).
set -euo pipefail

source_dir=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
build_root=${NKIT_BUILD_ROOT:-$source_dir/build}
jobs=${NKIT_JOBS:-$(nproc)}

bash "$source_dir/cmake/install_dependencies.sh" --all

stage() { printf '\n==== %s ====\n' "$*"; }

stage "g++ Release build (warnings are errors)"
cmake -S "$source_dir" -B "$build_root/ci-gcc" -DCMAKE_BUILD_TYPE=Release -DCMAKE_CXX_COMPILER=g++ \
  -DNKIT_WARNINGS_AS_ERRORS=ON
cmake --build "$build_root/ci-gcc" -j "$jobs"
stage "test suite (g++)"
ctest --test-dir "$build_root/ci-gcc" -j "$jobs" --output-on-failure

stage "clang++ build with AddressSanitizer + UndefinedBehaviorSanitizer (warnings are errors)"
cmake -S "$source_dir" -B "$build_root/ci-clang-sanitize" -DCMAKE_BUILD_TYPE=RelWithDebInfo \
  -DCMAKE_CXX_COMPILER=clang++ -DNKIT_WARNINGS_AS_ERRORS=ON -DNKIT_SANITIZE=address,undefined \
  -DNKIT_BUILD_BENCHMARKS=OFF
cmake --build "$build_root/ci-clang-sanitize" -j "$jobs"
stage "test suite (sanitizers)"
ASAN_OPTIONS=detect_leaks=1:abort_on_error=1 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
  ctest --test-dir "$build_root/ci-clang-sanitize" -j "$jobs" --output-on-failure

stage "all nkit tests passed"
