// The structured-grid multigrid preconditioner for several unknowns per cell
// (hypre's semicoarsening system multigrid on semi-structured matrices): the
// matrix it fills equals the Jacobian (repeated cycles converge to the
// sparse-LU solution, in 2-D and 3-D, with two and three variables, on
// any split into layers), its options reach hypre, and it keeps Newton–GMRES
// iterations per step nearly mesh independent on a nonlinear two-field
// problem. Runs on 1 and 2 ranks.
#include <Eigen/SparseLU>
#include <catch2/catch.hpp>
#include <nkit/distributed/mpi_vector_space.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/hypre_system_structured_multigrid.hpp>
#include <vector>

#include "mpi/mpi_support.hpp"
#include "support/fixed_jacobian.hpp"

namespace {
using nkit_test::fixed_jacobian;

/// This rank's share of `layers` layers: balanced in rank order, or all on
/// rank 0 (`split` = 1), or a quarter on rank 0 and the rest on the others
/// (`split` = 2).
std::pair<int, int> system_layer_range(int layers, int split = 0) {
  const int rank = nkit_test::world_rank(), size = nkit_test::world_size();
  if (split == 1) return rank == 0 ? std::pair<int, int>{0, layers} : std::pair<int, int>{layers, layers};
  if (split == 2 && size > 1) {
    const int first_share = layers / 4;
    if (rank == 0) return {0, first_share};
    const int rest = layers - first_share, others = size - 1, r = rank - 1;
    const int base = rest / others, extra = rest % others;
    const int first = first_share + r * base + (r < extra ? r : extra);
    return {first, first + base + (r < extra ? 1 : 0)};
  }
  const int base = layers / size, extra = layers % size;
  const int first = rank * base + (rank < extra ? rank : extra);
  return {first, first + base + (rank < extra ? 1 : 0)};
}

/// Unknowns in one layer of the slowest direction.
Eigen::Index layer_unknowns(const nkit::structured_grid& grid) {
  Eigen::Index layer = grid.unknowns_per_cell();
  for (int a = 0; a + 1 < grid.dimension(); ++a) layer *= grid.cells(a);
  return layer;
}

/// Sets the preconditioner up with this rank's rows [first, end) of the
/// global matrix and returns its application to those rows of `r`;
/// `releases`, when given, receives how often the setup released the matrix.
Eigen::VectorXd apply_system_to_rows(nkit::system_structured_multigrid_preconditioner& multigrid,
                                     const nkit::sparse_matrix& global, Eigen::Index first, Eigen::Index end,
                                     const Eigen::VectorXd& r, int* releases = nullptr) {
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

/// Gathered result of one setup and application on the layers of `split`.
Eigen::VectorXd apply_on_split(const nkit::structured_grid& grid, const nkit::sparse_matrix& global,
                               const Eigen::VectorXd& r, nkit::system_structured_multigrid_settings settings,
                               int split) {
  const Eigen::Index layer = layer_unknowns(grid);
  const auto [first_layer, end_layer] = system_layer_range(grid.cells(grid.dimension() - 1), split);
  nkit::system_structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, grid, settings);
  const Eigen::VectorXd z = apply_system_to_rows(multigrid, global, first_layer * layer, end_layer * layer, r);
  return nkit_test::gather_all(MPI_COMM_WORLD, z);
}

/// Our own test operator (invented coefficients): b diffusion equations on a
/// 1-, 2- or 3-D grid, variable v with conductivity conductivities[v] (the
/// star stencil: conductivity times (2d on the diagonal, −1 to each
/// neighbour), truncated at the boundary: Dirichlet), coupled in every cell
/// by the exchange σ Σ_w≠v (u_v − u_w). Both parts are symmetric, the
/// diffusion positive definite (weakly diagonally dominant, strictly in the
/// boundary rows, irreducible) and the exchange positive semidefinite (a
/// graph Laplacian): the sum is symmetric positive definite, the case of the
/// multigrid convergence theory cited below.
nkit::sparse_matrix coupled_diffusion(const std::vector<int>& extents, const std::vector<double>& conductivities,
                                      double exchange) {
  const int b = static_cast<int>(conductivities.size());
  const nkit::structured_grid grid(extents, b);
  const int dimension = grid.dimension();
  const std::array<int, 3> extent = {grid.cells(0), grid.cells(1), grid.cells(2)};
  const auto cells = static_cast<int>(grid.cell_count());
  std::vector<Eigen::Triplet<double>> entries;
  for (int cell = 0; cell < cells; ++cell) {
    const std::array<int, 3> at = {cell % extent[0], cell / extent[0] % extent[1], cell / (extent[0] * extent[1])};
    for (int v = 0; v < b; ++v) {
      const double k = conductivities[static_cast<std::size_t>(v)];
      const int row = b * cell + v;
      entries.emplace_back(row, row, 2.0 * dimension * k + exchange * (b - 1));
      for (int w = 0; w < b; ++w) {
        if (w != v) entries.emplace_back(row, b * cell + w, -exchange);
      }
      int stride = 1;
      for (std::size_t a = 0; a < 3; ++a) {
        if (at[a] > 0) entries.emplace_back(row, b * (cell - stride) + v, -k);
        if (at[a] + 1 < extent[a]) entries.emplace_back(row, b * (cell + stride) + v, -k);
        stride *= extent[a];
      }
    }
  }
  nkit::sparse_matrix matrix(b * cells, b * cells);
  matrix.setFromTriplets(entries.begin(), entries.end());
  return matrix;
}

/// Runs 60 cycles per application on the rows of this rank and checks the
/// gathered result against the sparse-LU solution of the whole system.
/// Reference: Eigen's SparseLU. Tolerance: 60 V-cycles contract the error by
/// far more than 10⁻¹⁰ at any cycle convergence factor below 0.6; multigrid
/// factors for symmetric positive definite diffusion operators are bounded
/// away from 1 independently of h (A. Brandt, "Multi-level adaptive solutions
/// to boundary-value problems", Math. Comp. 31 (1977) 333–390, from memory;
/// for the block relaxation of coupled systems common practice). What is
/// left is the rounding of both solves, about ε times the condition number:
/// at most (4d·k_max + 2σ(b−1)) / (k_min · λ_min) with λ_min ≈ d·π²/(n+1)²
/// the smallest eigenvalue of the Dirichlet second difference (common
/// practice); for n = 24, d = 2, k from 0.1 to 1 and σ = 0.01 (an exchange
/// σ_c·h² of a discretised equation, small against the neighbour couplings)
/// about 3·10³, so ε times it is near 10⁻¹², far below 10⁻¹⁰. A much
/// stronger exchange (σ = 1 against k = 0.1) slows the cycle to a factor
/// near 0.9 (measured; docs/structured_multigrid.md says why), so the
/// tests keep to the regime the method is meant for.
void check_system_converges_to_direct_solution(const nkit::structured_grid& grid, const nkit::sparse_matrix& global,
                                               nkit::system_structured_multigrid_settings settings = {},
                                               int split = 0) {
  const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(global.rows(), -1.0, 2.0).array().sin();
  Eigen::SparseLU<Eigen::SparseMatrix<double>> lu(global);
  REQUIRE(lu.info() == Eigen::Success);
  const Eigen::VectorXd exact = lu.solve(r);
  settings.cycles_per_application = 60;
  const Eigen::VectorXd gathered = apply_on_split(grid, global, r, settings, split);
  INFO("grid " << grid.description() << ", split " << split);
  CHECK((gathered - exact).norm() <= 1e-10 * exact.norm());
}

/// Our own nonlinear two-field scenario (invented coefficients) on the unit
/// square with n × n cells and u = 0 outside (Dirichlet): field 0 diffuses
/// with the conductivity 1 + u₀² (arithmetic face means), field 1 with 0.5,
/// and they exchange σ(u₀ − u₁) with σ = 10 per cell; sources 10 and 0.
/// Residual scaled by h² (finite volumes); unknowns interleaved per cell.
class coupled_nonlinear_pair {
 public:
  explicit coupled_nonlinear_pair(int n) : m_n(n), m_h2(1.0 / (static_cast<double>(n) * n)) {}
  Eigen::Index unknowns() const { return 2 * static_cast<Eigen::Index>(m_n) * m_n; }
  static double conductivity(int field, double u) { return field == 0 ? 1.0 + u * u : 0.5; }
  static double conductivity_derivative(int field, double u) { return field == 0 ? 2.0 * u : 0.0; }

  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    r.resize(unknowns());
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const Eigen::Index c = i + static_cast<Eigen::Index>(m_n) * j;
        for (int f = 0; f < 2; ++f) {
          const double uc = u[2 * c + f], kc = conductivity(f, uc);
          double sum = 0.0;
          for (const auto& [di, dj] : {std::pair<int, int>{-1, 0}, {1, 0}, {0, -1}, {0, 1}}) {
            if (inside(i + di, j + dj)) {
              const double un = u[2 * (c + di + static_cast<Eigen::Index>(m_n) * dj) + f];
              sum += 0.5 * (kc + conductivity(f, un)) * (uc - un);
            } else {
              sum += kc * uc;  // the face to the boundary value 0
            }
          }
          const double exchange = m_sigma * (u[2 * c + f] - u[2 * c + 1 - f]);
          r[2 * c + f] = sum + m_h2 * (exchange - (f == 0 ? 10.0 : 0.0));
        }
      }
    }
  }

  void assemble_jacobian(const Eigen::VectorXd& u, nkit::sparse_matrix& jacobian) const {
    std::vector<Eigen::Triplet<double>> entries;
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const Eigen::Index c = i + static_cast<Eigen::Index>(m_n) * j;
        for (int f = 0; f < 2; ++f) {
          const Eigen::Index row = 2 * c + f;
          const double uc = u[row], kc = conductivity(f, uc), dkc = conductivity_derivative(f, uc);
          double diagonal = 0.0;
          for (const auto& [di, dj] : {std::pair<int, int>{-1, 0}, {1, 0}, {0, -1}, {0, 1}}) {
            if (inside(i + di, j + dj)) {
              const Eigen::Index column = 2 * (c + di + static_cast<Eigen::Index>(m_n) * dj) + f;
              const double un = u[column], kf = 0.5 * (kc + conductivity(f, un));
              diagonal += kf + 0.5 * dkc * (uc - un);
              entries.emplace_back(row, column, -kf + 0.5 * conductivity_derivative(f, un) * (uc - un));
            } else {
              diagonal += kc + dkc * uc;
            }
          }
          entries.emplace_back(row, row, diagonal + m_h2 * m_sigma);
          entries.emplace_back(row, 2 * c + 1 - f, -m_h2 * m_sigma);
        }
      }
    }
    jacobian.resize(unknowns(), unknowns());
    jacobian.setFromTriplets(entries.begin(), entries.end());
    jacobian.makeCompressed();
  }

 private:
  bool inside(int i, int j) const { return i >= 0 && i < m_n && j >= 0 && j < m_n; }
  int m_n;
  double m_h2;
  double m_sigma = 10.0;
};
}  // namespace

