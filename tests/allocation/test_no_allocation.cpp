// Heap-allocation checks: after the first solve of a given size, the solvers
// allocate nothing. Two independent counters: Eigen's own run-time malloc
// check (EIGEN_RUNTIME_NO_MALLOC, counted instead of aborting) and a
// replacement of the global operator new (everything else, std::vector etc.).
// Built as its own executable because both hooks change global behaviour.
#include <atomic>
#include <cmath>
#include <cstddef>
#include <cstdlib>
#include <memory>
#include <new>
#include <utility>
#include <vector>

namespace allocation_counters {
std::atomic<bool> counting{false};
std::atomic<long> operator_new_calls{0};
std::atomic<long> eigen_heap_requests{0};
}  // namespace allocation_counters

#define EIGEN_RUNTIME_NO_MALLOC
#define eigen_assert(condition) \
  ((condition) ? static_cast<void>(0) : static_cast<void>(++allocation_counters::eigen_heap_requests))

#include <catch2/catch.hpp>
#include <nkit/fields/field_layout.hpp>
#include <nkit/krylov/recycling_gmres.hpp>
#include <nkit/nkit.hpp>
#include <nkit/preconditioners/block_ilu_zero.hpp>
#include <nkit/preconditioners/field_split.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/time/implicit_time_stepper.hpp>

#include "problems/model_problem/model_problem.hpp"

// noinline: the pairing of new with malloc and delete with free is deliberate;
// inlining would let the compiler flag it as a mismatch.
[[gnu::noinline]] void* operator new(std::size_t size) {
  if (allocation_counters::counting) ++allocation_counters::operator_new_calls;
  if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
  throw std::bad_alloc();
}
[[gnu::noinline]] void operator delete(void* p) noexcept { std::free(p); }
[[gnu::noinline]] void operator delete(void* p, std::size_t) noexcept { std::free(p); }

namespace {

/// Counts both kinds of heap request between construction and destruction.
class counted_region {
 public:
  counted_region() {
    allocation_counters::operator_new_calls = 0;
    allocation_counters::eigen_heap_requests = 0;
    Eigen::internal::set_is_malloc_allowed(false);
    allocation_counters::counting = true;
  }
  ~counted_region() { stop(); }
  void stop() {
    allocation_counters::counting = false;
    Eigen::internal::set_is_malloc_allowed(true);
  }
  long operator_new_calls() const { return allocation_counters::operator_new_calls; }
  long eigen_heap_requests() const { return allocation_counters::eigen_heap_requests; }
};

/// Tridiagonal nonlinear system (Broyden-tridiagonal form, Moré, Garbow &
/// Hillstrom 1981, problem 30), written without temporaries.
struct tridiagonal_residual {
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& x,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    const Eigen::Index n = x.size();
    for (Eigen::Index i = 0; i < n; ++i) {
      const Scalar left = i > 0 ? x(i - 1) : Scalar(0.0);
      const Scalar right = i + 1 < n ? x(i + 1) : Scalar(0.0);
      r(i) = (3.0 - 2.0 * x(i)) * x(i) - left - 2.0 * right + 1.0;
    }
  }
};

}  // namespace

TEST_CASE("GMRES allocates nothing after the first solve of a size", "[allocation]") {
  const int n = 500;
  Eigen::SparseMatrix<double> a(n, n);
  for (int i = 0; i < n; ++i) {
    a.insert(i, i) = 4.0;
    if (i > 0) a.insert(i, i - 1) = -1.0;
    if (i + 1 < n) a.insert(i, i + 1) = -1.5;
  }
  a.makeCompressed();
  nkit::matrix_operator<Eigen::SparseMatrix<double>> op(a);
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(n);
  Eigen::VectorXd x(n);
  for (auto variant : {nkit::gmres_variant::standard, nkit::gmres_variant::flexible}) {
    nkit::gmres_settings settings;
    settings.restart_length = 10;  // forces restarts
    settings.variant = variant;
    nkit::gmres_solver<> gmres(settings);
    nkit::identity_preconditioner none;
    gmres.solve(op, none, b, x, 1e-10, nkit::initial_guess::zero);  // first solve sizes the workspace
    counted_region region;
    const auto result = gmres.solve(op, none, b, x, 1e-10, nkit::initial_guess::zero);
    region.stop();
    CHECK(result.converged());
    CHECK(result.restarts > 0);
    CHECK(region.operator_new_calls() == 0);
    CHECK(region.eigen_heap_requests() == 0);
  }
}

