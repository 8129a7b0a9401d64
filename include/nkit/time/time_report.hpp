#ifndef NKIT_TIME_TIME_REPORT_HPP
#define NKIT_TIME_TIME_REPORT_HPP

/// \file time_report.hpp
/// What an implicit time integration returns: how it ended, event counts,
/// and one record per attempted step (also handed to the monitor).

#include <cstdint>
#include <limits>
#include <string_view>
#include <vector>

namespace nkit {

/// How an integration ended.
enum class integration_outcome {
  in_progress,                  ///< not finished yet
  reached_end_time,             ///< the state is at the requested end time
  stopped_by_monitor,           ///< the monitor returned monitor_decision::stop_now
  attempt_budget_spent,         ///< max_attempted_steps reached
  consecutive_rejection_limit,  ///< too many failed attempts in a row
  step_size_below_minimum,      ///< the step would have fallen below step_control.minimum_step
  wall_time_limit,              ///< wall_time_limit_seconds passed
  cancelled                     ///< the cancellation flag was raised
};

constexpr std::string_view name(integration_outcome value) {
  switch (value) {
    case integration_outcome::in_progress:
      return "in_progress";
    case integration_outcome::reached_end_time:
      return "reached_end_time";
    case integration_outcome::stopped_by_monitor:
      return "stopped_by_monitor";
    case integration_outcome::attempt_budget_spent:
      return "attempt_budget_spent";
    case integration_outcome::consecutive_rejection_limit:
      return "consecutive_rejection_limit";
    case integration_outcome::step_size_below_minimum:
      return "step_size_below_minimum";
    case integration_outcome::wall_time_limit:
      return "wall_time_limit";
    case integration_outcome::cancelled:
      return "cancelled";
  }
  return "unknown";
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
  double largest_contraction = 0.0;  ///< largest Newton contraction rate θ among the stages
  double next_step_size = 0.0;       ///< the Δt proposed for the next attempt
  double elapsed_seconds = 0.0;      ///< since the integration began
};

struct integration_report {
  integration_outcome result = integration_outcome::in_progress;
  bool reached_end() const { return result == integration_outcome::reached_end_time; }

  double final_time = 0.0;  ///< time of the returned state (the last accepted step)
  std::int64_t accepted_steps = 0;
  std::int64_t error_test_failures = 0;
  std::int64_t stage_solve_failures = 0;
  std::int64_t stage_solves = 0;
  std::int64_t newton_steps = 0;
  std::int64_t linear_iterations = 0;
  std::int64_t rate_evaluations = 0;
  std::int64_t preconditioner_setups = 0;
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
