// Budgets, monitors, cancellation and the per-step records of the implicit
// time stepper: every stop is a value of integration_stop_reason, never an
// exception, and u is the state at report.final_time.
#include <Eigen/Core>
#include <atomic>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/time/implicit_time_stepper.hpp>

namespace {

/// u' = −λ u, u(0) = 1: exact e^(−λt) (closed form).
struct decay {
  double rate_constant = 1.0;
  void rate(double /*t*/, const Eigen::VectorXd& u, Eigen::VectorXd& f) const { f = -rate_constant * u; }
};

void check_state_at_final_time(const nkit::integration_report& report, const Eigen::VectorXd& u) {
  // 100 × rtol (default rtol 1e-4) relative to the exact decay at the reported time.
  CHECK_THAT(u(0), Catch::Matchers::WithinRel(std::exp(-report.final_time), 1e-2));
}

}  // namespace

TEST_CASE("The attempt budget stops an integration with u at the last accepted step", "[time][budgets]") {
  nkit::time_stepper_settings s;
  s.attempted_step_budget = 5;
  for (auto method : {nkit::time_method::bdf, nkit::time_method::esdirk}) {
    s.method = method;
    nkit::implicit_time_stepper<> stepper(s);
    decay problem;
    Eigen::VectorXd u = Eigen::VectorXd::Ones(2);
    const nkit::integration_report& report = stepper.integrate(problem, u, 0.0, 100.0);
    CHECK(report.reason == nkit::integration_stop_reason::attempted_step_budget_spent);
    CHECK(report.accepted_steps + report.rejected_steps() == 5);
    CHECK(report.final_time > 0.0);
    CHECK(report.final_time < 100.0);
    check_state_at_final_time(report, u);
  }
}

TEST_CASE("A monitor can stop the integration and sees every attempt", "[time][budgets]") {
  nkit::time_stepper_settings s;
  s.history_capacity = 2;  // later records are counted, not stored
  nkit::implicit_time_stepper<> stepper(s);
  decay problem;
  Eigen::VectorXd u = Eigen::VectorXd::Ones(1);
  int seen = 0;
  const nkit::integration_report& report =
      stepper.integrate(problem, u, 0.0, 10.0, [&](const nkit::time_step_record& record) {
        ++seen;
        CHECK(record.attempt == seen);
        return record.accepted_steps >= 3 ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
      });
  CHECK(report.reason == nkit::integration_stop_reason::monitor_requested_stop);
  CHECK(report.accepted_steps == 3);
  CHECK(report.history.size() == 2);
  CHECK(report.records_not_stored == seen - 2);
  check_state_at_final_time(report, u);
}

TEST_CASE("A raised cancellation flag stops before the next stage", "[time][budgets]") {
  std::atomic<bool> cancel{false};
  nkit::time_stepper_settings s;
  s.cancellation_flag = &cancel;
  nkit::implicit_time_stepper<> stepper(s);
  decay problem;
  Eigen::VectorXd u = Eigen::VectorXd::Ones(1);
  const nkit::integration_report& report =
      stepper.integrate(problem, u, 0.0, 10.0, [&](const nkit::time_step_record& r) {
        if (r.accepted_steps == 2) cancel = true;
      });
  CHECK(report.reason == nkit::integration_stop_reason::cancellation_flag_raised);
  CHECK(report.accepted_steps == 2);
  check_state_at_final_time(report, u);
}

TEST_CASE("A step-size floor stops the integration with the state untouched", "[time][budgets]") {
  nkit::time_stepper_settings s;
  s.step_control.minimum_step = 0.5;  // a fast decay (λ = 1e3) cannot be followed with steps >= 0.5 at rtol 1e-4
  s.step_control.initial_step = 0.5;
  nkit::implicit_time_stepper<> stepper(s);
  decay problem{1e3};
  Eigen::VectorXd u = Eigen::VectorXd::Ones(1);
  const nkit::integration_report& report = stepper.integrate(problem, u, 0.0, 10.0);
  CHECK(report.reason == nkit::integration_stop_reason::step_size_below_minimum);
  CHECK(report.accepted_steps == 0);
  CHECK(u(0) == 1.0);  // nothing accepted: the initial state
  // The first attempt (Δt = 0.5) fails the error test; the retry step would be below the floor.
  REQUIRE(report.history.size() == 1);
  CHECK(report.history[0].rejection == nkit::step_rejection::error_test);
  CHECK(report.history[0].error_norm > 1.0);
  CHECK(report.history[0].next_step_size < 0.5);
}
