// The structured-grid multigrid preconditioner (hypre's semicoarsening
// multigrid on stencil matrices): the stencil matrix it fills equals the
// Jacobian (repeated cycles converge to the sparse-LU solution, in 1-D, 2-D
// with 5- and 9-point stencils and 3-D, on any split into layers), its
// options reach hypre, and it keeps Newton–GMRES iterations per step nearly
// mesh independent on the distributed model problem. Runs on 1 and 2 ranks.
#include <Eigen/SparseLU>
#include <catch2/catch.hpp>
#include <nkit/distributed/mpi_vector_space.hpp>
#include <nkit/preconditioners/hypre_structured_multigrid.hpp>
#include <vector>

#include "mpi/mpi_support.hpp"
#include "problems/model_problem/model_problem.hpp"
#include "problems/model_problem/solve_strip_problem.hpp"
#include "support/fixed_jacobian.hpp"

namespace {
using nkit_test::fixed_jacobian;
using strip_preconditioner = nkit_problems::strip_preconditioner;

/// This rank's share of `layers` layers (balanced, in rank order), or all
/// of them on rank 0 when `all_on_first_rank`.
std::pair<int, int> layer_range(int layers, bool all_on_first_rank = false) {
  const int rank = nkit_test::world_rank(), size = nkit_test::world_size();
  if (all_on_first_rank) return rank == 0 ? std::pair<int, int>{0, layers} : std::pair<int, int>{layers, layers};
  const int base = layers / size, extra = layers % size;
  const int first = rank * base + (rank < extra ? rank : extra);
  return {first, first + base + (rank < extra ? 1 : 0)};
}

/// Sets the preconditioner up with this rank's rows [first, end) of the
/// global matrix and returns its application to those rows of `r`;
/// `releases`, when given, receives how often the setup released the matrix.
Eigen::VectorXd apply_to_rows(nkit::structured_multigrid_preconditioner& multigrid, const nkit::sparse_matrix& global,
                              Eigen::Index first, Eigen::Index end, const Eigen::VectorXd& r, int* releases = nullptr) {
  const Eigen::Index count = end - first;
  nkit::sparse_matrix local = global.middleRows(first, count);
  local.makeCompressed();
  fixed_jacobian source(std::move(local));
  const Eigen::VectorXd state = Eigen::VectorXd::Zero(count), residual = Eigen::VectorXd::Zero(count);
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const nkit::preconditioner_context<nkit::mpi_vector_space> context{space, state, residual, 0, nullptr, &source};
  const nkit::setup_status status = multigrid.setup(context);  // throws on bad input, outside REQUIRE
  REQUIRE(status == nkit::setup_status::ready);
  if (releases != nullptr) *releases = source.releases();
  Eigen::VectorXd z(count);
  multigrid.apply(r.segment(first, count), z);
  return z;
}

/// Runs `cycles` cycles per application on the rows of this rank and checks
/// the gathered result against the sparse-LU solution of the whole system.
/// Reference: Eigen's SparseLU. Tolerance: 40 V-cycles contract the error by
/// far more than 10⁻¹⁰ at any cycle convergence factor below 0.5; multigrid
/// factors for these diffusion operators are bounded away from 1
/// independently of h (Brandt 1977, Math. Comp. 31, 333–390, for the
/// symmetric case; common practice for the mildly nonsymmetric Jacobian and
/// the non-Galerkin coarse operators). What is left is the rounding of both
/// solves, about ε times the condition number: of order n² for a
/// second-difference operator on n cells per side (common practice), at most
/// 64² ≈ 4·10³ here.
void check_converges_to_direct_solution(const nkit::structured_grid& grid, const nkit::sparse_matrix& global,
                                        nkit::structured_multigrid_settings settings = {},
                                        bool all_on_first_rank = false) {
  Eigen::Index layer = 1;
  for (int a = 0; a + 1 < grid.dimension(); ++a) layer *= grid.cells(a);
  const auto [first_layer, end_layer] = layer_range(grid.cells(grid.dimension() - 1), all_on_first_rank);
  const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(global.rows(), -1.0, 2.0).array().sin();
  Eigen::SparseLU<Eigen::SparseMatrix<double>> lu(global);
  REQUIRE(lu.info() == Eigen::Success);
  const Eigen::VectorXd exact = lu.solve(r);
  settings.cycles_per_application = 40;
  nkit::structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, grid, settings);
  const Eigen::VectorXd z = apply_to_rows(multigrid, global, first_layer * layer, end_layer * layer, r);
  const Eigen::VectorXd gathered = nkit_test::gather_all(MPI_COMM_WORLD, z);
  INFO("grid " << grid.description() << ", stencil points " << multigrid.stencil_size());
  CHECK((gathered - exact).norm() <= 1e-10 * exact.norm());
}

