// Sparsity patterns of grid stencils, column coloring and the sparse
// Jacobian by colored finite differences, standalone and through the Newton
// driver.
#include <Eigen/SparseCore>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/jacobian/column_coloring.hpp>
#include <nkit/jacobian/sparse_jacobian.hpp>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <vector>

#include "problems/model_problem/model_problem.hpp"
#include "support/matchers.hpp"

using nkit_problems::heat_conduction_model_problem;

namespace {

/// A smooth, non-trivial temperature field on the model problem's grid
/// (invented demo data: any state with |T| <= 1 serves).
Eigen::VectorXd sample_state(int n) {
  Eigen::VectorXd t(n * n);
  for (int j = 0; j < n; ++j) {
    for (int i = 0; i < n; ++i) {
      const double x = (i + 0.5) / n, y = (j + 0.5) / n;
      t(i + n * j) = 0.6 * std::sin(3.14159 * x) * std::sin(3.14159 * y) + 0.1 * std::cos(7.0 * x + 3.0 * y);
    }
  }
  return t;
}

Eigen::MatrixXd dense(const nkit::sparse_matrix& matrix) { return Eigen::MatrixXd(matrix); }

}  // namespace

TEST_CASE("grid stencil patterns have the stencil's rows", "[sparse_jacobian][pattern]") {
  // Definition of the stencils: interior rows have 3, 5, 9 and 7 cells of b unknowns each.
  const int b = GENERATE(1, 2, 3);
  const nkit::sparsity_pattern line = nkit::three_point_line_pattern(10, b);
  const nkit::sparsity_pattern five = nkit::five_point_grid_pattern(6, 5, b);
  const nkit::sparsity_pattern nine = nkit::nine_point_grid_pattern(6, 5, b);
  const nkit::sparsity_pattern seven = nkit::seven_point_grid_pattern(4, 5, 6, b);
  for (const auto* pattern : {&line, &five, &nine, &seven}) CHECK_NOTHROW(pattern->validate());
  CHECK(line.maximum_row_nonzeros() == 3 * b);
  CHECK(five.maximum_row_nonzeros() == 5 * b);
  CHECK(nine.maximum_row_nonzeros() == 9 * b);
  CHECK(seven.maximum_row_nonzeros() == 7 * b);
  CHECK(five.rows == 30 * b);
  // Cell (1,1) of the 6 × 5 grid couples to cell (2,2) in the nine-point stencil only.
  const int cell = 1 + 6 * 1, corner = 2 + 6 * 2;
  CHECK(nine.contains(b * cell, b * corner + b - 1));
  CHECK_FALSE(five.contains(b * cell, b * corner));
  // Corner cells of the five-point stencil have 3 cells, edge cells 4.
  CHECK(five.row_starts[1] - five.row_starts[0] == 3 * b);
  CHECK_THROWS_AS(nkit::five_point_grid_pattern(0, 3), std::invalid_argument);
  CHECK_THROWS_AS(nkit::nine_point_grid_pattern(3, 3, 0), std::invalid_argument);
}

TEST_CASE("the pattern of an assembled matrix round-trips", "[sparse_jacobian][pattern]") {
  const nkit::sparsity_pattern five = nkit::five_point_grid_pattern(7, 4);
  nkit::sparse_matrix zero = nkit::zero_matrix_with_pattern(five);
  nkit::sparsity_pattern back = nkit::pattern_of(zero);
  back.coloring_order = five.coloring_order;
  CHECK(back == five);
  nkit::sparsity_pattern broken = five;
  broken.column_indices[1] = broken.column_indices[0];
  CHECK_THROWS_AS(broken.validate(), std::invalid_argument);
}

