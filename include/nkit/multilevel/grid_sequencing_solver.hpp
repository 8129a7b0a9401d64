#ifndef NKIT_MULTILEVEL_GRID_SEQUENCING_SOLVER_HPP
#define NKIT_MULTILEVEL_GRID_SEQUENCING_SOLVER_HPP

/// \file multilevel/grid_sequencing_solver.hpp
/// Grid sequencing (nested iteration) for Newton–Krylov: solve the problem on
/// the coarsest level, interpolate its solution to the next finer level as
/// the initial guess there, solve, and so on to the finest level, which then
/// needs only one or two Newton steps (nested iteration: A. Brandt, Math.
/// Comp. 31 (1977) 333–390; mesh independence: E.L. Allgower, K. Böhmer,
/// F.A. Potra & W.C. Rheinboldt, SIAM J. Numer. Anal. 23 (1986) 160–169;
/// C.T. Kelley, "Solving Nonlinear Equations with Newton's Method", SIAM
/// 2003 — all from memory).
///
/// What the caller supplies:
///   transfer               the levels and the moves between them: nkit's
///                          structured_grid_hierarchy (grids/, cell-centred
///                          bilinear/trilinear interpolation and averaging) or
///                          any type with its members (level_count, unknowns,
///                          prolong_to_finer, restrict_to_coarser)
///   problem_at_level(ℓ)    the residual of level ℓ (a reference or a value;
///                          the same type at every level)
///   solver_at_level(ℓ, s)  a Newton solver for level ℓ built with the
///                          newton_settings s the driver hands out: each level
///                          gets its own solver and so its own preconditioner,
///                          set up from that level's Jacobian (choose its type
///                          and settings per level here; newton_solver_per_level
///                          is the plain case). The solver lives for its
///                          level's solve only.
///   u                      the state on the finest level: the initial guess
///                          (restricted to every level: ū_ℓ; ū_0 starts the
///                          coarsest solve) and, afterwards, the result.
/// Each level's stop test follows the level tolerance rule of
/// grid_sequencing_settings.hpp: the driver sets relative_tolerance,
/// absolute_tolerance and wall_time_budget_seconds of the solver it gets back
/// (everything else in the solver's settings is the caller's), after one
/// residual evaluation at ū_ℓ for the reference norm ‖R_ℓ(ū_ℓ)‖.
///
/// A level that does not converge hands its best iterate on (the finest
/// level often still converges), unless it was interrupted (cancellation
/// flag, monitor) or ran out of wall time: then the sequence stops.
///
/// The state u: while coarse levels run, u is not touched. On the finest
/// level u holds the interpolated coarse solution and then the Newton
/// iterates (newton_krylov_solver's contract: the last accepted iterate
/// between steps, the best one when the solve ends without converging).
/// When the sequence ends without converging and the given state had the
/// smaller finest-level residual, or ended before the finest level, u gets
/// the given state back (report.returned_given_state). When user code
/// throws, the exception propagates; u then holds the given state (coarse
/// level) or the finest solve's last accepted iterate or interpolated guess.
///
/// Allocation: one copy of the given state and one vector per coarser level
/// (1/3 of the finest in 2-D, 1/7 in 3-D), kept for later solves of the same
/// sizes, plus each level's solver and its workspace while that level runs.
/// Serial Eigen vectors (eigen_vector_space<double>) only.

#include <Eigen/Core>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>
#include <vector>

#include "../core/eigen_vector_space.hpp"
#include "../core/preconditioner.hpp"
#include "../grids/structured_grid_hierarchy.hpp"
#include "../newton/newton_krylov_solver.hpp"
#include "../newton/newton_settings.hpp"
#include "../report/outcome.hpp"
#include "grid_sequencing_report.hpp"
#include "grid_sequencing_settings.hpp"

namespace nkit {

/// solver_at_level for the plain case: a fresh newton_krylov_solver on the
/// serial Eigen space with the level's settings and a default-constructed
/// Preconditioner (set up from each level's own Jacobian).
template <class Preconditioner = identity_preconditioner>
struct newton_solver_per_level {
  newton_krylov_solver<eigen_vector_space<double>, Preconditioner> operator()(int /*level*/,
                                                                              const newton_settings& settings) const {
    return newton_krylov_solver<eigen_vector_space<double>, Preconditioner>(settings);
  }
};

class grid_sequencing_solver {
  using clock = std::chrono::steady_clock;

