// The Newton driver's contract: outcomes, the state left in u, budgets,
// monitors, the caller-driven loop and the report (bad input, budgets and
// determinism have their own files: test_bad_input.cpp, test_budgets.cpp,
// test_determinism.cpp). Test problems here are
// small invented systems whose roots are known in closed form.
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/nkit.hpp>
#include <sstream>

#include "support/matchers.hpp"

using nkit_test::is_close_to;

namespace {

/// r_i = u_i³ − c_i with c_i = i + 1: root u_i = cbrt(i + 1) (closed form).
struct cubic_roots {
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    for (Eigen::Index i = 0; i < u.size(); ++i) r(i) = u(i) * u(i) * u(i) - static_cast<double>(i + 1);
  }
  static Eigen::VectorXd root(Eigen::Index n) {
    Eigen::VectorXd x(n);
    for (Eigen::Index i = 0; i < n; ++i) x(i) = std::cbrt(static_cast<double>(i + 1));
    return x;
  }
};

/// r = atan(u): root 0. Full Newton steps diverge from |u0| > 1.3917452 (the
/// root of 2u = (1 + u²) atan u, a classical example; common practice).
struct arctangent {
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const { r = u.array().atan(); }
};

}  // namespace

TEST_CASE("a cubic system converges to its closed-form root", "[newton]") {
  const int n = GENERATE(1, 2, 50);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(n, 1.5);
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-12;
  const auto report = nkit::solve(cubic_roots{}, u, settings);
  CHECK(report.reason == nkit::stop_reason::relative_tolerance_met);
  CHECK(report.final_residual_norm <= 1e-12 * report.initial_residual_norm);
  // |δu| ≈ |r| / (3u²) >= 1/(3·cbrt(50)²) is the conditioning; 1e-10 is ample.
  CHECK_THAT(u, is_close_to(cubic_roots::root(n), 1e-10, 0.0));
  CHECK(report.history.size() == static_cast<std::size_t>(report.newton_steps));
}

TEST_CASE("the line search rescues Newton where full steps diverge", "[newton][line_search]") {
  Eigen::VectorXd u = Eigen::VectorXd::Constant(1, 3.0);
  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-12;
  settings.relative_tolerance = 1e-15;
  nkit::newton_krylov_solver<> solver(settings);
  auto report = solver.solve(arctangent{}, u);
  CHECK(report.converged());
  CHECK(std::abs(u(0)) <= 1e-12);
  CHECK(report.rejected_trials > 0);
  CHECK(report.history.front().step_fraction < 1.0);

  // Full steps from the same start run away; the solve stops and u is the
  // best iterate seen: the initial guess, whose residual was smallest.
  settings.globalization = nkit::globalization_strategy::full_step;
  settings.newton_step_budget = 4;
  solver.configure(settings);
  u(0) = 3.0;
  report = solver.solve(arctangent{}, u);
  CHECK_FALSE(report.converged());
  CHECK(report.reason == nkit::stop_reason::newton_step_budget_spent);
  CHECK(u(0) == 3.0);
  CHECK_THAT(report.final_residual_norm, Catch::Matchers::WithinRel(std::atan(3.0), 1e-15));
  CHECK(report.history.back().residual_norm > report.final_residual_norm);
}

TEST_CASE("the caller-driven loop and solve() give identical results", "[newton]") {
  nkit::newton_krylov_solver<> solver;
  Eigen::VectorXd u1 = Eigen::VectorXd::Constant(20, 2.0);
  const nkit::solve_report direct = solver.solve(cubic_roots{}, u1);
  Eigen::VectorXd u2 = Eigen::VectorXd::Constant(20, 2.0);
  cubic_roots residual;
  auto run = solver.begin(residual, u2);
  int steps = 0;
  while (run.advance() == nkit::run_state::running) ++steps;
  CHECK(u1 == u2);
  CHECK(run.report().newton_steps == direct.newton_steps);
  CHECK(steps + 1 == direct.newton_steps);
  CHECK(run.report().residual_evaluations == direct.residual_evaluations);
  CHECK(run.report().reason == direct.reason);
}

