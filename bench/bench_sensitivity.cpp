// Side by side in one run: the gradient of one output with respect to N_p
// parameters by adjoint sensitivities, direct sensitivities and central
// finite differences of whole nonlinear solves, for N_p = 1, 10, 100.
// Problem: problems/heat/region_conductivity.hpp (INVENTED scenario: the
// conductivity multipliers of 1, 2 × 5 or 10 × 10 regions of a square,
// output the mean temperature), n × n cells (default 128; the argument of
// each benchmark). Newton–GMRES with ILU(0), forward-mode AD products,
// restart 50, to 1e-10 relative residual; sensitivities to the default
// linear tolerance 1e-10; finite differences with h_j = 1e-4 p_j, each solve
// warm-started from the converged state and stopped at the cold solve's
// residual norm (1e-10 ‖R(0)‖, as an absolute tolerance). Counters per configuration:
//   gradient_seconds    the gradient's wall time after the converged solve
//   work_units          gradient_seconds / median time of one residual evaluation
//   nonlinear_solves    gradient_seconds / the time of the (cold) Newton solve
//   linear_iterations   GMRES iterations spent on the gradient
//   difference_to_adjoint  max_j |g_j − g_j(adjoint)| / max_j |g_j(adjoint)|
//   bench_sensitivity --benchmark_out=sensitivity.json --benchmark_out_format=json
// Timings taken on a shared machine are rough; compare ratios within one run.
#include <benchmark/benchmark.h>

#include <chrono>
#include <cmath>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/sensitivity/adjoint_sensitivity.hpp>
#include <nkit/sensitivity/direct_sensitivity.hpp>

#include "problems/heat/region_conductivity.hpp"

namespace {

enum class method { adjoint, direct, finite_differences };

using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner>;

nkit::newton_settings solve_settings() {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 3000;
  return settings;
}

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

void gradient(benchmark::State& state, method chosen, int region_rows, int region_columns) {
  const int cells = static_cast<int>(state.range(0));
  auto problem = nkit::with_parameter_automatic_differentiation(
      nkit_problems::region_conductivity(cells, region_rows, region_columns));
  const Eigen::Index m = problem.residual().parameter_count(), n = problem.residual().unknowns();
  Eigen::VectorXd p(m);
  for (Eigen::Index j = 0; j < m; ++j) p(j) = 1.0 + 0.5 * std::sin(static_cast<double>(j));  // invented
  const nkit_problems::region_conductivity::mean_temperature output;

  double gradient_seconds = 0.0, solve_seconds = 0.0, median_residual = 0.0, difference = 0.0;
  std::int64_t linear_iterations = 0;
  bool converged = true;
  for (auto _ : state) {
    solver_type solver(solve_settings());
    auto fixed = nkit::at_parameters(problem, p);
    Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
    const nkit::solve_report base = solver.solve(fixed, u);
    converged = base.converged();
    solve_seconds = base.wall_seconds;
    median_residual = base.median_residual_seconds;

    Eigen::VectorXd g(m), reference;
    if (chosen != method::adjoint) {  // sanity reference, not timed
      reference = nkit::adjoint_sensitivities(solver, problem, p, output).gradient;
    }
    const auto start = std::chrono::steady_clock::now();
    if (chosen == method::adjoint) {
      const auto result = nkit::adjoint_sensitivities(solver, problem, p, output);
      g = result.gradient;
      linear_iterations = result.report.linear_iterations;
      converged = converged && result.report.linear_solves_converged;
    } else if (chosen == method::direct) {
      const auto result = nkit::direct_sensitivities(solver, problem, p, output);
      g = result.gradient;
      linear_iterations = result.report.linear_iterations;
      converged = converged && result.report.linear_solves_converged;
    } else {
      linear_iterations = 0;
      // Warm starts begin near the solution: the cold solve's criterion as an absolute tolerance.
      nkit::newton_settings warm = solve_settings();
      warm.relative_tolerance = 0.0;
      warm.absolute_tolerance = 1e-10 * base.initial_residual_norm;
      solver.configure(warm);
      for (Eigen::Index j = 0; j < m; ++j) {
        const double h = 1e-4 * p(j);
        double values[2];
        for (int side = 0; side < 2; ++side) {
          Eigen::VectorXd shifted = p;
          shifted(j) += side == 0 ? h : -h;
          auto at_shifted = nkit::at_parameters(problem, shifted);
          Eigen::VectorXd v = u;
          const nkit::solve_report report = solver.solve(at_shifted, v);
          converged = converged && report.converged();
          linear_iterations += report.linear_iterations;
          values[side] = output(v, shifted);
        }
        g(j) = (values[0] - values[1]) / (2.0 * h);
      }
    }
    gradient_seconds = seconds_since(start);
    if (chosen != method::adjoint) {
      difference = (g - reference).cwiseAbs().maxCoeff() / reference.cwiseAbs().maxCoeff();
    }
  }
  state.counters["parameters"] = static_cast<double>(m);
  state.counters["converged"] = converged ? 1.0 : 0.0;
  state.counters["gradient_seconds"] = gradient_seconds;
  state.counters["work_units"] = median_residual > 0.0 ? gradient_seconds / median_residual : 0.0;
  state.counters["nonlinear_solves"] = solve_seconds > 0.0 ? gradient_seconds / solve_seconds : 0.0;
  state.counters["linear_iterations"] = static_cast<double>(linear_iterations);
  state.counters["difference_to_adjoint"] = difference;
}

void register_all() {
  const std::pair<int, int> layouts[] = {{1, 1}, {2, 5}, {10, 10}};
  const std::pair<method, const char*> methods[] = {
      {method::adjoint, "adjoint"}, {method::direct, "direct"}, {method::finite_differences, "finite_differences"}};
  for (const auto& [rows, columns] : layouts) {
    for (const auto& [chosen, name] : methods) {
      const std::string label = std::string("sensitivity/") + name + "/parameters_" + std::to_string(rows * columns);
      benchmark::RegisterBenchmark(label.c_str(), gradient, chosen, rows, columns)
          ->Arg(128)
          ->Iterations(1)
          ->Unit(benchmark::kSecond);
    }
  }
}

}  // namespace

int main(int argc, char** argv) {
  register_all();
  benchmark::Initialize(&argc, argv);
  if (benchmark::ReportUnrecognizedArguments(argc, argv)) return 1;
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  return 0;
}