TEST_CASE("recycling GMRES allocates nothing after the first solve of a size", "[allocation]") {
  // Second and third solves: recycled cycles, harmonic Ritz extraction each
  // cycle, and the refresh of C = A Ũ for an operator not declared unchanged.
  const int n = 500;
  Eigen::SparseMatrix<double> a(n, n);
  for (int i = 0; i < n; ++i) {
    a.insert(i, i) = i < 3 ? 0.01 * (i + 1) : 4.0;
    if (i > 0) a.insert(i, i - 1) = -1.0;
    if (i + 1 < n) a.insert(i, i + 1) = -1.5;
  }
  a.makeCompressed();
  nkit::matrix_operator<Eigen::SparseMatrix<double>> op(a);
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(n);
  Eigen::VectorXd x(n);
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 12;  // forces restarts
  settings.recycle_dimension = 4;
  settings.maximum_iterations = 2000;
  nkit::recycling_gmres_solver<> solver(settings);
  Eigen::VectorXd inverse_diagonal = a.diagonal().cwiseInverse();
  auto jacobi = nkit::make_preconditioner(
      [&](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = r.cwiseProduct(inverse_diagonal); });
  solver.solve(op, jacobi, b, x, 1e-10, nkit::initial_guess::zero);  // first solve sizes the workspace
  counted_region region;
  const auto refreshed = solver.solve(op, jacobi, b, x, 1e-10, nkit::initial_guess::zero);
  solver.next_solve_uses_same_operator();
  const auto same = solver.solve(op, jacobi, b, x, 1e-10, nkit::initial_guess::zero);
  region.stop();
  CHECK(refreshed.converged());
  CHECK(same.converged());
  CHECK(refreshed.restarts + same.restarts > 0);
  CHECK(solver.recycled_dimension() > 0);
  CHECK(region.operator_new_calls() == 0);
  CHECK(region.eigen_heap_requests() == 0);
}

TEST_CASE("a repeated Newton solve of the same size allocates nothing", "[allocation]") {
  const int n = 2000;
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;

  SECTION("finite-difference products, caller-driven loop") {
    nkit::newton_krylov_solver<> solver(settings);
    tridiagonal_residual residual;
    Eigen::VectorXd u = Eigen::VectorXd::Constant(n, -1.0);
    REQUIRE(solver.solve(residual, u).converged());
    u.setConstant(-1.0);
    counted_region region;
    auto run = solver.begin(residual, u);
    while (run.advance() == nkit::run_state::running) {
    }
    region.stop();
    CHECK(run.report().converged());
    CHECK(run.report().newton_steps > 2);
    CHECK(region.operator_new_calls() == 0);
    CHECK(region.eigen_heap_requests() == 0);
  }
  SECTION("automatic differentiation and a preconditioner, solve()") {
    // solve() returns the report by value: copying the history is its one allocation.
    Eigen::VectorXd inverse_diagonal = Eigen::VectorXd::Constant(n, 1.0 / 5.0);
    auto jacobi = nkit::make_preconditioner(
        [&](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = r.cwiseProduct(inverse_diagonal); });
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, decltype(jacobi)> solver(settings, {}, jacobi);
    auto residual = nkit::with_automatic_differentiation(tridiagonal_residual{});
    Eigen::VectorXd u = Eigen::VectorXd::Constant(n, -1.0);
    REQUIRE(solver.solve(residual, u).converged());
    u.setConstant(-1.0);
    counted_region region;
    const auto report = solver.solve(residual, u);
    region.stop();
    CHECK(report.converged());
    CHECK(region.operator_new_calls() == 1);
    CHECK(region.eigen_heap_requests() == 0);
  }
}

namespace {
/// The tridiagonal system with its unknowns labelled as two interleaved fields
/// (a labelling only: the residual is unchanged), to check the per-field norms.
struct tridiagonal_with_fields {
  tridiagonal_residual residual;
  nkit::field_layout layout{{{"even", 1}, {"odd", 1}}, 1000, nkit::field_ordering::interleaved_by_cell};
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& r) const { residual(x, r); }
  const nkit::field_layout& field_layout() const { return layout; }
};
}  // namespace

