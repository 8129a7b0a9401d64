// The solvers bench_fixed_point.cpp compares, on the two example problems:
// the hand-rolled Picard loop, Anderson acceleration of that loop's pass G,
// Newton–Krylov on u − G(u) (the fixed-point adapter), and Newton–Krylov on
// the residual R itself. Every configuration stops on the same criterion, the
// residual of the equations ‖R(u)‖₂ (not the fixed-point residual), so their
// costs compare like for like:
//   baseplate (examples/baseplate, INVENTED data): ‖R‖ <= 1e-8 ‖R(T0)‖;
//   cavity (examples/lid_driven_cavity), continuation 100 → 400 → 1000 in Re:
//   ‖R‖ <= max(1e-11, 1e-3 ‖R(start)‖) at intermediate Re and
//   max(1e-11, 1e-10 ‖R(start)‖) at Re = 1000 (solve_cavity's criterion).
#ifndef NKIT_BENCH_FIXED_POINT_CONFIGURATIONS_HPP
#define NKIT_BENCH_FIXED_POINT_CONFIGURATIONS_HPP

#include <Eigen/OrderingMethods>
#include <Eigen/SparseLU>
#include <algorithm>
#include <chrono>
#include <limits>
#include <memory>
#include <nkit/fixed_point/anderson_solver.hpp>
#include <nkit/fixed_point/fixed_point_residual.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <vector>

#include "problems/baselines/picard_iteration.hpp"
#include "problems/flow/cavity_solve.hpp"
#include "problems/heat/baseplate.hpp"
#include "problems/heat/baseplate_picard_map.hpp"
#include "problems/heat/baseplate_solvers.hpp"

namespace nkit_bench {

/// What one configuration cost.
struct fixed_point_cost {
  bool converged = false;
  long long outer_iterations = 0;  ///< Picard passes, Anderson iterations or Newton steps
  long long map_evaluations = 0;   ///< passes of G (each one factorisation); residual evaluations for Newton on R
  long long linear_iterations = 0;
  long long factorizations = 0;
  double workspace_bytes = 0.0;  ///< nkit's own workspace (0 for the hand-rolled loops)
};

/// Stops a solve once ‖R(state)‖₂ <= target (one residual evaluation per
/// iteration); a monitor of both nkit solvers.
template <class Problem>
class residual_target_monitor {
 public:
  residual_target_monitor(Problem& problem, const Eigen::VectorXd& state, double target)
      : m_problem(&problem), m_state(&state), m_target(target), m_residual(state.size()) {}
  nkit::monitor_decision reached() {
    (*m_problem)(*m_state, m_residual);
    met = m_residual.norm() <= m_target;
    return met ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
  }
  nkit::monitor_decision after_newton_step(const nkit::newton_step_record&) { return reached(); }
  nkit::monitor_decision after_anderson_step(const nkit::anderson_step_record&) { return reached(); }
  bool met = false;

 private:
  Problem* m_problem;
  const Eigen::VectorXd* m_state;
  double m_target;
  Eigen::VectorXd m_residual;
};

// ---- baseplate --------------------------------------------------------------------------

inline double baseplate_target(nkit_problems::baseplate_conduction& problem, const Eigen::VectorXd& start) {
  Eigen::VectorXd r(start.size());
  problem(start, r);
  return 1e-8 * r.norm();
}

inline fixed_point_cost baseplate_by_picard(nkit_problems::baseplate_conduction& problem, Eigen::VectorXd& t) {
  const auto report = nkit_problems::solve_by_picard_iteration(problem, t, 1e-8, 200);
  return {report.converged, report.iterations, report.factorizations, 0, report.factorizations, 0.0};
}

inline fixed_point_cost baseplate_by_anderson(nkit_problems::baseplate_conduction& problem, Eigen::VectorXd& t,
                                              int depth) {
  nkit_problems::baseplate_picard_map map(problem);
  residual_target_monitor<nkit_problems::baseplate_conduction> monitor(problem, t, baseplate_target(problem, t));
  nkit::anderson_settings settings;
  settings.depth = depth;
  settings.relative_tolerance = 1e-15;  // the monitor decides
  settings.iteration_budget = 200;
  nkit::anderson_solver<> solver(settings);
  const auto report = solver.solve(map, t, monitor);
  return {monitor.met, report.iterations,  map.factorizations,
          0,           map.factorizations, static_cast<double>(report.workspace_bytes)};
}

inline fixed_point_cost baseplate_by_newton_on_map(nkit_problems::baseplate_conduction& problem, Eigen::VectorXd& t) {
  nkit_problems::baseplate_picard_map map(problem);
  residual_target_monitor<nkit_problems::baseplate_conduction> monitor(problem, t, baseplate_target(problem, t));
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-15;  // the monitor decides
  nkit::newton_krylov_solver<> solver(settings);
  const auto report = solver.solve(nkit::fixed_point_residual(map), t, monitor);
  return {monitor.met,        report.newton_steps,
          map.factorizations, report.linear_iterations,
          map.factorizations, static_cast<double>(report.workspace_bytes)};
}

/// Newton–GMRES on R with the demo's frozen-conductivity LDLᵀ preconditioner
/// (bench_examples.cpp's configuration).
inline fixed_point_cost baseplate_by_newton_on_residual(nkit_problems::baseplate_conduction& problem,
                                                        Eigen::VectorXd& t) {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-8;
  settings.linear.restart_length = 40;
  settings.linear.maximum_iterations = 2000;
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 100;
  settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 15;
  const auto report = nkit_problems::solve_by_newton_gmres(problem, t, "frozen_ldlt", settings);
  return {report.converged(),       report.newton_steps,          report.residual_evaluations,
          report.linear_iterations, report.preconditioner_setups, static_cast<double>(report.workspace_bytes)};
}

// ---- lid-driven cavity -------------------------------------------------------------------

/// The Picard (Oseen) pass of solve_cavity_by_picard as a map:
/// G(x) = x − M(x)⁻¹ R(x), M the frozen-velocity matrix, factored by SparseLU.
class cavity_oseen_map {
 public:
  explicit cavity_oseen_map(nkit_problems::lid_driven_cavity& cavity) : m_cavity(&cavity) {}
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& g) {
    m_residual.resize(x.size());
    (*m_cavity)(x, m_residual);
    m_cavity->assemble_picard_matrix(x, m_matrix);
    ++factorizations;
    if (!m_factorization.factorize(m_matrix)) {
      g.setConstant(std::numeric_limits<double>::quiet_NaN());
      return;
    }
    g = x - m_factorization.solve(m_residual);
  }
  long long factorizations = 0;