TEST_CASE("system structured multigrid options map to hypre's documented codes", "[multigrid][structured]") {
  // Source: hypre 2.26 reference documentation in HYPRE_sstruct_ls.h
  // (HYPRE_SStructSysPFMGSetRelaxType: 0 Jacobi, 1 weighted Jacobi).
  using nkit::detail::hypre_code;
  CHECK(hypre_code(nkit::system_multigrid_smoother::jacobi) == 0);
  CHECK(hypre_code(nkit::system_multigrid_smoother::weighted_jacobi) == 1);
}

TEST_CASE("system structured multigrid cycles converge to the direct solution of the Jacobian they were given",
          "[mpi][multigrid][structured]") {
  SECTION("2-D, two variables with conductivities 1 and 0.1, exchange 0.01") {
    check_system_converges_to_direct_solution(nkit::structured_grid({24, 24}, 2),
                                              coupled_diffusion({24, 24}, {1.0, 0.1}, 0.01));
  }
  SECTION("3-D, two variables") {
    check_system_converges_to_direct_solution(nkit::structured_grid({8, 8, 8}, 2),
                                              coupled_diffusion({8, 8, 8}, {1.0, 0.1}, 0.01));
  }
  SECTION("2-D, three variables") {
    check_system_converges_to_direct_solution(nkit::structured_grid({16, 16}, 3),
                                              coupled_diffusion({16, 16}, {1.0, 0.3, 0.1}, 0.01));
  }
  SECTION("2-D, two variables, all cells on the first rank and an uneven split") {
    check_system_converges_to_direct_solution(nkit::structured_grid({16, 16}, 2),
                                              coupled_diffusion({16, 16}, {1.0, 0.1}, 0.01), {}, 1);
    check_system_converges_to_direct_solution(nkit::structured_grid({16, 16}, 2),
                                              coupled_diffusion({16, 16}, {1.0, 0.1}, 0.01), {}, 2);
  }
}

