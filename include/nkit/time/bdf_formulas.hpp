#ifndef NKIT_TIME_BDF_FORMULAS_HPP
#define NKIT_TIME_BDF_FORMULAS_HPP

/// \file time/bdf_formulas.hpp
/// Variable-step BDF1 and BDF2 in the stage form U − γΔt f(U) = z, and the
/// constants of Milne's error estimate (predictor–corrector difference).
///
/// With h = t_(n+1) − t_n, k = t_n − t_(n−1), ω = h/k, variable-step BDF2
/// (Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed. (1993), §III.5):
///   (1+2ω)/(1+ω) u_(n+1) − (1+ω) u_n + ω²/(1+ω) u_(n−1) = h f(t_(n+1), u_(n+1)),
/// so γ = (1+ω)/(1+2ω) and z = γ((1+ω) u_n − ω²/(1+ω) u_(n−1)).
/// Its local error (Taylor expansion of the formula on the exact solution,
/// computed here; equals −(2/9) h³ u''' at ω = 1, the textbook constant):
///   u(t_(n+1)) − u_(n+1) ≈ E_c u''',  E_c = −h³ (1+ω)² / (6 ω (1+2ω)).
/// The predictor P is the polynomial through u_(n−2), u_(n−1), u_n; its error is
///   u(t_(n+1)) − P ≈ E_p u''',  E_p = h (h+k) (h+k+k₂) / 6   (k₂ = t_(n−1) − t_(n−2)),
/// so the corrector's error is estimated as E_c / (E_p − E_c) · (u_(n+1) − P).
/// Backward Euler likewise: E_c = −h²/2, E_p = h (h+k)/2 with the linear predictor.

namespace nkit::detail {

struct bdf_step_formula {
  double gamma = 1.0;         ///< U − γh f(U) = z
  double weight_current = 1;  ///< z = weight_current u_n + weight_previous u_(n−1)
  double weight_previous = 0;
  double error_factor = 0.0;  ///< local error ≈ error_factor · (U − P)
};

/// Order 1 or 2; h the step, k and k2 the two previous step lengths.
inline bdf_step_formula bdf_formula(int order, double h, double k, double k2) {
  bdf_step_formula f;
  if (order == 1) {
    const double corrector = -0.5 * h * h;
    const double predictor = 0.5 * h * (h + k);
    f.error_factor = corrector / (predictor - corrector);
    return f;
  }
  const double omega = h / k;
  f.gamma = (1.0 + omega) / (1.0 + 2.0 * omega);
  f.weight_current = f.gamma * (1.0 + omega);
  f.weight_previous = -f.gamma * omega * omega / (1.0 + omega);
  const double corrector = -h * h * h * (1.0 + omega) * (1.0 + omega) / (6.0 * omega * (1.0 + 2.0 * omega));
  const double predictor = h * (h + k) * (h + k + k2) / 6.0;
  f.error_factor = corrector / (predictor - corrector);
  return f;
}

/// Lagrange weights ℓ_j(t) of the polynomial through (times[j], ·), j < count:
/// P(t) = Σ_j weights[j] · value_j.
inline void extrapolation_weights(const double* times, int count, double t, double* weights) {
  for (int j = 0; j < count; ++j) {
    double w = 1.0;
    for (int m = 0; m < count; ++m) {
      if (m != j) w *= (t - times[m]) / (times[j] - times[m]);
    }
    weights[j] = w;
  }
}

}  // namespace nkit::detail

#endif  // NKIT_TIME_BDF_FORMULAS_HPP
