// Coupled problems by field: the field layout's index maps, gather/scatter,
// sub-blocks of a sparse matrix, per-field residual norms in the report, and
// the field-split preconditioners (block diagonal, block Gauss–Seidel, Schur
// complement factorisation) against the published iteration bounds.
#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <limits>
#include <nkit/fields/field_blocks.hpp>
#include <nkit/fields/field_layout.hpp>
#include <nkit/fields/field_residual_norms.hpp>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <nkit/krylov/gmres.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/field_split.hpp>
#include <nkit/preconditioners/inner_gmres.hpp>
#include <nkit/preconditioners/jacobi.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/report/report_output.hpp>
#if NKIT_HAS_JSON
#include <nkit/report/report_json.hpp>
#endif
#include <set>
#include <sstream>
#include <string>
#include <vector>

namespace {

using nkit::field_layout;
using nkit::field_ordering;

field_layout velocity_pressure(field_ordering ordering) {
  return field_layout({{"velocity", 2}, {"pressure", 1}}, 3, ordering);
}

/// A deterministic sparse n × n matrix with a few off-diagonals (invented data).
nkit::sparse_matrix sample_matrix(int n) {
  std::vector<Eigen::Triplet<double>> entries;
  for (int i = 0; i < n; ++i) {
    entries.emplace_back(i, i, 4.0 + 0.1 * i);
    if (i + 1 < n) entries.emplace_back(i, i + 1, -1.0 - 0.01 * i);
    if (i >= 3) entries.emplace_back(i, i - 3, 0.5 + 0.02 * i);
    if (i + 5 < n) entries.emplace_back(i, i + 5, -0.25);
  }
  nkit::sparse_matrix m(n, n);
  m.setFromTriplets(entries.begin(), entries.end());
  m.makeCompressed();
  return m;
}

std::string message_of(const std::function<void()>& action) {
  try {
    action();
  } catch (const std::invalid_argument& error) {
    return error.what();
  }
  return "no exception";
}

}  // namespace

TEST_CASE("field layout: index maps of both orderings", "[fields]") {
  // Expected indices follow from the definitions in fields/field_layout.hpp
  // (velocity 2 unknowns per cell, pressure 1, 3 cells, 9 unknowns).
  const field_layout contiguous = velocity_pressure(field_ordering::contiguous_by_field);
  const field_layout interleaved = velocity_pressure(field_ordering::interleaved_by_cell);
  for (const field_layout* layout : {&contiguous, &interleaved}) {
    CHECK(layout->size() == 9);
    CHECK(layout->field_size(0) == 6);
    CHECK(layout->field_size(1) == 3);
    CHECK(layout->field_index("pressure") == 1);
  }
  CHECK(contiguous.global_index(0, 1, 1) == 3);
  CHECK(contiguous.global_index(1, 0, 0) == 6);
  CHECK(contiguous.global_index(1, 2, 0) == 8);
  CHECK(interleaved.global_index(0, 1, 1) == 4);
  CHECK(interleaved.global_index(1, 0, 0) == 2);
  CHECK(interleaved.global_index(1, 2, 0) == 8);
  CHECK(contiguous.indices(1) == std::vector<int>{6, 7, 8});
  CHECK(interleaved.indices(1) == std::vector<int>{2, 5, 8});
  CHECK(interleaved.indices(0) == std::vector<int>{0, 1, 3, 4, 6, 7});

  // (field, cell, component) <-> global is a bijection onto 0 .. 8.
  for (const field_layout* layout : {&contiguous, &interleaved}) {
    std::set<Eigen::Index> seen;
    for (int f = 0; f < layout->field_count(); ++f) {
      for (Eigen::Index cell = 0; cell < layout->cells(); ++cell) {
        for (int c = 0; c < layout->unknowns_per_cell(f); ++c) {
          const Eigen::Index global = layout->global_index(f, cell, c);
          const nkit::field_location where = layout->locate(global);
          CHECK(where.field == f);
          CHECK(where.cell == cell);
          CHECK(where.component == c);
          seen.insert(global);
        }
      }
    }
    CHECK(seen.size() == 9);
    CHECK(*seen.begin() == 0);
    CHECK(*seen.rbegin() == 8);
  }
}

