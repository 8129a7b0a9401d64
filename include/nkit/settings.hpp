#ifndef NKIT_SETTINGS_HPP
#define NKIT_SETTINGS_HPP

/// \file settings.hpp
/// Everything that configures a Newton–Krylov solve, as one aggregate with
/// defaults, checked by validate() before any iteration.
///
/// Norms: every residual norm and tolerance here is the Euclidean norm of the
/// residual vector R(u); step norms are Euclidean norms of u_k − u_{k−1}.

#include <atomic>
#include <cstdint>
#include <limits>
#include <string>
#include <string_view>

#include "detail/checks.hpp"
#include "finite_difference_jacobian.hpp"
#include "forcing_term.hpp"
#include "gmres.hpp"
#include "line_search.hpp"

namespace nkit {

/// How a Newton direction becomes a step.
enum class globalization_strategy {
  line_search,  ///< backtracking with sufficient decrease (line_search.hpp); the robust default
  full_step     ///< take λ = 1 unless the residual there is not finite
};

constexpr std::string_view name(globalization_strategy value) {
  switch (value) {
    case globalization_strategy::line_search:
      return "line_search";
    case globalization_strategy::full_step:
      return "full_step";
  }
  return "unknown";
}

/// When the driver rebuilds the preconditioner (calls its setup()).
struct preconditioner_reuse_settings {
  /// Rebuild at least every this many Newton steps (1 = every step).
  int rebuild_every_newton_steps = 1;
  /// Also rebuild when the previous linear solve needed more than this many
  /// iterations (0 = off).
  int rebuild_when_linear_iterations_exceed = 0;
  /// Also rebuild after a linear solve that did not converge.
  bool rebuild_after_linear_failure = true;

  void validate(std::string_view prefix = "preconditioner_reuse_settings") const {
    const std::string p(prefix);
    detail::require_at_least(p + ".rebuild_every_newton_steps", rebuild_every_newton_steps, 1);
    detail::require_at_least(p + ".rebuild_when_linear_iterations_exceed", rebuild_when_linear_iterations_exceed, 0);
  }
};

struct newton_settings {
  /// Converged when ‖R(u)‖ <= relative_tolerance · ‖R(u0)‖.
  double relative_tolerance = 1e-8;
  /// Converged when ‖R(u)‖ <= absolute_tolerance (0 = off).
  double absolute_tolerance = 0.0;
  /// Stop (not converged) when ‖u_k − u_{k−1}‖ <= step_tolerance · (1 + ‖u_k‖) (0 = off).
  double step_tolerance = 0.0;
  /// Newton steps allowed.
  int max_newton_steps = 50;
  /// Calls of the user's residual allowed, J·v ones included (always holds: checked before each call).
  std::int64_t residual_evaluation_budget = std::numeric_limits<std::int64_t>::max();
  /// GMRES iterations allowed over the whole solve.
  std::int64_t linear_iteration_budget = std::numeric_limits<std::int64_t>::max();
  /// Wall-clock limit, checked before each residual evaluation.
  double wall_time_limit_seconds = std::numeric_limits<double>::infinity();
  /// Stop when no new smallest residual norm was reached within this many Newton steps.
  int stagnation_window = 10;
  /// When not null, raising the flag stops the solve before the next residual evaluation.
  const std::atomic<bool>* cancellation_flag = nullptr;

  globalization_strategy globalization = globalization_strategy::line_search;
  forcing_term_settings forcing;
  line_search_settings line_search;
  gmres_settings linear;
  jacobian_settings jacobian;
  preconditioner_reuse_settings preconditioner_reuse;

  /// Throws std::invalid_argument naming the first bad field and its value.
  void validate() const {
    detail::require_non_negative("newton_settings.relative_tolerance", relative_tolerance);
    detail::require_non_negative("newton_settings.absolute_tolerance", absolute_tolerance);
    if (relative_tolerance == 0.0 && absolute_tolerance == 0.0) {
      detail::throw_invalid_setting("newton_settings.relative_tolerance",
                                    "> 0 when absolute_tolerance is 0 (otherwise nothing can converge)",
                                    relative_tolerance);
    }
    detail::require_non_negative("newton_settings.step_tolerance", step_tolerance);
    detail::require_at_least("newton_settings.max_newton_steps", max_newton_steps, 1);
    detail::require_at_least<std::int64_t>("newton_settings.residual_evaluation_budget", residual_evaluation_budget, 1);
    detail::require_at_least<std::int64_t>("newton_settings.linear_iteration_budget", linear_iteration_budget, 1);
    detail::require_positive("newton_settings.wall_time_limit_seconds", wall_time_limit_seconds, true);
    detail::require_at_least("newton_settings.stagnation_window", stagnation_window, 1);
    forcing.validate("newton_settings.forcing");
    line_search.validate("newton_settings.line_search");
    linear.validate("newton_settings.linear");
    jacobian.validate("newton_settings.jacobian");
    preconditioner_reuse.validate("newton_settings.preconditioner_reuse");
  }
};

}  // namespace nkit

#endif  // NKIT_SETTINGS_HPP
