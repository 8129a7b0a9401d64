// The Anderson solver on nonlinear maps: the discretised Chandrasekhar
// H-equation (a check that holds exactly for the discrete system, see
// support/chandrasekhar_h_equation.hpp), the definition of the mixing step,
// the condition safeguard, restarts, budgets, monitors, bounds and bad input.
#include <Eigen/Core>
#include <atomic>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/fixed_point/anderson_solver.hpp>
#include <stdexcept>
#include <vector>

#include "support/chandrasekhar_h_equation.hpp"
#include "support/matchers.hpp"
#include "support/output_capture.hpp"

namespace {

using nkit_test::chandrasekhar_h_map;

nkit::anderson_settings tight(int depth) {
  nkit::anderson_settings settings;
  settings.depth = depth;
  settings.relative_tolerance = 1e-10;
  settings.iteration_budget = 1000;
  settings.stagnation_window = 1000;
  return settings;
}

/// A scalar map with its fixed point at exactly 2: G(x) = x − ½ tanh(x − 2)
/// (invented for the test). Far from 2 the secant model of Anderson(1)
/// overshoots badly, because tanh flattens; beyond `domain_end` the map
/// reports NaN (a state where the user's code cannot evaluate).
struct tanh_map {
  double domain_end = std::numeric_limits<double>::infinity();
  std::vector<double> states;
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& g) {
    states.push_back(x(0));
    g(0) = x(0) > domain_end ? std::nan("") : x(0) - 0.5 * std::tanh(x(0) - 2.0);
  }
};

}  // namespace

TEST_CASE("Anderson solves the H-equation and satisfies its exact moment relation", "[anderson]") {
  const int depth = GENERATE(0, 1, 5, 20);
  chandrasekhar_h_map map(200, 0.99);
  Eigen::VectorXd h = Eigen::VectorXd::Ones(map.size());
  nkit::anderson_solver<> solver(tight(depth));
  const nkit::anderson_report report = solver.solve(map, h);
  INFO("depth " << depth << ": " << report.message());
  REQUIRE(report.converged());
  CHECK(report.final_residual_norm <= 1e-10 * report.initial_residual_norm);
  // ‖f‖ <= 1e-10 ‖f0‖ (‖f0‖ ≈ 3) bounds the error of H near 1e-10/(1 − ρ),
  // ρ the contraction of G near the solution (≈ 0.9 for c = 0.99, as the
  // plain iteration's rate shows); the moment is an average of H times
  // c/2: 1e-8 is generous.
  CHECK_THAT(map.moment(h), Catch::Matchers::WithinAbs(map.exact_moment(), 1e-8));
  CHECK(report.residual_evaluations == map.calls);
  CHECK(report.residual_evaluations == report.iterations + 1 + report.non_finite_trials);
  CHECK(report.history.size() == static_cast<std::size_t>(report.iterations));
}

TEST_CASE("Anderson needs fewer evaluations of G than the plain iteration on the H-equation", "[anderson]") {
  // D.G. Anderson (1965); C. Evans, S. Pollock, L.G. Rebholz & M. Xiao, "A
  // proof that Anderson acceleration improves the convergence rate in
  // linearly converging fixed-point methods (but not in those converging
  // quadratically)", SIAM J. Numer. Anal. 58 (2020) 788–810.
  chandrasekhar_h_map plain_map(200, 0.99), accelerated_map(200, 0.99);
  Eigen::VectorXd h = Eigen::VectorXd::Ones(200), h_accelerated = h;
  nkit::anderson_solver<> plain(tight(0)), accelerated(tight(5));
  const auto plain_report = plain.solve(plain_map, h);
  const auto accelerated_report = accelerated.solve(accelerated_map, h_accelerated);
  REQUIRE(plain_report.converged());
  REQUIRE(accelerated_report.converged());
  CHECK(accelerated_report.residual_evaluations < plain_report.residual_evaluations);
}

TEST_CASE("depth 0 is the damped fixed-point iteration u + mixing f(u)", "[anderson]") {
  // Walker & Ni (2011), the iteration with m = 0: u_{k+1} = u_k + β f(u_k).
  const double mixing = 0.6;
  chandrasekhar_h_map map(40, 0.9);
  std::vector<Eigen::VectorXd> states;
  auto recording = [&](const Eigen::VectorXd& u, Eigen::VectorXd& g) {
    states.push_back(u);
    map(u, g);
  };
  nkit::anderson_settings settings = tight(0);
  settings.mixing = mixing;
  settings.iteration_budget = 4;
  nkit::anderson_solver<> solver(settings);
  Eigen::VectorXd h = Eigen::VectorXd::Ones(40);
  solver.solve(recording, h);
  REQUIRE(states.size() == 5);
  for (std::size_t k = 0; k + 1 < states.size(); ++k) {
    Eigen::VectorXd g(40);
    map(states[k], g);
    const Eigen::VectorXd expected = states[k] + mixing * (g - states[k]);
    CHECK_THAT(states[k + 1], nkit_test::is_close_to(expected, 1e-15, 1e-15));
  }
}

