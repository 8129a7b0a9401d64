// The Newton driver on a distributed space: decisions that start from
// rank-local facts must still be taken by every rank together.
#include <catch2/catch.hpp>
#include <nkit/mpi_vector_space.hpp>
#include <nkit/newton_krylov_solver.hpp>

#include "mpi/mpi_support.hpp"

TEST_CASE("a rank that owns no unknowns takes part in the solve", "[mpi][newton]") {
  // x_i³ = 8 for every unknown, all unknowns on rank 0 and none on the others
  // (a legitimate, if unbalanced, decomposition). Every rank must reach the
  // same converged outcome; the exact root is x = 2.
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const Eigen::Index local = nkit_test::world_rank() == 0 ? 3 : 0;
  auto residual = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().cube() - 8.0; };
  Eigen::VectorXd x = Eigen::VectorXd::Ones(local);
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-12;
  nkit::newton_krylov_solver<nkit::mpi_vector_space> solver(settings, space);
  const nkit::solve_report report = solver.solve(residual, x);
  CHECK(report.converged());
  CHECK(nkit_test::same_on_every_rank(MPI_COMM_WORLD, nkit_test::decision_hash(report)));
  if (local > 0) CHECK((x.array() - 2.0).abs().maxCoeff() < 1e-10);  // quadratic convergence: far below 1e-10
}

TEST_CASE("an empty problem is rejected on every rank", "[mpi][newton]") {
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  auto residual = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x; };
  Eigen::VectorXd x(0);
  nkit::newton_krylov_solver<nkit::mpi_vector_space> solver({}, space);
  CHECK_THROWS_AS(solver.solve(residual, x), std::invalid_argument);
}
