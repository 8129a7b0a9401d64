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
  CHECK(report.result == nkit::outcome::converged_relative_residual);
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
  CHECK(report.backtracks > 0);
  CHECK(report.history.front().step_length < 1.0);

  // Full steps from the same start run away; the solve stops and u is the
  // best iterate seen: the initial guess, whose residual was smallest.
  settings.globalization = nkit::globalization_strategy::full_step;
  settings.max_newton_steps = 4;
  solver.configure(settings);
  u(0) = 3.0;
  report = solver.solve(arctangent{}, u);
  CHECK_FALSE(report.converged());
  CHECK(report.result == nkit::outcome::newton_step_limit);
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
  while (run.advance() == nkit::outcome::in_progress) ++steps;
  CHECK(u1 == u2);
  CHECK(run.report().newton_steps == direct.newton_steps);
  CHECK(steps + 1 == direct.newton_steps);
  CHECK(run.report().residual_evaluations == direct.residual_evaluations);
  CHECK(run.report().result == direct.result);
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
  CHECK(report.result == nkit::outcome::stopped_by_monitor);
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
  CHECK(solver.solve(cubic_roots{}, u, list).result == nkit::outcome::stopped_by_monitor);
  CHECK(first == 1);
  CHECK(second == 1);
}

TEST_CASE("stagnation and small steps end the solve with their own outcomes", "[newton]") {
  // r = u² + 1 has no real root; full Newton steps u ← (u − 1/u)/2 wander forever.
  auto no_root = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().square() + 1.0; };
  nkit::newton_settings settings;
  settings.globalization = nkit::globalization_strategy::full_step;
  settings.max_newton_steps = 200;
  settings.stagnation_window = 5;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(1, 0.3);
  auto report = nkit::solve(no_root, u, settings);
  CHECK(report.result == nkit::outcome::stagnated);
  CHECK(report.final_residual_norm == std::abs(u(0) * u(0) + 1.0));  // u is the best iterate, and it matches

  // With the line search the residual cannot decrease below 1 either, and the
  // search fails once no step gives sufficient decrease.
  settings = {};
  u(0) = 0.3;
  report = nkit::solve(no_root, u, settings);
  CHECK(report.result == nkit::outcome::line_search_failed);
  CHECK(report.final_residual_norm <= 0.3 * 0.3 + 1.0);

  settings = {};
  settings.step_tolerance = 1e-3;
  settings.relative_tolerance = 1e-15;
  settings.absolute_tolerance = 0.0;
  // r = u⁴ has a multiple root: Newton converges linearly (factor 3/4), so the
  // step falls below the tolerance long before the residual does.
  auto quartic = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().pow(4); };
  u(0) = 1.0;
  report = nkit::solve(quartic, u, settings);
  CHECK(report.result == nkit::outcome::step_below_tolerance);
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
  CHECK(report.calls.residual == 1 + report.newton_steps + report.backtracks);
  CHECK(report.time.other >= 0.0);
  CHECK(report.time.total() <= report.wall_seconds * (1 + 1e-12));
  CHECK(report.time.total() >= report.wall_seconds * (1 - 1e-12));
  CHECK(report.median_residual_seconds > 0.0);
  CHECK(report.work_units() > 0.0);
  CHECK(report.workspace_bytes > 200 * sizeof(double) * 30);  // at least the Krylov basis

  std::ostringstream table, csv;
  nkit::print_convergence_table(table, report);
  nkit::write_history_csv(csv, report);
  CHECK(table.str().find("converged_relative_residual") != std::string::npos);
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
  settings.forcing.kind = nkit::forcing_term_kind::constant;
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
