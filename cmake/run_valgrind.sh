#!/usr/bin/env bash
# Runs a subset of nkit's tests under valgrind memcheck and fails on any
# memory error or leak (definite, indirect or possible).
#
#   bash cmake/run_valgrind.sh <build folder>
#
# The build folder must hold a build without sanitizers (the g++ Release
# build of cmake/run_all_tests.sh); valgrind and AddressSanitizer do not mix.
# The subset: the bad-input catalogue, budgets (minus the wall-clock case,
# whose timing slack is not meant for an instrumented run), determinism, the
# Newton-driver and GMRES tests, and the robustness-score program. Override the
# Catch2 test spec with NKIT_VALGRIND_TESTS.
set -euo pipefail

build=${1:?usage: $0 <build folder>}
tests="$build/tests/nkit_tests"
score="$build/tests/nkit_robustness_score"
spec=${NKIT_VALGRIND_TESTS:-"[input],[budget]~[timing],[determinism],[newton],[gmres]"}

if ! command -v valgrind >/dev/null; then
  echo "run_valgrind.sh: valgrind is not installed (bash cmake/install_dependencies.sh --all)" >&2
  exit 2
fi

memcheck=(valgrind --tool=memcheck --error-exitcode=99 --leak-check=full --show-leak-kinds=definite,indirect,possible
          --errors-for-leak-kinds=definite,indirect,possible --quiet)

echo "valgrind memcheck: nkit_tests \"$spec\""
"${memcheck[@]}" "$tests" "$spec"
echo "valgrind memcheck: nkit_robustness_score --check"
"${memcheck[@]}" "$score" --check >/dev/null
echo "valgrind memcheck: clean"
