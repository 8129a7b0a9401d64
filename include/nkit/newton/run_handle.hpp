#ifndef NKIT_NEWTON_RUN_HANDLE_HPP
#define NKIT_NEWTON_RUN_HANDLE_HPP

/// \file newton/run_handle.hpp
/// The handle of a caller-driven solve, shared by every iterative solver
/// (newton_krylov_solver::begin, anderson_solver::begin):
///
///   auto run = solver.begin(residual, u);
///   while (run.advance() == nkit::run_state::running) { /* look at u */ }
///   const auto& report = run.report();
///
/// Each solver's solve() is exactly this loop, so there is one code path.
/// Between steps `u` holds the last accepted iterate. When user code throws,
/// the exception propagates, `u` holds the last accepted iterate and the run
/// cannot continue. A budget, limit or cancellation met deep inside a step
/// unwinds as detail::stop_signal and ends the run with its reason.
///
/// What a Solver provides to its run handle (private, with the handle a friend):
///   start(problem, u)            set up and evaluate the initial residual
///   notify_start(monitor)        tell the monitor (may do nothing)
///   initial_stop()               a stop_reason when no step is needed or possible
///   step(problem, monitor, u)    one iteration: nothing to go on, or why it stopped
///   finish(reason, u)            write the report and the returned u
///   m_report                     the report (with a stop_reason_if_stopped `reason`)

#include <optional>
#include <stdexcept>
#include <utility>

#include "../report/outcome.hpp"

namespace nkit {

template <class Solver, class Problem, class Monitor>
class run_handle {
 public:
  using state_view = typename Solver::state_view;

  /// Evaluates R(u0); the run may already be over (non-finite R(u0), converged, stopped).
  run_handle(Solver& solver, Problem& problem, state_view u, Monitor monitor)
      : m_solver(&solver), m_problem(&problem), m_u(u), m_monitor(std::forward<Monitor>(monitor)) {
    try {
      m_solver->start(*m_problem, m_u);
      m_solver->notify_start(m_monitor);
      if (const std::optional<stop_reason> early = m_solver->initial_stop()) m_solver->finish(*early, m_u);
    } catch (const detail::stop_signal& signal) {
      m_solver->finish(signal.reason, m_u);
    }
  }

  run_handle(const run_handle&) = delete;
  run_handle& operator=(const run_handle&) = delete;
  run_handle(run_handle&&) noexcept = default;

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
  const auto& report() const { return m_solver->m_report; }
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

#endif  // NKIT_NEWTON_RUN_HANDLE_HPP