TEST_CASE("monitors see every step and every linear iteration, and can stop the solve", "[newton][monitor]") {
  struct recording_monitor {
    int steps = 0;
    int linear = 0;
    double last_linear = 1.0;
    bool decreasing = true;
    nkit::monitor_decision after_newton_step(const nkit::newton_step_record& record) {
      ++steps;
      last_linear = 1.0;
      return record.step == 2 ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
    }
    void after_linear_iteration(int, double relative) {
      ++linear;
      decreasing = decreasing && relative <= last_linear * (1 + 1e-12);  // GMRES residuals never grow
      last_linear = relative;
    }
  } monitor;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(10, 3.0);
  nkit::newton_krylov_solver<> solver;
  const auto report = solver.solve(cubic_roots{}, u, monitor);
  CHECK(report.reason == nkit::stop_reason::monitor_requested_stop);
  CHECK(monitor.steps == 2);
  CHECK(monitor.linear == report.linear_iterations);
  CHECK(monitor.decreasing);

  nkit::monitor_list list;
  int first = 0, second = 0;
  list.add([&](const nkit::newton_step_record&) { ++first; });
  list.add([&](const nkit::newton_step_record& r) {
    ++second;
    return r.step == 1 ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
  });
  u = Eigen::VectorXd::Constant(10, 3.0);
  CHECK(solver.solve(cubic_roots{}, u, list).reason == nkit::stop_reason::monitor_requested_stop);
  CHECK(first == 1);
  CHECK(second == 1);
}

TEST_CASE("stagnation and small steps end the solve with their own outcomes", "[newton]") {
  // r = u² + 1 has no real root; full Newton steps u ← (u − 1/u)/2 wander forever.
  auto no_root = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().square() + 1.0; };
  nkit::newton_settings settings;
  settings.globalization = nkit::globalization_strategy::full_step;
  settings.newton_step_budget = 200;
  settings.stagnation_window = 5;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(1, 0.3);
  auto report = nkit::solve(no_root, u, settings);
  CHECK(report.reason == nkit::stop_reason::residual_stagnated);
  CHECK(report.final_residual_norm == std::abs(u(0) * u(0) + 1.0));  // u is the best iterate, and it matches

  // With the line search the residual cannot decrease below 1 either, and the
  // search fails once no step gives sufficient decrease.
  settings = {};
  u(0) = 0.3;
  report = nkit::solve(no_root, u, settings);
  CHECK(report.reason == nkit::stop_reason::no_acceptable_step);
  CHECK(report.final_residual_norm <= 0.3 * 0.3 + 1.0);

  settings = {};
  settings.negligible_step_size = 1e-3;
  settings.relative_tolerance = 1e-15;
  settings.absolute_tolerance = 0.0;
  // r = u⁴ has a multiple root: Newton converges linearly (factor 3/4), so the
  // step falls below the tolerance long before the residual does.
  auto quartic = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().pow(4); };
  u(0) = 1.0;
  report = nkit::solve(quartic, u, settings);
  CHECK(report.reason == nkit::stop_reason::negligible_step);
}

TEST_CASE("the report's counts, phases and history are consistent", "[newton][report]") {
  Eigen::VectorXd u = Eigen::VectorXd::Constant(200, 2.5);
  nkit::newton_krylov_solver<> solver;
  const auto report = solver.solve(cubic_roots{}, u);
  REQUIRE(report.converged());
  std::int64_t linear = 0;
  for (const auto& record : report.history) linear += record.linear_iterations;
  CHECK(linear == report.linear_iterations);
  CHECK(report.history.back().residual_evaluations == report.residual_evaluations);
  // Forward differences: one evaluation per J·v product, plus one per trial point and R(u0).
  CHECK(report.residual_evaluations == report.jacobian_vector_products + report.calls.residual);
  CHECK(report.calls.residual == 1 + report.newton_steps + report.rejected_trials);
  CHECK(report.time.other >= 0.0);
  CHECK(report.time.total() <= report.wall_seconds * (1 + 1e-12));
  CHECK(report.time.total() >= report.wall_seconds * (1 - 1e-12));
  CHECK(report.median_residual_seconds > 0.0);
  CHECK(report.work_units() > 0.0);
  CHECK(report.workspace_bytes > 200 * sizeof(double) * 30);  // at least the Krylov basis

  std::ostringstream table, csv;
  nkit::print_convergence_table(table, report);
  nkit::write_history_csv(csv, report);
  CHECK(table.str().find("stop reason: relative_tolerance_met (converged)") != std::string::npos);
  std::string line;
  int rows = 0;
  std::istringstream lines(csv.str());
  std::getline(lines, line);
  CHECK(line == nkit::history_csv_columns);
  while (std::getline(lines, line)) ++rows;
  CHECK(rows == report.newton_steps + 1);
}