TEST_CASE("greedy column coloring reaches the optimal counts on grid stencils", "[sparse_jacobian][coloring]") {
  // Optimal counts 3 (1D 3-point), 5 (2D 5-point), 9 (2D 9-point), times b for
  // b unknowns per cell. Lower bound = widest row (T.F. Coleman & J.J. Moré,
  // "Estimation of sparse Jacobian matrices and graph coloring problems",
  // SIAM J. Numer. Anal. 20 (1983) 187–209); reached by the colorings
  // i mod 3 (1D), (i + 2j) mod 5 (5-point) and (i mod 3) + 3(j mod 3)
  // (9-point): every offset between two cells that share a row changes the
  // class, so no row holds two columns of one color. 3D 7-point: 7, the same
  // lower bound, reached by the class (i + 2j + 3k) mod 7. Natural-order
  // greedy gives 7 on the 5-point stencil, so the 2D/3D face-stencil helpers carry a grid-aware
  // visiting order (column_coloring.hpp).
  const int b = GENERATE(1, 2);
  const int n = 200;  // "large grid": 40 000 cells
  const auto check = [b](const nkit::sparsity_pattern& pattern, int expected) {
    const nkit::column_coloring coloring = nkit::color_columns(pattern);
    CHECK(coloring.colors == expected * b);
    CHECK(nkit::is_structurally_orthogonal(pattern, coloring));
  };
  check(nkit::three_point_line_pattern(n * n, b), 3);
  check(nkit::five_point_grid_pattern(n, n, b), 5);
  check(nkit::nine_point_grid_pattern(n, n, b), 9);
  check(nkit::seven_point_grid_pattern(30, 31, 32, b), 7);

  nkit::sparsity_pattern natural = nkit::five_point_grid_pattern(n, n, b);
  natural.coloring_order.clear();
  const nkit::column_coloring natural_coloring = nkit::color_columns(natural);
  CHECK(nkit::is_structurally_orthogonal(natural, natural_coloring));
  CHECK(natural_coloring.colors >= 5 * b);  // never below the lower bound
}

TEST_CASE("a coloring that merges two columns of one row is rejected", "[sparse_jacobian][coloring]") {
  const nkit::sparsity_pattern line = nkit::three_point_line_pattern(6);
  nkit::column_coloring coloring = nkit::color_columns(line);
  coloring.color_of_column[1] = coloring.color_of_column[0];
  CHECK_FALSE(nkit::is_structurally_orthogonal(line, coloring));
}

TEST_CASE("colored finite differences match dense differences and automatic differentiation",
          "[sparse_jacobian][finite_difference]") {
  const int n = 12;
  heat_conduction_model_problem problem(n);
  const Eigen::VectorXd u = sample_state(n);
  Eigen::VectorXd r(u.size());
  problem(u, r);
  auto evaluate = [&problem](const Eigen::VectorXd& x, Eigen::VectorXd& out) { problem(x, out); };

  nkit::colored_difference_jacobian colored;
  CHECK(colored.prepare(nkit::five_point_grid_pattern(n, n)));
  CHECK(colored.colors() == 5);
  nkit::sparse_matrix jacobian;
  colored.assemble(evaluate, u, r, jacobian);
  const Eigen::MatrixXd from_colors = dense(jacobian);

  // Dense column-by-column forward differences with the same steps
  // h_j = (u_j + √ε·max(|u_j|,1)) − u_j: colored grouping changes nothing for
  // rows touched by one column of the group, so the two agree to rounding.
  const double root_epsilon = std::sqrt(std::numeric_limits<double>::epsilon());
  Eigen::MatrixXd column_by_column(u.size(), u.size());
  Eigen::VectorXd shifted = u, shifted_residual(u.size());
  for (Eigen::Index j = 0; j < u.size(); ++j) {
    const double step = (u(j) + root_epsilon * std::max(std::abs(u(j)), 1.0) * (u(j) < 0 ? -1.0 : 1.0)) - u(j);
    shifted(j) = u(j) + step;
    problem(shifted, shifted_residual);
    column_by_column.col(j) = (shifted_residual - r) / step;
    shifted(j) = u(j);
  }
  CHECK((from_colors - column_by_column).cwiseAbs().maxCoeff() <= 1e-12 * column_by_column.cwiseAbs().maxCoeff());

  // Exact Jacobian from forward-mode AD on unit vectors.
  auto differentiated = nkit::with_automatic_differentiation(problem);
  Eigen::MatrixXd exact(u.size(), u.size());
  Eigen::VectorXd unit = Eigen::VectorXd::Zero(u.size()), column(u.size());
  for (Eigen::Index j = 0; j < u.size(); ++j) {
    unit(j) = 1.0;
    differentiated.jacobian_product(u, unit, column);
    exact.col(j) = column;
    unit(j) = 0.0;
  }
  // Forward-difference error per entry (sparse_jacobian.hpp): truncation
  // ½ h |∂²R_i/∂u_j²| + rounding 2 ε Σ|terms of R_i| / h, with h = √ε for
  // |u| <= 1. For k(T) = 1 + T², |T| <= 1: |∂²(flux)/∂T²| <= 4 per face and
  // 6 per wall term, so |R''| <= 30; R_i sums at most ~10 terms of size <= 4,
  // so Σ|terms| <= 40 (bounds derived from the flux formulas of model_problem.hpp).
  const double epsilon = std::numeric_limits<double>::epsilon();
  const double tolerance = 0.5 * root_epsilon * 30.0 + 2.0 * epsilon * 40.0 / root_epsilon;
  CHECK((from_colors - exact).cwiseAbs().maxCoeff() <= tolerance);
  // And the analytic Jacobian of model_problem.hpp agrees with AD to rounding.
  nkit::sparse_matrix analytic;
  problem.assemble_jacobian(u, analytic);
  CHECK((dense(analytic) - exact).cwiseAbs().maxCoeff() <= 1e-13);
}

