// Solving the lid-driven cavity with nkit and comparing with Ghia et al.
// (1982). Used by the example program, the test and the benchmark.
//
// Globalisation: natural continuation in the Reynolds number (each solve
// starts from the converged flow at the previous Re), with nkit's
// backtracking line search inside each Newton solve. From rest, Newton
// converges directly at Re = 100; Re = 1000 is reached through a short ramp.
#ifndef NKIT_PROBLEMS_FLOW_CAVITY_SOLVE_HPP
#define NKIT_PROBLEMS_FLOW_CAVITY_SOLVE_HPP

#include <Eigen/OrderingMethods>
#include <Eigen/SparseLU>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <nkit/nkit.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <string>
#include <vector>

#include "problems/baselines/picard_iteration.hpp"
#include "problems/flow/cavity.hpp"
#include "problems/flow/ghia_1982.hpp"

namespace nkit_problems {

/// The Re values visited on the way to `target`: 100, then ×4 steps (common practice: small enough
/// that each Newton solve starts inside its basin).
inline std::vector<double> reynolds_ramp(double target) {
  std::vector<double> ramp;
  double re = std::min(100.0, target);
  while (re < target) {
    ramp.push_back(re);
    re *= 4.0;
  }
  ramp.push_back(target);
  return ramp;
}

struct cavity_solution {
  Eigen::VectorXd state;
  std::vector<double> reynolds;             ///< continuation steps taken
  std::vector<nkit::solve_report> reports;  ///< one per continuation step
  bool converged = false;
  long long newton_steps = 0, linear_iterations = 0, residual_evaluations = 0, preconditioner_setups = 0;
  double seconds = 0.0;
};

inline nkit::newton_settings cavity_newton_settings(double relative_tolerance = 1e-10) {
  nkit::newton_settings settings;
  // ‖R‖ is measured against ‖R(u0)‖ of each continuation step; an absolute
  // floor keeps late steps (which start close) from chasing round-off.
  settings.relative_tolerance = relative_tolerance;
  settings.absolute_tolerance = 1e-11;
  settings.newton_step_budget = 40;
  settings.linear.restart_length = 60;
  settings.linear.maximum_iterations = 600;
  // Factors of an older Jacobian still precondition well: rebuild every other
  // step, or when GMRES needed many iterations.
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 2;
  settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 15;
  return settings;
}

/// Solves at Re = target on n intervals by continuation, with the given
/// preconditioner (default: nkit's sparse_direct_preconditioner, exact sparse
/// LU of the analytic Jacobian from cavity.assemble_jacobian).
template <class Preconditioner = nkit::sparse_direct_preconditioner>
cavity_solution solve_cavity(int intervals, double target_reynolds,
                             const nkit::newton_settings& settings = cavity_newton_settings(),
                             Preconditioner preconditioner = {}, double intermediate_tolerance = 1e-3) {
  lid_driven_cavity cavity(intervals, target_reynolds);
  cavity_solution solution;
  solution.state = Eigen::VectorXd::Zero(cavity.unknowns());
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, Preconditioner> solver(settings, {},
                                                                                      std::move(preconditioner));
  solution.converged = true;
  const std::vector<double> ramp = reynolds_ramp(target_reynolds);
  for (const double re : ramp) {
    cavity.set_reynolds(re);
    // Intermediate Re only supply a starting flow: a loose tolerance is enough.
    nkit::newton_settings stage = settings;
    if (re != ramp.back()) stage.relative_tolerance = std::max(settings.relative_tolerance, intermediate_tolerance);
    solver.configure(stage);
    solver.request_preconditioner_rebuild();
    nkit::solve_report report = solver.solve(cavity, solution.state);
    solution.reynolds.push_back(re);
    solution.newton_steps += report.newton_steps;
    solution.linear_iterations += report.linear_iterations;
    solution.residual_evaluations += report.residual_evaluations;
    solution.preconditioner_setups += report.preconditioner_setups;
    solution.seconds += report.wall_seconds;
    const bool ok = report.converged();
    solution.reports.push_back(std::move(report));
    if (!ok) {
      solution.converged = false;
      break;
    }
  }
  return solution;
}

struct cavity_picard_result {
  Eigen::VectorXd state;
  bool converged = false;
  long long iterations = 0, residual_evaluations = 0, factorizations = 0;
  double seconds = 0.0;
  std::vector<double> relative_residuals;  ///< ‖R‖/‖R(start)‖ after each iteration at the target Re
};

/// The fixed-point (Picard / Oseen) iteration with the same continuation in
/// Re: x ← x − M(x)⁻¹ R(x), M the frozen-velocity matrix, factored by SparseLU
/// every iteration (the shared loop of baselines/picard_iteration.hpp; one
/// symbolic analysis for all Re). Converged like Newton: ‖R‖ <= relative_tolerance ‖R(start)‖
/// at the target Re (1e-3 at intermediate Re), or ‖R‖ <= 1e-11. `maximum_iterations`
/// counts the iterations of all continuation steps together.
inline cavity_picard_result solve_cavity_by_picard(int intervals, double target_reynolds,
                                                   double relative_tolerance = 1e-10, int maximum_iterations = 2000) {
  using matrix_type = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;
  const auto start = std::chrono::steady_clock::now();
  lid_driven_cavity cavity(intervals, target_reynolds);
  cavity_picard_result result;
  result.state = Eigen::VectorXd::Zero(cavity.unknowns());
  picard_iteration<Eigen::SparseLU<matrix_type, Eigen::COLAMDOrdering<int>>> picard;
  const auto assemble = [&](const Eigen::VectorXd& state, matrix_type& matrix) {
    cavity.assemble_picard_matrix(state, matrix);
  };
  const std::vector<double> ramp = reynolds_ramp(target_reynolds);
  result.converged = true;
  for (const double re : ramp) {
    cavity.set_reynolds(re);
    const bool last = re == ramp.back();
    picard_settings stage;
    stage.relative_tolerance = last ? relative_tolerance : 1e-3;
    stage.absolute_tolerance = 1e-11;
    stage.maximum_iterations = maximum_iterations - result.iterations;
    const picard_report report = picard.subtract_correction(cavity, assemble, result.state, stage);
    result.iterations += report.iterations;
    result.residual_evaluations += report.residual_evaluations;
    result.factorizations += report.factorizations;
    if (last) {
      for (const picard_step_record& step : report.history)
        result.relative_residuals.push_back(step.relative_residual_norm);
    }
    if (!report.converged) {
      result.converged = false;
      break;
    }
  }
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return result;
}

/// Linear interpolation of a nodal quantity along a centre line.
template <class Sample>
double interpolate_along(int intervals, double position, Sample&& sample) {
  const double s = position * intervals;
  const int k = std::min(intervals - 1, static_cast<int>(std::floor(s)));
  const double w = s - k;
  return (1.0 - w) * sample(k) + w * sample(k + 1);
}

struct ghia_comparison {
  double max_u_deviation = 0.0, max_v_deviation = 0.0;  ///< lid-velocity units
  double worst_u_position = 0.0, worst_v_position = 0.0;
};

/// Max deviation from Ghia et al. (1982) Tables I and II at their tabulated points.
/// Requires an even number of intervals (so x = 0.5 and y = 0.5 are node lines).
inline ghia_comparison compare_with_ghia(const lid_driven_cavity& cavity, const Eigen::VectorXd& state,
                                         bool reynolds_1000) {
  const int n = cavity.intervals(), half = n / 2;
  // Largest |computed − tabulated| over one table; `sample(k)` is the velocity at node k of the line.
  const auto compare = [&](const auto& table, auto&& sample, double& max_deviation, double& worst_position) {
    for (const auto& point : table) {
      const double computed = interpolate_along(n, point.position, sample);
      const double deviation = std::abs(computed - (reynolds_1000 ? point.re_1000 : point.re_100));
      if (deviation > max_deviation) {
        max_deviation = deviation;
        worst_position = point.position;
      }
    }
  };
  ghia_comparison result;
  compare(
      ghia_1982::u_vertical_centre_line, [&](int j) { return cavity.u(state, half, j); }, result.max_u_deviation,
      result.worst_u_position);
  compare(
      ghia_1982::v_horizontal_centre_line, [&](int i) { return cavity.v(state, i, half); }, result.max_v_deviation,
      result.worst_v_position);
  return result;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_CAVITY_SOLVE_HPP
