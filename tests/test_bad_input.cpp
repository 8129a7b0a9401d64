// Catalogue of bad input and faults in user code. One test per item; each
// asserts the exact error text (it must name the problem), that the user's
// state is left intact (or holds the documented iterate), and that the
// library printed nothing to stdout or stderr (output_capture). A test that
// aborted or hung would fail the run (ctest timeout).
//
// Moved here from test_newton_solver.cpp and test_globalization.cpp (and
// extended): empty state, NaN/Inf in u0, resizing residual, wrong J·v size,
// non-finite initial / trial residual, residual exceptions, bad bounds and
// scales, invalid settings. The expected behaviour is nkit's own contract
// (newton_krylov_solver.hpp, settings.hpp, DEVELOPERS.md); the test systems
// are invented, with roots known in closed form.
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <limits>
#include <nkit/nkit.hpp>
#include <stdexcept>
#include <string>
#include <vector>

#include "support/matchers.hpp"
#include "support/reliability_problems.hpp"

using nkit_test::all_globalizations;
using nkit_test::call_result;
using nkit_test::counted_cubic;
using nkit_test::run_captured;
using nkit_test::scripted_preconditioner;
using nkit_test::scripted_solver;

namespace {

constexpr double not_a_number = std::numeric_limits<double>::quiet_NaN();
constexpr double infinity = std::numeric_limits<double>::infinity();

/// Expects exactly one std::invalid_argument with `message` and no output.
template <class Call>
void check_rejected(Call&& call, const std::string& message) {
  const call_result result = run_captured(std::forward<Call>(call));
  CHECK(result.invalid_argument == message);
  CHECK(result.other_exception.empty());
  CHECK(result.printed.empty());
}

/// Runs a call that must not throw; checks that it printed nothing.
template <class Call>
void check_quiet(Call&& call) {
  const call_result result = run_captured(std::forward<Call>(call));
  CHECK(result.invalid_argument.empty());
  CHECK(result.other_exception.empty());
  CHECK(result.printed.empty());
}

/// The iterate after `steps` accepted Newton steps (caller-driven loop).
template <class Solver, class Problem>
Eigen::VectorXd iterate_after(Solver& solver, Problem& problem, Eigen::VectorXd u, int steps) {
  auto run = solver.begin(problem, u);
  for (int k = 0; k < steps; ++k) REQUIRE(run.advance() == nkit::run_state::running);
  return u;
}

}  // namespace

// ---- sizes ---------------------------------------------------------------------------

TEST_CASE("bad input: an empty state vector", "[input]") {
  Eigen::VectorXd empty;
  check_rejected([&] { nkit::solve(counted_cubic{}, empty); }, "nkit: the state vector u is empty");
}

TEST_CASE("bad input: bounds whose sizes differ from each other or from the state", "[input]") {
  nkit::newton_krylov_solver<> solver;
  check_rejected([&] { solver.set_bounds(Eigen::VectorXd::Zero(3), Eigen::VectorXd::Ones(2)); },
                 "nkit: set_bounds: lower has 3 entries but upper has 2");
  solver.set_bounds(Eigen::VectorXd::Zero(2), Eigen::VectorXd::Constant(2, 10.0));
  Eigen::VectorXd u = Eigen::VectorXd::Constant(3, 1.5);
  check_rejected([&] { solver.solve(counted_cubic{}, u); }, "nkit: the lower bound has 2 entries but the state has 3");
  CHECK(u == Eigen::VectorXd::Constant(3, 1.5));
}

TEST_CASE("bad input: scaling vectors whose size differs from the state", "[input]") {
  nkit::newton_krylov_solver<> solver;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(2, 1.5);
  solver.set_scaling(Eigen::VectorXd::Ones(3), Eigen::VectorXd());
  check_rejected([&] { solver.solve(counted_cubic{}, u); }, "nkit: variable_scale has 3 entries but the state has 2");
  solver.set_scaling(Eigen::VectorXd(), Eigen::VectorXd::Ones(5));
  check_rejected([&] { solver.solve(counted_cubic{}, u); }, "nkit: residual_scale has 5 entries but the state has 2");
  CHECK(u == Eigen::VectorXd::Constant(2, 1.5));
}

TEST_CASE("bad input: a residual that resizes its output", "[input]") {
  Eigen::VectorXd u = Eigen::VectorXd::Ones(2);
  auto resizing = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = Eigen::VectorXd::Ones(x.size() + 1); };
  check_rejected([&] { nkit::solve(resizing, u); },
                 "nkit: the residual changed the size of its output vector from 2 to 3; it must write into r "
                 "without resizing it");
  CHECK(u == Eigen::VectorXd::Ones(2));
}

TEST_CASE("bad input: a Jacobian-vector product of the wrong size", "[input]") {
  Eigen::VectorXd u = Eigen::VectorXd::Ones(2);
  auto wrong_product = nkit::with_jacobian_product(
      [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().square() - 2.0; },
      [](const Eigen::VectorXd&, const Eigen::VectorXd&, Eigen::VectorXd& jv) { jv = Eigen::VectorXd::Ones(5); });
  check_rejected([&] { nkit::solve(wrong_product, u); }, "nkit: jacobian_product wrote a vector of size 5, expected 2");
  CHECK(u == Eigen::VectorXd::Ones(2));
}

TEST_CASE("bad input: a preconditioner whose output has the wrong size", "[input][preconditioner]") {
  // Regression: before the check, the wrong-sized z went on into the J·v
  // product (out-of-bounds reads in a Release build).
  scripted_preconditioner preconditioner;
  preconditioner.resize_output_by = 2;
  scripted_solver solver({}, {}, preconditioner);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(4, 2.0);
  check_rejected([&] { solver.solve(counted_cubic{}, u); },
                 "nkit: the preconditioner's apply() wrote a vector of size 6, expected 4; it must write into z "
                 "without resizing it");
  CHECK(u == Eigen::VectorXd::Constant(4, 2.0));
}

// ---- values ----------------------------------------------------------------------------

