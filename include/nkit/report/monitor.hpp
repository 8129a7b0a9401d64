#ifndef NKIT_REPORT_MONITOR_HPP
#define NKIT_REPORT_MONITOR_HPP

/// \file report/monitor.hpp
/// Monitors observe a solve and may stop it.
///
/// A monitor is either a callable `decision(const newton_step_record&)` (or
/// returning void), or an object with
///   monitor_decision after_newton_step(const newton_step_record&)
/// and optionally, detected at compile time and free when absent,
///   monitor_decision after_linear_iteration(int iteration, double relative_linear_residual)
/// where relative_linear_residual is ‖R + J s‖/‖R‖ of the unpreconditioned system.

#include <functional>
#include <type_traits>
#include <utility>
#include <vector>

#include "phase_ledger.hpp"
#include "report.hpp"

namespace nkit {

enum class monitor_decision { keep_going, stop_now };

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
struct has_after_linear_iteration : std::false_type {};
template <class M>
struct has_after_linear_iteration<M, std::void_t<decltype(std::declval<M&>().after_linear_iteration(0, 0.0))>>
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

/// Calls after_linear_iteration when the monitor has it.
template <class Monitor>
monitor_decision notify_linear_iteration(Monitor& monitor, int iteration, double relative_residual) {
  if constexpr (has_after_linear_iteration<Monitor>::value) {
    if constexpr (std::is_void_v<decltype(monitor.after_linear_iteration(iteration, relative_residual))>) {
      monitor.after_linear_iteration(iteration, relative_residual);
      return monitor_decision::keep_going;
    } else {
      return to_decision(monitor.after_linear_iteration(iteration, relative_residual));
    }
  } else {
    static_cast<void>(monitor);
    static_cast<void>(iteration);
    static_cast<void>(relative_residual);
    return monitor_decision::keep_going;
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

/// notify_linear_iteration, timed as the monitor phase of `ledger` (Newton
/// step `step`); free when the monitor does not watch linear iterations.
template <class Monitor>
monitor_decision notify_linear_iteration_timed(Monitor& monitor, int iteration, double relative_residual,
                                               phase_ledger& ledger, int step) {
  if constexpr (has_after_linear_iteration<Monitor>::value) {
    const auto start = clock_type::now();
    const monitor_decision decision = notify_linear_iteration(monitor, iteration, relative_residual);
    ledger.record(trace_phase::monitor, start, clock_type::now(), step);
    return decision;
  } else {
    static_cast<void>(monitor), static_cast<void>(iteration), static_cast<void>(relative_residual);
    static_cast<void>(ledger), static_cast<void>(step);
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

/// Fans one step out to several monitors (type-erased with std::function;
/// called once per Newton step, so the indirection costs nothing measurable).
/// Stops the solve when any of them says so.
class monitor_list {
 public:
  using step_function = std::function<monitor_decision(const newton_step_record&)>;

  /// Adds a monitor (callable or object with after_newton_step). Objects are
  /// copied; pass std::ref(m) to keep a reference.
  template <class Monitor>
  monitor_list& add(Monitor monitor) {
    m_monitors.emplace_back([held = std::move(monitor)](const newton_step_record& record) mutable {
      if constexpr (detail::is_reference_wrapper<Monitor>::value) {
        return detail::notify_newton_step(held.get(), record);
      } else {
        return detail::notify_newton_step(held, record);
      }
    });
    return *this;
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
};

}  // namespace nkit

#endif  // NKIT_REPORT_MONITOR_HPP
