#ifndef NKIT_REPORT_REPORT_OUTPUT_HPP
#define NKIT_REPORT_REPORT_OUTPUT_HPP

/// \file report/report_output.hpp
/// Human-readable convergence tables and CSV history, after the fact or live
/// (as monitors). Output goes only to the std::ostream you pass; nkit never
/// prints by itself.

#include <cstddef>
#include <cstdio>
#include <limits>
#include <ostream>
#include <string>

#include "monitor.hpp"
#include "report.hpp"

namespace nkit {

namespace detail {

inline std::string formatted(const char* format, double value) {
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, format, value);
  return buffer;
}

// Columns: Newton step; ‖R‖₂; ‖R‖₂/‖R(u0)‖₂; forcing term η; GMRES
// iterations of the step; GMRES's final ‖r‖/‖R‖; fraction of the Newton
// step taken (line search / trust region); rejected trial points; residual
// evaluations so far; seconds since the start.
inline void table_header(std::ostream& os) {
  os << " step |  residual norm | relative to initial | forcing term | GMRES iterations | relative linear residual "
        "| step fraction | rejected trials | residual evaluations |   seconds\n"
     << "------+----------------+---------------------+--------------+------------------+--------------------------"
        "+---------------+-----------------+----------------------+----------\n";
}

inline void table_row(std::ostream& os, const newton_step_record& r) {
  char line[320];
  std::snprintf(line, sizeof line, "%5d | %14.6e | %19.3e | %12.2e | %16d | %24.3e | %13.4g | %15d | %20lld | %9.3f\n",
                r.step, r.residual_norm, r.relative_residual_norm, r.forcing_term, r.linear_iterations,
                r.relative_linear_residual, r.step_fraction, r.rejected_trials,
                static_cast<long long>(r.residual_evaluations), r.elapsed_seconds);
  os << line;
}

inline void breakdown_line(std::ostream& os, const char* label, double seconds, long long calls, double total,
                           double residual_seconds) {
  char line[200];
  const int written = std::snprintf(line, sizeof line, "  %-21s %11.4f %6.1f %%", label, seconds,
                                    total > 0.0 ? 100.0 * seconds / total : 0.0);
  if (calls >= 0) {
    std::snprintf(line + written, sizeof line - static_cast<std::size_t>(written), " %12lld %16.3e", calls,
                  calls > 0 ? seconds / static_cast<double>(calls) : 0.0);
  } else {
    std::snprintf(line + written, sizeof line - static_cast<std::size_t>(written), " %12s %16s", "", "");
  }
  os << line;
  if (residual_seconds > 0.0) {
    std::snprintf(line, sizeof line, " %12.1f\n", seconds / residual_seconds);
  } else {
    std::snprintf(line, sizeof line, " %12s\n", "-");
  }
  os << line;
}

}  // namespace detail

/// Prints where the solve's wall time went: seconds, share, calls, seconds
/// per call and work units (seconds ÷ median seconds of one residual
/// evaluation) for every phase of phase_seconds, which add up to the wall
/// time; then the workspace held by the solver. Phase meanings: report.hpp.
inline void print_cost_breakdown(std::ostream& os, const solve_report& report) {
  char line[256];
  std::snprintf(line, sizeof line,
                "cost: wall %.4f s = %.1f work units (one residual evaluation %.3e s), workspace %.2f MiB\n",
                report.wall_seconds, report.work_units(), report.median_residual_seconds,
                static_cast<double>(report.workspace_bytes) / (1024.0 * 1024.0));
  os << line;
  std::snprintf(line, sizeof line, "  %-21s %11s %8s %12s %16s %12s\n", "phase", "seconds", "share", "calls",
                "seconds per call", "work units");
  os << line;
  const double total = report.wall_seconds;
  const double unit = report.median_residual_seconds;
  const phase_seconds& t = report.time;
  const phase_calls& c = report.calls;
  detail::breakdown_line(os, "residual", t.residual, c.residual, total, unit);
  detail::breakdown_line(os, "Jacobian-vector", t.jacobian_vector, c.jacobian_vector, total, unit);
  detail::breakdown_line(os, "Jacobian assembly", t.jacobian_assembly, c.jacobian_assembly, total, unit);
  detail::breakdown_line(os, "preconditioner setup", t.preconditioner_setup, c.preconditioner_setup, total, unit);
  detail::breakdown_line(os, "preconditioner apply", t.preconditioner_apply, c.preconditioner_apply, total, unit);
  detail::breakdown_line(os, "orthogonalization", t.orthogonalization, c.orthogonalization, total, unit);
  detail::breakdown_line(os, "Krylov update", t.krylov_update, c.krylov_update, total, unit);
  detail::breakdown_line(os, "globalization", t.globalization, c.globalization, total, unit);
  detail::breakdown_line(os, "Newton update", t.newton_update, c.newton_update, total, unit);
  detail::breakdown_line(os, "monitor", t.monitor, c.monitor, total, unit);
  detail::breakdown_line(os, "other", t.other, -1, total, unit);
  detail::breakdown_line(os, "total (wall time)", total, -1, total, unit);
}