TEST_CASE("field layout: gather then scatter restores the vector", "[fields]") {
  for (const auto ordering : {field_ordering::contiguous_by_field, field_ordering::interleaved_by_cell}) {
    const field_layout layout({{"u", 1}, {"v", 3}, {"w", 2}}, 5, ordering);
    Eigen::VectorXd v(layout.size());
    for (Eigen::Index i = 0; i < v.size(); ++i) v(i) = std::sin(1.0 + static_cast<double>(i));
    Eigen::VectorXd rebuilt = Eigen::VectorXd::Zero(layout.size());
    Eigen::VectorXd sub;
    for (int f = 0; f < layout.field_count(); ++f) {
      layout.gather(f, v, sub);
      REQUIRE(sub.size() == layout.field_size(f));
      for (Eigen::Index cell = 0; cell < layout.cells(); ++cell) {  // local index = cell·b + component
        for (int c = 0; c < layout.unknowns_per_cell(f); ++c) {
          CHECK(sub(cell * layout.unknowns_per_cell(f) + c) == v(layout.global_index(f, cell, c)));
        }
      }
      layout.scatter(f, sub, rebuilt);
    }
    CHECK(rebuilt == v);  // copies only: exact
  }
}

TEST_CASE("field blocks: every sub-block equals the dense reference", "[fields]") {
  for (const auto ordering : {field_ordering::contiguous_by_field, field_ordering::interleaved_by_cell}) {
    const field_layout layout({{"a", 2}, {"b", 1}}, 4, ordering);
    const nkit::sparse_matrix matrix = sample_matrix(static_cast<int>(layout.size()));
    const Eigen::MatrixXd dense(matrix);
    for (int f = 0; f < 2; ++f) {
      for (int g = 0; g < 2; ++g) {
        const nkit::sparse_matrix block = nkit::field_block(layout, matrix, f, g);
        Eigen::MatrixXd reference(layout.field_size(f), layout.field_size(g));
        for (Eigen::Index i = 0; i < reference.rows(); ++i) {
          for (Eigen::Index j = 0; j < reference.cols(); ++j) {
            reference(i, j) =
                dense(layout.indices(f)[static_cast<std::size_t>(i)], layout.indices(g)[static_cast<std::size_t>(j)]);
          }
        }
        CHECK(Eigen::MatrixXd(block) == reference);  // copies only: exact
      }
    }
  }
}

TEST_CASE("field residual norms add up in quadrature to the total norm", "[fields]") {
  for (const auto ordering : {field_ordering::contiguous_by_field, field_ordering::interleaved_by_cell}) {
    const field_layout layout({{"u", 2}, {"v", 1}, {"w", 3}}, 7, ordering);
    Eigen::VectorXd r(layout.size());
    for (Eigen::Index i = 0; i < r.size(); ++i) r(i) = std::cos(0.7 * static_cast<double>(i)) * (1.0 + i);
    const std::vector<double> norms = nkit::field_residual_norms(layout, r);
    REQUIRE(norms.size() == 3);
    double squares = 0.0;
    for (double norm : norms) squares += norm * norm;
    // The fields partition the entries: equal up to rounding, n·ε relative (common practice).
    CHECK_THAT(std::sqrt(squares), Catch::Matchers::WithinRel(r.norm(), 42 * std::numeric_limits<double>::epsilon()));
    Eigen::VectorXd sub;
    layout.gather(1, r, sub);
    CHECK_THAT(norms[1], Catch::Matchers::WithinRel(sub.norm(), 1e-15));
  }
}

