// Index-1 DAEs (algebraic rows: zero entries of a diagonal mass) and the
// problem-form adapters of the implicit steppers.
#include <Eigen/Core>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/time/implicit_time_stepper.hpp>
#include <stdexcept>
#include <string>

namespace {

// Robertson's kinetics as an index-1 DAE: the third equation replaced by the
// conservation law 0 = y1 + y2 + y3 − 1 (E. Hairer & G. Wanner, Solving ODEs
// II, 2nd ed. (1996), §VI.1, problem (1.3)/(1.4) "ROBER" in DAE form; also
// the test set's ROBER discussion). Same solution as the ODE: the t = 40
// values are those of tests/test_time_robertson.cpp (computed with Radau IIA,
// consistent with published transcriptions).
struct robertson_dae {
  nkit::mass_matrix<Eigen::VectorXd> m_mass = nkit::mass_matrix<Eigen::VectorXd>::diagonal(Eigen::Vector3d(1, 1, 0));
  const nkit::mass_matrix<Eigen::VectorXd>& mass() const { return m_mass; }
  void rate(double /*t*/, const Eigen::VectorXd& y, Eigen::VectorXd& f) const {
    f(0) = -0.04 * y(0) + 1e4 * y(1) * y(2);
    f(1) = 0.04 * y(0) - 1e4 * y(1) * y(2) - 3e7 * y(1) * y(1);
    f(2) = y(0) + y(1) + y(2) - 1.0;
  }
};

// A nonlinear index-1 DAE with a closed form (constructed here: substitute to
// check): y' = −y + z, 0 = z − y² − g(t) with g = cos t − sin t − cos² t has
// the solution y = cos t, z = cos t − sin t.
struct manufactured_dae {
  nkit::mass_matrix<Eigen::VectorXd> m_mass = nkit::mass_matrix<Eigen::VectorXd>::diagonal(Eigen::Vector2d(1, 0));
  const nkit::mass_matrix<Eigen::VectorXd>& mass() const { return m_mass; }
  void rate(double t, const Eigen::VectorXd& u, Eigen::VectorXd& f) const {
    const double g = std::cos(t) - std::sin(t) - std::cos(t) * std::cos(t);
    f(0) = -u(0) + u(1);
    f(1) = u(1) - u(0) * u(0) - g;
  }
};

}  // namespace

TEST_CASE("Robertson as an index-1 DAE keeps its constraint and matches the ODE solution", "[time][dae]") {
  const Eigen::Vector3d reference(0.71582706871941, 9.1855347645578e-6, 0.28416374574583);
  for (auto method : {nkit::time_method::bdf, nkit::time_method::esdirk}) {
    nkit::time_stepper_settings s;
    s.method = method;
    s.relative_tolerance = 1e-6;
    s.absolute_tolerance = 1e-10;
    nkit::implicit_time_stepper<> stepper(s);
    robertson_dae problem;
    Eigen::VectorXd y(3);
    y << 1.0, 0.0, 0.0;  // consistent: y1 + y2 + y3 = 1
    double worst_constraint = 0.0;
    const auto monitor = [&](const nkit::time_step_record& record) {
      if (record.accepted) worst_constraint = std::max(worst_constraint, std::abs(y.sum() - 1.0));
    };
    const nkit::integration_report& report = stepper.integrate(problem, y, 0.0, 40.0, monitor);
    INFO(nkit::name(method) << ": " << report.accepted_steps << " steps, " << report.rejected_steps()
                            << " rejected, y = " << y.transpose());
    REQUIRE(report.reached_end());
    // Same margin as the ODE test: 100 × rtol.
    for (int i = 0; i < 3; ++i) CHECK_THAT(y(i), Catch::Matchers::WithinRel(reference(i), 1e-4));
    // The constraint is linear, so every Newton iterate after the first
    // satisfies it up to the linear solve's accuracy: far below the tolerances.
    CHECK(worst_constraint < 1e-12);
  }
}

TEST_CASE("A nonlinear index-1 DAE converges to its closed-form solution", "[time][dae]") {
  // Closed form checked by substitution: y' + y − z = −sin t + cos t − (cos t − sin t) = 0.
  for (auto method : {nkit::time_method::bdf, nkit::time_method::esdirk}) {
    nkit::time_stepper_settings s;
    s.method = method;
    s.relative_tolerance = 1e-7;
    s.absolute_tolerance = 1e-9;
    nkit::implicit_time_stepper<> stepper(s);
    manufactured_dae problem;
    Eigen::VectorXd u(2);
    u << 1.0, 1.0;  // y(0) = 1, z(0) = 1: consistent
    double worst_algebraic = 0.0;
    const auto monitor = [&](const nkit::time_step_record& record) {
      if (!record.accepted) return;
      const double t = stepper.time();
      worst_algebraic = std::max(
          worst_algebraic, std::abs(u(1) - u(0) * u(0) - (std::cos(t) - std::sin(t) - std::cos(t) * std::cos(t))));
    };
    const nkit::integration_report& report = stepper.integrate(problem, u, 0.0, 5.0, monitor);
    REQUIRE(report.reached_end());
    INFO(nkit::name(method) << ": " << report.accepted_steps << " steps, u = " << u.transpose());
    // Global error allowance 100 × rtol (tolerance proportionality margin, as above).
    CHECK_THAT(u(0), Catch::Matchers::WithinAbs(std::cos(5.0), 1e-5));
    CHECK_THAT(u(1), Catch::Matchers::WithinAbs(std::cos(5.0) - std::sin(5.0), 1e-5));
    // The constraint holds at every accepted step to the stage-solve accuracy
    // (newton_tolerance_fraction 0.1 of the weighted tolerance, ~1e-9 here).
    CHECK(worst_algebraic < 1e-7);
  }
}