TEST_CASE("per-field residual norms add no allocation to a repeated Newton solve", "[allocation][fields]") {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  nkit::newton_krylov_solver<> solver(settings);
  tridiagonal_with_fields problem;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(2000, -1.0);
  REQUIRE(solver.solve(problem, u).converged());
  u.setConstant(-1.0);
  counted_region region;
  auto run = solver.begin(problem, u);
  while (run.advance() == nkit::run_state::running) {
  }
  region.stop();
  CHECK(run.report().converged());
  REQUIRE(run.report().field_residuals.size() == 2);
  CHECK(run.report().field_residuals[1].history.size() == run.report().history.size());
  CHECK(region.operator_new_calls() == 0);
  CHECK(region.eigen_heap_requests() == 0);
}

TEST_CASE("a field-split application allocates nothing in nkit's own code", "[allocation][fields]") {
  // Point-Jacobi inner preconditioners (allocation-free apply): what remains
  // is the split's gather, coupling products, substitutions and scatter.
  const nkit::field_layout layout({{"u", 1}, {"v", 2}}, 50, nkit::field_ordering::interleaved_by_cell);
  const auto n = static_cast<int>(layout.size());
  std::vector<Eigen::Triplet<double>> entries;
  for (int i = 0; i < n; ++i) {
    entries.emplace_back(i, i, 4.0);
    if (i > 0) entries.emplace_back(i, i - 1, -1.0);
    if (i + 1 < n) entries.emplace_back(i, i + 1, -1.0);
  }
  nkit::sparse_matrix matrix(n, n);
  matrix.setFromTriplets(entries.begin(), entries.end());
  for (const auto form :
       {nkit::field_split_form::block_diagonal, nkit::field_split_form::block_lower_triangular,
        nkit::field_split_form::block_upper_triangular, nkit::field_split_form::schur_complement_factorization}) {
    nkit::field_split_settings settings;
    settings.form = form;
    nkit::field_split_preconditioner split(
        layout, settings,
        nkit::make_inner_preconditioners(nkit::jacobi_preconditioner{}, nkit::jacobi_preconditioner{}));
    REQUIRE(split.build(matrix) == nkit::setup_status::ready);
    const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(n, 1.0, 2.0);
    Eigen::VectorXd z(n);
    split.apply(r, z);
    counted_region region;
    split.apply(r, z);
    region.stop();
    CHECK(region.operator_new_calls() == 0);
    CHECK(region.eigen_heap_requests() == 0);
  }
}

namespace {
/// 1D Bratu, R_i = (2u_i − u_{i−1} − u_{i+1})(n+1)² − λ e^{u_i} (Bratu problem, problems/reaction_diffusion/bratu.hpp),
/// without temporaries.
struct bratu_residual {
  void operator()(const Eigen::VectorXd& u, double parameter, Eigen::VectorXd& r) const {
    const Eigen::Index n = u.size();
    const double inverse_h2 = double(n + 1) * double(n + 1);
    for (Eigen::Index i = 0; i < n; ++i) {
      const double left = i > 0 ? u(i - 1) : 0.0;
      const double right = i + 1 < n ? u(i + 1) : 0.0;
      r(i) = inverse_h2 * (2.0 * u(i) - left - right) - parameter * std::exp(u(i));
    }
  }
};
}  // namespace

TEST_CASE("continuation allocates per run, not per point", "[allocation]") {
  // The report (its lists, reserved up front, and the returned copy) and the
  // settings checks are per run; the corrector, tangent, predictor and fold
  // location reuse their workspace. So a run to 24 points allocates exactly as
  // much as a run to 12 (both pass the fold at λ ≈ 3.5, so both return one
  // fold record), once the solver has seen the size.
  nkit::continuation_settings settings;
  settings.corrector.linear.restart_length = 40;
  nkit::continuation_solver<> solver(settings);
  const auto counted_run = [&](int points, long& operator_new, long& eigen_requests) {
    settings.point_budget = points;
    solver.configure(settings);
    Eigen::VectorXd u = Eigen::VectorXd::Zero(31);
    counted_region region;
    const nkit::continuation_report report = solver.follow_branch(bratu_residual{}, u, 1.0);
    region.stop();
    CHECK(report.reason == nkit::continuation_stop_reason::point_budget_spent);
    CHECK(report.points.size() == static_cast<std::size_t>(points));
    CHECK(report.folds.size() == 1);
    operator_new = region.operator_new_calls();
    eigen_requests = region.eigen_heap_requests();
  };
  long first_new = 0, first_eigen = 0, short_new = 0, short_eigen = 0, long_new = 0, long_eigen = 0;
  counted_run(24, first_new, first_eigen);  // sizes the workspace
  counted_run(12, short_new, short_eigen);
  counted_run(24, long_new, long_eigen);
  CHECK(first_eigen > 0);
  CHECK(long_new == short_new);
  CHECK(long_eigen == short_eigen);
  CHECK(long_eigen == 0);
}

