// Kármán–Trefftz sections and their exact incompressible flow
// (problems/flow/karman_trefftz_airfoil.hpp): checks of the closed-form
// solution by routes independent of its formulas, then the surface pressure
// of the second-order Euler discretisation (euler_airfoil.hpp) on such a
// section against it, corrected for compressibility.
#include <catch2/catch.hpp>
#include <cmath>
#include <complex>
#include <limits>
#include <stdexcept>
#include <vector>

#include "problems/flow/airfoil_grid.hpp"
#include "problems/flow/euler_airfoil_far_field_vortex.hpp"
#include "problems/flow/euler_airfoil_solve.hpp"
#include "problems/flow/karman_trefftz_airfoil.hpp"

using nkit_problems::airfoil_grid_settings;
using nkit_problems::airfoil_o_grid;
using nkit_problems::euler_airfoil_flow;
using nkit_problems::euler_airfoil_settings;
using nkit_problems::karman_trefftz_airfoil;
using nkit_problems::point2;

namespace {

// π (named apart from other test files' `pi`: the unity build joins them in one translation unit).
const double kt_pi = std::acos(-1.0);

// The section of the Euler comparison: circle centre μ = (−0.07, 0.03),
// trailing-edge angle 10°. Measured from 400 surface points: 12.0 % thick at
// x ≈ 0.32, camber 1.4 % at x ≈ 0.51, c_l0 = 0.431 at α = 2°.
karman_trefftz_airfoil moderate_section() { return karman_trefftz_airfoil(-0.07, 0.03, 10.0); }

// Lift and drag coefficients of a pressure distribution by the panel
// midpoint rule on the polygon of n surface points: force = −Σ c_p n̂ ds with
// c_p at the circle angle halfway along each panel (chord 1, V∞ = 1).
struct force_coefficients {
  double lift = 0.0, drag = 0.0;
};
template <class PressureCoefficient>
force_coefficients integrate_pressure(const karman_trefftz_airfoil& section, int n, double alpha_degrees,
                                      PressureCoefficient&& cp) {
  const std::vector<double> angles = section.surface_angles(n);
  double fx = 0.0, fy = 0.0;
  for (int k = 0; k < n; ++k) {
    const double ta = angles[static_cast<std::size_t>(k)];
    const double tb = k + 1 < n ? angles[static_cast<std::size_t>(k + 1)] : angles[0] - 2.0 * kt_pi;
    const point2 a = section.surface_point(ta), b = section.surface_point(tb);
    // Clockwise polygon: the outward normal × length of edge a → b is (−(b − a)_y, (b − a)_x).
    const double nx = -(b.y - a.y), ny = b.x - a.x;
    const double c = cp(0.5 * (ta + tb));
    fx -= c * nx;
    fy -= c * ny;
  }
  const double alpha = alpha_degrees * kt_pi / 180.0;
  return {-fx * std::sin(alpha) + fy * std::cos(alpha), fx * std::cos(alpha) + fy * std::sin(alpha)};
}

}  // namespace

