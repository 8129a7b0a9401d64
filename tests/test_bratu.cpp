// One-dimensional Bratu (Liouville–Bratu–Gelfand) problem
//   u'' + λ e^u = 0 on (0, 1), u(0) = u(1) = 0,
// discretised by second-order central differences and solved with nkit, against
// the exact solution (formula from Ascher, Mattheij & Russell, "Numerical
// Solution of Boundary Value Problems for ODEs", SIAM 1995,
// and Boyd, Appl. Math. Comput. 217 (2011) 5553–5565, both from memory)
//   u(x) = −2 ln[cosh((x − ½)θ/2) / cosh(θ/4)],  θ = √(2λ) cosh(θ/4),
// with θ found by bisection (tests/support/bratu_closed_form.hpp, independent of nkit).
#include <Eigen/Eigenvalues>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>

#include "support/bratu_closed_form.hpp"
#include "support/matchers.hpp"
#include "support/tridiagonal_preconditioner.hpp"

namespace {

/// R_i = (u_{i−1} − 2u_i + u_{i+1})/h² + λ e^{u_i}, i = 1..N−1, u_0 = u_N = 0.
/// Not multiplied by h², so R approximates the differential residual and
/// ‖F'(u)⁻¹‖ stays bounded as h → 0 (away from the fold).
struct bratu_residual {
  double lambda;
  Eigen::Index intervals;  // N, h = 1/N, N − 1 unknowns
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    using std::exp;
    const Eigen::Index n = intervals - 1;
    const double inverse_h_squared = static_cast<double>(intervals * intervals);
    for (Eigen::Index i = 0; i < n; ++i) {
      Scalar second_difference = -2.0 * u(i);
      if (i > 0) second_difference += u(i - 1);
      if (i + 1 < n) second_difference += u(i + 1);
      r(i) = inverse_h_squared * second_difference + lambda * exp(u(i));
    }
  }
};

using nkit_test::bratu_1d_exact;
using nkit_test::bratu_fold_alpha;
using nkit_test::bratu_lower_theta;

struct grid_result {
  double max_error;       // max_i |u_i − u(x_i)|: discretisation error (plus solver error)
  double solver_error;    // bound on ‖u − u_h‖₂ from the final residual: ‖F'(u)⁻¹‖₂ ‖R(u)‖₂
  double midpoint_value;  // u at x = ½ (a node: N is even)
};

grid_result solve_on_grid(double lambda, Eigen::Index intervals, double theta) {
  const Eigen::Index n = intervals - 1;
  const double h = 1.0 / static_cast<double>(intervals);
  const bratu_residual residual{lambda, intervals};
  auto problem = nkit::with_automatic_differentiation(residual);

  // Default solver with exact J·v; ‖R‖ <= 1e-10 absolute. Preconditioner: the
  // fixed second-difference matrix tridiag(1, −2, 1)/h² (physics-based, common
  // practice), so M⁻¹F'(u) = I + λ M⁻¹ diag(e^u) and GMRES converges in a few
  // iterations independently of h; unpreconditioned GMRES(30) would not reach
  // the forcing terms on these grids (condition number ~ 4/(π² h²)).
  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-10;
  settings.relative_tolerance = 0.0;
  using preconditioner_type = nkit_test::constant_tridiagonal_preconditioner;
  const double inverse_h_squared = 1.0 / (h * h);
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, preconditioner_type> solver(
      settings, {}, preconditioner_type(n, inverse_h_squared, -2.0 * inverse_h_squared, inverse_h_squared));
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n);  // start from 0: the lower branch
  const nkit::solve_report report = solver.solve(problem, u);
  INFO("λ = " << lambda << ", N = " << intervals << ": " << report.message() << " after " << report.newton_steps
              << " Newton steps, final ‖R‖ " << report.final_residual_norm);
  REQUIRE(report.reason == nkit::stop_reason::absolute_tolerance_met);
  Eigen::VectorXd r(n);
  residual(u, r);
  CHECK(r.norm() <= 1e-10);

  // F'(u) = tridiag(1, −2, 1)/h² + λ diag(e^u) is symmetric, so
  // ‖F'(u)⁻¹‖₂ = 1 / min |eigenvalue|, and the distance from u to the exact
  // discrete solution u_h is at most ‖F'⁻¹‖ ‖R(u)‖ (to first order).
  Eigen::VectorXd diagonal = (-2.0 * inverse_h_squared + lambda * u.array().exp()).matrix();
  Eigen::VectorXd off_diagonal = Eigen::VectorXd::Constant(n - 1, inverse_h_squared);
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eigen;
  eigen.computeFromTridiagonal(diagonal, off_diagonal, Eigen::EigenvaluesOnly);
  const double inverse_norm = 1.0 / eigen.eigenvalues().cwiseAbs().minCoeff();

  grid_result result{0.0, inverse_norm * r.norm(), u(intervals / 2 - 1)};
  for (Eigen::Index i = 0; i < n; ++i) {
    const double x = static_cast<double>(i + 1) * h;
    result.max_error = std::max(result.max_error, std::abs(u(i) - bratu_1d_exact(x, theta)));
  }
  return result;
}

}  // namespace

