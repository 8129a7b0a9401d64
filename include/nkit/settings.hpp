#ifndef NKIT_SETTINGS_HPP
#define NKIT_SETTINGS_HPP

/// \file settings.hpp
/// Everything that configures a Newton–Krylov solve, as one aggregate with
/// defaults, checked by validate() before any iteration.
///
/// Norms: every residual norm and tolerance here is the Euclidean norm of the
/// residual vector as the solver sees it: of D_r⁻¹ R(u) when residual scaling
/// is set (newton_krylov_solver::set_scaling), of R(u) otherwise. Step norms
/// are Euclidean norms of the scaled step D_u⁻¹ (u_k − u_{k−1}) likewise
/// (unscaled when no variable scaling is set).

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
  line_search,      ///< backtracking with sufficient decrease (line_search.hpp); the robust default
  full_step,        ///< take λ = 1 unless the residual there is not finite (or the state inadmissible)
  trust_region,     ///< dogleg between the Krylov-subspace Cauchy point and the Newton step (trust_region.hpp)
  pseudo_transient  ///< pseudo-transient continuation (pseudo_transient.hpp), then Newton with line search
};

constexpr std::string_view name(globalization_strategy value) {
  switch (value) {
    case globalization_strategy::line_search:
      return "line_search";
    case globalization_strategy::full_step:
      return "full_step";
    case globalization_strategy::trust_region:
      return "trust_region";
    case globalization_strategy::pseudo_transient:
      return "pseudo_transient";
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
  /// Rebuild at the first step of every solve. Set false to carry a
  /// preconditioner across solves (implicit time steps, continuation): it is
  /// then treated as built at step 0 of the new solve.
  bool rebuild_at_solve_start = true;

  void validate(std::string_view prefix = "preconditioner_reuse_settings") const {
    const std::string p(prefix);
    detail::require_at_least(p + ".rebuild_every_newton_steps", rebuild_every_newton_steps, 1);
    detail::require_at_least(p + ".rebuild_when_linear_iterations_exceed", rebuild_when_linear_iterations_exceed, 0);
  }
};

/// Trust-region control (used with globalization_strategy::trust_region).
/// Ratio test and radius update as in J.E. Dennis & R.B. Schnabel (1996),
/// Algorithm A6.4.5 (constants: common practice).
struct trust_region_settings {
  /// Δ_0; 0 means the length of the first Newton step.
  double initial_radius = 0.0;
  /// Stop with outcome::trust_region_collapsed below this radius (scaled step norm).
  double minimum_radius = 1e-12;
  double maximum_radius = std::numeric_limits<double>::infinity();
  /// Accept a step when actual/predicted reduction exceeds this.
  double acceptance_ratio = 1e-4;
  /// Shrink when the ratio is below, grow when above (and the step reached the boundary).
  double shrink_below_ratio = 0.25;
  double grow_above_ratio = 0.75;
  double shrink_factor = 0.25;
  double growth_factor = 2.0;

  void validate(std::string_view prefix = "trust_region_settings") const {
    const std::string p(prefix);
    detail::require_non_negative(p + ".initial_radius", initial_radius);
    detail::require_positive(p + ".minimum_radius", minimum_radius);
    detail::require_positive(p + ".maximum_radius", maximum_radius, true);
    if (maximum_radius < minimum_radius) {
      detail::throw_invalid_setting(p + ".maximum_radius",
                                    ">= minimum_radius (" + detail::number_text(minimum_radius) + ")", maximum_radius);
    }
    detail::require_open_interval(p + ".acceptance_ratio", acceptance_ratio, 0.0, 1.0);
    detail::require_open_interval(p + ".shrink_below_ratio", shrink_below_ratio, 0.0, 1.0);
    detail::require_open_interval(p + ".grow_above_ratio", grow_above_ratio, 0.0, 1.0);
    if (grow_above_ratio < shrink_below_ratio) {
      detail::throw_invalid_setting(p + ".grow_above_ratio",
                                    ">= shrink_below_ratio (" + detail::number_text(shrink_below_ratio) + ")",
                                    grow_above_ratio);
    }
    detail::require_open_interval(p + ".shrink_factor", shrink_factor, 0.0, 1.0);
    if (!(growth_factor > 1.0 && std::isfinite(growth_factor))) {
      detail::throw_invalid_setting(p + ".growth_factor", "finite and > 1", growth_factor);
    }
  }
};

/// Pseudo-transient continuation (used with globalization_strategy::pseudo_transient).
/// Each step solves (W/δ)(u − u_prev) + R(u) = 0 by one Newton step, W a
/// diagonal of weights (1, cell volumes, or spectral-radius estimates from the
/// problem's pseudo_time_weights()), and grows δ by switched evolution
/// relaxation; see pseudo_transient.hpp for sources.
struct pseudo_transient_settings {
  /// δ_0: the pseudo-time step (weights = volumes) or CFL number (weights = spectral radii).
  double initial_step = 1.0;
  /// Upper limit on δ; reaching it also ends the pseudo-transient phase.
  double maximum_step = 1e12;
  /// Stop with outcome::pseudo_time_step_collapsed when a failing δ falls below this.
  double minimum_step = 1e-12;
  /// Cap on the growth of δ per step: δ_{n+1} <= growth_limit · δ_n.
  double growth_limit = 10.0;
  /// Factor applied to δ when a step is rejected (non-finite or inadmissible residual).
  double failure_shrink = 0.25;
  /// Reject a pseudo-time step (and shrink δ by failure_shrink) when it raises
  /// ‖R‖ by more than this factor; a δ too large for the transient shows up
  /// this way (common practice).
  double maximum_residual_growth = 10.0;
  /// Switch to plain Newton with line search once ‖R‖ <= switch_ratio · ‖R(u0)‖ (0 = never).
  double switch_ratio = 1e-3;

  void validate(std::string_view prefix = "pseudo_transient_settings") const {
    const std::string p(prefix);
    detail::require_positive(p + ".initial_step", initial_step);
    detail::require_positive(p + ".maximum_step", maximum_step, true);
    detail::require_positive(p + ".minimum_step", minimum_step);
    if (!(minimum_step <= initial_step && initial_step <= maximum_step)) {
      detail::throw_invalid_setting(p + ".initial_step",
                                    "in [minimum_step, maximum_step] = [" + detail::number_text(minimum_step) + ", " +
                                        detail::number_text(maximum_step) + "]",
                                    initial_step);
    }
    if (!(growth_limit > 1.0)) detail::throw_invalid_setting(p + ".growth_limit", "> 1", growth_limit);
    detail::require_open_interval(p + ".failure_shrink", failure_shrink, 0.0, 1.0);
    if (!(maximum_residual_growth >= 1.0)) {
      detail::throw_invalid_setting(p + ".maximum_residual_growth", ">= 1", maximum_residual_growth);
    }
    detail::require_closed_interval(p + ".switch_ratio", switch_ratio, 0.0, 1.0);
  }
};

/// How declared bounds on the state are enforced (newton_krylov_solver::set_bounds).
struct bound_settings {
  /// Steps are shortened so that u + step stays within the bounds, moving at
  /// most this fraction of the way to the nearest bound ("fraction to the
  /// boundary", common practice in interior-point methods; J. Nocedal &
  /// S.J. Wright, Numerical Optimization, 2nd ed. (2006), §19.2 — from
  /// memory). Iterates therefore stay strictly inside; a solution lying on a
  /// bound is approached geometrically.
  double boundary_fraction = 0.99;

  void validate(std::string_view prefix = "bound_settings") const {
    const std::string p(prefix);
    if (!(boundary_fraction > 0.0 && boundary_fraction < 1.0)) {
      detail::throw_invalid_setting(p + ".boundary_fraction", "in (0, 1)", boundary_fraction);
    }
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
  /// Stop (outcome::stagnated) when, within this many Newton steps, the
  /// residual norm never fell below stagnation_factor times its value at the
  /// last such progress (not checked during pseudo-transient steps).
  int stagnation_window = 10;
  double stagnation_factor = 0.99;
  /// When not null, raising the flag stops the solve before the next residual evaluation.
  const std::atomic<bool>* cancellation_flag = nullptr;

  globalization_strategy globalization = globalization_strategy::line_search;
  forcing_term_settings forcing;
  line_search_settings line_search;
  trust_region_settings trust_region;
  pseudo_transient_settings pseudo_transient;
  bound_settings bounds;
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
    detail::require_open_interval("newton_settings.stagnation_factor", stagnation_factor, 0.0, 1.0);
    detail::require_enumerator("newton_settings.globalization", globalization, globalization_strategy::pseudo_transient,
                               "line_search, full_step, trust_region, pseudo_transient");
    forcing.validate("newton_settings.forcing");
    line_search.validate("newton_settings.line_search");
    trust_region.validate("newton_settings.trust_region");
    pseudo_transient.validate("newton_settings.pseudo_transient");
    bounds.validate("newton_settings.bounds");
    linear.validate("newton_settings.linear");
    jacobian.validate("newton_settings.jacobian");
    preconditioner_reuse.validate("newton_settings.preconditioner_reuse");
  }
};

}  // namespace nkit

#endif  // NKIT_SETTINGS_HPP
