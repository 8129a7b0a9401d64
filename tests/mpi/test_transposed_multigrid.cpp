// BoomerAMG's transposed cycle (algebraic_multigrid_preconditioner::apply_transpose,
// hypre's HYPRE_BoomerAMGSolveT) and additive Schwarz's transpose on 1 and 2
// ranks, and the adjoint sensitivities that use the multigrid transpose.
//
// Checks and their sources:
//  - Adjoint identity ⟨M⁻¹v, w⟩ = ⟨v, M⁻ᵀw⟩ on the upwinded convection–diffusion
//    matrix of problems/test_sets/convection_diffusion.hpp (Péclet number 5,
//    nonsymmetric), rows split over the ranks. One cycle is a chain of
//    smoothing sweeps, residuals, restrictions, interpolations and the coarsest
//    solve, each backward stable (N.J. Higham, "Accuracy and Stability of
//    Numerical Algorithms", 2nd ed., SIAM 2002, §3.5 and ch. 9), so the two sides
//    differ by rounding only: about n ε κ∞(M) ‖M⁻¹‖ ‖v‖ ‖w‖ per step of the
//    chain. The check allows that with the factor 8 of the serial checks
//    (tests/test_transposed_preconditioners.cpp) times 10 steps per level and
//    cycle, the levels counted generously as 10 (common practice); the result
//    is far inside it. With M⁻¹ in place of M⁻ᵀ the identity must miss by more
//    than 100 times the bound, so the check can fail.
//  - The gradient of the conduction design problem (tests/support/conduction_design.hpp)
//    by adjoint and direct sensitivities with BoomerAMG on MPI_COMM_SELF (the
//    sensitivity functions are serial): they agree to the linear tolerance,
//    as for every other preconditioner (tests/test_sensitivity.cpp).
#include <catch2/catch.hpp>
#include <nkit/distributed/mpi_vector_space.hpp>
#include <nkit/preconditioners/additive_schwarz.hpp>
#include <nkit/preconditioners/hypre_algebraic_multigrid.hpp>
#include <string>

#include "mpi/mpi_support.hpp"
#include "problems/test_sets/convection_diffusion.hpp"
#include "support/conduction_design.hpp"
#include "support/fixed_jacobian.hpp"

namespace {

using nkit_test::fixed_jacobian;  // hands a fixed matrix to a preconditioner's setup

double global_dot(const Eigen::VectorXd& a, const Eigen::VectorXd& b) {
  double local = a.dot(b), global = 0.0;
  MPI_Allreduce(&local, &global, 1, MPI_DOUBLE, MPI_SUM, MPI_COMM_WORLD);
  return global;
}

/// This rank's rows of `global` (global column numbers), split like nkit_test::local_slice.
nkit::sparse_matrix local_rows(const nkit::sparse_matrix& global) {
  const int rank = nkit_test::world_rank(), size = nkit_test::world_size();
  const Eigen::Index base = global.rows() / size, extra = global.rows() % size;
  const Eigen::Index start = rank * base + (rank < extra ? rank : extra);
  nkit::sparse_matrix local = global.middleRows(start, base + (rank < extra ? 1 : 0));
  local.makeCompressed();
  return local;
}

}  // namespace

namespace {

/// ⟨M⁻¹v, w⟩ = ⟨v, M⁻ᵀw⟩ on the ranks within `pieces` times 8 n ε κ∞(M) ‖M⁻¹‖_F ‖v‖ ‖w‖ (file comment).
template <class Preconditioner>
void check_distributed_identity(Preconditioner& preconditioner, Eigen::Index n, Eigen::Index local_size,
                                double pieces) {
  // The dense M⁻¹ on every rank, column by column (collective applications).
  Eigen::MatrixXd inverse(n, n);
  Eigen::VectorXd unit = Eigen::VectorXd::Zero(n), column(local_size);
  for (Eigen::Index i = 0; i < n; ++i) {
    unit(i) = 1.0;
    preconditioner.apply(nkit_test::local_slice(MPI_COMM_WORLD, unit), column);
    inverse.col(i) = nkit_test::gather_all(MPI_COMM_WORLD, column);
    unit(i) = 0.0;
  }
  const double condition = inverse.lpNorm<Eigen::Infinity>() * inverse.inverse().lpNorm<Eigen::Infinity>();
  for (unsigned seed = 40; seed < 43; ++seed) {
    const Eigen::VectorXd v = nkit_test::random_vector(n, seed), w = nkit_test::random_vector(n, seed + 100);
    const Eigen::VectorXd v_local = nkit_test::local_slice(MPI_COMM_WORLD, v);
    const Eigen::VectorXd w_local = nkit_test::local_slice(MPI_COMM_WORLD, w);
    Eigen::VectorXd forward(local_size), transposed(local_size);
    preconditioner.apply(v_local, forward);
    preconditioner.apply_transpose(w_local, transposed);
    const double left = global_dot(w_local, forward), right = global_dot(v_local, transposed);
    const double bound =
        pieces * 8.0 * static_cast<double>(n) * nkit_test::epsilon * condition * inverse.norm() * v.norm() * w.norm();
    INFO("|<M^-1 v, w> - <v, M^-T w>| = " << std::abs(left - right) << ", bound " << bound);
    CHECK(std::abs(left - right) <= bound);
    CHECK(std::abs(left - v.dot(inverse * w)) > 100.0 * bound);  // M⁻¹ is not symmetric
  }
}

}  // namespace

