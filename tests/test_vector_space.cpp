// Vector-space policies: the Eigen default (including zero-copy views of user
// memory) and the block space that stands in for a distributed one.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/core/block_vector_space.hpp>
#include <nkit/core/eigen_vector_space.hpp>
#include <nkit/core/vector_space.hpp>
#include <vector>

#include "support/matchers.hpp"

using nkit_test::is_close_to;

static_assert(nkit::is_vector_space_v<nkit::eigen_vector_space<double>>);
static_assert(nkit::is_vector_space_v<nkit::block_vector_space>);
static_assert(!nkit::is_vector_space_v<int>);

TEMPLATE_TEST_CASE("vector-space operations match their definitions", "[space]", nkit::eigen_vector_space<double>,
                   nkit::block_vector_space) {
  const TestType space{};
  const int n = GENERATE(1, 2, 7, 1000);
  Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(n, -1.0, 2.0);
  Eigen::VectorXd y = Eigen::VectorXd::LinSpaced(n, 3.0, 0.5).array().square();
  // Reference values formed element by element (definition of each operation).
  double dot = 0.0;
  for (int i = 0; i < n; ++i) dot += x(i) * y(i);
  CHECK_THAT(space.dot(x, y), Catch::Matchers::WithinRel(dot, 1e-14));
  CHECK_THAT(space.norm(y), Catch::Matchers::WithinRel(std::sqrt(y.dot(y)), 1e-14));
  CHECK(space.global_size(x) == n);
  CHECK(space.all_finite(x));

  Eigen::VectorXd z = y;
  space.add_scaled(2.0, x, z);
  CHECK_THAT(z, is_close_to(y + 2.0 * x, 1e-15, 1e-15));
  space.combine(0.5, x, -3.0, y, z);
  CHECK_THAT(z, is_close_to(0.5 * x - 3.0 * y, 1e-15, 1e-15));
  space.scale(-2.0, z);
  CHECK_THAT(z, is_close_to(-2.0 * (0.5 * x - 3.0 * y), 1e-15, 1e-15));
  space.copy(x, z);
  CHECK(z == x);
  space.fill(4.0, z);
  CHECK(z == Eigen::VectorXd::Constant(n, 4.0));
  space.multiply(x, z);
  CHECK_THAT(z, is_close_to(4.0 * x, 0.0, 1e-15));

  z(n - 1) = std::numeric_limits<double>::quiet_NaN();
  CHECK_FALSE(space.all_finite(z));
  z(n - 1) = std::numeric_limits<double>::infinity();
  CHECK_FALSE(space.all_finite(z));

  Eigen::VectorXd target;
  space.allocate_like(target, x);
  CHECK(target.size() == n);
  const double* storage = target.data();
  space.allocate_like(target, y);  // same size: no reallocation
  CHECK(target.data() == storage);
}

TEMPLATE_TEST_CASE("norms stay exact when the sum of squares overflows or underflows", "[space]",
                   nkit::eigen_vector_space<double>, nkit::block_vector_space) {
  // Definition: ‖x‖ = √Σ x_i². For x = (c, c, c, c), ‖x‖ = 2|c| exactly, for any
  // c: 1e200 (squares overflow to inf), 1e-200 (squares underflow to 0) and
  // 1 (in range). A naive √Σ x_i² gives inf and 0 for the first two, which
  // reported a huge residual as converged (inf <= tolerance · inf).
  const TestType space{};
  const double c = GENERATE(1e200, -1e200, 1e-200, 1.0, 1.7e308);
  const Eigen::VectorXd x = Eigen::VectorXd::Constant(4, c);
  INFO("c = " << c);
  if (std::abs(c) > 1e308) {
    CHECK(space.norm(x) == std::numeric_limits<double>::infinity());  // 2|c| is beyond the largest double
  } else {
    CHECK_THAT(space.norm(x), Catch::Matchers::WithinRel(2.0 * std::abs(c), 4e-16));
  }
  CHECK(space.norm(Eigen::VectorXd::Zero(3)) == 0.0);
  Eigen::VectorXd with_nan = x;
  with_nan(1) = std::numeric_limits<double>::quiet_NaN();
  CHECK(std::isnan(space.norm(with_nan)));
  Eigen::VectorXd with_inf = x;
  with_inf(2) = -std::numeric_limits<double>::infinity();
  CHECK(space.norm(with_inf) == std::numeric_limits<double>::infinity());
}

TEST_CASE("the Eigen space binds a Map over user memory without copying", "[space]") {
  using space_type = nkit::eigen_vector_space<double>;
  const space_type space;
  std::vector<double> user_array{1.0, 2.0, 3.0};
  Eigen::Map<Eigen::VectorXd> map(user_array.data(), 3);
  space_type::state_view view = map;
  CHECK(view.data() == user_array.data());
  space.scale(2.0, view);
  CHECK(user_array == std::vector<double>{2.0, 4.0, 6.0});
}

TEST_CASE("the block space sums partial reductions over its blocks", "[space]") {
  // 2 blocks over 5 entries: [0,3) and [3,5). Partial dots 1+4+9 and 16+25 → 55.
  const nkit::block_vector_space space(2);
  Eigen::VectorXd x(5);
  x << 1, 2, 3, 4, 5;
  CHECK(space.dot(x, x) == 55.0);
  CHECK(space.norm(x) == std::sqrt(55.0));
  CHECK_THROWS_WITH(nkit::block_vector_space(0), "nkit: block_vector_space::block_count must be >= 1 (got 0)");
}

TEST_CASE("dot_many falls back to separate dots", "[space]") {
  const nkit::eigen_vector_space<double> space;
  std::vector<Eigen::VectorXd> basis{Eigen::VectorXd::Constant(4, 1.0), Eigen::VectorXd::LinSpaced(4, 0.0, 3.0)};
  const Eigen::VectorXd w = Eigen::VectorXd::Constant(4, 2.0);
  double out[2];
  nkit::dot_many(space, basis.data(), 2, w, out);
  CHECK(out[0] == 8.0);   // 4 · (1·2)
  CHECK(out[1] == 12.0);  // 2·(0+1+2+3)
}
