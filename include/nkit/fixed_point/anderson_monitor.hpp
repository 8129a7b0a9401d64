#ifndef NKIT_FIXED_POINT_ANDERSON_MONITOR_HPP
#define NKIT_FIXED_POINT_ANDERSON_MONITOR_HPP

/// \file fixed_point/anderson_monitor.hpp
/// Monitors of an Anderson solve observe each iteration and may stop it,
/// as monitor.hpp's monitors do for Newton steps.
///
/// A monitor is either a callable `decision(const anderson_step_record&)`
/// (or returning void), or an object with
///   monitor_decision after_anderson_step(const anderson_step_record&)
/// null_monitor (monitor.hpp) observes nothing and costs nothing.

#include <type_traits>
#include <utility>

#include "../report/monitor.hpp"
#include "anderson_report.hpp"

namespace nkit {

namespace detail {

template <class M, class = void>
struct has_after_anderson_step : std::false_type {};
template <class M>
struct has_after_anderson_step<
    M, std::void_t<decltype(std::declval<M&>().after_anderson_step(std::declval<const anderson_step_record&>()))>>
    : std::true_type {};

/// Calls the monitor after an Anderson iteration.
template <class Monitor>
monitor_decision notify_anderson_step(Monitor& monitor, const anderson_step_record& record) {
  if constexpr (std::is_same_v<std::decay_t<Monitor>, null_monitor>) {
    static_cast<void>(monitor);
    static_cast<void>(record);
    return monitor_decision::keep_going;
  } else if constexpr (has_after_anderson_step<Monitor>::value) {
    if constexpr (std::is_void_v<decltype(monitor.after_anderson_step(record))>) {
      monitor.after_anderson_step(record);
      return monitor_decision::keep_going;
    } else {
      return to_decision(monitor.after_anderson_step(record));
    }
  } else {
    static_assert(std::is_invocable_v<Monitor&, const anderson_step_record&>,
                  "nkit: an Anderson monitor must be callable with (const anderson_step_record&) or have "
                  "after_anderson_step()");
    if constexpr (std::is_void_v<std::invoke_result_t<Monitor&, const anderson_step_record&>>) {
      monitor(record);
      return monitor_decision::keep_going;
    } else {
      return to_decision(monitor(record));
    }
  }
}

}  // namespace detail

}  // namespace nkit

#endif  // NKIT_FIXED_POINT_ANDERSON_MONITOR_HPP