/// The model problem's Jacobian at a non-uniform temperature (nonsymmetric:
/// the k'(T)∇T terms), global rows.
nkit::sparse_matrix model_jacobian(int n, int dimensions) {
  const nkit_problems::heat_conduction_model_problem problem(n, 10.0, dimensions);
  const Eigen::VectorXd t = Eigen::VectorXd::LinSpaced(problem.unknowns(), 0.0, 1.0);
  nkit::sparse_matrix jacobian;
  problem.assemble_jacobian(t, jacobian);
  return jacobian;
}

/// The compact 9-point Laplacian on an n × n grid (centre 20, edge
/// neighbours −4, corner neighbours −1; common practice), truncated at the
/// boundary (Dirichlet): symmetric positive definite.
nkit::sparse_matrix nine_point_laplacian(int n) {
  std::vector<Eigen::Triplet<double>> entries;
  for (int j = 0; j < n; ++j) {
    for (int i = 0; i < n; ++i) {
      for (int dj = -1; dj <= 1; ++dj) {
        for (int di = -1; di <= 1; ++di) {
          if (i + di < 0 || i + di >= n || j + dj < 0 || j + dj >= n) continue;
          const double value = (di == 0 && dj == 0) ? 20.0 : (di == 0 || dj == 0) ? -4.0 : -1.0;
          entries.emplace_back(i + n * j, i + di + n * (j + dj), value);
        }
      }
    }
  }
  nkit::sparse_matrix matrix(n * n, n * n);
  matrix.setFromTriplets(entries.begin(), entries.end());
  return matrix;
}

/// The star stencil on a 1-D, 2-D or 3-D grid (−1 to each neighbour along a
/// grid direction) with `diagonal` on the diagonal: with diagonal > 2d,
/// strictly diagonally dominant and symmetric, so positive definite with a
/// condition number below (diagonal + 2d) / (diagonal − 2d) (Gershgorin;
/// common practice) whatever the grid size.
nkit::sparse_matrix shifted_star_operator(const std::vector<int>& extents, double diagonal) {
  const nkit::structured_grid grid(extents);
  const int dimension = grid.dimension();
  std::array<int, 3> extent = {1, 1, 1};
  for (int a = 0; a < dimension; ++a) extent[static_cast<std::size_t>(a)] = extents[static_cast<std::size_t>(a)];
  const int cells = extent[0] * extent[1] * extent[2];
  std::vector<Eigen::Triplet<double>> entries;
  for (int cell = 0; cell < cells; ++cell) {
    const std::array<int, 3> at = {cell % extent[0], cell / extent[0] % extent[1], cell / (extent[0] * extent[1])};
    entries.emplace_back(cell, cell, diagonal);
    int stride = 1;
    for (std::size_t a = 0; a < 3; ++a) {
      if (at[a] > 0) entries.emplace_back(cell, cell - stride, -1.0);
      if (at[a] + 1 < extent[a]) entries.emplace_back(cell, cell + stride, -1.0);
      stride *= extent[a];
    }
  }
  nkit::sparse_matrix matrix(cells, cells);
  matrix.setFromTriplets(entries.begin(), entries.end());
  return matrix;
}

