#ifndef NKIT_REPORT_REPORT_HPP
#define NKIT_REPORT_REPORT_HPP

/// \file report/report.hpp
/// What a Newton solve returns: stop reason, counts, norms, time per phase and a
/// per-Newton-step history. Returned by value from solve().

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "../core/linear_operator.hpp"
#include "outcome.hpp"

namespace nkit {

/// Wall time per phase, seconds. Every field except `other` is measured:
///   residual             evaluations of R at iterates and trial points
///   jacobian_vector      J·v products (the residual evaluations inside
///                        finite-difference products count here)
///   jacobian_assembly    assembling R'(u) for a preconditioner
///   preconditioner_setup building the preconditioner (assembly excluded)
///   preconditioner_apply z = M⁻¹ r
///   orthogonalization    Arnoldi Gram–Schmidt passes
///   krylov_update        the rest of each GMRES call: normalising basis
///                        vectors, Givens rotations, x += M⁻¹ V y, restart
///                        residuals (the call's wall time minus the phases
///                        nested in it)
///   globalization        line search / trust region / pseudo-time work
///                        other than residual evaluations and J·v products
///   newton_update        the rest of each Newton step: forcing term, state
///                        and residual swaps and copies, keeping the best
///                        iterate, writing u, step norms, stopping tests,
///                        trace recording (the step's wall time minus the
///                        phases nested in it)
///   monitor              the monitor's callbacks (user code)
///   other                the remainder of the wall time: setting up and
///                        finishing the solve (workspace allocation on a
///                        first solve, copying u in and out) and, in a
///                        caller-driven loop, the caller's time between
///                        advance() calls.
/// The phases add up to the solve's wall time by construction (other is the
/// remainder); on a solve where R dominates, other is a small fraction.
struct phase_seconds {
  double residual = 0.0;
  double jacobian_vector = 0.0;
  double jacobian_assembly = 0.0;
  double preconditioner_setup = 0.0;
  double preconditioner_apply = 0.0;
  double orthogonalization = 0.0;
  double krylov_update = 0.0;
  double globalization = 0.0;
  double newton_update = 0.0;
  double monitor = 0.0;
  double other = 0.0;
  /// Sum of the measured phases (all but `other`).
  double measured() const {
    return residual + jacobian_vector + jacobian_assembly + preconditioner_setup + preconditioner_apply +
           orthogonalization + krylov_update + globalization + newton_update + monitor;
  }
  double total() const { return measured() + other; }
};

/// Calls per phase: orthogonalization counts Arnoldi steps, krylov_update
/// GMRES calls, newton_update Newton steps (attempted), monitor callbacks.
struct phase_calls {
  std::int64_t residual = 0;
  std::int64_t jacobian_vector = 0;
  std::int64_t jacobian_assembly = 0;
  std::int64_t preconditioner_setup = 0;
  std::int64_t preconditioner_apply = 0;
  std::int64_t orthogonalization = 0;
  std::int64_t krylov_update = 0;
  std::int64_t globalization = 0;
  std::int64_t newton_update = 0;
  std::int64_t monitor = 0;
};

/// One Newton step. Norms are Euclidean norms of the residual as the solver
/// sees it (scaled when residual scaling is set). A step that could not be
/// completed (no direction, no acceptable step) ends the history with
/// accepted = false; its norms are those of the unchanged state.
struct newton_step_record {
  int step = 0;                           ///< 1-based index of the step
  bool accepted = true;                   ///< false: the step failed (the solve stopped or went back to pseudo-time)
  double residual_norm = 0.0;             ///< ‖R(u_k)‖ after the step
  double relative_residual_norm = 0.0;    ///< ‖R(u_k)‖ / ‖R(u0)‖
  double forcing_term = 0.0;              ///< η requested from GMRES
  int linear_iterations = 0;              ///< Arnoldi steps in this step's linear solve
  double relative_linear_residual = 0.0;  ///< achieved ‖R + J s‖ / ‖R‖ (unpreconditioned)
  linear_solve_status linear_status = linear_solve_status::converged;
  double step_fraction = 0.0;  ///< accepted λ (line search) or 1
  double step_norm = 0.0;      ///< ‖u_k − u_{k−1}‖
  int rejected_trials = 0;     ///< rejected trial points in this step (and pseudo-time trials without a direction)
  bool preconditioner_set_up = false;
  /// max_i |Δu_i| / (absolute + relative·|u_i|) of this step when the
  /// component-wise test is enabled (<= 1 passes), else 0.
  double componentwise_step_ratio = 0.0;
  bool step_shortened_by_bounds = false;  ///< a bound or admissibility limit shortened the step
  double pseudo_time_step = 0.0;          ///< δ of the pseudo-transient term (0 when off)
  double trust_radius = 0.0;              ///< trust-region radius after the step (0 when off)
  double elapsed_seconds = 0.0;           ///< since the solve began
  std::int64_t residual_evaluations = 0;  ///< cumulative
};

/// What nkit noticed about the problem at the start of a solve. Warnings
/// never stop a solve; they say where its results need a closer look.
struct solve_warnings {
  /// Largest / smallest nonzero magnitude of the entries of u0 and of R(u0)
  /// (solver's variables; 1 when not measured).
  double state_magnitude_spread = 1.0;
  double residual_magnitude_spread = 1.0;
  /// The spreads exceed newton_settings::magnitude_spread_warning: the
  /// Euclidean norms that decide convergence are dominated by the largest
  /// entries. Give typical magnitudes with set_scaling, or enable
  /// newton_settings::componentwise.
  bool state_magnitudes_spread_widely = false;
  bool residual_magnitudes_spread_widely = false;
  bool any() const { return state_magnitudes_spread_widely || residual_magnitudes_spread_widely; }
};

/// ‖R_f‖₂ of one field, for problems that declare their fields (a
/// `field_layout()` member, fields/field_residual_norms.hpp). Norms are those
/// of the residual as the solver sees it (scaled when residual scaling is set),
/// so Σ_f ‖R_f‖² = ‖R‖² for every entry.
struct field_residual_record {
  std::string name;                    ///< the field's name in its layout
  double initial_residual_norm = 0.0;  ///< ‖R_f(u0)‖ (NaN when R(u0) was not evaluated)
  double final_residual_norm = 0.0;    ///< ‖R_f‖ at the returned u
  /// ‖R_f‖ after each Newton step: entry i belongs to solve_report::history[i].
  std::vector<double> history;
};

struct solve_report {
  /// Why the solve stopped; empty while a caller-driven run is still running
  /// (every report returned by solve() has one).
  stop_reason_if_stopped reason;
  /// The step control active when the solve stopped; says which one gave up
  /// when reason is no_acceptable_step (line_search after a finished
  /// pseudo-transient phase).
  globalization_strategy globalization_at_stop = globalization_strategy::line_search;