TEST_CASE("analytic and automatic-differentiation products drive the same Newton iteration", "[newton][jacobian]") {
  auto analytic = nkit::with_jacobian_product(
      cubic_roots{}, [](const Eigen::VectorXd& x, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
        jv = 3.0 * x.array().square() * v.array();
      });
  auto automatic = nkit::with_automatic_differentiation(cubic_roots{});
  nkit::newton_settings settings;
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-10;
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd u1 = Eigen::VectorXd::Constant(10, 2.0), u2 = u1;
  const auto a = solver.solve(analytic, u1);
  const auto b = solver.solve(automatic, u2);
  CHECK(a.converged());
  CHECK(a.newton_steps == b.newton_steps);
  CHECK(a.residual_evaluations == a.newton_steps + 1);  // no evaluation inside J·v
  CHECK_THAT(u1, is_close_to(u2, 1e-14, 1e-14));
}

TEST_CASE("the component-wise step test keeps small unknowns from being declared converged early",
          "[newton][convergence]") {
  // R_1 = u_1 − 1e8 (root 1e8) and R_2 = 1e16 u_2³ − 1e-8 (root 1e-8), from
  // u = (0, 2e-8), with exact J·v = diag(1, 3e16 u_2²) v. ‖R(u0)‖ ≈ 1e8 comes
  // from row 1; R_2(u0) = 7e-8.
  auto residual = [](const Eigen::VectorXd& u, Eigen::VectorXd& r) {
    r(0) = u(0) - 1e8;
    r(1) = 1e16 * u(1) * u(1) * u(1) - 1e-8;
  };
  auto problem = nkit::with_jacobian_product(
      residual, [](const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
        jv(0) = v(0);
        jv(1) = 3e16 * u(1) * u(1) * v(1);
      });
  Eigen::VectorXd start(2);
  start << 0.0, 2e-8;

  SECTION("inexact Newton (default forcing): the residual test alone accepts a wrong small unknown") {
    // With η_0 = 0.5, one GMRES iteration suffices (row 1 dominates ‖R‖): x = αR
    // with α = (R·JR)/‖JR‖² = 1 − O(1e-30), so x_2 = 7e-8 instead of 7e-8/12 and
    // u_2 = 2e-8 − 7e-8 = −5e-8. Then |R_2| ≈ 1.3e-6 and ‖R‖/‖R0‖ ≈ 1.3e-14 meets
    // relative_tolerance 1e-8: "converged" with u_2 of the wrong sign.
    Eigen::VectorXd u = start;
    const nkit::solve_report residual_test_only = nkit::solve(problem, u);
    REQUIRE(residual_test_only.converged());
    CHECK(residual_test_only.newton_steps == 1);
    CHECK_THAT(u(1), Catch::Matchers::WithinRel(-5e-8, 1e-9));
    // The report warns that R(u0)'s entries span 1e8/7e-8 ≈ 1.4e15 (> 1e8).
    CHECK(residual_test_only.warnings.residual_magnitudes_spread_widely);
    CHECK_THAT(residual_test_only.warnings.residual_magnitude_spread, Catch::Matchers::WithinRel(1e8 / 7e-8, 1e-12));
    CHECK_FALSE(residual_test_only.warnings.state_magnitudes_spread_widely);  // u0 = (0, 2e-8): one nonzero entry
  }
  SECTION("exact Newton steps: one step takes u_2 to 1.4167e-8, 42 % off, and the residual test stops") {
    // Even exact steps are not enough. A forcing term cannot help: after one
    // GMRES iteration the linear residual of row 2 (~1e-6) is already 1e-14 of
    // ‖R‖, below any η. With J⁻¹ itself as preconditioner the step is exact:
    // Newton for the cube root, u ← u − (u³ − a³)/(3u²), a = 1e-8, gives
    // 2e-8 − 7e-24/1.2e-15 = 1.41667e-8 (closed form), where |R_2| = 1.84e-8
    // and ‖R‖/‖R0‖ ≈ 2e-16: the residual test stops with u_2 42 % off.
    Eigen::VectorXd inverse_diagonal(2);
    auto exact_inverse = nkit::make_preconditioner(
        [&](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = inverse_diagonal.cwiseProduct(r); },
        [&](const nkit::preconditioner_context<>& context) {
          inverse_diagonal << 1.0, 1.0 / (3e16 * context.state(1) * context.state(1));
        });
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, decltype(exact_inverse)> solver({}, {}, exact_inverse);
    Eigen::VectorXd u = start;
    const nkit::solve_report report = solver.solve(problem, u);
    REQUIRE(report.converged());
    CHECK(report.newton_steps == 1);
    CHECK_THAT(u(1), Catch::Matchers::WithinRel(1.4166666666666667e-8, 1e-12));
  }
  SECTION("with the component-wise test the small unknown converges too") {
    // The solve goes on until the step in u_2 is below 1e-6·u_2; Newton
    // converges quadratically there, so u_2 is then right to about (1e-6)²
    // relative; allow 1e-9 for the inexact linear solves.
    nkit::newton_settings settings;
    settings.componentwise.enabled = true;
    settings.componentwise.relative_tolerance = 1e-6;
    Eigen::VectorXd u = start;
    const nkit::solve_report both_tests = nkit::solve(problem, u, settings);
    REQUIRE(both_tests.converged());
    CHECK(both_tests.newton_steps > 1);
    CHECK(both_tests.history.back().componentwise_step_ratio <= 1.0);
    CHECK_THAT(u(1), Catch::Matchers::WithinRel(1e-8, 1e-9));
    CHECK_THAT(u(0), Catch::Matchers::WithinRel(1e8, 1e-15));
  }
}