/// Every one of the up to 26 neighbours in 3-D at −1, the diagonal 27:
/// strictly diagonally dominant and symmetric (Gershgorin; common practice),
/// a 27-point stencil.
nkit::sparse_matrix full_neighbourhood_operator(int nx, int ny, int nz) {
  std::vector<Eigen::Triplet<double>> entries;
  for (int k = 0; k < nz; ++k) {
    for (int j = 0; j < ny; ++j) {
      for (int i = 0; i < nx; ++i) {
        for (int dk = -1; dk <= 1; ++dk) {
          for (int dj = -1; dj <= 1; ++dj) {
            for (int di = -1; di <= 1; ++di) {
              if (i + di < 0 || i + di >= nx || j + dj < 0 || j + dj >= ny || k + dk < 0 || k + dk >= nz) continue;
              const bool centre = di == 0 && dj == 0 && dk == 0;
              entries.emplace_back(i + nx * (j + ny * k), i + di + nx * (j + dj + ny * (k + dk)), centre ? 27.0 : -1.0);
            }
          }
        }
      }
    }
  }
  nkit::sparse_matrix matrix(nx * ny * nz, nx * ny * nz);
  matrix.setFromTriplets(entries.begin(), entries.end());
  return matrix;
}

/// −u'' on n cells with Dirichlet ends: tridiagonal (−1, 2, −1).
nkit::sparse_matrix second_difference(int n) {
  std::vector<Eigen::Triplet<double>> entries;
  for (int i = 0; i < n; ++i) {
    entries.emplace_back(i, i, 2.0);
    if (i > 0) entries.emplace_back(i, i - 1, -1.0);
    if (i + 1 < n) entries.emplace_back(i, i + 1, -1.0);
  }
  nkit::sparse_matrix matrix(n, n);
  matrix.setFromTriplets(entries.begin(), entries.end());
  return matrix;
}
}  // namespace

TEST_CASE("structured multigrid options map to hypre's documented codes", "[multigrid][structured]") {
  // Source: hypre 2.26 reference documentation in HYPRE_struct_ls.h
  // (HYPRE_StructPFMGSetRelaxType: 0 Jacobi, 1 weighted Jacobi, 2 red/black
  // Gauss–Seidel symmetric, 3 nonsymmetric; HYPRE_StructPFMGSetRAPType: 0
  // Galerkin, 1 non-Galerkin).
  using nkit::detail::hypre_code;
  CHECK(hypre_code(nkit::structured_multigrid_smoother::jacobi) == 0);
  CHECK(hypre_code(nkit::structured_multigrid_smoother::weighted_jacobi) == 1);
  CHECK(hypre_code(nkit::structured_multigrid_smoother::red_black_gauss_seidel_symmetric) == 2);
  CHECK(hypre_code(nkit::structured_multigrid_smoother::red_black_gauss_seidel) == 3);
  CHECK(hypre_code(nkit::structured_coarse_operator::galerkin) == 0);
  CHECK(hypre_code(nkit::structured_coarse_operator::non_galerkin) == 1);
}

