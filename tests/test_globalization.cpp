// Hard problems: pseudo-transient continuation, the trust region, bounds on
// physical variables and scaling. Problems are invented small discretisations
// whose behaviour is explained beside each test.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <limits>
#include <nkit/jacobian/sparse_jacobian.hpp>
#include <nkit/nkit.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <sstream>
#include <vector>

#include "problems/model_problem/model_problem.hpp"
#include "problems/test_sets/hard_problems.hpp"
#include "support/matchers.hpp"

using nkit_test::is_close_to;

using nkit_problems::cubic_reaction_diffusion;
using nkit_problems::square_root_reaction;

TEST_CASE("pseudo-transient continuation converges where line-search Newton stalls",
          "[globalization][pseudo_transient]") {
  const int n = 24;
  auto problem = nkit::with_automatic_differentiation(cubic_reaction_diffusion{n, 0.01});
  nkit::newton_settings settings;
  settings.newton_step_budget = 100;
  settings.linear.maximum_iterations = 1000;

  // Line search and trust region both descend ‖R‖ and end near u = √(2/3).
  for (auto strategy : {nkit::globalization_strategy::line_search, nkit::globalization_strategy::trust_region}) {
    settings.globalization = strategy;
    nkit::newton_krylov_solver<> solver(settings);
    Eigen::VectorXd u = Eigen::VectorXd::Zero(n * n);
    const auto report = solver.solve(problem, u);
    INFO(nkit::name(strategy) << ": " << nkit::name(report.reason));
    CHECK_FALSE(report.converged());
    CHECK_THAT(u.mean(), Catch::Matchers::WithinAbs(std::sqrt(2.0 / 3.0), 0.1));
  }

  settings.globalization = nkit::globalization_strategy::pseudo_transient;
  settings.pseudo_transient.initial_step = 0.1;
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n * n);
  const auto report = solver.solve(problem, u);
  REQUIRE(report.converged());
  // Every cell sits on the negative branch: between the roots of u³ − 2u + 2 + s
  // for s = 0 (−1.7693) and s = −1 (−1.6180), widened by the diffusion coupling.
  CHECK(u.maxCoeff() < -1.55);
  CHECK(u.minCoeff() > -1.80);
  CHECK(report.history.front().pseudo_time_step == 0.1);
  // SER grew δ once the residual fell, then the solve finished as Newton.
  double largest_step = 0.0;
  for (const auto& record : report.history) largest_step = std::max(largest_step, record.pseudo_time_step);
  CHECK(largest_step > 10.0);
  CHECK(report.history.back().pseudo_time_step == 0.0);
}

TEST_CASE("pseudo-transient continuation rejects steps that blow up the residual",
          "[globalization][pseudo_transient]") {
  // δ0 = 0.5 makes W/δ + R'(0) = diffusion only (R'(0) = −2 I + diffusion): the
  // first step is huge. It is rejected (growth limit) and δ shrinks until the
  // transient is followed.
  const int n = 24;
  auto problem = nkit::with_automatic_differentiation(cubic_reaction_diffusion{n, 0.01});
  nkit::newton_settings settings;
  settings.newton_step_budget = 100;
  settings.linear.maximum_iterations = 1000;
  settings.globalization = nkit::globalization_strategy::pseudo_transient;
  settings.pseudo_transient.initial_step = 0.5;
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n * n);
  const auto report = solver.solve(problem, u);
  REQUIRE(report.converged());
  CHECK(report.history.front().rejected_trials >= 1);
  CHECK(report.history.front().pseudo_time_step < 0.5);
  CHECK(u.maxCoeff() < -1.55);
}