TEST_CASE("colored differences never evaluate a perturbed state the caller refuses", "[sparse_jacobian][bounds]") {
  // States are vetted before evaluation (the driver passes its bounds and
  // is_admissible here). With every entry of u exactly on an upper bound of
  // 0.5, forward steps leave the box: each color must flip to the other side,
  // and the entries stay as accurate (one-sided differences, same error bound).
  const int n = 10;
  heat_conduction_model_problem problem(n);
  const Eigen::VectorXd u = Eigen::VectorXd::Constant(n * n, 0.5);
  Eigen::VectorXd r(u.size());
  problem(u, r);
  long refused = 0, evaluated_outside = 0;
  auto evaluate = [&](const Eigen::VectorXd& x, Eigen::VectorXd& out) {
    if (x.maxCoeff() > 0.5) ++evaluated_outside;
    problem(x, out);
  };
  auto inside = [&](const Eigen::VectorXd& x) {
    const bool ok = x.maxCoeff() <= 0.5;
    refused += ok ? 0 : 1;
    return ok;
  };
  nkit::colored_difference_jacobian colored;
  colored.prepare(nkit::five_point_grid_pattern(n, n));
  nkit::sparse_matrix vetted, free_steps;
  colored.assemble(evaluate, u, r, vetted, inside);
  CHECK(refused == colored.colors());  // every color's forward step was refused once
  CHECK(evaluated_outside == 0);
  colored.assemble([&](const Eigen::VectorXd& x, Eigen::VectorXd& out) { problem(x, out); }, u, r, free_steps);
  // Backward and forward differences differ by about h |R''| <= √ε · 30 (bound as above).
  const double root_epsilon = std::sqrt(std::numeric_limits<double>::epsilon());
  CHECK((dense(vetted) - dense(free_steps)).cwiseAbs().maxCoeff() <= root_epsilon * 30.0 + 1e-6);
}

TEST_CASE("colored differences reuse the coloring while the pattern is unchanged", "[sparse_jacobian][reuse]") {
  const int n = 8;
  heat_conduction_model_problem problem(n);
  Eigen::VectorXd u = sample_state(n), r(u.size());
  int evaluations = 0;
  auto evaluate = [&](const Eigen::VectorXd& x, Eigen::VectorXd& out) {
    ++evaluations;
    problem(x, out);
  };
  nkit::colored_difference_jacobian colored;
  nkit::sparse_matrix jacobian;
  const nkit::sparsity_pattern pattern = nkit::five_point_grid_pattern(n, n);
  for (int assembly = 0; assembly < 3; ++assembly) {
    u *= 1.1;  // values change, the pattern does not
    problem(u, r);
    colored.prepare(pattern);
    const double* values_before = jacobian.nonZeros() > 0 ? jacobian.valuePtr() : nullptr;
    colored.assemble(evaluate, u, r, jacobian);
    if (values_before != nullptr) CHECK(jacobian.valuePtr() == values_before);  // storage reused
  }
  CHECK(colored.symbolic_builds() == 1);
  CHECK(evaluations == 3 * colored.colors());  // one residual evaluation per color
  CHECK(colored.prepare(nkit::nine_point_grid_pattern(n, n)));
  CHECK(colored.symbolic_builds() == 2);
}