TEST_CASE("Kármán–Trefftz section: closed curve, chord (0,0)-(1,0), clockwise, trailing-edge angle tau",
          "[karman_trefftz]") {
  const karman_trefftz_airfoil section = moderate_section();
  const double theta_te = section.trailing_edge_circle_angle();
  // Closed: once around the circle the map returns to the trailing edge
  // (checks the branch of q^k; a wrong branch jumps by a factor e^(±2πik)).
  const point2 start = section.surface_point(theta_te), end = section.surface_point(theta_te - 2.0 * kt_pi);
  CHECK(std::hypot(start.x - 1.0, start.y) < 1e-12);
  CHECK(std::hypot(end.x - 1.0, end.y) < 1e-12);
  // Continuity: no jump between neighbours on a fine scan (largest step of
  // 4000 equal angle steps, against the perimeter < 2.5 chords / 4000 · a
  // clustering factor 10 — a branch jump would be of order the chord).
  double largest_step = 0.0;
  point2 previous = start;
  for (int s = 1; s <= 4000; ++s) {
    const point2 p = section.surface_point(theta_te - 2.0 * kt_pi * s / 4000);
    largest_step = std::max(largest_step, std::hypot(p.x - previous.x, p.y - previous.y));
    previous = p;
  }
  CHECK(largest_step < 10 * 2.5 / 4000);

  const int n = 512;
  const std::vector<point2> points = section.surface_points(n);
  CHECK(points[0].x == 1.0);
  CHECK(points[0].y == 0.0);
  CHECK(points[n / 2].x == 0.0);
  CHECK(points[n / 2].y == 0.0);
  // The leading edge is the point farthest from the trailing edge: no
  // point of the fine scan is farther than (0,0) (distance 1) beyond round-off.
  double farthest = 0.0;
  for (int s = 1; s < 4000; ++s) {
    const point2 p = section.surface_point(theta_te - 2.0 * kt_pi * s / 4000);
    farthest = std::max(farthest, std::hypot(p.x - 1.0, p.y));
  }
  CHECK(farthest <= 1.0 + 1e-14);
  // Clockwise (negative shoelace area), lower surface below the upper at equal x.
  double twice_area = 0.0;
  for (int k = 0; k < n; ++k) {
    const point2 a = points[static_cast<std::size_t>(k)], b = points[static_cast<std::size_t>((k + 1) % n)];
    twice_area += a.x * b.y - b.x * a.y;
  }
  CHECK(twice_area < 0.0);
  for (int k = 1; k < n / 2; ++k) {
    CHECK(points[static_cast<std::size_t>(k)].x == Approx(points[static_cast<std::size_t>(n - k)].x).margin(1e-12));
    CHECK(points[static_cast<std::size_t>(k)].y < points[static_cast<std::size_t>(n - k)].y);
  }

  // Trailing-edge angle: the angle at (1,0) between the first lower and the
  // last upper surface point. Near ζ = 1 the map is z − k ∝ (ζ − 1)^k (1 +
  // O(ζ − 1)), so the measured angle differs from τ by O(|ζ − 1|) = O(s^(1/k))
  // for the distance s of those points from the edge: quadrupling n divides s
  // by 16 and the error by about 16^(1/k) ≈ 4.2 (k = 1.944). Measured errors
  // (radians): 2.74e-3 (n = 256) → 6.63e-4 (n = 1024), ratio 4.13.
  const auto edge_angle = [&section](int count) {
    const std::vector<point2> p = section.surface_points(count);
    const point2 lower = p[1], upper = p[static_cast<std::size_t>(count - 1)];
    const double a = std::atan2(lower.y, lower.x - 1.0), b = std::atan2(upper.y, upper.x - 1.0);
    return std::abs(std::remainder(a - b, 2.0 * kt_pi));
  };
  const double tau = 10.0 * kt_pi / 180.0;
  const double error_coarse = std::abs(edge_angle(256) - tau), error_fine = std::abs(edge_angle(1024) - tau);
  CAPTURE(error_coarse, error_fine);
  CHECK(error_fine < error_coarse / 3.0);
  CHECK(error_fine < 0.05 * tau);
}

