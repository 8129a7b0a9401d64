// Quantities read off the airfoil's surface flow
// (problems/flow/airfoil_surface_quantities.hpp): the sonic pressure
// coefficient c_p*, the shock position on a surface, and the split of the
// wall faces into the lower and upper surface.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "problems/flow/airfoil_surface_quantities.hpp"
#include "support/unit_roundoff.hpp"

using Catch::Matchers::WithinAbs;
using nkit_problems::airfoil_surface_pressure;
using nkit_problems::critical_pressure_coefficient;
using nkit_problems::shock_position;
using nkit_test::unit_roundoff;

TEST_CASE("critical pressure coefficient: zero at M = 1, hand values at M = 0.8 and 0.5", "[airfoil_surface]") {
  // At M = 1 the free stream is sonic, so p* = p∞ and c_p* = 0. In floating
  // point the base (2 + (γ−1))/(γ+1) is 1 to within two roundings (γ − 1 is
  // exact for γ = 1.4 by Sterbenz's lemma), pow multiplies that relative
  // error by γ/(γ−1) = 3.5 and adds one rounding, and the factor 2/γ < 1.5
  // scales the difference from 1: |c_p*| <= 1.5 (3.5·2 + 2) u < 16 u.
  CHECK_THAT(critical_pressure_coefficient(1.0), WithinAbs(0.0, 16 * unit_roundoff));

  // Hand values by a second route (isentropic relations, NACA Report 1135,
  // Ames Research Staff 1953, eq. 44 for p/p_t, from memory; γ = 1.4, γ/(γ−1) = 3.5):
  //   sonic:     p*/p_t = (2/(γ+1))^3.5 = (1/1.2)^3.5 = 0.52828179   (Report 1135's table: 0.5283)
  //   M = 0.8:   p∞/p_t = (1 + 0.2·0.64)^−3.5 = 1.128^−3.5 = 0.65602162   (table: 0.6560)
  //              p*/p∞ = 0.52828179 / 0.65602162 = 0.80528107
  //              c_p* = (p*/p∞ − 1) / (½γM²) = −0.19471893 / 0.448 = −0.43464048
  //   M = 0.5:   p∞/p_t = 1.05^−3.5 = 0.84301918   (table: 0.8430)
  //              p*/p∞ = 0.62665453, c_p* = −0.37334547 / 0.175 = −2.1334027
  // (the table entries are those of Report 1135's Table I, quoted from memory;
  // the eight-digit values were computed with these formulas). The literals
  // carry eight significant digits, so they are within half a unit of the
  // eighth digit of the exact value: 5e-9 at M = 0.8, 5e-8 at M = 0.5.
  CHECK_THAT(critical_pressure_coefficient(0.8), WithinAbs(-0.43464048, 5e-9));
  CHECK_THAT(critical_pressure_coefficient(0.5), WithinAbs(-2.1334027, 5e-8));

  // The same second route in code, over subsonic and supersonic free streams
  // (c_p* > 0 above M = 1: the flow must slow down to reach sonic speed).
  // Each route forms p*/p∞ with two powers (relative error 3.5 times that of
  // the base, a few u each) and a few roundings, about 20 u in all; the
  // difference of the two c_p* is at most that times (p*/p∞)·2/(γM²).
  const double gamma = nkit_problems::euler_gamma, exponent = gamma / (gamma - 1.0);
  for (const double mach : {0.3, 0.6, 0.75, 0.9, 0.99, 1.01, 1.2, 1.5}) {
    const double sonic_over_total = std::pow(2.0 / (gamma + 1.0), exponent);
    const double free_stream_over_total = std::pow(1.0 + 0.5 * (gamma - 1.0) * mach * mach, -exponent);
    const double ratio = sonic_over_total / free_stream_over_total;
    const double dynamic_over_static = 0.5 * gamma * mach * mach;
    const double expected = (ratio - 1.0) / dynamic_over_static;
    CAPTURE(mach);
    CHECK_THAT(critical_pressure_coefficient(mach),
               WithinAbs(expected, 64 * unit_roundoff * ratio / dynamic_over_static));
    CHECK((mach < 1.0 ? critical_pressure_coefficient(mach) < 0.0 : critical_pressure_coefficient(mach) > 0.0));
  }
}