TEST_CASE("local pseudo-time steps come from the problem's weights", "[globalization][pseudo_transient]") {
  // Weights = an estimate of each cell's diagonal, 4D/h² + |f'(u)|: δ then acts as
  // a CFL-like number, the usual local-time-stepping practice.
  struct weighted : cubic_reaction_diffusion {
    mutable int weight_calls = 0;
    void pseudo_time_weights(const Eigen::VectorXd& u, Eigen::VectorXd& w) const {
      ++weight_calls;
      const double h = 1.0 / n;
      w = (4.0 * diffusion / (h * h) + (3.0 * u.array().square() - 2.0).abs()).matrix();
    }
  };
  const int n = 24;
  weighted base{{n, 0.01}};
  // A problem object with the residual, an exact J·v (AD) and the weights.
  struct adapter {
    weighted* inner;
    nkit::residual_with_automatic_differentiation<cubic_reaction_diffusion> ad{cubic_reaction_diffusion{24, 0.01}};
    void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) { ad(u, r); }
    void jacobian_product(const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
      ad.jacobian_product(u, v, jv);
    }
    void pseudo_time_weights(const Eigen::VectorXd& u, Eigen::VectorXd& w) { inner->pseudo_time_weights(u, w); }
  } local{&base};
  nkit::newton_settings settings;
  settings.newton_step_budget = 100;
  settings.linear.maximum_iterations = 1000;
  settings.globalization = nkit::globalization_strategy::pseudo_transient;
  settings.pseudo_transient.initial_step = 1.0;  // CFL-like: W/δ equals the diagonal estimate
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n * n);
  const auto report = solver.solve(local, u);
  INFO(nkit::name(report.reason) << " after " << report.newton_steps << " steps");
  REQUIRE(report.converged());
  CHECK(u.maxCoeff() < -1.55);
  CHECK(base.weight_calls >= 1);
  int pseudo_steps = 0;
  for (const auto& record : report.history) pseudo_steps += record.pseudo_time_step > 0.0 ? 1 : 0;
  CHECK(base.weight_calls == pseudo_steps);  // re-evaluated at every pseudo-time step
}

TEST_CASE("a pseudo-time step with no direction is retried with a smaller step", "[globalization][pseudo_transient]") {
  // The kernel alone (globalization/pseudo_transient.hpp): attempts with δ above 0.3 give no direction.
  nkit::pseudo_transient_settings settings;
  settings.shrink_factor = 0.25;
  double step = 1.0;
  std::vector<double> tried;
  const auto attempt = [&](double delta, int) {
    tried.push_back(delta);
    nkit::pseudo_time_trial trial;
    trial.no_direction = delta > 0.3;
    trial.residual_norm = trial.no_direction ? 0.0 : 0.5;  // a norm that would pass, were there a direction
    return trial;
  };
  const nkit::pseudo_time_step_result result = nkit::pseudo_time_step_search(settings, step, 1.0, attempt);
  CHECK(result.accepted);
  CHECK(result.rejected_trials == 1);
  CHECK(result.used_step == 0.25);
  CHECK(tried == std::vector<double>{1.0, 0.25});

  // When no δ above minimum_step gives a direction, the search says so: δ = 4⁻ᵏ for k = 0..9 are tried
  // (4⁻⁹ ≈ 3.8e-6 >= 1e-6; the next, 4⁻¹⁰ ≈ 9.5e-7, is below minimum_step).
  settings.minimum_step = 1e-6;
  step = 1.0;
  tried.clear();
  const auto never = [&](double delta, int) {
    tried.push_back(delta);
    nkit::pseudo_time_trial trial;
    trial.no_direction = true;
    return trial;
  };
  const nkit::pseudo_time_step_result failed = nkit::pseudo_time_step_search(settings, step, 1.0, never);
  CHECK_FALSE(failed.accepted);
  CHECK(failed.last_without_direction);
  CHECK(tried.size() == 10);
  CHECK(failed.rejected_trials == 10);
}

TEST_CASE("the pseudo-time step on a return, and the phase's end relative to where it resumed",
          "[globalization][pseudo_transient]") {
  nkit::pseudo_transient_settings settings;
  settings.initial_step = 2.0;
  // δ_0‖R(u0)‖/‖R(u)‖ = 2·10/1 = 20, below the last δ used (50): 20.
  CHECK(nkit::pseudo_time_step_on_return(settings, 50.0, 10.0, 1.0) == 20.0);
  // Above the last δ used (5): 5.
  CHECK(nkit::pseudo_time_step_on_return(settings, 5.0, 10.0, 1.0) == 5.0);
  // Never below δ_0, even when the last δ used was shrunk below it.
  CHECK(nkit::pseudo_time_step_on_return(settings, 0.5, 10.0, 1.0) == 2.0);
  // ‖R(u)‖ = 0 (or an overflowing ratio): the last δ used.
  CHECK(nkit::pseudo_time_step_on_return(settings, 7.0, 10.0, 0.0) == 7.0);
  // The phase ends at switch_ratio times the norm where it (re)started, or when δ reaches maximum_step.
  settings.switch_ratio = 1e-3;
  CHECK(nkit::pseudo_transient_phase_ends(settings, 0.9e-3, 1.0, 1.0));
  CHECK_FALSE(nkit::pseudo_transient_phase_ends(settings, 0.9e-3, 1e-2, 1.0));
  CHECK(nkit::pseudo_transient_phase_ends(settings, 0.9e-5, 1e-2, 1.0));
  CHECK(nkit::pseudo_transient_phase_ends(settings, 1.0, 1.0, settings.maximum_step));
}