namespace {
struct residual_only {
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const { r = u; }
};
/// The model problem offering only a column-major assemble_jacobian.
struct column_major_model {
  heat_conduction_model_problem problem;
  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& r) const { problem(t, r); }
  void assemble_jacobian(const Eigen::VectorXd& t, nkit::column_major_sparse_matrix& jacobian) const {
    problem.assemble_jacobian(t, jacobian);
  }
};
}  // namespace

TEST_CASE("the driver accepts row-major, column-major and pattern-based Jacobians", "[sparse_jacobian][newton]") {
  static_assert(nkit::assembles_row_major_jacobian_v<heat_conduction_model_problem, Eigen::VectorXd>);
  static_assert(nkit::assembles_column_major_jacobian_v<column_major_model, Eigen::VectorXd>);
  static_assert(!nkit::can_assemble_jacobian_v<residual_only, Eigen::VectorXd>);
  const int n = 10;
  const Eigen::VectorXd u = sample_state(n);
  nkit::sparse_matrix reference;
  heat_conduction_model_problem(n).assemble_jacobian(u, reference);

  // A preconditioner that records the Jacobian it is given at the first setup.
  nkit::sparse_matrix seen;
  auto recorder = nkit::make_preconditioner([](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = r; },
                                            [&seen](const nkit::preconditioner_context<>& context) {
                                              if (seen.nonZeros() == 0) seen = context.assembled_jacobian();
                                            });
  nkit::newton_settings settings;
  settings.newton_step_budget = 1;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, decltype(recorder)> solver(settings, {}, recorder);

  SECTION("column-major assembly is converted") {
    column_major_model model{heat_conduction_model_problem(n)};
    Eigen::VectorXd state = u;
    const nkit::solve_report report = solver.solve(model, state);
    CHECK(report.jacobian_assemblies == 1);
  }
  SECTION("a pattern gives colored finite differences") {
    auto model = nkit::with_jacobian_pattern(heat_conduction_model_problem(n), nkit::five_point_grid_pattern(n, n));
    Eigen::VectorXd state = u;
    const nkit::solve_report report = solver.solve(model, state);
    CHECK(report.jacobian_assemblies == 1);
    // Every residual evaluation is counted: iterates and trial points, one
    // per forward-difference J·v, and 5 (the color count) per assembly.
    CHECK(report.residual_evaluations ==
          report.calls.residual + report.jacobian_vector_products + 5 * report.jacobian_assemblies);
    CHECK(report.time.jacobian_assembly > 0.0);
  }
  REQUIRE(seen.nonZeros() > 0);
  // Same tolerance argument as the colored/AD comparison above (1.5e-6);
  // exact for the column-major copy.
  CHECK((dense(seen) - dense(reference)).cwiseAbs().maxCoeff() <= 2e-6);
}

TEST_CASE("colored assembly respects the residual-evaluation budget", "[sparse_jacobian][newton][budget]") {
  const int n = 8;
  auto model = nkit::with_jacobian_pattern(heat_conduction_model_problem(n), nkit::five_point_grid_pattern(n, n));
  nkit::newton_settings settings;
  settings.residual_evaluation_budget = 3;  // R(u0) + 2 of the 5 colors
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
  Eigen::VectorXd state = Eigen::VectorXd::Zero(n * n);
  const nkit::solve_report report = solver.solve(model, state);
  CHECK(report.reason == nkit::stop_reason::residual_evaluation_budget_spent);
  CHECK(report.residual_evaluations == 3);
  CHECK(state.allFinite());
}
