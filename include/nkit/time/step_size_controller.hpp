#ifndef NKIT_TIME_STEP_SIZE_CONTROLLER_HPP
#define NKIT_TIME_STEP_SIZE_CONTROLLER_HPP

/// \file time/step_size_controller.hpp
/// The PI step-size controller (Gustafsson 1991; Söderlind 2003 — sources and
/// gains in time_settings.hpp): h_new = h · safety · e_n^(−a/k) · e_(n−1)^(b/k),
/// limited to [minimum_shrink_factor, maximum_step_growth] · h; after a rejection the
/// integral part alone (the elementary controller) and no growth.

#include <algorithm>
#include <cmath>

#include "time_settings.hpp"

namespace nkit {

class pi_step_size_controller {
 public:
  /// Forgets the previous error (start of an integration, or after a rejection).
  void reset() { m_previous_error = -1.0; }

  /// Proposed next step after an accepted step of size h with error norm e
  /// (<= 1); k = order of the error estimate + 1. `maximum_step_growth` caps h_new / h.
  double after_acceptance(const step_control_settings& s, double h, double error, int k, double maximum_step_growth) {
    const double e = std::max(error, 1e-10);
    double factor = s.safety_factor * std::pow(e, -s.integral_gain / k);
    if (m_previous_error > 0.0) factor *= std::pow(m_previous_error, s.proportional_gain / k);
    m_previous_error = e;
    factor = std::clamp(factor, s.minimum_shrink_factor, maximum_step_growth);
    return h * factor;
  }

  /// Proposed retry step after an error-test failure (e > 1).
  double after_rejection(const step_control_settings& s, double h, double error, int k) {
    m_previous_error = -1.0;
    if (!std::isfinite(error)) return h * s.minimum_shrink_factor;
    const double factor = s.safety_factor * std::pow(error, -1.0 / k);
    return h * std::clamp(factor, s.minimum_shrink_factor, s.safety_factor);
  }

 private:
  double m_previous_error = -1.0;
};

}  // namespace nkit

#endif  // NKIT_TIME_STEP_SIZE_CONTROLLER_HPP