TEST_CASE("a condition limit of 1 keeps one column: the iterates are those of depth 1", "[anderson]") {
  // κ₁(R) >= 1 with equality for one column, so the safeguard drops every
  // older column; the least-squares problem is then that of depth 1.
  chandrasekhar_h_map map(100, 0.99);
  Eigen::VectorXd limited = Eigen::VectorXd::Ones(100), depth_one = limited;
  nkit::anderson_settings settings = tight(5);
  settings.maximum_condition_number = 1.0;
  settings.iteration_budget = 8;
  nkit::anderson_solver<> with_limit(settings);
  settings.depth = 1;
  settings.maximum_condition_number = std::numeric_limits<double>::infinity();
  nkit::anderson_solver<> one_column(settings);
  const auto limited_report = with_limit.solve(map, limited);
  const auto reference = one_column.solve(map, depth_one);
  REQUIRE(limited_report.iterations == reference.iterations);
  CHECK(limited_report.dropped_columns > 0);
  for (const auto& record : limited_report.history) CHECK(record.depth_used <= 1);
  // Different orders of the same orthogonal transformations: round-off only.
  CHECK_THAT(limited, nkit_test::is_close_to(depth_one, 1e-12, 1e-12));
}

TEST_CASE("a non-finite G at an accelerated iterate clears the history and takes the plain step", "[anderson]") {
  tanh_map map;
  map.domain_end = 5.0;
  nkit::anderson_settings settings = tight(1);
  nkit::anderson_solver<> solver(settings);
  Eigen::VectorXd x = Eigen::VectorXd::Zero(1);
  const auto report = solver.solve(map, x);
  REQUIRE(report.converged());
  CHECK_THAT(x(0), Catch::Matchers::WithinAbs(2.0, 1e-9));  // the exact fixed point; |f| = ½|tanh(x−2)| <= tolerance
  CHECK(report.non_finite_trials >= 1);
  CHECK(report.restarts >= 1);
  // The secant step from x0 = 0, x1 = G(0) lands near 8.3, outside the domain.
  REQUIRE(map.states.size() >= 3);
  CHECK(map.states[2] > 5.0);
  int flagged = 0;
  for (const auto& record : report.history) flagged += record.restarted ? 1 : 0;
  CHECK(flagged == report.restarts);
}

TEST_CASE("restart on stagnation: without progress for restart_window iterations the history is cleared",
          "[anderson]") {
  // A stagnation factor of 1e-12 counts almost no iteration as progress, so
  // the history is cleared every restart_window iterations ("restarted
  // Anderson"); the iteration after a restart has no columns to combine.
  chandrasekhar_h_map map(100, 0.99);
  nkit::anderson_settings settings = tight(5);
  settings.restart_window = 3;
  settings.stagnation_factor = 1e-12;
  nkit::anderson_solver<> solver(settings);
  Eigen::VectorXd h = Eigen::VectorXd::Ones(100);
  const auto report = solver.solve(map, h);
  REQUIRE(report.converged());
  CHECK_THAT(map.moment(h), Catch::Matchers::WithinAbs(map.exact_moment(), 1e-8));
  REQUIRE(report.restarts >= 2);
  int flagged = 0;
  for (std::size_t k = 0; k < report.history.size(); ++k) {
    if (!report.history[k].restarted) continue;
    ++flagged;
    CHECK(report.history[k].iteration % 3 == 0);
    if (k + 1 < report.history.size()) CHECK(report.history[k + 1].depth_used == 0);
  }
  CHECK(flagged == report.restarts);
}

TEST_CASE("a difference that depends on the kept ones replaces the oldest column", "[anderson]") {
  // In one dimension every pair of differences is dependent: Anderson(m) must
  // keep the newest difference (the secant method, superlinear), not the first.
  tanh_map map;
  Eigen::VectorXd x = Eigen::VectorXd::Constant(1, 1.5);
  nkit::anderson_solver<> solver(tight(3));
  const auto report = solver.solve(map, x);
  REQUIRE(report.converged());
  CHECK_THAT(x(0), Catch::Matchers::WithinAbs(2.0, 1e-9));
  CHECK(report.dropped_columns > 0);
  for (const auto& record : report.history) CHECK(record.depth_used <= 1);
  // Secant convergence from 1.5 (|f0| ≈ 0.23) to 1e-10 relative takes a
  // handful of iterations; a stale first column would converge linearly.
  CHECK(report.iterations <= 10);
}

