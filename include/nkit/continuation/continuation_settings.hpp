#ifndef NKIT_CONTINUATION_CONTINUATION_SETTINGS_HPP
#define NKIT_CONTINUATION_CONTINUATION_SETTINGS_HPP

/// \file continuation/continuation_settings.hpp
/// Settings of a parameter continuation run, what it reports per point, and
/// why it stopped (continuation.hpp runs it).
///
/// Metric: the arclength of a step (δu, δλ) is
///   ds² = θ ‖δu‖₂² + δλ²,  θ = state_weight / N,
/// N the global number of state unknowns, so the state part counts as a root
/// mean square and the step size does not depend on the grid (common
/// practice; state_weight = N gives Keller's plain Euclidean metric). In
/// natural-parameter continuation the step is |δλ| itself.

#include <cmath>
#include <cstdint>
#include <limits>
#include <optional>
#include <ostream>
#include <string>
#include <string_view>
#include <type_traits>
#include <utility>
#include <vector>

#include "../detail/checks.hpp"
#include "../newton/newton_settings.hpp"
#include "../report/monitor.hpp"
#include "../report/outcome.hpp"

namespace nkit {

enum class continuation_method {
  pseudo_arclength,  ///< Keller's bordered system; follows the branch around folds
  natural_parameter  ///< λ is stepped and held fixed in each solve; stops at a fold
};

/// How the step changes after an accepted point (continuation_settings::adaptation).
enum class step_adaptation {
  corrector_convergence,  ///< from the corrector's contraction, its distance from the predictor and the tangent angle
  newton_step_count       ///< from the number of corrector Newton steps (nkit 0.1)
};

/// Which way λ moves from the start point.
enum class parameter_direction { increasing, decreasing };

/// The corrector's defaults for continuation: few Newton steps, so a bad
/// predictor fails fast and the step is cut (common practice).
inline newton_settings default_corrector_settings() {
  newton_settings settings;
  settings.newton_step_budget = 10;
  settings.relative_tolerance = 1e-8;
  settings.absolute_tolerance = 0.0;
  return settings;
}

struct continuation_settings {
  continuation_method method = continuation_method::pseudo_arclength;
  parameter_direction initial_direction = parameter_direction::increasing;

  /// First step: Δs in the metric above (pseudo-arclength) or |Δλ| (natural).
  double initial_step = 0.1;
  double minimum_step = 1e-6;  ///< the run stops when a step this short still fails
  double maximum_step = 1.0;

