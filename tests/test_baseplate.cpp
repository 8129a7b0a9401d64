// Baseplate flagship demo (invented data): discretisation and solver checks
// that do not depend on the invented numbers being realistic.
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/nkit.hpp>

#include "problems/heat/baseplate.hpp"
#include "problems/heat/baseplate_solvers.hpp"
#include "support/jacobian_check.hpp"

using Catch::Matchers::WithinRel;

TEST_CASE("baseplate analytic Jacobian matches central differences of the residual", "[examples][baseplate]") {
  // Definition of the Jacobian; central differences have O(δ²) truncation error
  // (common practice), δ = 1e-3 K on temperatures of ~300 K.
  nkit_problems::baseplate_conduction problem(12, 10);
  const Eigen::VectorXd t = Eigen::VectorXd::LinSpaced(problem.unknowns(), 300.0, 420.0);
  const auto deviation = nkit_test::central_difference_deviation(problem, t, 1e-3);
  CHECK(deviation.worst < 1e-6 * deviation.largest_entry);
}

TEST_CASE("baseplate: Newton-GMRES and the Picard loop reach the same temperatures and conserve energy",
          "[examples][baseplate]") {
  nkit_problems::baseplate_conduction problem(96, 64);
  const double coolant = problem.design().coolant_temperature;
  Eigen::VectorXd newton_t = Eigen::VectorXd::Constant(problem.unknowns(), coolant);
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 100;
  settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 15;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit_problems::frozen_conduction_preconditioner> solver(
      settings, {}, nkit_problems::frozen_conduction_preconditioner(problem));
  const auto report = solver.solve(problem, newton_t);
  REQUIRE(report.converged());
  Eigen::VectorXd picard_t = Eigen::VectorXd::Constant(problem.unknowns(), coolant);
  const auto picard = nkit_problems::solve_by_picard_iteration(problem, picard_t, 1e-10, 200);
  REQUIRE(picard.converged);
  // Both solve the same discrete equations to 1e-10 relative residual: they agree far below 1 mK.
  CHECK((newton_t - picard_t).cwiseAbs().maxCoeff() < 1e-5);
  // Finite volume conserves energy exactly: at R = 0 the heat leaving through the
  // cooled face equals the chips' power (Σ_P R_P = removed − generated).
  CHECK_THAT(problem.heat_removed(newton_t), WithinRel(problem.total_power(), 1e-8));
  // The chips are hotter than the coolant, the plate cooler than the chips.
  CHECK(newton_t.minCoeff() > coolant);
  // Newton's quadratic convergence needs fewer outer iterations than Picard's linear rate (Kelley 1995, ch. 5).
  CHECK(report.newton_steps <= picard.iterations + 2);
  CHECK(report.preconditioner_setups < picard.factorizations);
}