TEST_CASE("Anderson budgets, limits and cancellation hold and leave the best iterate in u", "[anderson][budget]") {
  chandrasekhar_h_map map(100, 0.99);
  SECTION("iteration limit") {
    nkit::anderson_settings settings = tight(5);
    settings.iteration_budget = 3;
    nkit::anderson_solver<> solver(settings);
    Eigen::VectorXd h = Eigen::VectorXd::Ones(100);
    const auto report = solver.solve(map, h);
    CHECK(report.reason == nkit::stop_reason::iteration_budget_spent);
    CHECK(report.iterations == 3);
  }
  SECTION("evaluation budget") {
    nkit::anderson_settings settings = tight(5);
    settings.residual_evaluation_budget = 4;
    nkit::anderson_solver<> solver(settings);
    Eigen::VectorXd h = Eigen::VectorXd::Ones(100);
    const auto report = solver.solve(map, h);
    CHECK(report.reason == nkit::stop_reason::residual_evaluation_budget_spent);
    CHECK(map.calls == 4);
    // u holds the best iterate: its ‖f‖ is the reported final norm and the smallest seen.
    Eigen::VectorXd g(100);
    map(h, g);
    CHECK_THAT((g - h).norm(), Catch::Matchers::WithinRel(report.final_residual_norm, 1e-12));
    for (const auto& record : report.history) CHECK(report.final_residual_norm <= record.residual_norm);
  }
  SECTION("cancellation flag raised before the solve") {
    std::atomic<bool> cancel{true};
    nkit::anderson_settings settings = tight(5);
    settings.cancellation_flag = &cancel;
    nkit::anderson_solver<> solver(settings);
    Eigen::VectorXd h = Eigen::VectorXd::Ones(100);
    const auto report = solver.solve(map, h);
    CHECK(report.reason == nkit::stop_reason::cancellation_flag_raised);
    CHECK(map.calls == 0);
    CHECK(std::isnan(report.initial_residual_norm));
    CHECK(h == Eigen::VectorXd::Ones(100));
  }
  SECTION("monitor stops the solve") {
    nkit::anderson_solver<> solver(tight(5));
    Eigen::VectorXd h = Eigen::VectorXd::Ones(100);
    int seen = 0;
    const auto report = solver.solve(map, h, [&](const nkit::anderson_step_record& record) {
      ++seen;
      CHECK(record.iteration == seen);
      return record.iteration == 2 ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
    });
    CHECK(report.reason == nkit::stop_reason::monitor_requested_stop);
    CHECK(seen == 2);
    CHECK(report.time.monitor >= 0.0);
  }
}

TEST_CASE("Anderson with bounds never evaluates G outside them", "[anderson][bounds]") {
  // The tanh map again, bounded to [0, 3]: the overshooting secant steps are
  // shortened to the fraction-to-the-boundary rule, and G sees no state > 3.
  tanh_map map;
  nkit::anderson_solver<> solver(tight(2));
  const Eigen::VectorXd lower = Eigen::VectorXd::Constant(1, 0.0), upper = Eigen::VectorXd::Constant(1, 3.0);
  solver.set_bounds(lower, upper);
  Eigen::VectorXd x = Eigen::VectorXd::Zero(1);
  const auto report = solver.solve(map, x);
  REQUIRE(report.converged());
  CHECK_THAT(x(0), Catch::Matchers::WithinAbs(2.0, 1e-9));
  CHECK(report.steps_shortened_by_bounds >= 1);
  for (const double state : map.states) CHECK(state <= 3.0);
}

TEST_CASE("Anderson: caller-driven loop, repeat solves and silence", "[anderson]") {
  chandrasekhar_h_map map(60, 0.9);
  nkit::anderson_solver<> solver(tight(3));
  Eigen::VectorXd first = Eigen::VectorXd::Ones(60), second = first, driven = first;
  nkit::anderson_report a, b;
  int steps = 0, driven_iterations = 0;
  nkit_test::output_capture capture;
  a = solver.solve(map, first);
  b = solver.solve(map, second);
  {
    auto run = solver.begin(map, driven);
    while (run.advance() == nkit::run_state::running) ++steps;
    driven_iterations = run.report().iterations;
  }
  const std::string printed = capture.text();
  CHECK(printed.empty());
  CHECK(steps + 1 == driven_iterations);  // the last advance() returns the final outcome
  REQUIRE(a.converged());
  // Serial determinism: the same solve twice gives bitwise-equal iterates.
  CHECK(first == second);
  CHECK(first == driven);
  CHECK(a.iterations == b.iterations);
  CHECK(a.final_residual_norm == b.final_residual_norm);
  CHECK(a.workspace_bytes > 0);
}

