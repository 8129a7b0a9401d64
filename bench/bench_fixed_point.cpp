// Side by side in one run: what to do with an existing fixed-point (Picard)
// loop — keep it, accelerate it (Anderson, m = 5 and 20), hand its pass G to
// Newton–Krylov (u − G(u) = 0, matrix-free, one G per J·v), or write the
// residual R and use Newton–Krylov on R with a preconditioner. Problems and
// criteria: bench/fixed_point_configurations.hpp (baseplate at 256² and 512²
// cells, INVENTED data; lid-driven cavity at Re = 1000 on 64² and 128²
// intervals). Counters per configuration:
//   converged            1 when the shared criterion on ‖R‖ was met
//   outer_iterations     Picard passes, Anderson iterations or Newton steps
//   evaluations          passes of G (= factorisations), or residual
//                        evaluations for Newton on R
//   linear_iterations    GMRES iterations (Newton only)
//   factorizations       sparse factorisations (LDLᵀ or LU)
//   work_units           wall time / median time of one evaluation of R
//   peak_memory_mib      growth of the peak resident set during the solve
//   workspace_mib        nkit's own workspace (report.workspace_bytes)
// The Picard loop on the cavity is capped at cavity_picard_cap passes.
//   bench_fixed_point --benchmark_out=fixed_point.json --benchmark_out_format=json
// Timings taken on a shared machine are rough; compare ratios within one run.
#include <benchmark/benchmark.h>

#include <algorithm>
#include <chrono>
#include <vector>

#include "fixed_point_configurations.hpp"
#include "problems/baselines/process_resources.hpp"

namespace {

constexpr int cavity_picard_cap = 60;
constexpr int anderson_iterations_per_stage = 300;
constexpr int newton_steps_per_stage = 40;

/// Median wall time of one evaluation of R at `state` (9 evaluations).
template <class Problem>
double median_residual_seconds(Problem& problem, const Eigen::VectorXd& state) {
  Eigen::VectorXd r(state.size());
  std::vector<double> samples;
  for (int k = 0; k < 9; ++k) {
    const auto start = std::chrono::steady_clock::now();
    problem(state, r);
    samples.push_back(std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count());
  }
  std::nth_element(samples.begin(), samples.begin() + 4, samples.end());
  return samples[4];
}

template <class Run>
void measure(benchmark::State& state, double residual_seconds, Run&& run) {
  nkit_bench::fixed_point_cost cost;
  double seconds = 0.0, peak = 0.0;
  for (auto _ : state) {
    nkit_problems::reset_peak_memory();
    const double before = nkit_problems::resident_memory_bytes();
    const auto start = std::chrono::steady_clock::now();
    cost = run();
    seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    peak = nkit_problems::peak_memory_bytes() - before;
  }
  state.counters["converged"] = cost.converged ? 1.0 : 0.0;
  state.counters["outer_iterations"] = static_cast<double>(cost.outer_iterations);
  state.counters["evaluations"] = static_cast<double>(cost.map_evaluations);
  state.counters["linear_iterations"] = static_cast<double>(cost.linear_iterations);
  state.counters["factorizations"] = static_cast<double>(cost.factorizations);
  state.counters["work_units"] = residual_seconds > 0.0 ? seconds / residual_seconds : 0.0;
  state.counters["peak_memory_mib"] = nkit_problems::mebibytes(peak);
  state.counters["workspace_mib"] = nkit_problems::mebibytes(cost.workspace_bytes);
}

enum class method { picard, anderson_5, anderson_20, newton_on_map, newton_on_residual };

void baseplate(benchmark::State& state, method chosen) {
  const int cells = static_cast<int>(state.range(0));
  nkit_problems::baseplate_conduction problem(cells, cells);
  const Eigen::VectorXd start = Eigen::VectorXd::Constant(problem.unknowns(), problem.design().coolant_temperature);
  measure(state, median_residual_seconds(problem, start), [&] {
    Eigen::VectorXd t = start;
    switch (chosen) {
      case method::picard:
        return nkit_bench::baseplate_by_picard(problem, t);
      case method::anderson_5:
        return nkit_bench::baseplate_by_anderson(problem, t, 5);
      case method::anderson_20:
        return nkit_bench::baseplate_by_anderson(problem, t, 20);
      case method::newton_on_map:
        return nkit_bench::baseplate_by_newton_on_map(problem, t);
      case method::newton_on_residual:
        break;
    }
    return nkit_bench::baseplate_by_newton_on_residual(problem, t);
  });
}

void cavity(benchmark::State& state, method chosen) {
  const int intervals = static_cast<int>(state.range(0));
  nkit_problems::lid_driven_cavity problem(intervals, 1000.0);
  const Eigen::VectorXd start = Eigen::VectorXd::Zero(problem.unknowns());
  measure(state, median_residual_seconds(problem, start), [&] {
    switch (chosen) {
      case method::picard:
        return nkit_bench::cavity_by_picard(intervals, cavity_picard_cap);
      case method::anderson_5:
        return nkit_bench::cavity_by_anderson(intervals, 5, anderson_iterations_per_stage);
      case method::anderson_20:
        return nkit_bench::cavity_by_anderson(intervals, 20, anderson_iterations_per_stage);
      case method::newton_on_map:
        return nkit_bench::cavity_by_newton_on_map(intervals, newton_steps_per_stage);
      case method::newton_on_residual:
        break;
    }
    return nkit_bench::cavity_by_newton_on_residual(intervals);
  });
}

}  // namespace

#define NKIT_FIXED_POINT_CASE(problem, chosen, first, second) \
  BENCHMARK_CAPTURE(problem, chosen, method::chosen)->Arg(first)->Arg(second)->Unit(benchmark::kSecond)->Iterations(1)

NKIT_FIXED_POINT_CASE(baseplate, picard, 256, 512);
NKIT_FIXED_POINT_CASE(baseplate, anderson_5, 256, 512);
NKIT_FIXED_POINT_CASE(baseplate, anderson_20, 256, 512);
NKIT_FIXED_POINT_CASE(baseplate, newton_on_map, 256, 512);
NKIT_FIXED_POINT_CASE(baseplate, newton_on_residual, 256, 512);
NKIT_FIXED_POINT_CASE(cavity, picard, 64, 128);
NKIT_FIXED_POINT_CASE(cavity, anderson_5, 64, 128);
NKIT_FIXED_POINT_CASE(cavity, anderson_20, 64, 128);
NKIT_FIXED_POINT_CASE(cavity, newton_on_map, 64, 128);
NKIT_FIXED_POINT_CASE(cavity, newton_on_residual, 64, 128);

BENCHMARK_MAIN();
