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

namespace {
/// A space without linear_combinations: the free function must fall back to fill + add_scaled.
struct space_without_combinations : nkit::eigen_vector_space<double> {
  void linear_combinations() const = delete;  // hides the inherited member from detection
};
}  // namespace

TEMPLATE_TEST_CASE("linear_combinations equals the definition, in one pass or by the fallback", "[space]",
                   nkit::eigen_vector_space<double>, nkit::block_vector_space, space_without_combinations) {
  // targets[c] = Σ_i A(i, c) sources[i] with A column-major, leading dimension 5 (one unused row).
  // Lengths around the block length (256) exercise partial and several blocks; the
  // reference is the same sum over i in the same order, written out, so the results
  // must agree to the last bit.
  const TestType space{};
  for (const Eigen::Index length : {Eigen::Index(0), Eigen::Index(1), Eigen::Index(255), Eigen::Index(256),
                                    Eigen::Index(257), Eigen::Index(1000)}) {
    std::vector<Eigen::VectorXd> sources;
    for (int i = 0; i < 4; ++i) sources.push_back(Eigen::VectorXd::LinSpaced(length, i, 3.0 * i + 1.0).array().sin());
    const Eigen::MatrixXd a = Eigen::MatrixXd::Random(5, 3);
    std::vector<Eigen::VectorXd> targets(3, Eigen::VectorXd::Constant(length, 7.0));  // overwritten, not added to
    const Eigen::VectorXd* source_pointers[4] = {&sources[0], &sources[1], &sources[2], &sources[3]};
    Eigen::VectorXd* target_pointers[3] = {&targets[0], &targets[1], &targets[2]};
    nkit::linear_combinations(space, source_pointers, 4, a.data(), 5, target_pointers, 3);
    for (int c = 0; c < 3; ++c) {
      Eigen::VectorXd expected = a(0, c) * sources[0];
      for (int i = 1; i < 4; ++i) expected += a(i, c) * sources[i];
      CHECK(targets[static_cast<std::size_t>(c)] == expected);
    }
    nkit::linear_combinations(space, source_pointers, 0, a.data(), 5, target_pointers, 2);  // empty sum: zero
    CHECK((targets[0].array() == 0.0).all());
    CHECK((targets[1].array() == 0.0).all());
  }
}
