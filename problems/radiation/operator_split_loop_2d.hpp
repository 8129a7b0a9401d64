// The operator-split loop of operator_split_loop.hpp on the 2-D layered target
// (gray_radiation_diffusion_2d.hpp): per time step Δt,
//   1. the radiation equation with the material temperature frozen,
//        E_(n+1) − E_n = Δt [ ∇·(D_r(T*) ∇E_(n+1)) + σ_a(T*)(T*⁴ − E_(n+1)) ]
//   2. the material equation with the radiation frozen at E_(n+1),
//        T_(n+1) − T_n = Δt [ ∇·(D_t(T) ∇T) − σ_a(T)(T⁴ − E_(n+1)) ],  T = T_(n+1)
// each a backward-Euler step of one field solved by nkit's Newton–Krylov
// driver with the preconditioner given (sparse LU by default; the benchmark
// gives BoomerAMG) on the colored-difference Jacobian of that field.
//
// Two ways to run a step (operator_split_settings::maximum_passes):
//   * one pass (the default, the loop coupled codes commonly run): T* = T_n,
//     the coupling lagged; first-order splitting error on top of backward
//     Euler's own (D.A. Knoll, W.J. Rider & G.L. Olson, J. Quant. Spectrosc.
//     Radiat. Transfer 63 (1999) 15–29, from memory);
//   * passes repeated (T* the temperature of the previous pass, a nonlinear
//     block Gauss–Seidel iteration) until max|u_(k+1) − u_k| <=
//     pass_tolerance · max|u_(k+1)|: its fixed point is the coupled
//     backward-Euler step, so the splitting error goes and only backward
//     Euler's first-order error stays.
#ifndef NKIT_PROBLEMS_RADIATION_OPERATOR_SPLIT_LOOP_2D_HPP
#define NKIT_PROBLEMS_RADIATION_OPERATOR_SPLIT_LOOP_2D_HPP

#include <Eigen/Core>
#include <cmath>
#include <cstdint>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <stdexcept>
#include <string>
#include <utility>

#include "problems/radiation/gray_radiation_diffusion_2d.hpp"
#include "problems/radiation/operator_split_loop.hpp"

namespace nkit_problems {

/// How a split step is run.
struct operator_split_settings {
  int maximum_passes = 1;        ///< 1: the lagged loop; more: iterate the passes
  double pass_tolerance = 1e-8;  ///< stop iterating when max|Δu| <= this · max|u|

  void validate() const {
    if (maximum_passes < 1) {
      throw std::invalid_argument("operator_split_settings.maximum_passes must be >= 1 (got " +
                                  std::to_string(maximum_passes) + ")");
    }
    if (!(pass_tolerance > 0.0 && std::isfinite(pass_tolerance))) {
      throw std::invalid_argument("operator_split_settings.pass_tolerance must be finite and > 0 (got " +
                                  std::to_string(pass_tolerance) + ")");
    }
  }
};

/// Counts of one split step: those of operator_split_step_report (both
/// equations, every pass), the passes run and the preconditioner setups.
struct operator_split_step_report_2d : operator_split_step_report {
  int passes = 0;
  std::int64_t preconditioner_setups = 0;
};

template <class Preconditioner = nkit::sparse_direct_preconditioner>
class gray_radiation_operator_split_2d {
 public:
  using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, Preconditioner>;

  /// `energy_preconditioner` and `temperature_preconditioner` serve the two field solves.
  gray_radiation_operator_split_2d(const gray_radiation_diffusion_2d& problem, operator_split_settings split = {},
                                   nkit::newton_settings newton = gray_radiation_operator_split::default_settings(),
                                   Preconditioner energy_preconditioner = Preconditioner{},
                                   Preconditioner temperature_preconditioner = Preconditioner{})
      : m_problem(problem),
        m_split(split),
        m_pattern(nkit::five_point_grid_pattern(problem.cells_x(), problem.cells_y(), 1)),
        m_energy_solver(newton, {}, std::move(energy_preconditioner)),
        m_temperature_solver(newton, {}, std::move(temperature_preconditioner)),
        m_state(problem.unknowns()),
        m_work(problem.unknowns()),
        m_rate(problem.unknowns()),
        m_previous(problem.unknowns()),
        m_old_energy(problem.cells()),
        m_old_temperature(problem.cells()),
        m_energy(problem.cells()),
        m_temperature(problem.cells()) {
    m_split.validate();
  }

