// Reaction–diffusion example: Newton–GMRES with the colored finite-difference
// Jacobian (no hand-written Jacobian) and built-in preconditioners.
// Compiled only once nkit's colored-FD Jacobian header is in the tree.
#if __has_include(<nkit/sparse_jacobian.hpp>)
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/jacobian/automatic_differentiation.hpp>

#include "problems/reaction_diffusion/gray_scott_runs.hpp"

TEST_CASE("reaction-diffusion converges at second order to its manufactured solution with a colored-FD Jacobian",
          "[examples][reaction_diffusion]") {
  // Method of manufactured solutions (Salari & Knupp, SAND2000-1444, 2000):
  // cell-centred five-point scheme, second order; Newton converged to 1e-10
  // relative, far below the discretisation error, so p = ln(e_h/e_{h/2})/ln 2 ≈ 2.
  const auto g16 = nkit_problems::run_reaction_diffusion(16, nkit::ilu_zero_preconditioner());
  const auto g32 = nkit_problems::run_reaction_diffusion(32, nkit::ilu_zero_preconditioner());
  const auto g64 = nkit_problems::run_reaction_diffusion(64, nkit::ilu_zero_preconditioner());
  REQUIRE(g16.report.converged());
  REQUIRE(g32.report.converged());
  REQUIRE(g64.report.converged());
  // The Jacobian came from colored differences, assembled once per preconditioner setup.
  CHECK(g64.report.jacobian_assemblies == g64.report.preconditioner_setups);
  CHECK(g64.report.jacobian_assemblies >= 1);
  for (const bool first_species : {true, false}) {
    const double e16 = first_species ? g16.max_error_u : g16.max_error_v;
    const double e32 = first_species ? g32.max_error_u : g32.max_error_v;
    const double e64 = first_species ? g64.max_error_u : g64.max_error_v;
    const double p1 = std::log(e16 / e32) / std::log(2.0), p2 = std::log(e32 / e64) / std::log(2.0);
    CAPTURE(first_species, e16, e32, e64, p1, p2);
    CHECK(p1 >= 1.9);
    CHECK(p1 <= 2.1);
    CHECK(p2 >= 1.9);
    CHECK(p2 <= 2.1);
  }
}

TEST_CASE("reaction-diffusion: ILU(0) needs fewer GMRES iterations than block Jacobi",
          "[examples][reaction_diffusion]") {
  // ILU(0) keeps the off-diagonal couplings that block Jacobi drops (Saad,
  // Iterative Methods for Sparse Linear Systems, 2nd ed., SIAM 2003, ch. 10),
  // so on this diffusion-dominated problem it must need fewer iterations; both
  // reach the same discrete solution (to the Newton tolerance).
  const auto block = nkit_problems::run_reaction_diffusion(32, nkit::block_jacobi_preconditioner(2));
  const auto ilu = nkit_problems::run_reaction_diffusion(32, nkit::ilu_zero_preconditioner());
  REQUIRE(block.report.converged());
  REQUIRE(ilu.report.converged());
  CAPTURE(block.report.linear_iterations, ilu.report.linear_iterations);
  CHECK(ilu.report.linear_iterations < block.report.linear_iterations);
  CHECK((block.solution - ilu.solution).cwiseAbs().maxCoeff() < 1e-8);
}

TEST_CASE("reaction-diffusion residual: forward-mode AD Jacobian matches the colored-FD assembly",
          "[examples][reaction_diffusion]") {
  // Reference: exact J·e_j by forward-mode automatic differentiation
  // (Eigen's AutoDiffScalar through nkit's dual numbers). The colored forward
  // differences carry an O(√ε) error per entry (sparse_jacobian.hpp), so 1e-6
  // relative to the largest entry.
  const nkit_problems::gray_scott_steady problem(5);
  const Eigen::VectorXd w = problem.initial_guess() + 0.1 * Eigen::VectorXd::LinSpaced(problem.unknowns(), -1, 1);
  Eigen::MatrixXd exact(problem.unknowns(), problem.unknowns());
  nkit::dual_vector x(problem.unknowns()), r(problem.unknowns());
  for (Eigen::Index j = 0; j < problem.unknowns(); ++j) {
    for (Eigen::Index k = 0; k < problem.unknowns(); ++k) {
      x(k).value() = w(k);
      x(k).derivatives()(0) = k == j ? 1.0 : 0.0;
    }
    problem(x, r);
    for (Eigen::Index i = 0; i < problem.unknowns(); ++i) exact(i, j) = r(i).derivatives()(0);
  }
  // Colored FD through the driver's public building block.
  nkit::colored_difference_jacobian colored;
  colored.prepare(problem.jacobian_pattern());
  Eigen::VectorXd base(problem.unknowns());
  problem(w, base);
  nkit::sparse_matrix assembled;
  colored.assemble([&](const Eigen::VectorXd& u, Eigen::VectorXd& out) { problem(u, out); }, w, base, assembled);
  const Eigen::MatrixXd difference = Eigen::MatrixXd(assembled) - exact;
  CHECK(difference.cwiseAbs().maxCoeff() < 1e-6 * exact.cwiseAbs().maxCoeff());
}
#endif