TEST_CASE("bad input: NaN or Inf in the initial guess", "[input]") {
  const double bad = GENERATE(values({not_a_number, infinity, -infinity}));
  INFO("bad entry " << bad);
  Eigen::VectorXd u = Eigen::VectorXd::Ones(3);
  u(1) = bad;
  counted_cubic residual;
  check_rejected([&] { nkit::solve(residual, u); }, "nkit: the initial guess u0 contains NaN or Inf entries");
  CHECK(residual.calls == 0);
}

TEST_CASE("bad input: contradictory or NaN bounds, and an initial guess outside them", "[input]") {
  nkit::newton_krylov_solver<> solver;
  check_rejected([&] { solver.set_bounds(Eigen::VectorXd::Ones(3), Eigen::VectorXd::Zero(3)); },
                 "nkit: set_bounds: contradictory bounds (lower > upper somewhere)");
  Eigen::VectorXd with_nan = Eigen::VectorXd::Zero(3);
  with_nan(2) = not_a_number;
  check_rejected([&] { solver.set_bounds(with_nan, Eigen::VectorXd::Ones(3)); },
                 "nkit: set_bounds: lower or upper contains NaN (use -inf/+inf for no bound)");
  check_rejected([&] { solver.set_bounds(Eigen::VectorXd::Zero(3), with_nan); },
                 "nkit: set_bounds: lower or upper contains NaN (use -inf/+inf for no bound)");

  // A rejected set_bounds leaves the bounds already in force untouched
  // (regression: they used to be overwritten before the check).
  solver.set_bounds(Eigen::VectorXd::Zero(3), Eigen::VectorXd::Constant(3, 2.0));
  check_rejected([&] { solver.set_bounds(Eigen::VectorXd::Constant(3, 5.0), Eigen::VectorXd::Zero(3)); },
                 "nkit: set_bounds: contradictory bounds (lower > upper somewhere)");
  Eigen::VectorXd outside = Eigen::VectorXd::Constant(3, 2.5);
  check_rejected([&] { solver.solve(counted_cubic{}, outside); },
                 "nkit: the initial guess u0 violates the bounds given to set_bounds");
  CHECK(outside == Eigen::VectorXd::Constant(3, 2.5));
  Eigen::VectorXd inside = Eigen::VectorXd::Constant(3, 1.0);
  check_quiet([&] { CHECK(solver.solve(counted_cubic{}, inside).converged()); });
  CHECK(inside.maxCoeff() <= 2.0);  // root cbrt(1..3) <= 1.45 lies inside [0, 2]
}

TEST_CASE("bad input: zero, negative, NaN or Inf scales", "[input]") {
  const double bad = GENERATE(values({0.0, -1.0, not_a_number, infinity}));
  nkit::newton_krylov_solver<> solver;
  Eigen::VectorXd scale = Eigen::VectorXd::Ones(3);
  scale(1) = bad;
  check_rejected([&] { solver.set_scaling(scale, Eigen::VectorXd()); },
                 "nkit: set_scaling: every entry of variable_scale must be finite and > 0");
  check_rejected([&] { solver.set_scaling(Eigen::VectorXd(), scale); },
                 "nkit: set_scaling: every entry of residual_scale must be finite and > 0");
}

TEST_CASE("bad input: a NaN or Inf residual at the initial guess stops before any step", "[input]") {
  const double bad = GENERATE(values({not_a_number, infinity}));
  const auto strategy = GENERATE(from_range(all_globalizations));
  Eigen::VectorXd u = Eigen::VectorXd::Constant(3, -1.0);
  int calls = 0;
  auto residual = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
    ++calls;
    r = x;
    r(2) = bad;
  };
  nkit::solve_report report;
  check_quiet([&] { report = nkit::solve(residual, u, nkit_test::settings_for(strategy)); });
  CHECK(report.reason == nkit::stop_reason::non_finite_initial_residual);
  CHECK(report.newton_steps == 0);
  CHECK(report.linear_iterations == 0);
  CHECK(calls == 1);
  CHECK(u == Eigen::VectorXd::Constant(3, -1.0));
}

TEST_CASE("bad input: a NaN residual at a trial point shrinks the step and the solve goes on", "[input]") {
  // r = e^{u−2} − 1 (root 2), NaN beyond u = 2.5. The Newton step from 0 lands
  // at 0 + (1 − e⁻²)e² ≈ 6.39, where the residual is NaN: each globalisation
  // must shrink (line search / full step: λ; trust region: radius; pseudo-
  // transient: δ) and converge anyway.
  const auto strategy = GENERATE(from_range(all_globalizations));
  long nan_results = 0;
  auto guarded = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
    r(0) = x(0) > 2.5 ? not_a_number : std::exp(x(0) - 2.0) - 1.0;
    if (std::isnan(r(0))) ++nan_results;
  };
  auto problem = nkit::with_jacobian_product(guarded, [](const Eigen::VectorXd& x, const Eigen::VectorXd& v,
                                                         Eigen::VectorXd& jv) { jv = std::exp(x(0) - 2.0) * v; });
  nkit::newton_settings settings = nkit_test::settings_for(strategy);
  settings.absolute_tolerance = 1e-12;
  settings.relative_tolerance = 1e-15;
  Eigen::VectorXd u = Eigen::VectorXd::Zero(1);
  nkit::solve_report report;
  check_quiet([&] { report = nkit::solve(problem, u, settings); });
  INFO(nkit::name(strategy) << ": " << nkit::name(report.reason));
  CHECK(report.converged());
  CHECK(nan_results >= 1);
  CHECK(report.non_finite_trials >= 1);
  // |u − 2| <= |r| / min r' ≈ 1e-12 / e^{-0.5}, so 1e-11 is ample.
  CHECK_THAT(u(0), Catch::Matchers::WithinAbs(2.0, 1e-11));
}

