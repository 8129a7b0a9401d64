// Jacobian-vector products: finite differences against the exact product
// from forward-mode automatic differentiation, and the analytic path.
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/core/residual.hpp>
#include <nkit/jacobian/analytic_jacobian.hpp>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/jacobian/finite_difference_jacobian.hpp>

#include "support/matchers.hpp"

namespace {

/// A smooth nonlinear residual with every kind of coupling (invented test function).
struct smooth_residual {
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    using std::exp;
    using std::sin;
    const Eigen::Index n = u.size();
    for (Eigen::Index i = 0; i < n; ++i) {
      const Scalar left = i > 0 ? u(i - 1) : Scalar(0.0);
      const Scalar right = i + 1 < n ? u(i + 1) : Scalar(0.0);
      r(i) = exp(u(i)) * sin(left) + u(i) * u(i) * right - 0.5 * u(i) + 1.0;
    }
  }
};

}  // namespace

static_assert(
    nkit::has_jacobian_product_v<nkit::residual_with_automatic_differentiation<smooth_residual>, Eigen::VectorXd>);
static_assert(!nkit::has_jacobian_product_v<smooth_residual, Eigen::VectorXd>);

TEST_CASE("AD product equals the hand-derived Jacobian", "[jacobian]") {
  // For n = 2: r0 = e^{u0} sin 0 + u0² u1 − u0/2 + 1, r1 = e^{u1} sin u0 + 0 − u1/2 + 1.
  // ∂r0 = (2 u0 u1 − ½, u0²), ∂r1 = (e^{u1} cos u0, e^{u1} sin u0 − ½).
  auto ad = nkit::with_automatic_differentiation(smooth_residual{});
  Eigen::VectorXd u(2), v(2), jv(2);
  u << 0.3, -0.7;
  v << 1.5, 2.0;
  ad.jacobian_product(u, v, jv);
  const double expected0 = (2 * 0.3 * -0.7 - 0.5) * 1.5 + 0.09 * 2.0;
  const double expected1 = std::exp(-0.7) * std::cos(0.3) * 1.5 + (std::exp(-0.7) * std::sin(0.3) - 0.5) * 2.0;
  // Both results come from sums of O(1) terms: allow a few ulps of those terms.
  CHECK_THAT(jv(0), Catch::Matchers::WithinAbs(expected0, 1e-15));
  CHECK_THAT(jv(1), Catch::Matchers::WithinAbs(expected1, 1e-15));
}

TEST_CASE("finite-difference products are first and second order in the step", "[jacobian]") {
  // Taylor: forward error = ½ h R''[v,v] + O(h²), central error = O(h²).
  // Halving h must halve (forward) or quarter (central) the error while
  // truncation dominates rounding (h >= 1e-4 here keeps rounding ~1e-12).
  const int n = 40;
  smooth_residual residual;
  auto ad = nkit::with_automatic_differentiation(smooth_residual{});
  const Eigen::VectorXd u = Eigen::VectorXd::LinSpaced(n, -0.5, 0.8);
  const Eigen::VectorXd v = Eigen::VectorXd::LinSpaced(n, 1.0, -1.0).array().cos();
  Eigen::VectorXd exact(n);
  ad.jacobian_product(u, v, exact);
  Eigen::VectorXd r_u(n);
  residual(u, r_u);
  auto evaluate = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) { residual(x, r); };

  const auto formula = GENERATE(nkit::difference_formula::forward, nkit::difference_formula::central);
  nkit::jacobian_settings settings;
  settings.formula = formula;
  nkit::finite_difference_jacobian<> difference(settings);
  difference.allocate_like(u);
  difference.linearize_at(u, r_u);
  const double expected_order = formula == nkit::difference_formula::forward ? 1.0 : 2.0;
  Eigen::VectorXd jv(n);
  double previous_error = 0.0;
  for (double h : {1e-2, 5e-3, 2.5e-3, 1.25e-3}) {
    difference.apply_with_step(evaluate, v, h, jv);
    const double error = (jv - exact).norm();
    if (previous_error > 0.0) {
      const double order = std::log2(previous_error / error);
      INFO("h = " << h << ", error " << error);
      CHECK_THAT(order, Catch::Matchers::WithinAbs(expected_order, 0.1));
    }
    previous_error = error;
  }
}

TEST_CASE("the automatic step balances truncation and rounding", "[jacobian]") {
  // Forward: error ~ sqrt(eps)·scale ≈ 1e-8 relative; central ~ eps^(2/3) ≈ 4e-11
  // (orders of magnitude from the step rules in finite_difference_jacobian.hpp).
  const int n = 200;
  smooth_residual residual;
  auto ad = nkit::with_automatic_differentiation(smooth_residual{});
  const Eigen::VectorXd u = Eigen::VectorXd::LinSpaced(n, -1.0, 1.0);
  const Eigen::VectorXd v = Eigen::VectorXd::LinSpaced(n, 0.0, 3.0).array().sin();
  Eigen::VectorXd exact(n), r_u(n), jv(n);
  ad.jacobian_product(u, v, exact);
  residual(u, r_u);
  auto evaluate = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) { residual(x, r); };
  for (auto formula : {nkit::difference_formula::forward, nkit::difference_formula::central}) {
    nkit::jacobian_settings settings;
    settings.formula = formula;
    nkit::finite_difference_jacobian<> difference(settings);
    difference.allocate_like(u);
    difference.linearize_at(u, r_u);
    difference.apply(evaluate, v, jv);
    const double relative_error = (jv - exact).norm() / exact.norm();
    INFO("formula " << (formula == nkit::difference_formula::forward ? "forward" : "central"));
    CHECK(relative_error < (formula == nkit::difference_formula::forward ? 1e-6 : 1e-9));
    CHECK(relative_error > 0.0);
  }
  // A zero direction gives an exactly zero product without evaluating R.
  nkit::finite_difference_jacobian<> difference;
  difference.allocate_like(u);
  difference.linearize_at(u, r_u);
  int calls = 0;
  auto counting = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
    ++calls;
    residual(x, r);
  };
  difference.apply(counting, Eigen::VectorXd::Zero(n), jv);
  CHECK(calls == 0);
  CHECK(jv.isZero(0.0));
}

TEST_CASE("a user-supplied product is attached without copies of the residual", "[jacobian]") {
  int residual_calls = 0;
  int product_calls = 0;
  auto problem = nkit::with_jacobian_product(
      [&](const Eigen::VectorXd& u, Eigen::VectorXd& r) {
        ++residual_calls;
        r = u.array().square() - 4.0;
      },
      [&](const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
        ++product_calls;
        jv = 2.0 * u.cwiseProduct(v);
      });
  static_assert(nkit::has_jacobian_product_v<decltype(problem), Eigen::VectorXd>);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(3, 1.0), r(3), jv(3);
  problem(u, r);
  const Eigen::VectorXd ones = Eigen::VectorXd::Ones(3);
  problem.jacobian_product(u, ones, jv);
  CHECK(residual_calls == 1);
  CHECK(product_calls == 1);
  CHECK(jv == Eigen::VectorXd::Constant(3, 2.0));
}

TEST_CASE("difference settings are validated", "[jacobian][input]") {
  nkit::jacobian_settings settings;
  settings.residual_relative_noise = -1e-3;
  CHECK_THROWS_WITH(nkit::finite_difference_jacobian<>(settings),
                    "nkit: jacobian_settings.residual_relative_noise must be in [0, 1) (got -0.001)");
}