  bool stopped() const { return reason.has_value(); }
  bool converged() const { return reason && is_converged(*reason); }
  /// The broad class of the stop reason (empty while running).
  std::optional<solve_status> status() const {
    return reason ? std::optional<solve_status>(status_of(*reason)) : std::nullopt;
  }
  /// One sentence: why the solve stopped.
  std::string_view message() const {
    return reason ? describe(*reason, globalization_at_stop) : std::string_view("The solve has not finished yet.");
  }

  int newton_steps = 0;
  std::int64_t linear_iterations = 0;
  std::int64_t residual_evaluations = 0;  ///< every call of the user's residual, J·v ones included
  /// With newton_settings.recycling: recomputations of the recycled space's
  /// images C = J M⁻¹ Ũ (k J·v products and preconditioner applications
  /// each), and the linear solves' true-residual mismatches that forced one
  /// (linear_solve_result has both per solve).
  std::int64_t recycled_space_refreshes = 0;
  std::int64_t true_residual_mismatches = 0;
  std::int64_t jacobian_vector_products = 0;
  std::int64_t preconditioner_setups = 0;
  std::int64_t preconditioner_applications = 0;
  std::int64_t preconditioner_fallbacks = 0;  ///< setups that returned ready_with_fallback
  std::int64_t jacobian_assemblies = 0;
  /// Rejected trial points, all steps (pseudo-time steps: also trials whose linear solve gave no usable direction).
  std::int64_t rejected_trials = 0;
  std::int64_t non_finite_trials = 0;          ///< trial points whose residual had NaN/Inf
  std::int64_t inadmissible_trials = 0;        ///< trial points rejected by is_admissible (residual not evaluated)
  std::int64_t steps_shortened_by_bounds = 0;  ///< steps shortened by bounds or admissibility
  /// Times a failing Newton phase went back to pseudo-time stepping
  /// (pseudo_transient_settings::maximum_returns_to_pseudo_time).
  int returns_to_pseudo_time = 0;
  solve_warnings warnings;

  /// ‖R(u0)‖; NaN when the solve stopped (time limit, cancellation) before R(u0) was evaluated.
  double initial_residual_norm = 0.0;
  /// The residual norm that counts as converged: max(absolute_tolerance, relative_tolerance·‖R(u0)‖).
  double target_residual_norm = 0.0;
  double final_residual_norm = 0.0;  ///< ‖R(u)‖ at the returned u (NaN as above)
  double wall_seconds = 0.0;
  phase_seconds time;
  phase_calls calls;
  /// Median wall time of one residual evaluation in this solve: over its
  /// last 64 evaluations (a fixed ring, no allocation; detail/timer.hpp).
  double median_residual_seconds = 0.0;
  /// Workspace held by the solver at the end of the solve, bytes: Newton
  /// and GMRES vectors, Hessenberg matrix and rotations, difference
  /// workspace, bounds and scales, the assembled Jacobian, the
  /// preconditioner's own count (its memory_bytes(), 0 if it has none) and
  /// the history capacity. Not counted: the user's problem and state.
  std::size_t workspace_bytes = 0;

  /// Total time in units of one residual evaluation (the field's
  /// machine-independent cost measure); 0 if no evaluation was timed.
  double work_units() const { return median_residual_seconds > 0.0 ? wall_seconds / median_residual_seconds : 0.0; }

  std::vector<newton_step_record> history;
  /// One entry per field when the problem declares field_layout(), else empty.
  std::vector<field_residual_record> field_residuals;
};

}  // namespace nkit

#endif  // NKIT_REPORT_REPORT_HPP