TEST_CASE("field layout and field split: bad input names the setting and value", "[fields][bad_input]") {
  CHECK(message_of([] { field_layout({}, 3); }) == "nkit: field_layout needs at least one field (got none)");
  CHECK(message_of([] { field_layout({{"", 1}}, 3); }) == "nkit: field_layout field 0 has an empty name");
  CHECK(message_of([] {
          field_layout({{"u", 1}, {"u", 2}}, 3);
        }) == "nkit: field_layout field 1 repeats the name \"u\" of field 0");
  CHECK(message_of([] {
          field_layout({{"u", 1}, {"v", 0}}, 3);
        }) == "nkit: field_layout field 1 (\"v\") unknowns_per_cell must be >= 1 (got 0)");
  CHECK(message_of([] { field_layout({{"u", 1}}, 0); }) == "nkit: field_layout cells must be >= 1 (got 0)");
  const field_layout layout({{"u", 1}, {"v", 2}}, 4);
  CHECK(message_of([&] {
          Eigen::VectorXd sub;
          layout.gather(0, Eigen::VectorXd::Zero(11), sub);
        }) == "nkit: field_layout gather: the full vector has 11 entries, but the layout describes 12 unknowns");
  CHECK(message_of([&] { layout.field_index("pressure"); }) == "nkit: field_layout has no field named \"pressure\"");
  CHECK(message_of([&] { layout.global_index(1, 0, 2); }) ==
        "nkit: field_layout component of field \"v\" must be in [0, 1] (got 2)");
  CHECK(message_of([&] {
          nkit::field_split_preconditioner p(layout, {},
                                             nkit::make_inner_preconditioners(nkit::jacobi_preconditioner{}));
        }) == "nkit: field_split_preconditioner needs one inner preconditioner per field (got 1 for 2 fields)");
  CHECK(message_of([] {
          nkit::field_split_settings settings;
          settings.form = nkit::field_split_form::schur_complement_factorization;
          nkit::field_split_preconditioner p(
              field_layout({{"u", 1}, {"v", 1}, {"w", 1}}, 2), settings,
              nkit::make_inner_preconditioners(nkit::jacobi_preconditioner{}, nkit::jacobi_preconditioner{},
                                               nkit::jacobi_preconditioner{}));
        }) ==
        "nkit: field_split_settings.form = schur_complement_factorization and second_field_uses_schur_complement "
        "need exactly two fields (the layout has 3)");
  CHECK(message_of([&] {
          nkit::field_split_settings settings;
          settings.second_field_uses_schur_complement = true;
          settings.schur_complement = nkit::schur_complement_approximation::user_supplied;
          nkit::field_split_preconditioner p(
              layout, settings,
              nkit::make_inner_preconditioners(nkit::jacobi_preconditioner{}, nkit::jacobi_preconditioner{}));
        }) ==
        "nkit: field_split_settings.schur_complement = user_supplied needs a schur_complement_builder (got none)");
}