TEST_CASE("Kármán–Trefftz exact flow: tangent to the surface, stagnation where circle theory puts it, c_p0 <= 1",
          "[karman_trefftz]") {
  const karman_trefftz_airfoil section = moderate_section();
  const double alpha = 2.0;
  // Tangency: the velocity's component along the normal of the surface
  // polygon (central difference of the neighbouring surface points, an
  // estimate of the tangent that is independent of the velocity formula),
  // largest over the points other than the trailing edge (where w = 0), split
  // into x < 0.99 and the points nearer the trailing edge. Where the surface
  // is smooth the central difference tilts by O(h) · curvature · (h₊ − h₋)/h,
  // O(h²) for smoothly varying spacing: quadrupling n divides it by about 16.
  // At the trailing edge the curvature is unbounded: z − k ≈ C(ζ − 1)^k (1 +
  // O(ζ − 1)) turns the tangent by O(|ζ − 1|) = O(s^(1/k)) within the
  // distance s of the edge; the first point's s falls by 16 when n is
  // quadrupled, so the error there falls by about 16^(1/k) = 4.2 (k = 1.944):
  // first order. Measured (α = 2°, n = 256 → 1024): away from the edge
  // 7.4e-5 → 4.6e-6 (ratio 16.0), next to it 5.5e-4 → 1.2e-4 (ratio 4.45).
  struct normal_velocity {
    double smooth = 0.0, near_edge = 0.0;
  };
  const auto largest_normal_velocity = [&](int n) {
    const std::vector<double> angles = section.surface_angles(n);
    const std::vector<point2> points = section.surface_points(n);
    normal_velocity largest;
    for (int k = 1; k < n; ++k) {
      const point2 before = points[static_cast<std::size_t>(k - 1)];
      const point2 after = points[static_cast<std::size_t>((k + 1) % n)];
      const double tx = after.x - before.x, ty = after.y - before.y, length = std::hypot(tx, ty);
      const std::complex<double> w = section.velocity(angles[static_cast<std::size_t>(k)], alpha);
      const double normal = std::abs(w.real() * ty - w.imag() * tx) / length;
      double& slot = points[static_cast<std::size_t>(k)].x < 0.99 ? largest.smooth : largest.near_edge;
      slot = std::max(slot, normal);
    }
    return largest;
  };
  const normal_velocity coarse = largest_normal_velocity(256), fine = largest_normal_velocity(1024);
  CAPTURE(coarse.smooth, fine.smooth, coarse.near_edge, fine.near_edge);
  CHECK(fine.smooth < coarse.smooth / 8.0);        // order >= 1.5 (expected 2)
  CHECK(fine.near_edge < coarse.near_edge / 3.0);  // order >= 0.8 (expected 1.03)
  CHECK(fine.smooth < 1e-5);
  CHECK(fine.near_edge < 1e-3);

  // Stagnation: on the circle the Kutta flow vanishes at θ_te and at
  // θ_f = π + 2α_ζ − θ_te (flow past a circle with circulation: the two zeros
  // of dW/dζ are symmetric about the free-stream direction α_ζ; L.M.
  // Milne-Thomson, Theoretical Aerodynamics, chapter 5, from memory). There
  // c_p0 = 1 (Bernoulli, common practice), and nowhere above it.
  const double alpha_circle = section.circle_plane_angle(alpha);
  const double front = kt_pi + 2.0 * alpha_circle - section.trailing_edge_circle_angle();
  CHECK(section.pressure_coefficient(front, alpha) == Approx(1.0).margin(1e-12));
  CHECK(section.pressure_coefficient(section.trailing_edge_circle_angle(), alpha) == 1.0);
  double largest_cp = -1e300;
  for (int s = 1; s < 4000; ++s) {
    largest_cp = std::max(
        largest_cp, section.pressure_coefficient(section.trailing_edge_circle_angle() - 2.0 * kt_pi * s / 4000, alpha));
  }
  CHECK(largest_cp <= 1.0 + 1e-12);
  // The front stagnation point lies near the leading edge, on the lower
  // surface at positive lift: within 0.02 chord of (0,0) (measured 0.0052) and below the chord.
  const point2 stagnation = section.surface_point(front);
  CAPTURE(stagnation.x, stagnation.y);
  CHECK(std::hypot(stagnation.x, stagnation.y) < 0.02);
  CHECK(stagnation.y < 0.0);
}