TEST_CASE("structured multigrid cycles converge to the direct solution of the Jacobian they were given",
          "[mpi][multigrid][structured]") {
  SECTION("2-D model problem, 5-point") {
    check_converges_to_direct_solution(nkit::structured_grid({24, 24}), model_jacobian(24, 2));
  }
  SECTION("2-D model problem, red/black Gauss-Seidel with non-Galerkin coarse operators") {
    nkit::structured_multigrid_settings settings;
    settings.smoother = nkit::structured_multigrid_smoother::red_black_gauss_seidel;
    settings.coarse_operator = nkit::structured_coarse_operator::non_galerkin;
    check_converges_to_direct_solution(nkit::structured_grid({24, 24}), model_jacobian(24, 2), settings);
  }
  SECTION("2-D, 9-point stencil") {
    check_converges_to_direct_solution(nkit::structured_grid({20, 20}), nine_point_laplacian(20));
  }
  SECTION("3-D model problem, 7-point") {
    check_converges_to_direct_solution(nkit::structured_grid({8, 8, 8}), model_jacobian(8, 3));
  }
  SECTION("1-D second difference") {
    check_converges_to_direct_solution(nkit::structured_grid({64}), second_difference(64));
  }
  SECTION("grid of 2 x 24 cells (neighbour offsets that alias in the numbering)") {
    // On a grid two cells wide, cell c + 1 is the east neighbour of an even
    // cell and the north-west neighbour of an odd one: offsets come from the
    // cells' coordinates, not from the column distance.
    const nkit::sparse_matrix grid_matrix = nine_point_laplacian(24);
    std::vector<Eigen::Triplet<double>> entries;  // the 9-point operator restricted to columns i = 0, 1
    for (int j = 0; j < 24; ++j) {
      for (int i = 0; i < 2; ++i) {
        for (nkit::sparse_matrix::InnerIterator it(grid_matrix, i + 24 * j); it; ++it) {
          const int column_i = static_cast<int>(it.col()) % 24, column_j = static_cast<int>(it.col()) / 24;
          if (column_i < 2) entries.emplace_back(i + 2 * j, column_i + 2 * column_j, it.value());
        }
      }
    }
    nkit::sparse_matrix narrow(48, 48);
    narrow.setFromTriplets(entries.begin(), entries.end());
    nkit::structured_multigrid_settings settings;
    settings.smoother = nkit::structured_multigrid_smoother::jacobi;
    check_converges_to_direct_solution(nkit::structured_grid({2, 24}), narrow, settings);
  }
  SECTION("all cells on the first rank, none on the others") {
    check_converges_to_direct_solution(nkit::structured_grid({16, 16}), model_jacobian(16, 2), {}, true);
  }
  SECTION("3-D, 27-point stencil, on a 5 x 4 x 6 grid and on a 5 x 2 x 6 grid") {
    // The 5 x 4 x 6 grid takes the stencil steps by comparison, the 5 x 2 x 6 grid (two cells
    // across y) by the cells' coordinates; both see corner couplings such as (-1, +1, +1).
    check_converges_to_direct_solution(nkit::structured_grid({5, 4, 6}), full_neighbourhood_operator(5, 4, 6));
    check_converges_to_direct_solution(nkit::structured_grid({5, 2, 6}), full_neighbourhood_operator(5, 2, 6));
  }
  SECTION("more cells on a rank than one staging slab holds (65,536), in 1-D and 2-D") {
    // 140,000 cells: 70,000 per rank on two ranks, so each rank copies two slabs and the second
    // rank's slabs start past its own first layer. Shifted operators keep the condition number
    // below 3 (1-D, diagonal 4) and 5 (2-D, diagonal 6), so the rounding stays far below 1e-10.
    check_converges_to_direct_solution(nkit::structured_grid({140000}), shifted_star_operator({140000}, 4.0));
    check_converges_to_direct_solution(nkit::structured_grid({1100, 128}), shifted_star_operator({1100, 128}, 6.0));
  }
}