TEST_CASE("du/dt = -R(u) + S(t) from a steady residual, with a diagonal mass", "[time][problem_form]") {
  // R(u) = a u (a = 2) and S(t) = b (b = 3) with mass m = 0.5:
  // 0.5 u' = −2u + 3 → u(t) = 1.5 + (u0 − 1.5) e^(−4t) (linear ODE; closed form).
  const auto residual = [](const Eigen::VectorXd& u, Eigen::VectorXd& r) { r = 2.0 * u; };
  const auto source = [](double /*t*/, Eigen::VectorXd& s) { s.setConstant(3.0); };
  auto residual_copy = residual;
  auto problem = nkit::make_residual_form(
      residual_copy, source, nkit::mass_matrix<Eigen::VectorXd>::diagonal(Eigen::VectorXd::Constant(4, 0.5)));
  for (auto method : {nkit::time_method::bdf, nkit::time_method::esdirk}) {
    nkit::time_stepper_settings s;
    s.method = method;
    s.relative_tolerance = 1e-8;
    s.absolute_tolerance = 1e-10;
    nkit::implicit_time_stepper<> stepper(s);
    Eigen::VectorXd u = Eigen::VectorXd::Zero(4);
    REQUIRE(stepper.integrate(problem, u, 0.0, 1.0).reached_end());
    // 100 × rtol, relative (tolerance-proportionality margin, as above).
    CHECK_THAT(u(3), Catch::Matchers::WithinRel(1.5 - 1.5 * std::exp(-4.0), 1e-6));
  }
}

TEST_CASE("Bad settings and inputs of the time stepper throw naming the value", "[time][bad_input]") {
  nkit::time_stepper_settings s;
  s.bdf_order = 3;
  CHECK_THROWS_WITH(nkit::implicit_time_stepper<>(s), "nkit: time_stepper_settings.bdf_order must be 1 or 2 (got 3)");
  s = {};
  s.step_control.minimum_shrink_factor = 1.5;
  CHECK_THROWS_WITH(nkit::implicit_time_stepper<>(s),
                    "nkit: time_stepper_settings.step_control.minimum_shrink_factor must be in (0, 1) (got 1.5)");
  s = {};
  s.absolute_tolerance = 0.0;
  CHECK_THROWS_WITH(nkit::implicit_time_stepper<>(s),
                    "nkit: time_stepper_settings.absolute_tolerance must be finite and > 0 (got 0)");
  s = {};
  s.preconditioner_rebuild.shift_change_factor = 1.0;
  CHECK_THROWS_WITH(nkit::implicit_time_stepper<>(s),
                    "nkit: time_stepper_settings.preconditioner_rebuild.shift_change_factor must be > 1 (got 1)");
  s = {};
  s.stage.newton.newton_step_budget = 0;  // a nested Newton setting is named by its full path
  CHECK_THROWS_WITH(nkit::implicit_time_stepper<>(s),
                    "nkit: time_stepper_settings.stage.newton.newton_step_budget must be >= 1 (got 0)");
  CHECK_THROWS_WITH(nkit::mass_matrix<Eigen::VectorXd>::diagonal(Eigen::Vector2d(1.0, -1.0)),
                    "nkit: mass_matrix::diagonal entry 1 must be finite and >= 0 (got -1)");

  nkit::implicit_time_stepper<> stepper;
  manufactured_dae problem;
  Eigen::VectorXd u(2);
  u << 1.0, 1.0;
  CHECK_THROWS_WITH(stepper.integrate(problem, u, 1.0, 1.0),
                    "nkit: integrate needs finite t_start < t_end (got t_start = 1, t_end = 1)");
  u(0) = std::nan("");
  CHECK_THROWS_WITH(stepper.integrate(problem, u, 0.0, 1.0), "nkit: the initial state u contains NaN or Inf entries");
  u(0) = 1.0;
  CHECK_THROWS_WITH(stepper.set_tolerances(Eigen::Vector2d(1e-6, 0.0), Eigen::VectorXd()),
                    "nkit: set_tolerances: absolute entry 1 must be finite and > 0 (got 0)");
  // A rejected call leaves the stepper usable and u untouched.
  CHECK(u(0) == 1.0);
  CHECK(stepper.integrate(problem, u, 0.0, 0.5).reached_end());
}

TEST_CASE("A throwing rate leaves u at the last accepted step", "[time][bad_input]") {
  struct failing_decay {
    int calls = 0;
    void rate(double /*t*/, const Eigen::VectorXd& u, Eigen::VectorXd& f) {
      if (++calls > 40) throw std::runtime_error("rate failed");
      f = -u;
    }
  } problem;
  nkit::implicit_time_stepper<> stepper;
  Eigen::VectorXd u = Eigen::VectorXd::Ones(3);
  double last_accepted_value = 1.0;
  const auto monitor = [&](const nkit::time_step_record& record) {
    if (record.accepted) last_accepted_value = u(0);
  };
  CHECK_THROWS_WITH(stepper.integrate(problem, u, 0.0, 10.0, monitor), "rate failed");
  CHECK(u(0) == last_accepted_value);
  // The state is the exact decay at the stepper's time to the tolerance (1e-4 rel, 100× margin).
  CHECK_THAT(u(0), Catch::Matchers::WithinRel(std::exp(-stepper.time()), 1e-2));
}
