#ifndef NKIT_GLOBALIZATION_PSEUDO_TRANSIENT_HPP
#define NKIT_GLOBALIZATION_PSEUDO_TRANSIENT_HPP

/// \file globalization/pseudo_transient.hpp
/// Pseudo-transient continuation (Ψtc) step control.
///
/// Each pseudo-time step takes one Newton step on
///   (W/δ)(u − u_prev) + R(u) = 0,  i.e.  u_next = u − (W/δ + R'(u))⁻¹ R(u),
/// the iteration analysed by C.T. Kelley & D.E. Keyes, "Convergence analysis
/// of pseudo-transient continuation", SIAM J. Numer. Anal. 35(2) (1998)
/// 508–523 (update form not checked against the paper). W is a positive diagonal:
///   - all ones (default): one global pseudo-time step δ;
///   - cell volumes V_i: δ is a global Δτ in time units;
///   - spectral-radius estimates λ_i (Σ over faces of |wave speed|·area, in
///     residual units per state unit): then δ is a CFL number and each cell
///     has its own local Δτ_i = CFL·V_i/λ_i — the usual CFD practice.
/// The problem supplies W through an optional member
///   void pseudo_time_weights(const vector_type& u, vector_type& weights)
/// evaluated at every pseudo-time step (so λ_i may depend on u).
///
/// δ grows by switched evolution relaxation, W.A. Mulder & B. van Leer,
/// "Experiments with implicit upwind methods for the Euler equations",
/// J. Comput. Phys. 59 (1985) 232–246 (formula not checked against the paper):
///   δ_{k+1} = δ_k ‖R(u_k)‖ / ‖R(u_{k+1})‖,
/// capped at maximum_step_growth·δ_k and at maximum_step. Kelley & Keyes require
/// δ → ∞ for fast local convergence; the driver ends the pseudo-transient
/// phase once ‖R‖ <= switch_ratio · ‖R(u0)‖ or δ reaches maximum_step. Full
/// Newton steps follow (cut back only when a trial is non-finite or
/// inadmissible, as with globalization_strategy::full_step). The term enters both the J·v product
/// and the assembled Jacobian handed to preconditioners (as a diagonal shift).
///
/// Two safeguards keep a hard solve going (common practice, our own design):
///   - within the phase, a pseudo-time step whose linear solve gives no
///     usable direction (GMRES stopped short of its forcing term above
///     maximum_useful_relative_linear_residual, or the preconditioner failed) is
///     retried with a smaller δ, like a step that raised ‖R‖: the term W/δ
///     makes W/δ + R'(u) better conditioned and more diagonally dominant;
///   - after the phase, a Newton step that fails (no direction, no
///     acceptable step, stagnation, a failed preconditioner) sends the solve
///     back to pseudo-time stepping, at most maximum_returns_to_pseudo_time
///     times. δ resumes at δ_0‖R(u0)‖/‖R(u)‖ (the switched-evolution value
///     from the start without growth caps), capped at the last δ the phase
///     used, but never below δ_0 (δ_0 wins when the last δ used was smaller);
///     the phase then ends again once ‖R‖ falls by switch_ratio from where it
///     resumed, or δ reaches maximum_step.

#include <algorithm>
#include <cmath>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

/// Pseudo-transient continuation (used with globalization_strategy::pseudo_transient).
/// Each step solves (W/δ)(u − u_prev) + R(u) = 0 by one Newton step, W a
/// diagonal of weights (1, cell volumes, or spectral-radius estimates from the
/// problem's pseudo_time_weights()), and grows δ by switched evolution
/// relaxation; see pseudo_transient.hpp for sources.
struct pseudo_transient_settings {
  /// δ_0: the pseudo-time step (weights = volumes) or CFL number (weights = spectral radii).
  double initial_step = 1.0;
  /// Upper limit on δ; reaching it also ends the pseudo-transient phase.
  double maximum_step = 1e12;
  /// The step control gives up (stop_reason::no_acceptable_step) when a failing δ falls below this.
  double minimum_step = 1e-12;
  /// Cap on the growth of δ per step: δ_{n+1} <= maximum_step_growth · δ_n.
  double maximum_step_growth = 10.0;
  /// Factor applied to δ when a step is rejected (non-finite or inadmissible residual).
  double shrink_factor = 0.25;
  /// Reject a pseudo-time step (and shrink δ by shrink_factor) when it raises
  /// ‖R‖ by more than this factor; a δ too large for the transient shows up
  /// this way (common practice).
  double maximum_residual_growth = 10.0;
  /// Switch to full Newton steps once ‖R‖ <= switch_ratio · ‖R(u0)‖ (0 = never);
  /// after a return to pseudo-time stepping, relative to ‖R‖ where it resumed.
  double switch_ratio = 1e-3;
  /// In the pseudo-transient phase, a linear solve that stops short of its
  /// forcing term with ‖r‖/‖R‖ above this gives no usable direction: δ
  /// shrinks and the step is retried (1: only when GMRES made no progress).
  double maximum_useful_relative_linear_residual = 0.99;
  /// How often a failing Newton phase goes back to pseudo-time stepping
  /// instead of stopping (0 = never: the solve stops with the failure).
  int maximum_returns_to_pseudo_time = 3;