TEST_CASE("Kármán–Trefftz exact flow: Kutta condition, finite speed at the trailing edge", "[karman_trefftz]") {
  // With the Kutta circulation dW/dζ has a zero at ζ = 1 that cancels the
  // zero of dz/dζ there (order k − 1): |w| ~ |ζ − 1|^(2−k) → 0 for τ > 0 and a
  // finite limit for the cusp k = 2. Any other circulation leaves
  // |w| ~ |ζ − 1|^(1−k), unbounded. (N.E. Joukowski's and M.W. Kutta's
  // condition; Milne-Thomson, Theoretical Aerodynamics, chapter 6, from memory.)
  const karman_trefftz_airfoil section = moderate_section();
  const double te = section.trailing_edge_circle_angle(), alpha = 2.0;
  double previous_lower = 1e300, previous_upper = 1e300;
  for (const double delta : {1e-2, 1e-4, 1e-6, 1e-8}) {
    const double lower = std::abs(section.velocity(te - delta, alpha));
    const double upper = std::abs(section.velocity(te - 2.0 * kt_pi + delta, alpha));
    CAPTURE(delta, lower, upper);
    CHECK(lower < previous_lower);  // falls toward the edge
    CHECK(upper < previous_upper);
    CHECK(lower < 1.0);
    CHECK(upper < 1.0);
    previous_lower = lower;
    previous_upper = upper;
  }
  // The cusp (τ = 0, a Joukowski section): the speed tends to the same finite
  // value from both sides, the value the class returns at the edge; the
  // difference is O(δ) (a smooth limit), so at δ = 1e-6 it is below 1e-4.
  const karman_trefftz_airfoil cusp(-0.07, 0.03, 0.0);
  const double cusp_te = cusp.trailing_edge_circle_angle();
  const double at_edge = std::abs(cusp.velocity(cusp_te, alpha));
  CHECK(at_edge > 0.5);
  CHECK(std::abs(std::abs(cusp.velocity(cusp_te - 1e-6, alpha)) - at_edge) < 1e-4);
  CHECK(std::abs(std::abs(cusp.velocity(cusp_te - 2.0 * kt_pi + 1e-6, alpha)) - at_edge) < 1e-4);
}

TEST_CASE("Kármán–Trefftz exact flow: the surface pressure integrates to c_l0 and zero drag at second order",
          "[karman_trefftz]") {
  // Kutta–Joukowski (L = ρV∞Γ, c_l0 = 2Γ) and d'Alembert (no drag in
  // potential flow), reached by a route independent of the circulation
  // formula: the panel midpoint rule on the polygon of the surface points.
  // The polygon and the midpoint rule are second-order accurate: doubling n
  // divides the errors by about 4. Measured (n = 256 → 512, the nine cases
  // below): lift error ratios 4.00 in every case (e.g. 9.4e-6 → 2.35e-6 for
  // the moderate section at α = 2°), drag ratios 3.65 to 4.21 (drag 8.9e-7 →
  // 2.4e-7 there). Asked: lift order >= 1.8 (ratio 3.48), drag order >= 1.7
  // (ratio 3.25; the smallest measured ratio, 3.65, is order 1.87).
  for (const karman_trefftz_airfoil& section :
       {moderate_section(), karman_trefftz_airfoil(-0.1, 0.0, 20.0), karman_trefftz_airfoil(-0.05, 0.08, 0.0)}) {
    for (const double alpha : {-3.0, 2.0, 8.0}) {
      const auto cp = [&](double theta) { return section.pressure_coefficient(theta, alpha); };
      const force_coefficients coarse = integrate_pressure(section, 256, alpha, cp);
      const force_coefficients fine = integrate_pressure(section, 512, alpha, cp);
      const double exact = section.lift_coefficient(alpha);
      CAPTURE(section.centre(), section.trailing_edge_angle_degrees(), alpha, exact, coarse.lift, fine.lift,
              coarse.drag, fine.drag);
      CHECK(std::abs(fine.lift - exact) < std::abs(coarse.lift - exact) / std::pow(2.0, 1.8));
      CHECK(std::abs(fine.drag) < std::abs(coarse.drag) / std::pow(2.0, 1.7));
      CHECK(std::abs(fine.lift - exact) < 1e-3);
      CHECK(std::abs(fine.drag) < 1e-3);
    }
  }
}

