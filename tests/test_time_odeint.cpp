// nkit's implicit steppers driven through Boost.Odeint's own integrate
// functions (the controlled-stepper concept), checked against closed forms,
// against Boost.Odeint's Dormand–Prince integrator (a general-purpose
// reference library) and on Robertson's stiff kinetics.
#include <Eigen/Core>
#include <boost/numeric/odeint.hpp>
#include <boost/numeric/odeint/external/eigen/eigen.hpp>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/time/odeint_stepper.hpp>
#include <vector>

namespace odeint = boost::numeric::odeint;

namespace {

// A damped oscillator x'' + 0.5 x' + 4 x = 0 as a first-order system; closed
// form x = e^(−t/4)(cos ωt + sin(ωt)/(4ω)), ω = √(4 − 1/16), for x(0) = 1,
// x'(0) = 0 (linear constant-coefficient ODE; common practice).
struct damped_oscillator {
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& dxdt, double /*t*/) const {
    dxdt(0) = x(1);
    dxdt(1) = -4.0 * x(0) - 0.5 * x(1);
  }
};
double oscillator_position(double t) {
  const double omega = std::sqrt(4.0 - 1.0 / 16.0);
  return std::exp(-t / 4.0) * (std::cos(omega * t) + std::sin(omega * t) / (4.0 * omega));
}

nkit::time_stepper_settings tight(nkit::time_method method) {
  nkit::time_stepper_settings s;
  s.method = method;
  s.relative_tolerance = 1e-7;
  s.absolute_tolerance = 1e-9;
  return s;
}

}  // namespace

TEST_CASE("integrate_adaptive drives the nkit stepper with odeint observers", "[time][odeint]") {
  for (auto method : {nkit::time_method::esdirk, nkit::time_method::bdf}) {
    nkit::odeint_implicit_stepper<> stepper(tight(method));
    Eigen::VectorXd x(2);
    x << 1.0, 0.0;
    std::vector<double> times;
    std::vector<double> worst{0.0};
    const auto observer = [&](const Eigen::VectorXd& state, double t) {
      times.push_back(t);
      worst[0] = std::max(worst[0], std::abs(state(0) - oscillator_position(t)));
    };
    const std::size_t steps = odeint::integrate_adaptive(stepper, damped_oscillator{}, x, 0.0, 5.0, 1e-3, observer);
    INFO(nkit::name(method) << ": " << steps << " steps, worst error " << worst[0]);
    // odeint calls the observer at the start and after every step, in order, ending at t1.
    REQUIRE(times.size() == steps + 1);
    CHECK(times.front() == 0.0);
    CHECK_THAT(times.back(), Catch::Matchers::WithinAbs(5.0, 1e-12));
    for (std::size_t i = 1; i < times.size(); ++i) CHECK(times[i] > times[i - 1]);
    // Global error within 100 × rtol of the solution's scale 1 (tolerance-
    // proportionality margin) for TR-BDF2; BDF2's phase error on this lightly
    // damped oscillation accumulates over the three periods (measured 2.3e-5),
    // so it gets 500 × rtol.
    CHECK(worst[0] < (method == nkit::time_method::esdirk ? 1e-5 : 5e-5));
    CHECK(stepper.stepper().report().accepted_steps == static_cast<std::int64_t>(steps));
  }
}

TEST_CASE("integrate_const through the nkit stepper matches odeint's Dormand-Prince", "[time][odeint]") {
  // Reference: Boost.Odeint runge_kutta_dopri5 at tolerance 1e-12 (general-purpose reference library).
  Eigen::VectorXd reference(2);
  reference << 1.0, 0.0;
  std::vector<double> reference_positions;
  odeint::integrate_const(
      odeint::make_controlled<
          odeint::runge_kutta_dopri5<Eigen::VectorXd, double, Eigen::VectorXd, double, odeint::vector_space_algebra>>(
          1e-12, 1e-12),
      damped_oscillator{}, reference, 0.0, 3.0, 0.25,
      [&](const Eigen::VectorXd& s, double) { reference_positions.push_back(s(0)); });
  nkit::odeint_implicit_stepper<> stepper(tight(nkit::time_method::esdirk));
  Eigen::VectorXd x(2);
  x << 1.0, 0.0;
  std::vector<double> positions;
  odeint::integrate_const(stepper, damped_oscillator{}, x, 0.0, 3.0, 0.25,
                          [&](const Eigen::VectorXd& s, double) { positions.push_back(s(0)); });
  REQUIRE(positions.size() == reference_positions.size());
  REQUIRE(positions.size() == 13);
  for (std::size_t i = 0; i < positions.size(); ++i) {
    CHECK_THAT(positions[i], Catch::Matchers::WithinAbs(reference_positions[i], 1e-5));  // 100 × rtol
  }
}

TEST_CASE("integrate_adaptive with the nkit stepper solves stiff Robertson kinetics", "[time][odeint]") {
  // Robertson (1966) as in tests/test_time_robertson.cpp; t = 40 values computed
  // with Radau IIA (consistent with published transcriptions).
  const auto robertson = [](const Eigen::VectorXd& y, Eigen::VectorXd& f, double) {
    f(0) = -0.04 * y(0) + 1e4 * y(1) * y(2);
    f(1) = 0.04 * y(0) - 1e4 * y(1) * y(2) - 3e7 * y(1) * y(1);
    f(2) = 3e7 * y(1) * y(1);
  };
  nkit::time_stepper_settings s;
  s.method = nkit::time_method::esdirk;
  s.relative_tolerance = 1e-6;
  s.absolute_tolerance = 1e-10;
  nkit::odeint_implicit_stepper<> stepper(s);
  Eigen::VectorXd y(3);
  y << 1.0, 0.0, 0.0;
  const std::size_t steps = odeint::integrate_adaptive(stepper, robertson, y, 0.0, 40.0, 1e-6);
  INFO(steps << " steps, y = " << y.transpose());
  const Eigen::Vector3d reference(0.71582706871941, 9.1855347645578e-6, 0.28416374574583);
  for (int i = 0; i < 3; ++i) CHECK_THAT(y(i), Catch::Matchers::WithinRel(reference(i), 1e-4));
  // An explicit integrator needs ~1e5 steps here (stability bound ~ 2/|λ| with |λ| ~ 1e4);
  // the implicit stepper a few hundred.
  CHECK(steps < 2000);
}
