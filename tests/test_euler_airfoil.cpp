// Steady 2-D Euler flow over a NACA four-digit airfoil (problems/flow/
// airfoil_geometry.hpp, airfoil_grid.hpp, euler_airfoil.hpp): the section
// formulas, the O-grid metrics, the Roe flux and the discrete conservation
// and free-stream properties of the residual.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <random>
#include <stdexcept>

#include <nkit/jacobian/automatic_differentiation.hpp>
#include "problems/flow/euler_airfoil.hpp"
#include "problems/flow/euler_airfoil_far_field_vortex.hpp"
#include "problems/flow/euler_airfoil_solve.hpp"

using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;
using nkit_problems::airfoil_body_boundary;
using nkit_problems::airfoil_grid_settings;
using nkit_problems::airfoil_o_grid;
using nkit_problems::euler_airfoil_flow;
using nkit_problems::euler_airfoil_settings;
using nkit_problems::naca_four_digit_airfoil;

namespace {

constexpr double epsilon = std::numeric_limits<double>::epsilon();

airfoil_grid_settings coarse_grid() {
  airfoil_grid_settings settings;
  settings.cells_around = 64;
  settings.cells_outward = 32;
  return settings;
}

// Largest entry of the residual block of cell (i, j) divided by the largest
// face length of that cell: residual per unit face length.
double scaled_cell_residual(const euler_airfoil_flow& flow, const Eigen::VectorXd& r, int i, int j) {
  const std::size_t c = flow.grid().cell_index(i, j);
  double largest = 0.0;
  for (int k = 0; k < 4; ++k) largest = std::max(largest, std::abs(r(static_cast<Eigen::Index>(4 * c) + k)));
  return largest / flow.grid().largest_face_length(i, j);
}

}  // namespace

TEST_CASE("NACA 0012: maximum thickness 0.12 chord at about 30 % chord; no camber", "[euler][airfoil]") {
  const naca_four_digit_airfoil airfoil("0012");
  // Maximum of 2 y_t by golden-section search on [0.2, 0.4] (y_t is concave there).
  double a = 0.2, b = 0.4;
  const double ratio = 0.5 * (std::sqrt(5.0) - 1.0);
  for (int k = 0; k < 80; ++k) {
    const double x1 = b - ratio * (b - a), x2 = a + ratio * (b - a);
    if (airfoil.half_thickness(x1) < airfoil.half_thickness(x2)) {
      a = x1;
    } else {
      b = x2;
    }
  }
  const double x_max = 0.5 * (a + b), thickness = 2.0 * airfoil.half_thickness(x_max);
  CAPTURE(x_max, thickness);
  // Abbott & von Doenhoff (1959) §6.4: the four-digit thickness distribution has
  // its maximum t = 0.12 at x = 0.30. The coefficients are printed to four
  // decimals (rounding <= 5e-5 each, weights Σ x^k ≈ 0.97 at x = 0.3), times
  // 2·t/0.2 = 1.2: <= 6e-5; the closed trailing edge (a₄ = −0.1036) adds
  // 2·0.6·0.0021·0.3⁴ = 2e-5. Tolerance 1e-4 chord.
  CHECK_THAT(thickness, WithinAbs(0.12, 1e-4));
  // A thickness error δ = 1e-4 moves the maximum of the flat peak by
  // √(2δ/|t''|), t'' = 2 y_t'' ≈ −0.91 at x = 0.3 (differentiating the formula): 0.015.
  CHECK_THAT(x_max, WithinAbs(0.30, 0.015));
  // Symmetric section: zero camber line, mirror-image surfaces.
  for (const double x : {0.0, 0.1, 0.3, 0.6, 1.0}) CHECK(airfoil.camber(x) == 0.0);
  const auto points = airfoil.surface_points(64);
  for (int k = 1; k < 32; ++k) {
    CHECK(points[static_cast<std::size_t>(k)].x == points[static_cast<std::size_t>(64 - k)].x);
    CHECK(points[static_cast<std::size_t>(k)].y == -points[static_cast<std::size_t>(64 - k)].y);
    CHECK(points[static_cast<std::size_t>(k)].y < 0.0);  // lower surface first (clockwise)
  }
}

TEST_CASE("NACA four-digit camber line and trailing edge", "[euler][airfoil]") {
  // NACA 2412: maximum camber m = 0.02 at p = 0.4 (Abbott & von Doenhoff 1959 §6.4,
  // the meaning of the first two digits); the two parabolas meet there with zero slope.
  const naca_four_digit_airfoil cambered("2412");
  CHECK_THAT(cambered.camber(0.4), WithinAbs(0.02, 1e-15));
  CHECK_THAT(cambered.camber_slope(0.4), WithinAbs(0.0, 1e-15));
  CHECK_THAT(cambered.camber(0.4 - 1e-9), WithinAbs(0.02, 1e-15));
  CHECK(cambered.camber(0.0) == 0.0);
  CHECK_THAT(cambered.camber(1.0), WithinAbs(0.0, 1e-15));
  // Trailing edge: closed with a₄ = −0.1036 (the five coefficients sum to 0 to
  // rounding); the published a₄ = −0.1015 leaves 2·(t/0.2)·0.0021 = 0.00252 for t = 0.12.
  const naca_four_digit_airfoil closed("0012"), open("0012", true);
  CHECK_THAT(closed.half_thickness(1.0), WithinAbs(0.0, 4 * epsilon));
  CHECK_THAT(2.0 * open.half_thickness(1.0), WithinAbs(0.00252, 1e-14));
  CHECK_THROWS_AS(naca_four_digit_airfoil("00a2"), std::invalid_argument);
  CHECK_THROWS_AS(naca_four_digit_airfoil("2012"), std::invalid_argument);
  CHECK_THROWS_AS(airfoil_o_grid(open, coarse_grid()), std::invalid_argument);
}

