#ifndef NKIT_FIXED_POINT_ANDERSON_REPORT_HPP
#define NKIT_FIXED_POINT_ANDERSON_REPORT_HPP

/// \file fixed_point/anderson_report.hpp
/// What an Anderson-accelerated fixed-point solve returns: outcome, counts,
/// norms, time per phase and a per-iteration history — the same shape as
/// solve_report (report.hpp) for the Newton driver. Returned by value from
/// anderson_solver::solve().

#include <cstddef>
#include <cstdint>
#include <string_view>
#include <vector>

#include "../report/outcome.hpp"

namespace nkit {

/// Wall time per phase of an Anderson solve, seconds. Every field except
/// `other` is measured:
///   residual       evaluations of G, with forming f = G(u) − u
///   least_squares  QR updating (new column, dropped columns, condition
///                  number) and solving for the coefficients γ
///   update         forming the next iterate, keeping the best one, bounds,
///                  stopping tests, writing u
///   monitor        the monitor's callbacks (user code)
///   other          the remainder: setup and finish (workspace allocation on
///                  a first solve, copying u in and out) and, in a
///                  caller-driven loop, the caller's time between advance() calls.
struct anderson_phase_seconds {
  double residual = 0.0;
  double least_squares = 0.0;
  double update = 0.0;
  double monitor = 0.0;
  double other = 0.0;
  double measured() const { return residual + least_squares + update + monitor; }
  double total() const { return measured() + other; }
};

/// One completed Anderson iteration. Norms are Euclidean norms of the
/// fixed-point residual f(u) = G(u) − u.
struct anderson_step_record {
  int iteration = 0;                         ///< 1-based index of the completed iteration
  double residual_norm = 0.0;                ///< ‖f(u_k)‖ after the iteration
  double relative_residual_norm = 0.0;       ///< ‖f(u_k)‖ / ‖f(u0)‖
  int depth_used = 0;                        ///< columns of ΔF in this iteration's least-squares problem
  int dropped_columns = 0;                   ///< columns the condition safeguard removed before it
  double condition_number = 0.0;             ///< 1-norm condition number of R (0 when no column)
  double least_squares_residual_norm = 0.0;  ///< ‖f_{k−1} − ΔF γ‖, the linearised residual of the combination
  double step_norm = 0.0;                    ///< ‖u_k − u_{k−1}‖
  double step_fraction = 1.0;                ///< fraction of the proposed step taken (bounds, non-finite G)
  bool restarted = false;                    ///< the history was cleared during this iteration
  bool step_shortened_by_bounds = false;     ///< a bound shortened the step
  double elapsed_seconds = 0.0;              ///< since the solve began
  std::int64_t residual_evaluations = 0;     ///< evaluations of G so far (cumulative)
};

struct anderson_report {
  stop_reason_if_stopped reason;
  bool converged() const { return is_converged(reason); }
  std::string_view message() const {
    if (!reason) return "The solve has not finished yet.";
    if (*reason == stop_reason::no_acceptable_step) {
      return "Cannot proceed: G stayed non-finite (or the state left the bounds) after maximum_step_halvings "
             "halvings of the step.";
    }
    return describe(*reason);
  }

  int iterations = 0;
  std::int64_t residual_evaluations = 0;  ///< evaluations of G, the one at u0 included
  std::int64_t restarts = 0;              ///< history cleared (stagnation or a non-finite G after an accelerated step)
  std::int64_t dropped_columns = 0;       ///< columns removed by the condition safeguard, all iterations
  std::int64_t non_finite_trials = 0;     ///< trial iterates whose G had NaN/Inf (or that overflowed)
  std::int64_t steps_shortened_by_bounds = 0;  ///< steps shortened by bounds

  /// ‖f(u0)‖; NaN when the solve stopped (time limit, cancellation) before G(u0) was evaluated.
  double initial_residual_norm = 0.0;
  double final_residual_norm = 0.0;  ///< ‖f(u)‖ at the returned u (NaN as above)
  double wall_seconds = 0.0;
  anderson_phase_seconds time;
  /// Median wall time of one evaluation of G in this solve: over its last 64
  /// evaluations (a fixed ring, no allocation).
  double median_residual_seconds = 0.0;
  /// Workspace held by the solver at the end of the solve, bytes: iterate,
  /// G and f vectors (current and trial), the best iterate, the 2m history
  /// vectors (Q of ΔF = QR and ΔG), the m × m factor and the history
  /// capacity. Not counted: the user's map and state.
  std::size_t workspace_bytes = 0;

  /// Total time in units of one evaluation of G; 0 if none was timed.
  double work_units() const { return median_residual_seconds > 0.0 ? wall_seconds / median_residual_seconds : 0.0; }

  std::vector<anderson_step_record> history;
};

}  // namespace nkit

#endif  // NKIT_FIXED_POINT_ANDERSON_REPORT_HPP