TEST_CASE("bad input: a Newton step that would overflow the state is never evaluated", "[input]") {
  // Regression (fuzzing found it: tests/fuzz/corpus/regression_nonfinite_trial_state).
  // R(u) = 1e10 + 1e-299·u has its root at u = −1e309, beyond the largest
  // double. With variable scale D = 1e300 the scaled Jacobian is 10, so GMRES
  // finds a finite scaled step, but the physical trial state u0 − D·x̃ ≈ −1e309
  // overflows to −inf. The residual must never see it: the trial counts as
  // non-finite, the step shrinks, and u stays finite.
  const auto strategy = GENERATE(from_range(all_globalizations));
  long non_finite_calls = 0;
  auto residual = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
    if (!x.allFinite()) ++non_finite_calls;
    r(0) = 1e10 + 1e-299 * x(0);
  };
  auto problem = nkit::with_jacobian_product(
      residual, [](const Eigen::VectorXd&, const Eigen::VectorXd& v, Eigen::VectorXd& jv) { jv = 1e-299 * v; });
  nkit::newton_krylov_solver<> solver(nkit_test::settings_for(strategy));
  solver.set_scaling(Eigen::VectorXd::Constant(1, 1e300), Eigen::VectorXd());
  Eigen::VectorXd u = Eigen::VectorXd::Constant(1, 1.0);
  nkit::solve_report report;
  check_quiet([&] { report = solver.solve(problem, u); });
  INFO(nkit::name(strategy) << ": " << nkit::name(report.reason));
  CHECK(non_finite_calls == 0);
  CHECK(u.allFinite());
  CHECK_FALSE(report.converged());
}

TEST_CASE("bad input: a residual whose squared norm overflows is not reported converged", "[input]") {
  // R(u) = 1e200 (u − 1) on 3 unknowns from u = 0: ‖R(u0)‖ = 1e200·√3, whose
  // square overflows. A naive norm gave inf, and inf <= relative_tolerance·inf
  // reported convergence with no step. One exact Newton step reaches u = 1.
  auto residual = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = 1e200 * (x.array() - 1.0).matrix(); };
  Eigen::VectorXd u = Eigen::VectorXd::Zero(3);
  const auto report = nkit::solve(residual, u);
  CHECK_THAT(report.initial_residual_norm, Catch::Matchers::WithinRel(1e200 * std::sqrt(3.0), 1e-15));
  CHECK(report.converged());
  CHECK(report.newton_steps >= 1);
  // Forward differences with δ ≈ √ε: the step is exact to ~1e-8 relative (J is constant, so only rounding).
  CHECK_THAT(u, nkit_test::is_close_to(Eigen::VectorXd::Ones(3), 1e-6, 0.0));
}

// ---- exceptions from user code -------------------------------------------------------

TEST_CASE("bad input: a residual that throws at the initial guess", "[input]") {
  Eigen::VectorXd u = Eigen::VectorXd::Constant(2, 3.0);
  auto throwing = [](const Eigen::VectorXd&, Eigen::VectorXd&) { throw std::runtime_error("table lookup failed"); };
  const call_result result = run_captured([&] { nkit::solve(throwing, u); });
  CHECK(result.other_exception == "table lookup failed");  // propagates unchanged
  CHECK(result.printed.empty());
  CHECK(u == Eigen::VectorXd::Constant(2, 3.0));
}

TEST_CASE("bad input: a residual that throws at a trial point leaves the last accepted iterate", "[input]") {
  // Exact J·v, so after the monitor arms the failure every residual call is a
  // trial point of the next step (or, for the trust region, a trial radius).
  const auto strategy = GENERATE(from_range(all_globalizations));
  struct arming_residual {
    bool armed = false;
    void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& r) {
      if (armed) throw std::runtime_error("mesh tangled");
      counted_cubic{}(x, r);
    }
  };
  auto derivative = [](const Eigen::VectorXd& x, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
    jv = 3.0 * x.array().square() * v.array();
  };
  const nkit::newton_settings settings = nkit_test::settings_for(strategy);
  const Eigen::VectorXd start = Eigen::VectorXd::Constant(4, 3.0);

  nkit::newton_krylov_solver<> reference_solver(settings);
  auto reference_problem = nkit::with_jacobian_product(arming_residual{}, derivative);
  const Eigen::VectorXd accepted = iterate_after(reference_solver, reference_problem, start, 2);

  auto problem = nkit::with_jacobian_product(arming_residual{}, derivative);
  auto arm_after_two = [&](const nkit::newton_step_record& record) {
    if (record.step == 2) problem.residual().armed = true;
  };
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd u = start;
  const call_result result = run_captured([&] { solver.solve(problem, u, arm_after_two); });
  INFO(nkit::name(strategy));
  CHECK(result.other_exception == "mesh tangled");
  CHECK(result.printed.empty());
  CHECK(u == accepted);  // bitwise: the last accepted iterate, not a trial point
}

TEST_CASE("bad input: after an exception a caller-driven run refuses to continue", "[input]") {
  struct failing_residual {
    long calls_before_failure;
    long calls = 0;
    void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) {
      if (++calls > calls_before_failure) throw std::runtime_error("mesh tangled");
      counted_cubic{}(u, r);
    }
  };
  failing_residual residual{1000};
  Eigen::VectorXd u = Eigen::VectorXd::Constant(4, 3.0);
  nkit::newton_krylov_solver<> solver;
  auto run = solver.begin(residual, u);
  REQUIRE(run.advance() == nkit::run_state::running);
  REQUIRE(run.advance() == nkit::run_state::running);
  const Eigen::VectorXd accepted = u;
  residual.calls_before_failure = residual.calls + 1;  // fail at the third step's first J·v product
  CHECK_THROWS_WITH(run.advance(), "mesh tangled");
  CHECK(u == accepted);
  CHECK_THROWS_WITH(run.advance(), "nkit: this run cannot continue after an exception from user code; start a new one");
  CHECK(u == accepted);
}

// ---- preconditioner faults ----------------------------------------------------------

