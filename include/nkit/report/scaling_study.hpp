#ifndef NKIT_REPORT_SCALING_STUDY_HPP
#define NKIT_REPORT_SCALING_STUDY_HPP

/// \file report/scaling_study.hpp
/// How a solve's cost grows with the mesh: run the user's problem at several
/// sizes, tabulate Newton steps, linear iterations per Newton step, wall
/// time, work units and workspace, and fit power laws y ≈ c·N^p to them by
/// least squares on log–log data (N = number of unknowns).
///
///   nkit::scaling_study_settings study;
///   study.size_parameters = {64, 128, 256, 512};        // e.g. cells per side
///   auto result = nkit::run_scaling_study(study, [](long long n) {
///     my_problem problem(n);                            // build at this size
///     Eigen::VectorXd u = problem.initial_guess();
///     nkit::newton_krylov_solver<> solver(settings);
///     return nkit::scaling_sample{problem.unknowns(), solver.solve(problem, u)};
///   });
///   nkit::print_scaling_study(std::cout, result);       // table and exponents
///   nkit::write_scaling_study_csv(csv_file, result);    // one row per size
///
/// The fits use the sizes whose solve converged (a solve cut short is not
/// the same work). An exponent near 1 for wall time means the cost per
/// unknown stays flat (an optimal method); iterations growing like N^q with
/// q > 0 point at a preconditioner that does not scale. Timings on a busy
/// machine are noisy: use repetitions (the fastest solve of each size is
/// kept, common practice for benchmark timings) and read the fit quality.

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <limits>
#include <optional>
#include <ostream>
#include <stdexcept>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "../detail/checks.hpp"
#include "report.hpp"

namespace nkit {

struct scaling_study_settings {
  /// The sizes handed to the callback, in the order they are run (e.g. cells
  /// per side). Each must be >= 1.
  std::vector<long long> size_parameters;
  /// Solves per size; the fastest (least wall time) is kept.
  int repetitions = 1;
  /// When a solve takes longer than this many seconds, the larger sizes that
  /// follow are skipped (listed in the result). Infinity: run every size.
  double skip_larger_sizes_after_seconds = std::numeric_limits<double>::infinity();

  void validate(std::string_view prefix_view = "scaling_study_settings") const {
    const std::string prefix(prefix_view);
    if (size_parameters.empty()) {
      throw std::invalid_argument("nkit: " + prefix + ".size_parameters must not be empty");
    }
    for (const long long size : size_parameters) {
      if (size < 1) {
        throw std::invalid_argument("nkit: " + prefix + ".size_parameters must all be >= 1 (got " +
                                    std::to_string(size) + ")");
      }
    }
    detail::require_at_least(prefix + ".repetitions", repetitions, 1);
    detail::require_positive(prefix + ".skip_larger_sizes_after_seconds", skip_larger_sizes_after_seconds, true);
  }
};

/// What the user's callback returns for one size: the number of unknowns it
/// built (summed over ranks on a distributed problem) and its solve report.
struct scaling_sample {
  std::int64_t unknowns = 0;
  solve_report report;
};

/// One size of the study (the fastest of its repetitions).
struct scaling_row {
  long long size_parameter = 0;
  std::int64_t unknowns = 0;
  stop_reason_if_stopped reason;  ///< why the kept solve stopped
  int newton_steps = 0;
  std::int64_t linear_iterations = 0;
  double linear_iterations_per_newton_step = 0.0;
  double wall_seconds = 0.0;
  double work_units = 0.0;               ///< wall time ÷ median time of one residual evaluation
  double median_residual_seconds = 0.0;  ///< the work unit itself, seconds
  std::size_t workspace_bytes = 0;       ///< as solve_report::workspace_bytes
  bool converged() const { return reason && is_converged(*reason); }
};

/// y ≈ coefficient · N^exponent, fitted by least squares to (ln N, ln y).
struct power_law_fit {
  double exponent = std::numeric_limits<double>::quiet_NaN();
  double coefficient = std::numeric_limits<double>::quiet_NaN();
  /// Coefficient of determination of the log–log fit: 1 − SS_res / SS_tot
  /// (1 when the data lie exactly on the line, including constant data).
  double r_squared = std::numeric_limits<double>::quiet_NaN();
  /// Root-mean-square of ln y − ln(c N^p): roughly the relative scatter of
  /// the data about the fitted law (0.05 ≈ 5 %).
  double rms_log_residual = std::numeric_limits<double>::quiet_NaN();
  /// Standard error of the exponent, sqrt(SS_res / (points − 2) / S_xx);
  /// NaN with two points (no degrees of freedom left).
  double exponent_standard_error = std::numeric_limits<double>::quiet_NaN();
  int points = 0;  ///< data points used (positive, finite values)

