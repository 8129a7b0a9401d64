#ifndef NKIT_GLOBALIZATION_TRUST_REGION_HPP
#define NKIT_GLOBALIZATION_TRUST_REGION_HPP

/// \file globalization/trust_region.hpp
/// Dogleg steps for the trust-region globalisation of Newton–GMRES.
///
/// The dogleg path runs from 0 to the Cauchy point s_C (the minimiser of the
/// linear model ½‖R + J s‖² along its steepest-descent direction) and on to
/// the Newton–GMRES step s_N (M.J.D. Powell, "A hybrid method for nonlinear
/// equations", in Numerical Methods for Nonlinear Algebraic Equations,
/// P. Rabinowitz ed., Gordon and Breach 1970, 87–114). Matrix-free, the
/// steepest-descent direction Jᵀ R is not available; following P.N. Brown &
/// Y. Saad, "Hybrid Krylov methods for nonlinear systems of equations", SIAM
/// J. Sci. Stat. Comput. 11(3) (1990) 450–481, the Cauchy point is taken in
/// the Krylov subspace GMRES built (gmres_solver::capture_cauchy_point), where
/// the model's gradient is available from the Hessenberg matrix. The
/// predicted reduction of any point on the path is exact for the linear
/// model: J s is a combination of J s_C and J s_N, two products per Newton
/// step. Radius update and ratio test: J.E. Dennis & R.B. Schnabel (1996),
/// Algorithm A6.4.5 (constants are settings; defaults are common practice).

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

/// Trust-region control (used with globalization_strategy::trust_region).
/// Ratio test and radius update as in J.E. Dennis & R.B. Schnabel (1996),
/// Algorithm A6.4.5 (constants: common practice).
struct trust_region_settings {
  /// Δ_0; 0 means the length of the first Newton step.
  double initial_radius = 0.0;
  /// The search gives up (stop_reason::no_acceptable_step) below this radius (scaled step norm).
  double minimum_radius = 1e-12;
  double maximum_radius = std::numeric_limits<double>::infinity();
  /// Accept a step when actual/predicted reduction exceeds this.
  double acceptance_ratio = 1e-4;
  /// Shrink when the ratio is below, grow when above (and the step reached the boundary).
  double shrink_below_ratio = 0.25;
  double grow_above_ratio = 0.75;
  double shrink_factor = 0.25;
  double growth_factor = 2.0;

  void validate(std::string_view prefix = "trust_region_settings") const {
    const std::string p(prefix);
    detail::require_non_negative(p + ".initial_radius", initial_radius);
    detail::require_positive(p + ".minimum_radius", minimum_radius);
    detail::require_positive(p + ".maximum_radius", maximum_radius, true);
    if (maximum_radius < minimum_radius) {
      detail::throw_invalid_setting(p + ".maximum_radius",
                                    ">= minimum_radius (" + detail::number_text(minimum_radius) + ")", maximum_radius);
    }
    detail::require_open_interval(p + ".acceptance_ratio", acceptance_ratio, 0.0, 1.0);
    detail::require_open_interval(p + ".shrink_below_ratio", shrink_below_ratio, 0.0, 1.0);
    detail::require_open_interval(p + ".grow_above_ratio", grow_above_ratio, 0.0, 1.0);
    if (grow_above_ratio < shrink_below_ratio) {
      detail::throw_invalid_setting(p + ".grow_above_ratio",
                                    ">= shrink_below_ratio (" + detail::number_text(shrink_below_ratio) + ")",
                                    grow_above_ratio);
    }
    detail::require_open_interval(p + ".shrink_factor", shrink_factor, 0.0, 1.0);
    if (!(growth_factor > 1.0 && std::isfinite(growth_factor))) {
      detail::throw_invalid_setting(p + ".growth_factor", "finite and > 1", growth_factor);
    }
  }
};

/// s = cauchy_weight · s_C + newton_weight · s_N.
struct dogleg_point {
  double cauchy_weight = 0.0;
  double newton_weight = 1.0;
  bool on_boundary = false;  ///< ‖s‖ = radius (the radius limited the step)
};

/// The point of the dogleg path at distance `radius` (or s_N when it lies
/// inside). Inputs are ‖s_N‖, ‖s_C‖ and s_C·s_N in the solver's norm.
inline dogleg_point dogleg(double radius, double newton_norm, double cauchy_norm, double cauchy_dot_newton) {
  if (newton_norm <= radius) return {0.0, 1.0, false};
  if (cauchy_norm >= radius || cauchy_norm == 0.0) {
    if (cauchy_norm == 0.0) return {0.0, radius / newton_norm, true};  // no Cauchy point: scaled Newton step
    return {radius / cauchy_norm, 0.0, true};
  }
  // ‖s_C + τ (s_N − s_C)‖ = radius, τ in (0, 1).
  const double a = newton_norm * newton_norm - 2.0 * cauchy_dot_newton + cauchy_norm * cauchy_norm;
  const double b = 2.0 * (cauchy_dot_newton - cauchy_norm * cauchy_norm);
  const double c = cauchy_norm * cauchy_norm - radius * radius;
  const double discriminant = std::max(0.0, b * b - 4.0 * a * c);
  // Stable root of a τ² + b τ + c = 0 with c < 0 < a: τ = 2c / (−b − √disc) when b >= 0.
  const double tau = b >= 0.0 ? (2.0 * c) / (-b - std::sqrt(discriminant)) : (-b + std::sqrt(discriminant)) / (2.0 * a);
  const double clamped = std::min(1.0, std::max(0.0, tau));
  return {1.0 - clamped, clamped, true};
}

