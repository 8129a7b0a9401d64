#ifndef NKIT_DETAIL_TIMER_HPP
#define NKIT_DETAIL_TIMER_HPP

/// \file timer.hpp
/// Wall-clock helpers: a monotonic stopwatch and a fixed-size sample window
/// whose median gives the cost of one residual evaluation without allocating.

#include <algorithm>
#include <array>
#include <chrono>
#include <cstddef>

namespace nkit::detail {

using clock_type = std::chrono::steady_clock;

inline double seconds_between(clock_type::time_point start, clock_type::time_point stop) {
  return std::chrono::duration<double>(stop - start).count();
}

/// Monotonic stopwatch started at construction.
class stopwatch {
 public:
  stopwatch() : m_start(clock_type::now()) {}
  void restart() { m_start = clock_type::now(); }
  double seconds() const { return seconds_between(m_start, clock_type::now()); }
  clock_type::time_point start_time() const { return m_start; }

 private:
  clock_type::time_point m_start;
};

/// Keeps the most recent `capacity` samples in a ring; median() sorts a copy
/// on the stack. No heap use.
class median_window {
 public:
  static constexpr std::size_t capacity = 64;

  void clear() {
    m_count = 0;
    m_next = 0;
  }
  void add(double sample) {
    m_samples[m_next] = sample;
    m_next = (m_next + 1) % capacity;
    if (m_count < capacity) ++m_count;
  }
  std::size_t size() const { return m_count; }
  /// Median of the stored samples (0 when empty).
  double median() const {
    if (m_count == 0) return 0.0;
    std::array<double, capacity> copy{};
    std::copy_n(m_samples.begin(), m_count, copy.begin());
    const std::size_t middle = m_count / 2;
    std::nth_element(copy.begin(), copy.begin() + static_cast<std::ptrdiff_t>(middle),
                     copy.begin() + static_cast<std::ptrdiff_t>(m_count));
    double upper = copy[middle];
    if (m_count % 2 == 1) return upper;
    const double lower = *std::max_element(copy.begin(), copy.begin() + static_cast<std::ptrdiff_t>(middle));
    return 0.5 * (lower + upper);
  }

 private:
  std::array<double, capacity> m_samples{};
  std::size_t m_count = 0;
  std::size_t m_next = 0;
};

}  // namespace nkit::detail

#endif  // NKIT_DETAIL_TIMER_HPP
