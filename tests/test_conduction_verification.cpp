// Order-of-accuracy verification of the nonlinear-conduction finite-volume
// scheme used by the baseplate demo (problems/heat/nonlinear_conduction.hpp).
#include <catch2/catch.hpp>
#include <cmath>

#include "problems/heat/conduction_verification_runs.hpp"

using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("1D nonlinear conduction matches the exact Kirchhoff-transform solution at second order",
          "[examples][verification][conduction]") {
  // Exact solution: Kirchhoff transform U = T + βT²/2 is linear in x
  // (Kirchhoff transform as in F.P. Incropera & D.P. DeWitt, "Fundamentals of
  // Heat and Mass Transfer", plane wall with k = k0(1 + βT); closed form
  // derived from it in problems/heat/nonlinear_conduction.hpp).
  nkit_problems::kirchhoff_plane_wall wall;
  wall.beta = 1.0;
  wall.t1 = 1.0;
  wall.t2 = 0.0;
  // Sanity of the closed form itself: end values and the mean-conductivity flux
  // q = k_m (T1 − T2)/L, k_m = k0[1 + β(T1 + T2)/2] (same transform: q = k0[(T1 − T2) + β(T1² − T2²)/2]/L).
  CHECK_THAT(wall.temperature(0.0), WithinAbs(1.0, 1e-15));
  CHECK_THAT(wall.temperature(1.0), WithinAbs(0.0, 1e-15));
  CHECK_THAT(wall.heat_flux(), WithinRel(1.5, 1e-15));

  const auto coarse = nkit_problems::run_kirchhoff_wall(32, wall);
  const auto middle = nkit_problems::run_kirchhoff_wall(64, wall);
  const auto fine = nkit_problems::run_kirchhoff_wall(128, wall);
  REQUIRE(coarse.report.converged());
  REQUIRE(middle.report.converged());
  REQUIRE(fine.report.converged());
  // The scheme is second order (central fluxes, harmonic-mean faces); Newton is
  // converged to 1e-12 relative, far below these errors, so the observed order
  // p = ln(e_h/e_{h/2})/ln 2 (Salari & Knupp SAND2000-1444) must be near 2.
  const double order_1 = nkit_problems::observed_order(coarse.max_error, middle.max_error, 2.0);
  const double order_2 = nkit_problems::observed_order(middle.max_error, fine.max_error, 2.0);
  CAPTURE(coarse.max_error, middle.max_error, fine.max_error, order_1, order_2);
  CHECK(order_1 >= 1.85);  // pre-asymptotic on the coarsest pair (measured 1.93)
  CHECK(order_2 >= 1.9);
  CHECK(order_2 <= 2.1);
  // Wall heat flux against q = k0[(T1 − T2) + β(T1² − T2²)/2]/L, also second order.
  const double flux_order = nkit_problems::observed_order(middle.flux_error, fine.flux_error, 2.0);
  CAPTURE(fine.flux_error, flux_order);
  CHECK(fine.flux_error < 1e-4);
  CHECK(flux_order >= 1.9);
  CHECK(flux_order <= 2.1);
}

TEST_CASE("2D nonlinear conduction converges at second order to a manufactured solution",
          "[examples][verification][conduction]") {
  // Method of manufactured solutions (Salari & Knupp, SAND2000-1444, 2000;
  // Roache, J. Fluids Eng. 124 (2002) 4–10, from memory): T = 1 + ½ sin(πx)
  // sin(πy) + ¼xy with k = 1 + T and the matching analytic source.
  const nkit_problems::manufactured_conduction solution;
  const auto g16 = nkit_problems::run_manufactured(16, solution);
  const auto g32 = nkit_problems::run_manufactured(32, solution);
  const auto g64 = nkit_problems::run_manufactured(64, solution);
  REQUIRE(g16.report.converged());
  REQUIRE(g32.report.converged());
  REQUIRE(g64.report.converged());
  const double order_1 = nkit_problems::observed_order(g16.max_error, g32.max_error, 2.0);
  const double order_2 = nkit_problems::observed_order(g32.max_error, g64.max_error, 2.0);
  const double rms_order = nkit_problems::observed_order(g32.rms_error, g64.rms_error, 2.0);
  CAPTURE(g16.max_error, g32.max_error, g64.max_error, order_1, order_2, rms_order);
  // Second-order scheme: observed order within 1.9–2.1 on three grids.
  CHECK(order_1 >= 1.9);
  CHECK(order_1 <= 2.1);
  CHECK(order_2 >= 1.9);
  CHECK(order_2 <= 2.1);
  CHECK(rms_order >= 1.9);
  CHECK(rms_order <= 2.1);
  // Newton converges quadratically with the exact Jacobian: a handful of steps.
  CHECK(g64.report.newton_steps <= 6);
}
