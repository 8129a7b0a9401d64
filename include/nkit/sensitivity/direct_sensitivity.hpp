#ifndef NKIT_SENSITIVITY_DIRECT_SENSITIVITY_HPP
#define NKIT_SENSITIVITY_DIRECT_SENSITIVITY_HPP

/// \file sensitivity/direct_sensitivity.hpp
/// Direct (forward) sensitivities at a converged state u* of R(u, p) = 0:
/// for each parameter j solve
///     R_u(u*, p) s_j = −R_p(u*, p) e_j        (s_j = du*/dp_j)
/// with the Newton solver's GMRES, J·v operator and last preconditioner
/// (newton_krylov_solver::linearized_solve), then
///     dJ/dp_j = ∂J/∂p_j + ∂J/∂u · s_j.
/// Cost: m linear solves plus m products R_p e_j; worth it for few
/// parameters, or when du/dp itself is wanted (for many outputs). For many
/// parameters and one output use the adjoint method (adjoint_sensitivity.hpp).
///
/// Usage: solve R(·, p) = 0 with the same solver first, e.g.
///     auto fixed = nkit::at_parameters(problem, p);
///     solver.solve(fixed, u);
///     auto result = nkit::direct_sensitivities(solver, problem, p, functional);
/// `problem` and `p` must be those of that solve. Throws
/// std::invalid_argument when the last solve did not converge, when p is
/// empty, not finite or not of the problem's parameter_count(), or on bad
/// settings. Serial Eigen vectors only. Solver scaling (set_scaling)
/// is allowed: the linear tolerance then applies to the scaled residual.

#include <Eigen/Core>
#include <utility>

#include "output_functional.hpp"
#include "parameter_residual.hpp"
#include "sensitivity_bookkeeping.hpp"
#include "sensitivity_report.hpp"

namespace nkit {

template <class Solver, class Problem, class Functional>
direct_sensitivity_result direct_sensitivities(Solver& solver, Problem& problem, const Eigen::VectorXd& parameters,
                                               Functional&& functional, const sensitivity_settings& settings = {}) {
  using functional_type = std::remove_reference_t<Functional>;
  detail::check_sensitivity_input<Solver, Problem, functional_type>(solver, problem, parameters, settings,
                                                                    "direct_sensitivities");
  detail::sensitivity_ledger<Solver> ledger(solver);
  const Eigen::VectorXd& u = solver.converged_state();
  const Eigen::Index n = u.size(), m = parameters.size();
  auto fixed = at_parameters(problem, parameters);
  detail::parameter_derivative<Problem> derivative(settings.parameter_difference);
  detail::functional_gradients<functional_type> gradients;

  Eigen::VectorXd residual_at_p;
  if constexpr (!has_parameter_product_v<Problem>) derivative.residual(problem, u, parameters, residual_at_p);

  direct_sensitivity_result result;
  result.state_sensitivities.resize(n, m);
  Eigen::VectorXd direction = Eigen::VectorXd::Zero(m), right_hand_side(n), solution(n);
  for (Eigen::Index j = 0; j < m; ++j) {
    direction(j) = 1.0;
    derivative.apply(problem, u, parameters, residual_at_p, direction, right_hand_side);
    direction(j) = 0.0;
    right_hand_side = -right_hand_side;
    ledger.record(solver.linearized_solve(fixed, right_hand_side, solution, settings.linear_relative_tolerance));
    result.state_sensitivities.col(j) = solution;
  }
  Eigen::VectorXd state_gradient, parameter_gradient;
  gradients.state(functional, u, parameters, state_gradient);
  gradients.parameters(functional, u, parameters, parameter_gradient);
  result.gradient = parameter_gradient + result.state_sensitivities.transpose() * state_gradient;
  result.report = ledger.finish(sensitivity_method::direct, m, derivative, gradients);
  return result;
}

}  // namespace nkit

#endif  // NKIT_SENSITIVITY_DIRECT_SENSITIVITY_HPP
