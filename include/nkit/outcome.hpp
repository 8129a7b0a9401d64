#ifndef NKIT_OUTCOME_HPP
#define NKIT_OUTCOME_HPP

/// \file outcome.hpp
/// Why a Newton solve stopped. Expected numerical endings are values of
/// `outcome`, never exceptions; each has one sentence from describe().

#include <ostream>
#include <string_view>

namespace nkit {

enum class outcome {
  in_progress,                  ///< the caller-driven loop has not stopped yet
  converged_absolute_residual,  ///< ‖R(u)‖ <= absolute_tolerance
  converged_relative_residual,  ///< ‖R(u)‖ <= relative_tolerance · ‖R(u0)‖
  step_below_tolerance,         ///< accepted step shorter than step_tolerance; residual not small
  newton_step_limit,            ///< max_newton_steps reached
  residual_evaluation_budget,   ///< residual_evaluation_budget spent
  linear_iteration_budget,      ///< linear_iteration_budget spent
  wall_time_limit,              ///< wall_time_limit_seconds passed
  stagnated,                    ///< no significant progress (stagnation_factor) within stagnation_window steps
  line_search_failed,           ///< no acceptable step length within max_backtracks
  linear_solver_no_progress,    ///< GMRES did not reduce the linear residual at all
  non_finite_initial_residual,  ///< R(u0) has NaN or Inf entries; no step was taken
  preconditioner_failed,        ///< preconditioner setup failed and its fallback failed too
  trust_region_collapsed,       ///< trust-region radius fell below its minimum
  pseudo_time_step_collapsed,   ///< pseudo-transient step fell below its minimum
  cancelled,                    ///< the cancellation flag was raised
  stopped_by_monitor,           ///< a monitor returned monitor_decision::stop_now
  iteration_limit               ///< a fixed-point solver's max_iterations reached (fixed_point/anderson_solver.hpp)
};

/// True for the two converged outcomes.
constexpr bool is_converged(outcome value) {
  return value == outcome::converged_absolute_residual || value == outcome::converged_relative_residual;
}

/// Identifier-style name, e.g. "converged_relative_residual".
constexpr std::string_view name(outcome value) {
  switch (value) {
    case outcome::in_progress:
      return "in_progress";
    case outcome::converged_absolute_residual:
      return "converged_absolute_residual";
    case outcome::converged_relative_residual:
      return "converged_relative_residual";
    case outcome::step_below_tolerance:
      return "step_below_tolerance";
    case outcome::newton_step_limit:
      return "newton_step_limit";
    case outcome::residual_evaluation_budget:
      return "residual_evaluation_budget";
    case outcome::linear_iteration_budget:
      return "linear_iteration_budget";
    case outcome::wall_time_limit:
      return "wall_time_limit";
    case outcome::stagnated:
      return "stagnated";
    case outcome::line_search_failed:
      return "line_search_failed";
    case outcome::linear_solver_no_progress:
      return "linear_solver_no_progress";
    case outcome::non_finite_initial_residual:
      return "non_finite_initial_residual";
    case outcome::preconditioner_failed:
      return "preconditioner_failed";
    case outcome::trust_region_collapsed:
      return "trust_region_collapsed";
    case outcome::pseudo_time_step_collapsed:
      return "pseudo_time_step_collapsed";
    case outcome::cancelled:
      return "cancelled";
    case outcome::stopped_by_monitor:
      return "stopped_by_monitor";
    case outcome::iteration_limit:
      return "iteration_limit";
  }
  return "unknown";
}

/// One human-readable sentence per outcome.
constexpr std::string_view describe(outcome value) {
  switch (value) {
    case outcome::in_progress:
      return "The solve has not finished yet.";
    case outcome::converged_absolute_residual:
      return "Converged: the residual norm fell below the absolute tolerance.";
    case outcome::converged_relative_residual:
      return "Converged: the residual norm fell below the relative tolerance times the initial residual norm.";
    case outcome::step_below_tolerance:
      return "Stopped: the Newton step became shorter than the step tolerance while the residual was still above "
             "tolerance.";
    case outcome::newton_step_limit:
      return "Stopped: the Newton-step limit was reached before convergence.";
    case outcome::residual_evaluation_budget:
      return "Stopped: the residual-evaluation budget was spent before convergence.";
    case outcome::linear_iteration_budget:
      return "Stopped: the linear-iteration budget was spent before convergence.";
    case outcome::wall_time_limit:
      return "Stopped: the wall-clock time limit passed before convergence.";
    case outcome::stagnated:
      return "Stopped: the residual norm made no significant progress within the stagnation window.";
    case outcome::line_search_failed:
      return "Stopped: the line search found no step length giving sufficient decrease of the residual norm.";
    case outcome::linear_solver_no_progress:
      return "Stopped: GMRES could not reduce the linear residual, so no Newton direction was available (a nearly "
             "singular preconditioner or an inaccurate J*v product is the usual cause).";
    case outcome::non_finite_initial_residual:
      return "Stopped: the residual at the initial guess contains NaN or Inf; no step was taken.";
    case outcome::preconditioner_failed:
      return "Stopped: the preconditioner could not be set up, and its fallback failed as well.";
    case outcome::trust_region_collapsed:
      return "Stopped: the trust-region radius shrank below its minimum without an acceptable step.";
    case outcome::pseudo_time_step_collapsed:
      return "Stopped: the pseudo-time step shrank below its minimum without an acceptable step.";
    case outcome::cancelled:
      return "Stopped: the cancellation flag was raised.";
    case outcome::stopped_by_monitor:
      return "Stopped: a monitor asked the solve to stop.";
    case outcome::iteration_limit:
      return "Stopped: the iteration limit of the fixed-point solver was reached before convergence.";
  }
  return "Unknown outcome.";
}

inline std::ostream& operator<<(std::ostream& stream, outcome value) { return stream << name(value); }

}  // namespace nkit

#endif  // NKIT_OUTCOME_HPP