TEST_CASE("the component-wise step test needs a vector space that measures it", "[newton][convergence]") {
  nkit::newton_settings settings;
  settings.componentwise.enabled = true;
  settings.componentwise.relative_tolerance = 0.0;
  CHECK_THROWS_WITH(nkit::newton_krylov_solver<>(settings),
                    "nkit: newton_settings.componentwise.relative_tolerance must be > 0 when absolute_tolerance is 0 "
                    "and the test is enabled (got 0)");
}

TEST_CASE("the live table shows the initial residual and the target first, and long GMRES solves", "[newton][output]") {
  // The monitor's at_start runs once R(u0) is known, before any Newton step;
  // with linear_progress_every = 1 every GMRES iteration prints its progress
  // and the forcing term it aims at.
  std::ostringstream out;
  nkit::convergence_table_monitor table(out, 1);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(4, 2.0);
  nkit::newton_krylov_solver<> solver;
  const auto report = solver.solve(cubic_roots{}, u, table);
  REQUIRE(report.converged());
  const std::string text = out.str();
  const auto target = text.find("converged once the residual norm is <=");
  const auto first_linear = text.find("Newton step 1, GMRES iteration 1: relative linear residual");
  const auto first_step = text.find("\n    1 | ");
  REQUIRE(target != std::string::npos);
  REQUIRE(first_linear != std::string::npos);
  REQUIRE(first_step != std::string::npos);
  CHECK(target < first_linear);
  CHECK(first_linear < first_step);
  CHECK(text.find("(forcing term 5.00e-01)") != std::string::npos);  // η_0 = 0.5 (Eisenstat–Walker default)
  // The target is max(absolute, relative · ‖R(u0)‖) and the report keeps it.
  CHECK(report.target_residual_norm == 1e-8 * report.initial_residual_norm);
}
