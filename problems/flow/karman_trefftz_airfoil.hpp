// Kármán–Trefftz airfoil sections and their exact incompressible potential
// flow, for checking the surface pressure of the Euler discretisation
// (euler_airfoil.hpp) against a closed-form distribution.
//
// Map: a circle in the ζ-plane through ζ = 1, centre μ = μx + iμy, radius
// a = |1 − μ|, goes to the section by
//   z = k [(ζ+1)^k + (ζ−1)^k] / [(ζ+1)^k − (ζ−1)^k],  k = 2 − τ/π,
// i.e. (z − k)/(z + k) = q^k with q = (ζ−1)/(ζ+1): ζ = 1 goes to the trailing
// edge z = k, where the section has the edge angle τ; k = 2 (τ = 0) is the
// Joukowski map z = ζ + 1/ζ. μx < 0 gives thickness, μy > 0 camber. At large
// |ζ|, z = ζ + O(1/ζ), so the free stream is the same in both planes.
// Differentiating, dz/dζ = 4k² q^k / ((1 − q^k)² (ζ² − 1)).
// T. von Kármán & E. Trefftz, "Potentialströmung um gegebene
// Tragflächenquerschnitte", Z. Flugtech. Motorluftschiffahrt 9 (1918)
// 111–116; L.M. Milne-Thomson, "Theoretical Aerodynamics", Dover 1958,
// chapter 6 (Kármán–Trefftz profiles; chapter and section from memory).
//
// Branch of q^k: the circle maps under q to a circle through q = 0 (a line
// when μx = 0) on the side of the exterior normal of the ζ-circle at ζ = 1,
// because dq/dζ = 1/2 > 0 there and ζ = −1 (inside the circle, q = ∞) maps to
// the outside. So arg q stays within π/2 of θ_te = arg(1 − μ), and
// q^k = exp(k (ln|q| + i(θ_te + Arg(q e^(−iθ_te))))) is continuous around
// the circle (Arg the principal argument).
//
// Chord: the trailing edge z = k and the leading edge, the surface point
// farthest from it (common practice definition of the chord line), are put at
// (1, 0) and (0, 0) by Z = A (z − z_LE), A = 1/(k − z_LE) (a rotation and a
// scaling; conformal, so the flow maps with it).
//
// Surface points: ζ(θ) = μ + a e^(iθ). Decreasing θ from θ_te runs clockwise
// (the map keeps orientation): along the lower surface to the leading edge
// θ_LE (found by bisection of d|z − k|²/dθ) and back along the upper surface
// to θ_te − 2π. Point j of n sits on the lower (j <= n/2) or upper surface at
// the chord station x_j = ½(1 + cos(2πj/n)), the cosine spacing of
// naca_four_digit_airfoil: the same contract (trailing edge first, leading
// edge at j = n/2, clockwise), and the same clustering at both edges that
// airfoil_grid.hpp's fan of grid lines was laid out for. Its circle angle is
// found by bisection on that surface's arc (x(θ) is monotone on each arc for
// sections of moderate thickness and camber; surface_points checks it).
//
// Exact flow with the Kutta condition (V∞ = 1 at angle of attack α; the
// complex velocity u − iv = dW/dZ): in the circle plane the free stream is
// U e^(−iα_ζ) with U = |A|, α_ζ = α − arg A, and
//   dW/dζ = U [e^(−iα_ζ) − a² e^(iα_ζ)/(ζ − μ)²] + iΓ/(2π(ζ − μ)),
// the flow past a circle with clockwise circulation Γ. The Kutta condition
// (dW/dζ = 0 at ζ = 1, where dz/dζ = 0) gives Γ = 4π a U sin(α_ζ + β) with
// β = −θ_te. Then dW/dZ = (dW/dζ)/(A dz/dζ), c_p0 = 1 − |dW/dZ|² (Bernoulli),
// and the lift per unit span L = ρV∞Γ (Kutta–Joukowski; the circulation is
// the same in every plane), c_l0 = 2Γ/(V∞ c) = 8π a |A| sin(α_ζ + β).
// Milne-Thomson, Theoretical Aerodynamics, chapters 5 and 6 (the circular
// cylinder with circulation, the Kutta condition; from memory).
//
// At the trailing edge itself the velocity is the limit: 0 for τ > 0 (dz/dζ
// has a zero of order k − 1 < 1 there, dW/dζ a simple zero: |w| ~ |ζ−1|^(2−k)),
// finite for the cusp τ = 0: w = (d²W/dζ²)/(2A) there (dz/dζ ≈ 2(ζ − 1)).
#ifndef NKIT_PROBLEMS_FLOW_KARMAN_TREFFTZ_AIRFOIL_HPP
#define NKIT_PROBLEMS_FLOW_KARMAN_TREFFTZ_AIRFOIL_HPP