TEST_CASE("system structured multigrid: one application is the same whatever the split into layers",
          "[mpi][multigrid][structured]") {
  // The filled operator and the cycle do not depend on how the layers are
  // shared: one cycle on the balanced split, on all layers on the first rank
  // and on an uneven split agree to round-off (the order of hypre's global
  // sums may change: a relative 1e-12 is hundreds of ε for the few dozen
  // operations per unknown of one cycle; common practice).
  for (const auto& [grid, matrix] :
       {std::pair<nkit::structured_grid, nkit::sparse_matrix>{nkit::structured_grid({20, 20}, 2),
                                                              coupled_diffusion({20, 20}, {1.0, 0.1}, 0.01)},
        {nkit::structured_grid({6, 6, 8}, 3), coupled_diffusion({6, 6, 8}, {1.0, 0.3, 0.1}, 0.01)}}) {
    const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(matrix.rows(), 1.0, 3.0);
    const Eigen::VectorXd balanced = apply_on_split(grid, matrix, r, {}, 0);
    const Eigen::VectorXd first_only = apply_on_split(grid, matrix, r, {}, 1);
    const Eigen::VectorXd uneven = apply_on_split(grid, matrix, r, {}, 2);
    INFO("grid " << grid.description());
    CHECK((balanced - first_only).norm() <= 1e-12 * balanced.norm());
    CHECK((balanced - uneven).norm() <= 1e-12 * balanced.norm());
  }
}

