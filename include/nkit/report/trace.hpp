#ifndef NKIT_REPORT_TRACE_HPP
#define NKIT_REPORT_TRACE_HPP

/// \file report/trace.hpp
/// A timeline of one or more solves: one event per phase call (residual,
/// J·v, Jacobian assembly, preconditioner setup and apply,
/// orthogonalisation, globalisation, monitor), per Newton step and per linear
/// iteration, plus counters (residual norms, forcing terms, pseudo-time step,
/// trust radius). Attach a recorder with newton_krylov_solver::record_trace
/// (or gmres_solver::record_trace); with none attached the cost is one
/// pointer test per phase call. Recording appends to a std::vector, so it
/// allocates when the reserved capacity runs out: tracing is a diagnostic mode.
/// trace_output.hpp writes the events as Trace Event JSON.

#include <cstddef>
#include <string_view>
#include <vector>

#include "../detail/timer.hpp"

namespace nkit {

enum class trace_phase {
  residual,
  jacobian_vector,
  jacobian_assembly,
  preconditioner_setup,
  preconditioner_apply,
  orthogonalization,
  globalization,
  monitor,
  linear_iteration,
  linear_solve,
  newton_step
};

constexpr std::string_view name(trace_phase phase) {
  switch (phase) {
    case trace_phase::residual:
      return "residual";
    case trace_phase::jacobian_vector:
      return "jacobian_vector";
    case trace_phase::jacobian_assembly:
      return "jacobian_assembly";
    case trace_phase::preconditioner_setup:
      return "preconditioner_setup";
    case trace_phase::preconditioner_apply:
      return "preconditioner_apply";
    case trace_phase::orthogonalization:
      return "orthogonalization";
    case trace_phase::globalization:
      return "globalization";
    case trace_phase::monitor:
      return "monitor";
    case trace_phase::linear_iteration:
      return "linear_iteration";
    case trace_phase::linear_solve:
      return "linear_solve";
    case trace_phase::newton_step:
      return "newton_step";
  }
  return "unknown";
}

enum class trace_counter { residual_norm, relative_linear_residual, forcing_term, pseudo_time_step, trust_radius };

constexpr std::string_view name(trace_counter counter) {
  switch (counter) {
    case trace_counter::residual_norm:
      return "residual_norm";
    case trace_counter::relative_linear_residual:
      return "relative_linear_residual";
    case trace_counter::forcing_term:
      return "forcing_term";
    case trace_counter::pseudo_time_step:
      return "pseudo_time_step";
    case trace_counter::trust_radius:
      return "trust_radius";
  }
  return "unknown";
}

/// A phase call with its start and duration, or a counter value (duration < 0).
struct trace_event {
  bool is_counter = false;
  trace_phase phase = trace_phase::residual;
  trace_counter counter = trace_counter::residual_norm;
  double start_seconds = 0.0;     ///< since the recorder's origin
  double duration_seconds = 0.0;  ///< phase events only
  double value = 0.0;             ///< counter events only
  int index = 0;                  ///< Newton step or linear iteration number, when it applies
};

class trace_recorder {
 public:
  /// `reserved_events` are allocated up front.
  explicit trace_recorder(std::size_t reserved_events = 1u << 16) { m_events.reserve(reserved_events); }

  void record(trace_phase phase, detail::clock_type::time_point start, detail::clock_type::time_point stop,
              int index = 0) {
    trace_event event;
    event.phase = phase;
    event.start_seconds = detail::seconds_between(m_origin, start);
    event.duration_seconds = detail::seconds_between(start, stop);
    event.index = index;
    m_events.push_back(event);
  }
  void record_counter(trace_counter counter, detail::clock_type::time_point at, double value) {
    trace_event event;
    event.is_counter = true;
    event.counter = counter;
    event.start_seconds = detail::seconds_between(m_origin, at);
    event.value = value;
    m_events.push_back(event);
  }
  /// Forgets all events and restarts the time origin.
  void clear() {
    m_events.clear();
    m_origin = detail::clock_type::now();
  }
  const std::vector<trace_event>& events() const { return m_events; }

 private:
  detail::clock_type::time_point m_origin = detail::clock_type::now();
  std::vector<trace_event> m_events;
};

}  // namespace nkit

#endif  // NKIT_REPORT_TRACE_HPP
