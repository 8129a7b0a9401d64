// Pseudo-transient continuation for the nozzle: march
//   V_i (U_i − U_i^n)/Δt_i + R_i(U) = 0
// with one Newton–GMRES step per pseudo-time step (C.T. Kelley & D.E. Keyes,
// "Convergence analysis of pseudo-transient continuation", SIAM J. Numer.
// Anal. 35 (1998) 508–523) and local steps Δt_i = CFL dx/(|u| + c)_i; the CFL
// number grows by switched evolution relaxation, CFL_{n+1} = CFL_n ‖R_n‖/‖R_{n+1}‖
// (W.A. Mulder & B. van Leer, J. Comput. Phys. 59 (1985) 232–246; both
// formulas from memory, shared references §9), capped at cfl_maximum, so the
// iteration becomes Newton's method near the steady state.
// Written on the user side with nkit's solver taking one Newton step per
// pseudo-time step; to be replaced by nkit's built-in pseudo-transient
// globalisation once it is available.
#ifndef NKIT_EXAMPLES_NOZZLE_SOLVE_HPP
#define NKIT_EXAMPLES_NOZZLE_SOLVE_HPP

#include <Eigen/OrderingMethods>
#include <Eigen/SparseLU>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <nkit/nkit.hpp>
#include <vector>

#include "common/factorization_preconditioner.hpp"
#include "nozzle/nozzle.hpp"

namespace nkit_examples {

/// The pseudo-time residual G(U) = diag(shift)(U − U^n) + R(U) and its Jacobian.
class pseudo_time_nozzle {
 public:
  explicit pseudo_time_nozzle(const quasi_one_dimensional_nozzle& problem)
      : m_problem(&problem), m_previous(problem.unknowns()), m_shift(problem.unknowns()) {}

  /// Freezes U^n and the local V_i/Δt_i for the next pseudo-time step.
  void begin_step(const Eigen::VectorXd& u, double cfl) {
    m_previous = u;
    for (int i = 0; i < m_problem->cells(); ++i) {
      const double value = m_problem->volume(i) * m_problem->wave_speed(u, i) / (cfl * m_problem->spacing());
      for (int k = 0; k < 3; ++k) m_shift(3 * i + k) = value;
    }
  }
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    (*m_problem)(u, r);
    r.array() += m_shift.array() * (u - m_previous).array();
  }
  template <class SparseMatrix>
  void assemble_jacobian(const Eigen::VectorXd& u, SparseMatrix& jacobian) const {
    m_problem->assemble_jacobian(u, jacobian);
    for (Eigen::Index k = 0; k < u.size(); ++k) jacobian.coeffRef(k, k) += m_shift(k);
  }

 private:
  const quasi_one_dimensional_nozzle* m_problem;
  Eigen::VectorXd m_previous, m_shift;
};

struct pseudo_transient_settings {
  double initial_cfl = 50.0;
  double cfl_maximum = 1e8;
  double relative_tolerance = 1e-10;  ///< stop when ‖R(U)‖₂ <= this · ‖R(U0)‖₂
  int max_pseudo_steps = 300;
};

struct pseudo_transient_record {
  int step;
  double cfl, residual_norm, relative_residual_norm;
  int linear_iterations;
  long long residual_evaluations;
};

struct pseudo_transient_report {
  bool converged = false;
  int pseudo_steps = 0, rejected_steps = 0;
  long long linear_iterations = 0, residual_evaluations = 0, preconditioner_setups = 0;
  double initial_residual_norm = 0.0, final_residual_norm = 0.0, seconds = 0.0;
  std::vector<pseudo_transient_record> history;
};

inline pseudo_transient_report solve_nozzle(const quasi_one_dimensional_nozzle& problem, Eigen::VectorXd& u,
                                            const pseudo_transient_settings& settings = {}) {
  const auto start = std::chrono::steady_clock::now();
  using lu = Eigen::SparseLU<Eigen::SparseMatrix<double, Eigen::ColMajor, int>, Eigen::COLAMDOrdering<int>>;
  nkit::newton_settings one_step;
  // One Newton step per pseudo-time step, taken through the caller-driven
  // loop (begin/advance) so the step is kept even when ‖G‖ grew, as
  // pseudo-transient continuation requires.
  one_step.max_newton_steps = 2;
  one_step.relative_tolerance = 1e-300;  // never "converged" inside a pseudo-time step
  one_step.absolute_tolerance = 0.0;
  one_step.globalization = nkit::globalization_strategy::full_step;  // backtracks only from non-finite states
  one_step.forcing.kind = nkit::forcing_term_kind::constant;
  one_step.forcing.constant_value = 1e-3;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, factorization_preconditioner<lu>> solver(one_step);
  pseudo_time_nozzle pseudo(problem);

  pseudo_transient_report report;
  Eigen::VectorXd r(u.size()), previous(u.size());
  problem(u, r);
  ++report.residual_evaluations;
  double norm = r.norm();
  report.initial_residual_norm = report.final_residual_norm = norm;
  double cfl = settings.initial_cfl, cfl_floor = settings.initial_cfl;
  while (norm > settings.relative_tolerance * report.initial_residual_norm &&
         report.pseudo_steps < settings.max_pseudo_steps) {
    previous = u;
    pseudo.begin_step(u, cfl);
    auto run = solver.begin(pseudo, Eigen::Ref<Eigen::VectorXd>(u));
    const nkit::outcome result = run.advance();
    const nkit::solve_report& step = run.report();
    ++report.pseudo_steps;
    report.linear_iterations += step.linear_iterations;
    report.residual_evaluations += step.residual_evaluations + 9;  // + the colored-FD Jacobian
    report.preconditioner_setups += step.preconditioner_setups;
    problem(u, r);
    ++report.residual_evaluations;
    const double new_norm = r.norm();
    const bool failed = result != nkit::outcome::in_progress && !nkit::is_converged(result);
    if (!std::isfinite(new_norm) || step.newton_steps == 0 || failed) {
      u = previous;  // reject: smaller pseudo-time step
      cfl *= 0.25;
      cfl_floor = std::min(cfl_floor, cfl);
      ++report.rejected_steps;
      continue;
    }
    // SER, but not below the floor: the residual rises while the start-up
    // transient crosses the nozzle, and shrinking the step then only slows it.
    cfl = std::clamp(cfl * norm / new_norm, cfl_floor, settings.cfl_maximum);
    norm = new_norm;
    report.history.push_back({report.pseudo_steps, cfl, norm, norm / report.initial_residual_norm,
                              static_cast<int>(step.linear_iterations), report.residual_evaluations});
  }
  report.final_residual_norm = norm;
  report.converged = norm <= settings.relative_tolerance * report.initial_residual_norm;
  report.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return report;
}

/// Shock position: the face where the Mach number crosses 1 from above in the
/// diverging part (linear interpolation between cell centres); −1 when none.
inline double captured_shock_position(const quasi_one_dimensional_nozzle& problem, const Eigen::VectorXd& u) {
  for (int i = 0; i + 1 < problem.cells(); ++i) {
    if (problem.x(i) < 1.5) continue;
    const double m0 = quasi_one_dimensional_nozzle::mach(problem.cell(u, i));
    const double m1 = quasi_one_dimensional_nozzle::mach(problem.cell(u, i + 1));
    if (m0 >= 1.0 && m1 < 1.0) return problem.x(i) + (m0 - 1.0) / (m0 - m1) * problem.spacing();
  }
  return -1.0;
}

}  // namespace nkit_examples

#endif  // NKIT_EXAMPLES_NOZZLE_SOLVE_HPP