#include <algorithm>
#include <cmath>
#include <complex>
#include <stdexcept>
#include <string>
#include <vector>

#include "problems/flow/airfoil_geometry.hpp"

namespace nkit_problems {

class karman_trefftz_airfoil {
 public:
  using complex = std::complex<double>;

  /// Circle centre μ = (centre_x, centre_y) in the ζ-plane (centre_x <= 0:
  /// thickness; centre_y: camber) and trailing-edge angle τ in degrees, 0 <= τ < 180.
  /// Throws std::invalid_argument for centre_x > 0 (the mapped curve would
  /// cross itself), non-finite values, or τ outside [0, 180).
  karman_trefftz_airfoil(double centre_x, double centre_y, double trailing_edge_angle_degrees)
      : m_centre(centre_x, centre_y), m_trailing_edge_angle_degrees(trailing_edge_angle_degrees) {
    const auto fail = [](const std::string& what) { throw std::invalid_argument("karman_trefftz_airfoil: " + what); };
    if (!(std::isfinite(centre_x) && centre_x <= 0.0)) {
      fail("centre_x must be finite and <= 0 (got " + std::to_string(centre_x) + ")");
    }
    if (!std::isfinite(centre_y)) fail("centre_y must be finite (got " + std::to_string(centre_y) + ")");
    if (!(trailing_edge_angle_degrees >= 0.0 && trailing_edge_angle_degrees < 180.0)) {
      fail("trailing_edge_angle_degrees must be in [0, 180) (got " + std::to_string(trailing_edge_angle_degrees) + ")");
    }
    const double pi = std::acos(-1.0);
    m_exponent = 2.0 - trailing_edge_angle_degrees / 180.0;
    m_radius = std::abs(complex(1.0, 0.0) - m_centre);
    m_theta_te = std::arg(complex(1.0, 0.0) - m_centre);
    // Leading edge: the largest |z − k|² on a coarse scan, then bisection of
    // its θ-derivative 2 Re(conj(z − k) dz/dζ · i a e^(iθ)) between the neighbours.
    const int samples = 720;
    int best = 1;
    double best_distance = 0.0;
    for (int s = 1; s < samples; ++s) {
      const double d = std::norm(mapped(circle_point(m_theta_te - 2.0 * pi * s / samples)) - m_exponent);
      if (d > best_distance) {
        best_distance = d;
        best = s;
      }
    }
    const auto slope = [this](double theta) {
      const complex zeta = circle_point(theta);
      const complex dzeta = complex(0.0, 1.0) * m_radius * std::exp(complex(0.0, theta));
      return std::real(std::conj(mapped(zeta) - m_exponent) * map_derivative(zeta) * dzeta);
    };
    // θ decreases with s: the distance rises toward `best` from θ_high and falls past it.
    double high = m_theta_te - 2.0 * pi * (best - 1) / samples, low = m_theta_te - 2.0 * pi * (best + 1) / samples;
    for (int it = 0; it < 200 && high - low > 0.0; ++it) {
      const double middle = 0.5 * (low + high);
      if (middle <= low || middle >= high) break;
      if (slope(middle) < 0.0) {  // distance still rising as θ decreases
        high = middle;
      } else {
        low = middle;
      }
    }
    m_theta_le = 0.5 * (low + high);
    m_z_le = mapped(circle_point(m_theta_le));
    m_scale = 1.0 / (complex(m_exponent, 0.0) - m_z_le);
  }