TEST_CASE("bad input: a preconditioner whose setup throws", "[input][preconditioner]") {
  const Eigen::VectorXd start = Eigen::VectorXd::Constant(4, 3.0);
  scripted_solver reference({}, {}, scripted_preconditioner{});
  counted_cubic reference_problem;
  const Eigen::VectorXd accepted = iterate_after(reference, reference_problem, start, 2);

  scripted_preconditioner failing;
  failing.throw_at_setup_step = 2;  // the third Newton step
  scripted_solver solver({}, {}, failing);
  Eigen::VectorXd u = start;
  const call_result result = run_captured([&] { solver.solve(counted_cubic{}, u); });
  CHECK(result.other_exception == "factorization exploded");
  CHECK(result.printed.empty());
  CHECK(u == accepted);
}

TEST_CASE("bad input: a preconditioner setup that fails stops with preconditioner_failed", "[input][preconditioner]") {
  const int failing_step = GENERATE(0, 2);
  scripted_preconditioner preconditioner;
  preconditioner.statuses[static_cast<std::size_t>(failing_step)] = nkit::setup_status::failed;
  scripted_solver solver({}, {}, preconditioner);
  counted_cubic residual;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(4, 3.0);
  nkit::solve_report report;
  check_quiet([&] { report = solver.solve(residual, u); });
  CHECK(report.reason == nkit::stop_reason::preconditioner_setup_failed);
  CHECK(report.newton_steps == failing_step);
  CHECK(report.preconditioner_setups == failing_step + 1);
  // u is the best iterate and the report's final norm is its residual norm.
  CHECK(report.final_residual_norm == nkit_test::residual_norm_at(residual, u));
  CHECK(report.final_residual_norm <= report.initial_residual_norm);
}

TEST_CASE("bad input: a preconditioner that falls back is counted and the solve goes on", "[input][preconditioner]") {
  scripted_preconditioner preconditioner;
  preconditioner.statuses[0] = nkit::setup_status::ready_with_fallback;
  preconditioner.statuses[1] = nkit::setup_status::ready_with_fallback;
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-12;
  scripted_solver solver(settings, {}, preconditioner);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(4, 3.0);
  nkit::solve_report report;
  check_quiet([&] { report = solver.solve(counted_cubic{}, u); });
  CHECK(report.converged());
  CHECK(report.preconditioner_fallbacks == 2);
  CHECK(solver.preconditioner().fallbacks_built == 2);
  // ‖R‖ <= 1e-12 ‖R(u0)‖ ≈ 4.9e-11 and |δu_i| <= |r_i| / (3u_i²) <= |r_i| / 3 near
  // the root (u_i >= 1): the error is below 2e-11.
  CHECK_THAT(u, nkit_test::is_close_to(counted_cubic::root(4), 2e-11, 0.0));
}

TEST_CASE("bad input: NaN from a preconditioner's apply never reaches the iterate", "[input][preconditioner]") {
  SECTION("NaN at every application") {
    scripted_preconditioner preconditioner;
    preconditioner.nan_apply_from_step = 0;
    scripted_solver solver({}, {}, preconditioner);
    counted_cubic residual;
    Eigen::VectorXd u = Eigen::VectorXd::Constant(4, 2.0);
    nkit::solve_report report;
    check_quiet([&] { report = solver.solve(residual, u); });
    // The outcome names the preconditioner (it was a generic "no progress"),
    // and the failed step stays in the history with GMRES's status.
    CHECK(report.reason == nkit::stop_reason::preconditioner_output_not_finite);
    CHECK(std::string(report.message()).find("preconditioner returned NaN or Inf") != std::string::npos);
    REQUIRE(report.history.size() == 1);
    CHECK_FALSE(report.history[0].accepted);
    CHECK(report.history[0].linear_status == nkit::linear_solve_status::non_finite);
    CHECK(report.history[0].residual_norm == report.initial_residual_norm);
    CHECK(residual.non_finite_inputs == 0);  // regression: J·v used to evaluate R at u + δ·NaN
    CHECK(u == Eigen::VectorXd::Constant(4, 2.0));
  }
  SECTION("NaN only in the final M⁻¹ V y of each GMRES cycle") {
    scripted_preconditioner preconditioner;
    preconditioner.nan_on_combinations = true;
    scripted_solver solver({}, {}, preconditioner);
    counted_cubic residual;
    Eigen::VectorXd u = Eigen::VectorXd::Constant(4, 2.0);
    nkit::solve_report report;
    check_quiet([&] { report = solver.solve(residual, u); });
    // Regression: the NaN update used to become the Newton step, and every
    // line-search trial evaluated R at a NaN state.
    CHECK(report.reason == nkit::stop_reason::preconditioner_output_not_finite);
    CHECK(residual.non_finite_inputs == 0);
    CHECK(u == Eigen::VectorXd::Constant(4, 2.0));
  }
  SECTION("NaN from the third Newton step on: u is the best iterate") {
    const auto strategy = GENERATE(from_range(all_globalizations));
    scripted_preconditioner preconditioner;
    preconditioner.nan_apply_from_step = 2;
    nkit::newton_settings settings = nkit_test::settings_for(strategy);
    settings.relative_tolerance = 1e-14;
    scripted_solver solver(settings, {}, preconditioner);
    counted_cubic residual;
    Eigen::VectorXd u = Eigen::VectorXd::Constant(4, 3.0);
    nkit::solve_report report;
    check_quiet([&] { report = solver.solve(residual, u); });
    INFO(nkit::name(strategy) << ": " << nkit::name(report.reason));
    CHECK(report.reason == nkit::stop_reason::preconditioner_output_not_finite);
    CHECK(report.newton_steps == 2);
    REQUIRE(report.history.size() == 3);  // two accepted steps and the failed third
    CHECK(report.history[1].accepted);
    CHECK_FALSE(report.history[2].accepted);
    CHECK(residual.non_finite_inputs == 0);
    CHECK(u.allFinite());
    CHECK(report.final_residual_norm == nkit_test::residual_norm_at(residual, u));
    CHECK(report.final_residual_norm < report.initial_residual_norm);
  }
}

// ---- settings ----------------------------------------------------------------------------