TEST_CASE("Kármán–Trefftz limits: Joukowski map at tau = 0, flat plate, circular-arc lens", "[karman_trefftz]") {
  // τ = 0 (k = 2): z = 2[(ζ+1)² + (ζ−1)²]/[(ζ+1)² − (ζ−1)²] = ζ + 1/ζ, the
  // Joukowski map (von Kármán & Trefftz 1918). Checked point by point against
  // ζ + 1/ζ normalised to the same chord (leading edge at the same circle angle).
  const karman_trefftz_airfoil joukowski(-0.08, 0.05, 0.0);
  const std::complex<double> mu = joukowski.centre();
  const double radius = joukowski.circle_radius();
  const auto joukowski_map = [&](double theta) {
    const std::complex<double> zeta = mu + radius * std::exp(std::complex<double>(0.0, theta));
    return zeta + 1.0 / zeta;
  };
  const std::complex<double> leading = joukowski_map(joukowski.leading_edge_circle_angle());
  const std::complex<double> scale = 1.0 / (joukowski_map(joukowski.trailing_edge_circle_angle()) - leading);
  double largest_difference = 0.0;
  for (const double theta : joukowski.surface_angles(64)) {
    const std::complex<double> expected = scale * (joukowski_map(theta) - leading);
    const point2 p = joukowski.surface_point(theta);
    largest_difference = std::max(largest_difference, std::abs(expected - std::complex<double>(p.x, p.y)));
  }
  CHECK(largest_difference < 1e-13);

  // μ = 0, τ = 0: the circle |ζ| = 1 maps to the flat plate from −2 to 2.
  // Exact Kutta flow past the plate, chord 1, leading edge at x = 0:
  //   c_l = 2π sin α,  surface speed cos α ± sin α √((1 − x)/x)
  // (upper +, lower −; the flat plate in potential flow with the Kutta
  // condition, e.g. Milne-Thomson, Theoretical Aerodynamics, chapter 6; from memory).
  const karman_trefftz_airfoil plate(0.0, 0.0, 0.0);
  for (const double alpha : {2.0, 10.0}) {
    const double a = alpha * kt_pi / 180.0;
    CHECK(plate.lift_coefficient(alpha) == Approx(2.0 * kt_pi * std::sin(a)).epsilon(1e-13));
    for (const double x : {0.05, 0.3, 0.7, 0.95}) {
      for (const bool upper : {false, true}) {
        const double theta = plate.circle_angle(x, upper);
        const double expected = std::cos(a) + (upper ? 1.0 : -1.0) * std::sin(a) * std::sqrt((1.0 - x) / x);
        CAPTURE(alpha, x, upper);
        CHECK(std::abs(plate.velocity(theta, alpha)) == Approx(std::abs(expected)).epsilon(1e-9));
        CHECK(plate.surface_point(theta).y == Approx(0.0).margin(1e-12));
      }
    }
  }

  // μ = 0, τ > 0: |ζ| = 1 maps to a symmetric lens of two circular arcs with
  // the edge angle τ at both ends (q = (ζ−1)/(ζ+1) is imaginary on the
  // circle, so q^k lies on two rays and (z − k)/(z + k) on two lines through
  // 0: circular arcs through ±k). An arc over the chord c meeting it at τ/2
  // has the height (c/2) tan(τ/4) (inscribed angle; common practice
  // geometry): thickness / chord = tan(τ/4). Checked at mid-chord.
  const karman_trefftz_airfoil lens(0.0, 0.0, 20.0);
  const double thickness =
      lens.surface_point(lens.circle_angle(0.5, true)).y - lens.surface_point(lens.circle_angle(0.5, false)).y;
  CHECK(thickness == Approx(std::tan(20.0 * kt_pi / 180.0 / 4.0)).epsilon(1e-9));
}