TEST_CASE("the transposed multigrid cycle satisfies the adjoint identity", "[mpi][multigrid][sensitivity]") {
  nkit::algebraic_multigrid_settings settings;
  settings.smoother = nkit::multigrid_smoother::jacobi;
  const int variant = GENERATE(0, 1, 2);
  if (variant == 1) settings.cycle = nkit::multigrid_cycle::w_cycle;
  if (variant == 2) settings.cycles_per_application = 2, settings.smoothing_sweeps = 2;
  INFO("variant " << variant);

  const nkit::sparse_matrix global = nkit_problems::convection_diffusion_matrix(10, 5.0);
  fixed_jacobian source(local_rows(global));
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const Eigen::VectorXd state = nkit_test::local_slice(MPI_COMM_WORLD, Eigen::VectorXd::Zero(global.rows()));
  const nkit::preconditioner_context<nkit::mpi_vector_space> context{space, state, state, 0, nullptr, &source};
  nkit::algebraic_multigrid_preconditioner multigrid(MPI_COMM_WORLD, settings);
  REQUIRE(multigrid.setup(context) == nkit::setup_status::ready);
  check_distributed_identity(multigrid, global.rows(), state.size(), 10.0 * 10.0 * settings.cycles_per_application);
}

TEST_CASE("additive Schwarz's transpose on the ranks' blocks", "[mpi][schwarz][sensitivity]") {
  // M⁻¹ = Σ R_rᵀ A_r⁻¹ R_r (additive_schwarz.hpp): the transpose is each rank's block transposed,
  // with no communication; one piece per application (one local solve).
  const auto solver = GENERATE(nkit::subdomain_solver::incomplete_lut, nkit::subdomain_solver::sparse_direct);
  const nkit::sparse_matrix global = nkit_problems::convection_diffusion_matrix(8, 5.0);
  fixed_jacobian source(local_rows(global));
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const Eigen::VectorXd state = nkit_test::local_slice(MPI_COMM_WORLD, Eigen::VectorXd::Zero(global.rows()));
  const nkit::preconditioner_context<nkit::mpi_vector_space> context{space, state, state, 0, nullptr, &source};
  nkit::additive_schwarz_preconditioner schwarz({solver, 1e-2, 2});
  REQUIRE(schwarz.setup(context) == nkit::setup_status::ready);
  check_distributed_identity(schwarz, global.rows(), state.size(), 1.0);
}

TEST_CASE("the transposed multigrid cycle needs the Jacobi smoother", "[mpi][multigrid][bad_input]") {
  const nkit::sparse_matrix global = nkit_problems::convection_diffusion_matrix(6, 5.0);
  fixed_jacobian source(local_rows(global));
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const Eigen::VectorXd state = nkit_test::local_slice(MPI_COMM_WORLD, Eigen::VectorXd::Zero(global.rows()));
  const nkit::preconditioner_context<nkit::mpi_vector_space> context{space, state, state, 0, nullptr, &source};
  nkit::algebraic_multigrid_preconditioner multigrid(MPI_COMM_WORLD);  // default smoother: l1_gauss_seidel
  REQUIRE(multigrid.setup(context) == nkit::setup_status::ready);
  Eigen::VectorXd z(state.size());
  CHECK_THROWS_WITH(multigrid.apply_transpose(state, z),
                    "nkit: algebraic_multigrid_preconditioner::apply_transpose needs "
                    "algebraic_multigrid_settings.smoother = jacobi (got l1_gauss_seidel): hypre's transposed cycle "
                    "relaxes with Jacobi only, so with another smoother it would not be the transpose of apply()");
}

TEST_CASE("adjoint gradients with the transposed multigrid cycle equal direct gradients", "[multigrid][sensitivity]") {
  const nkit_test::conduction_design design = nkit_test::square_design(12, 0.3);
  auto problem = nkit::with_parameter_automatic_differentiation(design);
  nkit::algebraic_multigrid_settings settings;
  settings.smoother = nkit::multigrid_smoother::jacobi;
  nkit_test::check_adjoint_equals_direct(problem, design, nkit_test::west_heat_flux{&design},
                                         nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF, settings));
}