TEST_CASE("O-grid: positive areas, closed cells, areas add up to the annulus", "[euler][grid]") {
  for (const char* designation : {"0012", "2412"}) {
    const naca_four_digit_airfoil airfoil(designation);
    const airfoil_o_grid grid(airfoil, coarse_grid());
    const int n = grid.cells_around(), m = grid.cells_outward();
    double area_sum = 0.0, worst_closure = 0.0;
    for (int j = 0; j < m; ++j) {
      for (int i = 0; i < n; ++i) {
        CHECK(grid.area(i, j) > 0.0);
        area_sum += grid.area(i, j);
        // Each face component is one correctly rounded subtraction of node
        // coordinates (relative error <= ε/2 of the component), four faces and
        // three additions: |Σ S| <= about 4ε·(largest face); asked: 8ε.
        const nkit_problems::point2 sum = grid.face_sum(i, j);
        const double closure = std::hypot(sum.x, sum.y) / (epsilon * grid.largest_face_length(i, j));
        worst_closure = std::max(worst_closure, closure);
      }
    }
    CAPTURE(designation, worst_closure);
    CHECK(worst_closure <= 8.0);
    // Σ cell areas = area of the far-field polygon − area of the airfoil polygon
    // (shoelace formula, common practice), exact up to round-off of O(n m) terms.
    double outer = 0.0, inner = 0.0;
    for (int i = 0; i < n; ++i) {
      const auto a = grid.node(i, m), b = grid.node(i + 1, m), p = grid.node(i, 0), q = grid.node(i + 1, 0);
      outer += 0.5 * (a.x * b.y - b.x * a.y);
      inner += 0.5 * (p.x * q.y - q.x * p.y);
    }
    // Clockwise node order: both shoelace sums are negative.
    CHECK_THAT(area_sum, WithinRel(inner - outer, 1e-12));
  }
  // Wall orthogonality (airfoil_grid.hpp): the first radial edge leaves P_i
  // along (1 − b) n_i + b e_i with n_i normal to the central-difference
  // tangent P_{i+1} − P_{i−1} and b = 3r² − 2r³ <= 3 (d_1/D)², d_1 the first
  // radial spacing: |cos(edge, tangent)| <= b. With straight lines (D = 0)
  // the same measure is far from zero near the edges.
  const auto worst_wall_cosine = [](const airfoil_o_grid& grid, double& bound) {
    double worst = 0.0;
    bound = 0.0;
    for (int i = 0; i < grid.cells_around(); ++i) {
      const auto p = grid.node(i, 0), d = grid.node(i, 1), before = grid.node(i - 1, 0), after = grid.node(i + 1, 0);
      const double ex = d.x - p.x, ey = d.y - p.y, tx = after.x - before.x, ty = after.y - before.y;
      worst = std::max(worst, std::abs(ex * tx + ey * ty) / (std::hypot(ex, ey) * std::hypot(tx, ty)));
      const double r = std::hypot(ex, ey) / grid.settings().wall_normal_blend_distance;
      bound = std::max(bound, 3.0 * r * r);
    }
    return worst;
  };
  double bound = 0.0;
  const airfoil_o_grid orthogonal(naca_four_digit_airfoil("0012"), coarse_grid());
  const double blended = worst_wall_cosine(orthogonal, bound);
  airfoil_grid_settings straight_lines = coarse_grid();
  straight_lines.wall_normal_blend_distance = 0.0;
  double unused = 0.0;
  const double straight = worst_wall_cosine(airfoil_o_grid(naca_four_digit_airfoil("0012"), straight_lines), unused);
  CAPTURE(blended, bound, straight);
  CHECK(blended <= bound + 1e-12);
  CHECK(straight > 0.5);
  airfoil_grid_settings bad = coarse_grid();
  bad.cells_around = 63;
  CHECK_THROWS_AS(airfoil_o_grid(naca_four_digit_airfoil("0012"), bad), std::invalid_argument);
}

TEST_CASE("slip-wall ghost cell: continues linear velocity and exponential density and pressure through the wall",
          "[euler][wall]") {
  // euler_airfoil.hpp: the ghost cell (i, −1) below wall cell (i, 0). Along
  // the wall normal, cell centres at distance d = h/2 (wall cell), 3h/2
  // (next cell) and −h/2 (ghost). Expected values are exact for these
  // profiles (algebra, no source needed), so the tolerances are round-off:
  //  * velocity V = (a + b d) t + c d n (tangential part linear, normal part
  //    linear and zero at the wall): ghost = V(−h/2) exactly;
  //  * ρ = ρ_w e^{k d}, p = p_w e^{κ d}: ghost = value at −h/2 exactly
  //    (ρ_0²/ρ_1); for a LINEAR profile the ghost differs from linear
  //    extrapolation by (ρ_0 − ρ_1)²/ρ_1 = O(h²), a quarter per halving of h.
  // A ghost that copies ρ and p of the wall cell fails the second point; one
  // that mirrors the wall cell's velocity fails the first.
  using flow = euler_airfoil_flow;
  std::mt19937 generator(20261205);
  std::uniform_real_distribution<double> angle(0.0, 2.0 * std::acos(-1.0)), coefficient(-1.0, 1.0), length(0.01, 3.0);
  for (int trial = 0; trial < 20; ++trial) {
    const double theta = angle(generator), face_length = length(generator);
    const nkit_problems::point2 s{face_length * std::cos(theta), face_length * std::sin(theta)};
    const double nx = std::cos(theta), ny = std::sin(theta), tx = -ny, ty = nx;  // unit normal and tangent
    const double a = coefficient(generator), b = 3.0 * coefficient(generator), c = 3.0 * coefficient(generator);
    const double rho_wall = 1.0 + 0.3 * coefficient(generator), p_wall = 0.7 + 0.2 * coefficient(generator);
    const double k = coefficient(generator), kappa = 2.0 * coefficient(generator), h = 0.05 * length(generator);
    const auto state_at = [&](double d) -> flow::state4<double> {
      const double tangential = a + b * d, normal = c * d;
      return {rho_wall * std::exp(k * d), tangential * tx + normal * nx, tangential * ty + normal * ny,
              p_wall * std::exp(kappa * d)};
    };
    const flow::state4<double> ghost = flow::slip_wall_ghost(state_at(0.5 * h), state_at(1.5 * h), s);
    const flow::state4<double> expected = state_at(-0.5 * h);
    CAPTURE(trial, theta, face_length, h);
    for (std::size_t q = 0; q < 4; ++q) {
      CAPTURE(q, ghost[q], expected[q]);
      CHECK_THAT(ghost[q], WithinAbs(expected[q], 1e-13 * (1.0 + std::abs(expected[q]))));
    }
    // The mean normal velocity at the face is zero for ANY two states: no
    // mass through the wall from the reconstruction's two sides.
    const flow::state4<double> w0{1.1, coefficient(generator), coefficient(generator), 0.8},
        w1{0.9, coefficient(generator), coefficient(generator), 0.75};
    const flow::state4<double> any_ghost = flow::slip_wall_ghost(w0, w1, s);
    CHECK_THAT((any_ghost[1] + w0[1]) * nx + (any_ghost[2] + w0[2]) * ny, WithinAbs(0.0, 1e-14));
    CHECK(any_ghost[0] > 0.0);
    CHECK(any_ghost[3] > 0.0);
  }
  // Linear density ρ = 1 + 0.8 d (not reproduced exactly): the ghost's error
  // against the linear value at −h/2 is (ρ_0 − ρ_1)²/ρ_1 = (0.8h)²/(1 + 1.2h)
  // (algebra), second order: the ratio for h = 0.1 and 0.05 is
  // 4 · 1.06/1.12 = 3.79, tending to 4.
  const auto linear_error = [](double h) {
    const nkit_problems::point2 s{0.0, -1.0};
    const flow::state4<double> w0{1.0 + 0.4 * h, 0.3, 0.0, 1.0}, w1{1.0 + 1.2 * h, 0.3, 0.0, 1.0};
    return flow::slip_wall_ghost(w0, w1, s)[0] - (1.0 - 0.4 * h);
  };
  for (const double h : {0.1, 0.05}) {
    CAPTURE(h);
    CHECK_THAT(linear_error(h), WithinRel(0.64 * h * h / (1.0 + 1.2 * h), 1e-9));
  }
}

