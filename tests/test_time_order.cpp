// Measured order of accuracy of the implicit steppers on linear diffusion.
//
// u_t = Δu on the unit square, u = 0 on the boundary, u(0) = sin(πx) sin(πy):
// the exact solution is e^(−2π²t) sin(πx) sin(πy) (separation of variables;
// common practice). With the 5-point Laplacian on N×N interior nodes (h = 1/(N+1)) the
// grid function φ = sin(πx_i) sin(πy_j) is an exact eigenvector of the
// discrete operator with eigenvalue λ_h = −(8/h²) sin²(πh/2) (the discrete
// sine series; common practice), so the semi-discrete solution is exactly
// e^(λ_h t) φ. Comparing against it isolates the time-discretisation error
// from the O(h²) spatial one. Orders must lie within ±0.15 of theory:
// BDF1 1, BDF2 2, TR-BDF2 2 (Hosea & Shampine 1996); the embedded TR-BDF2
// estimate is the difference to a third-order solution, so the per-step
// error estimate falls like Δt³.
#include <Eigen/Core>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/time/implicit_time_stepper.hpp>
#include <vector>

namespace {

constexpr double pi = 3.14159265358979323846;

struct heat_equation {
  int n = 15;
  double h = 1.0 / 16.0;
  void rate(double /*t*/, const Eigen::VectorXd& u, Eigen::VectorXd& f) const {
    const double scale = 1.0 / (h * h);
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const int p = i + n * j;
        double sum = -4.0 * u(p);
        if (i > 0) sum += u(p - 1);
        if (i + 1 < n) sum += u(p + 1);
        if (j > 0) sum += u(p - n);
        if (j + 1 < n) sum += u(p + n);
        f(p) = scale * sum;
      }
    }
  }
  Eigen::VectorXd mode() const {
    Eigen::VectorXd phi(n * n);
    for (int j = 0; j < n; ++j)
      for (int i = 0; i < n; ++i) phi(i + n * j) = std::sin(pi * (i + 1) * h) * std::sin(pi * (j + 1) * h);
    return phi;
  }
  double eigenvalue() const {
    const double s = std::sin(pi * h / 2.0);
    return -8.0 / (h * h) * s * s;
  }
};

struct fixed_step_result {
  double error = 0.0;           ///< max-norm error at T against the semi-discrete solution
  double largest_estimate = 0;  ///< largest weighted local error estimate over the steps
};

fixed_step_result run_fixed(nkit::time_method method, int bdf_order, int steps, double final_time) {
  heat_equation problem;
  nkit::time_stepper_settings s;
  s.method = method;
  s.bdf_order = bdf_order;
  s.step_control.adaptive = false;
  s.step_control.initial_step = final_time / steps;
  // Newton and GMRES errors far below the time error: tight stage tolerances
  // (the weighted norm uses these tolerances).
  s.relative_tolerance = 1e-10;
  s.absolute_tolerance = 1e-12;
  nkit::implicit_time_stepper<> stepper(s);
  Eigen::VectorXd u = problem.mode();
  const nkit::integration_report& report = stepper.integrate(problem, u, 0.0, final_time);
  REQUIRE(report.reached_end());
  REQUIRE(report.accepted_steps == steps);  // the BDF start (two half steps) counts as one step
  fixed_step_result result;
  result.error = (u - std::exp(problem.eigenvalue() * final_time) * problem.mode()).lpNorm<Eigen::Infinity>();
  for (const auto& record : report.history) {
    result.largest_estimate = std::max(result.largest_estimate, record.error_norm);
  }
  return result;
}

/// Least-squares slope of log(error) against log(Δt).
double fitted_order(const std::vector<int>& steps, const std::vector<double>& errors) {
  double sx = 0, sy = 0, sxx = 0, sxy = 0;
  const double n = static_cast<double>(steps.size());
  for (std::size_t i = 0; i < steps.size(); ++i) {
    const double x = std::log(1.0 / steps[i]);
    const double y = std::log(errors[i]);
    sx += x;
    sy += y;
    sxx += x * x;
    sxy += x * y;
  }
  return (n * sxy - sx * sy) / (n * sxx - sx * sx);
}

double measured_order(nkit::time_method method, int bdf_order, bool of_estimate = false) {
  const std::vector<int> steps{16, 32, 64, 128};
  std::vector<double> errors;
  for (int count : steps) {
    const fixed_step_result r = run_fixed(method, bdf_order, count, 0.1);
    errors.push_back(of_estimate ? r.largest_estimate : r.error);
  }
  return fitted_order(steps, errors);
}

}  // namespace

TEST_CASE("Backward Euler (BDF1) converges with order 1 on linear diffusion", "[time][order]") {
  CHECK_THAT(measured_order(nkit::time_method::bdf, 1), Catch::Matchers::WithinAbs(1.0, 0.15));
}

TEST_CASE("Variable-step BDF2 converges with order 2 on linear diffusion", "[time][order]") {
  CHECK_THAT(measured_order(nkit::time_method::bdf, 2), Catch::Matchers::WithinAbs(2.0, 0.15));
}

TEST_CASE("TR-BDF2 converges with order 2 and its error estimate falls like dt^3", "[time][order]") {
  CHECK_THAT(measured_order(nkit::time_method::esdirk, 2), Catch::Matchers::WithinAbs(2.0, 0.15));
  // The local error estimate (difference to the embedded third-order
  // solution) is O(Δt³) per step.
  CHECK_THAT(measured_order(nkit::time_method::esdirk, 2, true), Catch::Matchers::WithinAbs(3.0, 0.15));
}
