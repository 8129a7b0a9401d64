#ifndef NKIT_REPORT_PHASE_LEDGER_HPP
#define NKIT_REPORT_PHASE_LEDGER_HPP

/// \file report/phase_ledger.hpp
/// Where a solve's time goes: one ledger per solve records each phase call
/// (its wall time into solve_report::time, one call into solve_report::calls,
/// and, when a trace recorder is attached, one timeline event), keeps the
/// solve's clock, and samples residual-evaluation times for the work unit.
///
/// Two kinds of phase:
///   - leaf phases (residual, J·v, assembly, preconditioner apply, monitor):
///     record(phase, start, stop) adds stop − start;
///   - enclosing phases (globalisation, the GMRES call, the Newton step, the
///     preconditioner setup): a phase_scope adds its wall time minus the time
///     of every phase recorded inside it, so the phases never count a second
///     twice and add up to the wall time (report.hpp lists them).
/// A scope closes on every exit path (destructor), so a solve stopped by a
/// budget or cancellation deep inside a phase still gets an honest breakdown.
///
/// Cost: two clock reads per phase call and one pointer test for the trace.
/// Nothing allocates (the trace recorder's own vector aside).

#include <cstddef>
#include <cstdint>
#include <utility>

#include "../detail/timer.hpp"
#include "report.hpp"
#include "trace.hpp"

namespace nkit {

class phase_ledger {
 public:
  using time_point = detail::clock_type::time_point;

  /// Starts a solve that writes into `report` (which must outlive it): resets
  /// the report, keeping its history's storage (reserved for at least
  /// `history_capacity` records, so repeat solves allocate nothing), and
  /// restarts the solve clock and the residual-time samples.
  void begin(solve_report& report, std::size_t history_capacity) {
    m_clock.restart();
    auto history = std::move(report.history);
    auto fields = std::move(report.field_residuals);  // kept with their capacity: the driver refills them
    report = solve_report{};
    report.history = std::move(history);
    report.history.clear();
    report.history.reserve(history_capacity);
    report.field_residuals = std::move(fields);
    for (field_residual_record& field : report.field_residuals) field.history.clear();
    m_report = &report;
    m_residual_samples.clear();
  }

  /// Timeline recorder for later solves (nullptr: none; the cost is then one pointer test per phase).
  void attach_trace(trace_recorder* recorder) { m_trace = recorder; }
  trace_recorder* trace() const { return m_trace; }

  solve_report& report() { return *m_report; }
  const solve_report& report() const { return *m_report; }

  /// Seconds since begin().
  double elapsed_seconds() const { return m_clock.seconds(); }
  /// Median wall time of the recent residual evaluations (0 before the first).
  double median_residual_seconds() const { return m_residual_samples.median(); }

  /// One call of a leaf phase: its time, its count and its trace event
  /// (`index`: the Newton step or iteration the call belongs to, 0 if none).
  void record(trace_phase phase, time_point start, time_point stop, int index = 0) {
    if (m_trace != nullptr) m_trace->record(phase, start, stop, index);
    add(phase, detail::seconds_between(start, stop));
  }

  /// A residual evaluation: sampled for the work unit; its time is booked to
  /// the residual phase only when `booked` (evaluations inside a J·v product
  /// or an assembly are part of that phase instead). Always traced.
  void record_residual(time_point start, time_point stop, bool booked) {
    const double seconds = detail::seconds_between(start, stop);
    if (m_trace != nullptr) m_trace->record(trace_phase::residual, start, stop);
    m_residual_samples.add(seconds);
    if (booked) add(trace_phase::residual, seconds);
  }

  /// A timeline event only (no time booked): for intervals whose time is booked by a phase_scope.
  void trace_event(trace_phase phase, time_point start, time_point stop, int index = 0) {
    if (m_trace != nullptr) m_trace->record(phase, start, stop, index);
  }

  void record_counter(trace_counter counter, time_point at, double value) {
    if (m_trace != nullptr) m_trace->record_counter(counter, at, value);
  }