TEST_CASE("Roe flux: consistency with the physical flux, upwinding at supersonic speed", "[euler][flux]") {
  const naca_four_digit_airfoil airfoil("0012");
  const euler_airfoil_flow flow(airfoil_o_grid(airfoil, coarse_grid()), euler_airfoil_settings{});
  using state = euler_airfoil_flow::state4<double>;
  // Flux scale per unit face length: ρc² + ρ|V|² for mass/momentum, times (c + |V|) for energy.
  const auto scale = [](const state& w) {
    const double c2 = 1.4 * w[3] / w[0], v2 = w[1] * w[1] + w[2] * w[2];
    return (w[0] * c2 + w[0] * v2) * (1.0 + std::sqrt(c2) + std::sqrt(v2));
  };
  // Consistency F̂(w, w) = F(w)·S (Roe 1981: the Roe matrix is consistent, Ã(U, U) = A(U)):
  // the dissipation multiplies exact zeros; only the unit normal's rounding remains.
  const state states[] = {{1.0, 0.5, 0.1, 1.0 / 1.4}, {0.8, -0.3, 0.7, 0.5}, {2.0, 1.9, -0.4, 1.2}};
  const double faces[][2] = {{1.0, 0.0}, {0.3, -0.7}, {-2.5e-3, 1.1e-3}};
  for (const state& w : states) {
    for (const auto& s : faces) {
      const state roe = flow.roe_flux(w, w, s[0], s[1]);
      const state exact = euler_airfoil_flow::physical_flux(w, s[0], s[1]);
      const double tolerance = 16 * epsilon * scale(w) * std::hypot(s[0], s[1]);
      for (std::size_t k = 0; k < 4; ++k) CHECK_THAT(roe[k], WithinAbs(exact[k], tolerance));
    }
  }
  // Supersonic normal flow (normal Mach about 2 on both sides, so every
  // eigenvalue exceeds Harten's δ = 0.1 c̃): Roe's flux is the upwind
  // physical flux, F̂ = F(U_L) (F(U_R) for flow the other way), by Roe's
  // property Ã(U_R − U_L) = F(U_R) − F(U_L) (Roe 1981). The algebra of the
  // Roe average and the wave strengths (about 60 operations on O(scale)
  // terms) costs some hundred ulps of the flux scale: asked 1e-13 relative (450 ulps).
  const double nx = 0.6, ny = 0.8;
  const state left{1.0, 2.4 * nx, 2.4 * ny, 1.0 / 1.4};  // c = 1, q = 2.4
  const state right{1.3, 2.0 * nx - 0.2 * ny, 2.0 * ny + 0.2 * nx, 1.1};
  const double length = 0.37;
  const state forward = flow.roe_flux(left, right, length * nx, length * ny);
  const state upwind = euler_airfoil_flow::physical_flux(left, length * nx, length * ny);
  const state backward = flow.roe_flux(left, right, -length * nx, -length * ny);
  const state downwind = euler_airfoil_flow::physical_flux(right, -length * nx, -length * ny);
  const double tolerance = 1e-13 * length * std::max(scale(left), scale(right));
  for (std::size_t k = 0; k < 4; ++k) {
    CHECK_THAT(forward[k], WithinAbs(upwind[k], tolerance));
    CHECK_THAT(backward[k], WithinAbs(downwind[k], tolerance));
  }
  // A subsonic pair is not upwinded: the flux differs from both sides' physical fluxes.
  const state slow{1.1, 0.3, 0.1, 0.8};
  const state mixed = flow.roe_flux(states[0], slow, 1.0, 0.0);
  CHECK(std::abs(mixed[1] - euler_airfoil_flow::physical_flux(states[0], 1.0, 0.0)[1]) > 1e-3);
  CHECK(std::abs(mixed[1] - euler_airfoil_flow::physical_flux(slow, 1.0, 0.0)[1]) > 1e-3);
}

TEST_CASE("free-stream preservation on the curved O-grid at first and second order", "[euler][freestream]") {
  // A uniform state makes every interior face flux F(U∞)·S_f (equal states:
  // the Roe dissipation vanishes exactly), and Σ_f S_f = 0 to round-off for
  // every cell (grid test above), so R_P = F(U∞)·Σ S_f = 0 up to the rounding
  // of the flux evaluations: each component takes a few dozen operations on
  // O(ρ∞ c∞²)-sized terms per unit length, the far-field ghost state carries
  // the rounding of the Riemann invariants and of pow() (then multiplied by
  // Roe's |λ| ≈ c∞), and four faces are added. That bounds R_P by a few
  // hundred ulps of ρ∞ c∞² × (largest face length): asked 300 ε (ρ∞ = c∞ = 1).
  const naca_four_digit_airfoil airfoil("0012");
  for (const bool second_order : {false, true}) {
    euler_airfoil_settings settings;
    settings.mach_number = 0.5;
    settings.angle_of_attack_degrees = 2.0;  // not aligned with the grid's symmetry line
    settings.second_order = second_order;
    // (a) Far-field treatment on the body faces too (verification option): the
    // free stream must then be a discrete solution in every cell, including
    // the periodic seam and both boundaries.
    settings.body_boundary = airfoil_body_boundary::free_stream;
    const euler_airfoil_flow everywhere(airfoil_o_grid(airfoil, coarse_grid()), settings);
    const Eigen::VectorXd u = everywhere.initial_guess();
    Eigen::VectorXd r(u.size());
    everywhere(u, r);
    double worst = 0.0;
    for (int j = 0; j < everywhere.grid().cells_outward(); ++j) {
      for (int i = 0; i < everywhere.grid().cells_around(); ++i) {
        worst = std::max(worst, scaled_cell_residual(everywhere, r, i, j) / epsilon);
      }
    }
    CAPTURE(second_order, worst);
    CHECK(worst <= 300.0);
    // (b) With the slip wall: a uniform stream at 2° crosses the wall, so the
    // wall cells must show it, and only they (and, at second order, the next
    // row, whose reconstruction reaches the wall's ghost cell).
    settings.body_boundary = airfoil_body_boundary::slip_wall;
    const euler_airfoil_flow walled(airfoil_o_grid(airfoil, coarse_grid()), settings);
    walled(u, r);
    const int first_free_row = second_order ? 2 : 1;
    double worst_interior = 0.0, largest_wall = 0.0;
    for (int j = 0; j < walled.grid().cells_outward(); ++j) {
      for (int i = 0; i < walled.grid().cells_around(); ++i) {
        const double value = scaled_cell_residual(walled, r, i, j);
        if (j >= first_free_row) worst_interior = std::max(worst_interior, value / epsilon);
        if (j == 0) largest_wall = std::max(largest_wall, value);
      }
    }
    CAPTURE(worst_interior, largest_wall);
    CHECK(worst_interior <= 300.0);
    // The wall flux of a stream crossing the wall at angle θ is of order ρc·V sin θ
    // per unit length; near the leading edge θ is large: at least 1e-2 expected.
    CHECK(largest_wall > 1e-2);
  }
}