  complex centre() const { return m_centre; }
  double trailing_edge_angle_degrees() const { return m_trailing_edge_angle_degrees; }
  /// k = 2 − τ/π.
  double exponent() const { return m_exponent; }
  /// a = |1 − μ|.
  double circle_radius() const { return m_radius; }
  /// θ_te = arg(1 − μ) = −β: the circle angle of the trailing edge.
  double trailing_edge_circle_angle() const { return m_theta_te; }
  /// θ_LE, in (θ_te − 2π, θ_te).
  double leading_edge_circle_angle() const { return m_theta_le; }
  /// The section has a sharp trailing edge (airfoil_grid.hpp needs one).
  bool open_trailing_edge() const { return false; }

  /// Section point (chord units) at circle angle θ.
  point2 surface_point(double theta) const {
    const complex z = m_scale * (mapped(circle_point(theta)) - m_z_le);
    return {z.real(), z.imag()};
  }

  /// Circle angle of the point at chord station x, 0 <= x <= 1, on the upper
  /// (upper = true) or lower surface, by bisection on that arc.
  double circle_angle(double x, bool upper) const {
    if (!(x >= 0.0 && x <= 1.0)) {
      throw std::invalid_argument("karman_trefftz_airfoil::circle_angle: x must be in [0, 1] (got " +
                                  std::to_string(x) + ")");
    }
    const double pi = std::acos(-1.0);
    // Lower arc: θ from θ_te (x = 1) down to θ_LE (x = 0); upper arc: from θ_te − 2π (x = 1) up to θ_LE.
    double at_edge = upper ? m_theta_te - 2.0 * pi : m_theta_te, at_leading = m_theta_le;
    if (x >= 1.0) return at_edge;
    if (x <= 0.0) return at_leading;
    for (int it = 0; it < 200; ++it) {
      const double middle = 0.5 * (at_edge + at_leading);
      if (middle == at_edge || middle == at_leading) break;
      if (surface_point(middle).x > x) {
        at_edge = middle;
      } else {
        at_leading = middle;
      }
    }
    return 0.5 * (at_edge + at_leading);
  }

  /// Circle angle of the section point nearest to p among θ in [θ_a, θ_b]
  /// (golden-section search of the distance; e.g. a wall-face midpoint with
  /// the angles of the face's two surface points).
  double nearest_circle_angle(point2 p, double theta_a, double theta_b) const {
    const double golden = 0.5 * (std::sqrt(5.0) - 1.0);
    double low = std::min(theta_a, theta_b), high = std::max(theta_a, theta_b);
    const auto distance = [this, p](double theta) {
      const point2 s = surface_point(theta);
      return std::hypot(s.x - p.x, s.y - p.y);
    };
    for (int it = 0; it < 100 && high - low > 1e-15; ++it) {
      const double left = high - golden * (high - low), right = low + golden * (high - low);
      if (distance(left) < distance(right)) {
        high = right;
      } else {
        low = left;
      }
    }
    return 0.5 * (low + high);
  }

  /// Circle angles of the n surface points (file comment); n even, >= 8.
  std::vector<double> surface_angles(int n) const {
    if (n < 8 || n % 2 != 0) {
      throw std::invalid_argument("karman_trefftz_airfoil::surface_points: n must be even and >= 8 (got " +
                                  std::to_string(n) + ")");
    }
    const double pi = std::acos(-1.0);
    std::vector<double> angles(static_cast<std::size_t>(n));
    for (int j = 0; j < n; ++j) {
      const int mirrored = j <= n / 2 ? j : n - j;
      angles[static_cast<std::size_t>(j)] = circle_angle(0.5 * (1.0 + std::cos(2.0 * pi * mirrored / n)), j > n / 2);
    }
    angles[0] = m_theta_te;
    angles[static_cast<std::size_t>(n / 2)] = m_theta_le;
    return angles;
  }