  /// Timeline of a completed Newton step begun at `start`: its event and its
  /// counters (residual norm, forcing term, pseudo-time step and trust radius
  /// when active). Nothing without a trace recorder.
  void trace_newton_step(const newton_step_record& record, time_point start) {
    if (m_trace == nullptr) return;
    const auto now = detail::clock_type::now();
    m_trace->record(trace_phase::newton_step, start, now, record.step);
    m_trace->record_counter(trace_counter::residual_norm, now, record.residual_norm);
    m_trace->record_counter(trace_counter::forcing_term, now, record.forcing_term);
    if (record.pseudo_time_step > 0.0)
      m_trace->record_counter(trace_counter::pseudo_time_step, now, record.pseudo_time_step);
    if (record.trust_radius > 0.0) m_trace->record_counter(trace_counter::trust_radius, now, record.trust_radius);
  }

  /// Sum of the measured phase times so far (report.hpp: all but `other`).
  double measured_seconds() const { return m_report->time.measured(); }

  /// Adds `seconds` and one call to the report's entry for `phase`.
  void add(trace_phase phase, double seconds) {
    phase_seconds& time = m_report->time;
    phase_calls& calls = m_report->calls;
    switch (phase) {
      case trace_phase::residual:
        time.residual += seconds;
        ++calls.residual;
        break;
      case trace_phase::jacobian_vector:
        time.jacobian_vector += seconds;
        ++calls.jacobian_vector;
        break;
      case trace_phase::jacobian_assembly:
        time.jacobian_assembly += seconds;
        ++calls.jacobian_assembly;
        break;
      case trace_phase::preconditioner_setup:
        time.preconditioner_setup += seconds;
        ++calls.preconditioner_setup;
        break;
      case trace_phase::preconditioner_apply:
        time.preconditioner_apply += seconds;
        ++calls.preconditioner_apply;
        break;
      case trace_phase::orthogonalization:
        time.orthogonalization += seconds;
        break;  // GMRES counts its Arnoldi steps itself
      case trace_phase::globalization:
        time.globalization += seconds;
        ++calls.globalization;
        break;
      case trace_phase::monitor:
        time.monitor += seconds;
        ++calls.monitor;
        break;
      case trace_phase::linear_solve:
        time.krylov_update += seconds;
        ++calls.krylov_update;
        break;
      case trace_phase::newton_step:
        time.newton_update += seconds;
        ++calls.newton_update;
        break;
      case trace_phase::linear_iteration:
        break;  // traced by GMRES, not a phase of its own
    }
  }

 private:
  solve_report* m_report = nullptr;
  trace_recorder* m_trace = nullptr;
  detail::stopwatch m_clock;
  detail::median_window m_residual_samples;
};

/// An enclosing phase: on close (or destruction) books its wall time minus
/// the phases recorded inside it, one call, and, when `traced`, its event.
class phase_scope {
 public:
  phase_scope(phase_ledger& ledger, trace_phase phase, int index = 0, bool traced = true)
      : m_ledger(&ledger),
        m_phase(phase),
        m_index(index),
        m_traced(traced),
        m_start(detail::clock_type::now()),
        m_measured_before(ledger.measured_seconds()) {}
  phase_scope(const phase_scope&) = delete;
  phase_scope& operator=(const phase_scope&) = delete;
  ~phase_scope() { close(); }

  phase_ledger::time_point start() const { return m_start; }

  /// Closes the scope now (later calls do nothing).
  void close() {
    if (m_ledger == nullptr) return;
    const auto stop = detail::clock_type::now();
    if (m_traced && m_ledger->trace() != nullptr) m_ledger->trace()->record(m_phase, m_start, stop, m_index);
    const double nested = m_ledger->measured_seconds() - m_measured_before;
    m_ledger->add(m_phase, detail::seconds_between(m_start, stop) - nested);
    m_ledger = nullptr;
  }

 private:
  phase_ledger* m_ledger;
  trace_phase m_phase;
  int m_index;
  bool m_traced;
  phase_ledger::time_point m_start;
  double m_measured_before;
};

}  // namespace nkit

#endif  // NKIT_REPORT_PHASE_LEDGER_HPP
