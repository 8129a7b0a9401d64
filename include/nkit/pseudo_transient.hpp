#ifndef NKIT_PSEUDO_TRANSIENT_HPP
#define NKIT_PSEUDO_TRANSIENT_HPP

/// \file pseudo_transient.hpp
/// Pseudo-transient continuation (Ψtc) step control.
///
/// Each pseudo-time step takes one Newton step on
///   (W/δ)(u − u_prev) + R(u) = 0,  i.e.  u_next = u − (W/δ + R'(u))⁻¹ R(u),
/// the iteration analysed by C.T. Kelley & D.E. Keyes, "Convergence analysis
/// of pseudo-transient continuation", SIAM J. Numer. Anal. 35(2) (1998)
/// 508–523 (update form from memory; references §9). W is a positive diagonal:
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
/// J. Comput. Phys. 59 (1985) 232–246 (formula from memory):
///   δ_{k+1} = δ_k ‖R(u_k)‖ / ‖R(u_{k+1})‖,
/// capped at growth_limit·δ_k and at maximum_step. Kelley & Keyes require
/// δ → ∞ for fast local convergence; the driver ends the pseudo-transient
/// phase (plain Newton with line search follows) once ‖R‖ <= switch_ratio ·
/// ‖R(u0)‖ or δ reaches maximum_step. The term enters both the J·v product
/// and the assembled Jacobian handed to preconditioners (as a diagonal shift).

#include <algorithm>
#include <cmath>

#include "settings.hpp"

namespace nkit {

/// Switched evolution relaxation with the growth caps of the settings.
inline double next_pseudo_time_step(const pseudo_transient_settings& settings, double step, double previous_norm,
                                    double new_norm) {
  double next = new_norm > 0.0 ? step * previous_norm / new_norm : settings.maximum_step;
  if (!std::isfinite(next)) next = settings.maximum_step;
  next = std::min(next, settings.growth_limit * step);
  return std::min(next, settings.maximum_step);
}

}  // namespace nkit

#endif  // NKIT_PSEUDO_TRANSIENT_HPP
