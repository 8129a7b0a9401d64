// The Newton driver on a distributed space: decisions that start from
// rank-local facts must still be taken by every rank together.
#include <catch2/catch.hpp>
#include <memory>
#include <nkit/distributed/mpi_vector_space.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>

#include "mpi/mpi_support.hpp"
#include "problems/model_problem/strip_heat_problem.hpp"

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

namespace {
/// Identity preconditioner that keeps a copy of the first assembled Jacobian
/// it is given, with the state and pseudo-time shift it belongs to.
struct jacobian_recorder {
  std::shared_ptr<nkit::sparse_matrix> jacobian = std::make_shared<nkit::sparse_matrix>();
  std::shared_ptr<Eigen::VectorXd> state = std::make_shared<Eigen::VectorXd>();
  std::shared_ptr<Eigen::VectorXd> shift = std::make_shared<Eigen::VectorXd>();
  template <class Space>
  nkit::setup_status setup(const nkit::preconditioner_context<Space>& context) {
    const nkit::sparse_matrix& assembled = context.assembled_jacobian();
    if (jacobian->nonZeros() == 0 && context.diagonal_shift != nullptr) {
      *jacobian = assembled;
      *state = context.state;
      *shift = *context.diagonal_shift;
    }
    return nkit::setup_status::ready;
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { z = r; }
};
}  // namespace

TEST_CASE("the pseudo-time shift lands on the global diagonal of a distributed Jacobian", "[mpi][newton]") {
  // Distributed layout (row_partition.hpp): local row i is global row
  // first + i, so the shift W/δ belongs at column first + i. Reference: the
  // strip problem's own Jacobian plus diag(shift) at those positions.
  nkit_problems::strip_heat_problem problem(MPI_COMM_WORLD, 16);
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  nkit::newton_settings settings;
  settings.globalization = nkit::globalization_strategy::pseudo_transient;
  settings.newton_step_budget = 1;
  jacobian_recorder recorder;
  nkit::newton_krylov_solver<nkit::mpi_vector_space, jacobian_recorder> solver(settings, space, recorder);
  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.local_unknowns(), 0.1);
  solver.solve(problem, t);
  REQUIRE(recorder.jacobian->nonZeros() > 0);

  nkit::sparse_matrix expected;
  problem.assemble_jacobian(*recorder.state, expected);
  const auto first = static_cast<int>(problem.first_global_index());
  for (Eigen::Index i = 0; i < expected.rows(); ++i) expected.coeffRef(i, first + i) += (*recorder.shift)(i);
  CHECK((Eigen::MatrixXd(*recorder.jacobian) - Eigen::MatrixXd(expected)).cwiseAbs().maxCoeff() <= 1e-14);
}