 public:
  /// Validates the settings (std::invalid_argument naming the first bad field).
  explicit grid_sequencing_solver(grid_sequencing_settings settings = {}) : m_settings(std::move(settings)) {
    m_settings.validate();
  }
  void configure(const grid_sequencing_settings& settings) {
    settings.validate();
    m_settings = settings;
  }
  const grid_sequencing_settings& settings() const { return m_settings; }

  /// Solves the finest level's R_L(u) = 0 by grid sequencing from u (file
  /// comment). Throws std::invalid_argument when the transfer has no level or
  /// u's size is not the finest level's unknowns.
  template <class LevelTransfer, class ProblemAtLevel, class SolverAtLevel>
  grid_sequencing_report solve(const LevelTransfer& transfer, ProblemAtLevel&& problem_at_level,
                               SolverAtLevel&& solver_at_level, Eigen::Ref<Eigen::VectorXd> u) {
    const clock::time_point start = clock::now();
    const int level_count = transfer.level_count();
    detail::require_at_least("grid_sequencing_solver: the transfer's level_count", level_count, 1);
    const int finest = level_count - 1;
    if (u.size() != static_cast<Eigen::Index>(transfer.unknowns(finest))) {
      throw std::invalid_argument("nkit: grid_sequencing_solver: the state u has " + std::to_string(u.size()) +
                                  " entries, the finest level (" + std::to_string(finest) + ") " +
                                  std::to_string(static_cast<long long>(transfer.unknowns(finest))) + " unknowns");
    }

    // The given state, and its restriction to every coarser level (ū_ℓ).
    m_given = u;
    m_levels.resize(static_cast<std::size_t>(level_count));
    for (int level = finest - 1; level >= 0; --level) {
      Eigen::VectorXd& coarse = m_levels[static_cast<std::size_t>(level)];
      coarse.resize(static_cast<Eigen::Index>(transfer.unknowns(level)));
      const Eigen::VectorXd& fine = level + 1 == finest ? m_given : m_levels[static_cast<std::size_t>(level) + 1];
      transfer.restrict_to_coarser(level + 1, fine, coarse);
    }

    grid_sequencing_report report;
    report.levels.reserve(static_cast<std::size_t>(level_count));
    const double time_budget = m_settings.newton.wall_time_budget_seconds;
    for (int level = 0; level <= finest; ++level) {
      const double remaining = time_budget - seconds_since(start);
      if (!(remaining > 0.0)) {
        report.reason = stop_reason::wall_time_budget_spent;
        break;
      }
      const bool is_finest = level == finest;
      Eigen::Ref<Eigen::VectorXd> state = is_finest ? u : Eigen::Ref<Eigen::VectorXd>(m_levels[index(level)]);
      const bool carry_on =
          solve_level(transfer, problem_at_level, solver_at_level, level, level_count, remaining, state, report);
      if (is_finest) report.reached_finest_level = true;
      if (!carry_on || is_finest) {
        report.reason = report.levels.back().reason;
        break;
      }
    }

    // The finest state is never worse than the one given: keep the finest
    // solve's result when its residual is smaller (or the given one was not finite).
    if (!report.converged()) {
      const grid_level_record* last = report.reached_finest_level ? &report.levels.back() : nullptr;
      const bool solved = last != nullptr && last->newton.reason.has_value();
      const bool better =
          solved && std::isfinite(last->final_residual_norm) &&
          (!std::isfinite(last->reference_residual_norm) || last->final_residual_norm < last->reference_residual_norm);
      if (!better) {
        u = m_given;
        report.returned_given_state = true;
      }
    }
    report.wall_seconds = seconds_since(start);
    return report;
  }

 private:
  static std::size_t index(int level) { return static_cast<std::size_t>(level); }
  static double seconds_since(clock::time_point start) {
    return std::chrono::duration<double>(clock::now() - start).count();
  }

