#ifndef NKIT_SENSITIVITY_ADJOINT_SENSITIVITY_HPP
#define NKIT_SENSITIVITY_ADJOINT_SENSITIVITY_HPP

/// \file sensitivity/adjoint_sensitivity.hpp
/// Adjoint sensitivities at a converged state u* of R(u, p) = 0: one solve
///     R_u(u*, p)ᵀ λ = (∂J/∂u)ᵀ
/// then, for every parameter j,
///     dJ/dp_j = ∂J/∂p_j − λᵀ R_p(u*, p) e_j.
/// The transposed solve (newton_krylov_solver::linearized_transpose_solve)
/// runs GMRES on the Jacobian assembled at u* — the problem's
/// assemble_jacobian(u, p, J), or colored differences of its
/// jacobian_pattern() — transposed, right-preconditioned by the Newton
/// solver's preconditioner transposed (its apply_transpose, which every
/// built-in preconditioner has — BoomerAMG with the Jacobi smoother only; the
/// factors are those of the last Newton step, not rebuilt; table in
/// docs/sensitivities.md).
/// Cost: one linear solve plus m products R_p e_j (each one residual sweep
/// on dual numbers, or one or two residual evaluations by differences),
/// whatever the number of parameters.
///
/// Usage and input checks as direct_sensitivities (direct_sensitivity.hpp);
/// also throws std::invalid_argument when the solver's preconditioner has no
/// apply_transpose. The problem must be able to assemble its Jacobian
/// (compile-time check). Serial Eigen vectors only. Solver scaling (set_scaling)
/// is allowed: the linear tolerance then applies to the scaled residual.

#include <Eigen/Core>
#include <type_traits>
#include <utility>

#include "../jacobian/sparse_jacobian.hpp"
#include "output_functional.hpp"
#include "parameter_residual.hpp"
#include "sensitivity_bookkeeping.hpp"
#include "sensitivity_report.hpp"

namespace nkit {

template <class Solver, class Problem, class Functional>
adjoint_sensitivity_result adjoint_sensitivities(Solver& solver, Problem& problem, const Eigen::VectorXd& parameters,
                                                 Functional&& functional, const sensitivity_settings& settings = {}) {
  using functional_type = std::remove_reference_t<Functional>;
  static_assert(can_assemble_jacobian_v<residual_at_parameters<Problem>, Eigen::VectorXd>,
                "nkit: adjoint sensitivities transpose the assembled Jacobian: give the problem "
                "assemble_jacobian(u, p, J) or jacobian_pattern()");
  detail::check_sensitivity_input<Solver, Problem, functional_type>(solver, problem, parameters, settings,
                                                                    "adjoint_sensitivities");
  detail::sensitivity_ledger<Solver> ledger(solver);
  const Eigen::VectorXd& u = solver.converged_state();
  const Eigen::Index m = parameters.size();
  auto fixed = at_parameters(problem, parameters);
  detail::parameter_derivative<Problem> derivative(settings.parameter_difference);
  detail::functional_gradients<functional_type> gradients;

  Eigen::VectorXd state_gradient, parameter_gradient;
  gradients.state(functional, u, parameters, state_gradient);
  gradients.parameters(functional, u, parameters, parameter_gradient);

  adjoint_sensitivity_result result;
  ledger.record(
      solver.linearized_transpose_solve(fixed, state_gradient, result.adjoint, settings.linear_relative_tolerance));

  Eigen::VectorXd residual_at_p;
  if constexpr (!has_parameter_product_v<Problem>) derivative.residual(problem, u, parameters, residual_at_p);
  result.gradient = parameter_gradient;
  Eigen::VectorXd direction = Eigen::VectorXd::Zero(m), column(u.size());
  for (Eigen::Index j = 0; j < m; ++j) {
    direction(j) = 1.0;
    derivative.apply(problem, u, parameters, residual_at_p, direction, column);
    direction(j) = 0.0;
    result.gradient(j) -= result.adjoint.dot(column);
  }
  result.report = ledger.finish(sensitivity_method::adjoint, m, derivative, gradients);
  return result;
}

}  // namespace nkit

#endif  // NKIT_SENSITIVITY_ADJOINT_SENSITIVITY_HPP
