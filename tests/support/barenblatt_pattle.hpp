// The closed-form Barenblatt–Pattle (Zel'dovich–Kompaneets) solution of the
// one-dimensional nonlinear diffusion u_t = (u^m u_x)_x, m > 0, for heat Q
// released at x = 0 at t = 0 (test-only reference; used by
// test_time_barenblatt.cpp and test_radiation_equilibrium_limit.cpp).
//
// Sources: Ya.B. Zel'dovich & A.S. Kompaneets (1950); G.I. Barenblatt,
// "On some unsteady motions of a liquid or a gas in a porous medium", Prikl.
// Mat. Mekh. 16 (1952) 67–78; R.E. Pattle, Q. J. Mech. Appl. Math. 12 (1959)
// 407–409; Ya.B. Zel'dovich & Yu.P. Raizer, Physics of Shock Waves and
// High-Temperature Hydrodynamic Phenomena, ch. X; J.L. Vázquez, The Porous
// Medium Equation, Oxford (2007), ch. 4 (formula from memory of these
// sources; the tests substitute it into the equation numerically before using
// it). For v_τ = (v^M)_xx in one dimension (d = 1):
//   v(x, τ) = τ^(−α) [C − k x² τ^(−2α)]₊^(1/(M−1)),
//   α = 1/(M+1), k = α(M−1)/(2M), C fixed by ∫ v dx = Q;
// u_t = (u^m u_x)_x = (u^(m+1))_xx/(m+1) is that equation with M = m + 1 and
// τ = t/(m+1), so α = 1/(m+2), k = m/(2(m+1)(m+2)). With p = 1/m and
// x = τ^α √(C/k) s, ∫ v dx = C^(p+½) k^(−½) B(½, p+1), B(½, p+1) =
// ∫_{−1}^{1} (1 − s²)^p ds = √π Γ(p+1)/Γ(p+3/2). The front is at
// |x_f| = √(C/k) τ^α ∝ t^(1/(m+2)), and the second moment of the profile is
// ∫x²u / ∫u = x_f² B(3/2, p+1)/B(½, p+1) = x_f²/(2p + 3).
#ifndef NKIT_TESTS_SUPPORT_BARENBLATT_PATTLE_HPP
#define NKIT_TESTS_SUPPORT_BARENBLATT_PATTLE_HPP

#include <cmath>

namespace nkit_test {

class barenblatt_pattle_solution {
 public:
  /// u_t = (u^exponent u_x)_x with `released_heat` = ∫ u dx over the whole line.
  barenblatt_pattle_solution(double exponent, double released_heat)
      : m_exponent(exponent),
        m_alpha(1.0 / (exponent + 2.0)),
        m_k(exponent / (2.0 * (exponent + 1.0) * (exponent + 2.0))) {
    const double p = 1.0 / exponent;
    const double beta_integral = std::sqrt(std::acos(-1.0)) * std::tgamma(p + 1.0) / std::tgamma(p + 1.5);
    m_c = std::pow(released_heat * std::sqrt(m_k) / beta_integral, 1.0 / (p + 0.5));
  }

  double exponent() const { return m_exponent; }
  /// u(x, t), t > 0.
  double operator()(double x, double t) const {
    const double tau = t / (m_exponent + 1.0);
    const double bracket = m_c - m_k * x * x * std::pow(tau, -2.0 * m_alpha);
    return bracket > 0.0 ? std::pow(tau, -m_alpha) * std::pow(bracket, 1.0 / m_exponent) : 0.0;
  }
  /// |x_f(t)|, the edge of the support.
  double front(double t) const { return std::sqrt(m_c / m_k) * std::pow(t / (m_exponent + 1.0), m_alpha); }
  /// ∫x²u dx / ∫u dx divided by x_f²: 1/(2/m + 3).
  double second_moment_fraction() const { return 1.0 / (2.0 / m_exponent + 3.0); }

 private:
  double m_exponent, m_alpha, m_k, m_c = 0.0;
};

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_BARENBLATT_PATTLE_HPP