TEST_CASE("Kármán–Trefftz: invalid parameters throw std::invalid_argument", "[karman_trefftz]") {
  CHECK_THROWS_AS(karman_trefftz_airfoil(0.01, 0.0, 10.0), std::invalid_argument);  // centre_x > 0
  CHECK_THROWS_AS(karman_trefftz_airfoil(std::nan(""), 0.0, 10.0), std::invalid_argument);
  CHECK_THROWS_AS(karman_trefftz_airfoil(-0.1, std::numeric_limits<double>::infinity(), 10.0), std::invalid_argument);
  CHECK_THROWS_AS(karman_trefftz_airfoil(-0.1, 0.0, -1.0), std::invalid_argument);
  CHECK_THROWS_AS(karman_trefftz_airfoil(-0.1, 0.0, 180.0), std::invalid_argument);
  const karman_trefftz_airfoil section = moderate_section();
  CHECK_THROWS_WITH(section.surface_points(7), Catch::Contains("n must be even and >= 8 (got 7)"));
  CHECK_THROWS_AS(section.surface_points(6), std::invalid_argument);
  CHECK_THROWS_AS(section.circle_angle(1.5, true), std::invalid_argument);
  CHECK_THROWS_WITH(section.velocity(0.0, 90.0), Catch::Contains("angle_of_attack_degrees"));
  // The O-grid from surface points: wrong count, reversed (counter-clockwise) order.
  airfoil_grid_settings grid_settings;
  grid_settings.cells_around = 64;
  grid_settings.cells_outward = 32;
  std::vector<point2> points = section.surface_points(64);
  CHECK_NOTHROW(airfoil_o_grid(points, grid_settings));
  CHECK_THROWS_WITH(airfoil_o_grid(section.surface_points(66), grid_settings),
                    Catch::Contains("surface has 66 points but settings.cells_around is 64"));
  std::vector<point2> reversed(points.rbegin(), points.rend());
  CHECK_THROWS_WITH(airfoil_o_grid(reversed, grid_settings), Catch::Contains("clockwise"));
  points[5].y = std::nan("");
  CHECK_THROWS_WITH(airfoil_o_grid(points, grid_settings), Catch::Contains("surface point 5 is not finite"));
  // The Kármán–Tsien rule: the identity at M = 0 (β = 1; algebra), a Mach
  // number outside [0, 1) refused.
  CHECK(nkit_problems::karman_tsien_pressure_coefficient(-0.7, 0.0) == -0.7);
  CHECK_THROWS_WITH(nkit_problems::karman_tsien_pressure_coefficient(0.5, 1.0),
                    Catch::Contains("mach_number must be in [0, 1) (got 1.0"));
}

namespace {

// Kármán–Tsien rule: karman_trefftz_airfoil.hpp (Tsien 1939, form from memory).
double karman_tsien(double incompressible, double mach) {
  return nkit_problems::karman_tsien_pressure_coefficient(incompressible, mach);
}

struct surface_comparison {
  double mean_difference = 0.0;     ///< mean over the wall faces of |c_p − c_p,exact|
  double largest_difference = 0.0;  ///< its maximum
  double largest_at_x = 0.0;        ///< x of the face where it sits
  double lift = 0.0;                ///< c_l of the discrete flow
  double rule_spread = 0.0;         ///< mean over the faces of |Kármán–Tsien − Prandtl–Glauert| exact c_p
  double uncorrected_mean_difference = 0.0;  ///< mean of |c_p − c_p0|: against the incompressible c_p0
};

// Solves the second-order Euler flow past `section` on an n × n/2 O-grid
// (radial ratio 1.2^(64/n): the radial spacing halves with n) with the
// far-field vortex, and compares the wall-face c_p with the exact c_p0
// corrected by the Kármán–Tsien rule, at the surface point nearest to each
// face midpoint (between the circle angles of the face's two surface points).
surface_comparison compare_with_exact(const karman_trefftz_airfoil& section, int n, double mach, double alpha) {
  airfoil_grid_settings grid_settings;
  grid_settings.cells_around = n;
  grid_settings.cells_outward = n / 2;
  grid_settings.stretching_ratio = std::pow(1.2, 64.0 / n);
  const airfoil_o_grid grid(section.surface_points(n), grid_settings);
  euler_airfoil_settings settings;
  settings.mach_number = mach;
  settings.angle_of_attack_degrees = alpha;
  const auto solve = [](const euler_airfoil_flow& f, Eigen::VectorXd& u, const nkit::newton_settings& newton) {
    return nkit_problems::solve_euler_airfoil(nkit_problems::euler_airfoil_with_first_order_jacobian(f), u, newton,
                                              nkit::block_ilu_zero_preconditioner(4));
  };
  Eigen::VectorXd u = euler_airfoil_flow(grid, settings).initial_guess();
  const auto result = nkit_problems::solve_euler_airfoil_with_far_field_vortex(
      grid, settings, u, nkit_problems::euler_airfoil_newton_settings(), solve, 1e-6);
  CAPTURE(n, mach, result.solves, result.newton_steps);
  REQUIRE(result.converged);
  settings.far_field_vortex_lift_coefficient = result.vortex_lift_coefficient;
  const nkit_problems::airfoil_forces forces = euler_airfoil_flow(grid, settings).forces(u);
  const std::vector<double> exact_incompressible =
      section.wall_face_pressure_coefficients(forces.wall_face_centre, alpha);
  const double beta = std::sqrt(1.0 - mach * mach);
  surface_comparison comparison;
  comparison.lift = forces.lift_coefficient;
  for (std::size_t i = 0; i < exact_incompressible.size(); ++i) {
    const double incompressible = exact_incompressible[i];
    const double exact = karman_tsien(incompressible, mach);
    const double difference = std::abs(forces.pressure_coefficient[i] - exact);
    comparison.mean_difference += difference / n;
    comparison.rule_spread += std::abs(exact - incompressible / beta) / n;
    comparison.uncorrected_mean_difference += std::abs(forces.pressure_coefficient[i] - incompressible) / n;
    if (difference > comparison.largest_difference) {
      comparison.largest_difference = difference;
      comparison.largest_at_x = forces.wall_face_centre[i].x;
    }
  }
  return comparison;
}

}  // namespace