/// Linear-model values needed to price a dogleg point: with Jc = J s_C,
/// Jn = J s_N, ‖R + J s‖² = ‖R‖² + 2a R·Jc + 2b R·Jn + a²‖Jc‖² + 2ab Jc·Jn + b²‖Jn‖².
struct dogleg_model {
  double residual_squared = 0.0;
  double residual_dot_cauchy = 0.0;
  double residual_dot_newton = 0.0;
  double cauchy_squared = 0.0;
  double newton_squared = 0.0;
  double cauchy_dot_newton = 0.0;

  /// ½‖R‖² − ½‖R + J s‖² for s = a s_C + b s_N (the predicted reduction).
  double predicted_reduction(double a, double b) const {
    const double model = residual_squared + 2.0 * a * residual_dot_cauchy + 2.0 * b * residual_dot_newton +
                         a * a * cauchy_squared + 2.0 * a * b * cauchy_dot_newton + b * b * newton_squared;
    return 0.5 * (residual_squared - std::max(0.0, model));
  }
};

/// What one trial point of the trust-region search gave: ‖R‖ there (+inf
/// when the state was inadmissible or the residual not finite), the length
/// of the step taken and the reduction of ½‖R‖² the linear model predicted.
struct trust_region_trial {
  double residual_norm = std::numeric_limits<double>::infinity();
  double step_norm = 0.0;
  double predicted_reduction = 0.0;
};

struct trust_region_result {
  bool accepted = false;       ///< false: the radius fell below minimum_radius
  int rejected_trials = 0;     ///< trial points refused before the accepted one
  double residual_norm = 0.0;  ///< ‖R‖ at the accepted point
  double step_norm = 0.0;      ///< length of the accepted step
};

/// The radius after an accepted step with actual/predicted ratio `ratio`
/// (Dennis & Schnabel, Algorithm A6.4.5): grow when the model was good and
/// the step reached the boundary, shrink to shrink_factor·‖s‖ when it was poor.
inline double radius_after_acceptance(const trust_region_settings& settings, double radius, double ratio,
                                      double step_norm) {
  if (ratio > settings.grow_above_ratio && step_norm >= 0.99 * radius) {
    return std::min(settings.growth_factor * radius, settings.maximum_radius);
  }
  if (ratio < settings.shrink_below_ratio) return settings.shrink_factor * step_norm;
  return radius;
}

/// The Cauchy point's length and its inner product with the Newton step:
/// what the dogleg path needs besides ‖s_N‖.
struct dogleg_geometry {
  double cauchy_norm = 0.0;
  double cauchy_dot_newton = 0.0;
};

/// The dogleg trust-region search of one Newton step, as a kernel: from the
/// current `radius` (<= 0: start from the Newton step's length, capped at
/// maximum_radius) take the dogleg point at that radius, have `trial(point)`
/// evaluate it (returning a trust_region_trial), accept it when the residual
/// is finite and actual/predicted reduction exceeds acceptance_ratio,
/// otherwise shrink the radius to shrink_factor·min(radius, ‖s‖) and retry;
/// give up once the radius falls below minimum_radius. `radius` is updated
/// in place. `geometry()` returns the dogleg_geometry; it is called only when
/// the Newton step does not fit in the radius, so a caller can defer the
/// products that the Cauchy point needs until then. ‖s_N‖ and ‖R(u)‖ are in
/// the solver's norm.
template <class Geometry, class Trial>
trust_region_result dogleg_search(const trust_region_settings& settings, double& radius, double residual_norm,
                                  double newton_norm, Geometry&& geometry, Trial&& trial) {
  trust_region_result result;
  if (!(radius > 0.0)) radius = std::min(newton_norm, settings.maximum_radius);
  for (int attempt = 0;; ++attempt) {
    dogleg_point point;  // the Newton point
    if (newton_norm > radius) {
      const dogleg_geometry g = geometry();
      point = dogleg(radius, newton_norm, g.cauchy_norm, g.cauchy_dot_newton);
    }
    const trust_region_trial tried = trial(point);
    const double actual = 0.5 * (residual_norm * residual_norm - tried.residual_norm * tried.residual_norm);
    const double ratio = tried.predicted_reduction > 0.0 ? actual / tried.predicted_reduction : -1.0;
    if (std::isfinite(tried.residual_norm) && ratio > settings.acceptance_ratio) {
      radius = radius_after_acceptance(settings, radius, ratio, tried.step_norm);
      result.accepted = true;
      result.rejected_trials = attempt;
      result.residual_norm = tried.residual_norm;
      result.step_norm = tried.step_norm;
      return result;
    }
    radius = settings.shrink_factor * std::min(radius, tried.step_norm);
    if (radius < settings.minimum_radius) {
      result.rejected_trials = attempt + 1;
      return result;
    }
  }
}

}  // namespace nkit

#endif  // NKIT_GLOBALIZATION_TRUST_REGION_HPP
