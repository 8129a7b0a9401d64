#ifndef NKIT_MULTILEVEL_GRID_SEQUENCING_REPORT_HPP
#define NKIT_MULTILEVEL_GRID_SEQUENCING_REPORT_HPP

/// \file multilevel/grid_sequencing_report.hpp
/// What a grid-sequencing solve returns: how it ended, one record per level
/// solved (coarse → fine; the finest level's figures are the ones that
/// count), totals, and a table of it for people. Norms are those of each
/// level's Newton solve (Euclidean, of the scaled residual when the level's
/// solver has residual scaling).

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <limits>
#include <optional>
#include <ostream>
#include <stdexcept>
#include <string_view>
#include <vector>

#include "../report/outcome.hpp"
#include "../report/report.hpp"

namespace nkit {

/// One level of a grid-sequencing solve.
struct grid_level_record {
  int level = 0;                    ///< 0 = coarsest
  std::int64_t unknowns = 0;        ///< length of the level's state
  double relative_tolerance = 0.0;  ///< τ_ℓ of the level tolerance rule (grid_sequencing_settings.hpp)
  /// ‖R_ℓ(ū_ℓ)‖ at the given state restricted to this level (NaN when not evaluated).
  double reference_residual_norm = std::numeric_limits<double>::quiet_NaN();
  /// What counted as converged: max(absolute_tolerance, τ_ℓ ‖R_ℓ(ū_ℓ)‖).
  double target_residual_norm = 0.0;
  /// ‖R_ℓ‖ where the level's Newton solve started (the interpolated solution of
  /// the level before, or ū_0 on the coarsest) and where it ended (when the
  /// report says returned_given_state, the finest u holds the given state
  /// instead, whose norm is reference_residual_norm).
  double initial_residual_norm = 0.0;
  double final_residual_norm = 0.0;
  int newton_steps = 0;
  std::int64_t linear_iterations = 0;
  /// Calls of the level's residual: the Newton solve's (J·v ones included)
  /// plus the one at ū_ℓ for the reference norm.
  std::int64_t residual_evaluations = 0;
  /// Wall time of the level: reference evaluation, interpolation into the
  /// level and the Newton solve.
  double wall_seconds = 0.0;
  /// Of which the interpolation from the level before.
  double transfer_seconds = 0.0;
  /// Why the level's Newton solve stopped (empty when it did not run).
  stop_reason_if_stopped reason;
  bool converged() const { return is_converged(reason); }
  /// The level's full Newton report (history, phases, workspace).
  solve_report newton;
};

struct grid_sequencing_report {
  /// Why the sequence stopped: the finest level's stop reason, or that of the
  /// level that ended the sequence early (interrupted, wall time), or
  /// wall_time_budget_spent when no time was left for the next level.
  stop_reason_if_stopped reason;
  bool converged() const { return is_converged(reason); }
  std::optional<solve_status> status() const {
    return reason ? std::optional<solve_status>(status_of(*reason)) : std::nullopt;
  }
  /// Whether the finest level was solved (else the sequence ended earlier).
  bool reached_finest_level = false;
  /// The caller's state was handed back unchanged: the sequence ended before
  /// the finest level, or the finest level's best iterate had no smaller
  /// residual than the given state (or the given state already converged).
  bool returned_given_state = false;
  /// One record per level solved, coarse → fine.
  std::vector<grid_level_record> levels;
  /// Wall time of the whole solve (restrictions, every level).
  double wall_seconds = 0.0;

  /// The finest level's record; throws std::logic_error when it was not reached.
  const grid_level_record& finest() const {
    if (!reached_finest_level || levels.empty()) {
      throw std::logic_error("nkit: grid_sequencing_report::finest(): the sequence ended before the finest level");
    }
    return levels.back();
  }
  int total_newton_steps() const {
    int total = 0;
    for (const grid_level_record& record : levels) total += record.newton_steps;
    return total;
  }
  std::int64_t total_linear_iterations() const {
    std::int64_t total = 0;
    for (const grid_level_record& record : levels) total += record.linear_iterations;
    return total;
  }
  std::int64_t total_residual_evaluations() const {
    std::int64_t total = 0;
    for (const grid_level_record& record : levels) total += record.residual_evaluations;
    return total;
  }
  /// Median seconds of one residual evaluation on the finest level (0 when it was not timed).
  double finest_residual_seconds() const {
    return reached_finest_level && !levels.empty() ? levels.back().newton.median_residual_seconds : 0.0;
  }
  /// Total wall time in units of one finest-level residual evaluation (0 when not timed).
  double work_units() const {
    const double unit = finest_residual_seconds();
    return unit > 0.0 ? wall_seconds / unit : 0.0;
  }
};

/// Prints one row per level (unknowns, Newton steps, GMRES iterations,
/// residual evaluations, initial, target and final residual norm, seconds,
/// stop reason), then the finest level's figures and the totals in one line
/// each. Output goes only to `os`.
inline void print_grid_sequencing_table(std::ostream& os, const grid_sequencing_report& report) {
  char line[400];
  os << " level |   unknowns | Newton steps | GMRES iterations | residual evaluations | initial residual | "
        "target residual |  final residual |   seconds | stop reason\n"
     << "-------+------------+--------------+------------------+----------------------+------------------+-"
        "----------------+-----------------+-----------+------------\n";
  for (const grid_level_record& r : report.levels) {
    std::snprintf(line, sizeof line, "%6d | %10lld | %12d | %16lld | %20lld | %16.6e | %15.6e | %15.6e | %9.4f | ",
                  r.level, static_cast<long long>(r.unknowns), r.newton_steps,
                  static_cast<long long>(r.linear_iterations), static_cast<long long>(r.residual_evaluations),
                  r.initial_residual_norm, r.target_residual_norm, r.final_residual_norm, r.wall_seconds);
    os << line << name(r.reason) << '\n';
  }
  if (report.reached_finest_level && !report.levels.empty()) {
    const grid_level_record& f = report.levels.back();
    std::snprintf(line, sizeof line,
                  "finest level %d: %d Newton steps, %lld GMRES iterations, residual %.3e -> %.3e (target %.3e)\n",
                  f.level, f.newton_steps, static_cast<long long>(f.linear_iterations), f.initial_residual_norm,
                  f.final_residual_norm, f.target_residual_norm);
    os << line;
  } else {
    os << "finest level not reached\n";
  }
  std::snprintf(line, sizeof line,
                "all levels: %d Newton steps, %lld GMRES iterations, %lld residual evaluations, %.4f s = %.1f work "
                "units of the finest level; ",
                report.total_newton_steps(), static_cast<long long>(report.total_linear_iterations()),
                static_cast<long long>(report.total_residual_evaluations()), report.wall_seconds, report.work_units());
  os << line << name(report.reason) << (report.returned_given_state ? " (given state returned)" : "") << '\n';
}

}  // namespace nkit

#endif  // NKIT_MULTILEVEL_GRID_SEQUENCING_REPORT_HPP
