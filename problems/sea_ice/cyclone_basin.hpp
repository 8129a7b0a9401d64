// Our own demonstration scenario for the sea-ice momentum problem
// (problems/sea_ice/viscous_plastic_momentum.hpp). ALL FORCING AND ICE DATA
// HERE ARE INVENTED: a closed square basin, a steady ocean gyre and an
// idealised cyclone crossing the basin. It is a solver demonstration, not a
// forecast or hindcast of any real sea; operational use needs validated models.
//
//   ocean:  an anticyclonic (clockwise) gyre from the stream function
//           ψ = −U_o (L/π) sin(πx/L) sin(πy/L),  U_w = ∂ψ/∂y,  V_w = −∂ψ/∂x,
//           peak speed U_o = 0.1 m/s;
//   wind:   a cyclone of peak speed V = 15 m/s at radius R = 250 km, the profile
//           s(r) = V (r/R) exp(1 − r/R), blowing anticlockwise (northern
//           hemisphere) with an inflow angle θ = 20° toward the centre:
//           U_a = s(r) (cos θ t̂ − sin θ r̂), t̂ = k × r̂; the centre moves from
//           (0.25 L, 0.25 L) to (0.75 L, 0.75 L) over `crossing_days`;
//   ice:    h = 2 m, A = 0.95 over the basin, thinning to h = 0.5 m and A = 0.6
//           in a band along the western wall.
// With the cyclone held at the centre and uniform ice, the forcing is unchanged
// by a half turn about the basin centre with every velocity reversed, and so is
// the momentum equation (Coriolis included): the symmetry check of
// tests/test_sea_ice.cpp.
#ifndef NKIT_PROBLEMS_SEA_ICE_CYCLONE_BASIN_HPP
#define NKIT_PROBLEMS_SEA_ICE_CYCLONE_BASIN_HPP

#include <Eigen/Core>
#include <cmath>

#include "problems/sea_ice/viscous_plastic_momentum.hpp"

namespace nkit_problems {

struct cyclone_basin_settings {
  double basin_length = 1.0e6;         ///< L, m (invented)
  double ocean_speed = 0.1;            ///< U_o, m/s (invented)
  double peak_wind = 15.0;             ///< V, m/s (invented)
  double wind_radius = 2.5e5;          ///< R, m (invented)
  double inflow_angle_degrees = 20.0;  ///< θ (invented)
  double crossing_days = 4.0;          ///< time for the centre to cross from (L/4, L/4) to (3L/4, 3L/4)
  bool stationary_cyclone = false;     ///< keep the centre at (L/2, L/2) (the symmetry check)
  bool uniform_ice = false;            ///< h = 2 m, A = 0.95 everywhere (the symmetry check)
};

/// Fills the ocean gyre (once) and the ice, and returns the basin's wind setter.
class cyclone_basin {
 public:
  cyclone_basin(sea_ice_momentum& problem, cyclone_basin_settings settings = {})
      : m_problem(&problem), m_settings(settings) {
    const int n = problem.cells_per_side();
    const double pi = 3.14159265358979323846, length = settings.basin_length;
    for (int b = 1; b < n; ++b) {
      for (int a = 1; a < n; ++a) {
        const double x = problem.corner_x(a), y = problem.corner_x(b);
        const Eigen::Index k = problem.index(a, b, 0);
        problem.ocean()(k) = -settings.ocean_speed * std::sin(pi * x / length) * std::cos(pi * y / length);
        problem.ocean()(k + 1) = settings.ocean_speed * std::cos(pi * x / length) * std::sin(pi * y / length);
      }
    }
    Eigen::VectorXd h(n * n), a(n * n);
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const double x = problem.cell_centre(i) / length;
        const double band = settings.uniform_ice ? 0.0 : std::exp(-x / 0.08);  // western band, e-folding 80 km
        h(i + n * j) = 2.0 - 1.5 * band;
        a(i + n * j) = 0.95 - 0.35 * band;
      }
    }
    problem.set_ice(h, a);
    set_time(0.0);
  }

  /// Writes the wind at time t (seconds) into the problem.
  void set_time(double t) {
    const sea_ice_momentum& p = *m_problem;
    const int n = p.cells_per_side();
    const double length = m_settings.basin_length;
    double fraction = m_settings.stationary_cyclone ? 0.5 : 0.25 + 0.5 * t / (m_settings.crossing_days * 86400.0);
    fraction = std::fmin(fraction, 0.75);
    const double xc = fraction * length, yc = fraction * length;
    const double theta = m_settings.inflow_angle_degrees * 3.14159265358979323846 / 180.0;
    for (int b = 1; b < n; ++b) {
      for (int a = 1; a < n; ++a) {
        const double dx = p.corner_x(a) - xc, dy = p.corner_x(b) - yc;
        const double r = std::sqrt(dx * dx + dy * dy);
        const Eigen::Index k = p.index(a, b, 0);
        if (r == 0.0) {
          m_problem->wind()(k) = m_problem->wind()(k + 1) = 0.0;
          continue;
        }
        const double s =
            m_settings.peak_wind * (r / m_settings.wind_radius) * std::exp(1.0 - r / m_settings.wind_radius);
        const double rx = dx / r, ry = dy / r;  // r̂; t̂ = k × r̂ = (−ry, rx)
        m_problem->wind()(k) = s * (std::cos(theta) * -ry - std::sin(theta) * rx);
        m_problem->wind()(k + 1) = s * (std::cos(theta) * rx - std::sin(theta) * ry);
      }
    }
  }

 private:
  sea_ice_momentum* m_problem;
  cyclone_basin_settings m_settings;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_SEA_ICE_CYCLONE_BASIN_HPP
