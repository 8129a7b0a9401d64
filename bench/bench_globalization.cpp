// Hard cases × globalisation strategies, side by side in one run: residual
// evaluations, Newton steps, linear iterations and time to converge (or the
// outcome when a strategy fails). Feeds the README's "which globalisation
// when" table. Cases (problems/test_sets/hard_problems.hpp, problems/model_problem):
//   cubic_reaction_diffusion  local minimum of ‖R‖ that is not a root (cold start)
//   square_root_reaction      first Newton step leaves the physical range (c < 0)
//   model_problem_large_source  k = 1 + T², q = 1e5: strongly nonlinear conduction
#include <benchmark/benchmark.h>

#include <limits>
#include <nkit/nkit.hpp>

#include "problems/model_problem/model_problem.hpp"
#include "problems/test_sets/hard_problems.hpp"

namespace {

using nkit::globalization_strategy;

void publish(benchmark::State& state, const nkit::solve_report& report) {
  state.counters["converged"] = report.converged() ? 1.0 : 0.0;
  state.counters["newton_steps"] = report.newton_steps;
  state.counters["residual_evaluations"] = static_cast<double>(report.residual_evaluations);
  state.counters["linear_iterations"] = static_cast<double>(report.linear_iterations);
  state.counters["final_relative_residual"] = report.final_residual_norm / report.initial_residual_norm;
  state.SetLabel(std::string(nkit::name(report.reason)));
}

nkit::newton_settings settings_for(globalization_strategy strategy, double pseudo_time_step) {
  nkit::newton_settings settings;
  settings.globalization = strategy;
  settings.newton_step_budget = 300;
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 3000;
  settings.pseudo_transient.initial_step = pseudo_time_step;
  return settings;
}

void cubic_reaction_diffusion(benchmark::State& state, globalization_strategy strategy) {
  const int n = static_cast<int>(state.range(0));
  auto problem = nkit::with_automatic_differentiation(nkit_problems::cubic_reaction_diffusion{n, 0.01});
  nkit::newton_krylov_solver<> solver(settings_for(strategy, 0.1));
  Eigen::VectorXd u(n * n);
  nkit::solve_report report;
  for (auto _ : state) {
    u.setZero();
    report = solver.solve(problem, u);
  }
  publish(state, report);
}

void square_root_reaction(benchmark::State& state, globalization_strategy strategy, bool bounded) {
  const int n = static_cast<int>(state.range(0));
  nkit::newton_settings settings = settings_for(strategy, 1e-3);
  settings.relative_tolerance = 1e-10;
  nkit::newton_krylov_solver<> solver(settings);
  if (bounded) {
    solver.set_bounds(Eigen::VectorXd::Zero(n), Eigen::VectorXd::Constant(n, std::numeric_limits<double>::infinity()));
  }
  Eigen::VectorXd c(n);
  nkit::solve_report report;
  long negative = 0;
  for (auto _ : state) {
    nkit_problems::square_root_reaction problem{n, 30.0};
    c.setOnes();
    report = solver.solve(problem, c);
    negative = problem.negative_evaluations;
  }
  publish(state, report);
  state.counters["evaluations_at_negative_c"] = static_cast<double>(negative);
}

void model_problem_large_source(benchmark::State& state, globalization_strategy strategy) {
  const int n = static_cast<int>(state.range(0));
  nkit_problems::heat_conduction_model_problem problem(n, 1e5);
  nkit::newton_krylov_solver<> solver(settings_for(strategy, 1.0));
  Eigen::VectorXd t(problem.unknowns());
  nkit::solve_report report;
  for (auto _ : state) {
    t.setZero();
    report = solver.solve(problem, t);
  }
  publish(state, report);
}

}  // namespace

#define NKIT_EACH_STRATEGY(function, ...)                                                             \
  BENCHMARK_CAPTURE(function, line_search, globalization_strategy::line_search __VA_ARGS__)           \
      ->Arg(32)                                                                                       \
      ->Arg(64)                                                                                       \
      ->Unit(benchmark::kMillisecond)                                                                 \
      ->Iterations(1);                                                                                \
  BENCHMARK_CAPTURE(function, full_step, globalization_strategy::full_step __VA_ARGS__)               \
      ->Arg(32)                                                                                       \
      ->Arg(64)                                                                                       \
      ->Unit(benchmark::kMillisecond)                                                                 \
      ->Iterations(1);                                                                                \
  BENCHMARK_CAPTURE(function, trust_region, globalization_strategy::trust_region __VA_ARGS__)         \
      ->Arg(32)                                                                                       \
      ->Arg(64)                                                                                       \
      ->Unit(benchmark::kMillisecond)                                                                 \
      ->Iterations(1);                                                                                \
  BENCHMARK_CAPTURE(function, pseudo_transient, globalization_strategy::pseudo_transient __VA_ARGS__) \
      ->Arg(32)                                                                                       \
      ->Arg(64)                                                                                       \
      ->Unit(benchmark::kMillisecond)                                                                 \
      ->Iterations(1)

NKIT_EACH_STRATEGY(cubic_reaction_diffusion);
NKIT_EACH_STRATEGY(model_problem_large_source);
BENCHMARK_CAPTURE(square_root_reaction, line_search_unbounded, globalization_strategy::line_search, false)
    ->Arg(100)
    ->Unit(benchmark::kMillisecond)
    ->Iterations(1);
BENCHMARK_CAPTURE(square_root_reaction, line_search_bounded, globalization_strategy::line_search, true)
    ->Arg(100)
    ->Unit(benchmark::kMillisecond)
    ->Iterations(1);
BENCHMARK_CAPTURE(square_root_reaction, trust_region_bounded, globalization_strategy::trust_region, true)
    ->Arg(100)
    ->Unit(benchmark::kMillisecond)
    ->Iterations(1);
BENCHMARK_CAPTURE(square_root_reaction, pseudo_transient_bounded, globalization_strategy::pseudo_transient, true)
    ->Arg(100)
    ->Unit(benchmark::kMillisecond)
    ->Iterations(1);

BENCHMARK_MAIN();