namespace {

/// A saddle-point system [A B; C 0] (invented data): the first field has 2
/// unknowns per cell, the second 1, so B is 2n × n (full column rank: its
/// entries (2i, i) are nonzero and no other entry of row 2i exists) and
/// C = Bᵀ; A = tridiagonal (3 on the diagonal, −1 beside it, SPD by diagonal
/// dominance) or diagonal. S = −C A⁻¹ B is then nonsingular, and the
/// eigenvalue 1 of diag(A, S)⁻¹J has the null space of C as eigenspace
/// (dimension n), so all three eigenvalues of Murphy, Golub & Wathen occur.
/// Fields interleaved by cell.
struct saddle_point_system {
  int n = 6;
  field_layout layout{{{"first", 2}, {"second", 1}}, 6, field_ordering::interleaved_by_cell};
  nkit::sparse_matrix matrix;
  explicit saddle_point_system(bool diagonal_first_block = false) {
    std::vector<Eigen::Triplet<double>> entries;
    const auto u = [&](int local) { return static_cast<int>(layout.indices(0)[static_cast<std::size_t>(local)]); };
    const auto p = [&](int cell) { return static_cast<int>(layout.global_index(1, cell, 0)); };
    const auto coupling = [&](int local, int cell, double value) {
      entries.emplace_back(u(local), p(cell), value);  // B
      entries.emplace_back(p(cell), u(local), value);  // C = Bᵀ
    };
    for (int k = 0; k < 2 * n; ++k) {
      entries.emplace_back(u(k), u(k), diagonal_first_block ? 2.0 + 0.25 * k : 3.0);
      if (!diagonal_first_block && k > 0) entries.emplace_back(u(k), u(k - 1), -1.0);
      if (!diagonal_first_block && k + 1 < 2 * n) entries.emplace_back(u(k), u(k + 1), -1.0);
    }
    for (int i = 0; i < n; ++i) {
      coupling(2 * i, i, 1.0 + 0.1 * i);
      coupling(2 * i + 1, i, 0.5);
      if (i + 1 < n) coupling(2 * i + 1, i + 1, -0.3);
    }
    matrix.resize(3 * n, 3 * n);
    matrix.setFromTriplets(entries.begin(), entries.end());
    matrix.makeCompressed();
  }
};

/// S = D − C A⁻¹ B exactly, by a dense LU (small blocks only).
void exact_schur_complement(const nkit::two_field_blocks& blocks, nkit::sparse_matrix& schur) {
  const Eigen::MatrixXd a(blocks.first_diagonal);
  const Eigen::MatrixXd b(blocks.first_to_second);
  const Eigen::MatrixXd c(blocks.second_to_first);
  const Eigen::MatrixXd d(blocks.second_diagonal);
  const Eigen::MatrixXd s = d - c * a.partialPivLu().solve(b);
  schur = s.sparseView();
  schur.makeCompressed();
}

/// GMRES iterations to relative residual 1e-12 on the system with the given
/// field split (exact inner solves: sparse LU per block).
int gmres_iterations(const saddle_point_system& system, nkit::field_split_settings settings,
                     nkit::schur_complement_builder builder = {}) {
  nkit::field_split_preconditioner preconditioner(
      system.layout, settings,
      nkit::make_inner_preconditioners(nkit::sparse_direct_preconditioner{}, nkit::sparse_direct_preconditioner{}),
      std::move(builder));
  REQUIRE(preconditioner.build(system.matrix) == nkit::setup_status::ready);
  Eigen::VectorXd rhs(system.matrix.rows());
  for (Eigen::Index i = 0; i < rhs.size(); ++i) rhs(i) = 1.0 + std::sin(static_cast<double>(i));
  Eigen::VectorXd x = Eigen::VectorXd::Zero(rhs.size());
  nkit::gmres_settings gmres;
  gmres.restart_length = 20;
  gmres.maximum_iterations = 20;
  nkit::gmres_solver<> solver(gmres);
  nkit::matrix_operator<nkit::sparse_matrix> op(system.matrix);
  const nkit::linear_solve_result result = solver.solve(op, preconditioner, rhs, x, 1e-12, nkit::initial_guess::zero);
  CHECK(result.converged());
  // The solution itself, against Eigen's dense LU: the 1e-12 residual and a
  // condition number below 1e3 for this small system bound the error by 1e-9.
  const Eigen::VectorXd reference = Eigen::MatrixXd(system.matrix).partialPivLu().solve(rhs);
  CHECK((x - reference).norm() <= 1e-9 * reference.norm());
  return result.iterations;
}

}  // namespace

