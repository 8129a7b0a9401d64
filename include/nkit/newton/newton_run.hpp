#ifndef NKIT_NEWTON_NEWTON_RUN_HPP
#define NKIT_NEWTON_NEWTON_RUN_HPP

/// \file newton/newton_run.hpp
/// The handle of a caller-driven Newton solve (newton_krylov_solver::begin):
///
///   auto run = solver.begin(residual, u);
///   while (run.advance() == nkit::run_state::running) { /* look at u */ }
///   const nkit::solve_report& report = run.report();
///
/// newton_krylov_solver::solve() is exactly this loop, so there is one code
/// path. Between steps `u` holds the last accepted iterate. When user code
/// throws, the exception propagates, `u` holds the last accepted iterate and
/// the run cannot continue.

#include <optional>
#include <stdexcept>
#include <utility>

#include "../report/outcome.hpp"
#include "../report/report.hpp"
#include "problem_access.hpp"

namespace nkit {

template <class Solver, class Problem, class Monitor>
class newton_run {
 public:
  using state_view = typename Solver::state_view;

  /// Evaluates R(u0); the run may already be over (non-finite R(u0), converged, stopped).
  newton_run(Solver& solver, Problem& problem, state_view u, Monitor monitor)
      : m_solver(&solver), m_problem(&problem), m_u(u), m_monitor(std::forward<Monitor>(monitor)) {
    try {
      m_solver->start(*m_problem, m_u);
      m_solver->notify_start(m_monitor);
      if (const std::optional<stop_reason> early = m_solver->initial_stop()) m_solver->finish(*early, m_u);
    } catch (const detail::stop_signal& signal) {
      m_solver->finish(signal.reason, m_u);
    }
  }

  newton_run(const newton_run&) = delete;
  newton_run& operator=(const newton_run&) = delete;
  newton_run(newton_run&&) noexcept = default;

  /// Takes one Newton step; returns run_state::running until the solve stops
  /// (then reason() says why).
  run_state advance() {
    if (m_broken) {
      throw std::logic_error("nkit: this run cannot continue after an exception from user code; start a new one");
    }
    if (m_solver->m_report.reason) return run_state::stopped;
    try {
      const std::optional<stop_reason> stop = m_solver->step(*m_problem, m_monitor, m_u);
      if (!stop) return run_state::running;
      m_solver->finish(*stop, m_u);
      return run_state::stopped;
    } catch (const detail::stop_signal& signal) {
      m_solver->finish(signal.reason, m_u);
      return run_state::stopped;
    } catch (...) {
      m_broken = true;  // u already holds the last accepted iterate
      throw;
    }
  }

  /// The report so far (complete once advance() returned run_state::stopped).
  const solve_report& report() const { return m_solver->m_report; }
  run_state state() const { return m_solver->m_report.reason ? run_state::stopped : run_state::running; }
  /// Why the run stopped (empty while it is running).
  stop_reason_if_stopped reason() const { return m_solver->m_report.reason; }

 private:
  Solver* m_solver;
  Problem* m_problem;
  state_view m_u;
  Monitor m_monitor;
  bool m_broken = false;
};

}  // namespace nkit

#endif  // NKIT_NEWTON_NEWTON_RUN_HPP