TEST_CASE("system structured multigrid settings reach hypre, moves hand the hierarchy over",
          "[mpi][multigrid][structured]") {
  const nkit::structured_grid grid({32, 32}, 2);
  const nkit::sparse_matrix global = coupled_diffusion({32, 32}, {1.0, 0.1}, 0.01);
  const std::pair<int, int> layers = system_layer_range(32);
  const Eigen::Index first = layers.first * 64, end = layers.second * 64;
  const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(global.rows(), 1.0, 3.0);
  nkit::system_structured_multigrid_preconditioner standard(MPI_COMM_WORLD, grid);
  const Eigen::VectorXd once = apply_system_to_rows(standard, global, first, end, r);
  const Eigen::VectorXd again = apply_system_to_rows(standard, global, first, end, r);
  CHECK(standard.stencil_size(0) == 6);  // five-point diffusion and the exchange with variable 1
  CHECK(standard.stencil_size(1) == 6);
  CHECK(standard.box_lower()[1] == layers.first);
  CHECK(standard.box_upper()[1] == layers.second - 1);
  CHECK((once - again).norm() == 0.0);
  int releases = -1;
  static_cast<void>(apply_system_to_rows(standard, global, first, end, r, &releases));
  CHECK(releases == 0);
  nkit::system_structured_multigrid_settings releasing_settings;
  releasing_settings.release_assembled_jacobian_after_copy = true;
  nkit::system_structured_multigrid_preconditioner releasing(MPI_COMM_WORLD, grid, releasing_settings);
  const Eigen::VectorXd released = apply_system_to_rows(releasing, global, first, end, r, &releases);
  CHECK(releases == 1);
  CHECK((released - once).norm() == 0.0);
  nkit::sparse_matrix local = global.middleRows(first, end - first);
  local.makeCompressed();
  REQUIRE(standard.setup_from_matrix(local) == nkit::setup_status::ready);
  Eigen::VectorXd direct(local.rows());
  standard.apply(r.segment(first, local.rows()), direct);
  CHECK((direct - once).norm() == 0.0);
  // Moving hands the hierarchy over: the new owner applies the same operator, the old one has none.
  nkit::system_structured_multigrid_preconditioner moved(std::move(standard));
  Eigen::VectorXd after_move(local.rows());
  moved.apply(r.segment(first, local.rows()), after_move);
  CHECK((after_move - once).norm() == 0.0);
  CHECK_THROWS_AS(standard.apply(r.segment(first, local.rows()), after_move), std::logic_error);
  nkit::system_structured_multigrid_preconditioner assigned(MPI_COMM_WORLD, grid);
  assigned = std::move(moved);
  assigned.apply(r.segment(first, local.rows()), after_move);
  CHECK((after_move - once).norm() == 0.0);
  // Each other setting changes one application (a setting hypre ignored would not).
  const auto changed = [&](nkit::system_structured_multigrid_settings settings) {
    nkit::system_structured_multigrid_preconditioner other(MPI_COMM_WORLD, grid, settings);
    const Eigen::VectorXd z = apply_system_to_rows(other, global, first, end, r);
    return nkit_test::gather_all(MPI_COMM_WORLD, z - once).norm() > 1e-12 * once.norm();
  };
  nkit::system_structured_multigrid_settings settings;
  settings.smoother = nkit::system_multigrid_smoother::jacobi;
  CHECK(changed(settings));
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
}

