// Newton–Krylov on the smallest systems: one scalar equation and two curves
// crossing in the plane, where every quantity can be derived by hand.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>

#include "support/matchers.hpp"
#include "support/unit_roundoff.hpp"

namespace {

using nkit_test::unit_roundoff;  // support/unit_roundoff.hpp

/// cos x − x = 0. Its only real root is the fixed point of cos, the "Dottie
/// number" 0.739085133215160641655312087673873404... (OEIS A003957; digits
/// from memory). The test also brackets it by bisection, so the check does
/// not rest on the remembered digits.
struct cosine_fixed_point {
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& x,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& f) const {
    using std::cos;
    f(0) = cos(x(0)) - x(0);
  }
};

/// The circle x² + y² = 4 and the parabola y = x² − 1:
///   f1 = x² + y² − 4,  f2 = x² − 1 − y.
/// Substituting x² = y + 1 gives y² + y − 3 = 0, so the crossings with x > 0
/// are at y* = (√13 − 1)/2, x* = √(y* + 1) (derived by hand).
struct circle_and_parabola {
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& f) const {
    f(0) = u(0) * u(0) + u(1) * u(1) - 4.0;
    f(1) = u(0) * u(0) - 1.0 - u(1);
  }
};

}  // namespace

TEST_CASE("A scalar equation, cos x = x, converges to its root", "[newton][small]") {
  double low = 0.0, high = 1.0;  // cos 0 − 0 > 0 > cos 1 − 1
  while (0.5 * (low + high) > low && 0.5 * (low + high) < high) {
    const double middle = 0.5 * (low + high);
    (std::cos(middle) - middle > 0.0 ? low : high) = middle;
  }
  const double bisected = 0.5 * (low + high);
  CHECK_THAT(bisected, Catch::Matchers::WithinAbs(0.73908513321516064, 2e-16));  // OEIS A003957 (from memory)

  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-14;
  settings.relative_tolerance = 0.0;
  Eigen::VectorXd x = Eigen::VectorXd::Constant(1, 1.0);
  SECTION("finite-difference J·v (the default)") {
    const nkit::solve_report report = nkit::solve(cosine_fixed_point{}, x, settings);
    CHECK(report.reason == nkit::stop_reason::absolute_tolerance_met);
    CHECK(report.newton_steps <= 6);
  }
  SECTION("exact J·v") {
    const nkit::solve_report report =
        nkit::solve(nkit::with_automatic_differentiation(cosine_fixed_point{}), x, settings);
    CHECK(report.reason == nkit::stop_reason::absolute_tolerance_met);
    CHECK(report.newton_steps <= 6);
  }
  // |x − x*| <= |f(x)| / min|f'| near x* (mean value theorem), f' = −sin x − 1
  // ≈ −1.674, so |x − x*| <= 1e-14/1.6 ≈ 6e-15; plus the bisection's own
  // uncertainty (one ulp, 1.1e-16).
  CHECK_THAT(x(0), Catch::Matchers::WithinAbs(bisected, 1e-14 / 1.6 + 2e-16));
}

TEST_CASE("Two curves crossing: the first Newton step lands on the tangent-line intersection", "[newton][small]") {
  // With exact J·v, η = 1e-12 and a full step, one Newton step from u0 solves
  // f_i(u0) + ∇f_i(u0)·d = 0 (i = 1, 2), i.e. moves to where the zero lines of
  // the two tangent planes meet. Hand-derived gradients: ∇f1 = (2x, 2y),
  // ∇f2 = (2x, −1); the 2×2 system is solved here by Cramer's rule.
  const Eigen::Vector2d start(1.0, 1.0);
  const double x0 = start(0), y0 = start(1);
  const double f1 = x0 * x0 + y0 * y0 - 4.0, f2 = x0 * x0 - 1.0 - y0;
  const double a11 = 2.0 * x0, a12 = 2.0 * y0, a21 = 2.0 * x0, a22 = -1.0;
  const double determinant = a11 * a22 - a12 * a21;
  REQUIRE(std::abs(determinant) > 0.0);
  const double dx = (-f1 * a22 - a12 * -f2) / determinant;  // Cramer: replace column 1 by −f
  const double dy = (a11 * -f2 - -f1 * a21) / determinant;  // Cramer: replace column 2 by −f
  const Eigen::VectorXd expected = (Eigen::VectorXd(2) << x0 + dx, y0 + dy).finished();
  CHECK_THAT(expected, nkit_test::is_close_to((Eigen::VectorXd(2) << 5.0 / 3.0, 4.0 / 3.0).finished(), 1e-15));

  nkit::newton_settings settings;
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-12;
  settings.globalization = nkit::globalization_strategy::full_step;
  auto problem = nkit::with_automatic_differentiation(circle_and_parabola{});
  Eigen::VectorXd u = start;
  nkit::newton_krylov_solver<> solver(settings);
  auto run = solver.begin(problem, u);
  REQUIRE(run.advance() == nkit::run_state::running);
  REQUIRE(run.report().history.size() == 1);
  CHECK(run.report().history.front().step_fraction == 1.0);
  // Tolerance: GMRES stops with ‖f + J d‖ <= η‖f‖, so the step is off by at
  // most ‖J⁻¹‖ η ‖f‖; rounding in solving the 2×2 system adds ~ u κ(J) ‖d‖
  // (common practice), allowed 100 times. Here ‖J⁻¹‖_F = ‖J‖_F/|det J|.
  const double jacobian_norm = std::sqrt(a11 * a11 + a12 * a12 + a21 * a21 + a22 * a22);
  const double inverse_norm = jacobian_norm / std::abs(determinant);
  const double residual_norm = std::hypot(f1, f2);
  const double step_norm = std::hypot(dx, dy);
  const double tolerance =
      inverse_norm * 1e-12 * residual_norm + 100.0 * unit_roundoff * jacobian_norm * inverse_norm * step_norm;
  CHECK_THAT(u, nkit_test::is_close_to(expected, tolerance));
}

TEST_CASE("Two curves crossing: the default solver converges to the crossing", "[newton][small]") {
  // Root derived in circle_and_parabola's comment. |u − u*| <= ‖J(u*)⁻¹‖ ‖F(u)‖
  // to first order, ×2 for the higher-order terms, with J(u*) = [2x 2y; 2x −1]
  // inverted by hand (‖J⁻¹‖ <= ‖J‖_F / |det J|).
  const double y_root = (std::sqrt(13.0) - 1.0) / 2.0;
  const double x_root = std::sqrt(y_root + 1.0);
  const Eigen::VectorXd root = (Eigen::VectorXd(2) << x_root, y_root).finished();

  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-12;
  settings.relative_tolerance = 0.0;
  Eigen::VectorXd u = (Eigen::VectorXd(2) << 1.0, 1.0).finished();
  const nkit::solve_report report = nkit::solve(circle_and_parabola{}, u, settings);
  CHECK(report.reason == nkit::stop_reason::absolute_tolerance_met);
  Eigen::VectorXd f(2);
  circle_and_parabola{}(u, f);
  const double determinant = 2.0 * x_root * -1.0 - 2.0 * y_root * 2.0 * x_root;
  const double inverse_norm = std::sqrt(8.0 * x_root * x_root + 4.0 * y_root * y_root + 1.0) / std::abs(determinant);
  CHECK_THAT(u, nkit_test::is_close_to(root, 2.0 * inverse_norm * f.norm() + 4.0 * unit_roundoff));
}