namespace {

struct invalid_setting {
  std::function<void(nkit::newton_settings&)> change;
  std::string message;
};

/// Every constrained field of every settings struct, with values outside its
/// range (NaN and infinity included where the field is a double). Fields with
/// no invalid value: cancellation_flag (any pointer), the bools
/// forcing.avoid_oversolving and preconditioner_rebuild.rebuild_after_linear_failure.
std::vector<invalid_setting> invalid_settings() {
  const double nan = not_a_number;
  const double inf = infinity;
  using nkit::newton_settings;
  std::vector<invalid_setting> table = {
      // newton_settings
      {[](newton_settings& s) { s.relative_tolerance = -1e-3; },
       "nkit: newton_settings.relative_tolerance must be finite and >= 0 (got -0.001)"},
      {[=](newton_settings& s) { s.relative_tolerance = nan; },
       "nkit: newton_settings.relative_tolerance must be finite and >= 0 (got nan)"},
      {[=](newton_settings& s) { s.relative_tolerance = inf; },
       "nkit: newton_settings.relative_tolerance must be finite and >= 0 (got inf)"},
      {[](newton_settings& s) { s.relative_tolerance = 1.0; },
       "nkit: newton_settings.relative_tolerance must be < 1 (a relative tolerance of 1 or more is met by the initial "
       "guess itself) (got 1)"},
      {[](newton_settings& s) { s.relative_tolerance = 5.0; },
       "nkit: newton_settings.relative_tolerance must be < 1 (a relative tolerance of 1 or more is met by the initial "
       "guess itself) (got 5)"},
      {[](newton_settings& s) { s.absolute_tolerance = -1.0; },
       "nkit: newton_settings.absolute_tolerance must be finite and >= 0 (got -1)"},
      {[=](newton_settings& s) { s.absolute_tolerance = nan; },
       "nkit: newton_settings.absolute_tolerance must be finite and >= 0 (got nan)"},
      {[](newton_settings& s) { s.relative_tolerance = s.absolute_tolerance = 0.0; },
       "nkit: newton_settings.relative_tolerance must be > 0 when absolute_tolerance is 0 (otherwise nothing can "
       "converge) (got 0)"},
      {[](newton_settings& s) { s.negligible_step_size = -1e-9; },
       "nkit: newton_settings.negligible_step_size must be finite and >= 0 (got -1e-09)"},
      {[=](newton_settings& s) { s.negligible_step_size = nan; },
       "nkit: newton_settings.negligible_step_size must be finite and >= 0 (got nan)"},
      {[](newton_settings& s) { s.newton_step_budget = 0; },
       "nkit: newton_settings.newton_step_budget must be >= 1 (got 0)"},
      {[](newton_settings& s) { s.newton_step_budget = -5; },
       "nkit: newton_settings.newton_step_budget must be >= 1 (got -5)"},
      {[](newton_settings& s) { s.residual_evaluation_budget = 0; },
       "nkit: newton_settings.residual_evaluation_budget must be >= 1 (got 0)"},
      {[](newton_settings& s) { s.linear_iteration_budget = -1; },
       "nkit: newton_settings.linear_iteration_budget must be >= 1 (got -1)"},
      {[](newton_settings& s) { s.wall_time_budget_seconds = -1.0; },
       "nkit: newton_settings.wall_time_budget_seconds must be > 0 (got -1)"},
      {[](newton_settings& s) { s.wall_time_budget_seconds = 0.0; },
       "nkit: newton_settings.wall_time_budget_seconds must be > 0 (got 0)"},
      {[=](newton_settings& s) { s.wall_time_budget_seconds = nan; },
       "nkit: newton_settings.wall_time_budget_seconds must be > 0 (got nan)"},
      {[](newton_settings& s) { s.stagnation_window = 0; },
       "nkit: newton_settings.stagnation_window must be >= 1 (got 0)"},
      {[](newton_settings& s) { s.stagnation_factor = 1.0; },
       "nkit: newton_settings.stagnation_factor must be in (0, 1) (got 1)"},
      {[](newton_settings& s) { s.stagnation_factor = 0.0; },
       "nkit: newton_settings.stagnation_factor must be in (0, 1) (got 0)"},
      {[](newton_settings& s) { s.check_unwritten_residual_entries = static_cast<nkit::unwritten_entry_check>(3); },
       "nkit: newton_settings.check_unwritten_residual_entries must be one of off, initial_residual, "
       "every_evaluation (got 3)"},
      {[](newton_settings& s) { s.globalization = static_cast<nkit::globalization_strategy>(4); },
       "nkit: newton_settings.globalization must be one of line_search, full_step, trust_region, pseudo_transient "
       "(got 4)"},
      {[](newton_settings& s) { s.globalization = static_cast<nkit::globalization_strategy>(-1); },
       "nkit: newton_settings.globalization must be one of line_search, full_step, trust_region, pseudo_transient "
       "(got -1)"},
      // forcing_term_settings
      {[](newton_settings& s) { s.forcing.formula = static_cast<nkit::forcing_term_formula>(3); },
       "nkit: newton_settings.forcing.formula must be one of constant, eisenstat_walker_choice_1, "
       "eisenstat_walker_choice_2 (got 3)"},
      {[](newton_settings& s) { s.forcing.constant_value = 1.0; },
       "nkit: newton_settings.forcing.constant_value must be in (0, 1) (got 1)"},
      {[](newton_settings& s) { s.forcing.constant_value = 0.0; },
       "nkit: newton_settings.forcing.constant_value must be in (0, 1) (got 0)"},
      {[](newton_settings& s) { s.forcing.initial_value = 1.5; },
       "nkit: newton_settings.forcing.initial_value must be in (0, 1) (got 1.5)"},
      {[=](newton_settings& s) { s.forcing.maximum_value = nan; },
       "nkit: newton_settings.forcing.maximum_value must be in (0, 1) (got nan)"},
      {[](newton_settings& s) { s.forcing.choice_2_gamma = -0.1; },
       "nkit: newton_settings.forcing.choice_2_gamma must be in [0, 1] (got -0.1)"},
      {[](newton_settings& s) { s.forcing.choice_2_alpha = 1.0; },
       "nkit: newton_settings.forcing.choice_2_alpha must be in (1, 2] (got 1)"},
      {[](newton_settings& s) { s.forcing.choice_2_alpha = 2.5; },
       "nkit: newton_settings.forcing.choice_2_alpha must be in (1, 2] (got 2.5)"},
      // line_search_settings
      {[](newton_settings& s) { s.line_search.sufficient_decrease = 0.0; },
       "nkit: newton_settings.line_search.sufficient_decrease must be in (0, 1) (got 0)"},
      {[](newton_settings& s) { s.line_search.minimum_shrink_factor = 1.0; },
       "nkit: newton_settings.line_search.minimum_shrink_factor must be in (0, 1) (got 1)"},
      {[=](newton_settings& s) { s.line_search.maximum_shrink_factor = nan; },
       "nkit: newton_settings.line_search.maximum_shrink_factor must be in (0, 1) (got nan)"},
      {[](newton_settings& s) { s.line_search.minimum_shrink_factor = 0.6; },
       "nkit: newton_settings.line_search.minimum_shrink_factor must be <= maximum_shrink_factor (0.5) (got 0.6)"},
      {[](newton_settings& s) { s.line_search.maximum_rejected_trials = -1; },
       "nkit: newton_settings.line_search.maximum_rejected_trials must be >= 0 (got -1)"},
      // trust_region_settings
      {[](newton_settings& s) { s.trust_region.initial_radius = -1.0; },
       "nkit: newton_settings.trust_region.initial_radius must be finite and >= 0 (got -1)"},
      {[=](newton_settings& s) { s.trust_region.initial_radius = inf; },
       "nkit: newton_settings.trust_region.initial_radius must be finite and >= 0 (got inf)"},
      {[](newton_settings& s) { s.trust_region.minimum_radius = 0.0; },
       "nkit: newton_settings.trust_region.minimum_radius must be finite and > 0 (got 0)"},
      {[=](newton_settings& s) { s.trust_region.maximum_radius = nan; },
       "nkit: newton_settings.trust_region.maximum_radius must be > 0 (got nan)"},
      {[](newton_settings& s) { s.trust_region.maximum_radius = 1e-13; },
       "nkit: newton_settings.trust_region.maximum_radius must be >= minimum_radius (1e-12) (got 1e-13)"},
      {[](newton_settings& s) { s.trust_region.acceptance_ratio = 1.0; },
       "nkit: newton_settings.trust_region.acceptance_ratio must be in (0, 1) (got 1)"},
      {[](newton_settings& s) { s.trust_region.shrink_below_ratio = 0.0; },
       "nkit: newton_settings.trust_region.shrink_below_ratio must be in (0, 1) (got 0)"},
      {[](newton_settings& s) { s.trust_region.grow_above_ratio = 1.2; },
       "nkit: newton_settings.trust_region.grow_above_ratio must be in (0, 1) (got 1.2)"},
      {[](newton_settings& s) { s.trust_region.grow_above_ratio = 0.1; },
       "nkit: newton_settings.trust_region.grow_above_ratio must be >= shrink_below_ratio (0.25) (got 0.1)"},
      {[](newton_settings& s) { s.trust_region.shrink_factor = 1.5; },
       "nkit: newton_settings.trust_region.shrink_factor must be in (0, 1) (got 1.5)"},
      {[](newton_settings& s) { s.trust_region.growth_factor = 1.0; },
       "nkit: newton_settings.trust_region.growth_factor must be finite and > 1 (got 1)"},
      {[=](newton_settings& s) { s.trust_region.growth_factor = inf; },
       "nkit: newton_settings.trust_region.growth_factor must be finite and > 1 (got inf)"},
      // pseudo_transient_settings
      {[](newton_settings& s) { s.pseudo_transient.initial_step = 0.0; },
       "nkit: newton_settings.pseudo_transient.initial_step must be finite and > 0 (got 0)"},
      {[](newton_settings& s) { s.pseudo_transient.maximum_step = -1.0; },
       "nkit: newton_settings.pseudo_transient.maximum_step must be > 0 (got -1)"},
      {[=](newton_settings& s) { s.pseudo_transient.minimum_step = nan; },
       "nkit: newton_settings.pseudo_transient.minimum_step must be finite and > 0 (got nan)"},
      {[](newton_settings& s) { s.pseudo_transient.initial_step = 1e13; },
       "nkit: newton_settings.pseudo_transient.initial_step must be in [minimum_step, maximum_step] = [1e-12, "
       "1e+12] (got 1e+13)"},
      {[](newton_settings& s) { s.pseudo_transient.maximum_step_growth = 1.0; },
       "nkit: newton_settings.pseudo_transient.maximum_step_growth must be > 1 (got 1)"},
      {[](newton_settings& s) { s.pseudo_transient.shrink_factor = 1.0; },
       "nkit: newton_settings.pseudo_transient.shrink_factor must be in (0, 1) (got 1)"},
      {[](newton_settings& s) { s.pseudo_transient.maximum_residual_growth = 0.5; },
       "nkit: newton_settings.pseudo_transient.maximum_residual_growth must be >= 1 (got 0.5)"},
      {[](newton_settings& s) { s.pseudo_transient.switch_ratio = 1.5; },
       "nkit: newton_settings.pseudo_transient.switch_ratio must be in [0, 1] (got 1.5)"},
      {[](newton_settings& s) { s.pseudo_transient.maximum_useful_relative_linear_residual = 0.0; },
       "nkit: newton_settings.pseudo_transient.maximum_useful_relative_linear_residual must be in (0, 1] (got 0)"},
      {[=](newton_settings& s) { s.pseudo_transient.maximum_useful_relative_linear_residual = nan; },
       "nkit: newton_settings.pseudo_transient.maximum_useful_relative_linear_residual must be in (0, 1] (got nan)"},
      {[](newton_settings& s) { s.pseudo_transient.maximum_returns_to_pseudo_time = -1; },
       "nkit: newton_settings.pseudo_transient.maximum_returns_to_pseudo_time must be >= 0 (got -1)"},
      // bound_settings
      {[](newton_settings& s) { s.bounds.boundary_fraction = 1.0; },
       "nkit: newton_settings.bounds.boundary_fraction must be in (0, 1) (got 1)"},
      {[](newton_settings& s) { s.bounds.boundary_fraction = 0.0; },
       "nkit: newton_settings.bounds.boundary_fraction must be in (0, 1) (got 0)"},
      // gmres_settings
      {[](newton_settings& s) { s.linear.restart_length = 0; },
       "nkit: newton_settings.linear.restart_length must be >= 1 (got 0)"},
      {[](newton_settings& s) { s.linear.maximum_iterations = -3; },
       "nkit: newton_settings.linear.maximum_iterations must be >= 1 (got -3)"},
      {[](newton_settings& s) { s.linear.variant = static_cast<nkit::gmres_variant>(2); },
       "nkit: newton_settings.linear.variant must be one of standard, flexible (got 2)"},
      {[](newton_settings& s) { s.linear.orthogonalization = static_cast<nkit::orthogonalization_method>(9); },
       "nkit: newton_settings.linear.orthogonalization must be one of modified_gram_schmidt, "
       "classical_gram_schmidt_twice (got 9)"},
      {[](newton_settings& s) { s.linear.reorthogonalization = static_cast<nkit::reorthogonalization_policy>(3); },
       "nkit: newton_settings.linear.reorthogonalization must be one of never, when_needed, always (got 3)"},
      // jacobian_settings
      {[](newton_settings& s) { s.jacobian.formula = static_cast<nkit::difference_formula>(2); },
       "nkit: newton_settings.jacobian.formula must be one of forward, central (got 2)"},
      {[](newton_settings& s) { s.jacobian.residual_relative_noise = 1.0; },
       "nkit: newton_settings.jacobian.residual_relative_noise must be in [0, 1) (got 1)"},
      {[=](newton_settings& s) { s.jacobian.residual_relative_noise = nan; },
       "nkit: newton_settings.jacobian.residual_relative_noise must be in [0, 1) (got nan)"},
      // preconditioner_rebuild_settings
      {[](newton_settings& s) { s.preconditioner_rebuild.rebuild_every_newton_steps = 0; },
       "nkit: newton_settings.preconditioner_rebuild.rebuild_every_newton_steps must be >= 1 (got 0)"},
      {[](newton_settings& s) { s.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = -1; },
       "nkit: newton_settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed must be >= 0 (got -1)"},
  };
  return table;
}

}  // namespace