namespace {
/// Point Jacobi that refuses to set up without the pseudo-time term (no
/// preconditioner_context::diagonal_shift): a stand-in for a factorisation
/// that breaks down on R'(u) alone but not on W/δ + R'(u), whose diagonal the
/// term strengthens (common practice). Every Newton-phase setup fails.
struct shift_demanding_jacobi {
  nkit::jacobi_preconditioner jacobi;
  int* refused_setups;
  nkit::setup_status setup(const nkit::preconditioner_context<>& context) {
    if (context.diagonal_shift == nullptr) {
      ++*refused_setups;
      return nkit::setup_status::failed;
    }
    return jacobi.build(context.assembled_jacobian());
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { jacobi.apply(r, z); }
};

/// The nonlinear heat model with exact J·v (AD) and its analytic assembled
/// Jacobian; its cells are labelled as two "fields" (the lower and upper
/// halves of the square), so that the per-field residual norms are tracked.
struct heat_model_with_jacobian {
  nkit_problems::heat_conduction_model_problem problem{16};
  nkit::field_layout halves{{{"lower half", 1}, {"upper half", 1}}, 128};
  const nkit::field_layout& field_layout() const { return halves; }
  nkit::residual_with_automatic_differentiation<nkit_problems::heat_conduction_model_problem> differentiated{problem};
  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& r) const { problem(t, r); }
  void jacobian_product(const Eigen::VectorXd& t, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
    differentiated.jacobian_product(t, v, jv);
  }
  void assemble_jacobian(const Eigen::VectorXd& t, nkit::sparse_matrix& jacobian) const {
    problem.assemble_jacobian(t, jacobian);
  }
};

struct refusing_run {
  nkit::solve_report report;
  Eigen::VectorXd temperature = Eigen::VectorXd::Zero(256);
  int refused_setups = 0;
  explicit refusing_run(int returns, double switch_ratio = 1e-3,
                        nkit::globalization_strategy globalization = nkit::globalization_strategy::pseudo_transient) {
    nkit::newton_settings settings;
    settings.globalization = globalization;
    settings.pseudo_transient.switch_ratio = switch_ratio;
    settings.pseudo_transient.initial_step = 1.0;
    settings.pseudo_transient.maximum_returns_to_pseudo_time = returns;
    settings.relative_tolerance = 1e-10;
    settings.linear.maximum_iterations = 1000;
    heat_model_with_jacobian model;
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, shift_demanding_jacobi> solver(
        settings, {}, shift_demanding_jacobi{{}, &refused_setups});
    report = solver.solve(model, temperature);
  }
};
}  // namespace