TEST_CASE("Bratu: theta and the peak value match the computed table", "[bratu][reference]") {
  // Values computed (mpmath, 25 digits) from the exact-solution formula above
  // (Ascher, Mattheij & Russell 1995; Boyd 2011); no published table of these
  // digits is cited. Our
  // bisection brackets θ to the last bit; the error left is rounding in
  // g(θ) and in the formula u(½) = 2 ln cosh(θ/4), a few ulp, so relative
  // 1e-14 leaves a margin of about 20 ulp.
  CHECK_THAT(bratu_lower_theta(1.0), Catch::Matchers::WithinRel(1.5171645990507544, 1e-14));
  CHECK_THAT(2.0 * std::log(std::cosh(bratu_lower_theta(1.0) / 4.0)),
             Catch::Matchers::WithinRel(0.14053921440047180, 1e-14));
  CHECK_THAT(bratu_lower_theta(2.0), Catch::Matchers::WithinRel(2.3575510538774020, 1e-14));
  CHECK_THAT(2.0 * std::log(std::cosh(bratu_lower_theta(2.0) / 4.0)),
             Catch::Matchers::WithinRel(0.32895242134111357, 1e-14));
  CHECK_THAT(bratu_lower_theta(3.0), Catch::Matchers::WithinRel(3.3735077642858915, 1e-14));
  // The fold: λc = 8(α² − 1) with coth α = α (VERIFIED formula; COMPUTED digits).
  const double alpha = bratu_fold_alpha();
  CHECK_THAT(alpha, Catch::Matchers::WithinRel(1.19967864025773383, 1e-14));
  CHECK_THAT(8.0 * (alpha * alpha - 1.0), Catch::Matchers::WithinRel(3.51383071912516121, 1e-14));
  // The formula solves the ODE: the central second difference of u at x = 0.3
  // with step δ = 1e-4 has truncation error |u''''| δ²/12 < 1e-8 (|u''''| < 10
  // here) and rounding error ~ 4u|u|/δ² ~ 3e-8 (common practice).
  const double theta = bratu_lower_theta(2.0);
  const double x = 0.3, step = 1e-4;
  const double second_derivative =
      (bratu_1d_exact(x - step, theta) - 2.0 * bratu_1d_exact(x, theta) + bratu_1d_exact(x + step, theta)) /
      (step * step);
  CHECK_THAT(second_derivative + 2.0 * std::exp(bratu_1d_exact(x, theta)), Catch::Matchers::WithinAbs(0.0, 1e-6));
  CHECK(bratu_1d_exact(0.0, theta) == 0.0);
  CHECK_THAT(bratu_1d_exact(1.0, theta), Catch::Matchers::WithinAbs(0.0, 1e-15));
}

TEST_CASE("Bratu: the discrete solution converges to the exact one at second order", "[bratu][newton]") {
  // λ = 1, 2 and 3.5 (3.5 is close to the fold λc ≈ 3.5138, where F'(u) is
  // nearly singular and the error constant is large), lower branch.
  // Grids N = 32, 64, 128. The central second difference has the error
  // expansion u''''h²/12 + O(h⁴) (even powers only: common practice), so the
  // observed order p = log2(e_N / e_2N) equals 2 + O(h²); the band
  // [1.9, 2.1] allows for that term (measured: p − 2 <= 4e-3 for λ <= 2,
  // 0.042 and 0.010 for λ = 3.5, where pre-asymptotic effects are larger).
  const double lambda = GENERATE(1.0, 2.0, 3.5);
  const double theta = bratu_lower_theta(lambda);
  INFO("λ = " << lambda << ", θ = " << theta);
  const Eigen::Index grids[] = {32, 64, 128};
  grid_result results[3];
  for (int g = 0; g < 3; ++g) results[g] = solve_on_grid(lambda, grids[g], theta);

  for (int g = 0; g < 3; ++g) {
    INFO("N = " << grids[g] << ": max error " << results[g].max_error << ", solver error bound "
                << results[g].solver_error);
    // The Newton tolerance is far below the discretisation error: the
    // solver's contribution (bound ‖F'⁻¹‖‖R‖, measured 3e-13 ... 5e-11) is
    // at most 1e-3 of the max-norm error (measured >= 8.7e-7), so the
    // observed order measures the discretisation alone.
    CHECK(results[g].solver_error <= 1e-3 * results[g].max_error);
    // Lower branch: the peak stays below its value at the fold, u(½) = 1.18684
    // (computed from the exact solution, 25 digits), plus the discretisation error.
    CHECK(results[g].midpoint_value < 1.18684216863438909 + results[g].max_error);
  }
  for (int g = 0; g + 1 < 3; ++g) {
    const double order = std::log2(results[g].max_error / results[g + 1].max_error);
    INFO("N = " << grids[g] << " -> " << grids[g + 1] << ": observed order " << order);
    CHECK(order >= 1.9);
    CHECK(order <= 2.1);
  }
  // The discrete peak approaches the computed exact u(½) (mpmath, from the formula above)
  // within the measured max-norm error.
  if (lambda == 1.0) {
    CHECK_THAT(results[2].midpoint_value, Catch::Matchers::WithinAbs(0.14053921440047180, results[2].max_error));
  } else if (lambda == 2.0) {
    CHECK_THAT(results[2].midpoint_value, Catch::Matchers::WithinAbs(0.32895242134111357, results[2].max_error));
  }
}

TEST_CASE("Bratu test support: the tridiagonal preconditioner inverts its matrix", "[bratu][support]") {
  // T z = r checked by multiplying back (Thomas algorithm, common practice).
  const Eigen::Index n = 50;
  const nkit_test::constant_tridiagonal_preconditioner preconditioner(n, 1.0, -2.5, 0.75);
  const Eigen::VectorXd r = Eigen::VectorXd::LinSpaced(n, -1.0, 3.0).array().sin();
  Eigen::VectorXd z(n);
  preconditioner.apply(r, z);
  Eigen::VectorXd product(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    product(i) = -2.5 * z(i) + (i > 0 ? 1.0 * z(i - 1) : 0.0) + (i + 1 < n ? 0.75 * z(i + 1) : 0.0);
  }
  CHECK_THAT(product, nkit_test::is_close_to(r, 1e-14));
}