TEST_CASE("conservation: the residuals add up to the boundary fluxes", "[euler][conservation]") {
  // Every interior face flux enters two residuals with opposite signs (and the
  // periodic seam is an interior face), so Σ_P R_P = Σ boundary outflow
  // exactly in exact arithmetic (telescoping; common practice for finite
  // volumes). Round-off: each of the 4·(n·m) face-flux additions and the sum over
  // n·m cells adds at most ε times partial sums bounded by (n·m)·F_max, with
  // F_max <= 2 × (largest face length) for these O(1) states (ρ∞ = c∞ = 1,
  // ±5 % perturbations): tolerance (n·m)·ε·2·L_max per component.
  const naca_four_digit_airfoil airfoil("2412");
  for (const bool second_order : {false, true}) {
    euler_airfoil_settings settings;
    settings.mach_number = 0.6;
    settings.angle_of_attack_degrees = 3.0;
    settings.second_order = second_order;
    const euler_airfoil_flow flow(airfoil_o_grid(airfoil, coarse_grid()), settings);
    Eigen::VectorXd u = flow.initial_guess();
    std::mt19937 generator(20);  // fixed seed: the same perturbed state every run
    std::uniform_real_distribution<double> perturbation(-0.05, 0.05);
    for (Eigen::Index k = 0; k < u.size(); ++k) u(k) *= 1.0 + perturbation(generator);
    Eigen::VectorXd r(u.size());
    flow(u, r);
    Eigen::Vector4d total = Eigen::Vector4d::Zero();
    for (int c = 0; c < flow.grid().cells(); ++c) total += r.segment<4>(4 * c);
    const Eigen::Vector4d boundary = flow.boundary_outflow(u);
    double largest_face = 0.0;
    for (int i = 0; i < flow.grid().cells_around(); ++i) {
      largest_face = std::max(largest_face, flow.grid().largest_face_length(i, flow.grid().cells_outward() - 1));
    }
    const double tolerance = flow.grid().cells() * epsilon * 2.0 * largest_face;
    CAPTURE(second_order, total.transpose(), boundary.transpose(), tolerance);
    for (int k = 0; k < 4; ++k) CHECK_THAT(total(k), WithinAbs(boundary(k), tolerance));
    // The check is not empty: the perturbed state's residuals are far from zero.
    CHECK(r.cwiseAbs().maxCoeff() > 1e3 * tolerance);
  }
}

TEST_CASE("the residual on dual numbers: same values, J·v agrees with central differences", "[euler][derivative]") {
  // The residual is templated on its scalar; on nkit's dual numbers
  // (jacobian/automatic_differentiation.hpp) one sweep gives R'(U) v exactly to
  // rounding. Checked against the central difference [R(U + hv) − R(U − hv)]/(2h),
  // whose error is O(h²·(third derivative)) + O(ε ‖R‖/h) (common practice): with
  // h = 1e-5 and O(1) states and derivatives, about 1e-10 + 1e-11 per entry;
  // asked 1e-7 relative to ‖J v‖ (a wrong derivative term is O(1)).
  const naca_four_digit_airfoil airfoil("2412");
  euler_airfoil_settings settings;
  settings.mach_number = 0.6;
  settings.angle_of_attack_degrees = 3.0;
  auto flow =
      nkit::with_automatic_differentiation(euler_airfoil_flow(airfoil_o_grid(airfoil, coarse_grid()), settings));
  const euler_airfoil_flow& plain = flow.residual();
  Eigen::VectorXd u = plain.initial_guess();
  std::mt19937 generator(7);  // fixed seed
  std::uniform_real_distribution<double> perturbation(-0.05, 0.05);
  for (Eigen::Index k = 0; k < u.size(); ++k) u(k) *= 1.0 + perturbation(generator);
  Eigen::VectorXd v(u.size());
  for (Eigen::Index k = 0; k < v.size(); ++k) v(k) = perturbation(generator) * std::abs(u(k));
  Eigen::VectorXd jv(u.size()), r(u.size()), r_plus(u.size()), r_minus(u.size());
  flow.jacobian_product(u, v, jv);
  const double h = 1e-5;
  plain(Eigen::VectorXd(u + h * v), r_plus);
  plain(Eigen::VectorXd(u - h * v), r_minus);
  const Eigen::VectorXd central = (r_plus - r_minus) / (2.0 * h);
  CAPTURE((jv - central).norm(), jv.norm());
  CHECK((jv - central).norm() <= 1e-7 * jv.norm());
  // The value part of the dual sweep is the double residual (same operations).
  const nkit::dual_vector dual_u = u.cast<nkit::dual_number>();
  nkit::dual_vector dual_r(u.size());
  plain(dual_u, dual_r);
  plain(u, r);
  double largest_difference = 0.0;
  for (Eigen::Index k = 0; k < r.size(); ++k) {
    largest_difference = std::max(largest_difference, std::abs(dual_r(k).value() - r(k)));
  }
  CAPTURE(largest_difference);
  CHECK(largest_difference <= 16 * epsilon * r.cwiseAbs().maxCoeff());
}

