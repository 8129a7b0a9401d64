#ifndef NKIT_TIME_ESDIRK_TABLEAU_HPP
#define NKIT_TIME_ESDIRK_TABLEAU_HPP

/// \file time/esdirk_tableau.hpp
/// Butcher tableaux of stiffly accurate ESDIRK pairs (explicit first stage,
/// one diagonal value γ for the implicit stages) with an embedded error
/// estimate, and TR-BDF2 written as one.
///
/// TR-BDF2 (R.E. Bank, W.M. Coughran, W. Fichtner, E.H. Grosse, D.J. Rose &
/// R.K. Smith, "Transient simulation of silicon devices and circuits", IEEE
/// Trans. CAD 4 (1985) 436–451; as a Runge–Kutta pair in M.E. Hosea &
/// L.F. Shampine, "Analysis and implementation of TR-BDF2", Appl. Numer. Math.
/// 20 (1996) 21–37): γ = 2 − √2 (trapezoidal rule to t_n + γΔt, then BDF2),
/// d = γ/2, w = √2/4:
///   c = (0, γ, 1)
///   A = [0 0 0; d d 0; w w d],  b = (w, w, d)  (second order, L-stable)
///   b̂ = ((1 − w)/3, (3w + 1)/3, d/3)           (third order, for the estimate)
/// The order conditions of both rows are checked in tests/test_time_esdirk.cpp.

#include <array>
#include <cmath>

namespace nkit {

struct esdirk_tableau {
  static constexpr int maximum_stages = 6;
  int stages = 0;
  int order = 0;           ///< order of the advancing solution b
  int embedded_order = 0;  ///< order of b̂
  std::array<double, maximum_stages> c{};
  std::array<std::array<double, maximum_stages>, maximum_stages> a{};
  std::array<double, maximum_stages> b{};
  std::array<double, maximum_stages> b_embedded{};
  /// The diagonal value of stages 2 ... s.
  double gamma() const { return a[1][1]; }
};

/// TR-BDF2 (see the file comment for sources).
inline esdirk_tableau tr_bdf2_tableau() {
  const double gamma = 2.0 - std::sqrt(2.0);
  const double d = gamma / 2.0;
  const double w = std::sqrt(2.0) / 4.0;
  esdirk_tableau t;
  t.stages = 3;
  t.order = 2;
  t.embedded_order = 3;
  t.c = {0.0, gamma, 1.0};
  t.a[1][0] = d;
  t.a[1][1] = d;
  t.a[2][0] = w;
  t.a[2][1] = w;
  t.a[2][2] = d;
  t.b = {w, w, d};
  t.b_embedded = {(1.0 - w) / 3.0, (3.0 * w + 1.0) / 3.0, d / 3.0};
  return t;
}

}  // namespace nkit

#endif  // NKIT_TIME_ESDIRK_TABLEAU_HPP
