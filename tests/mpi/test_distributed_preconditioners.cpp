// The distributed preconditioners on their own: additive Schwarz against an
// exact block solve, BoomerAMG's option mapping against hypre's documented
// codes, every multigrid option accepted by hypre, and clear errors on bad input.
#include <catch2/catch.hpp>
#include <nkit/distributed/mpi_vector_space.hpp>
#include <nkit/preconditioners/additive_schwarz.hpp>
#include <nkit/preconditioners/hypre_algebraic_multigrid.hpp>

#include "mpi/mpi_support.hpp"
#include "problems/model_problem/model_problem.hpp"
#include "problems/model_problem/solve_strip_problem.hpp"
#include "support/fixed_jacobian.hpp"
#include "support/matchers.hpp"

namespace {
using nkit_test::fixed_jacobian;  // hands a fixed matrix to a preconditioner's setup

struct strip_setup {
  nkit_problems::strip_heat_problem problem;
  Eigen::VectorXd state;
  Eigen::VectorXd residual;
  fixed_jacobian jacobian;
  explicit strip_setup(int n) : problem(MPI_COMM_WORLD, n), jacobian(nkit::sparse_matrix()) {
    state = Eigen::VectorXd::Constant(problem.local_unknowns(), 0.3);
    residual.resize(state.size());
    problem(state, residual);
    nkit::sparse_matrix matrix;
    problem.assemble_jacobian(state, matrix);
    jacobian = fixed_jacobian(std::move(matrix));
  }
};
}  // namespace

TEST_CASE("additive Schwarz with a direct local solve inverts each rank's diagonal block", "[mpi][schwarz]") {
  // Reference: the definition M⁻¹ = Σ R_rᵀ A_r⁻¹ R_r (Smith, Bjørstad & Gropp
  // 1996): A_r z = r must hold on each rank to the accuracy of a sparse LU
  // solve, a small multiple of ε times the block's condition number (≈ 10³ here).
  strip_setup setup(32);
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  nkit::additive_schwarz_preconditioner schwarz({nkit::subdomain_solver::sparse_direct});
  const nkit::preconditioner_context<nkit::mpi_vector_space> context{space, setup.state, setup.residual,
                                                                     0,     nullptr,     &setup.jacobian};
  REQUIRE(schwarz.setup(context) == nkit::setup_status::ready);
  const auto& block = schwarz.local_block();
  CHECK(block.rows() == setup.problem.local_unknowns());
  CHECK(schwarz.partition().first_row == setup.problem.first_global_index());
  const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(block.rows(), -1.0, 1.0);
  Eigen::VectorXd z(r.size());
  const std::int64_t reductions = space.reduction_count();
  schwarz.apply(r, z);
  CHECK(space.reduction_count() == reductions);  // apply never communicates
  CHECK((block * z - r).norm() <= 1e-10 * r.norm());
}

TEST_CASE("preconditioners reject a Jacobian that is not in the distributed layout on every rank",
          "[mpi][schwarz][multigrid]") {
  strip_setup setup(16);
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  // Square local matrix: wrong whenever there is more than one rank; on one
  // rank, a matrix with one column too many.
  const Eigen::Index rows = setup.problem.local_unknowns();
  nkit::sparse_matrix wrong(rows, nkit_test::world_size() > 1 ? rows : rows + 1);
  wrong.setIdentity();
  fixed_jacobian source(wrong);
  const nkit::preconditioner_context<nkit::mpi_vector_space> context{space, setup.state, setup.residual,
                                                                     0,     nullptr,     &source};
  nkit::additive_schwarz_preconditioner schwarz;
  CHECK_THROWS_AS(schwarz.setup(context), std::invalid_argument);
  nkit::algebraic_multigrid_preconditioner multigrid(MPI_COMM_WORLD);
  CHECK_THROWS_AS(multigrid.setup(context), std::invalid_argument);
  CHECK_THROWS_WITH(nkit::additive_schwarz_preconditioner({nkit::subdomain_solver::incomplete_lut, -1.0}),
                    "nkit: additive_schwarz_settings.drop_tolerance must be finite and >= 0 (got -1)");
}