TEST_CASE("the counters do see allocations (so the checks above can fail)", "[allocation]") {
  counted_region region;
  Eigen::VectorXd v(1000);                 // Eigen heap request
  auto* p = new std::vector<double>(100);  // operator new, twice
  region.stop();
  delete p;
  CHECK(v.size() == 1000);
  CHECK(region.eigen_heap_requests() == 1);
  CHECK(region.operator_new_calls() == 2);

  // A first Newton solve must allocate its workspace.
  nkit::newton_krylov_solver<> solver;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(50, -1.0);
  counted_region first;
  const auto report = solver.solve(tridiagonal_residual{}, u);
  first.stop();
  CHECK(report.converged());
  CHECK(first.eigen_heap_requests() > 0);
}

TEST_CASE("ILU(0) preconditioned Newton repeats without allocating", "[allocation][ilu_zero]") {
  nkit_problems::heat_conduction_model_problem problem(24);
  nkit::newton_settings settings;
  // Keep the factor across steps and solves (as in implicit time stepping): the
  // model problem's own assemble_jacobian allocates, nkit's apply must not.
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 1000;
  settings.preconditioner_rebuild.rebuild_at_solve_start = false;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
  Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
  REQUIRE(solver.solve(problem, t).converged());
  t.setZero();
  counted_region region;
  auto run = solver.begin(problem, t);
  while (run.advance() == nkit::run_state::running) {
  }
  region.stop();
  CHECK(run.report().converged());
  CHECK(run.report().preconditioner_applications > 0);
  CHECK(run.report().preconditioner_setups == 0);
  CHECK(region.operator_new_calls() == 0);
  CHECK(region.eigen_heap_requests() == 0);

  // The apply alone, many times.
  nkit::sparse_matrix jacobian;
  problem.assemble_jacobian(t, jacobian);
  nkit::ilu_zero_preconditioner ilu;
  ilu.build(jacobian);
  const Eigen::VectorXd r = Eigen::VectorXd::Ones(problem.unknowns());
  Eigen::VectorXd z(problem.unknowns());
  counted_region apply_region;
  for (int repeat = 0; repeat < 10; ++repeat) ilu.apply(r, z);
  apply_region.stop();
  CHECK(apply_region.operator_new_calls() == 0);
  CHECK(apply_region.eigen_heap_requests() == 0);
}

TEST_CASE("block ILU(0): a second setup on the same pattern and its applications allocate nothing",
          "[allocation][block_ilu_zero]") {
  // b = 4 (a kernel with a compile-time block size) and b = 7 (block size read
  // at run time), full blocks on the five-point pattern of 4 × 3 cells; our
  // own diagonally dominant values.
  const int b = GENERATE(4, 7);
  nkit::sparse_matrix matrix = nkit::zero_matrix_with_pattern(nkit::five_point_grid_pattern(4, 3, b));
  for (int i = 0; i < matrix.outerSize(); ++i) {
    for (nkit::sparse_matrix::InnerIterator entry(matrix, i); entry; ++entry) {
      entry.valueRef() = entry.col() == i ? 10.0 * b : 1.0 / (1.0 + static_cast<double>(i + entry.col()));
    }
  }
  nkit::block_ilu_zero_preconditioner blocked(b);
  counted_region first;
  const nkit::setup_status first_status = blocked.build(matrix);
  first.stop();
  REQUIRE(first_status == nkit::setup_status::ready);
  CHECK(first.operator_new_calls() > 0);  // the symbolic phase allocates, and the region sees it
  double* values = matrix.valuePtr();
  for (Eigen::Index p = 0; p < matrix.nonZeros(); ++p) values[p] *= 1.5;  // new values, same pattern
  const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(matrix.rows(), -1.0, 1.0);
  Eigen::VectorXd z(matrix.rows()), transposed(matrix.rows());
  counted_region region;
  const nkit::setup_status second_status = blocked.build(matrix);
  for (int repeat = 0; repeat < 10; ++repeat) {
    blocked.apply(r, z);
    blocked.apply_transpose(r, transposed);
  }
  region.stop();
  CHECK(second_status == nkit::setup_status::ready);
  CHECK(blocked.symbolic_analyses() == 1);
  CHECK(z.allFinite());
  CHECK(region.operator_new_calls() == 0);
  CHECK(region.eigen_heap_requests() == 0);
}