 private:
  using matrix_type = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;
  nkit_problems::lid_driven_cavity* m_cavity;
  matrix_type m_matrix;
  Eigen::VectorXd m_residual;
  nkit_problems::reusing_factorization<Eigen::SparseLU<matrix_type, Eigen::COLAMDOrdering<int>>> m_factorization;
};

/// Runs `stage(cavity, x, target, cost)` over the Re ramp to 1000 with the
/// shared criterion; stops at the first stage that misses it.
template <class Stage>
fixed_point_cost cavity_by_continuation(int intervals, Stage&& stage) {
  nkit_problems::lid_driven_cavity cavity(intervals, 1000.0);
  Eigen::VectorXd x = Eigen::VectorXd::Zero(cavity.unknowns()), r(cavity.unknowns());
  fixed_point_cost cost;
  const std::vector<double> ramp = nkit_problems::reynolds_ramp(1000.0);
  for (const double re : ramp) {
    cavity.set_reynolds(re);
    cavity(x, r);
    const double target = std::max(1e-11, (re == ramp.back() ? 1e-10 : 1e-3) * r.norm());
    if (!stage(cavity, x, target, cost)) return cost;
  }
  cost.converged = true;
  return cost;
}

inline fixed_point_cost cavity_by_picard(int intervals, int iteration_cap) {
  const auto result = nkit_problems::solve_cavity_by_picard(intervals, 1000.0, 1e-10, iteration_cap);
  return {result.converged, result.iterations, result.factorizations, 0, result.factorizations, 0.0};
}

inline fixed_point_cost cavity_by_anderson(int intervals, int depth, int iterations_per_stage) {
  return cavity_by_continuation(intervals, [&](nkit_problems::lid_driven_cavity& cavity, Eigen::VectorXd& x,
                                               double target, fixed_point_cost& cost) {
    cavity_oseen_map map(cavity);
    residual_target_monitor<nkit_problems::lid_driven_cavity> monitor(cavity, x, target);
    nkit::anderson_settings settings;
    settings.depth = depth;
    settings.relative_tolerance = 1e-15;
    settings.iteration_budget = iterations_per_stage;
    nkit::anderson_solver<> solver(settings);
    const auto report = solver.solve(map, x, monitor);
    cost.outer_iterations += report.iterations;
    cost.map_evaluations += map.factorizations;
    cost.factorizations += map.factorizations;
    cost.workspace_bytes = std::max(cost.workspace_bytes, static_cast<double>(report.workspace_bytes));
    return monitor.met;
  });
}

inline fixed_point_cost cavity_by_newton_on_map(int intervals, int steps_per_stage) {
  return cavity_by_continuation(intervals, [&](nkit_problems::lid_driven_cavity& cavity, Eigen::VectorXd& x,
                                               double target, fixed_point_cost& cost) {
    cavity_oseen_map map(cavity);
    residual_target_monitor<nkit_problems::lid_driven_cavity> monitor(cavity, x, target);
    nkit::newton_settings settings;
    settings.relative_tolerance = 1e-15;
    settings.newton_step_budget = steps_per_stage;
    settings.linear.restart_length = 60;
    settings.linear.maximum_iterations = 600;
    nkit::newton_krylov_solver<> solver(settings);
    const auto report = solver.solve(nkit::fixed_point_residual(map), x, monitor);
    cost.outer_iterations += report.newton_steps;
    cost.map_evaluations += map.factorizations;
    cost.linear_iterations += report.linear_iterations;
    cost.factorizations += map.factorizations;
    cost.workspace_bytes = std::max(cost.workspace_bytes, static_cast<double>(report.workspace_bytes));
    return monitor.met;
  });
}

/// Newton–GMRES on R with nkit's sparse_direct preconditioner (solve_cavity).
inline fixed_point_cost cavity_by_newton_on_residual(int intervals) {
  const auto solution = nkit_problems::solve_cavity<nkit::sparse_direct_preconditioner>(intervals, 1000.0);
  fixed_point_cost cost{solution.converged,         solution.newton_steps,          solution.residual_evaluations,
                        solution.linear_iterations, solution.preconditioner_setups, 0.0};
  for (const auto& report : solution.reports) {
    cost.workspace_bytes = std::max(cost.workspace_bytes, static_cast<double>(report.workspace_bytes));
  }
  return cost;
}

}  // namespace nkit_bench

#endif  // NKIT_BENCH_FIXED_POINT_CONFIGURATIONS_HPP