TEST_CASE("multigrid options map to hypre's documented codes", "[multigrid]") {
  // Source: hypre 2.26 reference documentation in HYPRE_parcsr_ls.h
  // (HYPRE_BoomerAMGSetCoarsenType, SetInterpType, SetRelaxType, SetCycleType).
  using nkit::detail::hypre_code;
  CHECK(hypre_code(nkit::multigrid_coarsening::cleary_luby_jones_plassmann) == 0);
  CHECK(hypre_code(nkit::multigrid_coarsening::ruge_stueben_per_rank) == 3);
  CHECK(hypre_code(nkit::multigrid_coarsening::falgout) == 6);
  CHECK(hypre_code(nkit::multigrid_coarsening::parallel_modified_independent_set) == 8);
  CHECK(hypre_code(nkit::multigrid_coarsening::hybrid_modified_independent_set) == 10);
  CHECK(hypre_code(nkit::multigrid_interpolation::classical_modified) == 0);
  CHECK(hypre_code(nkit::multigrid_interpolation::direct) == 3);
  CHECK(hypre_code(nkit::multigrid_interpolation::multipass) == 4);
  CHECK(hypre_code(nkit::multigrid_interpolation::extended_plus_i) == 6);
  CHECK(hypre_code(nkit::multigrid_interpolation::standard) == 8);
  CHECK(hypre_code(nkit::multigrid_interpolation::extended) == 14);
  CHECK(hypre_code(nkit::multigrid_smoother::jacobi).down == 0);
  CHECK(hypre_code(nkit::multigrid_smoother::hybrid_gauss_seidel).down == 3);
  CHECK(hypre_code(nkit::multigrid_smoother::hybrid_gauss_seidel).up == 4);
  CHECK(hypre_code(nkit::multigrid_smoother::hybrid_symmetric_gauss_seidel).down == 6);
  CHECK(hypre_code(nkit::multigrid_smoother::l1_gauss_seidel).down == 13);
  CHECK(hypre_code(nkit::multigrid_smoother::l1_gauss_seidel).up == 14);
  CHECK(hypre_code(nkit::multigrid_smoother::chebyshev).down == 16);
  CHECK(hypre_code(nkit::multigrid_smoother::l1_jacobi).down == 18);
  CHECK(hypre_code(nkit::multigrid_cycle::v_cycle) == 1);
  CHECK(hypre_code(nkit::multigrid_cycle::w_cycle) == 2);

  nkit::algebraic_multigrid_settings bad;
  bad.strength_threshold = 1.0;
  CHECK_THROWS_WITH(bad.validate(), "nkit: algebraic_multigrid_settings.strength_threshold must be in [0, 1) (got 1)");
  bad = {};
  bad.maximum_levels = 1;
  CHECK_THROWS_WITH(bad.validate(), "nkit: algebraic_multigrid_settings.maximum_levels must be >= 2 (got 1)");
}