  /// The exact incompressible c_p0 at the wall faces of an O-grid built from
  /// surface_points(n), n = face_centres.size(): for face i (between surface
  /// points i and i + 1) at the section point nearest its centre, found
  /// between the two points' circle angles (α in degrees).
  std::vector<double> wall_face_pressure_coefficients(const std::vector<point2>& face_centres,
                                                      double angle_of_attack_degrees) const {
    const int n = static_cast<int>(face_centres.size());
    const std::vector<double> angles = surface_angles(n);
    const double two_pi = 2.0 * std::acos(-1.0);
    std::vector<double> coefficients(face_centres.size());
    for (int i = 0; i < n; ++i) {
      const double ta = angles[static_cast<std::size_t>(i)];
      const double tb = i + 1 < n ? angles[static_cast<std::size_t>(i + 1)] : angles[0] - two_pi;
      const double theta = nearest_circle_angle(face_centres[static_cast<std::size_t>(i)], ta, tb);
      coefficients[static_cast<std::size_t>(i)] = pressure_coefficient(theta, angle_of_attack_degrees);
    }
    return coefficients;
  }

  /// n surface points: the contract of naca_four_digit_airfoil::surface_points
  /// (trailing edge (1, 0) first, lower surface to the leading edge (0, 0) at
  /// j = n/2, upper surface back; clockwise). Throws std::invalid_argument when
  /// x is not monotone along a surface (a section too thick or cambered for
  /// this spacing).
  std::vector<point2> surface_points(int n) const {
    const std::vector<double> angles = surface_angles(n);
    std::vector<point2> points(angles.size());
    for (std::size_t j = 0; j < angles.size(); ++j) points[j] = surface_point(angles[j]);
    points[0] = {1.0, 0.0};
    points[static_cast<std::size_t>(n / 2)] = {0.0, 0.0};
    for (int j = 0; j < n; ++j) {
      const int mirrored = j <= n / 2 ? j : n - j;
      const double wanted = 0.5 * (1.0 + std::cos(2.0 * std::acos(-1.0) * mirrored / n));
      if (!(std::abs(points[static_cast<std::size_t>(j)].x - wanted) <= 1e-9)) {
        throw std::invalid_argument(
            "karman_trefftz_airfoil::surface_points: x is not monotone along a surface "
            "for centre (" +
            std::to_string(m_centre.real()) + ", " + std::to_string(m_centre.imag()) +
            ") and n = " + std::to_string(n));
      }
    }
    return points;
  }

  /// α_ζ = α − arg A in radians: the free-stream direction in the circle plane.
  double circle_plane_angle(double angle_of_attack_degrees) const {
    if (!(std::abs(angle_of_attack_degrees) < 90.0)) {
      throw std::invalid_argument("karman_trefftz_airfoil: angle_of_attack_degrees must be in (-90, 90) (got " +
                                  std::to_string(angle_of_attack_degrees) + ")");
    }
    return angle_of_attack_degrees * std::acos(-1.0) / 180.0 - std::arg(m_scale);
  }

  /// Circulation Γ (clockwise positive) of the Kutta flow at α degrees, V∞ = 1, chord 1.
  double circulation(double angle_of_attack_degrees) const {
    const double alpha_circle = circle_plane_angle(angle_of_attack_degrees);
    return 4.0 * std::acos(-1.0) * m_radius * std::abs(m_scale) * std::sin(alpha_circle - m_theta_te);
  }

  /// Exact lift coefficient c_l0 = 2Γ/(V∞ c) (Kutta–Joukowski).
  double lift_coefficient(double angle_of_attack_degrees) const { return 2.0 * circulation(angle_of_attack_degrees); }

