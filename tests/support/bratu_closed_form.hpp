// The closed-form solution of the one-dimensional Bratu (Liouville–Bratu–
// Gelfand) problem u'' + λ e^u = 0 on (0, 1), u(0) = u(1) = 0, shared by the
// Newton and continuation tests:
//   u(x) = −2 ln[cosh((x − ½)θ/2) / cosh(θ/4)],  θ = √(2λ) cosh(θ/4)
// (formula from Ascher, Mattheij & Russell, "Numerical Solution of Boundary
// Value Problems for ODEs", SIAM 1995, and J.P. Boyd, Appl. Math. Comput. 217
// (2011) 5553–5565, both from memory). The fold is where θ = √(2λ) cosh(θ/4) is
// tangent: (θ/4) tanh(θ/4) = 1, so θc = 4α with α tanh α = 1 and
// λc = 8(α² − 1). The roots are found by a bisection of our own, independent of
// nkit.
#ifndef NKIT_TESTS_SUPPORT_BRATU_CLOSED_FORM_HPP
#define NKIT_TESTS_SUPPORT_BRATU_CLOSED_FORM_HPP

#include <cmath>
#include <stdexcept>

namespace nkit_test {

/// Root of g on [low, high] (g(low), g(high) of opposite signs) by bisection,
/// until the interval cannot shrink in double precision.
template <class Function>
double bisect(Function&& g, double low, double high) {
  double g_low = g(low);
  if (!(g_low * g(high) < 0.0)) throw std::invalid_argument("bisect: no sign change on the interval");
  while (true) {
    const double middle = 0.5 * (low + high);
    if (middle <= low || middle >= high) return middle;
    const double g_middle = g(middle);
    if ((g_middle < 0.0) == (g_low < 0.0)) {
      low = middle;
      g_low = g_middle;
    } else {
      high = middle;
    }
  }
}

/// α with α tanh α = 1 (the fixed point of coth), on [1, 2].
inline double bratu_fold_alpha() {
  return bisect([](double a) { return a * std::tanh(a) - 1.0; }, 1.0, 2.0);
}

/// Lower-branch θ for 0 < λ < λc. g(θ) = θ − √(2λ) cosh(θ/4) has g(0) < 0 and
/// g(θc) > 0 for λ < λc, and g is increasing on [0, θc], so the root in
/// (0, θc) is unique: the lower branch.
inline double bratu_lower_theta(double lambda) {
  const double theta_fold = 4.0 * bratu_fold_alpha();
  return bisect([lambda](double t) { return t - std::sqrt(2.0 * lambda) * std::cosh(t / 4.0); }, 0.0, theta_fold);
}

/// Upper-branch θ (θ > θc) for 0 < λ < λc; bracketed by [θc, 60].
inline double bratu_upper_theta(double lambda) {
  const double theta_fold = 4.0 * bratu_fold_alpha();
  return bisect([lambda](double t) { return t - std::sqrt(2.0 * lambda) * std::cosh(t / 4.0); }, theta_fold, 60.0);
}

/// u(x) on the branch with root θ.
inline double bratu_1d_exact(double x, double theta) {
  return -2.0 * std::log(std::cosh((x - 0.5) * theta / 2.0) / std::cosh(theta / 4.0));
}

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_BRATU_CLOSED_FORM_HPP