  /// Advances u (interleaved E, T) by one split step of size dt. When a field
  /// solve does not converge, u holds the best iterates and converged is false.
  operator_split_step_report_2d step(Eigen::VectorXd& u, double dt) {
    if (!(dt > 0.0 && std::isfinite(dt))) {
      throw std::invalid_argument("gray_radiation_operator_split_2d: dt must be finite and > 0 (got " +
                                  std::to_string(dt) + ")");
    }
    m_problem.field_layout().require_size(u.size(), "state");
    operator_split_step_report_2d report;
    const int n = m_problem.cells();
    for (int c = 0; c < n; ++c) {
      m_old_energy(c) = u(2 * c);
      m_old_temperature(c) = u(2 * c + 1);
    }
    m_state = u;
    for (int pass = 0; pass < m_split.maximum_passes; ++pass) {
      m_previous = m_state;
      // 1. radiation, T frozen at the latest temperature (T_n on the first pass)
      for (int c = 0; c < n; ++c) m_energy(c) = m_state(2 * c);
      count(m_energy_solver.solve(field_equation{*this, 0, dt, m_old_energy}, m_energy), report);
      for (int c = 0; c < n; ++c) m_state(2 * c) = m_energy(c);
      // 2. material, E frozen at the new radiation energy
      for (int c = 0; c < n; ++c) m_temperature(c) = m_state(2 * c + 1);
      count(m_temperature_solver.solve(field_equation{*this, 1, dt, m_old_temperature}, m_temperature), report);
      for (int c = 0; c < n; ++c) m_state(2 * c + 1) = m_temperature(c);
      ++report.passes;
      if (!report.converged) break;
      if (m_split.maximum_passes > 1 &&
          (m_state - m_previous).cwiseAbs().maxCoeff() <= m_split.pass_tolerance * m_state.cwiseAbs().maxCoeff()) {
        break;
      }
    }
    u = m_state;
    return report;
  }

 private:
  /// Backward Euler for one field (0: E, 1: T) with the other held in m_state.
  struct field_equation {
    gray_radiation_operator_split_2d& owner;
    int field;
    double dt;
    const Eigen::VectorXd& old_values;
    void operator()(const Eigen::VectorXd& v, Eigen::VectorXd& r) const {
      const int n = owner.m_problem.cells();
      Eigen::VectorXd& state = owner.m_work;
      state = owner.m_state;
      for (int c = 0; c < n; ++c) state(2 * c + field) = v(c);
      owner.m_problem.rate(0.0, state, owner.m_rate);
      if (r.size() != n) r.resize(n);
      for (int c = 0; c < n; ++c) r(c) = v(c) - old_values(c) - dt * owner.m_rate(2 * c + field);
    }
    const nkit::sparsity_pattern& jacobian_pattern() const { return owner.m_pattern; }
  };

  static void count(const nkit::solve_report& solve, operator_split_step_report_2d& report) {
    report.converged = report.converged && solve.converged();
    report.newton_steps += solve.newton_steps;
    report.linear_iterations += solve.linear_iterations;
    report.preconditioner_setups += solve.preconditioner_setups;
  }

  const gray_radiation_diffusion_2d& m_problem;
  operator_split_settings m_split;
  nkit::sparsity_pattern m_pattern;
  solver_type m_energy_solver, m_temperature_solver;
  Eigen::VectorXd m_state, m_work, m_rate, m_previous;
  Eigen::VectorXd m_old_energy, m_old_temperature, m_energy, m_temperature;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_RADIATION_OPERATOR_SPLIT_LOOP_2D_HPP