TEST_CASE("a Newton phase whose preconditioner fails goes back to pseudo-time stepping",
          "[globalization][pseudo_transient]") {
  // Without returns the solve stops where the pseudo-transient phase ended
  // (‖R‖ <= switch_ratio·‖R(u0)‖ = 1e-3·‖R(u0)‖), at the Newton phase's first setup.
  const refusing_run stopped(0);
  INFO(nkit::name(stopped.report.reason));
  CHECK(stopped.report.reason == nkit::stop_reason::preconditioner_setup_failed);
  CHECK(stopped.report.returns_to_pseudo_time == 0);
  CHECK(stopped.report.final_residual_norm <= 1e-3 * stopped.report.initial_residual_norm);
  // The state returned is the last iterate, whose residual the report quotes.
  Eigen::VectorXd r(256);
  heat_model_with_jacobian{}(stopped.temperature, r);
  CHECK_THAT(r.norm(), Catch::Matchers::WithinRel(stopped.report.final_residual_norm, 1e-12));

  // With returns the solve goes back to pseudo-time stepping after each failed Newton-phase
  // setup and converges there (a resumed phase ends only once ‖R‖ falls by switch_ratio from
  // where it resumed; the step that gets there may also meet the tolerance).
  const refusing_run returned(3);
  INFO(nkit::name(returned.report.reason));
  REQUIRE(returned.report.converged());
  CHECK(returned.report.returns_to_pseudo_time >= 1);
  CHECK(returned.report.returns_to_pseudo_time <= 3);
  CHECK(returned.refused_setups == returned.report.returns_to_pseudo_time);
  // Each return follows a failed Newton-phase step (no pseudo-time step, not accepted) and is
  // followed by a pseudo-time step.
  int failed_newton_steps = 0;
  for (std::size_t i = 0; i + 1 < returned.report.history.size(); ++i) {
    const nkit::newton_step_record& record = returned.report.history[i];
    if (record.accepted) continue;
    CHECK(record.pseudo_time_step == 0.0);
    CHECK(returned.report.history[i + 1].pseudo_time_step > 0.0);
    ++failed_newton_steps;
  }
  CHECK(failed_newton_steps == returned.report.returns_to_pseudo_time);
  // The returned state's residual is the one the report quotes, and so are its per-field norms: the
  // fields partition R, Σ_f ‖R_f‖² = ‖R‖² up to rounding (1e-14 relative at 256 entries, common
  // practice), also with the failed Newton steps' records inside the history.
  heat_model_with_jacobian{}(returned.temperature, r);
  CHECK_THAT(r.norm(), Catch::Matchers::WithinRel(returned.report.final_residual_norm, 1e-12));
  for (const refusing_run* run : {&stopped, &returned}) {
    const auto& fields = run->report.field_residuals;
    REQUIRE(fields.size() == 2);
    CHECK(fields[0].history.size() == run->report.history.size());
    CHECK_THAT(std::hypot(fields[0].final_residual_norm, fields[1].final_residual_norm),
               Catch::Matchers::WithinRel(run->report.final_residual_norm, 1e-14));
  }
  // The convergence table says so (and says nothing when there was no return).
  std::ostringstream with_returns, without_returns;
  nkit::print_convergence_table(with_returns, returned.report);
  nkit::print_convergence_table(without_returns, stopped.report);
  CHECK_THAT(with_returns.str(), Catch::Matchers::Contains("went back to pseudo-time stepping"));
  CHECK_THAT(without_returns.str(), !Catch::Matchers::Contains("went back to pseudo-time stepping"));
  // The same solution as exact Newton with Eigen's SparseLU (a general-purpose direct solver):
  // ‖T − T*‖ <= ‖J⁻¹‖‖R‖ with ‖J⁻¹‖ <= 1/λ_min ≈ n²/(2π²) ≈ 13 (n = 16, conductivity >= 1; see
  // test_newton_preconditioning.cpp) and ‖R‖ <= 1e-10·‖R(T0)‖ = 1e-10·q/n = 6.3e-11: at most
  // 8e-10 in the 2-norm (the reference solve adds 1e-12 relative), so below 1e-9 in the max norm.
  heat_model_with_jacobian model;
  nkit::newton_settings exact;
  exact.relative_tolerance = 1e-12;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> newton(exact);
  Eigen::VectorXd reference = Eigen::VectorXd::Zero(256);
  REQUIRE(newton.solve(model, reference).converged());
  CHECK((returned.temperature - reference).lpNorm<Eigen::Infinity>() < 1e-9);
}

TEST_CASE("returns to pseudo-time stepping stop at their maximum, and only pseudo-transient solves return",
          "[globalization][pseudo_transient]") {
  // switch_ratio 0.9 ends every phase after little progress, so the Newton phase (whose setups all
  // fail) is reached again and again: after maximum_returns_to_pseudo_time = 2 returns the next
  // failure stops the solve.
  const refusing_run exhausted(2, 0.9);
  INFO(nkit::name(exhausted.report.reason));
  CHECK(exhausted.report.reason == nkit::stop_reason::preconditioner_setup_failed);
  CHECK(exhausted.report.returns_to_pseudo_time == 2);
  CHECK(exhausted.refused_setups == 3);
  // The trust region never returns (nor would the line search): its first setup fails and the solve stops.
  const refusing_run trust(3, 1e-3, nkit::globalization_strategy::trust_region);
  CHECK(trust.report.reason == nkit::stop_reason::preconditioner_setup_failed);
  CHECK(trust.report.returns_to_pseudo_time == 0);
  CHECK(trust.report.newton_steps == 0);
}

namespace {
/// R(u) = u³ − 2u + 2 in one unknown (a textbook cubic for Newton's method; our own test).
struct scalar_cubic {
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    r.resize(1);
    r[0] = u[0] * u[0] * u[0] - 2.0 * u[0] + 2.0;
  }
};
}  // namespace

