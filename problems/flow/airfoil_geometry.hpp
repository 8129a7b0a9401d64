// NACA four-digit airfoil sections: thickness, camber line and surface points.
//
// Designation "MPTT" (e.g. 2412, 0012): maximum camber m = M/100 of the chord,
// at p = P/10 of the chord, maximum thickness t = TT/100 of the chord. With the
// chord from x = 0 (leading edge) to x = 1 (trailing edge):
//
//   half thickness  y_t(x) = (t/0.2)(0.2969√x − 0.1260x − 0.3516x² + 0.2843x³ + a₄x⁴),
//   camber line     y_c(x) = m/p² (2px − x²)                  for x < p,
//                   y_c(x) = m/(1 − p)² ((1 − 2p) + 2px − x²)  for x >= p,
//   surfaces        x_u,l = x ∓ y_t sin θ,  y_u,l = y_c ± y_t cos θ,  θ = atan(dy_c/dx):
//
// I.H. Abbott & A.E. von Doenhoff, "Theory of Wing Sections", Dover 1959,
// §6.4 (equations of the NACA four-digit sections; section number and the
// layout of the equations from memory). With these coefficients the maximum
// thickness, t, lies at x ≈ 0.30.
//
// Trailing-edge coefficient: the published a₄ = −0.1015 leaves a finite
// trailing-edge thickness 2 y_t(1) = 2·0.0021·t/0.2 (0.00252 chord for
// t = 0.12); we use a₄ = −0.1036 (the common closed-trailing-edge modification, common
// practice), which makes y_t(1) = 0 to four digits (the five coefficients
// then sum to 0). Why: the body-fitted O-grid of airfoil_grid.hpp needs one
// sharp trailing-edge point where upper and lower surfaces meet; a blunt base
// would need its own cells (or a C-grid). The change moves y_t by at most
// 0.0021·(t/0.2)·x⁴, i.e. the maximum thickness by about 2·10⁻⁵ chord for
// t = 0.12 (0.03 % of it). `open_trailing_edge = true` gives the published
// coefficient for other uses (the grid refuses it).
//
// Surface points: cosine spacing, x = ½(1 + cos φ), φ_k = 2πk/n, k = 0..n−1,
// which clusters points at the leading and trailing edges where the
// curvature and the flow gradients are largest (common practice). The points
// run once around the section starting at the trailing edge: φ ∈ [0, π]
// along the lower surface to the leading edge, φ ∈ (π, 2π) back along the
// upper surface (clockwise in the x–y plane; airfoil_grid.hpp relies on it).
#ifndef NKIT_PROBLEMS_FLOW_AIRFOIL_GEOMETRY_HPP
#define NKIT_PROBLEMS_FLOW_AIRFOIL_GEOMETRY_HPP

#include <cmath>
#include <stdexcept>
#include <string>
#include <vector>

namespace nkit_problems {

struct point2 {
  double x = 0.0, y = 0.0;
};

class naca_four_digit_airfoil {
 public:
  /// `designation`: four digits, e.g. "0012" or "2412". Throws
  /// std::invalid_argument for anything else, for zero thickness, and for
  /// camber without a camber position (e.g. "2012").
  explicit naca_four_digit_airfoil(const std::string& designation, bool open_trailing_edge = false)
      : m_open_trailing_edge(open_trailing_edge) {
    const auto fail = [&designation](const std::string& why) {
      throw std::invalid_argument("naca_four_digit_airfoil: designation \"" + designation + "\" " + why);
    };
    if (designation.size() != 4) fail("must have four digits");
    for (const char c : designation) {
      if (c < '0' || c > '9') fail("must have four digits");
    }
    const auto digit = [&designation](std::size_t k) { return designation[k] - '0'; };
    m_camber = digit(0) / 100.0;
    m_camber_position = digit(1) / 10.0;
    m_thickness = (10 * digit(2) + digit(3)) / 100.0;
    if (m_thickness <= 0.0) fail("has zero thickness");
    if ((m_camber > 0.0) != (m_camber_position > 0.0)) fail("needs both a camber and its position, or neither");
  }

  double maximum_camber() const { return m_camber; }
  double camber_position() const { return m_camber_position; }
  double thickness() const { return m_thickness; }
  bool open_trailing_edge() const { return m_open_trailing_edge; }

  /// Half thickness y_t(x), 0 <= x <= 1 (chord units).
  double half_thickness(double x) const {
    const double a4 = m_open_trailing_edge ? -0.1015 : -0.1036;
    return m_thickness / 0.2 * (0.2969 * std::sqrt(x) + x * (-0.1260 + x * (-0.3516 + x * (0.2843 + x * a4))));
  }

  /// Camber line y_c(x).
  double camber(double x) const {
    const double m = m_camber, p = m_camber_position;
    if (m == 0.0) return 0.0;
    if (x < p) return m / (p * p) * (2.0 * p * x - x * x);
    return m / ((1.0 - p) * (1.0 - p)) * ((1.0 - 2.0 * p) + 2.0 * p * x - x * x);
  }

  /// Slope dy_c/dx of the camber line.
  double camber_slope(double x) const {
    const double m = m_camber, p = m_camber_position;
    if (m == 0.0) return 0.0;
    if (x < p) return 2.0 * m / (p * p) * (p - x);
    return 2.0 * m / ((1.0 - p) * (1.0 - p)) * (p - x);
  }

  /// Upper (upper = true) or lower surface point at chord station x.
  point2 surface(double x, bool upper) const {
    const double theta = std::atan(camber_slope(x));
    const double yt = half_thickness(x), sign = upper ? 1.0 : -1.0;
    return {x - sign * yt * std::sin(theta), camber(x) + sign * yt * std::cos(theta)};
  }

  /// n surface points by cosine spacing, starting at the trailing edge, along
  /// the lower surface to the leading edge (k = n/2) and back along the upper
  /// surface (see the file comment). n must be even and >= 8.
  std::vector<point2> surface_points(int n) const {
    if (n < 8 || n % 2 != 0) {
      throw std::invalid_argument("naca_four_digit_airfoil::surface_points: n must be even and >= 8 (got " +
                                  std::to_string(n) + ")");
    }
    const double pi = std::acos(-1.0);
    std::vector<point2> points(static_cast<std::size_t>(n));
    for (int k = 0; k < n; ++k) {
      // cos φ symmetric about k = n/2: the same chord stations on both surfaces.
      const int mirrored = k <= n / 2 ? k : n - k;
      const double x = 0.5 * (1.0 + std::cos(2.0 * pi * mirrored / n));
      points[static_cast<std::size_t>(k)] = surface(x, k > n / 2);
    }
    return points;
  }

 private:
  double m_camber = 0.0, m_camber_position = 0.0, m_thickness = 0.0;
  bool m_open_trailing_edge = false;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_AIRFOIL_GEOMETRY_HPP