TEST_CASE("field split with exact Schur complement: GMRES iteration counts of Murphy, Golub & Wathen", "[fields]") {
  // M.F. Murphy, G.H. Golub & A.J. Wathen, SIAM J. Sci. Comput. 21 (2000)
  // 1969–1972: for [A B; C 0] with exact A⁻¹ and S⁻¹ (S = −C A⁻¹ B), the
  // block-diagonal preconditioner diag(A, S) leaves at most 3 distinct
  // eigenvalues (here 1 and (1 ± i√3)/2) and block-triangular ones at most 2
  // (the eigenvalue 1 with a Jordan block of size 2: (T − I)² = 0), so GMRES
  // ends in 3 and 2 iterations; the Schur factorisation with exact S is J
  // itself, 1 iteration. "Ends" = relative residual 1e-12 here: round-off on a
  // system this small stays far below that.
  const saddle_point_system system;
  nkit::field_split_settings settings;
  settings.second_field_uses_schur_complement = true;
  settings.schur_complement = nkit::schur_complement_approximation::user_supplied;

  settings.form = nkit::field_split_form::block_diagonal;
  const int diagonal = gmres_iterations(system, settings, exact_schur_complement);
  CHECK(diagonal <= 3);
  settings.form = nkit::field_split_form::block_lower_triangular;
  const int lower = gmres_iterations(system, settings, exact_schur_complement);
  CHECK(lower <= 2);
  settings.form = nkit::field_split_form::block_upper_triangular;
  const int upper = gmres_iterations(system, settings, exact_schur_complement);
  CHECK(upper <= 2);
  settings.form = nkit::field_split_form::schur_complement_factorization;
  const int factorization = gmres_iterations(system, settings, exact_schur_complement);
  CHECK(factorization == 1);
  // Without S the second block is D = 0: nothing to factorise, the bound does not apply.
}

TEST_CASE("field split: the default Schur complement is exact when the first block is diagonal", "[fields]") {
  // S = D − C diag(A)⁻¹ B equals D − C A⁻¹ B when A is diagonal, so the
  // factorisation [A 0; C S][I A⁻¹B; 0 I] is J and GMRES takes 1 iteration
  // (the identity above; block preconditioners: Elman, Silvester & Wathen 2014, ch. 9).
  const saddle_point_system system(/*diagonal_first_block=*/true);
  nkit::field_split_settings settings;
  settings.form = nkit::field_split_form::schur_complement_factorization;
  CHECK(gmres_iterations(system, settings) == 1);
  settings.form = nkit::field_split_form::block_lower_triangular;
  settings.second_field_uses_schur_complement = true;
  CHECK(gmres_iterations(system, settings) <= 2);  // Murphy, Golub & Wathen 2000, as above
}

namespace {

/// A steady coupled reaction–diffusion pair on (0, 1), n interior nodes per
/// field, h = 1/(n + 1), zero Dirichlet values (a scenario of our own):
///   −u'' + u + u³ − a v = 1
///   −d v'' + v − b u² = 0
/// a couples u to v, b couples v to u; a = 0 makes J block lower triangular.
class coupled_reaction_diffusion {
 public:
  coupled_reaction_diffusion(int nodes, double a, double b, field_ordering ordering)
      : m_n(nodes), m_a(a), m_b(b), m_layout({{"u", 1}, {"v", 1}}, nodes, ordering) {}

  const nkit::field_layout& field_layout() const { return m_layout; }

  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& r) const {
    const double inverse_h2 = (m_n + 1.0) * (m_n + 1.0);
    for (int i = 0; i < m_n; ++i) {
      const double u = x(at(0, i)), v = x(at(1, i));
      const double u_left = i > 0 ? x(at(0, i - 1)) : 0.0, u_right = i + 1 < m_n ? x(at(0, i + 1)) : 0.0;
      const double v_left = i > 0 ? x(at(1, i - 1)) : 0.0, v_right = i + 1 < m_n ? x(at(1, i + 1)) : 0.0;
      r(at(0, i)) = inverse_h2 * (2.0 * u - u_left - u_right) + u + u * u * u - m_a * v - 1.0;
      r(at(1, i)) = m_diffusion * inverse_h2 * (2.0 * v - v_left - v_right) + v - m_b * u * u;
    }
  }