TEST_CASE("bad input: every invalid setting is rejected with its field and value named", "[input][settings]") {
  const std::vector<invalid_setting> table = invalid_settings();
  nkit::newton_krylov_solver<> solver;
  for (const invalid_setting& entry : table) {
    nkit::newton_settings settings;
    entry.change(settings);
    INFO(entry.message);
    check_rejected([&] { nkit::newton_krylov_solver<> rejected(settings); }, entry.message);
    // configure() rejects it too and keeps the settings in force.
    check_rejected([&] { solver.configure(settings); }, entry.message);
    CHECK(solver.settings().newton_step_budget == nkit::newton_settings{}.newton_step_budget);
    CHECK(solver.settings().globalization == nkit::globalization_strategy::line_search);
  }
  // The solver still works after all those rejections.
  Eigen::VectorXd u = Eigen::VectorXd::Constant(3, 2.0);
  CHECK(solver.solve(counted_cubic{}, u).converged());
}

TEST_CASE("bad input: boundary values of every setting's range are accepted", "[input][settings]") {
  // The other side of the table above: the documented limits themselves are valid.
  const std::vector<std::function<void(nkit::newton_settings&)>> valid = {
      [](nkit::newton_settings& s) {
        s.relative_tolerance = 0.0;
        s.absolute_tolerance = 1e-10;
      },
      [](nkit::newton_settings& s) { s.newton_step_budget = std::numeric_limits<int>::max(); },
      [](nkit::newton_settings& s) { s.wall_time_budget_seconds = infinity; },
      [](nkit::newton_settings& s) { s.line_search.maximum_rejected_trials = 0; },
      [](nkit::newton_settings& s) { s.line_search.minimum_shrink_factor = s.line_search.maximum_shrink_factor = 0.5; },
      [](nkit::newton_settings& s) {
        s.forcing.choice_2_gamma = 0.0;
        s.forcing.choice_2_alpha = 2.0;
      },
      [](nkit::newton_settings& s) { s.forcing.choice_2_gamma = 1.0; },
      [](nkit::newton_settings& s) { s.trust_region.maximum_radius = infinity; },
      [](nkit::newton_settings& s) { s.trust_region.grow_above_ratio = s.trust_region.shrink_below_ratio; },
      [](nkit::newton_settings& s) { s.pseudo_transient.switch_ratio = 0.0; },
      [](nkit::newton_settings& s) { s.pseudo_transient.switch_ratio = 1.0; },
      [](nkit::newton_settings& s) { s.pseudo_transient.maximum_residual_growth = 1.0; },
      [](nkit::newton_settings& s) { s.pseudo_transient.maximum_step = infinity; },
      [](nkit::newton_settings& s) { s.pseudo_transient.maximum_useful_relative_linear_residual = 1.0; },
      [](nkit::newton_settings& s) { s.pseudo_transient.maximum_returns_to_pseudo_time = 0; },
      [](nkit::newton_settings& s) { s.jacobian.residual_relative_noise = 0.0; },
      [](nkit::newton_settings& s) { s.linear.restart_length = s.linear.maximum_iterations = 1; },
  };
  for (std::size_t i = 0; i < valid.size(); ++i) {
    nkit::newton_settings settings;
    valid[i](settings);
    INFO("valid case " << i);
    check_quiet([&] { nkit::newton_krylov_solver<> accepted(settings); });
  }
}