namespace {

struct airfoil_run {
  nkit::solve_report report;
  nkit_problems::airfoil_forces forces;
  double largest_entropy_error = 0.0;
  double largest_wall_cell_pressure = 0.0;  ///< largest p of the cells next to the wall (j = 0)
};

// p = (γ − 1)(ρE − ½|ρv|²/ρ) of cell c from the conserved state (interleaved per cell).
double cell_pressure(const Eigen::VectorXd& u, int c) {
  const double rho = u[4 * c], mx = u[4 * c + 1], my = u[4 * c + 2], energy = u[4 * c + 3];
  return 0.4 * (energy - 0.5 * (mx * mx + my * my) / rho);
}

// NACA 0012 on the O-grid (by default 64 × 32, R = 20 chords, q = 1.2),
// second order, from the free stream to ‖R‖ <= 1e-10 ‖R(U0)‖ by
// pseudo-transient Newton–GMRES with ILU(0) of the colored-difference Jacobian.
// With first_order_preconditioning the ILU(0) is of the first-order
// operator's Jacobian (euler_airfoil_first_order_jacobian.hpp).
airfoil_run solve_naca0012(double mach, double alpha_degrees, bool first_order_preconditioning,
                           const airfoil_grid_settings& grid = coarse_grid()) {
  euler_airfoil_settings settings;
  settings.mach_number = mach;
  settings.angle_of_attack_degrees = alpha_degrees;
  const euler_airfoil_flow flow(airfoil_o_grid(naca_four_digit_airfoil("0012"), grid), settings);
  Eigen::VectorXd u = flow.initial_guess();
  airfoil_run run;
  if (first_order_preconditioning) {
    const nkit_problems::euler_airfoil_with_first_order_jacobian wrapped(flow);
    run.report = nkit_problems::solve_euler_airfoil<nkit::ilu_zero_preconditioner>(wrapped, u);
  } else {
    run.report = nkit_problems::solve_euler_airfoil<nkit::ilu_zero_preconditioner>(flow, u);
  }
  run.forces = flow.forces(u);
  run.largest_entropy_error = flow.entropy_error(u).cwiseAbs().maxCoeff();
  run.largest_wall_cell_pressure = -1e300;
  for (int i = 0; i < grid.cells_around; ++i) {  // cells (i, 0) are cells 0 .. n − 1
    run.largest_wall_cell_pressure = std::max(run.largest_wall_cell_pressure, cell_pressure(u, i));
  }
  return run;
}

}  // namespace

