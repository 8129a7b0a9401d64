#ifndef NKIT_REPORT_HPP
#define NKIT_REPORT_HPP

/// \file report.hpp
/// What a Newton solve returns: outcome, counts, norms, time per phase and a
/// per-Newton-step history. Returned by value from solve().

#include <cstddef>
#include <cstdint>
#include <string_view>
#include <vector>

#include "linear_operator.hpp"
#include "outcome.hpp"

namespace nkit {

/// Wall time per phase, seconds. `residual` covers evaluations of R at
/// iterates and trial points; residual evaluations made inside
/// finite-difference J·v products count under `jacobian_vector`;
/// `globalization` is line-search / trust-region / pseudo-time work other
/// than residual evaluations and J·v products; `other` is the rest of the
/// wall time (vector updates, bookkeeping, monitors), so the phases add up to
/// the total by construction.
struct phase_seconds {
  double residual = 0.0;
  double jacobian_vector = 0.0;
  double jacobian_assembly = 0.0;
  double preconditioner_setup = 0.0;
  double preconditioner_apply = 0.0;
  double orthogonalization = 0.0;
  double globalization = 0.0;
  double other = 0.0;
  double total() const {
    return residual + jacobian_vector + jacobian_assembly + preconditioner_setup + preconditioner_apply +
           orthogonalization + globalization + other;
  }
};

/// Calls per phase (orthogonalization counts Arnoldi steps).
struct phase_calls {
  std::int64_t residual = 0;
  std::int64_t jacobian_vector = 0;
  std::int64_t jacobian_assembly = 0;
  std::int64_t preconditioner_setup = 0;
  std::int64_t preconditioner_apply = 0;
  std::int64_t orthogonalization = 0;
  std::int64_t globalization = 0;
};

/// One completed Newton step. Norms are Euclidean norms of the residual as
/// the solver sees it (scaled when residual scaling is set).
struct newton_step_record {
  int step = 0;                           ///< 1-based index of the completed step
  double residual_norm = 0.0;             ///< ‖R(u_k)‖ after the step
  double relative_residual_norm = 0.0;    ///< ‖R(u_k)‖ / ‖R(u0)‖
  double forcing_term = 0.0;              ///< η requested from GMRES
  int linear_iterations = 0;              ///< Arnoldi steps in this step's linear solve
  double relative_linear_residual = 0.0;  ///< achieved ‖R + J s‖ / ‖R‖ (unpreconditioned)
  linear_solve_status linear_status = linear_solve_status::converged;
  double step_length = 0.0;  ///< accepted λ (line search) or 1
  double step_norm = 0.0;    ///< ‖u_k − u_{k−1}‖
  int backtracks = 0;        ///< rejected trial points in this step
  bool preconditioner_rebuilt = false;
  bool bound_active = false;              ///< a bound or admissibility limit shortened the step
  double pseudo_time_step = 0.0;          ///< δ of the pseudo-transient term (0 when off)
  double trust_radius = 0.0;              ///< trust-region radius after the step (0 when off)
  double elapsed_seconds = 0.0;           ///< since the solve began
  std::int64_t residual_evaluations = 0;  ///< cumulative
};

struct solve_report {
  outcome result = outcome::in_progress;
  bool converged() const { return is_converged(result); }
  std::string_view message() const { return describe(result); }

  int newton_steps = 0;
  std::int64_t linear_iterations = 0;
  std::int64_t residual_evaluations = 0;  ///< every call of the user's residual, J·v ones included
  std::int64_t jacobian_vector_products = 0;
  std::int64_t preconditioner_setups = 0;
  std::int64_t preconditioner_applications = 0;
  std::int64_t preconditioner_fallbacks = 0;  ///< setups that returned ready_with_fallback
  std::int64_t jacobian_assemblies = 0;
  std::int64_t backtracks = 0;           ///< rejected trial points, all steps
  std::int64_t non_finite_trials = 0;    ///< trial points whose residual had NaN/Inf
  std::int64_t inadmissible_trials = 0;  ///< trial points rejected by is_admissible (residual not evaluated)
  std::int64_t bound_limited_steps = 0;  ///< steps shortened by bounds or admissibility

  double initial_residual_norm = 0.0;  ///< ‖R(u0)‖
  double final_residual_norm = 0.0;    ///< ‖R(u)‖ at the returned u
  double wall_seconds = 0.0;
  phase_seconds time;
  phase_calls calls;
  /// Median wall time of one residual evaluation in this solve.
  double median_residual_seconds = 0.0;
  /// Workspace held by the solver (Krylov basis, Newton vectors, preconditioner, history), bytes.
  std::size_t workspace_bytes = 0;

  /// Total time in units of one residual evaluation (the field's
  /// machine-independent cost measure); 0 if no evaluation was timed.
  double work_units() const { return median_residual_seconds > 0.0 ? wall_seconds / median_residual_seconds : 0.0; }

  std::vector<newton_step_record> history;
};

}  // namespace nkit

#endif  // NKIT_REPORT_HPP