  /// Exact surface velocity u + iv (V∞ = 1) at circle angle θ, α in degrees.
  complex velocity(double theta, double angle_of_attack_degrees) const {
    const double alpha_circle = circle_plane_angle(angle_of_attack_degrees);
    const double u = std::abs(m_scale), gamma = circulation(angle_of_attack_degrees), pi = std::acos(-1.0);
    const complex i(0.0, 1.0), zeta = circle_point(theta), r = zeta - m_centre;
    const double a2 = m_radius * m_radius;
    const double offset = std::remainder(theta - m_theta_te, 2.0 * pi);
    if (offset == 0.0) {  // the trailing edge: the limit (file comment)
      if (m_exponent < 2.0) return {0.0, 0.0};
      const complex second = 2.0 * u * a2 * std::exp(i * alpha_circle) / (r * r * r) - i * gamma / (2.0 * pi * r * r);
      return std::conj(second / (2.0 * m_scale));
    }
    const complex potential_derivative =
        u * (std::exp(-i * alpha_circle) - a2 * std::exp(i * alpha_circle) / (r * r)) + i * gamma / (2.0 * pi * r);
    return std::conj(potential_derivative / (m_scale * map_derivative(zeta)));
  }

  /// Exact incompressible c_p0 = 1 − |w|²/V∞² at circle angle θ.
  double pressure_coefficient(double theta, double angle_of_attack_degrees) const {
    return 1.0 - std::norm(velocity(theta, angle_of_attack_degrees));
  }

 private:
  complex circle_point(double theta) const { return m_centre + m_radius * std::exp(complex(0.0, theta)); }

  /// q^k on the branch continuous around the circle (file comment).
  complex power_of_ratio(complex zeta) const {
    const complex q = (zeta - 1.0) / (zeta + 1.0);
    if (q == 0.0) return {0.0, 0.0};
    const double argument = m_theta_te + std::arg(q * std::exp(complex(0.0, -m_theta_te)));
    return std::exp(m_exponent * complex(std::log(std::abs(q)), argument));
  }
  complex mapped(complex zeta) const {
    const complex r = power_of_ratio(zeta);
    return m_exponent * (1.0 + r) / (1.0 - r);
  }
  complex map_derivative(complex zeta) const {
    const complex r = power_of_ratio(zeta);
    return 4.0 * m_exponent * m_exponent * r / ((1.0 - r) * (1.0 - r) * (zeta * zeta - 1.0));
  }

  complex m_centre;
  double m_trailing_edge_angle_degrees = 0.0;
  double m_exponent = 2.0, m_radius = 1.0, m_theta_te = 0.0, m_theta_le = 0.0;
  complex m_z_le, m_scale;
};

/// The exact incompressible c_p0 carried to free-stream Mach number M by the
/// Kármán–Tsien rule, c_p = c_p0 / (β + M²/(1 + β) · c_p0/2), β = √(1 − M²)
/// (H.S. Tsien, "Two-dimensional subsonic flow of compressible fluids",
/// J. Aeronaut. Sci. 6 (1939) 399–407; the form of the formula from memory).
/// Throws std::invalid_argument unless 0 <= M < 1.
inline double karman_tsien_pressure_coefficient(double incompressible_pressure_coefficient, double mach_number) {
  if (!(mach_number >= 0.0 && mach_number < 1.0)) {
    throw std::invalid_argument("karman_tsien_pressure_coefficient: mach_number must be in [0, 1) (got " +
                                std::to_string(mach_number) + ")");
  }
  const double beta = std::sqrt(1.0 - mach_number * mach_number), cp0 = incompressible_pressure_coefficient;
  return cp0 / (beta + mach_number * mach_number / (1.0 + beta) * cp0 / 2.0);
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_KARMAN_TREFFTZ_AIRFOIL_HPP
