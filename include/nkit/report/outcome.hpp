#ifndef NKIT_REPORT_OUTCOME_HPP
#define NKIT_REPORT_OUTCOME_HPP

/// \file report/outcome.hpp
/// How a solve ends, in nkit's own words: a run is running or stopped; a
/// stopped run has a stop reason, and every reason belongs to one of four
/// statuses — converged, budget spent, cannot proceed, interrupted. Expected
/// numerical endings are these values, never exceptions; each reason has one
/// sentence from describe(). When the step control gives up
/// (no_acceptable_step), solve_report::globalization_at_stop says which one.

#include <optional>
#include <ostream>
#include <string_view>

#include "../core/globalization_strategy.hpp"

namespace nkit {

/// Whether a caller-driven run can take another step (run_handle::advance()).
enum class run_state { running, stopped };

/// The broad class of a stop reason.
enum class solve_status {
  converged,       ///< a convergence test was met
  budget_spent,    ///< a budget the caller set ran out first
  cannot_proceed,  ///< the method found no acceptable way forward, or stopped making progress
  interrupted      ///< the caller stopped it: cancellation flag or a monitor
};

/// Why a solve stopped. Each reason belongs to one status (status_of()).
enum class stop_reason {
  // converged
  absolute_tolerance_met,  ///< ‖R(u)‖ <= absolute_tolerance
  relative_tolerance_met,  ///< ‖R(u)‖ <= relative_tolerance · ‖R(u0)‖
  // budget_spent
  newton_step_budget_spent,          ///< newton_step_budget steps taken
  residual_evaluation_budget_spent,  ///< residual_evaluation_budget calls of the residual made
  linear_iteration_budget_spent,     ///< linear_iteration_budget GMRES iterations used
  wall_time_budget_spent,            ///< wall_time_budget_seconds passed
  iteration_budget_spent,            ///< a fixed-point solver's iteration_budget spent (fixed_point/)
  // cannot_proceed
  no_acceptable_step,                ///< the step control gave up (solve_report::globalization_at_stop)
  no_newton_direction,               ///< GMRES could not reduce the linear residual at all
  preconditioner_setup_failed,       ///< the preconditioner's setup and its fallback failed
  preconditioner_output_not_finite,  ///< the preconditioner returned NaN or Inf
  non_finite_initial_residual,       ///< R(u0) has NaN or Inf entries; no step was taken
  residual_stagnated,                ///< no significant progress within stagnation_window steps
  negligible_step,                   ///< an accepted step was shorter than negligible_step_size
  // interrupted
  cancellation_flag_raised,  ///< the cancellation flag was raised
  monitor_requested_stop     ///< a monitor returned monitor_decision::stop_now
};

constexpr solve_status status_of(stop_reason reason) {
  switch (reason) {
    case stop_reason::absolute_tolerance_met:
    case stop_reason::relative_tolerance_met:
      return solve_status::converged;
    case stop_reason::newton_step_budget_spent:
    case stop_reason::residual_evaluation_budget_spent:
    case stop_reason::linear_iteration_budget_spent:
    case stop_reason::wall_time_budget_spent:
    case stop_reason::iteration_budget_spent:
      return solve_status::budget_spent;
    case stop_reason::cancellation_flag_raised:
    case stop_reason::monitor_requested_stop:
      return solve_status::interrupted;
    default:
      return solve_status::cannot_proceed;
  }
}

/// True for the reasons of status converged.
constexpr bool is_converged(stop_reason reason) { return status_of(reason) == solve_status::converged; }

/// A stop reason once a run has stopped, nothing while it runs: the optional
/// reason of reports (Reason: stop_reason, or another run's reason enum).
/// Both members are always initialised (a std::optional<stop_reason> member
/// trips GCC's -Wmaybe-uninitialized in ordinary user code such as a report
/// declared, then assigned in a lambda).
template <class Reason>
class reason_if_stopped {
 public:
  constexpr reason_if_stopped() = default;
  constexpr reason_if_stopped(Reason reason) : m_reason(reason), m_stopped(true) {}  // NOLINT: implicit on purpose
  constexpr reason_if_stopped(std::nullopt_t) {}                                     // NOLINT: implicit on purpose
  constexpr bool has_value() const { return m_stopped; }
  constexpr explicit operator bool() const { return m_stopped; }
  /// The reason; only meaningful when has_value().
  constexpr Reason operator*() const { return m_reason; }
  constexpr std::optional<Reason> optional() const {
    return m_stopped ? std::optional<Reason>(m_reason) : std::nullopt;
  }
  friend constexpr bool operator==(reason_if_stopped a, reason_if_stopped b) {
    return a.m_stopped == b.m_stopped && (!a.m_stopped || a.m_reason == b.m_reason);
  }
  friend constexpr bool operator!=(reason_if_stopped a, reason_if_stopped b) { return !(a == b); }
  friend constexpr bool operator==(reason_if_stopped a, Reason b) { return a.m_stopped && a.m_reason == b; }
  friend constexpr bool operator!=(reason_if_stopped a, Reason b) { return !(a == b); }
  friend constexpr bool operator==(Reason a, reason_if_stopped b) { return b == a; }
  friend constexpr bool operator!=(Reason a, reason_if_stopped b) { return !(b == a); }