TEST_CASE("Euler surface pressure on a Kármán–Trefftz section approaches the exact distribution",
          "[euler][karman_trefftz][solve][slow_unoptimized]") {
  // Section: μ = (−0.07, 0.03), τ = 10° (12 % thick, 1.4 % camber); M = 0.2,
  // α = 2°; wall-face c_p of the second-order discretisation against the exact
  // incompressible c_p0 of the same section corrected by the Kármán–Tsien
  // rule (above), over all wall faces (no region left out).
  //
  // Measured (mean |Δc_p| over the faces; max |Δc_p|, where):
  //   M = 0.2:  64 × 32  0.0534, max 0.87 at the first upper face behind the leading edge;
  //            128 × 64  0.0199, max 0.27 at the same place;
  //            256 × 128 0.0112, max 0.11 at the last upper face before the trailing edge.
  //   M = 0.3:  0.0420, 0.0176, 0.0109 (max 0.67, 0.24, 0.10, same places).
  // Orders of the mean: 1.43 then 0.82 (M = 0.2), 1.26 then 0.69 (M = 0.3).
  // Three error sources, measured: (1) the leading edge, where the stagnation
  // point sits between two faces and c_p0 swings from 1 there to −0.6 within
  // 0.011 chord of the leading edge; on the coarse grids the discrete c_p there exceeds the
  // stagnation value; (2) the trailing edge, where the exact velocity is
  // singular, |w| ~ s^(τ/(2π−τ)) = s^0.029 at distance s (the map's corner):
  // |w| = 0.71 (c_p0 = 0.50) at s = 1e-5 chord and it falls by only 28 % per
  // five decades of s, so c_p0 reaches 1 at the edge itself and no grid resolves it: the mean over faces with x > 0.9
  // falls at order 0.6 (0.042 → 0.028 from 128 to 256); (3) the lift, 5.7 %, 2.0 %, 1.0 % low against the
  // Prandtl–Glauert-scaled c_l0/β (orders 1.5, 1.0): a circulation deficit that offsets c_p on the whole chord (the
  // mean over 0.1 < x < 0.9 falls only 0.0050 → 0.0030 from 128 to 256). At fixed grid the errors grow as M falls (64 ×
  // 32: mean 0.088, 0.053, 0.042, 0.038 at M = 0.1, 0.2, 0.3, 0.4; leading-edge max 1.41, 0.87, 0.67, 0.57): the
  // low-Mach inaccuracy of Roe-type upwind dissipation (H. Guillard & C.
  // Viozat, "On the behaviour of upwind schemes in the low Mach number
  // limit", Computers & Fluids 28 (1999) 63–86; from memory). At M = 0.1 on
  // 256 × 128 the far-field-vortex outer iteration did not converge (its third
  // solve failed after 156 s in all): the low-Mach stiffness reaches the solver too.
  //
  // The compressibility rule's own uncertainty, estimated by the spread
  // between the Kármán–Tsien and the Prandtl–Glauert c_p0/β (both exact to
  // first order in the small perturbation; common practice estimate): mean
  // 0.0016 at M = 0.2 (0.0038 at 0.3), 12 × below the 128 × 64 error. So
  // this comparison is limited by the discretisation, not by the rule, and
  // the bound at 128 × 64 below is a measured margin, not the rule's error.
  //
  // Asked: (a) the mean falls from 64 × 32 to 128 × 64 at order >= 1 (ratio
  // >= 2; measured 2.69): first order is what the trailing-edge singularity
  // and the circulation error leave of the scheme's second order, the
  // 256 × 128 pair gives 0.82; (b) the mean at 128 × 64 below 0.03 (measured
  // 0.0199, margin 1.5); (c) the lift error against c_l0/β (Prandtl–Glauert,
  // L. Prandtl 1930 / H. Glauert, Proc. R. Soc. A 118 (1928) 113–119, from
  // memory) falls at order >= 1 (measured 0.0250 → 0.0090, ratio 2.78) and
  // is below 3 % at 128 × 64 (measured 2.0 %).
  const karman_trefftz_airfoil section = moderate_section();
  const double mach = 0.2, alpha = 2.0;
  const surface_comparison coarse = compare_with_exact(section, 64, mach, alpha);
  const surface_comparison fine = compare_with_exact(section, 128, mach, alpha);
  const double lift = section.lift_coefficient(alpha) / std::sqrt(1.0 - mach * mach);
  CAPTURE(coarse.mean_difference, fine.mean_difference, coarse.largest_difference, coarse.largest_at_x,
          fine.largest_difference, fine.largest_at_x, coarse.lift, fine.lift, lift, fine.rule_spread);
  CHECK(fine.mean_difference < coarse.mean_difference / 2.0);
  CHECK(fine.mean_difference < 0.03);
  CHECK(std::abs(fine.lift - lift) < std::abs(coarse.lift - lift) / 2.0);
  CHECK(std::abs(fine.lift - lift) < 0.03 * lift);
  // The comparison is discretisation-limited (see above): the rule's spread
  // is the smaller by a wide margin (measured 12×; asked 4×).
  CHECK(4.0 * fine.rule_spread < fine.mean_difference);
}