namespace detail {
/// One line per start-of-solve warning (nothing when there is none).
inline void print_warnings(std::ostream& os, const solve_warnings& warnings) {
  const auto warn = [&os](const char* entries, double spread, const char* consequence, const char* magnitudes) {
    char line[400];
    std::snprintf(line, sizeof line,
                  "warning: the entries of %s span a factor %.1e between the largest and the smallest nonzero "
                  "magnitude; %s (give typical %s with set_scaling, or enable newton_settings::componentwise)\n",
                  entries, spread, consequence, magnitudes);
    os << line;
  };
  if (warnings.state_magnitudes_spread_widely) {
    warn("u0", warnings.state_magnitude_spread, "the Euclidean norms that decide convergence hide the small ones",
         "magnitudes");
  }
  if (warnings.residual_magnitudes_spread_widely) {
    warn("R(u0)", warnings.residual_magnitude_spread, "the residual norm is dominated by the largest rows",
         "residual magnitudes");
  }
}
/// The table's first row: the initial residual, and the norm that counts as converged.
inline void initial_row(std::ostream& os, double initial_norm, double target_norm) {
  char line[256];
  std::snprintf(line, sizeof line, "%6d | %13.6e | %10.3e |   converged once the residual norm is <= %.6e\n", 0,
                initial_norm, 1.0, target_norm);
  os << line;
}
}  // namespace detail

/// Prints the warnings, the per-step table, the stop reason, the counts and the cost breakdown.
inline void print_convergence_table(std::ostream& os, const solve_report& report) {
  detail::print_warnings(os, report.warnings);
  detail::table_header(os);
  char line[256];
  detail::initial_row(os, report.initial_residual_norm, report.target_residual_norm);
  for (const auto& record : report.history) detail::table_row(os, record);
  os << "stop reason: " << name(report.reason);
  if (const auto status = report.status()) os << " (" << name(*status) << ")";
  os << ". " << report.message() << '\n';
  std::snprintf(line, sizeof line,
                "Newton steps %d, linear iterations %lld, residual evaluations %lld (Jacobian-vector products %lld), "
                "preconditioner setups %lld\n",
                report.newton_steps, static_cast<long long>(report.linear_iterations),
                static_cast<long long>(report.residual_evaluations),
                static_cast<long long>(report.jacobian_vector_products),
                static_cast<long long>(report.preconditioner_setups));
  os << line;
  if (report.returns_to_pseudo_time > 0) {
    std::snprintf(line, sizeof line,
                  "the Newton phase failed and the solve went back to pseudo-time stepping %d time%s\n",
                  report.returns_to_pseudo_time, report.returns_to_pseudo_time == 1 ? "" : "s");
    os << line;
  }
  if (!report.field_residuals.empty()) {
    os << "residual norm per field (initial -> final):\n";
    for (const field_residual_record& field : report.field_residuals) {
      std::snprintf(line, sizeof line, "  %-20s %13.6e -> %13.6e\n", field.name.c_str(), field.initial_residual_norm,
                    field.final_residual_norm);
      os << line;
    }
  }
  print_cost_breakdown(os, report);
}

/// Column names of the history CSV, in order.
inline constexpr const char* history_csv_columns =
    "step,accepted,residual_norm,relative_residual_norm,forcing_term,linear_iterations,relative_linear_residual,"
    "linear_status,step_fraction,step_norm,rejected_trials,preconditioner_set_up,step_shortened_by_bounds,"
    "componentwise_step_ratio,pseudo_time_step,trust_radius,elapsed_seconds,residual_evaluations";

