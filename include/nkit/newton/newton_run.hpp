#ifndef NKIT_NEWTON_NEWTON_RUN_HPP
#define NKIT_NEWTON_NEWTON_RUN_HPP

/// \file newton/newton_run.hpp
/// The handle of a caller-driven Newton solve (newton_krylov_solver::begin):
///
///   auto run = solver.begin(residual, u);
///   while (run.advance() == nkit::outcome::in_progress) { /* look at u */ }
///   const nkit::solve_report& report = run.report();
///
/// newton_krylov_solver::solve() is exactly this loop, so there is one code
/// path. Between steps `u` holds the last accepted iterate. When user code
/// throws, the exception propagates, `u` holds the last accepted iterate and
/// the run cannot continue.

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
      if (const outcome early = m_solver->initial_outcome(); early != outcome::in_progress) {
        m_solver->finish(early, m_u);
      }
    } catch (const detail::stop_signal& signal) {
      m_solver->finish(signal.reason, m_u);
    }
  }

  newton_run(const newton_run&) = delete;
  newton_run& operator=(const newton_run&) = delete;
  newton_run(newton_run&&) noexcept = default;

  /// Takes one Newton step; returns outcome::in_progress until the solve stops.
  outcome advance() {
    if (m_broken) {
      throw std::logic_error("nkit: this run cannot continue after an exception from user code; start a new one");
    }
    if (m_solver->m_report.result != outcome::in_progress) return m_solver->m_report.result;
    try {
      const outcome result = m_solver->step(*m_problem, m_monitor, m_u);
      if (result != outcome::in_progress) m_solver->finish(result, m_u);
      return result;
    } catch (const detail::stop_signal& signal) {
      m_solver->finish(signal.reason, m_u);
      return signal.reason;
    } catch (...) {
      m_broken = true;  // u already holds the last accepted iterate
      throw;
    }
  }

  /// The report so far (complete once advance() returned a final outcome).
  const solve_report& report() const { return m_solver->m_report; }
  outcome result() const { return m_solver->m_report.result; }

 private:
  Solver* m_solver;
  Problem* m_problem;
  state_view m_u;
  Monitor m_monitor;
  bool m_broken = false;
};

}  // namespace nkit

#endif  // NKIT_NEWTON_NEWTON_RUN_HPP