TEST_CASE("structured multigrid settings reach hypre and repeated applications are bitwise equal",
          "[mpi][multigrid][structured]") {
  const nkit::structured_grid grid({32, 32});
  const nkit::sparse_matrix global = model_jacobian(32, 2);
  const std::pair<int, int> layers = layer_range(32);  // not a structured binding: the lambda below captures it
  const int first = layers.first, end = layers.second;
  const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(global.rows(), 1.0, 3.0);
  nkit::structured_multigrid_preconditioner standard(MPI_COMM_WORLD, grid);
  const Eigen::VectorXd once = apply_to_rows(standard, global, first * 32, end * 32, r);
  const Eigen::VectorXd again = apply_to_rows(standard, global, first * 32, end * 32, r);
  CHECK(standard.stencil_size() == 5);
  CHECK(standard.box_lower()[1] == first);
  CHECK(standard.box_upper()[1] == end - 1);
  CHECK((once - again).norm() == 0.0);
  // Releasing the Jacobian once its values are in hypre leaves the operator
  // unchanged; the source is told once per setup, and only when asked to.
  int releases = -1;
  static_cast<void>(apply_to_rows(standard, global, first * 32, end * 32, r, &releases));
  CHECK(releases == 0);
  nkit::structured_multigrid_settings releasing_settings;
  releasing_settings.release_assembled_jacobian_after_copy = true;
  nkit::structured_multigrid_preconditioner releasing(MPI_COMM_WORLD, grid, releasing_settings);
  const Eigen::VectorXd released = apply_to_rows(releasing, global, first * 32, end * 32, r, &releases);
  CHECK(releases == 1);
  CHECK((released - once).norm() == 0.0);
  // The same matrix handed over directly (the way to precondition with a frozen operator).
  nkit::sparse_matrix local = global.middleRows(first * 32, (end - first) * 32);
  local.makeCompressed();
  REQUIRE(standard.setup_from_matrix(local) == nkit::setup_status::ready);
  Eigen::VectorXd direct(local.rows());
  standard.apply(r.segment(first * 32, local.rows()), direct);
  CHECK((direct - once).norm() == 0.0);
  // Moving hands the hierarchy over: the new owner applies the same operator, the old one has none.
  nkit::structured_multigrid_preconditioner moved(std::move(standard));
  Eigen::VectorXd after_move(local.rows());
  moved.apply(r.segment(first * 32, local.rows()), after_move);
  CHECK((after_move - once).norm() == 0.0);
  CHECK_THROWS_AS(standard.apply(r.segment(first * 32, local.rows()), after_move), std::logic_error);
  nkit::structured_multigrid_preconditioner assigned(MPI_COMM_WORLD, grid);
  assigned = std::move(moved);
  assigned.apply(r.segment(first * 32, local.rows()), after_move);
  CHECK((after_move - once).norm() == 0.0);
  // Each other setting changes one application (a setting hypre ignored would not).
  const auto changed = [&](nkit::structured_multigrid_settings settings) {
    nkit::structured_multigrid_preconditioner other(MPI_COMM_WORLD, grid, settings);
    const Eigen::VectorXd z = apply_to_rows(other, global, first * 32, end * 32, r);
    return nkit_test::gather_all(MPI_COMM_WORLD, z - once).norm() > 1e-12 * once.norm();
  };
  nkit::structured_multigrid_settings settings;
  settings.smoother = nkit::structured_multigrid_smoother::jacobi;
  CHECK(changed(settings));
  settings = {};
  settings.coarse_operator = nkit::structured_coarse_operator::non_galerkin;
  CHECK(changed(settings));
  // The two red/black orders against each other (both need non-Galerkin coarse operators).
  const auto red_black = [&](nkit::structured_multigrid_smoother smoother) {
    nkit::structured_multigrid_settings choice;
    choice.smoother = smoother;
    choice.coarse_operator = nkit::structured_coarse_operator::non_galerkin;
    nkit::structured_multigrid_preconditioner other(MPI_COMM_WORLD, grid, choice);
    return nkit_test::gather_all(MPI_COMM_WORLD, apply_to_rows(other, global, first * 32, end * 32, r));
  };
  const Eigen::VectorXd symmetric = red_black(nkit::structured_multigrid_smoother::red_black_gauss_seidel_symmetric);
  const Eigen::VectorXd forward = red_black(nkit::structured_multigrid_smoother::red_black_gauss_seidel);
  CHECK((symmetric - forward).norm() > 1e-12 * symmetric.norm());
  settings = {};
  settings.skip_relaxation_where_isotropic = false;
  CHECK(changed(settings));
  settings = {};
  settings.cycles_per_application = 2;
  CHECK(changed(settings));
  settings = {};
  settings.smoothing_sweeps_after = 2;
  CHECK(changed(settings));
  settings = {};
  settings.smoothing_sweeps_before = 2;
  CHECK(changed(settings));
  settings = {};
  settings.maximum_levels = 2;
  CHECK(changed(settings));
}

