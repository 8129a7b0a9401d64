#ifndef NKIT_TRUST_REGION_HPP
#define NKIT_TRUST_REGION_HPP

/// \file trust_region.hpp
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

namespace nkit {

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

}  // namespace nkit

#endif  // NKIT_TRUST_REGION_HPP