  void validate(std::string_view prefix = "pseudo_transient_settings") const {
    const std::string p(prefix);
    detail::require_positive(p + ".initial_step", initial_step);
    detail::require_positive(p + ".maximum_step", maximum_step, true);
    detail::require_positive(p + ".minimum_step", minimum_step);
    if (!(minimum_step <= initial_step && initial_step <= maximum_step)) {
      detail::throw_invalid_setting(p + ".initial_step",
                                    "in [minimum_step, maximum_step] = [" + detail::number_text(minimum_step) + ", " +
                                        detail::number_text(maximum_step) + "]",
                                    initial_step);
    }
    if (!(maximum_step_growth > 1.0))
      detail::throw_invalid_setting(p + ".maximum_step_growth", "> 1", maximum_step_growth);
    detail::require_open_interval(p + ".shrink_factor", shrink_factor, 0.0, 1.0);
    if (!(maximum_residual_growth >= 1.0)) {
      detail::throw_invalid_setting(p + ".maximum_residual_growth", ">= 1", maximum_residual_growth);
    }
    detail::require_closed_interval(p + ".switch_ratio", switch_ratio, 0.0, 1.0);
    if (!(maximum_useful_relative_linear_residual > 0.0 && maximum_useful_relative_linear_residual <= 1.0)) {
      detail::throw_invalid_setting(p + ".maximum_useful_relative_linear_residual", "in (0, 1]",
                                    maximum_useful_relative_linear_residual);
    }
    detail::require_at_least(p + ".maximum_returns_to_pseudo_time", maximum_returns_to_pseudo_time, 0);
  }
};

/// Switched evolution relaxation with the growth caps of the settings.
inline double next_pseudo_time_step(const pseudo_transient_settings& settings, double step, double previous_norm,
                                    double new_norm) {
  double next = new_norm > 0.0 ? step * previous_norm / new_norm : settings.maximum_step;
  if (!std::isfinite(next)) next = settings.maximum_step;
  next = std::min(next, settings.maximum_step_growth * step);
  return std::min(next, settings.maximum_step);
}

/// What one attempt at a pseudo-time step gave.
struct pseudo_time_trial {
  bool abandoned = false;  ///< the Newton direction could not be computed and retrying cannot help: the step ends
  /// No direction for this δ, but a smaller δ may give one: retried like a rejected trial.
  bool no_direction = false;
  double residual_norm = 0.0;  ///< ‖R‖ at the trial state (+inf or NaN when unusable)
};

struct pseudo_time_step_result {
  bool accepted = false;
  bool abandoned = false;               ///< an attempt was abandoned (its cause is the caller's)
  bool last_without_direction = false;  ///< not accepted, and the last attempt gave no direction
  int rejected_trials = 0;              ///< attempts refused before the accepted one
  double used_step = 0.0;               ///< δ of the accepted attempt
  double residual_norm = 0.0;           ///< ‖R‖ at the accepted state
};

/// One pseudo-time step with retries, as a kernel: `attempt(δ, k)` (k = 0, 1,
/// ...) computes the step for pseudo-time step δ and returns ‖R‖ at its trial
/// state; an attempt is accepted when that norm is finite and at most
/// maximum_residual_growth·‖R(u)‖, otherwise (or when it found no direction)
/// δ shrinks by shrink_factor and the step is retried, until δ falls below
/// minimum_step (then not accepted).
/// `step` is updated in place: to the next δ by switched evolution
/// relaxation after acceptance, to the shrunken δ after failure.
template <class Attempt>
pseudo_time_step_result pseudo_time_step_search(const pseudo_transient_settings& settings, double& step,
                                                double residual_norm, Attempt&& attempt) {
  pseudo_time_step_result result;
  for (int k = 0;; ++k) {
    const pseudo_time_trial tried = attempt(step, k);
    if (tried.abandoned) {
      result.abandoned = true;
      result.rejected_trials = k;
      return result;
    }
    if (!tried.no_direction && std::isfinite(tried.residual_norm) &&
        tried.residual_norm <= settings.maximum_residual_growth * residual_norm) {
      result.accepted = true;
      result.rejected_trials = k;
      result.used_step = step;
      result.residual_norm = tried.residual_norm;
      step = next_pseudo_time_step(settings, step, residual_norm, tried.residual_norm);
      return result;
    }
    step *= settings.shrink_factor;
    if (step < settings.minimum_step) {
      result.rejected_trials = k + 1;
      result.last_without_direction = tried.no_direction;
      return result;
    }
  }
}

/// Whether the pseudo-transient phase is over after an accepted step: the
/// residual fell below switch_ratio·‖R‖ where the phase began (‖R(u0)‖, or
/// where it resumed) or δ reached maximum_step.
inline bool pseudo_transient_phase_ends(const pseudo_transient_settings& settings, double residual_norm,
                                        double phase_start_residual_norm, double next_step) {
  return residual_norm <= settings.switch_ratio * phase_start_residual_norm || next_step >= settings.maximum_step;
}

/// δ on returning to pseudo-time stepping at ‖R(u)‖ = residual_norm:
/// δ_0‖R(u0)‖/‖R(u)‖, capped at the last δ the phase used, then raised to
/// δ_0 if below it (δ_0 wins when the last δ used was smaller).
inline double pseudo_time_step_on_return(const pseudo_transient_settings& settings, double last_used_step,
                                         double initial_residual_norm, double residual_norm) {
  double step =
      residual_norm > 0.0 ? settings.initial_step * (initial_residual_norm / residual_norm) : settings.maximum_step;
  if (!std::isfinite(step)) step = settings.maximum_step;
  step = std::min(step, last_used_step);
  return std::max(step, settings.initial_step);
}

}  // namespace nkit

#endif  // NKIT_GLOBALIZATION_PSEUDO_TRANSIENT_HPP