  bool valid() const { return points >= 2 && std::isfinite(exponent); }
  /// c · N^p at `unknowns`.
  double predict(double unknowns) const { return coefficient * std::pow(unknowns, exponent); }
};

/// Least-squares power law through the points (unknowns[i], values[i]) with
/// both positive and finite; the others are left out. Fewer than two usable
/// points, or all at one N, give an invalid fit (points says how many).
inline power_law_fit fit_power_law(const std::vector<double>& unknowns, const std::vector<double>& values) {
  if (unknowns.size() != values.size()) {
    throw std::invalid_argument("nkit: fit_power_law: " + std::to_string(unknowns.size()) + " sizes but " +
                                std::to_string(values.size()) + " values");
  }
  std::vector<std::pair<double, double>> logs;
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (unknowns[i] > 0.0 && values[i] > 0.0 && std::isfinite(unknowns[i]) && std::isfinite(values[i])) {
      logs.emplace_back(std::log(unknowns[i]), std::log(values[i]));
    }
  }
  power_law_fit fit;
  fit.points = static_cast<int>(logs.size());
  if (logs.size() < 2) return fit;
  double mean_x = 0.0, mean_y = 0.0;
  for (const auto& [x, y] : logs) {
    mean_x += x;
    mean_y += y;
  }
  mean_x /= static_cast<double>(logs.size());
  mean_y /= static_cast<double>(logs.size());
  double sxx = 0.0, sxy = 0.0, syy = 0.0;
  for (const auto& [x, y] : logs) {
    sxx += (x - mean_x) * (x - mean_x);
    sxy += (x - mean_x) * (y - mean_y);
    syy += (y - mean_y) * (y - mean_y);
  }
  if (!(sxx > 0.0)) return fit;  // every point at one N: no slope
  fit.exponent = sxy / sxx;
  const double intercept = mean_y - fit.exponent * mean_x;
  fit.coefficient = std::exp(intercept);
  const auto count = static_cast<double>(logs.size());
  double residual_squares = 0.0;
  for (const auto& [x, y] : logs) {
    const double residual = y - (intercept + fit.exponent * x);
    residual_squares += residual * residual;
  }
  // Constant data (spread at rounding level: a few ulps of ln y) count as
  // lying exactly on the line.
  const double rounding = 64.0 * std::numeric_limits<double>::epsilon() * std::max(1.0, std::abs(mean_y));
  fit.r_squared = syy > count * rounding * rounding ? 1.0 - residual_squares / syy : 1.0;
  fit.rms_log_residual = std::sqrt(residual_squares / count);
  if (logs.size() > 2) fit.exponent_standard_error = std::sqrt(residual_squares / (count - 2.0) / sxx);
  return fit;
}

struct scaling_study_result {
  std::vector<scaling_row> rows;
  /// Sizes not run because an earlier solve exceeded skip_larger_sizes_after_seconds.
  std::vector<long long> skipped_size_parameters;
  power_law_fit wall_seconds;                       ///< time ∝ N^p
  power_law_fit work_units;                         ///< work units ∝ N^(p − cost exponent of R)
  power_law_fit newton_steps;                       ///< flat (≈ 0) for mesh-independent Newton
  power_law_fit linear_iterations_per_newton_step;  ///< iterations ∝ N^q
  power_law_fit workspace_bytes;                    ///< memory ∝ N^m
};