TEST_CASE("Euler surface pressure on a Kármán–Trefftz section carries the compressibility correction at M = 0.4",
          "[euler][karman_trefftz][solve][slow_unoptimized]") {
  // At M = 0.2 the discretisation error (mean 0.0199 on 128 × 64) hides the
  // compressibility correction: measured mean |Δc_p| against the uncorrected
  // c_p0 is 0.0181, smaller. At M = 0.4 the correction (c_p0/β − c_p0 =
  // 9 % of c_p0 by Prandtl–Glauert) stands out: on 128 × 64 the mean against
  // the Kármán–Tsien-corrected c_p0 is 0.0179, against the uncorrected c_p0
  // 0.0261 (ratio 1.46; on 256 × 128 0.0123 against 0.0243, ratio 1.97).
  // Kármán–Tsien and Prandtl–Glauert are not told apart at these errors
  // (0.0179 and 0.0171 on 128 × 64, 0.0123 and 0.0126 on 256 × 128; the two
  // rules differ by 0.0076 in the mean at M = 0.4). Asked: the corrected
  // distribution fits better by a factor >= 1.2 (measured 1.46); dropping
  // the correction makes the two equal and fails this.
  const karman_trefftz_airfoil section = moderate_section();
  const double mach = 0.4, alpha = 2.0;
  const surface_comparison corrected = compare_with_exact(section, 128, mach, alpha);
  CAPTURE(corrected.mean_difference, corrected.uncorrected_mean_difference, corrected.lift);
  CHECK(1.2 * corrected.mean_difference < corrected.uncorrected_mean_difference);
}