TEST_CASE("critical pressure coefficient: a Mach number that is not positive and finite is refused",
          "[airfoil_surface]") {
  CHECK_THROWS_WITH(critical_pressure_coefficient(0.0),
                    "critical_pressure_coefficient: mach_number must be positive and finite (got 0.000000)");
  CHECK_THROWS_WITH(critical_pressure_coefficient(-0.5),
                    "critical_pressure_coefficient: mach_number must be positive and finite (got -0.500000)");
  CHECK_THROWS_AS(critical_pressure_coefficient(std::numeric_limits<double>::quiet_NaN()), std::invalid_argument);
  CHECK_THROWS_AS(critical_pressure_coefficient(std::numeric_limits<double>::infinity()), std::invalid_argument);
}

// Synthetic surfaces (invented data): c_p piecewise linear between the given
// stations, so the crossing of c_p* found by linear interpolation is exact.
// All numbers are binary fractions, so every step of the interpolation is
// exact in floating point and the checks ask for equality.
TEST_CASE("shock position: the most downstream rise of c_p through c_p*, by linear interpolation",
          "[airfoil_surface]") {
  const double critical = -0.25;

  SECTION("one rise: on the piece from (0.5, −0.5) to (0.75, 0.5), c_p = −0.5 + 4(x − 0.5) = −0.25 at x = 0.5625") {
    const airfoil_surface_pressure surface{{0.0, 0.25, 0.5, 0.75, 1.0}, {-1.0, -0.75, -0.5, 0.5, 0.75}};
    CHECK(shock_position(surface, critical) == 0.5625);
  }
  SECTION("a fall through c_p* (the expansion behind the leading edge) is no shock: only the rise counts") {
    // Falls on [0, 0.25] (c_p from 1 to −0.5), rises on [0.5, 0.75] as above.
    const airfoil_surface_pressure surface{{0.0, 0.25, 0.5, 0.75}, {1.0, -0.5, -0.5, 0.5}};
    CHECK(shock_position(surface, critical) == 0.5625);
  }
  SECTION("two rises: the downstream one, at 0.5625, wins over the one at 0.0625") {
    const airfoil_surface_pressure surface{{0.0, 0.25, 0.5, 0.75}, {-0.5, 0.5, -0.5, 0.5}};
    CHECK(shock_position(surface, critical) == 0.5625);
  }
  SECTION("a rise on the first piece: (0, −0.5) to (0.25, 0.5) crosses at 0.0625") {
    const airfoil_surface_pressure surface{{0.0, 0.25, 0.5}, {-0.5, 0.5, 0.75}};
    CHECK(shock_position(surface, critical) == 0.0625);
  }
  SECTION("c_p reaching c_p* exactly at the last station: the shock stands there") {
    const airfoil_surface_pressure surface{{0.0, 0.5, 1.0}, {-0.5, -0.5, -0.25}};
    CHECK(shock_position(surface, critical) == 1.0);
  }
  SECTION("no rise: negative") {
    // Subsonic everywhere, supersonic to the trailing edge, starting at c_p*
    // and rising (never below it), a single station, no station.
    CHECK(shock_position({{0.0, 0.5, 1.0}, {0.5, -0.125, 0.0}}, critical) < 0.0);
    CHECK(shock_position({{0.0, 0.5, 1.0}, {0.5, -0.5, -0.75}}, critical) < 0.0);
    CHECK(shock_position({{0.0, 0.5, 1.0}, {-0.25, 0.0, 0.5}}, critical) < 0.0);
    CHECK(shock_position({{0.5}, {-0.5}}, critical) < 0.0);
    CHECK(shock_position({{}, {}}, critical) < 0.0);
  }
}