/// Fits every quantity of `result.rows` (converged rows only); called by
/// run_scaling_study, public for rows gathered another way.
inline void fit_scaling_laws(scaling_study_result& result) {
  std::vector<double> n, time, units, steps, iterations, memory;
  for (const scaling_row& row : result.rows) {
    if (!row.converged()) continue;
    n.push_back(static_cast<double>(row.unknowns));
    time.push_back(row.wall_seconds);
    units.push_back(row.work_units);
    steps.push_back(row.newton_steps);
    iterations.push_back(row.linear_iterations_per_newton_step);
    memory.push_back(static_cast<double>(row.workspace_bytes));
  }
  result.wall_seconds = fit_power_law(n, time);
  result.work_units = fit_power_law(n, units);
  result.newton_steps = fit_power_law(n, steps);
  result.linear_iterations_per_newton_step = fit_power_law(n, iterations);
  result.workspace_bytes = fit_power_law(n, memory);
}

/// Runs `build_and_solve(size_parameter)` → scaling_sample for every size
/// (settings.repetitions times each, keeping the fastest) and fits the
/// growth laws. Exceptions from the callback propagate.
template <class BuildAndSolve>
scaling_study_result run_scaling_study(const scaling_study_settings& settings, BuildAndSolve&& build_and_solve) {
  settings.validate();
  scaling_study_result result;
  bool stopped = false;
  for (const long long size : settings.size_parameters) {
    if (stopped) {
      result.skipped_size_parameters.push_back(size);
      continue;
    }
    scaling_row best;
    for (int repetition = 0; repetition < settings.repetitions; ++repetition) {
      const scaling_sample sample = build_and_solve(size);
      const solve_report& report = sample.report;
      if (sample.unknowns < 1) {
        throw std::invalid_argument("nkit: run_scaling_study: the callback returned unknowns = " +
                                    std::to_string(sample.unknowns) + " for size " + std::to_string(size));
      }
      if (repetition > 0 && !(report.wall_seconds < best.wall_seconds)) continue;
      best.size_parameter = size;
      best.unknowns = sample.unknowns;
      best.reason = report.reason;
      best.newton_steps = report.newton_steps;
      best.linear_iterations = report.linear_iterations;
      best.linear_iterations_per_newton_step =
          report.newton_steps > 0 ? static_cast<double>(report.linear_iterations) / report.newton_steps : 0.0;
      best.wall_seconds = report.wall_seconds;
      best.work_units = report.work_units();
      best.median_residual_seconds = report.median_residual_seconds;
      best.workspace_bytes = report.workspace_bytes;
    }
    result.rows.push_back(best);
    if (best.wall_seconds > settings.skip_larger_sizes_after_seconds) stopped = true;
  }
  fit_scaling_laws(result);
  return result;
}

namespace detail {
inline void print_fit(std::ostream& os, const char* quantity, const power_law_fit& fit) {
  char line[200];
  if (!fit.valid()) {
    std::snprintf(line, sizeof line, "  %-34s no fit (%d usable points)\n", quantity, fit.points);
  } else if (std::isfinite(fit.exponent_standard_error)) {
    std::snprintf(line, sizeof line, "  %-34s N^%-7.3f ± %.3f   R² %.4f   rms log residual %.3f   (%d points)\n",
                  quantity, fit.exponent, fit.exponent_standard_error, fit.r_squared, fit.rms_log_residual, fit.points);
  } else {
    std::snprintf(line, sizeof line, "  %-34s N^%-7.3f           R² %.4f   rms log residual %.3f   (%d points)\n",
                  quantity, fit.exponent, fit.r_squared, fit.rms_log_residual, fit.points);
  }
  os << line;
}
}  // namespace detail

