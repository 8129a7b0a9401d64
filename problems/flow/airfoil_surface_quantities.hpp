// Quantities read off the surface flow of euler_airfoil.hpp once it has
// converged: the wall pressure coefficients of airfoil_forces split into the
// lower and upper surface, each ordered by increasing x/c; the critical
// pressure coefficient c_p* of the free stream; and where a captured shock
// stands on a surface. Lift and drag stay with the flow
// (euler_airfoil_flow::forces).
//
// Critical pressure coefficient: c_p at a point where the flow, expanded
// isentropically from the free stream (Mach M, pressure p∞), reaches sonic
// speed. With p*/p∞ = ((2 + (γ−1)M²)/(γ+1))^(γ/(γ−1)) and the dynamic pressure
// ½ρ∞V∞² = ½γp∞M²,
//   c_p* = 2/(γM²) [((2 + (γ−1)M²)/(γ+1))^(γ/(γ−1)) − 1]
// (NACA Report 1135, Ames Research Staff 1953, the isentropic relations; J.D.
// Anderson, Modern Compressible Flow, chapter 9, the critical pressure
// coefficient, section from memory). A surface where c_p < c_p* carries
// supersonic flow.
//
// Shock position: along a surface ordered by increasing x/c, the most
// downstream upward crossing of c_p* (c_p rising from below c_p* to c_p* or
// above: the flow returning to subsonic speed, where a captured shock stands),
// located by linear interpolation between neighbouring wall faces. Downward
// crossings (the expansion behind the leading edge) are not shocks.
#ifndef NKIT_PROBLEMS_FLOW_AIRFOIL_SURFACE_QUANTITIES_HPP
#define NKIT_PROBLEMS_FLOW_AIRFOIL_SURFACE_QUANTITIES_HPP

#include <cmath>
#include <stdexcept>
#include <string>
#include <vector>

#include "problems/flow/euler_airfoil.hpp"

namespace nkit_problems {

/// One surface of the airfoil, its wall faces by increasing x/c.
struct airfoil_surface_pressure {
  std::vector<double> x_over_chord;          ///< x of each wall-face midpoint (chord 1, leading edge at 0)
  std::vector<double> pressure_coefficient;  ///< c_p at that face
};

/// Both surfaces of the airfoil.
struct airfoil_surface_pressures {
  airfoil_surface_pressure lower;
  airfoil_surface_pressure upper;
};

/// Splits the wall faces of `forces` (the O-grid order of airfoil_grid.hpp:
/// faces 0..n/2−1 run along the lower surface from the trailing edge to the
/// leading edge, n/2..n−1 back along the upper surface) into the two surfaces,
/// each by increasing x/c.
inline airfoil_surface_pressures surface_pressure_distributions(const airfoil_forces& forces) {
  const std::size_t faces = forces.wall_face_centre.size();
  if (faces != forces.pressure_coefficient.size() || faces < 2 || faces % 2 != 0) {
    throw std::invalid_argument(
        "surface_pressure_distributions: forces.wall_face_centre and forces.pressure_coefficient must have the same "
        "even number (>= 2) of entries, one per wall face (got " +
        std::to_string(faces) + " and " + std::to_string(forces.pressure_coefficient.size()) + ")");
  }
  const std::size_t half = faces / 2;
  airfoil_surface_pressures surfaces;
  for (std::size_t k = 0; k < half; ++k) {
    const std::size_t lower_face = half - 1 - k, upper_face = half + k;
    surfaces.lower.x_over_chord.push_back(forces.wall_face_centre[lower_face].x);
    surfaces.lower.pressure_coefficient.push_back(forces.pressure_coefficient[lower_face]);
    surfaces.upper.x_over_chord.push_back(forces.wall_face_centre[upper_face].x);
    surfaces.upper.pressure_coefficient.push_back(forces.pressure_coefficient[upper_face]);
  }
  return surfaces;
}

/// c_p* for the free-stream Mach number (file comment), γ = euler_gamma.
inline double critical_pressure_coefficient(double mach_number) {
  if (!(mach_number > 0.0 && std::isfinite(mach_number))) {
    throw std::invalid_argument("critical_pressure_coefficient: mach_number must be positive and finite (got " +
                                std::to_string(mach_number) + ")");
  }
  const double g = euler_gamma, m = mach_number;
  return 2.0 / (g * m * m) * (std::pow((2.0 + (g - 1.0) * m * m) / (g + 1.0), g / (g - 1.0)) - 1.0);
}

/// x/c of the most downstream upward crossing of `critical_coefficient` along
/// `surface` (file comment); negative when c_p never rises through it (no
/// supersonic pocket, or one that reaches the trailing edge).
inline double shock_position(const airfoil_surface_pressure& surface, double critical_coefficient) {
  const std::vector<double>& x = surface.x_over_chord;
  const std::vector<double>& cp = surface.pressure_coefficient;
  if (x.size() != cp.size()) {
    throw std::invalid_argument("shock_position: surface.x_over_chord has " + std::to_string(x.size()) +
                                " entries but surface.pressure_coefficient has " + std::to_string(cp.size()));
  }
  double position = -1.0;
  for (std::size_t k = 0; k + 1 < x.size(); ++k) {
    if (cp[k] < critical_coefficient && cp[k + 1] >= critical_coefficient) {
      const double t = (critical_coefficient - cp[k]) / (cp[k + 1] - cp[k]);
      position = x[k] + t * (x[k + 1] - x[k]);
    }
  }
  return position;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_AIRFOIL_SURFACE_QUANTITIES_HPP