TEST_CASE("a stagnating Newton phase goes back to pseudo-time stepping", "[globalization][pseudo_transient]") {
  // R(u) = u³ − 2u + 2 from u0 = 3. |R| has a local minimum at u = √(2/3) (R = 0.911, not a root);
  // the only root is u* = −1.7693. Newton's map N(u) = u − R/R' has the 2-cycle N(0) = 1, N(1) = 0
  // (direct arithmetic), and full Newton steps started near the minimum wander there. switch_ratio
  // 0.045 ends the pseudo-transient phase once |R| <= 0.045·23 = 1.035, which happens on the way
  // down near u = 1, before the minimum is passed: the Newton phase that follows makes no 1 %
  // progress within stagnation_window = 10 steps.
  auto problem = nkit::with_automatic_differentiation(scalar_cubic{});
  nkit::newton_settings settings;
  settings.globalization = nkit::globalization_strategy::pseudo_transient;
  settings.pseudo_transient.initial_step = 0.1;
  settings.pseudo_transient.switch_ratio = 0.045;
  settings.newton_step_budget = 100;

  settings.pseudo_transient.maximum_returns_to_pseudo_time = 0;
  nkit::newton_krylov_solver<> stopping(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(1, 3.0);
  const nkit::solve_report stopped = stopping.solve(problem, u);
  CHECK(stopped.reason == nkit::stop_reason::residual_stagnated);
  // u holds the best iterate, near the local minimum of |R| (|R| >= 0.911 everywhere above the root).
  Eigen::VectorXd r(1);
  problem(u, r);
  CHECK_THAT(std::abs(r[0]), Catch::Matchers::WithinRel(stopped.final_residual_norm, 1e-14));
  CHECK(stopped.final_residual_norm >= 0.911);
  CHECK(u[0] > 0.0);

  settings.pseudo_transient.maximum_returns_to_pseudo_time = 3;
  nkit::newton_krylov_solver<> returning(settings);
  u.setConstant(3.0);
  const nkit::solve_report converged = returning.solve(problem, u);
  REQUIRE(converged.converged());
  CHECK(converged.returns_to_pseudo_time == 1);
  // The root by Cardano's formula for t³ + p t + q = 0 (p = −2, q = 2; one real root as
  // (q/2)² + (p/3)³ = 19/27 > 0). The solve stops at |R| <= 1e-8·|R(u0)| = 2.3e-7 (default
  // relative_tolerance), so |u − u*| <= 2.3e-7/|R'(u*)| = 3.2e-8 (R'(u*) = 3u*² − 2 = 7.39).
  const double root = std::cbrt(-1.0 + std::sqrt(19.0 / 27.0)) + std::cbrt(-1.0 - std::sqrt(19.0 / 27.0));
  CHECK_THAT(u[0], Catch::Matchers::WithinAbs(root, 1e-7));
}

TEST_CASE("a pseudo-time step whose GMRES stops short of a usable residual is retried",
          "[globalization][pseudo_transient]") {
  // One Arnoldi step per solve and a forcing term it cannot meet. One GMRES
  // step on A x = r leaves ‖r‖ sin∠(r, A r) (it minimises ‖r − αAr‖). At T0 = 0
  // the model's residual is r = −q h²·(1, ..., 1) (model_problem.hpp), and
  // R'(0) r is nonzero only in the 60 wall cells (interior rows of R'(0) sum
  // to 0, each wall face adds k(0) + 1 = 2): with A = I/δ + R'(0) the angle's
  // sine is about δ‖(I − r rᵀ/‖r‖²) R'(0) r‖/‖r‖ = 0.94 δ for small δ, at least
  // 3.6e-6 for every δ >= 4⁻⁹ tried. So with maximum_useful_relative_linear_residual
  // = 1e-12 no δ gives a usable direction; δ shrinks by 4 from 1 until it falls
  // below 1e-6 (10 trials, as in the kernel test above), and the stop reason says why.
  heat_model_with_jacobian model;
  nkit::newton_settings settings;
  settings.globalization = nkit::globalization_strategy::pseudo_transient;
  settings.pseudo_transient.initial_step = 1.0;
  settings.pseudo_transient.minimum_step = 1e-6;
  settings.pseudo_transient.maximum_useful_relative_linear_residual = 1e-12;
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-8;
  settings.linear.maximum_iterations = 1;
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd t = Eigen::VectorXd::Zero(256);
  const nkit::solve_report report = solver.solve(model, t);
  CHECK(report.reason == nkit::stop_reason::no_newton_direction);
  CHECK(report.newton_steps == 0);
  CHECK(report.linear_iterations == 10);
  CHECK(report.rejected_trials == 10);
  CHECK(t.isZero());  // no step was accepted: u0 is returned

  // A GMRES solve cut short by the linear-iteration budget is not retried: the budget stops the solve.
  settings.linear_iteration_budget = 1;
  nkit::newton_krylov_solver<> budget_solver(settings);
  t.setZero();
  const nkit::solve_report cut = budget_solver.solve(model, t);
  CHECK(cut.reason == nkit::stop_reason::linear_iteration_budget_spent);
  CHECK(cut.linear_iterations == 1);
  CHECK(cut.rejected_trials == 0);
  settings.linear_iteration_budget = std::numeric_limits<std::int64_t>::max();

  // With the default (0.99) the same one-step solves are usable and the solve makes progress.
  settings.pseudo_transient.maximum_useful_relative_linear_residual = 0.99;
  settings.newton_step_budget = 5;
  nkit::newton_krylov_solver<> default_solver(settings);
  t.setZero();
  const nkit::solve_report progressing = default_solver.solve(model, t);
  CHECK(progressing.newton_steps == 5);
  CHECK(progressing.final_residual_norm < progressing.initial_residual_norm);
}

TEST_CASE("dogleg points lie on the path at the trust radius", "[globalization][trust_region]") {
  // s_C = (1, 0), s_N = (3, 4): ‖s_N‖ = 5, ‖s_C‖ = 1, s_C·s_N = 3.
  auto point_norm = [](const nkit::dogleg_point& p) {
    const double x = p.cauchy_weight * 1.0 + p.newton_weight * 3.0;
    const double y = p.newton_weight * 4.0;
    return std::hypot(x, y);
  };
  CHECK(nkit::dogleg(6.0, 5.0, 1.0, 3.0).newton_weight == 1.0);  // Newton point inside
  const auto on_first_leg = nkit::dogleg(0.5, 5.0, 1.0, 3.0);
  CHECK(on_first_leg.newton_weight == 0.0);
  CHECK_THAT(on_first_leg.cauchy_weight, Catch::Matchers::WithinRel(0.5, 1e-15));
  for (double radius : {1.5, 2.0, 4.0, 4.9}) {
    const auto p = nkit::dogleg(radius, 5.0, 1.0, 3.0);
    CHECK(p.on_boundary);
    CHECK_THAT(p.cauchy_weight + p.newton_weight, Catch::Matchers::WithinRel(1.0, 1e-15));  // on segment C→N
    CHECK_THAT(point_norm(p), Catch::Matchers::WithinRel(radius, 1e-13));
  }
  // Predicted reduction of the linear model: with J = I, R = −s_N the Newton
  // point zeroes the model: pred = ½‖R‖².
  nkit::dogleg_model model;
  model.residual_squared = 25.0;
  model.residual_dot_newton = -25.0;  // R·J s_N = −‖s_N‖²
  model.newton_squared = 25.0;
  CHECK_THAT(model.predicted_reduction(0.0, 1.0), Catch::Matchers::WithinAbs(12.5, 1e-14));
}

TEST_CASE("the trust region converges where full Newton steps diverge", "[globalization][trust_region]") {
  auto arctangent = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().atan(); };
  nkit::newton_settings settings;
  settings.globalization = nkit::globalization_strategy::trust_region;
  settings.absolute_tolerance = 1e-12;
  settings.relative_tolerance = 1e-15;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(1, 3.0);  // full steps diverge from |u| > 1.39
  const auto report = nkit::solve(arctangent, u, settings);
  CHECK(report.converged());
  CHECK(std::abs(u(0)) <= 1e-12);
  CHECK(report.history.front().trust_radius > 0.0);

  // Far from trouble the full Newton step is inside the radius: quadratic
  // convergence is kept (Dennis & Schnabel 1996, Theorem 6.4.?: locally the
  // dogleg becomes Newton's method) — the step count matches line search.
  auto cubic = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().cube() - 2.0; };
  Eigen::VectorXd a = Eigen::VectorXd::Constant(5, 1.3), b = a;
  nkit::newton_settings line = settings;
  line.globalization = nkit::globalization_strategy::line_search;
  const auto by_line = nkit::solve(cubic, a, line);
  const auto by_region = nkit::solve(cubic, b, settings);
  CHECK(by_region.converged());
  CHECK(by_region.newton_steps == by_line.newton_steps);
  CHECK_THAT(b, is_close_to(a, 1e-13, 0.0));
}

