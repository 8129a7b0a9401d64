// The strip-split model problem (problems/model_problem/strip_heat_problem.hpp) solved by nkit
// on MPI_COMM_WORLD with each distributed preconditioner, against the same
// solve on one rank, and against the serial definition
// (problems/model_problem/model_problem.hpp).
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <nkit/core/eigen_vector_space.hpp>

#include "mpi/mpi_support.hpp"
#include "problems/model_problem/model_problem.hpp"
#include "problems/model_problem/solve_strip_problem.hpp"
#include "support/matchers.hpp"

using nkit_problems::strip_preconditioner;
using nkit_test::gather_all;

namespace {
const char* label(strip_preconditioner choice) {
  switch (choice) {
    case strip_preconditioner::schwarz_incomplete_lut:
      return "additive Schwarz, local ILU";
    case strip_preconditioner::schwarz_direct:
      return "additive Schwarz, local direct";
    case strip_preconditioner::algebraic_multigrid:
      return "BoomerAMG";
    case strip_preconditioner::structured_multigrid:
      return "structured multigrid";
    case strip_preconditioner::none:
      return "none";
  }
  return "?";
}
}  // namespace

TEST_CASE("the strip residual and Jacobian equal the serial model problem's", "[mpi][distributed]") {
  // Reference: problems/model_problem/model_problem.hpp, the serial
  // definition. Face fluxes are summed in another order, so residuals
  // agree to rounding: a few ε times the largest flux (O(1) here).
  const int n = 24;
  nkit_problems::strip_heat_problem strip(MPI_COMM_WORLD, n);
  const nkit_problems::heat_conduction_model_problem serial(n);
  Eigen::VectorXd t_global(n * n);
  for (int p = 0; p < n * n; ++p) t_global(p) = 0.6 * std::sin(0.1 * p) * std::cos(0.05 * p);
  const Eigen::VectorXd t = t_global.segment(strip.first_global_index(), strip.local_unknowns());

  Eigen::VectorXd r(t.size());
  strip(t, r);
  Eigen::VectorXd r_serial(n * n);
  serial(t_global, r_serial);
  CHECK_THAT(gather_all(MPI_COMM_WORLD, r), nkit_test::is_close_to(r_serial, 1e-14));

  nkit::sparse_matrix jacobian;
  strip.assemble_jacobian(t, jacobian);
  nkit::sparse_matrix jacobian_serial;
  serial.assemble_jacobian(t_global, jacobian_serial);
  REQUIRE(jacobian.rows() == strip.local_unknowns());
  REQUIRE(jacobian.cols() == n * n);
  const Eigen::MatrixXd expected =
      Eigen::MatrixXd(jacobian_serial).middleRows(strip.first_global_index(), strip.local_unknowns());
  CHECK((Eigen::MatrixXd(jacobian) - expected).cwiseAbs().maxCoeff() < 1e-14);
  CHECK(strip.halo_exchanges() == 2);  // one per evaluation, one per assembly
}

TEST_CASE("distributed solves equal the one-rank solve and every rank takes the same branches", "[mpi][distributed]") {
  const strip_preconditioner choice =
      GENERATE(strip_preconditioner::schwarz_incomplete_lut, strip_preconditioner::schwarz_direct,
               strip_preconditioner::algebraic_multigrid, strip_preconditioner::structured_multigrid);
  INFO("preconditioner: " << label(choice));
  const int n = 40;
  // Tight Newton tolerance so both solutions are within 1e-10 of the exact
  // discrete solution: ‖δT‖ ≤ ‖J⁻¹‖ ‖R‖ with ‖J⁻¹‖ ≈ n²/(2π²) (smallest
  // eigenvalue of the h²-scaled 5-point operator, common practice) and
  // ‖R‖ ≤ 1e-12 · q/n, so ‖δT‖/‖T‖ stays near 1e-12 ≪ 1e-10.
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  settings.relative_tolerance = 1e-12;

  const auto distributed = nkit_problems::solve_strip_problem(MPI_COMM_WORLD, n, choice, settings);
  const auto one_rank = nkit_problems::solve_strip_problem(MPI_COMM_SELF, n, choice, settings);
  REQUIRE(distributed.report.converged());
  REQUIRE(one_rank.report.converged());

  const Eigen::VectorXd solution = gather_all(MPI_COMM_WORLD, distributed.local_temperature);
  const Eigen::VectorXd& reference = one_rank.local_temperature;
  CHECK((solution - reference).norm() <= 1e-10 * reference.norm());
  // Additive Schwarz is a different preconditioner for each number of ranks
  // (one subdomain per rank), so its GMRES solves stop at other points within
  // the forcing term and the Newton step count need not match the one-rank
  // solve. The bound of one step is measured, not derived: equal on 2 ranks,
  // 6 against 5 on 3 ranks (run by hand). BoomerAMG's parallel coarsening also
  // depends on the split, but its counts matched on 1, 2 and 3 ranks, so the
  // multigrid cases keep the exact check as a guard against rank-dependent
  // decisions in the driver.
  const bool split_dependent =
      choice == strip_preconditioner::schwarz_incomplete_lut || choice == strip_preconditioner::schwarz_direct;
  if (split_dependent) {
    CHECK(std::abs(distributed.report.newton_steps - one_rank.report.newton_steps) <= 1);
  } else {
    CHECK(distributed.report.newton_steps == one_rank.report.newton_steps);
  }

  // Every rank made the same decisions: identical outcome, counts, norms,
  // forcing terms and step lengths, bit for bit.
  CHECK(nkit_test::same_on_every_rank(MPI_COMM_WORLD, nkit_test::decision_hash(distributed.report)));

  // The gathered solution solves the serial definition (model_problem.hpp).
  const nkit_problems::heat_conduction_model_problem serial(n);
  Eigen::VectorXd r(n * n);
  serial(solution, r);
  CHECK(r.norm() <= 1e-11 * (10.0 / n));  // ‖R(T0)‖ = q/n (model_problem.hpp)
}