  /// One level: build its solver, evaluate the reference norm at ū_ℓ (held in
  /// `state`), interpolate the level before into `state`, solve. Appends the
  /// level's record; returns false when the sequence must stop here.
  template <class LevelTransfer, class ProblemAtLevel, class SolverAtLevel>
  bool solve_level(const LevelTransfer& transfer, ProblemAtLevel& problem_at_level, SolverAtLevel& solver_at_level,
                   int level, int level_count, double remaining_seconds, Eigen::Ref<Eigen::VectorXd> state,
                   grid_sequencing_report& report) {
    const clock::time_point level_start = clock::now();
    grid_level_record record;
    record.level = level;
    record.unknowns = static_cast<std::int64_t>(state.size());
    record.relative_tolerance = m_settings.level_relative_tolerance(level, level_count);

    newton_settings level_settings = m_settings.level_newton_settings(level, level_count);
    level_settings.wall_time_budget_seconds = remaining_seconds;
    auto solver = solver_at_level(level, static_cast<const newton_settings&>(level_settings));
    auto&& problem = problem_at_level(level);
    newton_settings applied = solver.settings();
    applied.relative_tolerance = record.relative_tolerance;
    applied.absolute_tolerance = m_settings.newton.absolute_tolerance;
    applied.wall_time_budget_seconds = remaining_seconds;
    solver.configure(applied);

    // The reference norm ‖R_ℓ(ū_ℓ)‖, through the solver (so with its scaling and checks).
    {
      auto run = solver.begin(problem, state);
      record.reference_residual_norm = run.report().initial_residual_norm;
      record.residual_evaluations = run.report().residual_evaluations;
      if (run.report().reason && !is_converged(run.report().reason) &&
          status_of(*run.report().reason) != solve_status::cannot_proceed) {
        // Stopped before R(ū_ℓ) was known: time limit or cancellation.
        record.reason = run.report().reason;
        record.wall_seconds = seconds_since(level_start);
        report.levels.push_back(std::move(record));
        return false;
      }
    }
    const double reference = record.reference_residual_norm;
    const bool finest = level == level_count - 1;
    if (finest && std::isfinite(reference) && reference <= m_settings.newton.absolute_tolerance) {
      // The given state already passes the finest level's test.
      record.target_residual_norm = m_settings.newton.absolute_tolerance;
      record.initial_residual_norm = record.final_residual_norm = reference;
      record.reason = stop_reason::absolute_tolerance_met;
      record.wall_seconds = seconds_since(level_start);
      report.levels.push_back(std::move(record));
      report.returned_given_state = true;
      return false;
    }
    if (std::isfinite(reference) && reference > 0.0) {
      // Relative to the given state's residual: the test a plain solve from ū_ℓ would use.
      applied.absolute_tolerance =
          std::max(m_settings.newton.absolute_tolerance, record.relative_tolerance * reference);
      applied.relative_tolerance = 0.0;
    }  // else: relative to the level's own starting residual (the settings as applied above)
    applied.wall_time_budget_seconds = remaining_seconds - seconds_since(level_start);
    if (!(applied.wall_time_budget_seconds > 0.0)) {
      record.reason = stop_reason::wall_time_budget_spent;
      record.wall_seconds = seconds_since(level_start);
      report.levels.push_back(std::move(record));
      return false;
    }
    solver.configure(applied);

    if (level > 0) {
      const clock::time_point transfer_start = clock::now();
      const Eigen::VectorXd& coarse = m_levels[index(level - 1)];
      transfer.prolong_to_finer(level - 1, coarse, state);
      record.transfer_seconds = seconds_since(transfer_start);
    }
    record.newton = solver.solve(problem, state);
    const solve_report& newton = record.newton;
    record.target_residual_norm = newton.target_residual_norm;
    record.initial_residual_norm = newton.initial_residual_norm;
    record.final_residual_norm = newton.final_residual_norm;
    record.newton_steps = newton.newton_steps;
    record.linear_iterations = newton.linear_iterations;
    record.residual_evaluations += newton.residual_evaluations;
    record.reason = newton.reason;
    record.wall_seconds = seconds_since(level_start);
    const bool stops_sequence = !newton.converged() && (newton.status() == solve_status::interrupted ||
                                                        newton.reason == stop_reason::wall_time_budget_spent);
    report.levels.push_back(std::move(record));
    return !stops_sequence;
  }

  grid_sequencing_settings m_settings;
  Eigen::VectorXd m_given;
  std::vector<Eigen::VectorXd> m_levels;
};

}  // namespace nkit

#endif  // NKIT_MULTILEVEL_GRID_SEQUENCING_SOLVER_HPP