TEST_CASE("system structured multigrid keeps GMRES iterations per Newton step nearly mesh independent",
          "[mpi][multigrid][structured]") {
  // Multigrid convergence factors bounded independently of h (Brandt 1977,
  // cited above) make GMRES iterations per Newton step at a fixed forcing
  // term nearly constant under refinement; target, as for the scalar
  // preconditioner (test_structured_multigrid.cpp): growth ≤ 1.5× from
  // n = 32 to n = 128 (16× the unknowns). Each rank solves the whole problem
  // on its own (MPI_COMM_SELF); the distributed fill is checked above.
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-8;
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 2000;
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-6;
  const auto per_step = [&](int n) {
    coupled_nonlinear_pair problem(n);
    using space_type = nkit::eigen_vector_space<>;
    nkit::any_preconditioner<space_type> preconditioner =
        nkit::system_structured_multigrid_preconditioner(MPI_COMM_SELF, nkit::structured_grid({n, n}, 2));
    nkit::newton_krylov_solver<space_type, nkit::any_preconditioner<space_type>> solver(settings, space_type(),
                                                                                        std::move(preconditioner));
    Eigen::VectorXd u = Eigen::VectorXd::Zero(problem.unknowns());
    const nkit::solve_report report = solver.solve(problem, u);
    REQUIRE(report.converged());
    REQUIRE(report.newton_steps > 0);
    return static_cast<double>(report.linear_iterations) / report.newton_steps;
  };
  const double coarse = per_step(32);
  const double fine = per_step(128);
  INFO("system structured multigrid: " << coarse << " GMRES iterations per Newton step at n = 32, " << fine
                                       << " at n = 128");
  CHECK(fine <= 1.5 * coarse);
}