TEST_CASE("bounds keep every evaluated state admissible", "[globalization][bounds]") {
  const int n = 100;
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;

  square_root_reaction unbounded_problem{n, 30.0};
  Eigen::VectorXd c = Eigen::VectorXd::Ones(n);
  nkit::newton_krylov_solver<> plain(settings);
  const auto unbounded = plain.solve(unbounded_problem, c);
  CHECK(unbounded_problem.negative_evaluations > 0);  // the overshoot really happens without bounds
  CHECK(unbounded.non_finite_trials > 0);

  square_root_reaction bounded_problem{n, 30.0};
  Eigen::VectorXd d = Eigen::VectorXd::Ones(n);
  nkit::newton_krylov_solver<> bounded(settings);
  bounded.set_bounds(Eigen::VectorXd::Zero(n), Eigen::VectorXd::Constant(n, std::numeric_limits<double>::infinity()));
  const auto report = bounded.solve(bounded_problem, d);
  REQUIRE(report.converged());
  CHECK(bounded_problem.negative_evaluations == 0);
  CHECK(report.steps_shortened_by_bounds >= 1);
  bool any_bound_active = false;
  for (const auto& record : report.history) any_bound_active = any_bound_active || record.step_shortened_by_bounds;
  CHECK(any_bound_active);
  CHECK(d.minCoeff() > 0.0);
  // Both runs reach the same (unique, positive) solution.
  REQUIRE(unbounded.converged());
  CHECK_THAT(d, is_close_to(c, 1e-8, 1e-8));
}

