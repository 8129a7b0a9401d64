#ifndef NKIT_FIXED_POINT_ANDERSON_SETTINGS_HPP
#define NKIT_FIXED_POINT_ANDERSON_SETTINGS_HPP

/// \file fixed_point/anderson_settings.hpp
/// Everything that configures an Anderson-accelerated fixed-point solve
/// (anderson_solver.hpp), as one aggregate with defaults, checked by
/// validate() before any iteration.
///
/// Norms: every residual norm here is the Euclidean norm of the fixed-point
/// residual f(u) = G(u) − u, a reduction of the vector space.

#include <atomic>
#include <cstdint>
#include <limits>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"
#include "../newton/newton_settings.hpp"

namespace nkit {

struct anderson_settings {
  /// Converged when ‖f(u)‖ <= relative_tolerance · ‖f(u0)‖.
  double relative_tolerance = 1e-8;
  /// Converged when ‖f(u)‖ <= absolute_tolerance (0 = off).
  double absolute_tolerance = 0.0;
  /// Iterations allowed (each evaluates G once, more after a non-finite value).
  int iteration_budget = 200;
  /// Evaluations of G allowed, the one at u0 included (checked before each call).
  std::int64_t residual_evaluation_budget = std::numeric_limits<std::int64_t>::max();
  /// Wall-clock limit, checked before each evaluation of G.
  double wall_time_budget_seconds = std::numeric_limits<double>::infinity();
  /// When not null, raising the flag stops the solve before the next evaluation of G.
  const std::atomic<bool>* cancellation_flag = nullptr;

  /// m: residual differences kept in the least-squares problem (the depth or
  /// window). 0 is the plain fixed-point iteration u ← u + mixing · f(u).
  int depth = 5;
  /// β in (0, 1]: u_{k+1} = u_k + β f_k − (ΔU_k + β ΔF_k) γ_k (H.F. Walker &
  /// P. Ni, "Anderson acceleration for fixed-point iterations", SIAM J. Numer.
  /// Anal. 49 (2011) 1715–1735, the mixing or damping parameter). 1 takes
  /// the accelerated G values undamped.
  double mixing = 1.0;
  /// Condition-number safeguard: after each new column, the oldest columns
  /// are dropped until the 1-norm condition number of the triangular factor
  /// R of ΔF = QR is at most this (Walker & Ni 2011 describe this safeguard
  /// for their QR implementation — not checked against the paper; the default is common
  /// practice, between 1/√ε and 1/ε). Infinity switches the safeguard off.
  double maximum_condition_number = 1e10;
  /// Restart on stagnation: clear the whole history when ‖f‖ has not fallen
  /// below stagnation_factor times its last reference value within this many
  /// iterations (0 = never restart).
  int restart_window = 5;
  /// Stop (stop_reason::residual_stagnated) when ‖f‖ has not fallen below
  /// stagnation_factor times its last reference value within this many
  /// iterations, restarts notwithstanding.
  int stagnation_window = 25;
  double stagnation_factor = 0.99;
  /// Steps toward a bound stop at this fraction of the distance (newton_settings uses the same rule).
  bound_settings bounds;

  /// Throws std::invalid_argument naming the first bad field and its value.
  void validate(std::string_view prefix = "anderson_settings") const {
    const std::string p(prefix);
    detail::require_non_negative(p + ".relative_tolerance", relative_tolerance);
    detail::require_non_negative(p + ".absolute_tolerance", absolute_tolerance);
    if (relative_tolerance == 0.0 && absolute_tolerance == 0.0) {
      detail::throw_invalid_setting(p + ".relative_tolerance",
                                    "> 0 when absolute_tolerance is 0 (otherwise nothing can converge)",
                                    relative_tolerance);
    }
    detail::require_at_least(p + ".iteration_budget", iteration_budget, 1);
    detail::require_at_least<std::int64_t>(p + ".residual_evaluation_budget", residual_evaluation_budget, 1);
    detail::require_positive(p + ".wall_time_budget_seconds", wall_time_budget_seconds, true);
    detail::require_at_least(p + ".depth", depth, 0);
    if (!(mixing > 0.0 && mixing <= 1.0)) detail::throw_invalid_setting(p + ".mixing", "in (0, 1]", mixing);
    if (!(maximum_condition_number >= 1.0)) {
      detail::throw_invalid_setting(p + ".maximum_condition_number", ">= 1", maximum_condition_number);
    }
    detail::require_at_least(p + ".restart_window", restart_window, 0);
    detail::require_at_least(p + ".stagnation_window", stagnation_window, 1);
    detail::require_open_interval(p + ".stagnation_factor", stagnation_factor, 0.0, 1.0);
    bounds.validate(p + ".bounds");
  }
};

}  // namespace nkit

#endif  // NKIT_FIXED_POINT_ANDERSON_SETTINGS_HPP
