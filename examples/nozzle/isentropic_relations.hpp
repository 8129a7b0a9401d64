// Exact quasi-1D nozzle flow with a normal shock, from the isentropic
// area–Mach relation and the normal-shock relations (γ = 1.4), NACA Report
// 1135 (Ames Research Staff, "Equations, tables, and charts for compressible
// flow", 1953):
//   A/A* = (1/M) [ (2/(γ+1)) (1 + (γ−1)M²/2) ]^{(γ+1)/(2(γ−1))}
//   M2² = [(γ−1)M1² + 2] / [2γM1² − (γ−1)]
//   p02/p01 = (ρ2/ρ1)^{γ/(γ−1)} (p1/p2)^{1/(γ−1)},
//   ρ2/ρ1 = (γ+1)M1² / [(γ−1)M1² + 2],  p2/p1 = 2γM1²/(γ+1) − (γ−1)/(γ+1).
// Used by the example for its printed comparison and plot (the test has its
// own independent implementation).
#ifndef NKIT_EXAMPLES_ISENTROPIC_RELATIONS_HPP
#define NKIT_EXAMPLES_ISENTROPIC_RELATIONS_HPP

#include <cmath>
#include <functional>

namespace nkit_examples::compressible {

inline constexpr double gamma = 1.4;

inline double area_ratio(double mach) {
  return std::pow(2.0 / (gamma + 1.0) * (1.0 + 0.5 * (gamma - 1.0) * mach * mach),
                  (gamma + 1.0) / (2.0 * (gamma - 1.0))) /
         mach;
}
inline double pressure_ratio(double mach) {  // p/p0
  return std::pow(1.0 + 0.5 * (gamma - 1.0) * mach * mach, -gamma / (gamma - 1.0));
}
/// Mach number with A/A* = ratio on the subsonic or supersonic branch (bisection).
inline double mach_from_area_ratio(double ratio, bool supersonic) {
  double low = supersonic ? 1.0 : 1e-9, high = supersonic ? 50.0 : 1.0;
  for (int k = 0; k < 200; ++k) {
    const double middle = 0.5 * (low + high);
    const bool too_low_area = area_ratio(middle) < ratio;
    // Subsonic: A/A* decreases with M; supersonic: increases.
    if (too_low_area == supersonic)
      low = middle;
    else
      high = middle;
  }
  return 0.5 * (low + high);
}
inline double shock_mach(double m1) {
  return std::sqrt(((gamma - 1.0) * m1 * m1 + 2.0) / (2.0 * gamma * m1 * m1 - (gamma - 1.0)));
}
inline double total_pressure_ratio(double m1) {
  const double density = (gamma + 1.0) * m1 * m1 / ((gamma - 1.0) * m1 * m1 + 2.0);
  const double pressure = 2.0 * gamma * m1 * m1 / (gamma + 1.0) - (gamma - 1.0) / (gamma + 1.0);
  return std::pow(density, gamma / (gamma - 1.0)) * std::pow(1.0 / pressure, 1.0 / (gamma - 1.0));
}

/// Exact flow in a nozzle with throat area 1 at x_throat, exit area at x_exit,
/// for a back pressure p_b/p01 that puts a normal shock in the diverging part.
struct shocked_nozzle_flow {
  std::function<double(double)> area;
  double x_throat, x_exit, back_pressure_ratio;
  double shock_position = -1.0;

  /// Exit static pressure / p01 for a shock at xs.
  double exit_pressure(double xs) const {
    const double m1 = mach_from_area_ratio(area(xs), true);
    const double p02 = total_pressure_ratio(m1);
    const double throat_2 = 1.0 / p02;  // A2* = A1* p01/p02 (mass flow and T0 conserved)
    const double exit_mach = mach_from_area_ratio(area(x_exit) / throat_2, false);
    return p02 * pressure_ratio(exit_mach);
  }
  void locate_shock() {
    double low = x_throat + 1e-9, high = x_exit;  // exit pressure falls as the shock moves downstream
    for (int k = 0; k < 200; ++k) {
      const double middle = 0.5 * (low + high);
      if (exit_pressure(middle) > back_pressure_ratio)
        low = middle;
      else
        high = middle;
    }
    shock_position = 0.5 * (low + high);
  }
  double mach(double x) const {
    if (x <= x_throat) return mach_from_area_ratio(area(x), false);
    if (x < shock_position) return mach_from_area_ratio(area(x), true);
    const double p02 = total_pressure_ratio(mach_from_area_ratio(area(shock_position), true));
    return mach_from_area_ratio(area(x) * p02, false);
  }
};

}  // namespace nkit_examples::compressible

#endif  // NKIT_EXAMPLES_ISENTROPIC_RELATIONS_HPP