namespace detail {
/// The row of history_csv_columns without its line end.
inline void write_history_csv_fields(std::ostream& os, const newton_step_record& r) {
  char line[512];
  std::snprintf(line, sizeof line,
                "%d,%d,%.17g,%.17g,%.17g,%d,%.17g,%s,%.17g,%.17g,%d,%d,%d,%.17g,%.17g,%.17g,%.17g,%lld", r.step,
                r.accepted ? 1 : 0, r.residual_norm, r.relative_residual_norm, r.forcing_term, r.linear_iterations,
                r.relative_linear_residual, std::string(name(r.linear_status)).c_str(), r.step_fraction, r.step_norm,
                r.rejected_trials, r.preconditioner_set_up ? 1 : 0, r.step_shortened_by_bounds ? 1 : 0,
                r.componentwise_step_ratio, r.pseudo_time_step, r.trust_radius, r.elapsed_seconds,
                static_cast<long long>(r.residual_evaluations));
  os << line;
}
}  // namespace detail

inline void write_history_csv_row(std::ostream& os, const newton_step_record& r) {
  detail::write_history_csv_fields(os, r);
  os << '\n';
}

/// Writes the header and one row per Newton step (step 0 is the initial guess
/// with only its residual norm filled in). When the report has per-field
/// norms (solve_report::field_residuals), each field adds a column
/// residual_norm_<field name>: ‖R_f‖ at that row's iterate.
inline void write_history_csv(std::ostream& os, const solve_report& report) {
  os << history_csv_columns;
  for (const field_residual_record& field : report.field_residuals) os << ",residual_norm_" << field.name;
  os << '\n';
  const auto field_columns = [&](std::size_t row) {  // row 0: u0, row i: history[i − 1]
    char value[32];
    for (const field_residual_record& field : report.field_residuals) {
      const double norm =
          row == 0 ? field.initial_residual_norm
                   : (row <= field.history.size() ? field.history[row - 1] : std::numeric_limits<double>::quiet_NaN());
      std::snprintf(value, sizeof value, ",%.17g", norm);
      os << value;
    }
    os << '\n';
  };
  newton_step_record initial;
  initial.residual_norm = report.initial_residual_norm;
  initial.relative_residual_norm = 1.0;
  initial.residual_evaluations = 1;
  detail::write_history_csv_fields(os, initial);
  field_columns(0);
  for (std::size_t i = 0; i < report.history.size(); ++i) {
    detail::write_history_csv_fields(os, report.history[i]);
    field_columns(i + 1);
  }
}

/// Live table: at the start the warnings, the header and the initial residual
/// with the norm that counts as converged; then a row per Newton step; and,
/// with `linear_progress_every` = k > 0, a progress line every k GMRES
/// iterations (for long linear solves).
class convergence_table_monitor {
 public:
  explicit convergence_table_monitor(std::ostream& os, int linear_progress_every = 0)
      : m_os(&os), m_linear_progress_every(linear_progress_every) {}
  void at_start(const solve_start_record& start) {
    detail::print_warnings(*m_os, start.warnings);
    detail::table_header(*m_os);
    detail::initial_row(*m_os, start.initial_residual_norm, start.target_residual_norm);
    m_started = true;
  }
  monitor_decision after_newton_step(const newton_step_record& record) {
    if (!m_started) {  // used outside a Newton solve's run: no start record
      detail::table_header(*m_os);
      m_started = true;
    }
    detail::table_row(*m_os, record);
    return monitor_decision::keep_going;
  }
  monitor_decision after_linear_iteration(const linear_iteration_record& record) {
    if (m_linear_progress_every > 0 && record.iteration % m_linear_progress_every == 0) {
      char line[200];
      std::snprintf(line, sizeof line,
                    "      Newton step %d, GMRES iteration %d: relative linear residual %.3e (forcing term %.2e)\n",
                    record.newton_step, record.iteration, record.relative_linear_residual, record.forcing_term);
      *m_os << line;
    }
    return monitor_decision::keep_going;
  }

 private:
  std::ostream* m_os;
  int m_linear_progress_every = 0;
  bool m_started = false;
};

/// Live CSV: header before the first step, one row per step.
class history_csv_monitor {
 public:
  explicit history_csv_monitor(std::ostream& os) : m_os(&os) {}
  monitor_decision after_newton_step(const newton_step_record& record) {
    if (record.step == 1) *m_os << history_csv_columns << '\n';
    write_history_csv_row(*m_os, record);
    return monitor_decision::keep_going;
  }

 private:
  std::ostream* m_os;
};

}  // namespace nkit

#endif  // NKIT_REPORT_REPORT_OUTPUT_HPP