  /// Step control. After a rejected step (corrector failure, or a guard
  /// below), Δs ← Δs · shrink_factor and the step is retried. After an
  /// accepted point the next step is Δs ← Δs · clamp(1/f, 1/maximum_step_shrink,
  /// maximum_step_growth), where f is set by `adaptation`; a point that
  /// needed rejected attempts does not let the step grow (1/f <= 1):
  ///
  /// corrector_convergence (default): the steplength adaptation by
  /// asymptotic estimates of E.L. Allgower & K. Georg, "Introduction to
  /// Numerical Continuation Methods", SIAM Classics in Applied Mathematics 45
  /// (2003), §6.1 (the algorithm number there from memory). Each observation
  /// of the corrector grows with the step like a known power of Δs; the step
  /// that brings it to its target is predicted from that power, and the most
  /// restrictive one wins:
  ///
  ///   f = max( √(κ / target_contraction),
  ///            (δ / Δs) / target_distance_ratio,
  ///            α / target_tangent_angle )
  ///
  ///   κ  contraction of the corrector's first Newton step: the part of
  ///      ‖R(x₁)‖/‖R(x₀)‖ that the linear model does not explain,
  ///      κ = max(0, ‖R(x₁)‖/‖R(x₀)‖ − (1 − ω) − ω·ρ), with ω the step
  ///      fraction and ρ the relative linear residual GMRES reached (the
  ///      linear model gives ‖R₀ + ωJs‖ <= ((1 − ω) + ωρ)‖R₀‖). Inexact
  ///      Newton–Krylov steps leave a residual of about ρ even on a linear
  ///      problem; what remains is the nonlinear remainder, O(‖s‖²)/‖R₀‖ =
  ///      O(Δs²) for a predictor error O(Δs²), hence the square root.
  ///      0 when the predictor already met the tolerance.
  ///   δ  distance of the corrected point from the predictor (arclength
  ///      metric): the Euler predictor is off the branch by ½·curvature·Δs²,
  ///      so δ/Δs = O(Δs) and enters linearly (unlike A&G's absolute δ,
  ///      the ratio needs no scale of the problem's variables).
  ///   α  angle between consecutive unit tangents (arclength metric), O(Δs).
  /// Unlike a Newton-step count, these do not grow when the linear solves
  /// are poor (an unpreconditioned corrector near a fold takes many Newton
  /// steps whatever the step), so the step is limited by the branch's
  /// curvature, not by the linear solver. An infinite target turns its term off.
  ///
  /// newton_step_count (nkit 0.1's rule, common practice): f = k / target_corrector_steps
  /// for a corrector that took k >= 1 Newton steps.
  step_adaptation adaptation = step_adaptation::corrector_convergence;
  /// Targets of the corrector_convergence rule (measured with these: 2D Bratu,
  /// h = 1/64, from λ = 0 to the fold in 17 points; 1D Bratu, h = 1/64, from
  /// λ = 0.5 in 9). κ is a lower bound of the nonlinear contraction when the
  /// forcing term is loose, so δ and α usually decide.
  double target_contraction = 0.1;
  double target_distance_ratio = 0.05;
  double target_tangent_angle = 0.2;  ///< radians
  /// Target of the newton_step_count rule. 5 suits the default inexact corrector: with
  /// Eisenstat–Walker forcing (η_0 = 0.5) even a very good predictor takes
  /// about 4 Newton steps to the tolerance (measured on 1D Bratu).
  int target_corrector_steps = 5;
  /// Bounds of the change after an accepted point: new/old <= maximum_step_growth,
  /// old/new <= maximum_step_shrink (both finite and >= 1).
  double maximum_step_growth = 2.0;
  double maximum_step_shrink = 2.0;
  double shrink_factor = 0.5;

  /// θ·N in the arclength metric (see the file comment).
  double state_weight = 1.0;

  /// The run ends on the first point outside [lower, upper]; that point is
  /// replaced by a solve with λ fixed at the bound.
  double parameter_lower_bound = -std::numeric_limits<double>::infinity();
  double parameter_upper_bound = std::numeric_limits<double>::infinity();

  /// Points on the branch, the start point included.
  int point_budget = 500;

  /// Guards against jumping to another branch (common practice): a step is
  /// rejected (and cut) when the corrected point lies farther than
  /// maximum_corrector_distance·Δs from its predictor (arclength metric; this
  /// includes the end point solved on a bound), or, in pseudo-arclength, when
  /// the cosine of the angle between consecutive unit tangents falls below
  /// minimum_tangent_alignment (−1 turns that test off).
  double maximum_corrector_distance = 0.5;
  double minimum_tangent_alignment = 0.5;

  /// Pseudo-arclength: when t_λ changes sign, locate the fold by the Illinois
  /// variant of regula falsi on t_λ(σ) along the previous tangent.
  bool locate_folds = true;
  /// The fold counts as located when λ at the fold is known to within
  /// fold_parameter_tolerance·max(1, |λ|): the bracket [σ_a, σ_b] around the
  /// sign change satisfies max(|t_λ(σ_a)|, |t_λ(σ_b)|)·(σ_b − σ_a) <= that
  /// (t_λ = dλ/ds bounds how much λ varies across the bracket), or |t_λ| = 0
  /// at an iterate. With finite-difference J·v, t_λ is noisy near the fold
  /// (at about the GMRES residual level) while λ is flat there, so the bracket
  /// test, not |t_λ|, is what ends the search.
  double fold_parameter_tolerance = 1e-9;
  int maximum_fold_location_iterations = 20;