TEST_CASE("shock position: stations and pressure coefficients of different lengths are refused", "[airfoil_surface]") {
  CHECK_THROWS_WITH(shock_position({{0.0, 0.5, 1.0}, {-0.5, 0.5}}, -0.25),
                    "shock_position: surface.x_over_chord has 3 entries but surface.pressure_coefficient has 2");
}

TEST_CASE("surface split: lower and upper wall faces of the O-grid, each by increasing x/c", "[airfoil_surface]") {
  // NACA 0012 is symmetric about y = 0, and the O-grid's surface points are
  // too (x = ½(1 + cos ψ_i), ψ_i = 2πi/n: face i and face n−1−i are mirror
  // images). Invented test data: c_p of each face set to the y of its
  // midpoint, so a face's surface can be read off its "c_p".
  nkit_problems::airfoil_grid_settings grid_settings;
  grid_settings.cells_around = 32;
  grid_settings.cells_outward = 16;
  const nkit_problems::euler_airfoil_flow flow(
      nkit_problems::airfoil_o_grid(nkit_problems::naca_four_digit_airfoil("0012"), grid_settings),
      nkit_problems::euler_airfoil_settings{});
  nkit_problems::airfoil_forces forces = flow.forces(flow.initial_guess());
  REQUIRE(forces.wall_face_centre.size() == 32);
  for (std::size_t i = 0; i < forces.wall_face_centre.size(); ++i) {
    forces.pressure_coefficient[i] = forces.wall_face_centre[i].y;
  }

  const nkit_problems::airfoil_surface_pressures surfaces = nkit_problems::surface_pressure_distributions(forces);
  REQUIRE(surfaces.lower.x_over_chord.size() == 16);
  REQUIRE(surfaces.lower.pressure_coefficient.size() == 16);
  REQUIRE(surfaces.upper.x_over_chord.size() == 16);
  REQUIRE(surfaces.upper.pressure_coefficient.size() == 16);
  for (std::size_t k = 0; k < 16; ++k) {
    CAPTURE(k);
    CHECK(surfaces.lower.pressure_coefficient[k] < 0.0);  // below the chord line
    CHECK(surfaces.upper.pressure_coefficient[k] > 0.0);
    CHECK(surfaces.lower.x_over_chord[k] > 0.0);
    CHECK(surfaces.lower.x_over_chord[k] < 1.0);
    if (k > 0) {
      CHECK(surfaces.lower.x_over_chord[k] > surfaces.lower.x_over_chord[k - 1]);
      CHECK(surfaces.upper.x_over_chord[k] > surfaces.upper.x_over_chord[k - 1]);
    }
    // Mirror images: the same x, opposite y. The cosines of ψ and 2π − ψ and
    // the thickness at the two x differ by a few roundings (a few u relative
    // to the chord, 1): 64 u.
    CHECK_THAT(surfaces.upper.x_over_chord[k], WithinAbs(surfaces.lower.x_over_chord[k], 64 * unit_roundoff));
    CHECK_THAT(surfaces.upper.pressure_coefficient[k],
               WithinAbs(-surfaces.lower.pressure_coefficient[k], 64 * unit_roundoff));
  }
}

TEST_CASE("surface split: a face count that is odd or differs between centres and c_p is refused",
          "[airfoil_surface]") {
  nkit_problems::airfoil_forces forces;
  forces.wall_face_centre = {{1.0, 0.0}, {0.5, -0.05}, {0.0, 0.0}, {0.5, 0.05}};
  forces.pressure_coefficient = {0.0, 0.0, 0.0};
  CHECK_THROWS_WITH(nkit_problems::surface_pressure_distributions(forces),
                    "surface_pressure_distributions: forces.wall_face_centre and forces.pressure_coefficient must "
                    "have the same even number (>= 2) of entries, one per wall face (got 4 and 3)");
  forces.wall_face_centre.pop_back();
  CHECK_THROWS_WITH(nkit_problems::surface_pressure_distributions(forces),
                    "surface_pressure_distributions: forces.wall_face_centre and forces.pressure_coefficient must "
                    "have the same even number (>= 2) of entries, one per wall face (got 3 and 3)");
}