TEST_CASE("subsonic NACA 0012 on a coarse grid: symmetry, thin-airfoil lift and Prandtl-Glauert scaling",
          "[euler][solve]") {
  const airfoil_run level = solve_naca0012(0.5, 0.0, true);
  const airfoil_run lifting = solve_naca0012(0.5, 2.0, true);
  const airfoil_run slower = solve_naca0012(0.3, 2.0, true);
  const airfoil_run second_order_preconditioned = solve_naca0012(0.5, 2.0, false);
  // One refinement by 3/2 in both directions, the radial ratio q^(2/3) so that
  // the radial spacing refines by 3/2 as well.
  airfoil_grid_settings finer = coarse_grid();
  finer.cells_around = 96;
  finer.cells_outward = 48;
  finer.stretching_ratio = std::pow(1.2, 2.0 / 3.0);
  const airfoil_run refined = solve_naca0012(0.5, 2.0, true, finer);
  const airfoil_run level_refined = solve_naca0012(0.5, 0.0, true, finer);
  for (const airfoil_run* run : {&level, &lifting, &slower, &second_order_preconditioned, &refined, &level_refined}) {
    CAPTURE(run->report.newton_steps, run->report.linear_iterations, run->report.final_residual_norm,
            run->report.initial_residual_norm, run->report.wall_seconds);
    REQUIRE(run->report.converged());
  }
  const double cl0 = level.forces.lift_coefficient, cl = lifting.forces.lift_coefficient;
  const double cl_slow = slower.forces.lift_coefficient;
  CAPTURE(cl0, cl, cl_slow, level.forces.drag_coefficient, lifting.forces.drag_coefficient,
          lifting.largest_entropy_error);
  // Symmetric section at α = 0 on a mirror-symmetric grid (cells i and n−1−i
  // are mirror images): the discrete solution is symmetric, so c_l = 0 up to
  // the rounding of the symmetric pair sums and the unconverged part of the
  // solution (‖R‖ <= 1e-10 ‖R0‖ ≈ 5e-12, times the inverse Jacobian’s norm
  // over the wall faces): 1e-8 asked (measured 5e-11).
  CHECK(std::abs(cl0) <= 1e-8);
  // The same symmetry for the surface pressure: wall faces i and n−1−i are
  // mirror images (same tolerance reasoning, c_p = O(1)).
  const std::vector<double>& cp = level.forces.pressure_coefficient;
  const std::size_t faces = cp.size();
  double largest_asymmetry = 0.0, largest_cp = -1e300;
  for (std::size_t i = 0; i < faces; ++i) {
    largest_asymmetry = std::max(largest_asymmetry, std::abs(cp[i] - cp[faces - 1 - i]));
    largest_cp = std::max(largest_cp, cp[i]);
  }
  // No cell's pressure can exceed the isentropic stagnation pressure
  // (numerical dissipation only loses total pressure): c_p,0 = (2/(γM²))
  // [(1 + (γ−1)M²/2)^(γ/(γ−1)) − 1] = 1.0641 at M = 0.5 (NACA Report 1135, Ames
  // Research Staff 1953, the isentropic relation). Checked on the cells next
  // to the wall, not on the wall values: those are extrapolated from two
  // cells (the slip-wall ghost of euler_airfoil.hpp), and a linear
  // extrapolation to a pressure maximum overshoots it by O(h²) (measured
  // 1.080 on this grid).
  const double stagnation_cp = 2.0 / (1.4 * 0.25) * (std::pow(1.0 + 0.2 * 0.25, 3.5) - 1.0);
  const double largest_cell_cp = (level.largest_wall_cell_pressure - 1.0 / 1.4) / (0.5 * 0.25);
  CAPTURE(largest_asymmetry, largest_cp, largest_cell_cp, stagnation_cp);
  CHECK(largest_asymmetry <= 1e-8);
  CHECK(largest_cell_cp < stagnation_cp);
  // The leading edge is a grid node, so the largest wall value lies next to
  // it: the first face centres are s ≈ 0.0045 from the leading edge; on a
  // circle of the leading-edge radius r = 1.1019 t² = 0.0159 (Abbott & von
  // Doenhoff 1959 §6.4, from memory) potential flow gives c_p = 1 − 4 sin²(s/r)
  // ≈ 0.69 incompressible, somewhat more at M = 0.5: asked > 0.6 (measured
  // 1.080).
  CHECK(largest_cp > 0.6);
  // Thin-airfoil theory c_l = 2πα (Abbott & von Doenhoff 1959, §4.3, from memory)
  // with the Prandtl–Glauert factor 1/√(1 − M²) (H. Glauert, Proc. R. Soc.
  // Lond. A 118 (1928) 113–119, from memory): 2π·(2π/180)/√0.75 = 0.2533 at
  // M = 0.5, α = 2°. Allowed ±15 %: a 12 % thick section lifts some 9 % more
  // than thin-airfoil theory (inviscid lift slope about 2π(1 + 0.77 t/c),
  // from memory); the coarse grid's numerical dissipation takes lift away
  // (first order on this grid gives 0.222, measured: 12 % below second
  // order), and the far field without a vortex correction at R = 20 chords
  // costs a few per cent (order c/R, from memory).
  const double pi = std::acos(-1.0);
  const double thin_airfoil = 2.0 * pi * (2.0 * pi / 180.0) / std::sqrt(1.0 - 0.25);
  CHECK_THAT(cl, WithinRel(thin_airfoil, 0.15));
  // Compressibility alone: by the Prandtl–Glauert rule the lift at fixed α
  // scales as 1/√(1 − M²), so c_l(0.5)/c_l(0.3) = √0.91/√0.75 = 1.1015; the
  // thickness and grid effects largely divide out of the ratio. Allowed ±3 %:
  // linear theory neglects O(M⁴)-order terms (the Kármán–Tsien rule differs by
  // about 1 % here, from memory), and the Roe scheme's dissipation grows
  // relative to the flow as M falls (H. Guillard & C. Viozat, Comput. Fluids
  // 28 (1999) 63–86, from memory).
  CHECK_THAT(cl / cl_slow, WithinRel(std::sqrt(0.91 / 0.75), 0.03));
  // The preconditioner (here ILU(0) of the first-order operator's Jacobian or
  // of the second-order one) changes only the linear solves: the same discrete
  // solution, so the same lift up to the two solves' unconverged parts (as
  // for c_l(0) above): 1e-8.
  CHECK_THAT(second_order_preconditioned.forces.lift_coefficient, WithinAbs(cl, 1e-8));
  // Inviscid subsonic flow has no drag (d'Alembert); what the coarse grid
  // shows is spurious drag from numerical entropy production: reported, and
  // only bounded by the entropy error it comes from (a few per cent here).
  CHECK(lifting.largest_entropy_error < 0.05);
  CHECK(std::abs(lifting.forces.drag_coefficient) < 0.05);
  // Refining by 3/2 must shrink that spurious drag: by (3/2)² = 2.25 for a
  // second-order scheme, by 1.5 at first order. With the uniform far field
  // a part of it does not vanish with the cell size (the far field's O(1/R)
  // error, next test case), so only first order is asked here (measured
  // ratio 2.52: c_d = 0.00694 → 0.00275). The lift stays in the thin-airfoil
  // band above (measured 0.270).
  const double refined_drag = refined.forces.drag_coefficient;
  CAPTURE(refined_drag, refined.forces.lift_coefficient);
  CHECK(refined_drag > 0.0);
  CHECK(refined_drag < lifting.forces.drag_coefficient / 1.5);
  CHECK_THAT(refined.forces.lift_coefficient, WithinRel(thin_airfoil, 0.15));
  // The entropy error that drag comes from falls too (its maximum, next to the
  // leading edge, measured 0.028 → 0.016); asked only that it falls.
  CAPTURE(refined.largest_entropy_error);
  CHECK(refined.largest_entropy_error < lifting.largest_entropy_error);
  // Without lift the spurious drag falls at the scheme's second order: the
  // same refinement by 3/2 must shrink it by (3/2)^1.5 = 1.84 at least
  // (order ≥ 1.5; second order gives 2.25). Measured: c_d = 0.00607 → 0.00199,
  // ratio 3.05 (order 2.75, not yet asymptotic); with the example on 64, 128,
  // 256 cells around: 0.00607, 0.00092, 0.00028 (orders 2.7, 1.7).
  const double level_drag = level.forces.drag_coefficient, level_refined_drag = level_refined.forces.drag_coefficient;
  CAPTURE(level_drag, level_refined_drag);
  CHECK(level_refined_drag > 0.0);
  CHECK(level_refined_drag < level_drag / std::pow(1.5, 1.5));
}

