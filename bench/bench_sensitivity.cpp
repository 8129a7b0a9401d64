// Side by side in one run: the gradient of one output with respect to N_p
// parameters by adjoint sensitivities, direct sensitivities and central
// finite differences of whole nonlinear solves, for N_p = 1, 10, 100.
// Problem: problems/heat/region_conductivity.hpp (INVENTED scenario: the
// conductivity multipliers of 1, 2 × 5 or 10 × 10 regions of a square,
// output the mean temperature), n × n cells (the argument of each
// benchmark: 128 or 512). Newton–GMRES, forward-mode AD products, restart 50,
// to 1e-10 relative residual, with one of two preconditioners (the last part
// of each name), which the sensitivities reuse transposed:
//   ilu_zero       ILU(0) rebuilt every Newton step (128² only: at 512² GMRES(50)
//                  needs about 2 600 iterations per solve and a Newton solve ~140 s);
//   sparse_direct  Eigen's SparseLU of the Jacobian, lagged (rebuilt only when
//                  GMRES needs more than 10 iterations) and kept from one solve
//                  to the next, so the warm difference solves start with the
//                  factor of the converged state (the cheapest case for them).
// Sensitivities to the default linear tolerance 1e-10; finite differences with
// h_j = 1e-4 p_j, each solve warm-started from the converged state and
// stopped at the cold solve's residual norm (1e-10 ‖R(0)‖, as an absolute
// tolerance). Counters per configuration:
//   gradient_seconds    the gradient's wall time after the converged solve
//   work_units          gradient_seconds / median time of one residual evaluation
//   nonlinear_solves    gradient_seconds / the time of the (cold) Newton solve
//   gradient_cpu_seconds, newton_solve_cpu_seconds, nonlinear_solves_cpu   the same in process CPU time
//                       (robust when other work shares the machine: wall times then stretch)
//   linear_iterations   GMRES iterations spent on the gradient
//   preconditioner_setups   factorizations in the difference solves
//   difference_to_adjoint  max_j |g_j − g_j(adjoint)| / max_j |g_j(adjoint)|
//   bench_sensitivity --benchmark_out=sensitivity.json --benchmark_out_format=json
//   (--benchmark_filter=/512 for the large grid only)
// Timings taken on a shared machine are rough; compare ratios within one run.
#include <benchmark/benchmark.h>

#include <chrono>
#include <cmath>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/sensitivity/adjoint_sensitivity.hpp>
#include <nkit/sensitivity/direct_sensitivity.hpp>

#include "problems/baselines/process_resources.hpp"
#include "problems/heat/region_conductivity.hpp"

namespace {

enum class method { adjoint, direct, finite_differences };

/// The preconditioner of the Newton solve, reused (transposed) by the sensitivities.
enum class preconditioner_choice { ilu_zero, sparse_direct };

nkit::newton_settings solve_settings(preconditioner_choice preconditioner) {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 3000;
  if (preconditioner == preconditioner_choice::sparse_direct) {
    // An exact LU of R_u, lagged: rebuilt only when GMRES needs more than 10
    // iterations, and carried over from one solve to the next (the warm
    // difference solves start with the factor of the converged state).
    settings.preconditioner_rebuild.rebuild_every_newton_steps = 1000;
    settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 10;
    settings.preconditioner_rebuild.rebuild_at_solve_start = false;
  }
  return settings;
}

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

template <class Preconditioner>
void gradient(benchmark::State& state, method chosen, preconditioner_choice preconditioner, int region_rows,
              int region_columns) {
  using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, Preconditioner>;
  const int cells = static_cast<int>(state.range(0));
  auto problem = nkit::with_parameter_automatic_differentiation(
      nkit_problems::region_conductivity(cells, region_rows, region_columns));
  const Eigen::Index m = problem.residual().parameter_count(), n = problem.residual().unknowns();
  Eigen::VectorXd p(m);
  for (Eigen::Index j = 0; j < m; ++j) p(j) = 1.0 + 0.5 * std::sin(static_cast<double>(j));  // invented
  const nkit_problems::region_conductivity::mean_temperature output;

  double gradient_seconds = 0.0, solve_seconds = 0.0, median_residual = 0.0, difference = 0.0;
  double gradient_cpu_seconds = 0.0, solve_cpu_seconds = 0.0;
  std::int64_t linear_iterations = 0, newton_steps = 0, setups = 0;
  bool converged = true;
  for (auto _ : state) {
    solver_type solver(solve_settings(preconditioner));
    auto fixed = nkit::at_parameters(problem, p);
    Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
    const double solve_cpu_start = nkit_problems::process_cpu_seconds();
    const nkit::solve_report base = solver.solve(fixed, u);
    solve_cpu_seconds = nkit_problems::process_cpu_seconds() - solve_cpu_start;
    converged = base.converged();
    solve_seconds = base.wall_seconds;
    median_residual = base.median_residual_seconds;
    newton_steps = base.newton_steps;
    setups = 0;

    Eigen::VectorXd g(m), reference;
    if (chosen != method::adjoint) {  // sanity reference, not timed
      reference = nkit::adjoint_sensitivities(solver, problem, p, output).gradient;
    }
    const auto start = std::chrono::steady_clock::now();
    const double cpu_start = nkit_problems::process_cpu_seconds();
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
      nkit::newton_settings warm = solve_settings(preconditioner);
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
          setups += report.preconditioner_setups;
          values[side] = output(v, shifted);
        }
        g(j) = (values[0] - values[1]) / (2.0 * h);
      }
    }
    gradient_seconds = seconds_since(start);
    gradient_cpu_seconds = nkit_problems::process_cpu_seconds() - cpu_start;
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
  state.counters["newton_solve_seconds"] = solve_seconds;
  state.counters["gradient_cpu_seconds"] = gradient_cpu_seconds;
  state.counters["newton_solve_cpu_seconds"] = solve_cpu_seconds;
  state.counters["nonlinear_solves_cpu"] = solve_cpu_seconds > 0.0 ? gradient_cpu_seconds / solve_cpu_seconds : 0.0;
  state.counters["median_residual_seconds"] = median_residual;
  state.counters["newton_steps"] = static_cast<double>(newton_steps);
  state.counters["preconditioner_setups"] = static_cast<double>(setups);
}

void register_all() {
  const std::pair<int, int> layouts[] = {{1, 1}, {2, 5}, {10, 10}};
  const std::pair<method, const char*> methods[] = {
      {method::adjoint, "adjoint"}, {method::direct, "direct"}, {method::finite_differences, "finite_differences"}};
  for (const auto& [rows, columns] : layouts) {
    for (const auto& [chosen, name] : methods) {
      const std::string label = std::string("sensitivity/") + name + "/parameters_" + std::to_string(rows * columns);
      // ILU(0) at 128^2 (GMRES(50) with ILU(0) needs about 2 600 iterations per solve at 512^2: a Newton
      // solve took 140 s there); the lagged sparse LU at 128^2 and 512^2.
      benchmark::RegisterBenchmark((label + "/ilu_zero").c_str(), gradient<nkit::ilu_zero_preconditioner>, chosen,
                                   preconditioner_choice::ilu_zero, rows, columns)
          ->Arg(128)
          ->Iterations(1)
          ->Unit(benchmark::kSecond);
      benchmark::RegisterBenchmark((label + "/sparse_direct").c_str(), gradient<nkit::sparse_direct_preconditioner>,
                                   chosen, preconditioner_choice::sparse_direct, rows, columns)
          ->Arg(128)
          ->Arg(512)
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
