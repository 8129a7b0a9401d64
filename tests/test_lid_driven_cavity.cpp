// Lid-driven cavity example (streamfunction–vorticity, 129 × 129 nodes)
// against Ghia, Ghia & Shin (1982), J. Comput. Phys. 48, 387–411.
#include <catch2/catch.hpp>
#include <cmath>

#include "problems/flow/cavity_solve.hpp"
#include "support/jacobian_check.hpp"

using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("cavity Jacobian matches finite differences of the residual", "[examples][cavity]") {
  // Definition of the Jacobian: column j ≈ [R(u + δe_j) − R(u − δe_j)]/(2δ);
  // the residual is quadratic, so the central difference is exact up to round-off.
  nkit_problems::lid_driven_cavity cavity(6, 250.0);
  const Eigen::VectorXd state = Eigen::VectorXd::LinSpaced(cavity.unknowns(), -0.3, 0.7).array().sin();
  CHECK(nkit_test::central_difference_deviation(cavity, state, 1e-4).worst < 1e-8);
}

// 129 × 129 nodes, as in Ghia et al. (1982). Measured (Release, shared 2-core
// machine): about 1 s for Re = 100 and 2–6 s for Re = 1000.
constexpr int ghia_intervals = 128;

namespace {

/// Solves at `reynolds` on Ghia's grid by continuation and checks the centre-line
/// velocities against Ghia et al. (1982) Tables I–II (max deviation at their
/// tabulated points <= velocity_bound, lid-velocity units) and the primary vortex
/// against Table V (streamfunction within vortex_tolerance relative, position
/// within one cell).
void check_against_ghia(double reynolds, double velocity_bound, double vortex_tolerance) {
  const int intervals = ghia_intervals;
  const bool reynolds_1000 = reynolds == 1000.0;
  const auto solution = nkit_problems::solve_cavity(intervals, reynolds);
  REQUIRE(solution.converged);
  const nkit_problems::lid_driven_cavity cavity(intervals, reynolds);
  const auto deviation = nkit_problems::compare_with_ghia(cavity, solution.state, reynolds_1000);
  CAPTURE(deviation.max_u_deviation, deviation.worst_u_position, deviation.max_v_deviation, deviation.worst_v_position);
  CHECK(deviation.max_u_deviation <= velocity_bound);
  CHECK(deviation.max_v_deviation <= velocity_bound);
  const auto& reference = reynolds_1000 ? nkit_problems::ghia_1982::primary_vortex_re_1000
                                        : nkit_problems::ghia_1982::primary_vortex_re_100;
  const auto vortex = cavity.primary_vortex(solution.state);
  CHECK_THAT(vortex.streamfunction, WithinRel(reference.streamfunction, vortex_tolerance));
  CHECK_THAT(vortex.x, WithinAbs(reference.x, 1.0 / intervals + 1e-4));
  CHECK_THAT(vortex.y, WithinAbs(reference.y, 1.0 / intervals + 1e-4));
}

}  // namespace

TEST_CASE("cavity at Re = 100 matches Ghia et al. (1982) on their 129 x 129 grid", "[examples][cavity][ghia]") {
  // Ghia et al. (1982) Tables I–II (majority of consistent published transcriptions):
  // both are second-order solutions on the same grid, so they agree to well within
  // 0.01 lid-velocity units (measured: u 0.0043, v 0.0084).
  // Primary vortex, Ghia et al. (1982) Table V: ψ = −0.103423 at (0.6172, 0.7344).
  // FROM MEMORY (not confirmed against the paper), so a 2 % tolerance and one cell.
  check_against_ghia(100.0, 0.01, 0.02);
}

TEST_CASE("cavity at Re = 1000 matches Ghia et al. (1982) on their 129 x 129 grid", "[examples][cavity][ghia]") {
  // Thinner boundary layers at Re = 1000: bound 0.02 (measured: u 0.0137, v 0.0079).
  // Primary vortex, Ghia et al. (1982) Table V: ψ = −0.117929 at (0.5313, 0.5625).
  // FROM MEMORY; central differences on 129² underpredict it by about 2 % (measured −0.11547), so 3 %.
  check_against_ghia(1000.0, 0.02, 0.03);
}