  /// Relative GMRES tolerance requested for the tangent solves
  /// (‖b − A t‖ <= tolerance·‖b‖, b = (0, σ), σ = ‖R_λ‖).
  double tangent_linear_tolerance = 1e-6;
  /// A tangent solve that ended above tangent_linear_tolerance (stagnation at
  /// the finite-difference noise floor, or the iteration limit) is still used
  /// when its relative residual is below this; otherwise the step is rejected.
  /// A predictor direction and the sign of t_λ need only modest accuracy.
  double maximum_tangent_residual = 1e-3;

  /// Settings of every Newton–Krylov solve (start point, corrector steps, fold
  /// location). Its linear and jacobian settings also serve the tangent solves.
  /// Norms are Euclidean norms of the bordered residual [R; N]. The start
  /// solve stops at max(absolute_tolerance, relative_tolerance·‖R(u_guess, λ_0)‖),
  /// as any Newton solve does; every later solve stops at that same absolute
  /// value (not relative to its predictor's residual), so its Newton step count
  /// measures how far the predictor was off. If that value is 0 (exact guess
  /// and absolute_tolerance = 0) later solves fall back to relative_tolerance.
  newton_settings corrector = default_corrector_settings();

  /// Throws std::invalid_argument naming the first bad field and its value.
  void validate() const {
    const std::string p = "continuation_settings.";
    detail::require_positive(p + "initial_step", initial_step);
    detail::require_positive(p + "minimum_step", minimum_step);
    detail::require_positive(p + "maximum_step", maximum_step);
    if (minimum_step > initial_step) {
      detail::throw_invalid_setting(p + "minimum_step", "<= initial_step (" + detail::number_text(initial_step) + ")",
                                    minimum_step);
    }
    if (maximum_step < initial_step) {
      detail::throw_invalid_setting(p + "maximum_step", ">= initial_step (" + detail::number_text(initial_step) + ")",
                                    maximum_step);
    }
    detail::require_at_least(p + "target_corrector_steps", target_corrector_steps, 1);
    detail::require_positive(p + "target_contraction", target_contraction, true);
    detail::require_positive(p + "target_distance_ratio", target_distance_ratio, true);
    detail::require_positive(p + "target_tangent_angle", target_tangent_angle, true);
    for (const auto& [field, value] : {std::pair<const char*, double>{"maximum_step_growth", maximum_step_growth},
                                       std::pair<const char*, double>{"maximum_step_shrink", maximum_step_shrink}}) {
      if (!(value >= 1.0 && value < std::numeric_limits<double>::infinity())) {
        detail::throw_invalid_setting(p + field, "finite and >= 1", value);
      }
    }
    detail::require_open_interval(p + "shrink_factor", shrink_factor, 0.0, 1.0);
    detail::require_positive(p + "state_weight", state_weight);
    if (std::isnan(parameter_lower_bound) || std::isnan(parameter_upper_bound) ||
        !(parameter_lower_bound < parameter_upper_bound)) {
      detail::throw_invalid_setting(p + "parameter_lower_bound",
                                    "< parameter_upper_bound (" + detail::number_text(parameter_upper_bound) + ")",
                                    parameter_lower_bound);
    }
    detail::require_at_least(p + "point_budget", point_budget, 1);
    detail::require_positive(p + "maximum_corrector_distance", maximum_corrector_distance, true);
    detail::require_closed_interval(p + "minimum_tangent_alignment", minimum_tangent_alignment, -1.0, 1.0);
    detail::require_positive(p + "fold_parameter_tolerance", fold_parameter_tolerance);
    detail::require_at_least(p + "maximum_fold_location_iterations", maximum_fold_location_iterations, 1);
    detail::require_open_interval(p + "tangent_linear_tolerance", tangent_linear_tolerance, 0.0, 1.0);
    if (!(maximum_tangent_residual >= tangent_linear_tolerance && maximum_tangent_residual < 1.0)) {
      detail::throw_invalid_setting(p + "maximum_tangent_residual",
                                    "in [tangent_linear_tolerance, 1) (tangent_linear_tolerance = " +
                                        detail::number_text(tangent_linear_tolerance) + ")",
                                    maximum_tangent_residual);
    }
    corrector.validate(p + "corrector");
  }
};

/// The broad class of a continuation stop reason.
enum class continuation_status {
  completed,       ///< the run ended as asked: a parameter bound or its point budget
  cannot_proceed,  ///< a solve or a step failed beyond recovery
  interrupted      ///< the cancellation flag or the per-point monitor stopped it
};

/// Why a continuation run stopped, in the pattern of stop_reason (report/outcome.hpp).
enum class continuation_stop_reason {
  parameter_bound_reached,    ///< the branch left [lower, upper]; the last point lies on the bound
  point_budget_spent,         ///< point_budget points computed
  step_below_minimum,         ///< steps failed down to minimum_step (a fold, in natural-parameter mode)
  start_point_not_converged,  ///< the solve at the start parameter did not converge
  tangent_not_solved,         ///< pseudo-arclength: the tangent solve failed down to minimum_step
  cancellation_flag_raised,   ///< the corrector's cancellation flag was raised
  monitor_requested_stop      ///< the per-point monitor returned monitor_decision::stop_now
};

constexpr continuation_status status_of(continuation_stop_reason reason) {
  switch (reason) {
    case continuation_stop_reason::parameter_bound_reached:
    case continuation_stop_reason::point_budget_spent:
      return continuation_status::completed;
    case continuation_stop_reason::cancellation_flag_raised:
    case continuation_stop_reason::monitor_requested_stop:
      return continuation_status::interrupted;
    default:
      return continuation_status::cannot_proceed;
  }
}

constexpr std::string_view name(continuation_status status) {
  switch (status) {
    case continuation_status::completed:
      return "completed";
    case continuation_status::cannot_proceed:
      return "cannot_proceed";
    case continuation_status::interrupted:
      return "interrupted";
  }
  return "unknown";
}

constexpr std::string_view name(continuation_stop_reason value) {
  switch (value) {
    case continuation_stop_reason::parameter_bound_reached:
      return "parameter_bound_reached";
    case continuation_stop_reason::point_budget_spent:
      return "point_budget_spent";
    case continuation_stop_reason::step_below_minimum:
      return "step_below_minimum";
    case continuation_stop_reason::start_point_not_converged:
      return "start_point_not_converged";
    case continuation_stop_reason::tangent_not_solved:
      return "tangent_not_solved";
    case continuation_stop_reason::cancellation_flag_raised:
      return "cancellation_flag_raised";
    case continuation_stop_reason::monitor_requested_stop:
      return "monitor_requested_stop";
  }
  return "unknown";
}

constexpr std::string_view describe(continuation_stop_reason value) {
  switch (value) {
    case continuation_stop_reason::parameter_bound_reached:
      return "Completed: the branch reached a parameter bound; the last point was solved with the parameter on it.";
    case continuation_stop_reason::point_budget_spent:
      return "Completed: point_budget points were computed.";
    case continuation_stop_reason::step_below_minimum:
      return "Cannot proceed: the step failed (corrector, tangent or tangent-angle test) even at the minimum step. "
             "In natural-parameter continuation this is what a fold (turning point) looks like: the branch turns "
             "back, no solution exists beyond it and R_u is singular at it; use pseudo-arclength continuation to "
             "follow it around.";
    case continuation_stop_reason::start_point_not_converged:
      return "Cannot proceed: the Newton-Krylov solve at the start parameter did not converge "
             "(last_corrector_reason says why).";
    case continuation_stop_reason::tangent_not_solved:
      return "Cannot proceed: GMRES did not solve the tangent system to maximum_tangent_residual, even at the "
             "minimum step.";
    case continuation_stop_reason::cancellation_flag_raised:
      return "Interrupted: the cancellation flag was raised.";
    case continuation_stop_reason::monitor_requested_stop:
      return "Interrupted: the per-point monitor asked to stop.";
  }
  return "Unknown stop reason.";
}

inline std::ostream& operator<<(std::ostream& stream, continuation_stop_reason value) { return stream << name(value); }

enum class point_kind {
  start,            ///< solved at the start parameter
  step,             ///< an accepted continuation step
  fold,             ///< a located fold (also listed in continuation_report::folds)
  parameter_bound,  ///< the last point, solved with λ fixed on a bound
};

/// One point of the branch. Norms are Euclidean; counts are those spent on
/// this point (corrector solves, rejected attempts and tangent solve).
struct continuation_point {
  point_kind kind = point_kind::step;
  int index = 0;                   ///< position in continuation_report::points (folds: the point after the fold)
  double parameter = 0.0;          ///< λ
  double state_norm = 0.0;         ///< ‖u‖₂ (the monitor sees u itself, for other norms)
  double arclength = 0.0;          ///< sum of the accepted steps from the start (Δs, or |Δλ| in natural mode)
  double step = 0.0;               ///< the step that reached this point (0 at the start)
  double tangent_parameter = 0.0;  ///< t_λ, λ-component of the unit tangent (metric above)
  bool fold_detected = false;      ///< t_λ changed sign between the previous point and this one
  int newton_steps = 0;            ///< corrector Newton steps (accepted solve only)
  /// What the step control read from the accepted corrector (continuation_settings::adaptation):
  double corrector_contraction = 0.0;  ///< κ, nonlinear contraction of its first Newton step
  double corrector_distance = 0.0;     ///< δ, distance of the point from its predictor (arclength metric)
  double tangent_angle = 0.0;          ///< α, angle between this point's unit tangent and the previous one (radians)
  int rejected_steps = 0;              ///< failed corrector attempts before this point
  std::int64_t linear_iterations = 0;  ///< GMRES iterations, all solves for this point
  std::int64_t residual_evaluations = 0;    ///< calls of R, all solves for this point (J·v ones included)
  stop_reason_if_stopped corrector_reason;  ///< why the accepted corrector solve stopped
};

/// A fold (turning point) between two branch points.
struct fold_record {
  continuation_point point;     ///< kind == point_kind::fold; parameter is λ at the fold
  bool located = false;         ///< the fold_parameter_tolerance test was met
  int location_iterations = 0;  ///< corrector solves spent locating it
};

struct continuation_report {
  continuation_stop_reason reason = continuation_stop_reason::point_budget_spent;
  std::string_view message() const { return describe(reason); }
  continuation_status status() const { return status_of(reason); }
  /// True for the normal endings (a parameter bound or the point budget reached).
  bool completed() const { return status() == continuation_status::completed; }