TEST_CASE("structured multigrid keeps GMRES iterations per Newton step nearly mesh independent",
          "[mpi][multigrid][structured]") {
  // The same bound as for BoomerAMG (test_distributed_heat.cpp): multigrid
  // convergence factors bounded independently of h (Brandt 1977) make GMRES
  // iterations per Newton step at a fixed forcing term nearly constant under
  // refinement; target: growth ≤ 1.5× from n = 64 to n = 256 (16× the
  // unknowns). Without a coarse level they grow about ×2 per halving of h
  // (common practice; checked for additive Schwarz in that test).
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-6;
  const auto per_step = [&](int n) {
    const auto result =
        nkit_problems::solve_strip_problem(MPI_COMM_WORLD, n, strip_preconditioner::structured_multigrid, settings);
    REQUIRE(result.report.converged());
    CHECK(nkit_test::same_on_every_rank(MPI_COMM_WORLD, nkit_test::decision_hash(result.report)));
    return static_cast<double>(result.report.linear_iterations) / result.report.newton_steps;
  };
  const double coarse = per_step(64);
  const double fine = per_step(256);
  INFO("structured multigrid: " << coarse << " GMRES iterations per Newton step at n = 64, " << fine << " at n = 256");
  CHECK(fine <= 1.5 * coarse);
}

