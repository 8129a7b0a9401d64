// Solves the reaction–diffusion example with nkit's Newton–GMRES and a
// built-in preconditioner fed by the colored finite-difference Jacobian.
// Used by the example program and tests/test_reaction_diffusion.cpp.
#ifndef NKIT_PROBLEMS_REACTION_DIFFUSION_GRAY_SCOTT_RUNS_HPP
#define NKIT_PROBLEMS_REACTION_DIFFUSION_GRAY_SCOTT_RUNS_HPP

#include <cmath>
#include <nkit/jacobian/sparse_jacobian.hpp>
#include <nkit/nkit.hpp>
#include <nkit/preconditioners/block_jacobi.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>

#include "problems/reaction_diffusion/gray_scott.hpp"

namespace nkit_problems {

struct reaction_run {
  nkit::solve_report report;
  Eigen::VectorXd solution;
  double max_error_u = 0.0, max_error_v = 0.0;  ///< against the manufactured solution at cell centres
};

inline nkit::newton_settings reaction_newton_settings() {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 3000;
  return settings;
}

template <class Preconditioner>
reaction_run run_reaction_diffusion(int cells, Preconditioner preconditioner,
                                    const nkit::newton_settings& settings = reaction_newton_settings()) {
  const gray_scott_steady problem(cells);
  reaction_run run;
  run.solution = problem.initial_guess();
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, Preconditioner> solver(settings, {},
                                                                                      std::move(preconditioner));
  run.report = solver.solve(problem, run.solution);
  const Eigen::VectorXd error = run.solution - problem.exact();
  for (Eigen::Index c = 0; c < error.size() / 2; ++c) {
    run.max_error_u = std::max(run.max_error_u, std::abs(error(2 * c)));
    run.max_error_v = std::max(run.max_error_v, std::abs(error(2 * c + 1)));
  }
  return run;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_REACTION_DIFFUSION_GRAY_SCOTT_RUNS_HPP