  std::vector<continuation_point> points;  ///< start, branch points, and the bound point (not folds)
  std::vector<fold_record> folds;
  int newton_steps = 0;  ///< all corrector solves, rejected ones included
  int rejected_steps = 0;
  std::int64_t linear_iterations = 0;
  std::int64_t residual_evaluations = 0;
  /// Why the last corrector solve stopped (explains step_below_minimum or start_point_not_converged).
  stop_reason_if_stopped last_corrector_reason;
  /// ‖[R; N]‖ at which solves after the start point stopped (see continuation_settings::corrector).
  double corrector_tolerance = 0.0;
  double wall_seconds = 0.0;
};

/// The per-point monitor of continuation_solver::follow_branch is any
/// callable monitor(const continuation_point& point, const vector_type& state)
/// returning void or monitor_decision (stop_now ends the run).
/// The default per-point monitor: observes nothing.
struct null_point_monitor {
  template <class Vector>
  void operator()(const continuation_point& /*point*/, const Vector& /*state*/) const {}
};

namespace detail {
template <class PointMonitor, class Vector>
monitor_decision notify_point(PointMonitor& monitor, const continuation_point& point, const Vector& state) {
  static_assert(std::is_invocable_v<PointMonitor&, const continuation_point&, const Vector&>,
                "nkit: a continuation monitor must be callable as monitor(const continuation_point&, const "
                "vector_type& state), returning void or monitor_decision");
  if constexpr (std::is_void_v<std::invoke_result_t<PointMonitor&, const continuation_point&, const Vector&>>) {
    monitor(point, state);
    return monitor_decision::keep_going;
  } else {
    return to_decision(monitor(point, state));
  }
}
}  // namespace detail

}  // namespace nkit

#endif  // NKIT_CONTINUATION_CONTINUATION_SETTINGS_HPP