TEST_CASE("structured multigrid rejects bad input with the offending value named", "[mpi][multigrid][structured]") {
  using Catch::Matchers::Contains;
  CHECK_THROWS_WITH(nkit::structured_multigrid_preconditioner(MPI_COMM_WORLD, nkit::structured_grid({8, 8}, 2)),
                    Contains("needs one unknown per cell") && Contains("unknowns_per_cell = 2"));
  nkit::structured_multigrid_settings settings;
  settings.smoothing_sweeps_before = 0;
  settings.smoothing_sweeps_after = 0;
  CHECK_THROWS_WITH(settings.validate(),
                    "nkit: structured_multigrid_settings.smoothing_sweeps_before + smoothing_sweeps_after must be "
                    ">= 1 (got 0)");
  settings = {};
  settings.smoother = nkit::structured_multigrid_smoother::red_black_gauss_seidel_symmetric;
  CHECK_THROWS_WITH(settings.validate(),
                    Contains("structured_multigrid_settings.smoother = red_black_gauss_seidel(_symmetric) needs "
                             "structured_multigrid_settings.coarse_operator = non_galerkin"));
  settings = {};
  settings.smoother = static_cast<nkit::structured_multigrid_smoother>(7);
  CHECK_THROWS_WITH(settings.validate(), Contains("structured_multigrid_settings.smoother must be one of"));

  nkit::structured_multigrid_preconditioner unused(MPI_COMM_WORLD, nkit::structured_grid({8}));
  Eigen::VectorXd r = Eigen::VectorXd::Ones(4), z;
  CHECK_THROWS_AS(unused.apply(r, z), std::logic_error);

  SECTION("a grid with another number of cells than the Jacobian's rows") {
    nkit::structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({16, 16}));
    const auto [first, end] = layer_range(15);
    CHECK_THROWS_WITH(apply_to_rows(multigrid, model_jacobian(15, 2), first * 15, end * 15, Eigen::VectorXd::Ones(225)),
                      Contains("the ranks hold 225 unknowns in all") && Contains("has 256"));
  }
  SECTION("a periodic coupling, which is no stencil neighbour") {
    nkit::sparse_matrix periodic = second_difference(8);
    periodic.coeffRef(0, 7) = -1.0;
    periodic.coeffRef(7, 0) = -1.0;
    periodic.makeCompressed();
    nkit::structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({8}));
    const auto [first, end] = layer_range(8);
    if (first == 0) {
      CHECK_THROWS_WITH(apply_to_rows(multigrid, periodic, first, end, Eigen::VectorXd::Ones(8)),
                        Contains("couples cell 0 with cell 7, which is not a neighbour on the grid"));
    } else {
      CHECK_THROWS_AS(apply_to_rows(multigrid, periodic, first, end, Eigen::VectorXd::Ones(8)), std::invalid_argument);
    }
  }
  SECTION("a coupling across the end of a grid row or column, one index step away") {
    // Cell 7 = (7, 0) and cell 8 = (0, 1) on 8 × 8; cell 56 = (0, 7, 0) and cell 64 = (0, 0, 1)
    // on 8³: adjacent indices, not neighbours (each step lands off the grid).
    for (const int dimensions : {2, 3}) {
      const int from = dimensions == 2 ? 7 : 56, to = dimensions == 2 ? 8 : 64;
      nkit::sparse_matrix wrapped = model_jacobian(8, dimensions);
      wrapped.coeffRef(from, to) = -1.0;
      wrapped.coeffRef(to, from) = -1.0;
      wrapped.makeCompressed();
      const int layer = dimensions == 2 ? 8 : 64;
      const auto cells = static_cast<int>(wrapped.rows());
      nkit::structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD,
                                                          nkit::structured_grid(std::vector<int>(dimensions, 8)));
      const auto [first, end] = layer_range(8);
      INFO(dimensions << "-D");
      if (first == 0) {
        CHECK_THROWS_WITH(apply_to_rows(multigrid, wrapped, first * layer, end * layer, Eigen::VectorXd::Ones(cells)),
                          Contains("couples cell " + std::to_string(from) + " with cell " + std::to_string(to) +
                                   ", which is not a neighbour"));
      } else {
        CHECK_THROWS_AS(apply_to_rows(multigrid, wrapped, first * layer, end * layer, Eigen::VectorXd::Ones(cells)),
                        std::invalid_argument);
      }
    }
  }
  SECTION("non-Galerkin coarse operators (alone or for a red/black smoother) with a 9-point stencil") {
    for (const auto smoother : {nkit::structured_multigrid_smoother::weighted_jacobi,
                                nkit::structured_multigrid_smoother::red_black_gauss_seidel}) {
      nkit::structured_multigrid_settings non_galerkin;
      non_galerkin.smoother = smoother;
      non_galerkin.coarse_operator = nkit::structured_coarse_operator::non_galerkin;
      nkit::structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({8, 8}), non_galerkin);
      const auto [first, end] = layer_range(8);
      CHECK_THROWS_WITH(
          apply_to_rows(multigrid, nine_point_laplacian(8), first * 8, end * 8, Eigen::VectorXd::Ones(64)),
          Contains("structured_multigrid_settings.coarse_operator = non_galerkin") && Contains("needs a star stencil"));
      Eigen::VectorXd z;  // the failed setup left nothing to apply
      CHECK_THROWS_AS(multigrid.apply(Eigen::VectorXd::Ones((end - first) * 8), z), std::logic_error);
    }
  }
  SECTION("a vector of another length than this rank's rows") {
    nkit::structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({8, 8}));
    const auto [first, end] = layer_range(8);
    apply_to_rows(multigrid, model_jacobian(8, 2), first * 8, end * 8, Eigen::VectorXd::Ones(64));
    Eigen::VectorXd z;
    CHECK_THROWS_WITH(multigrid.apply(Eigen::VectorXd::Ones((end - first) * 8 + 1), z),
                      Contains("apply got a vector of " + std::to_string((end - first) * 8 + 1) + " entries"));
  }
  if (nkit_test::world_size() > 1) {
    SECTION("ranks whose rows are not whole grid rows") {
      // Rank 0 takes one cell more than its grid rows: every rank must throw.
      nkit::structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({8, 8}));
      const auto [first, end] = layer_range(8);
      const Eigen::Index shift = nkit_test::world_rank() == 0 ? 0 : 1;
      const Eigen::Index last = end == 8 ? 64 : end * 8 + 1;
      CHECK_THROWS_WITH(
          apply_to_rows(multigrid, model_jacobian(8, 2), first * 8 + shift, last, Eigen::VectorXd::Ones(64)),
          Contains("whole layers of the slowest grid direction (multiples of 8 cells)"));
    }
  }
}
