#ifndef NKIT_REPORT_MONITOR_HPP
#define NKIT_REPORT_MONITOR_HPP

/// \file report/monitor.hpp
/// Monitors observe a solve and may stop it.
///
/// A monitor is either a callable `decision(const newton_step_record&)` (or
/// returning void), or an object with
///   monitor_decision after_newton_step(const newton_step_record&)
/// and optionally, detected at compile time and free when absent,
///   void at_start(const solve_start_record&)
///       once R(u0) is known: the initial residual norm, the norm that counts
///       as converged and the start-of-solve warnings
///   monitor_decision after_linear_iteration(const linear_iteration_record&)
///   monitor_decision after_linear_iteration(int iteration, double relative_linear_residual)
///       after every GMRES iteration (the record adds the Newton step and the
///       forcing term the iteration aims at); relative_linear_residual is
///       ‖R + J s‖/‖R‖ of the unpreconditioned system.

#include <cstdint>
#include <functional>
#include <memory>
#include <type_traits>
#include <utility>
#include <vector>

#include "phase_ledger.hpp"
#include "report.hpp"

namespace nkit {

enum class monitor_decision { keep_going, stop_now };

/// What a monitor learns when a solve starts (after R(u0) is evaluated).
struct solve_start_record {
  double initial_residual_norm = 0.0;  ///< ‖R(u0)‖
  /// The residual norm that counts as converged: max(absolute_tolerance, relative_tolerance·‖R(u0)‖).
  double target_residual_norm = 0.0;
  std::int64_t unknowns = 0;  ///< global number of unknowns
  solve_warnings warnings;    ///< what the start of the solve noticed (report.hpp)
};

/// One GMRES iteration, for monitors that follow long linear solves.
struct linear_iteration_record {
  int newton_step = 0;                    ///< 1-based Newton step the linear solve belongs to
  int iteration = 0;                      ///< 1-based GMRES iteration within that solve
  double relative_linear_residual = 0.0;  ///< ‖R + J s‖/‖R‖ reached so far (unpreconditioned)
  double forcing_term = 0.0;              ///< η: the linear solve stops once the above is <= η
};

/// The default: observes nothing, costs nothing.
struct null_monitor {
  monitor_decision after_newton_step(const newton_step_record& /*record*/) const {
    return monitor_decision::keep_going;
  }
};

namespace detail {

template <class M, class = void>
struct has_after_newton_step : std::false_type {};
template <class M>
struct has_after_newton_step<
    M, std::void_t<decltype(std::declval<M&>().after_newton_step(std::declval<const newton_step_record&>()))>>
    : std::true_type {};

template <class M, class = void>
struct has_after_linear_iteration_values : std::false_type {};
template <class M>
struct has_after_linear_iteration_values<M, std::void_t<decltype(std::declval<M&>().after_linear_iteration(0, 0.0))>>
    : std::true_type {};

template <class M, class = void>
struct has_after_linear_iteration_record : std::false_type {};
template <class M>
struct has_after_linear_iteration_record<
    M, std::void_t<decltype(std::declval<M&>().after_linear_iteration(std::declval<const linear_iteration_record&>()))>>
    : std::true_type {};

template <class M>
struct has_after_linear_iteration
    : std::bool_constant<has_after_linear_iteration_values<M>::value || has_after_linear_iteration_record<M>::value> {};

template <class M, class = void>
struct has_at_start : std::false_type {};
template <class M>
struct has_at_start<M, std::void_t<decltype(std::declval<M&>().at_start(std::declval<const solve_start_record&>()))>>
    : std::true_type {};

template <class Result>
monitor_decision to_decision(Result&& result) {
  if constexpr (std::is_same_v<std::decay_t<Result>, monitor_decision>) {
    return result;
  } else {
    return monitor_decision::keep_going;
  }
}

/// Calls the monitor after a Newton step.
template <class Monitor>
monitor_decision notify_newton_step(Monitor& monitor, const newton_step_record& record) {
  if constexpr (has_after_newton_step<Monitor>::value) {
    if constexpr (std::is_void_v<decltype(monitor.after_newton_step(record))>) {
      monitor.after_newton_step(record);
      return monitor_decision::keep_going;
    } else {
      return to_decision(monitor.after_newton_step(record));
    }
  } else {
    static_assert(std::is_invocable_v<Monitor&, const newton_step_record&>,
                  "nkit: a monitor must be callable with (const newton_step_record&) or have after_newton_step()");
    if constexpr (std::is_void_v<std::invoke_result_t<Monitor&, const newton_step_record&>>) {
      monitor(record);
      return monitor_decision::keep_going;
    } else {
      return to_decision(monitor(record));
    }
  }
}

/// Calls after_linear_iteration when the monitor has it (the record form preferred).
template <class Monitor>
monitor_decision notify_linear_iteration(Monitor& monitor, const linear_iteration_record& record) {
  if constexpr (has_after_linear_iteration_record<Monitor>::value) {
    if constexpr (std::is_void_v<decltype(monitor.after_linear_iteration(record))>) {
      monitor.after_linear_iteration(record);
      return monitor_decision::keep_going;
    } else {
      return to_decision(monitor.after_linear_iteration(record));
    }
  } else if constexpr (has_after_linear_iteration_values<Monitor>::value) {
    const int iteration = record.iteration;
    const double relative = record.relative_linear_residual;
    if constexpr (std::is_void_v<decltype(monitor.after_linear_iteration(iteration, relative))>) {
      monitor.after_linear_iteration(iteration, relative);
      return monitor_decision::keep_going;
    } else {
      return to_decision(monitor.after_linear_iteration(iteration, relative));
    }
  } else {
    static_cast<void>(monitor), static_cast<void>(record);
    return monitor_decision::keep_going;
  }
}

/// Calls at_start when the monitor has it, timed as the monitor phase of `ledger`.
template <class Monitor>
void notify_start_timed(Monitor& monitor, const solve_start_record& record, phase_ledger& ledger) {
  if constexpr (has_at_start<Monitor>::value) {
    const auto start = clock_type::now();
    monitor.at_start(record);
    ledger.record(trace_phase::monitor, start, clock_type::now(), 0);
  } else {
    static_cast<void>(monitor), static_cast<void>(record), static_cast<void>(ledger);
  }
}

/// notify_newton_step, timed as the monitor phase of `ledger`; the default
/// null_monitor is neither called nor timed.
template <class Monitor>
monitor_decision notify_newton_step_timed(Monitor& monitor, const newton_step_record& record, phase_ledger& ledger) {
  if constexpr (std::is_same_v<std::decay_t<Monitor>, null_monitor>) {
    static_cast<void>(monitor), static_cast<void>(record), static_cast<void>(ledger);
    return monitor_decision::keep_going;
  } else {
    const auto start = clock_type::now();
    const monitor_decision decision = notify_newton_step(monitor, record);
    ledger.record(trace_phase::monitor, start, clock_type::now(), record.step);
    return decision;
  }
}

/// notify_linear_iteration, timed as the monitor phase of `ledger`; free
/// when the monitor does not watch linear iterations.
template <class Monitor>
monitor_decision notify_linear_iteration_timed(Monitor& monitor, const linear_iteration_record& record,
                                               phase_ledger& ledger) {
  if constexpr (has_after_linear_iteration<Monitor>::value) {
    const auto start = clock_type::now();
    const monitor_decision decision = notify_linear_iteration(monitor, record);
    ledger.record(trace_phase::monitor, start, clock_type::now(), record.newton_step);
    return decision;
  } else {
    static_cast<void>(monitor), static_cast<void>(record), static_cast<void>(ledger);
    return monitor_decision::keep_going;
  }
}

template <class T>
struct is_reference_wrapper : std::false_type {};
template <class T>
struct is_reference_wrapper<std::reference_wrapper<T>> : std::true_type {};

template <class Monitor>
inline constexpr bool watches_linear_iterations_v = has_after_linear_iteration<Monitor>::value;

}  // namespace detail

/// Fans a solve's start and each Newton step out to several monitors
/// (type-erased with std::function; called once per Newton step, so the
/// indirection costs nothing measurable). Stops the solve when any of them
/// says so. Per-linear-iteration callbacks are not forwarded: pass a monitor
/// that watches GMRES iterations to the solver directly.
class monitor_list {
 public:
  using step_function = std::function<monitor_decision(const newton_step_record&)>;
  using start_function = std::function<void(const solve_start_record&)>;

