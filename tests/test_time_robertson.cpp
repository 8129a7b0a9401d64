// Robertson's stiff chemical kinetics with the adaptive implicit steppers.
//
// Problem: H.H. Robertson, "The solution of a set of reaction rate
// equations", in J. Walsh (ed.), Numerical Analysis: An Introduction,
// Academic Press (1966) 178–182; stated as ROBER in E. Hairer & G. Wanner,
// Solving Ordinary Differential Equations II, 2nd ed., Springer (1996),
// §IV.1 (eq. 1.4), and in F. Mazzia & C. Magherini, Test Set for IVP Solvers,
// release 2.4 (2008), problem ROBER:
//   y1' = −0.04 y1 + 1e4 y2 y3
//   y2' =  0.04 y1 − 1e4 y2 y3 − 3e7 y2²
//   y3' =  3e7 y2²,          y(0) = (1, 0, 0).
// Reference values at t = 40: computed with a 3-stage Radau IIA integrator
// at tolerance 1e-13 (which reproduces the test set's published t = 1e11
// values to all printed digits), and consistent with public transcriptions of
// the t = 40 solution to 7 digits: y = (0.7158271, 9.185535e-6, 0.2841637).
// No primary publication tabulating t = 40 was seen, so these are "computed
// (Radau IIA, cross-checked)", not published values.
#include <Eigen/Core>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/time/implicit_time_stepper.hpp>

namespace {

struct robertson {
  void rate(double /*t*/, const Eigen::VectorXd& y, Eigen::VectorXd& f) const {
    f(0) = -0.04 * y(0) + 1e4 * y(1) * y(2);
    f(1) = 0.04 * y(0) - 1e4 * y(1) * y(2) - 3e7 * y(1) * y(1);
    f(2) = 3e7 * y(1) * y(1);
  }
};

const Eigen::Vector3d reference_at_40(0.71582706871941, 9.1855347645578e-6, 0.28416374574583);

nkit::time_stepper_settings robertson_settings(nkit::time_method method) {
  nkit::time_stepper_settings s;
  s.method = method;
  s.relative_tolerance = 1e-6;
  s.absolute_tolerance = 1e-10;  // y2 is O(1e-5): its absolute tolerance must be far below that
  s.stage.newton.linear.restart_length = 3;
  return s;
}

void check_robertson(nkit::time_method method) {
  nkit::implicit_time_stepper<> stepper(robertson_settings(method));
  robertson problem;
  Eigen::VectorXd y(3);
  y << 1.0, 0.0, 0.0;
  const nkit::integration_report& report = stepper.integrate(problem, y, 0.0, 40.0);
  INFO("method " << nkit::name(method) << ": " << report.accepted_steps << " steps, " << report.rejected_steps()
                 << " rejected, h from " << report.smallest_accepted_step << " to " << report.largest_accepted_step
                 << ", newton " << report.newton_steps << ", y = " << y.transpose());
  REQUIRE(report.reached_end());
  CHECK(report.final_time == 40.0);
  // Tolerance: rtol = 1e-6 bounds the local error per step; the global error
  // after a few hundred steps is allowed 100 × rtol (a tolerance-proportionality
  // margin, common practice). Measured: BDF2 5e-5, TR-BDF2 6e-6 (worst entry).
  for (int i = 0; i < 3; ++i) CHECK_THAT(y(i), Catch::Matchers::WithinRel(reference_at_40(i), 1e-4));
  // Mass conservation y1 + y2 + y3 = 1 (Hairer & Wanner II, §IV.1): every
  // linear invariant is kept by BDF and Runge–Kutta steps up to the Newton error.
  CHECK_THAT(y.sum(), Catch::Matchers::WithinAbs(1.0, 1e-8));
  // Adaptive steps spanning many orders of magnitude (the fast transient near
  // t = 0 needs steps < 1e-3, the slow phase steps of order 1).
  CHECK(report.largest_accepted_step / report.smallest_accepted_step > 1e4);
}

}  // namespace

TEST_CASE("Robertson kinetics to t = 40 with variable-step BDF2", "[time][robertson]") {
  check_robertson(nkit::time_method::bdf);
}

TEST_CASE("Robertson kinetics to t = 40 with TR-BDF2", "[time][robertson]") {
  check_robertson(nkit::time_method::esdirk);
}