  void assemble_jacobian(const Eigen::VectorXd& x, nkit::sparse_matrix& jacobian) const {
    const double inverse_h2 = (m_n + 1.0) * (m_n + 1.0);
    std::vector<Eigen::Triplet<double>> entries;
    for (int i = 0; i < m_n; ++i) {
      const double u = x(at(0, i));
      entries.emplace_back(at(0, i), at(0, i), 2.0 * inverse_h2 + 1.0 + 3.0 * u * u);
      entries.emplace_back(at(0, i), at(1, i), -m_a);
      entries.emplace_back(at(1, i), at(1, i), 2.0 * m_diffusion * inverse_h2 + 1.0);
      entries.emplace_back(at(1, i), at(0, i), -2.0 * m_b * u);
      if (i > 0) {
        entries.emplace_back(at(0, i), at(0, i - 1), -inverse_h2);
        entries.emplace_back(at(1, i), at(1, i - 1), -m_diffusion * inverse_h2);
      }
      if (i + 1 < m_n) {
        entries.emplace_back(at(0, i), at(0, i + 1), -inverse_h2);
        entries.emplace_back(at(1, i), at(1, i + 1), -m_diffusion * inverse_h2);
      }
    }
    jacobian.resize(2 * m_n, 2 * m_n);
    jacobian.setFromTriplets(entries.begin(), entries.end());
    jacobian.makeCompressed();
  }

  /// Exact J·v from the assembled Jacobian (so exact preconditioners give exact counts).
  void jacobian_product(const Eigen::VectorXd& x, const Eigen::VectorXd& v, Eigen::VectorXd& jv) const {
    nkit::sparse_matrix jacobian;
    assemble_jacobian(x, jacobian);
    jv = jacobian * v;
  }

 private:
  int at(int field, int cell) const { return static_cast<int>(m_layout.global_index(field, cell, 0)); }
  int m_n;
  double m_a, m_b;
  double m_diffusion = 0.1;
  nkit::field_layout m_layout;
};

struct newton_run {
  nkit::solve_report report;
  Eigen::VectorXd solution;
};

newton_run solve_coupled(const coupled_reaction_diffusion& problem, nkit::field_split_form form) {
  nkit::field_split_settings settings;
  settings.form = form;
  nkit::field_split_preconditioner preconditioner(
      problem.field_layout(), settings,
      nkit::make_inner_preconditioners(nkit::sparse_direct_preconditioner{}, nkit::sparse_direct_preconditioner{}));
  nkit::newton_settings newton;
  newton.relative_tolerance = 1e-10;
  newton.linear.restart_length = 50;
  newton.linear.maximum_iterations = 200;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::field_split_preconditioner> solver(
      newton, {}, std::move(preconditioner));
  newton_run run;
  run.solution = Eigen::VectorXd::Zero(problem.field_layout().size());
  coupled_reaction_diffusion copy = problem;
  run.report = solver.solve(copy, run.solution);
  return run;
}

}  // namespace

TEST_CASE("block Gauss-Seidel by field on a coupled reaction-diffusion Newton solve", "[fields][newton]") {
  const coupled_reaction_diffusion coupled(40, 2.0, 3.0, field_ordering::interleaved_by_cell);
  const newton_run diagonal = solve_coupled(coupled, nkit::field_split_form::block_diagonal);
  const newton_run lower = solve_coupled(coupled, nkit::field_split_form::block_lower_triangular);
  const newton_run upper = solve_coupled(coupled, nkit::field_split_form::block_upper_triangular);
  for (const newton_run* run : {&diagonal, &lower, &upper}) {
    CHECK(run->report.converged());
    // Same discrete solution: each run stops at ‖R‖ <= 1e-10 ‖R0‖; J⁻¹ is
    // bounded by about 1 here (diffusion plus identity), so the states agree to ~1e-9.
    CHECK((run->solution - diagonal.solution).norm() <= 1e-8 * diagonal.solution.norm());
  }
  // Recorded, not asserted: no theorem orders GMRES counts of block Jacobi and
  // block Gauss–Seidel for a general two-way coupling (docs/field_split.md).
  WARN("linear iterations: block diagonal "
       << diagonal.report.linear_iterations << ", block lower triangular " << lower.report.linear_iterations
       << ", block upper triangular " << upper.report.linear_iterations << "; Newton steps "
       << diagonal.report.newton_steps << ", " << lower.report.newton_steps << ", " << upper.report.newton_steps);

  // One-way coupling (a = 0): J is block lower triangular, so forward block
  // Gauss–Seidel with exact diagonal solves is J⁻¹ and every linear solve
  // takes one GMRES iteration (exact J·v).
  const coupled_reaction_diffusion one_way(40, 0.0, 3.0, field_ordering::contiguous_by_field);
  const newton_run exact = solve_coupled(one_way, nkit::field_split_form::block_lower_triangular);
  REQUIRE(exact.report.converged());
  for (const auto& record : exact.report.history) CHECK(record.linear_iterations == 1);
}

