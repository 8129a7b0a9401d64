#!/usr/bin/env bash
# Sets up a fresh Debian machine and runs every nkit test:
#   1. installs the Debian packages (cmake/install_dependencies.sh --all)
#   2. g++ build at -O2 with warnings as errors (no benchmarks), then the whole ctest suite
#   3. valgrind memcheck on a subset of the g++ build (cmake/run_valgrind.sh)
#   4. clang++ build (unoptimised) of the library's tests with AddressSanitizer +
#      UndefinedBehaviorSanitizer and warnings as errors (plus the libFuzzer targets and the
#      header-by-header compile checks), then the tests again (they replay the fuzz corpus
#      once); the examples and the packaging tests ran in stage 2
#   5. a deterministic fuzz run: the checked-in corpus, then NKIT_FUZZ_RUNS (default 30000)
#      mutations from the fixed seed NKIT_FUZZ_SEED (default 20261202), so the same commit always
#      runs the same inputs; exploratory fuzzing with random seeds is cmake/run_exploratory_fuzzing.sh
#      (the Newton driver and the C interface alike)
# Build folders: build/ci-gcc and build/ci-clang-sanitize (override with NKIT_BUILD_ROOT).
# Each stage prints its wall time.
set -euo pipefail

source_dir=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
build_root=${NKIT_BUILD_ROOT:-$source_dir/build}
jobs=${NKIT_JOBS:-$(nproc)}

bash "$source_dir/cmake/install_dependencies.sh" --all

stage_start=$SECONDS
stage() {
  printf '\n==== (%d s) %s ====\n' "$((SECONDS - stage_start))" "$*"
  stage_start=$SECONDS
}

stage "g++ build at -O2 (warnings are errors)"
# -O2 rather than CMake's Release -O3: it compiles in 10-35 % less time (measured on
# tests/test_field_split.cpp and tests/test_bad_input.cpp) and nothing here is timed. Both
# builds compile each test program's sources in batches of up to 24 (NKIT_BATCH_TEST_SOURCES):
# a batch instantiates the library's templates once, not once per file. The benchmarks are not
# built here (325 CPU-s even at -O0; DEVELOPERS.md says when to build them). The
# header-by-header checks compile in the clang++ stage, whose front end parses them about a
# fifth faster. -O1 would save only about 7 % (examples/baseplate/main.cpp: 31.8 s against 34.2 s), and
# g++ 12 then reports false "may be used uninitialized" warnings inside Eigen's vector copy. A
# -O3 build must stay warning-free too (DEVELOPERS.md).
release_flags="-O2 -DNDEBUG"
cmake -S "$source_dir" -B "$build_root/ci-gcc" -DCMAKE_BUILD_TYPE=Release -DCMAKE_CXX_COMPILER=g++ \
  -DCMAKE_C_COMPILER=gcc "-DCMAKE_CXX_FLAGS_RELEASE=$release_flags" "-DCMAKE_C_FLAGS_RELEASE=$release_flags" \
  -DNKIT_WARNINGS_AS_ERRORS=ON -DNKIT_BATCH_TEST_SOURCES=ON -DNKIT_BUILD_BENCHMARKS=OFF \
  -DNKIT_BUILD_HEADER_CHECKS=OFF
cmake --build "$build_root/ci-gcc" -j "$jobs"
stage "test suite (g++)"
ctest --test-dir "$build_root/ci-gcc" -j "$jobs" --output-on-failure

stage "valgrind memcheck (subset of the g++ build)"
bash "$source_dir/cmake/run_valgrind.sh" "$build_root/ci-gcc"

stage "clang++ build with AddressSanitizer + UndefinedBehaviorSanitizer (warnings are errors)"
# Unoptimised (-O0) with line tables only: the sanitizer build compiles about 3x faster than at
# -O2 -g and the suite still runs in minutes; stack traces keep file:line. The examples and the
# packaging tests (labelled "packaging": they configure and build a separate project) ran in the
# g++ stage already; the examples' numerical code lives in problems/, which the tests cover here.
# No benchmarks here either. The test cases tagged [slow_unoptimized] (fine grids; minutes each at
# -O0 under the sanitizers) are left out here; they ran in the g++ stage (tests/CMakeLists.txt).
sanitizer_flags="-O0 -gline-tables-only -DNDEBUG"
cmake -S "$source_dir" -B "$build_root/ci-clang-sanitize" -DCMAKE_BUILD_TYPE=RelWithDebInfo \
  "-DCMAKE_CXX_FLAGS_RELWITHDEBINFO=$sanitizer_flags" "-DCMAKE_C_FLAGS_RELWITHDEBINFO=$sanitizer_flags" \
  -DCMAKE_CXX_COMPILER=clang++ -DCMAKE_C_COMPILER=clang -DNKIT_WARNINGS_AS_ERRORS=ON -DNKIT_SANITIZE=address,undefined \
  -DNKIT_BUILD_BENCHMARKS=OFF -DNKIT_BUILD_EXAMPLES=OFF -DNKIT_BUILD_HEADER_CHECKS=ON -DNKIT_BUILD_FUZZERS=ON -DNKIT_BUILD_FORTRAN_INTERFACE=OFF \
  -DNKIT_BATCH_TEST_SOURCES=ON
cmake --build "$build_root/ci-clang-sanitize" -j "$jobs"
stage "test suite (sanitizers)"
ASAN_OPTIONS=detect_leaks=1:abort_on_error=1 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
  ctest --test-dir "$build_root/ci-clang-sanitize" -j "$jobs" --output-on-failure --label-exclude packaging

fuzz_seed=${NKIT_FUZZ_SEED:-20261202}
fuzz_runs=${NKIT_FUZZ_RUNS:-30000}
stage "fuzzing the Newton driver: seed $fuzz_seed, $fuzz_runs runs from the checked-in corpus"
fuzz_corpus=$(mktemp -d)  # new inputs go here; the checked-in corpus is only read
mkdir -p "$build_root/fuzz-artifacts"
"$build_root/ci-clang-sanitize/tests/fuzz/nkit_fuzz_newton_solve" -seed="$fuzz_seed" -runs="$fuzz_runs" \
  -timeout=10 -rss_limit_mb=2048 -print_final_stats=1 -artifact_prefix="$build_root/fuzz-artifacts/" \
  "$fuzz_corpus" "$source_dir/tests/fuzz/corpus"
rm -rf "$fuzz_corpus"

stage "fuzzing the C interface: seed $fuzz_seed, $fuzz_runs runs from the checked-in corpus"
fuzz_corpus=$(mktemp -d)
"$build_root/ci-clang-sanitize/tests/fuzz/nkit_fuzz_c_interface" -seed="$fuzz_seed" -runs="$fuzz_runs" \
  -timeout=10 -rss_limit_mb=2048 -print_final_stats=1 -artifact_prefix="$build_root/fuzz-artifacts/" \
  "$fuzz_corpus" "$source_dir/tests/fuzz/corpus_c_interface"
rm -rf "$fuzz_corpus"

stage "all nkit tests passed"