TEST_CASE("bad input: huge but valid limits allocate only what a solve can use", "[input][settings]") {
  // Regressions: newton_step_budget = INT_MAX (meaning "no limit") used to
  // reserve a history of ~250 GB (std::bad_alloc), and a huge restart_length
  // allocated that many Krylov vectors although maximum_iterations caps every
  // cycle (the process was killed for lack of memory).
  nkit::newton_settings settings;
  settings.newton_step_budget = std::numeric_limits<int>::max();
  settings.linear.restart_length = std::numeric_limits<int>::max();
  settings.linear.maximum_iterations = 40;
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(10, 2.0);
  nkit::solve_report report;
  check_quiet([&] { report = solver.solve(counted_cubic{}, u); });
  CHECK(report.converged());
  // Workspace: 41 + 2 Krylov vectors and ten Newton vectors of 10 doubles, the
  // 41×40 Hessenberg matrix and 1024 history records: far below 1 MB.
  CHECK(report.workspace_bytes < 1000000);
}

// ---- residuals that leave entries of r unwritten -----------------------------------------

namespace {
/// A legacy-style residual whose grid has half the cells of the state: it
/// writes r(0 .. n/2) only (R_i = u_i − 1 there), as after a grid-size mismatch.
struct half_written_residual {
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    for (Eigen::Index i = 0; i < u.size() / 2; ++i) r(i) = u(i) - 1.0;
  }
};
}  // namespace