TEST_CASE("Anderson: an exception from the map propagates and u keeps the last accepted iterate", "[anderson]") {
  chandrasekhar_h_map map(30, 0.9);
  Eigen::VectorXd last_accepted;
  int calls = 0;
  auto failing = [&](const Eigen::VectorXd& u, Eigen::VectorXd& g) {
    if (++calls == 4) throw std::runtime_error("map failed");
    map(u, g);
  };
  nkit::anderson_solver<> solver(tight(2));
  Eigen::VectorXd h = Eigen::VectorXd::Ones(30);
  auto run = solver.begin(failing, h);
  REQUIRE(run.advance() == nkit::run_state::running);
  REQUIRE(run.advance() == nkit::run_state::running);
  last_accepted = h;
  CHECK_THROWS_WITH(run.advance(), "map failed");
  CHECK(h == last_accepted);
  CHECK_THROWS_AS(run.advance(), std::logic_error);
}

TEST_CASE("Anderson: bad input gets std::invalid_argument naming the setting and value", "[anderson][input]") {
  const auto message = [](auto change) {
    nkit::anderson_settings settings;
    change(settings);
    try {
      settings.validate();
    } catch (const std::invalid_argument& error) {
      return std::string(error.what());
    }
    return std::string("no exception");
  };
  CHECK(message([](auto& s) { s.depth = -1; }) == "nkit: anderson_settings.depth must be >= 0 (got -1)");
  CHECK(message([](auto& s) { s.mixing = 0.0; }) == "nkit: anderson_settings.mixing must be in (0, 1] (got 0)");
  CHECK(message([](auto& s) { s.mixing = 1.5; }) == "nkit: anderson_settings.mixing must be in (0, 1] (got 1.5)");
  CHECK(message([](auto& s) { s.maximum_condition_number = 0.5; }) ==
        "nkit: anderson_settings.maximum_condition_number must be >= 1 (got 0.5)");
  CHECK(message([](auto& s) { s.iteration_budget = 0; }) ==
        "nkit: anderson_settings.iteration_budget must be >= 1 (got 0)");
  CHECK(message([](auto& s) { s.restart_window = -2; }) ==
        "nkit: anderson_settings.restart_window must be >= 0 (got -2)");
  CHECK(message([](auto& s) { s.stagnation_factor = 1.0; }) ==
        "nkit: anderson_settings.stagnation_factor must be in (0, 1) (got 1)");
  CHECK(message([](auto& s) { s.bounds.boundary_fraction = 1.0; }) ==
        "nkit: anderson_settings.bounds.boundary_fraction must be in (0, 1) (got 1)");
  nkit::anderson_settings negative;
  negative.relative_tolerance = -1.0;
  CHECK_THROWS_WITH(nkit::anderson_solver<>(negative),
                    "nkit: anderson_settings.relative_tolerance must be finite and >= 0 (got -1)");

  chandrasekhar_h_map map(10, 0.5);
  nkit::anderson_solver<> solver;
  Eigen::VectorXd empty;
  CHECK_THROWS_WITH(solver.solve(map, empty), "nkit: the state vector u is empty");
  Eigen::VectorXd with_nan = Eigen::VectorXd::Ones(10);
  with_nan(4) = std::nan("");
  CHECK_THROWS_WITH(solver.solve(map, with_nan), "nkit: the initial guess u0 contains NaN or Inf entries");
  auto resizing = [](const Eigen::VectorXd& u, Eigen::VectorXd& g) { g = Eigen::VectorXd::Ones(u.size() + 1); };
  Eigen::VectorXd u = Eigen::VectorXd::Ones(10);
  CHECK_THROWS_WITH(solver.solve(resizing, u),
                    "nkit: the fixed-point map changed the size of its output vector from 10 to 11; it must write "
                    "into g without resizing it");
  solver.set_bounds(Eigen::VectorXd::Zero(10), Eigen::VectorXd::Constant(10, 0.5));
  CHECK_THROWS_WITH(solver.solve(map, u), "nkit: the initial guess u0 violates the bounds given to set_bounds");
  CHECK_THROWS_WITH(solver.set_bounds(Eigen::VectorXd::Zero(3), Eigen::VectorXd::Zero(4)),
                    "nkit: set_bounds: lower has 3 entries but upper has 4");
}

TEST_CASE("Anderson: a non-finite G at u0 ends the solve with non_finite_initial_residual", "[anderson]") {
  auto nan_map = [](const Eigen::VectorXd&, Eigen::VectorXd& g) { g.setConstant(std::nan("")); };
  nkit::anderson_solver<> solver;
  Eigen::VectorXd u = Eigen::VectorXd::Ones(5);
  const auto report = solver.solve(nan_map, u);
  CHECK(report.reason == nkit::stop_reason::non_finite_initial_residual);
  CHECK(report.iterations == 0);
  CHECK(u == Eigen::VectorXd::Ones(5));
}