TEST_CASE("preconditioner rebuilds follow the driver's reuse settings on every rank", "[mpi][distributed]") {
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 3;
  settings.preconditioner_rebuild.rebuild_after_linear_failure = false;
  const auto result =
      nkit_problems::solve_strip_problem(MPI_COMM_WORLD, 48, strip_preconditioner::algebraic_multigrid, settings);
  REQUIRE(result.report.converged());
  // Setups at steps 0, 3, 6, ...: ceil(steps / 3).
  CHECK(result.report.preconditioner_setups == (result.report.newton_steps + 2) / 3);
  CHECK(nkit_test::same_on_every_rank(MPI_COMM_WORLD, nkit_test::decision_hash(result.report)));
}

TEST_CASE("BoomerAMG keeps GMRES iterations per Newton step nearly mesh independent", "[mpi][multigrid]") {
  // Multigrid convergence factors bounded independently of h (Ruge & Stüben
  // 1987; Henson & Yang 2002) make GMRES iterations per Newton step at a fixed
  // forcing term nearly constant under refinement; target: growth ≤ 1.5×
  // from n = 64 to n = 256 (16× the unknowns). Without a coarse level
  // (additive Schwarz) they grow like the condition number's square root,
  // about ×2 per halving of h (common practice), so the same check fails for
  // it; checked from n = 32 to 128 to keep the test fast.
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-6;
  const auto per_step = [&](int n, strip_preconditioner choice) {
    const auto result = nkit_problems::solve_strip_problem(MPI_COMM_WORLD, n, choice, settings);
    REQUIRE(result.report.converged());
    return static_cast<double>(result.report.linear_iterations) / result.report.newton_steps;
  };
  const double coarse = per_step(64, strip_preconditioner::algebraic_multigrid);
  const double fine = per_step(256, strip_preconditioner::algebraic_multigrid);
  INFO("BoomerAMG: " << coarse << " GMRES iterations per Newton step at n = 64, " << fine << " at n = 256");
  CHECK(fine <= 1.5 * coarse);
  const double schwarz_coarse = per_step(32, strip_preconditioner::schwarz_incomplete_lut);
  const double schwarz_fine = per_step(128, strip_preconditioner::schwarz_incomplete_lut);
  INFO("Schwarz/ILU: " << schwarz_coarse << " at n = 32, " << schwarz_fine << " at n = 128");
  CHECK(schwarz_fine > 1.5 * schwarz_coarse);
}

TEST_CASE("the distributed solution has the computed maximum temperature of the model problem", "[mpi][distributed]") {
  // max T ≈ 0.64659 at n = 256 (model_problem.hpp: computed, a sanity check only).
  const auto result =
      nkit_problems::solve_strip_problem(MPI_COMM_WORLD, 256, strip_preconditioner::algebraic_multigrid);
  REQUIRE(result.report.converged());
  double local = result.local_temperature.maxCoeff(), maximum = 0.0;
  MPI_Allreduce(&local, &maximum, 1, MPI_DOUBLE, MPI_MAX, MPI_COMM_WORLD);
  CHECK_THAT(maximum, Catch::Matchers::WithinAbs(0.64659, 5e-6));  // 5 printed digits
}