TEST_CASE("an admissibility predicate is never violated at an evaluated state", "[globalization][bounds]") {
  struct predicate_problem : square_root_reaction {
    bool is_admissible(const Eigen::VectorXd& c) const { return (c.array() >= 0.0).all(); }
  };
  predicate_problem problem{{100, 30.0}};
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  Eigen::VectorXd c = Eigen::VectorXd::Ones(100);
  const auto report = nkit::solve(problem, c, settings);
  REQUIRE(report.converged());
  CHECK(problem.negative_evaluations == 0);
  CHECK(report.inadmissible_trials >= 1);
}

TEST_CASE("scaling makes the solve independent of the unit system", "[globalization][scaling]") {
  // System A: a coupled nonlinear system (Broyden tridiagonal form, MGH 1981
  // problem 30, shifted so the root is nontrivial). System B is the same physics
  // with odd unknowns in units 10⁶ times smaller (values 10⁶ larger) and odd
  // equations written in units 10⁻⁶: u_B = D u_A, R_B(u_B) = E R_A(D⁻¹ u_B).
  const int n = 200;
  Eigen::VectorXd d = Eigen::VectorXd::Ones(n), e = Eigen::VectorXd::Ones(n);
  for (int i = 1; i < n; i += 2) {
    d(i) = 1e6;
    e(i) = 1e-6;
  }
  auto system_a = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
    const Eigen::Index m = x.size();
    for (Eigen::Index i = 0; i < m; ++i) {
      const double left = i > 0 ? x(i - 1) : 0.0, right = i + 1 < m ? x(i + 1) : 0.0;
      r(i) = (3.0 - 2.0 * x(i)) * x(i) - left - 2.0 * right + 1.0;
    }
  };
  Eigen::VectorXd work_a(n), work_r(n);
  auto system_b = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
    work_a = x.cwiseQuotient(d);
    system_a(work_a, work_r);
    r = work_r.cwiseProduct(e);
  };
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd u_a = Eigen::VectorXd::Constant(n, -1.0);
  const auto a = solver.solve(system_a, u_a);
  REQUIRE(a.converged());

  solver.set_scaling(d, e);  // typical magnitudes of B's unknowns and equations
  Eigen::VectorXd u_b = -d;  // the same starting point, in B's units
  const auto b = solver.solve(system_b, u_b);
  REQUIRE(b.converged());
  CHECK(b.newton_steps == a.newton_steps);
  CHECK(b.linear_iterations == a.linear_iterations);
  CHECK_THAT(b.initial_residual_norm, Catch::Matchers::WithinRel(a.initial_residual_norm, 1e-12));
  CHECK_THAT(u_b.cwiseQuotient(d), is_close_to(u_a, 1e-9, 1e-9));

  // Without scaling, B's residual norm is dominated by the even equations and
  // the odd unknowns' finite-difference steps are far off: the iteration differs.
  solver.clear_scaling();
  Eigen::VectorXd u_unscaled = -d;
  const auto unscaled = solver.solve(system_b, u_unscaled);
  CHECK((unscaled.newton_steps != a.newton_steps || unscaled.linear_iterations != a.linear_iterations ||
         !unscaled.converged()));
}