TEST_CASE("with the far-field vortex the spurious drag with lift and the entropy error fall at second order",
          "[euler][vortex][solve]") {
  // Inviscid subsonic flow has no drag (d'Alembert; common practice check), so
  // c_d is the discretisation's error and must fall at the scheme's order,
  // 2, once the far field carries the vortex of the lift (without it a drag
  // of the far field's O(1/R) error stays: measured with 64, 128, 256 cells
  // around, 0.00694, 0.00146, 0.00060, orders 2.2 and 1.3). NACA 0012,
  // M = 0.5, α = 2°, 64 × 32 and 128 × 64 (radial ratio q^(1/2): the radial
  // spacing halves too), far-field vortex by outer iteration. Measured
  // 0.00680 → 0.00127, ratio 5.4 (order 2.4; 0.00038 on 256 × 128, order
  // 1.75 from 128 × 64). Asked: order ≥ 1.8 (ratio ≥ 3.48). With a slip-wall
  // ghost that copies ρ and p of the wall cell (zero normal pressure
  // gradient at the wall, euler_airfoil.hpp) the same grids gave 0.00666 →
  // 0.00214, ratio 3.1 (order 1.6): this check fails on it.
  euler_airfoil_settings settings;
  settings.mach_number = 0.5;
  settings.angle_of_attack_degrees = 2.0;
  const auto solve = [](const euler_airfoil_flow& f, Eigen::VectorXd& u, const nkit::newton_settings& newton) {
    return nkit_problems::solve_euler_airfoil(nkit_problems::euler_airfoil_with_first_order_jacobian(f), u, newton,
                                              nkit::block_ilu_zero_preconditioner(4));
  };
  struct errors {
    double drag = 0.0;
    double entropy_l1 = 0.0;  ///< Σ |entropy error| · area / Σ area
  };
  const auto solve_on = [&](const airfoil_grid_settings& grid_settings) {
    const airfoil_o_grid grid(naca_four_digit_airfoil("0012"), grid_settings);
    Eigen::VectorXd u = euler_airfoil_flow(grid, settings).initial_guess();
    const auto result = nkit_problems::solve_euler_airfoil_with_far_field_vortex(
        grid, settings, u, nkit_problems::euler_airfoil_newton_settings(), solve, 1e-6);
    CAPTURE(result.solves, result.newton_steps);
    REQUIRE(result.converged);
    euler_airfoil_settings solved = settings;
    solved.far_field_vortex_lift_coefficient = result.vortex_lift_coefficient;
    const euler_airfoil_flow flow(grid, solved);
    const Eigen::VectorXd entropy = flow.entropy_error(u);
    errors e;
    e.drag = flow.forces(u).drag_coefficient;
    double area = 0.0;
    for (int j = 0; j < grid.cells_outward(); ++j) {
      for (int i = 0; i < grid.cells_around(); ++i) {
        e.entropy_l1 += grid.area(i, j) * std::abs(entropy(static_cast<Eigen::Index>(grid.cell_index(i, j))));
        area += grid.area(i, j);
      }
    }
    e.entropy_l1 /= area;
    return e;
  };
  airfoil_grid_settings fine = coarse_grid();
  fine.cells_around = 128;
  fine.cells_outward = 64;
  fine.stretching_ratio = std::sqrt(1.2);
  const errors coarse = solve_on(coarse_grid()), refined = solve_on(fine);
  CAPTURE(coarse.drag, refined.drag);
  CHECK(refined.drag > 0.0);
  CHECK(refined.drag < coarse.drag / std::pow(2.0, 1.8));
  // The entropy error (numerical entropy production, the source of the
  // spurious drag in inviscid subsonic flow: common practice), in the
  // area-weighted mean (L1) norm over the domain, falls at the scheme's order
  // too: measured 1.254e-5 → 2.684e-6, ratio 4.67 against the 3.48 asked
  // (order 2.22 against 1.8; a 34 % margin in the ratio). From 128 × 64 to
  // 256 × 128 the measured order is 1.81 (7.63e-7), right at the bound, so
  // the check uses the first refinement only. Its maximum falls more slowly
  // (0.0275, 0.0121, 0.0040: orders 1.2, 1.6); it sits in the wall cell at
  // the stagnation point, where the cell-centred scheme's error is largest
  // (common practice). The subsonic test above checks only that the maximum
  // falls, with the uniform far field, from 64 × 32 to 96 × 48.
  CAPTURE(coarse.entropy_l1, refined.entropy_l1);
  CHECK(refined.entropy_l1 > 0.0);
  CHECK(refined.entropy_l1 < coarse.entropy_l1 / std::pow(2.0, 1.8));
}

TEST_CASE("airfoil flow settings: bad values are refused with std::invalid_argument", "[euler][settings]") {
  const airfoil_o_grid grid(naca_four_digit_airfoil("0012"), coarse_grid());
  euler_airfoil_settings settings;
  settings.mach_number = 0.0;
  CHECK_THROWS_AS(euler_airfoil_flow(grid, settings), std::invalid_argument);
  settings = euler_airfoil_settings{};
  settings.angle_of_attack_degrees = 95.0;
  CHECK_THROWS_AS(euler_airfoil_flow(grid, settings), std::invalid_argument);
  settings = euler_airfoil_settings{};
  settings.entropy_fix_fraction = -0.1;
  CHECK_THROWS_AS(euler_airfoil_flow(grid, settings), std::invalid_argument);
  settings = euler_airfoil_settings{};
  settings.second_order = false;
  CHECK_THROWS_AS(nkit_problems::euler_airfoil_with_first_order_jacobian(euler_airfoil_flow(grid, settings)),
                  std::invalid_argument);
  airfoil_grid_settings stretched = coarse_grid();
  stretched.stretching_ratio = 2.5;
  CHECK_THROWS_AS(airfoil_o_grid(naca_four_digit_airfoil("0012"), stretched), std::invalid_argument);
  settings = euler_airfoil_settings{};
  settings.far_field_vortex_lift_coefficient = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(euler_airfoil_flow(grid, settings), Catch::Contains("far_field_vortex_lift_coefficient"));
  settings.far_field_vortex_lift_coefficient = 0.3;
  settings.mach_number = 1.2;  // the Prandtl–Glauert vortex is a subsonic far field
  CHECK_THROWS_WITH(euler_airfoil_flow(grid, settings), Catch::Contains("mach_number < 1"));
}

