// Solves the verification cases of nonlinear_conduction.hpp with nkit's
// Newton–GMRES and measures the discretisation error against the exact
// solutions. Used by the example program and by tests/test_conduction_verification.cpp.
#ifndef NKIT_PROBLEMS_HEAT_CONDUCTION_VERIFICATION_RUNS_HPP
#define NKIT_PROBLEMS_HEAT_CONDUCTION_VERIFICATION_RUNS_HPP

#include <algorithm>
#include <cmath>
#include <nkit/nkit.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>

#include "problems/heat/nonlinear_conduction.hpp"

namespace nkit_problems {

struct verification_run {
  int cells = 0;
  double cell_size = 0.0;
  double max_error = 0.0;   ///< max over cell centres of |T_h − T_exact|
  double rms_error = 0.0;   ///< root mean square over cell centres
  double flux_error = 0.0;  ///< 1D only: |q_h − q_exact| / |q_exact| at the east wall
  nkit::solve_report report;
  Eigen::VectorXd temperature, exact;
};

/// Newton–GMRES with the problem's analytic Jacobian (assemble_jacobian)
/// factored by nkit's sparse_direct_preconditioner as the preconditioner; converges to ‖R‖ <= 1e-12 ‖R0‖ so the
/// algebraic error is far below the discretisation error being measured.
inline nkit::solve_report solve_conduction(const nonlinear_conduction& problem, Eigen::VectorXd& t,
                                           double relative_tolerance = 1e-12) {
  nkit::newton_settings settings;
  settings.relative_tolerance = relative_tolerance;
  settings.linear.restart_length = 30;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> solver(settings);
  return solver.solve(problem, t);
}

inline verification_run run_kirchhoff_wall(int cells, const kirchhoff_plane_wall& wall) {
  nonlinear_conduction problem(cells, 1, wall.setup());
  verification_run run;
  run.cells = cells;
  run.cell_size = wall.length / cells;
  run.temperature = Eigen::VectorXd::Constant(problem.unknowns(), 0.5 * (wall.t1 + wall.t2));
  run.report = solve_conduction(problem, run.temperature);
  run.exact.resize(problem.unknowns());
  for (int i = 0; i < cells; ++i) run.exact(i) = wall.temperature(problem.x(i));
  const Eigen::VectorXd error = run.temperature - run.exact;
  run.max_error = error.cwiseAbs().maxCoeff();
  run.rms_error = std::sqrt(error.squaredNorm() / cells);
  run.flux_error = std::abs(problem.east_heat_flux(run.temperature) - wall.heat_flux()) / std::abs(wall.heat_flux());
  return run;
}

inline verification_run run_manufactured(int cells, const manufactured_conduction& solution) {
  nonlinear_conduction problem(cells, cells, solution.setup());
  verification_run run;
  run.cells = cells;
  run.cell_size = 1.0 / cells;
  run.temperature = Eigen::VectorXd::Ones(problem.unknowns());
  run.report = solve_conduction(problem, run.temperature);
  run.exact.resize(problem.unknowns());
  for (int j = 0; j < cells; ++j) {
    for (int i = 0; i < cells; ++i) run.exact(problem.index(i, j)) = solution.temperature(problem.x(i), problem.y(j));
  }
  const Eigen::VectorXd error = run.temperature - run.exact;
  run.max_error = error.cwiseAbs().maxCoeff();
  run.rms_error = std::sqrt(error.squaredNorm() / static_cast<double>(problem.unknowns()));
  return run;
}

/// p = ln(e_coarse / e_fine) / ln(h_coarse / h_fine) (observed order of
/// accuracy: K. Salari & P. Knupp, SAND2000-1444, 2000).
inline double observed_order(double coarse_error, double fine_error, double refinement_ratio) {
  return std::log(coarse_error / fine_error) / std::log(refinement_ratio);
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_HEAT_CONDUCTION_VERIFICATION_RUNS_HPP