TEST_CASE("system structured multigrid rejects bad input with the offending value named",
          "[mpi][multigrid][structured]") {
  using Catch::Matchers::Contains;
  CHECK_THROWS_WITH(nkit::system_structured_multigrid_preconditioner(MPI_COMM_WORLD, nkit::structured_grid({8, 8})),
                    Contains("needs at least two unknowns per cell") && Contains("unknowns_per_cell = 1"));
  nkit::system_structured_multigrid_settings settings;
  settings.smoothing_sweeps_before = 0;
  settings.smoothing_sweeps_after = 0;
  CHECK_THROWS_WITH(settings.validate(),
                    "nkit: system_structured_multigrid_settings.smoothing_sweeps_before + smoothing_sweeps_after must "
                    "be >= 1 (got 0)");
  settings = {};
  settings.cycles_per_application = 0;
  CHECK_THROWS_WITH(settings.validate(), Contains("system_structured_multigrid_settings.cycles_per_application"));
  settings = {};
  settings.smoothing_sweeps_after = -1;
  CHECK_THROWS_WITH(
      nkit::system_structured_multigrid_preconditioner(MPI_COMM_WORLD, nkit::structured_grid({8, 8}, 2), settings),
      Contains("system_structured_multigrid_settings.smoothing_sweeps_after"));
  settings = {};
  settings.smoother = static_cast<nkit::system_multigrid_smoother>(2);
  CHECK_THROWS_WITH(settings.validate(), Contains("system_structured_multigrid_settings.smoother must be one of"));

  CHECK_THROWS_WITH(nkit::system_structured_multigrid_preconditioner(MPI_COMM_WORLD, nkit::structured_grid({8}, 2)),
                    Contains("needs a 2-D or 3-D structured_grid (got 1 direction)"));
  nkit::system_structured_multigrid_preconditioner unused(MPI_COMM_WORLD, nkit::structured_grid({4, 4}, 2));
  Eigen::VectorXd r = Eigen::VectorXd::Ones(4), z;
  CHECK_THROWS_AS(unused.apply(r, z), std::logic_error);
  CHECK_THROWS_WITH(unused.stencil_size(2), Contains("variable 2 is not one of the grid's 2 unknowns per cell"));

  SECTION("a grid whose unknowns per cell do not match the Jacobian's size") {
    nkit::system_structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({8, 8}, 3));
    const auto [first, end] = system_layer_range(8);
    CHECK_THROWS_WITH(apply_system_to_rows(multigrid, coupled_diffusion({8, 8}, {1.0, 0.1}, 0.01), first * 16, end * 16,
                                           Eigen::VectorXd::Ones(128)),
                      Contains("the ranks hold 128 unknowns in all") && Contains("has 192"));
  }
  SECTION("a coupling beyond one cell (a periodic wrap), between different variables") {
    // On 8 x 8 with 2 unknowns per cell: unknown 1 is variable 1 of cell (0, 0), unknown 14 is
    // variable 0 of cell (7, 0), seven cells away along the same grid row.
    nkit::sparse_matrix periodic = coupled_diffusion({8, 8}, {1.0, 0.1}, 0.01);
    periodic.coeffRef(1, 14) = -0.5;
    periodic.coeffRef(14, 1) = -0.5;
    periodic.makeCompressed();
    nkit::system_structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({8, 8}, 2));
    const auto [first, end] = system_layer_range(8);
    if (first == 0) {
      CHECK_THROWS_WITH(apply_system_to_rows(multigrid, periodic, 16 * first, 16 * end, Eigen::VectorXd::Ones(128)),
                        Contains("couples unknown 1 (variable 1 of cell 0) with unknown 14 (cell 7), which is not a "
                                 "neighbour on the grid"));
    } else {
      CHECK_THROWS_AS(apply_system_to_rows(multigrid, periodic, 16 * first, 16 * end, Eigen::VectorXd::Ones(128)),
                      std::invalid_argument);
    }
  }
  SECTION("a vector of another length than this rank's rows") {
    nkit::system_structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({8, 8}, 2));
    const auto [first, end] = system_layer_range(8);
    apply_system_to_rows(multigrid, coupled_diffusion({8, 8}, {1.0, 0.1}, 0.01), first * 16, end * 16,
                         Eigen::VectorXd::Ones(128));
    Eigen::VectorXd out;
    CHECK_THROWS_WITH(multigrid.apply(Eigen::VectorXd::Ones((end - first) * 16 + 1), out),
                      Contains("apply got a vector of " + std::to_string((end - first) * 16 + 1) + " entries"));
  }
  if (nkit_test::world_size() > 1) {
    SECTION("ranks whose rows are not whole grid rows of whole cells") {
      // Rank 0 takes one unknown more than its grid rows (half a cell): every rank must throw.
      nkit::system_structured_multigrid_preconditioner multigrid(MPI_COMM_WORLD, nkit::structured_grid({8, 8}, 2));
      const auto [first, end] = system_layer_range(8);
      const Eigen::Index shift = nkit_test::world_rank() == 0 ? 0 : 1;
      const Eigen::Index last = end == 8 ? 128 : end * 16 + 1;
      CHECK_THROWS_WITH(apply_system_to_rows(multigrid, coupled_diffusion({8, 8}, {1.0, 0.1}, 0.01), first * 16 + shift,
                                             last, Eigen::VectorXd::Ones(128)),
                        Contains("whole layers of the slowest grid direction (multiples of 16 unknowns: 2 per cell)"));
    }
  }
}
