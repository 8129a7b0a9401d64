#ifndef NKIT_TIME_TIME_REPORT_HPP
#define NKIT_TIME_TIME_REPORT_HPP

/// \file time/time_report.hpp
/// What an implicit time integration returns: how it ended, event counts,
/// and one record per attempted step (also handed to the monitor).

#include <cstdint>
#include <limits>
#include <string_view>
#include <vector>

#include "../report/outcome.hpp"

namespace nkit {

/// The broad class of an integration's stop reason (the pattern of
/// solve_status, report/outcome.hpp).
enum class integration_status {
  completed,       ///< the state is at the requested end time
  budget_spent,    ///< a budget the caller set ran out first
  cannot_proceed,  ///< the step control found no acceptable step
  interrupted      ///< the cancellation flag or the monitor stopped it
};

/// Why an integration stopped.
enum class integration_stop_reason {
  end_time_reached,                 ///< completed
  attempted_step_budget_spent,      ///< attempted_step_budget attempts made
  wall_time_budget_spent,           ///< wall_time_budget_seconds passed
  too_many_consecutive_rejections,  ///< maximum_consecutive_rejections attempts in a row failed
  step_size_below_minimum,          ///< the step would have fallen below step_control.minimum_step
  monitor_requested_stop,           ///< the monitor returned monitor_decision::stop_now
  cancellation_flag_raised          ///< the cancellation flag was raised
};

constexpr integration_status status_of(integration_stop_reason reason) {
  switch (reason) {
    case integration_stop_reason::end_time_reached:
      return integration_status::completed;
    case integration_stop_reason::attempted_step_budget_spent:
    case integration_stop_reason::wall_time_budget_spent:
      return integration_status::budget_spent;
    case integration_stop_reason::monitor_requested_stop:
    case integration_stop_reason::cancellation_flag_raised:
      return integration_status::interrupted;
    default:
      return integration_status::cannot_proceed;
  }
}

constexpr std::string_view name(integration_status value) {
  switch (value) {
    case integration_status::completed:
      return "completed";
    case integration_status::budget_spent:
      return "budget_spent";
    case integration_status::cannot_proceed:
      return "cannot_proceed";
    case integration_status::interrupted:
      return "interrupted";
  }
  return "unknown";
}

constexpr std::string_view name(integration_stop_reason value) {
  switch (value) {
    case integration_stop_reason::end_time_reached:
      return "end_time_reached";
    case integration_stop_reason::attempted_step_budget_spent:
      return "attempted_step_budget_spent";
    case integration_stop_reason::wall_time_budget_spent:
      return "wall_time_budget_spent";
    case integration_stop_reason::too_many_consecutive_rejections:
      return "too_many_consecutive_rejections";
    case integration_stop_reason::step_size_below_minimum:
      return "step_size_below_minimum";
    case integration_stop_reason::monitor_requested_stop:
      return "monitor_requested_stop";
    case integration_stop_reason::cancellation_flag_raised:
      return "cancellation_flag_raised";
  }
  return "unknown";
}

/// The name of a reason that may not be there yet ("running").
constexpr std::string_view name(reason_if_stopped<integration_stop_reason> reason) {
  return reason ? name(*reason) : std::string_view("running");
}

constexpr std::string_view describe(integration_stop_reason value) {
  switch (value) {
    case integration_stop_reason::end_time_reached:
      return "Completed: the state is at the requested end time.";
    case integration_stop_reason::attempted_step_budget_spent:
      return "Budget spent: attempted_step_budget step attempts were made before the end time.";
    case integration_stop_reason::wall_time_budget_spent:
      return "Budget spent: wall_time_budget_seconds passed before the end time.";
    case integration_stop_reason::too_many_consecutive_rejections:
      return "Cannot proceed: maximum_consecutive_rejections step attempts in a row failed the error test or their "
             "stage solves.";
    case integration_stop_reason::step_size_below_minimum:
      return "Cannot proceed: the step size would have fallen below step_control.minimum_step.";
    case integration_stop_reason::monitor_requested_stop:
      return "Interrupted: the monitor asked the integration to stop.";
    case integration_stop_reason::cancellation_flag_raised:
      return "Interrupted: the cancellation flag was raised.";
  }
  return "Unknown stop reason.";
}

/// Why an attempted step was not accepted.
enum class step_rejection { none, error_test, stage_solve_failed };

constexpr std::string_view name(step_rejection value) {
  switch (value) {
    case step_rejection::none:
      return "none";
    case step_rejection::error_test:
      return "error_test";
    case step_rejection::stage_solve_failed:
      return "stage_solve_failed";
  }
  return "unknown";
}

/// One attempted step. Counts are this attempt's own (all its stages).
struct time_step_record {
  std::int64_t attempt = 0;         ///< 1-based count of attempts in this integration
  std::int64_t accepted_steps = 0;  ///< accepted steps so far, this one included when accepted
  double start_time = 0.0;          ///< t_n
  double step_size = 0.0;           ///< the Δt attempted
  int order = 0;                    ///< order of the formula used (BDF order, or the ESDIRK's 2)
  bool accepted = false;
  step_rejection rejection = step_rejection::none;
  /// Weighted RMS norm of the local error estimate (<= 1 passes); NaN when no stage solve finished.
  double error_norm = 0.0;
  int stage_solves = 0;
  int newton_steps = 0;
  std::int64_t linear_iterations = 0;
  std::int64_t rate_evaluations = 0;  ///< calls of the user's f(t, u), J·v differences included
  std::int64_t preconditioner_setups = 0;
  std::int64_t recycled_space_refreshes = 0;  ///< with recycling GMRES (solve_report has the definition)
  std::int64_t true_residual_mismatches = 0;
  double largest_contraction = 0.0;  ///< largest Newton contraction rate θ among the stages
  double next_step_size = 0.0;       ///< the Δt proposed for the next attempt
  double elapsed_seconds = 0.0;      ///< since the integration began
};

struct integration_report {
  /// Why the integration stopped (empty only while it runs).
  reason_if_stopped<integration_stop_reason> reason;
  bool reached_end() const { return reason == integration_stop_reason::end_time_reached; }
  integration_status status() const { return reason ? status_of(*reason) : integration_status::interrupted; }
  std::string_view message() const { return reason ? describe(*reason) : std::string_view("Still running."); }

  double final_time = 0.0;  ///< time of the returned state (the last accepted step)
  std::int64_t accepted_steps = 0;
  std::int64_t error_test_failures = 0;
  std::int64_t stage_solve_failures = 0;
  std::int64_t stage_solves = 0;
  std::int64_t newton_steps = 0;
  std::int64_t linear_iterations = 0;
  std::int64_t rate_evaluations = 0;
  std::int64_t preconditioner_setups = 0;
  std::int64_t recycled_space_refreshes = 0;  ///< with recycling GMRES (solve_report has the definition)
  std::int64_t true_residual_mismatches = 0;
  double smallest_accepted_step = std::numeric_limits<double>::infinity();
  double largest_accepted_step = 0.0;
  double wall_seconds = 0.0;
  /// Median wall time of one evaluation of f(t, u) (over the last 64).
  double median_rate_seconds = 0.0;
  /// Wall time in units of one evaluation of f: the machine-independent cost.
  double work_units() const { return median_rate_seconds > 0.0 ? wall_seconds / median_rate_seconds : 0.0; }
  std::int64_t rejected_steps() const { return error_test_failures + stage_solve_failures; }

  std::vector<time_step_record> history;
  std::int64_t records_not_stored = 0;  ///< attempts beyond history_capacity
};

}  // namespace nkit

#endif  // NKIT_TIME_TIME_REPORT_HPP
