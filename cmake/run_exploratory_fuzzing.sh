#!/usr/bin/env bash
# Exploratory fuzzing of the Newton driver with a random seed, separate from CI (whose fuzz stage is
# deterministic: cmake/run_all_tests.sh). Findings go into the checked-in corpus by hand:
#
#   bash cmake/run_exploratory_fuzzing.sh [seconds, default 3600]
#
# Builds the libFuzzer target (clang++, AddressSanitizer + UndefinedBehaviorSanitizer) in
# build/fuzz, fuzzes on both cores into build/fuzz/corpus (the checked-in tests/fuzz/corpus is only
# read) and leaves any crashing input in build/fuzz/artifacts/. Then, for each crash: reproduce it
# (build/fuzz/tests/fuzz/nkit_fuzz_newton_solve build/fuzz/artifacts/crash-...), fix the cause in
# its own commit with a Catch2 regression test, and copy the input into tests/fuzz/corpus/ so that
# CI replays it from then on. DEVELOPERS.md ("Fuzzing") has the details.
set -euo pipefail
source_dir=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
build_dir=${NKIT_BUILD_ROOT:-$source_dir/build}/fuzz
seconds=${1:-3600}
cmake -S "$source_dir" -B "$build_dir" -DCMAKE_CXX_COMPILER=clang++ -DCMAKE_BUILD_TYPE=RelWithDebInfo \
  -DNKIT_BUILD_FUZZERS=ON -DNKIT_BUILD_BENCHMARKS=OFF -DNKIT_BUILD_EXAMPLES=OFF
cmake --build "$build_dir" --target nkit_fuzz_newton_solve -j "$(nproc)"
mkdir -p "$build_dir/corpus" "$build_dir/artifacts"
"$build_dir/tests/fuzz/nkit_fuzz_newton_solve" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 \
  -jobs="$(nproc)" -workers="$(nproc)" -artifact_prefix="$build_dir/artifacts/" "$build_dir/corpus" \
  "$source_dir/tests/fuzz/corpus"
