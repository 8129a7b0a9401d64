#ifndef NKIT_NEWTON_PRECONDITIONER_SCHEDULE_HPP
#define NKIT_NEWTON_PRECONDITIONER_SCHEDULE_HPP

/// \file newton/preconditioner_schedule.hpp
/// When the Newton driver rebuilds its preconditioner (calls its setup()):
/// a small stateful policy in the style of the forcing term — the driver
/// asks rebuild_due() before each Newton step and reports what happened with
/// record_setup() and record_linear_solve().
///
/// A preconditioner built from an earlier state ("lagged") costs more GMRES
/// iterations but saves setups; setups often dominate, so lagging pays off
/// on mildly nonlinear problems (common practice; D.A. Knoll & D.E. Keyes,
/// J. Comput. Phys. 193 (2004) 357–397, discuss lagging in Jacobian-free
/// Newton–Krylov methods).

#include <Eigen/Core>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

/// When the driver rebuilds the preconditioner (calls its setup()).
struct preconditioner_rebuild_settings {
  /// Rebuild at least every this many Newton steps (1 = every step).
  int rebuild_every_newton_steps = 1;
  /// Also rebuild when the previous linear solve needed more than this many
  /// iterations (0 = off).
  int rebuild_when_linear_iterations_exceed = 0;
  /// Also rebuild after a linear solve that did not converge.
  bool rebuild_after_linear_failure = true;
  /// Rebuild at the first step of every solve. Set false to carry a
  /// preconditioner across solves (implicit time steps, continuation): it is
  /// then treated as built at step 0 of the new solve.
  bool rebuild_at_solve_start = true;

  void validate(std::string_view prefix = "preconditioner_rebuild_settings") const {
    const std::string p(prefix);
    detail::require_at_least(p + ".rebuild_every_newton_steps", rebuild_every_newton_steps, 1);
    detail::require_at_least(p + ".rebuild_when_linear_iterations_exceed", rebuild_when_linear_iterations_exceed, 0);
  }
};

class preconditioner_schedule {
 public:
  explicit preconditioner_schedule(preconditioner_rebuild_settings settings = {}) : m_settings(settings) {}

  void configure(const preconditioner_rebuild_settings& settings) { m_settings = settings; }
  const preconditioner_rebuild_settings& settings() const { return m_settings; }

  /// At the start of a solve of `size` unknowns: keeps a preconditioner built
  /// by an earlier solve of the same size only when rebuild_at_solve_start is
  /// false; it then counts as built at step 0 of the new solve.
  void start_solve(Eigen::Index size) {
    if (m_settings.rebuild_at_solve_start || m_last_setup_step < 0 || m_size != size) {
      m_current = false;
    } else {
      m_last_setup_step = 0;
    }
    m_last_linear_iterations = 0;
    m_last_linear_failed = false;
  }

  /// The next Newton step rebuilds whatever the policy says.
  void request_rebuild() { m_requested = true; }

  /// Whether Newton step `step` (0-based) must rebuild before its linear solve.
  bool rebuild_due(int step) const {
    if (!m_current || m_requested) return true;
    if (step - m_last_setup_step >= m_settings.rebuild_every_newton_steps) return true;
    if (m_settings.rebuild_when_linear_iterations_exceed > 0 &&
        m_last_linear_iterations > m_settings.rebuild_when_linear_iterations_exceed) {
      return true;
    }
    return m_settings.rebuild_after_linear_failure && m_last_linear_failed;
  }

  /// A setup ran at Newton step `step` for `size` unknowns; `usable` is false when it failed.
  void record_setup(int step, Eigen::Index size, bool usable) {
    m_last_setup_step = step;
    m_size = size;
    m_requested = false;
    m_current = usable;
  }

  /// The linear solve of the current step took `iterations` and did or did not converge.
  void record_linear_solve(int iterations, bool converged) {
    m_last_linear_iterations = iterations;
    m_last_linear_failed = !converged;
  }

 private:
  preconditioner_rebuild_settings m_settings;
  bool m_requested = false;
  bool m_current = false;
  int m_last_setup_step = -1;
  Eigen::Index m_size = -1;
  int m_last_linear_iterations = 0;
  bool m_last_linear_failed = false;
};

}  // namespace nkit

#endif  // NKIT_NEWTON_PRECONDITIONER_SCHEDULE_HPP
