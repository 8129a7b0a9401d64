// The operator-split loop that coupled radiation–material codes commonly run
// (the "in-house" baseline of issue 15): per time step Δt, one pass of
//   1. the radiation equation with the material temperature frozen at T_n,
//        E_(n+1) − E_n = Δt [ ∂x(D_r(T_n) ∂x E_(n+1)) + σ_a(T_n)(T_n⁴ − E_(n+1)) ]
//   2. the material equation with the radiation frozen at E_(n+1),
//        T_(n+1) − T_n = Δt [ ∂x(D_t(T) ∂x T) − σ_a(T)(T⁴ − E_(n+1)) ],  T = T_(n+1)
// each a backward-Euler step of one field, solved by nkit's Newton–Krylov
// driver (sparse LU of the colored-difference Jacobian). The spatial operators
// are those of gray_radiation_diffusion.hpp, evaluated on the state with the
// other field frozen.
//
// Lagging the coupling leaves a splitting error of first order in Δt on top of
// backward Euler's own; D.A. Knoll, W.J. Rider & G.L. Olson, J. Quant.
// Spectrosc. Radiat. Transfer 63 (1999) 15–29 describe it for this problem
// (from memory). Unlike the coupled step, the exchange term is evaluated at
// different states in the two equations, so the split step does not conserve
// W = h Σ (E + T) exactly.
#ifndef NKIT_PROBLEMS_RADIATION_OPERATOR_SPLIT_LOOP_HPP
#define NKIT_PROBLEMS_RADIATION_OPERATOR_SPLIT_LOOP_HPP

#include <Eigen/Core>
#include <cmath>
#include <cstdint>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <stdexcept>
#include <string>

#include "problems/radiation/gray_radiation_diffusion.hpp"

namespace nkit_problems {

/// Counts of one split step (both equations).
struct operator_split_step_report {
  bool converged = true;  ///< both Newton solves met their tolerance
  int newton_steps = 0;
  std::int64_t linear_iterations = 0;
};

class gray_radiation_operator_split {
 public:
  using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner>;

  explicit gray_radiation_operator_split(const gray_radiation_diffusion_1d& problem,
                                         nkit::newton_settings settings = default_settings())
      : m_problem(problem),
        m_pattern(nkit::three_point_line_pattern(problem.cells(), 1)),
        m_solver(settings),
        m_state(problem.unknowns()),
        m_rate(problem.unknowns()),
        m_energy(problem.cells()),
        m_temperature(problem.cells()) {}

  static nkit::newton_settings default_settings() {
    nkit::newton_settings settings;
    settings.relative_tolerance = 1e-11;
    settings.absolute_tolerance = 1e-13;
    settings.newton_step_budget = 30;
    return settings;
  }

  /// Advances u (interleaved E, T) by one split step of size dt. When a solve
  /// does not converge, u holds its best iterate and converged is false.
  operator_split_step_report step(Eigen::VectorXd& u, double dt) {
    if (!(dt > 0.0 && std::isfinite(dt))) {
      throw std::invalid_argument("gray_radiation_operator_split: dt must be finite and > 0 (got " +
                                  std::to_string(dt) + ")");
    }
    m_problem.field_layout().require_size(u.size(), "state");
    operator_split_step_report report;
    const int n = m_problem.cells();
    m_state = u;
    // 1. radiation, T frozen at T_n
    for (int i = 0; i < n; ++i) m_energy(i) = u(2 * i);
    field_equation radiation{*this, 0, dt, m_energy};
    Eigen::VectorXd energy = m_energy;
    count(m_solver.solve(radiation, energy), report);
    for (int i = 0; i < n; ++i) m_state(2 * i) = energy(i);
    // 2. material, E frozen at E_(n+1)
    for (int i = 0; i < n; ++i) m_temperature(i) = u(2 * i + 1);
    field_equation material{*this, 1, dt, m_temperature};
    Eigen::VectorXd temperature = m_temperature;
    count(m_solver.solve(material, temperature), report);
    for (int i = 0; i < n; ++i) m_state(2 * i + 1) = temperature(i);
    u = m_state;
    return report;
  }

 private:
  /// Backward Euler for one field (0: E, 1: T) with the other held in m_state:
  /// r = v − v_n − dt f_field(state with v inserted).
  struct field_equation {
    gray_radiation_operator_split& owner;
    int field;
    double dt;
    const Eigen::VectorXd& old_values;
    void operator()(const Eigen::VectorXd& v, Eigen::VectorXd& r) const {
      const int n = owner.m_problem.cells();
      Eigen::VectorXd& state = owner.m_work;
      state = owner.m_state;
      for (int i = 0; i < n; ++i) state(2 * i + field) = v(i);
      owner.m_problem.rate(0.0, state, owner.m_rate);
      if (r.size() != n) r.resize(n);
      for (int i = 0; i < n; ++i) r(i) = v(i) - old_values(i) - dt * owner.m_rate(2 * i + field);
    }
    const nkit::sparsity_pattern& jacobian_pattern() const { return owner.m_pattern; }
  };

  static void count(const nkit::solve_report& solve, operator_split_step_report& report) {
    report.converged = report.converged && solve.converged();
    report.newton_steps += solve.newton_steps;
    report.linear_iterations += solve.linear_iterations;
  }

  const gray_radiation_diffusion_1d& m_problem;
  nkit::sparsity_pattern m_pattern;
  solver_type m_solver;
  Eigen::VectorXd m_state, m_work, m_rate, m_energy, m_temperature;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_RADIATION_OPERATOR_SPLIT_LOOP_HPP