namespace {
/// u_t = (k(u) u_x)_x on N cells, k = 1 + u², insulated ends plus a unit source
/// in the middle cell; assemble_rate_jacobian writes into the stored pattern
/// after the first call, so the user's side allocates nothing either.
struct nonlinear_rod {
  int cells = 200;
  double dx = 1.0 / 200;
  void rate(double /*t*/, const Eigen::VectorXd& u, Eigen::VectorXd& f) const {
    f.setZero();
    f(cells / 2) = 1.0;
    for (int i = 0; i + 1 < cells; ++i) {
      const double k = 1.0 + 0.5 * (u(i) * u(i) + u(i + 1) * u(i + 1));
      const double flux = k * (u(i + 1) - u(i)) / (dx * dx);
      f(i) += flux;
      f(i + 1) -= flux;
    }
  }
  void assemble_rate_jacobian(double /*t*/, const Eigen::VectorXd& u, nkit::sparse_matrix& jacobian) const {
    if (jacobian.rows() != cells || jacobian.nonZeros() != 3 * cells - 2) {
      std::vector<Eigen::Triplet<double, int>> entries;
      for (int i = 0; i < cells; ++i) {
        entries.emplace_back(i, i, 0.0);
        if (i > 0) entries.emplace_back(i, i - 1, 0.0);
        if (i + 1 < cells) entries.emplace_back(i, i + 1, 0.0);
      }
      jacobian.resize(cells, cells);
      jacobian.setFromTriplets(entries.begin(), entries.end());
    }
    for (int i = 0; i < jacobian.outerSize(); ++i) {
      for (nkit::sparse_matrix::InnerIterator e(jacobian, i); e; ++e) e.valueRef() = 0.0;
    }
    for (int i = 0; i + 1 < cells; ++i) {
      const double k = 1.0 + 0.5 * (u(i) * u(i) + u(i + 1) * u(i + 1));
      const double d = u(i + 1) - u(i);
      const double by_left = (u(i) * d - k) / (dx * dx), by_right = (u(i + 1) * d + k) / (dx * dx);
      jacobian.coeffRef(i, i) += by_left;
      jacobian.coeffRef(i, i + 1) += by_right;
      jacobian.coeffRef(i + 1, i) -= by_left;
      jacobian.coeffRef(i + 1, i + 1) -= by_right;
    }
  }
};
}  // namespace

TEST_CASE("a repeated implicit time integration of the same size allocates nothing", "[allocation][time]") {
  // A nonlinear rod with a lagged ILU(0) of the stage Jacobian: the second
  // integration (same stepper, same size) must not touch the heap at all,
  // steps, stages, preconditioner rebuilds and the report included.
  // Also with Krylov recycling in the stage solves (newton_settings.recycling;
  // restart length 30 <= 48, see krylov/recycling_gmres.hpp).
  nonlinear_rod system;
  for (auto [method, recycled] : {std::pair{nkit::time_method::bdf, 0}, std::pair{nkit::time_method::esdirk, 0},
                                  std::pair{nkit::time_method::bdf, 6}, std::pair{nkit::time_method::esdirk, 6}}) {
    INFO("recycle_dimension " << recycled);
    nkit::time_stepper_settings settings;
    settings.method = method;
    settings.stage.newton.recycling.recycle_dimension = recycled;
    settings.relative_tolerance = 1e-4;
    settings.absolute_tolerance = 1e-7;
    settings.history_capacity = 1000;
    nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> stepper(settings);
    Eigen::VectorXd t = Eigen::VectorXd::Zero(system.cells);
    REQUIRE(stepper.integrate(system, t, 0.0, 0.05).reached_end());
    t.setZero();
    counted_region region;
    const nkit::integration_report& report = stepper.integrate(system, t, 0.0, 0.05);
    region.stop();
    CHECK(report.reached_end());
    CHECK(report.accepted_steps > 10);
    CHECK(report.preconditioner_setups > 0);
    CHECK(region.operator_new_calls() == 0);
    CHECK(region.eigen_heap_requests() == 0);
  }
}