/// Prints one line per size and the fitted exponents with their quality.
inline void print_scaling_study(std::ostream& os, const scaling_study_result& result) {
  char line[256];
  std::snprintf(line, sizeof line, "%10s %12s %-32s %7s %10s %15s %11s %12s %10s\n", "size", "unknowns", "stop reason",
                "Newton", "linear", "linear per", "wall", "work units", "workspace");
  os << line;
  std::snprintf(line, sizeof line, "%10s %12s %-32s %7s %10s %15s %11s %12s %10s\n", "parameter", "", "", "steps",
                "iterations", "Newton step", "seconds", "", "MiB");
  os << line;
  for (const scaling_row& row : result.rows) {
    std::snprintf(line, sizeof line, "%10lld %12lld %-32s %7d %10lld %15.1f %11.4f %12.1f %10.2f\n", row.size_parameter,
                  static_cast<long long>(row.unknowns), std::string(name(row.reason)).c_str(), row.newton_steps,
                  static_cast<long long>(row.linear_iterations), row.linear_iterations_per_newton_step,
                  row.wall_seconds, row.work_units, static_cast<double>(row.workspace_bytes) / (1024.0 * 1024.0));
    os << line;
  }
  for (const long long size : result.skipped_size_parameters) {
    std::snprintf(line, sizeof line, "%10lld   skipped: an earlier solve exceeded skip_larger_sizes_after_seconds\n",
                  size);
    os << line;
  }
  os << "growth with the number of unknowns N (least squares on log-log data, converged sizes):\n";
  detail::print_fit(os, "wall time", result.wall_seconds);
  detail::print_fit(os, "work units", result.work_units);
  detail::print_fit(os, "Newton steps", result.newton_steps);
  detail::print_fit(os, "linear iterations per Newton step", result.linear_iterations_per_newton_step);
  detail::print_fit(os, "workspace bytes", result.workspace_bytes);
}

/// Column names of write_scaling_study_csv, in order.
inline constexpr const char* scaling_study_csv_columns =
    "size_parameter,unknowns,stop_reason,newton_steps,linear_iterations,linear_iterations_per_newton_step,"
    "wall_seconds,work_units,median_residual_seconds,workspace_bytes";

/// One row per size (header first); skipped sizes are not written.
inline void write_scaling_study_csv(std::ostream& os, const scaling_study_result& result) {
  os << scaling_study_csv_columns << '\n';
  char line[320];
  for (const scaling_row& row : result.rows) {
    std::snprintf(line, sizeof line, "%lld,%lld,%s,%d,%lld,%.17g,%.17g,%.17g,%.17g,%llu\n", row.size_parameter,
                  static_cast<long long>(row.unknowns), std::string(name(row.reason)).c_str(), row.newton_steps,
                  static_cast<long long>(row.linear_iterations), row.linear_iterations_per_newton_step,
                  row.wall_seconds, row.work_units, row.median_residual_seconds,
                  static_cast<unsigned long long>(row.workspace_bytes));
    os << line;
  }
}

/// The fits as CSV: quantity,exponent,coefficient,r_squared,rms_log_residual,
/// exponent_standard_error,points (NaN where a fit has none).
inline void write_scaling_fits_csv(std::ostream& os, const scaling_study_result& result) {
  os << "quantity,exponent,coefficient,r_squared,rms_log_residual,exponent_standard_error,points\n";
  const std::pair<const char*, const power_law_fit*> fits[] = {
      {"wall_seconds", &result.wall_seconds},
      {"work_units", &result.work_units},
      {"newton_steps", &result.newton_steps},
      {"linear_iterations_per_newton_step", &result.linear_iterations_per_newton_step},
      {"workspace_bytes", &result.workspace_bytes}};
  char line[320];
  for (const auto& [quantity, fit] : fits) {
    std::snprintf(line, sizeof line, "%s,%.17g,%.17g,%.17g,%.17g,%.17g,%d\n", quantity, fit->exponent, fit->coefficient,
                  fit->r_squared, fit->rms_log_residual, fit->exponent_standard_error, fit->points);
    os << line;
  }
}

}  // namespace nkit

#endif  // NKIT_REPORT_SCALING_STUDY_HPP