 private:
  Reason m_reason{};
  bool m_stopped = false;
};

using stop_reason_if_stopped = reason_if_stopped<stop_reason>;

/// False while the run goes on (no reason yet).
constexpr bool is_converged(stop_reason_if_stopped reason) { return reason && is_converged(*reason); }

constexpr std::string_view name(run_state state) { return state == run_state::running ? "running" : "stopped"; }

constexpr std::string_view name(solve_status status) {
  switch (status) {
    case solve_status::converged:
      return "converged";
    case solve_status::budget_spent:
      return "budget_spent";
    case solve_status::cannot_proceed:
      return "cannot_proceed";
    case solve_status::interrupted:
      return "interrupted";
  }
  return "unknown";
}

/// Identifier-style name, e.g. "relative_tolerance_met".
constexpr std::string_view name(stop_reason reason) {
  switch (reason) {
    case stop_reason::absolute_tolerance_met:
      return "absolute_tolerance_met";
    case stop_reason::relative_tolerance_met:
      return "relative_tolerance_met";
    case stop_reason::newton_step_budget_spent:
      return "newton_step_budget_spent";
    case stop_reason::residual_evaluation_budget_spent:
      return "residual_evaluation_budget_spent";
    case stop_reason::linear_iteration_budget_spent:
      return "linear_iteration_budget_spent";
    case stop_reason::wall_time_budget_spent:
      return "wall_time_budget_spent";
    case stop_reason::iteration_budget_spent:
      return "iteration_budget_spent";
    case stop_reason::no_acceptable_step:
      return "no_acceptable_step";
    case stop_reason::no_newton_direction:
      return "no_newton_direction";
    case stop_reason::preconditioner_setup_failed:
      return "preconditioner_setup_failed";
    case stop_reason::preconditioner_output_not_finite:
      return "preconditioner_output_not_finite";
    case stop_reason::non_finite_initial_residual:
      return "non_finite_initial_residual";
    case stop_reason::residual_stagnated:
      return "residual_stagnated";
    case stop_reason::negligible_step:
      return "negligible_step";
    case stop_reason::cancellation_flag_raised:
      return "cancellation_flag_raised";
    case stop_reason::monitor_requested_stop:
      return "monitor_requested_stop";
  }
  return "unknown";
}

/// The name of a reason that may not be there yet ("running" while the run goes on).
constexpr std::string_view name(stop_reason_if_stopped reason) {
  return reason ? name(*reason) : std::string_view("running");
}

/// One sentence per reason; it starts with the status in words.
constexpr std::string_view describe(stop_reason reason) {
  switch (reason) {
    case stop_reason::absolute_tolerance_met:
      return "Converged: the residual norm fell to absolute_tolerance or below.";
    case stop_reason::relative_tolerance_met:
      return "Converged: the residual norm fell to relative_tolerance times the initial residual norm or below.";
    case stop_reason::newton_step_budget_spent:
      return "Budget spent: newton_step_budget Newton steps were taken without converging.";
    case stop_reason::residual_evaluation_budget_spent:
      return "Budget spent: the residual was evaluated residual_evaluation_budget times without converging "
             "(evaluations inside J*v products and Jacobian assembly count).";
    case stop_reason::linear_iteration_budget_spent:
      return "Budget spent: GMRES used linear_iteration_budget iterations over the solve without converging.";
    case stop_reason::wall_time_budget_spent:
      return "Budget spent: wall_time_budget_seconds of wall-clock time passed without converging.";
    case stop_reason::iteration_budget_spent:
      return "Budget spent: iteration_budget fixed-point iterations were taken without converging.";
    case stop_reason::no_acceptable_step:
      return "Cannot proceed: the step control found no acceptable step (globalization_at_stop says which); the "
             "iterate may be near a local minimum of the residual norm that is not a root, or the Newton direction "
             "may be inaccurate.";
    case stop_reason::no_newton_direction:
      return "Cannot proceed: GMRES could not reduce the linear residual, so there was no Newton direction (an "
             "inaccurate J*v product or a poor preconditioner is the usual cause; with bounds or is_admissible, no "
             "admissible J*v perturbation may have been found).";
    case stop_reason::preconditioner_setup_failed:
      return "Cannot proceed: the preconditioner could not be set up, and its fallback failed as well.";
    case stop_reason::preconditioner_output_not_finite:
      return "Cannot proceed: the preconditioner returned NaN or Inf entries, so GMRES found no Newton direction (a "
             "zero or tiny pivot in its factors, or a setup from a non-finite Jacobian, is the usual cause).";
    case stop_reason::non_finite_initial_residual:
      return "Cannot proceed: the residual at the initial guess contains NaN or Inf; no step was taken.";
    case stop_reason::residual_stagnated:
      return "Cannot proceed: within stagnation_window Newton steps the residual norm never fell below "
             "stagnation_factor times its last reference value.";
    case stop_reason::negligible_step:
      return "Cannot proceed: an accepted step was shorter than negligible_step_size times (1 + |u|) while the "
             "residual was still above tolerance.";
    case stop_reason::cancellation_flag_raised:
      return "Interrupted: the cancellation flag was raised.";
    case stop_reason::monitor_requested_stop:
      return "Interrupted: a monitor asked the solve to stop.";
  }
  return "Unknown stop reason.";
}

/// describe(reason), made specific for no_acceptable_step: which step control gave up.
constexpr std::string_view describe(stop_reason reason, globalization_strategy strategy) {
  if (reason != stop_reason::no_acceptable_step) return describe(reason);
  switch (strategy) {
    case globalization_strategy::line_search:
      return "Cannot proceed: the line search found no step length giving sufficient decrease of the residual norm "
             "within maximum_rejected_trials trials.";
    case globalization_strategy::full_step:
      return "Cannot proceed: the full step and every shortened retry gave a non-finite or inadmissible residual.";
    case globalization_strategy::trust_region:
      return "Cannot proceed: the trust-region radius shrank below minimum_radius without an acceptable step.";
    case globalization_strategy::pseudo_transient:
      return "Cannot proceed: the pseudo-time step shrank below minimum_step without an acceptable step.";
  }
  return describe(reason);
}

namespace detail {
/// Thrown internally to unwind from deep inside a step (GMRES, a line
/// search, an Anderson update) when a budget, the time limit or the
/// cancellation flag stops a solve; the run handle (newton/run_handle.hpp)
/// ends the run with its reason. Never escapes a solver.
struct stop_signal {
  stop_reason reason;
};
}  // namespace detail

inline std::ostream& operator<<(std::ostream& stream, run_state state) { return stream << name(state); }
inline std::ostream& operator<<(std::ostream& stream, solve_status status) { return stream << name(status); }
inline std::ostream& operator<<(std::ostream& stream, stop_reason reason) { return stream << name(reason); }

}  // namespace nkit

#endif  // NKIT_REPORT_OUTCOME_HPP