TEST_CASE("every multigrid option gives a working preconditioner", "[mpi][multigrid]") {
  // Each choice must be accepted by hypre and cut GMRES iterations per
  // Newton step at least threefold against no preconditioner (a loose bound,
  // common practice: multigrid should do far better than that).
  nkit::algebraic_multigrid_settings multigrid;
  const int option = GENERATE(range(0, 9));
  switch (option) {
    case 0:
      break;  // defaults
    case 1:
      multigrid.coarsening = nkit::multigrid_coarsening::falgout;
      break;
    case 2:
      multigrid.coarsening = nkit::multigrid_coarsening::parallel_modified_independent_set;
      break;
    case 3:
      multigrid.coarsening = nkit::multigrid_coarsening::cleary_luby_jones_plassmann;
      multigrid.interpolation = nkit::multigrid_interpolation::classical_modified;
      break;
    case 4:
      multigrid.coarsening = nkit::multigrid_coarsening::ruge_stueben_per_rank;
      multigrid.interpolation = nkit::multigrid_interpolation::standard;
      break;
    case 5:
      multigrid.smoother = nkit::multigrid_smoother::hybrid_symmetric_gauss_seidel;
      multigrid.cycle = nkit::multigrid_cycle::w_cycle;
      break;
    case 6:
      multigrid.smoother = nkit::multigrid_smoother::chebyshev;
      multigrid.interpolation = nkit::multigrid_interpolation::extended;
      break;
    case 7:
      multigrid.smoother = nkit::multigrid_smoother::l1_jacobi;
      multigrid.interpolation = nkit::multigrid_interpolation::direct;
      multigrid.smoothing_sweeps = 2;
      break;
    case 8:
      multigrid.smoother = nkit::multigrid_smoother::hybrid_gauss_seidel;
      multigrid.interpolation = nkit::multigrid_interpolation::multipass;
      multigrid.aggressive_coarsening_levels = 1;
      multigrid.cycles_per_application = 2;
      break;
  }
  INFO("option " << option);
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-6;
  const auto result = nkit_problems::solve_strip_problem(
      MPI_COMM_WORLD, 32, nkit_problems::strip_preconditioner::algebraic_multigrid, settings, multigrid);
  const auto plain =
      nkit_problems::solve_strip_problem(MPI_COMM_WORLD, 32, nkit_problems::strip_preconditioner::none, settings);
  REQUIRE(result.report.converged());
  REQUIRE(plain.report.converged());
  const auto per_step = [](const nkit::solve_report& report) {
    return static_cast<double>(report.linear_iterations) / report.newton_steps;
  };
  INFO("GMRES iterations per Newton step: " << per_step(result.report) << " with AMG, " << per_step(plain.report)
                                            << " without");
  CHECK(per_step(result.report) < per_step(plain.report) / 3.0);
}

TEST_CASE("the BoomerAMG adapter works in a serial code with the plain Eigen space", "[multigrid]") {
  // The serial model problem (problems/model_problem/model_problem.hpp) with
  // nkit's default vector space and the adapter on MPI_COMM_SELF, against the
  // strip problem solved on one rank: same discretisation, so the same
  // solution to the solver tolerance (see test_distributed_heat.cpp).
  const int n = 40;
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  settings.relative_tolerance = 1e-12;
  nkit_problems::heat_conduction_model_problem problem(n);
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::algebraic_multigrid_preconditioner> solver(
      settings, {}, nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF));
  Eigen::VectorXd temperature = Eigen::VectorXd::Zero(problem.unknowns());
  const nkit::solve_report report = solver.solve(problem, temperature);
  REQUIRE(report.converged());
  const auto strip = nkit_problems::solve_strip_problem(
      MPI_COMM_SELF, n, nkit_problems::strip_preconditioner::algebraic_multigrid, settings);
  CHECK((temperature - strip.local_temperature).norm() <= 1e-10 * strip.local_temperature.norm());
  CHECK(report.newton_steps == strip.report.newton_steps);
  CHECK(report.preconditioner_setups == report.newton_steps);

  // Freeing the driver's Jacobian once hypre holds the matrix changes no
  // arithmetic (each setup assembles the same values afresh) and saves at
  // least the matrix's values, indices and row offsets.
  nkit::algebraic_multigrid_settings releasing;
  releasing.release_assembled_jacobian_after_copy = true;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::algebraic_multigrid_preconditioner>
      releasing_solver(settings, {}, nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF, releasing));
  Eigen::VectorXd released = Eigen::VectorXd::Zero(problem.unknowns());
  const nkit::solve_report released_report = releasing_solver.solve(problem, released);
  REQUIRE(released_report.converged());
  CHECK(released == temperature);
  CHECK(released_report.jacobian_assemblies == report.jacobian_assemblies);
  nkit::sparse_matrix matrix;
  problem.assemble_jacobian(temperature, matrix);
  const auto matrix_bytes = static_cast<std::size_t>(matrix.nonZeros()) * (sizeof(double) + sizeof(int)) +
                            static_cast<std::size_t>(matrix.rows() + 1) * sizeof(int);
  CHECK(releasing_solver.assembled_jacobian_bytes() + matrix_bytes <= solver.assembled_jacobian_bytes());
}
