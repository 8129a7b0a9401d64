// The backtracking line search on synthetic one-dimensional merit functions,
// checked against the interpolation formulas of Dennis & Schnabel (1996),
// Algorithm A6.3.1, evaluated independently here.
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/globalization/line_search.hpp>
#include <vector>

TEST_CASE("a full step with sufficient decrease is accepted at once", "[line_search]") {
  nkit::line_search_settings settings;
  int slope_calls = 0;
  const auto result = nkit::backtracking_line_search(
      settings, 1.0, 0.1, true, [](double lambda) { return 1.0 - 0.9 * lambda; },
      [&] {
        ++slope_calls;
        return -1.0;
      });
  CHECK(result.accepted);
  CHECK(result.step_fraction == 1.0);
  CHECK(result.trials == 1);
  CHECK(slope_calls == 0);  // the slope is only needed after a rejection
}

TEST_CASE("the first backtrack uses the quadratic model and later ones the cubic", "[line_search]") {
  // Merit ‖R(λ)‖ with φ(λ) = ½‖R‖² = ½(1 − λ)² + 2λ⁴: φ(0) = ½, φ'(0) = −1.
  // Quadratic step (D&S A6.3.1): λq = −φ'(0) / (2 (φ(1) − φ(0) − φ'(0))).
  auto phi = [](double lambda) { return 0.5 * (1 - lambda) * (1 - lambda) + 2 * std::pow(lambda, 4); };
  std::vector<double> tried;
  nkit::line_search_settings settings;
  const double eta = 0.0;
  const auto result = nkit::backtracking_line_search(
      settings, 1.0, eta, true,
      [&](double lambda) {
        tried.push_back(lambda);
        return std::sqrt(2 * phi(lambda));
      },
      [] { return -1.0; });
  REQUIRE(tried.size() >= 2);
  const double quadratic = 1.0 / (2 * (phi(1.0) - 0.5 + 1.0));
  const double expected_second = std::min(std::max(quadratic, 0.1), 0.5);
  CHECK_THAT(tried[1], Catch::Matchers::WithinRel(expected_second, 1e-14));
  if (tried.size() >= 3) {
    // Cubic through φ(0), φ'(0), φ(λ1 = 1), φ(λ2) (D&S A6.3.1), then safeguarded.
    const double l1 = tried[1], l0 = tried[0];
    const double r1 = phi(l1) - 0.5 + l1, r0 = phi(l0) - 0.5 + l0;
    const double a = (r1 / (l1 * l1) - r0 / (l0 * l0)) / (l1 - l0);
    const double b = (-l0 * r1 / (l1 * l1) + l1 * r0 / (l0 * l0)) / (l1 - l0);
    const double cubic = (-b + std::sqrt(b * b + 3 * a)) / (3 * a);
    CHECK_THAT(tried[2], Catch::Matchers::WithinRel(std::min(std::max(cubic, 0.1 * l1), 0.5 * l1), 1e-12));
  }
  REQUIRE(result.accepted);
  // Sufficient decrease (Eisenstat & Walker 1994) holds at the accepted λ.
  CHECK(std::sqrt(2 * phi(result.step_fraction)) <= (1 - 1e-4 * result.step_fraction) * 1.0);
}

TEST_CASE("non-finite trials shrink the step and are never accepted", "[line_search]") {
  nkit::line_search_settings settings;
  std::vector<double> tried;
  const auto result = nkit::backtracking_line_search(
      settings, 1.0, 0.2, true,
      [&](double lambda) {
        tried.push_back(lambda);
        return lambda > 0.3 ? std::numeric_limits<double>::quiet_NaN() : 1.0 - lambda;
      },
      [] { return -1.0; });
  REQUIRE(result.accepted);
  CHECK(result.non_finite_trials == 2);  // λ = 1 and 0.5 are NaN, 0.25 is fine
  CHECK(tried == std::vector<double>{1.0, 0.5, 0.25});
  CHECK(result.step_fraction == 0.25);
}

TEST_CASE("the search gives up after maximum_rejected_trials rejections", "[line_search]") {
  nkit::line_search_settings settings;
  settings.maximum_rejected_trials = 3;
  const auto result = nkit::backtracking_line_search(
      settings, 1.0, 0.0, true, [](double) { return 2.0; }, [] { return -1.0; });
  CHECK_FALSE(result.accepted);
  CHECK(result.trials == 4);
}

TEST_CASE("full-step mode accepts any finite trial", "[line_search]") {
  nkit::line_search_settings settings;
  const auto result = nkit::backtracking_line_search(
      settings, 1.0, 0.0, false, [](double) { return 5.0; }, [] { return -1.0; });
  CHECK(result.accepted);
  CHECK(result.step_fraction == 1.0);
}

TEST_CASE("line-search settings are validated", "[line_search][input]") {
  nkit::line_search_settings settings;
  settings.minimum_shrink_factor = 0.6;
  CHECK_THROWS_WITH(
      settings.validate(),
      "nkit: line_search_settings.minimum_shrink_factor must be <= maximum_shrink_factor (0.5) (got 0.6)");
  settings = {};
  settings.sufficient_decrease = 0.0;
  CHECK_THROWS_WITH(settings.validate(), "nkit: line_search_settings.sufficient_decrease must be in (0, 1) (got 0)");
}