TEST_CASE("far-field vortex: the Prandtl-Glauert potential's gradient, circulation and free-stream thermodynamics",
          "[euler][vortex]") {
  // The imposed far field (euler_airfoil.hpp, file comment) must be the free
  // stream plus ∇φ, φ = −(Γ/2π) atan2(β sin(θ − α), cos(θ − α)) about the
  // quarter chord, Γ = ½ V∞ c c_l, β = √(1 − M²): the linearised compressible
  // potential of a point vortex (the Prandtl–Glauert transformation of the
  // incompressible one; common practice). Checked against central
  // differences of φ, which is written here independently of the header's
  // velocity formula.
  euler_airfoil_settings settings;
  settings.mach_number = 0.6;
  settings.angle_of_attack_degrees = 3.0;
  settings.far_field_vortex_lift_coefficient = 0.4;
  const airfoil_o_grid grid(naca_four_digit_airfoil("0012"), coarse_grid());
  const euler_airfoil_flow flow(grid, settings);
  const double pi = std::acos(-1.0), mach = settings.mach_number, gamma = nkit_problems::euler_gamma;
  const double alpha = settings.angle_of_attack_degrees * pi / 180.0, beta = std::sqrt(1.0 - mach * mach);
  const double circulation = 0.5 * mach * settings.far_field_vortex_lift_coefficient;  // V∞ = M, c = 1
  const auto potential = [&](double x, double y) {
    const double theta = std::atan2(y, x - 0.25);
    return -circulation / (2.0 * pi) * std::atan2(beta * std::sin(theta - alpha), std::cos(theta - alpha));
  };
  const auto& free_stream = flow.free_stream();
  for (int k = 0; k < 12; ++k) {
    const double theta = 2.0 * pi * (k + 0.3) / 12.0, r = 15.0;
    const double x = 0.25 + r * std::cos(theta), y = r * std::sin(theta);
    const auto w = flow.vortex_far_field({x, y});
    // Central differences with step h = 1e-4 r: truncation (h²/6) times the third
    // derivative, about 1e-9 of the velocity Γ/(2πr); rounding ε|φ|/h, about 1e-11 of it.
    const double h = 1e-4 * r;
    const double u = (potential(x + h, y) - potential(x - h, y)) / (2.0 * h);
    const double v = (potential(x, y + h) - potential(x, y - h)) / (2.0 * h);
    const double scale = circulation / (2.0 * pi * r);  // size of the vortex's velocity there
    CAPTURE(k, w[1] - free_stream[1], u, w[2] - free_stream[2], v);
    CHECK_THAT(w[1] - free_stream[1], WithinAbs(u, 1e-6 * scale));
    CHECK_THAT(w[2] - free_stream[2], WithinAbs(v, 1e-6 * scale));
    // The free stream's total enthalpy c²/(γ − 1) + ½|u|² and entropy p/ρ^γ (homentropic far field):
    // each is a few roundings of O(1) numbers from the formulas, so 1e-14 (about 45 ε) bounds them.
    const double c2 = gamma * w[3] / w[0];
    CHECK_THAT(c2 / (gamma - 1.0) + 0.5 * (w[1] * w[1] + w[2] * w[2]),
               WithinRel(1.0 / (gamma - 1.0) + 0.5 * mach * mach, 1e-14));
    CHECK_THAT(w[3] / std::pow(w[0], gamma), WithinRel(1.0 / gamma, 1e-14));
  }
  // The circulation around the far-field boundary is Γ: the sum over its faces
  // of (u, v)·(b − a) at the face midpoints, in the grid's (clockwise) order.
  // Midpoint rule on the chords of the circle: relative error O((2π/n)²), 1e-2
  // at n = 64 before constants (the integrand is smooth and periodic; the
  // measured error is far smaller, see CAPTURE).
  const int n = grid.cells_around(), m = grid.cells_outward();
  double clockwise = 0.0;
  for (int i = 0; i < n; ++i) {
    const nkit_problems::point2 a = grid.node(i, m), b = grid.node(i + 1, m);
    const auto w = flow.vortex_far_field({0.5 * (a.x + b.x), 0.5 * (a.y + b.y)});
    clockwise += w[1] * (b.x - a.x) + w[2] * (b.y - a.y);  // the free stream's part sums to zero
  }
  CAPTURE(clockwise, circulation);
  CHECK_THAT(clockwise, WithinRel(circulation, 1e-2));
  // Without the vortex, the imposed state is the free stream itself.
  settings.far_field_vortex_lift_coefficient = 0.0;
  const auto plain = euler_airfoil_flow(grid, settings).vortex_far_field({3.0, -7.0});
  for (std::size_t q = 0; q < 4; ++q) CHECK(plain[q] == free_stream[q]);
}

TEST_CASE("far-field vortex by outer iteration: the lift no longer depends on the domain's size to first order",
          "[euler][vortex][solve]") {
  // Without the correction the far field imposes the free stream at R chords
  // and the lift carries an O(1/R) error; with the vortex of the computed
  // lift what is left is O(1/R²) (common practice; W.L. Thomas & M.D. Salas,
  // AIAA J. 24 (1986) 1074–1080, from memory). Two grids with the same cells
  // near the airfoil and far fields at R = 20 and R' = 20 (q⁴⁰ − 1)/(q³² − 1)
  // = 86.5 chords (q = 1.2: 32 and 40 cells outward, the inner rings at nearly
  // the same distances), NACA 0012, M = 0.5, α = 2°. Measured with 128 cells
  // around (64 / 79 outward, R = 20 / 79): without the vortex c_l = 0.2742 /
  // 0.2787, with it 0.2804 / 0.2803, a 45× smaller dependence on R; asked
  // here, on the coarse grid: at least 4× smaller.
  euler_airfoil_settings settings;
  settings.mach_number = 0.5;
  settings.angle_of_attack_degrees = 2.0;
  const double q = 1.2;
  airfoil_grid_settings near = coarse_grid(), far = coarse_grid();
  near.stretching_ratio = far.stretching_ratio = q;
  far.cells_outward = 40;
  far.far_field_radius = near.far_field_radius * (std::pow(q, 40) - 1.0) / (std::pow(q, 32) - 1.0);
  const auto solve = [](const euler_airfoil_flow& f, Eigen::VectorXd& u, const nkit::newton_settings& newton) {
    return nkit_problems::solve_euler_airfoil(nkit_problems::euler_airfoil_with_first_order_jacobian(f), u, newton,
                                              nkit::block_ilu_zero_preconditioner(4));
  };
  const auto lift = [&](const airfoil_grid_settings& grid_settings, bool vortex) {
    const airfoil_o_grid grid(naca_four_digit_airfoil("0012"), grid_settings);
    Eigen::VectorXd u = euler_airfoil_flow(grid, settings).initial_guess();
    if (!vortex) {
      const euler_airfoil_flow flow(grid, settings);
      REQUIRE(solve(flow, u, nkit_problems::euler_airfoil_newton_settings()).converged());
      return flow.forces(u).lift_coefficient;
    }
    const auto result = nkit_problems::solve_euler_airfoil_with_far_field_vortex(
        grid, settings, u, nkit_problems::euler_airfoil_newton_settings(), solve, 1e-6);
    CAPTURE(result.solves, result.newton_steps);
    REQUIRE(result.converged);
    // A contraction: each solve moves the lift by the far-field effect of the
    // last change, which is O(chord/R) of it: measured changes of c_l 0.252,
    // 0.0052, 1.1e-4, 2e-6 (a factor of about 0.02 per solve) on 64 × 32, so
    // 5 solves reach 1e-6; 8 leaves a margin.
    CHECK(result.solves <= 8);
    CHECK_THAT(result.lift_coefficient, WithinAbs(result.vortex_lift_coefficient, 1e-6));
    return result.lift_coefficient;
  };
  const double plain_near = lift(near, false), plain_far = lift(far, false);
  const double vortex_near = lift(near, true), vortex_far = lift(far, true);
  CAPTURE(plain_near, plain_far, vortex_near, vortex_far);
  REQUIRE(std::abs(plain_far - plain_near) > 1e-3);  // the O(1/R) error the correction removes is there
  CHECK(std::abs(vortex_far - vortex_near) < std::abs(plain_far - plain_near) / 4.0);
  // The corrected lift lies where c_l(R) = c_∞ − k/R, fitted to the two uncorrected ones, extrapolates.
  const double extrapolated = (plain_far * far.far_field_radius - plain_near * near.far_field_radius) /
                              (far.far_field_radius - near.far_field_radius);
  CAPTURE(extrapolated);
  CHECK_THAT(vortex_near, WithinAbs(extrapolated, std::abs(plain_far - plain_near) / 4.0));
}
