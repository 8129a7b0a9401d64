#ifndef NKIT_SENSITIVITY_SENSITIVITY_REPORT_HPP
#define NKIT_SENSITIVITY_SENSITIVITY_REPORT_HPP

/// \file sensitivity/sensitivity_report.hpp
/// Settings of a sensitivity computation, what it returns (dJ/dp and, for
/// the direct method, du/dp; for the adjoint method, λ) and its cost report:
/// linear solves and iterations, products, residual evaluations, time and
/// work units (wall time ÷ the median time of one residual evaluation of the
/// Newton run, the unit solve reports use).

#include <Eigen/Core>
#include <cstdint>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"
#include "../jacobian/finite_difference_jacobian.hpp"
#include "../report/outcome.hpp"

namespace nkit {

struct sensitivity_settings {
  /// Each linear solve stops when ‖b − A x‖ <= linear_relative_tolerance·‖b‖
  /// (A = R'(u*) or its transpose). The gradient then carries a relative
  /// error of about this size times the condition of the problem.
  double linear_relative_tolerance = 1e-10;
  /// Step rule and formula of ∂R/∂p·dp by finite differences, used when the
  /// residual has no parameter_product (parameter_residual.hpp).
  jacobian_settings parameter_difference = {};

  void validate(std::string_view prefix = "sensitivity_settings") const {
    const std::string p(prefix);
    if (!(linear_relative_tolerance > 0.0 && linear_relative_tolerance < 1.0)) {
      detail::throw_invalid_setting(p + ".linear_relative_tolerance", "in (0, 1)", linear_relative_tolerance);
    }
    parameter_difference.validate(p + ".parameter_difference");
  }
};

enum class sensitivity_method { direct, adjoint };

struct sensitivity_report {
  sensitivity_method method = sensitivity_method::direct;
  int parameters = 0;     ///< m, the size of p
  int linear_solves = 0;  ///< direct: m; adjoint: 1
  bool linear_solves_converged = true;
  /// The Newton solver's budget (residual evaluations, wall time, cancellation flag; counted from the
  /// end of its run) that stopped a linear solve or product, leaving NaN in the gradient; empty when none did.
  stop_reason_if_stopped stopped_by;
  double largest_relative_linear_residual = 0.0;  ///< max over the solves of ‖b − A x‖/‖b‖
  std::int64_t linear_iterations = 0;
  std::int64_t jacobian_vector_products = 0;  ///< R'(u*) v, in the direct solves
  std::int64_t transposed_products = 0;       ///< R'(u*)ᵀ w, in the adjoint solve
  std::int64_t parameter_products = 0;        ///< ∂R/∂p·dp
  std::int64_t residual_evaluations = 0;      ///< every call of R: in J·v, assembly, ∂R/∂p differences
  std::int64_t functional_evaluations = 0;    ///< calls of J for difference gradients
  std::int64_t preconditioner_applications = 0;
  std::int64_t jacobian_assemblies = 0;
  double wall_seconds = 0.0;
  double median_residual_seconds = 0.0;  ///< one residual evaluation, from the Newton run
  /// wall_seconds ÷ median_residual_seconds (0 when the latter is unknown).
  double work_units() const { return median_residual_seconds > 0.0 ? wall_seconds / median_residual_seconds : 0.0; }
};

/// dJ/dp and du/dp (n × m, column j = s_j) by direct sensitivities.
struct direct_sensitivity_result {
  Eigen::VectorXd gradient;
  Eigen::MatrixXd state_sensitivities;
  sensitivity_report report;
};

/// dJ/dp and the adjoint λ (R'(u*)ᵀ λ = (∂J/∂u)ᵀ) by adjoint sensitivities.
struct adjoint_sensitivity_result {
  Eigen::VectorXd gradient;
  Eigen::VectorXd adjoint;
  sensitivity_report report;
};

}  // namespace nkit

#endif  // NKIT_SENSITIVITY_SENSITIVITY_REPORT_HPP