  /// Adds a monitor (callable or object with after_newton_step, and
  /// optionally at_start). Objects are copied; pass std::ref(m) to keep a reference.
  template <class Monitor>
  monitor_list& add(Monitor monitor) {
    auto held = std::make_shared<Monitor>(std::move(monitor));
    const auto target = [](Monitor& m) -> decltype(auto) {
      if constexpr (detail::is_reference_wrapper<Monitor>::value) {
        return m.get();
      } else {
        return (m);
      }
    };
    m_monitors.emplace_back(
        [held, target](const newton_step_record& record) { return detail::notify_newton_step(target(*held), record); });
    using target_type = std::remove_reference_t<decltype(target(*held))>;
    if constexpr (detail::has_at_start<target_type>::value) {
      m_starts.emplace_back([held, target](const solve_start_record& record) { target(*held).at_start(record); });
    }
    return *this;
  }
  void at_start(const solve_start_record& record) {
    for (auto& start : m_starts) start(record);
  }
  monitor_decision after_newton_step(const newton_step_record& record) {
    monitor_decision decision = monitor_decision::keep_going;
    for (auto& monitor : m_monitors) {
      if (monitor(record) == monitor_decision::stop_now) decision = monitor_decision::stop_now;
    }
    return decision;
  }
  std::size_t size() const { return m_monitors.size(); }

 private:
  std::vector<step_function> m_monitors;
  std::vector<start_function> m_starts;
};

}  // namespace nkit

#endif  // NKIT_REPORT_MONITOR_HPP