TEST_CASE("colored-difference Jacobians respect bounds and scaling", "[globalization][bounds][sparse_jacobian]") {
  // The colored assembly perturbs groups of columns by +h_j; near the lower
  // bound c = 0 those perturbations must flip side instead of leaving it, so
  // the residual (√c) still never sees c < 0. ILU(0) on the colored Jacobian.
  const int n = 100;
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
  solver.set_bounds(Eigen::VectorXd::Zero(n), Eigen::VectorXd::Constant(n, std::numeric_limits<double>::infinity()));
  square_root_reaction reaction{n, 30.0};
  auto problem = nkit::with_jacobian_pattern(std::ref(reaction), nkit::three_point_line_pattern(n));
  Eigen::VectorXd c = Eigen::VectorXd::Ones(n);
  const auto report = solver.solve(problem, c);
  REQUIRE(report.converged());
  CHECK(reaction.negative_evaluations == 0);
  CHECK(report.jacobian_assemblies >= 1);
  // ILU(0) of a tridiagonal Jacobian is exact: about one GMRES iteration per step.
  CHECK(report.linear_iterations <= 2 * report.newton_steps);

  // The same with the unknowns in other units (c' = 1e3 c, equations × 1e-3):
  // the colored Jacobian is built in the solver's scaled variables.
  struct rescaled {
    square_root_reaction* inner;
    Eigen::VectorXd physical, residual;
    void operator()(const Eigen::VectorXd& c_milli, Eigen::VectorXd& r) {
      physical = c_milli / 1e3;
      residual.resize(physical.size());
      (*inner)(physical, residual);
      r = 1e-3 * residual;
    }
  };
  square_root_reaction second{n, 30.0};
  auto scaled_problem = nkit::with_jacobian_pattern(rescaled{&second, {}, {}}, nkit::three_point_line_pattern(n));
  solver.set_bounds(Eigen::VectorXd::Zero(n), Eigen::VectorXd::Constant(n, std::numeric_limits<double>::infinity()));
  solver.set_scaling(Eigen::VectorXd::Constant(n, 1e3), Eigen::VectorXd::Constant(n, 1e-3));
  Eigen::VectorXd c_milli = Eigen::VectorXd::Constant(n, 1e3);
  const auto scaled_report = solver.solve(scaled_problem, c_milli);
  REQUIRE(scaled_report.converged());
  CHECK(second.negative_evaluations == 0);
  CHECK(scaled_report.newton_steps == report.newton_steps);
  CHECK_THAT(Eigen::VectorXd(c_milli / 1e3), is_close_to(c, 1e-9, 1e-9));
}

TEST_CASE("trust region: an accepted full Newton step costs no extra residual evaluations", "[globalization]") {
  // The full Newton step is priced by the linear residual GMRES reached, so
  // the two J·v products of the dogleg model (one residual evaluation each
  // with forward differences) are taken only when a shorter point is needed.
  // Near the root of r_i = u_i³ − (i + 1) every full step is accepted, so the
  // trust region costs exactly what the line search costs (it used to cost 2
  // evaluations more per Newton step).
  auto residual = [](const Eigen::VectorXd& u, Eigen::VectorXd& r) {
    for (Eigen::Index i = 0; i < u.size(); ++i) r(i) = u(i) * u(i) * u(i) - static_cast<double>(i + 1);
  };
  Eigen::VectorXd start(3);
  start << 1.1, 1.3, 1.5;  // within 10 % of the roots cbrt(1..3)
  nkit::newton_settings line_search;
  nkit::newton_settings trust_region;
  trust_region.globalization = nkit::globalization_strategy::trust_region;
  Eigen::VectorXd u = start;
  const auto searched = nkit::solve(residual, u, line_search);
  Eigen::VectorXd v = start;
  const auto trusted = nkit::solve(residual, v, trust_region);
  REQUIRE(searched.converged());
  REQUIRE(trusted.converged());
  CHECK(searched.rejected_trials == 0);
  CHECK(trusted.rejected_trials == 0);
  CHECK(trusted.newton_steps == searched.newton_steps);
  CHECK(trusted.residual_evaluations == searched.residual_evaluations);
}