TEST_CASE("bad input: a residual that leaves entries of r unwritten is caught, not converged", "[input]") {
  // Without the check, nkit's r keeps what the previous call left in the
  // other half (zeros from allocation), the solve reports convergence, and
  // the second half of u never moves (its true R would be u − 1 = −1). The
  // check fills r with a marker before the call and finds it afterwards.
  const auto check =
      GENERATE(nkit::unwritten_entry_check::initial_residual, nkit::unwritten_entry_check::every_evaluation);
  nkit::newton_settings settings;
  settings.check_unwritten_residual_entries = check;
  Eigen::VectorXd u = Eigen::VectorXd::Zero(8);
  const call_result result = run_captured([&] { nkit::solve(half_written_residual{}, u, settings); });
  INFO(nkit::name(check));
  CHECK(result.invalid_argument ==
        "nkit: the residual left 4 of 8 entries of r unwritten (the first at index 4); it must write every entry on "
        "every call (a grid-size mismatch is the usual cause; the check is "
        "newton_settings::check_unwritten_residual_entries)");
  CHECK(result.printed.empty());
  CHECK(u == Eigen::VectorXd::Zero(8));  // the user's state is untouched
}

TEST_CASE("bad input: entries written only on some calls are caught by the every-evaluation check", "[input]") {
  // The residual skips its last entry from the third call on (e.g. a branch
  // that forgets one cell): only the check of every call sees it.
  long calls = 0;
  auto residual = [&](const Eigen::VectorXd& u, Eigen::VectorXd& r) {
    ++calls;
    const Eigen::Index written = calls >= 3 ? u.size() - 1 : u.size();
    for (Eigen::Index i = 0; i < written; ++i) r(i) = u(i) * u(i) - 2.0;
  };
  nkit::newton_settings settings;
  settings.check_unwritten_residual_entries = nkit::unwritten_entry_check::every_evaluation;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(3, 1.0);
  const call_result result = run_captured([&] { nkit::solve(residual, u, settings); });
  CHECK(result.invalid_argument.find("nkit: the residual left 1 of 3 entries of r unwritten (the first at index 2)") ==
        0);
  CHECK(u.allFinite());
}

TEST_CASE("bad input: the unwritten-entry check accepts residuals that write everything", "[input]") {
  // The marker never survives a residual that writes every entry, NaN results included.
  for (const auto check : {nkit::unwritten_entry_check::off, nkit::unwritten_entry_check::initial_residual,
                           nkit::unwritten_entry_check::every_evaluation}) {
    nkit::newton_settings settings;
    settings.check_unwritten_residual_entries = check;
    Eigen::VectorXd u = Eigen::VectorXd::Constant(3, 4.0);
    nkit::solve_report report;
    check_quiet([&] { report = nkit::solve(counted_cubic{}, u, settings); });
    CHECK(report.converged());
  }
  Eigen::VectorXd nan_at_start = Eigen::VectorXd::Constant(2, 1.0);
  auto nan_residual = [](const Eigen::VectorXd&, Eigen::VectorXd& r) {
    r.setConstant(std::numeric_limits<double>::quiet_NaN());
  };
  nkit::newton_settings settings;
  settings.check_unwritten_residual_entries = nkit::unwritten_entry_check::every_evaluation;
  nkit::solve_report report;
  check_quiet([&] { report = nkit::solve(nan_residual, nan_at_start, settings); });
  CHECK(report.reason == nkit::stop_reason::non_finite_initial_residual);  // a NaN the user wrote is not "unwritten"
}

TEST_CASE("bad input: a GMRES failure with a finite preconditioner is not blamed on it", "[input][preconditioner]") {
  // An operator that cannot be inverted from the Krylov space GMRES may use
  // (maximum_iterations = 1 on a system needing more, stagnating): the
  // preconditioner's output is finite, so the generic cause stays.
  auto residual = [](const Eigen::VectorXd& u, Eigen::VectorXd& r) {
    r(0) = u(1);
    r(1) = -u(0);  // J = [[0, 1], [-1, 0]]: GMRES(1) from x = 0 makes no progress on b = R
  };
  nkit::newton_settings settings;
  settings.linear.restart_length = 1;
  settings.linear.maximum_iterations = 1;
  Eigen::VectorXd u(2);
  u << 1.0, 0.0;
  auto jacobi = nkit::make_preconditioner([](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = r; });
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, decltype(jacobi)> solver(settings, {}, jacobi);
  nkit::solve_report report;
  check_quiet([&] { report = solver.solve(residual, u); });
  CHECK(report.reason == nkit::stop_reason::no_newton_direction);
}
