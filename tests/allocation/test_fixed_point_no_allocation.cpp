// Heap-allocation checks for the fixed-point solvers: after the first solve
// of a given size, an Anderson solve and a Newton–Krylov solve through the
// fixed-point adapter allocate nothing in their iterations. Shares the
// counters and the replaced operator new of test_no_allocation.cpp (same
// executable); the macros below must match that file's exactly.
#include <atomic>
#include <cmath>

namespace allocation_counters {
extern std::atomic<bool> counting;
extern std::atomic<long> operator_new_calls;
extern std::atomic<long> eigen_heap_requests;
}  // namespace allocation_counters

#define EIGEN_RUNTIME_NO_MALLOC
#define eigen_assert(condition) \
  ((condition) ? static_cast<void>(0) : static_cast<void>(++allocation_counters::eigen_heap_requests))

#include <catch2/catch.hpp>
#include <nkit/fixed_point/anderson_solver.hpp>
#include <nkit/fixed_point/fixed_point_residual.hpp>
#include <nkit/newton_krylov_solver.hpp>

namespace {

class fixed_point_counted_region {
 public:
  fixed_point_counted_region() {
    allocation_counters::operator_new_calls = 0;
    allocation_counters::eigen_heap_requests = 0;
    Eigen::internal::set_is_malloc_allowed(false);
    allocation_counters::counting = true;
  }
  ~fixed_point_counted_region() { stop(); }
  void stop() {
    allocation_counters::counting = false;
    Eigen::internal::set_is_malloc_allowed(true);
  }
  long operator_new_calls() const { return allocation_counters::operator_new_calls; }
  long eigen_heap_requests() const { return allocation_counters::eigen_heap_requests; }
};

/// A contracting nonlinear map without temporaries: G(u)_i = ½ cos(u_{i−1} + u_{i+1}) + 0.1 u_i
/// (invented for the test; |∂G/∂u| <= 1.1 row-wise, so the plain iteration converges slowly).
struct cosine_map {
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& g) const {
    const Eigen::Index n = u.size();
    for (Eigen::Index i = 0; i < n; ++i) {
      const double left = i > 0 ? u(i - 1) : 0.0;
      const double right = i + 1 < n ? u(i + 1) : 0.0;
      g(i) = 0.5 * std::cos(left + right) + 0.1 * u(i);
    }
  }
};

}  // namespace

TEST_CASE("a repeated Anderson solve of the same size allocates nothing in its iterations", "[allocation]") {
  const int n = 3000;
  nkit::anderson_settings settings;
  settings.depth = 6;
  settings.relative_tolerance = 1e-12;
  // Restarts every 3 iterations (almost nothing counts as progress) and a low
  // condition limit put the restart and column-dropping paths on the counted run too.
  settings.restart_window = 3;
  settings.stagnation_factor = 1e-12;
  settings.stagnation_window = 1000;
  settings.maximum_condition_number = 50;
  nkit::anderson_solver<> solver(settings);
  cosine_map map;
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
  REQUIRE(solver.solve(map, u).converged());
  u.setZero();
  fixed_point_counted_region region;
  auto run = solver.begin(map, u);
  while (run.advance() == nkit::run_state::running) {
  }
  region.stop();
  CHECK(run.report().converged());
  CHECK(run.report().iterations > 5);
  CHECK(run.report().restarts > 0);
  CHECK(run.report().dropped_columns > 0);
  CHECK(region.operator_new_calls() == 0);
  CHECK(region.eigen_heap_requests() == 0);
}

TEST_CASE("a repeated Newton-Krylov solve through the fixed-point adapter allocates nothing", "[allocation]") {
  const int n = 3000;
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  nkit::newton_krylov_solver<> solver(settings);
  cosine_map map;
  auto residual = nkit::fixed_point_residual(map);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
  REQUIRE(solver.solve(residual, u).converged());
  u.setZero();
  fixed_point_counted_region region;
  auto run = solver.begin(residual, u);
  while (run.advance() == nkit::run_state::running) {
  }
  region.stop();
  CHECK(run.report().converged());
  CHECK(region.operator_new_calls() == 0);
  CHECK(region.eigen_heap_requests() == 0);
}