TEST_CASE("the report holds each field's residual norm at the start, per step and at the end", "[fields][report]") {
  const coupled_reaction_diffusion problem(20, 2.0, 3.0, field_ordering::interleaved_by_cell);
  const newton_run run = solve_coupled(problem, nkit::field_split_form::block_lower_triangular);
  const nkit::solve_report& report = run.report;
  REQUIRE(report.converged());
  REQUIRE(report.field_residuals.size() == 2);
  CHECK(report.field_residuals[0].name == "u");
  CHECK(report.field_residuals[1].name == "v");
  // The fields partition R: Σ_f ‖R_f‖² = ‖R‖² up to rounding (common practice: 1e-14 relative at 40 entries).
  const auto quadrature = [&](double first, double second) { return std::hypot(first, second); };
  CHECK_THAT(
      quadrature(report.field_residuals[0].initial_residual_norm, report.field_residuals[1].initial_residual_norm),
      Catch::Matchers::WithinRel(report.initial_residual_norm, 1e-14));
  CHECK_THAT(quadrature(report.field_residuals[0].final_residual_norm, report.field_residuals[1].final_residual_norm),
             Catch::Matchers::WithinRel(report.final_residual_norm, 1e-14));
  for (const auto& field : report.field_residuals) REQUIRE(field.history.size() == report.history.size());
  for (std::size_t i = 0; i < report.history.size(); ++i) {
    CHECK_THAT(quadrature(report.field_residuals[0].history[i], report.field_residuals[1].history[i]),
               Catch::Matchers::WithinRel(report.history[i].residual_norm, 1e-14));
  }
  // At u0 = 0: R_u = −1 at every node, R_v = 0 (the residual above).
  CHECK_THAT(report.field_residuals[0].initial_residual_norm, Catch::Matchers::WithinRel(std::sqrt(20.0), 1e-15));
  CHECK(report.field_residuals[1].initial_residual_norm == 0.0);

  std::ostringstream csv;
  nkit::write_history_csv(csv, report);
  const std::string text = csv.str();
  CHECK(text.substr(0, text.find('\n')).find(",residual_norm_u,residual_norm_v") != std::string::npos);
  std::ostringstream table;
  nkit::print_convergence_table(table, report);
  CHECK(table.str().find("residual norm per field (initial -> final):") != std::string::npos);
#if NKIT_HAS_JSON
  const nlohmann::json json(report);
  REQUIRE(json.at("field_residuals").size() == 2);
  CHECK(json.at("field_residuals")[1].at("name") == "v");
  CHECK(json.at("field_residuals")[0].at("history").size() == report.history.size());
  CHECK(json.at("field_residuals")[0].at("initial_residual_norm").get<double>() ==
        report.field_residuals[0].initial_residual_norm);
#endif
}

TEST_CASE("a field layout whose size differs from u is refused", "[fields][bad_input]") {
  const coupled_reaction_diffusion problem(10, 1.0, 1.0, field_ordering::contiguous_by_field);
  nkit::newton_krylov_solver<> solver;
  Eigen::VectorXd u = Eigen::VectorXd::Zero(21);
  coupled_reaction_diffusion copy = problem;
  CHECK(message_of([&] { solver.solve(copy, u); }) ==
        "nkit: the problem's field_layout() describes 20 unknowns, but u has 21");
}

TEST_CASE("field split with inner GMRES per field makes the outer GMRES flexible", "[fields]") {
  // inner_gmres_preconditioner changes between applications (inner_gmres.hpp),
  // so the field split says so too and the Newton driver must run flexible GMRES.
  const coupled_reaction_diffusion problem(30, 2.0, 3.0, field_ordering::interleaved_by_cell);
  nkit::inner_gmres_settings inner;
  inner.inner_iterations = 10;
  inner.inner_relative_tolerance = 1e-3;
  nkit::field_split_settings settings;
  settings.form = nkit::field_split_form::block_lower_triangular;
  nkit::field_split_preconditioner preconditioner(
      problem.field_layout(), settings,
      nkit::make_inner_preconditioners(nkit::inner_gmres_preconditioner<>(inner),
                                       nkit::inner_gmres_preconditioner<>(inner)));
  CHECK(preconditioner.changes_between_applications());
  nkit::newton_settings newton;
  newton.relative_tolerance = 1e-10;
  newton.linear.restart_length = 50;
  newton.linear.maximum_iterations = 400;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::field_split_preconditioner> solver(
      newton, {}, std::move(preconditioner));
  Eigen::VectorXd u = Eigen::VectorXd::Zero(problem.field_layout().size());
  coupled_reaction_diffusion copy = problem;
  const nkit::solve_report report = solver.solve(copy, u);
  CHECK(report.converged());
  WARN("inner GMRES per field: Newton steps " << report.newton_steps << ", linear iterations "
                                              << report.linear_iterations);
}

namespace {
/// The coupled pair without assemble_jacobian or jacobian_product: the
/// driver colors the three-point pattern of 2 unknowns per cell (a superset
/// of the pair's couplings in interleaved order) and builds J by differences.
struct coupled_by_colored_differences {
  coupled_reaction_diffusion problem{40, 2.0, 3.0, field_ordering::interleaved_by_cell};
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& r) const { problem(x, r); }
  const nkit::field_layout& field_layout() const { return problem.field_layout(); }
  nkit::sparsity_pattern jacobian_pattern() const { return nkit::three_point_line_pattern(40, 2); }
};
}  // namespace

TEST_CASE("field split on a Jacobian built by colored differences", "[fields][newton]") {
  coupled_by_colored_differences colored;
  nkit::field_split_settings settings;
  settings.form = nkit::field_split_form::block_lower_triangular;
  nkit::newton_settings newton;
  newton.relative_tolerance = 1e-10;
  newton.linear.restart_length = 50;
  newton.linear.maximum_iterations = 200;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::field_split_preconditioner> solver(
      newton, {},
      nkit::field_split_preconditioner(colored.field_layout(), settings,
                                       nkit::make_inner_preconditioners(nkit::sparse_direct_preconditioner{},
                                                                        nkit::sparse_direct_preconditioner{})));
  Eigen::VectorXd u = Eigen::VectorXd::Zero(80);
  const nkit::solve_report report = solver.solve(colored, u);
  REQUIRE(report.converged());
  CHECK(report.jacobian_assemblies >= 1);
  // The same discrete solution as with the analytic Jacobian (each stops at
  // ‖R‖ <= 1e-10 ‖R0‖, ‖J⁻¹‖ of order 1 here).
  const newton_run analytic = solve_coupled(colored.problem, nkit::field_split_form::block_lower_triangular);
  CHECK((u - analytic.solution).norm() <= 1e-8 * analytic.solution.norm());
  WARN("colored differences, block lower triangular: Newton steps " << report.newton_steps << ", linear iterations "
                                                                    << report.linear_iterations);
}

TEST_CASE("field split passes on an inner preconditioner's fallback status", "[fields]") {
  // Block diagonal without S on [A B; C 0]: the second diagonal block is zero,
  // sparse LU fails on it and factorises δI instead (sparse_direct.hpp), so
  // the split reports ready_with_fallback; a NaN in J gives failed.
  const saddle_point_system system;
  nkit::field_split_preconditioner split(
      system.layout, {},
      nkit::make_inner_preconditioners(nkit::sparse_direct_preconditioner{}, nkit::sparse_direct_preconditioner{}));
  CHECK(split.build(system.matrix) == nkit::setup_status::ready_with_fallback);
  nkit::sparse_matrix broken = system.matrix;
  broken.coeffRef(0, 0) = std::numeric_limits<double>::quiet_NaN();
  CHECK(split.build(broken) == nkit::setup_status::failed);
}
