// Determinism: the same solve twice gives bitwise-identical iterates and
// reports (every field but the timings), with each globalisation, with a
// fresh solver and with a reused one, with bounds and scaling and with a
// preconditioner. This holds in a serial build because every reduction runs
// in a fixed order; DEVELOPERS.md says what holds with threads. (Moved here
// from test_newton_solver.cpp and extended.) The problems are the MGH 1981
// Broyden banded system (problem 31, problems/test_sets) from 10·x0, where the
// line search rejected_trials, and an invented cubic system.
#include <catch2/catch.hpp>
#include <cstring>
#include <nkit/nkit.hpp>
#include <vector>

#include "problems/test_sets/more_garbow_hillstrom.hpp"
#include "support/reliability_problems.hpp"
#include "support/same_bits.hpp"

namespace mgh = nkit_problems::more_garbow_hillstrom;
using nkit_test::all_globalizations;

namespace {

using nkit_test::same_bits;  // support/same_bits.hpp

/// Every iterate of one solve (u0 first) and its report.
struct trajectory {
  std::vector<Eigen::VectorXd> iterates;
  nkit::solve_report report;
};

template <class Solver, class Problem>
trajectory record(Solver& solver, Problem& problem, const Eigen::VectorXd& start) {
  trajectory result;
  Eigen::VectorXd u = start;
  auto run = solver.begin(problem, u);
  result.iterates.push_back(u);
  while (run.advance() == nkit::run_state::running) result.iterates.push_back(u);
  result.iterates.push_back(u);  // the returned u (best iterate when not converged)
  result.report = run.report();
  return result;
}

void check_identical(const trajectory& a, const trajectory& b) {
  REQUIRE(a.iterates.size() == b.iterates.size());
  for (std::size_t k = 0; k < a.iterates.size(); ++k) {
    INFO("iterate " << k);
    REQUIRE(a.iterates[k].size() == b.iterates[k].size());
    CHECK(std::memcmp(a.iterates[k].data(), b.iterates[k].data(), sizeof(double) * a.iterates[k].size()) == 0);
  }
  const nkit::solve_report& x = a.report;
  const nkit::solve_report& y = b.report;
  CHECK(x.reason == y.reason);
  CHECK(x.newton_steps == y.newton_steps);
  CHECK(x.linear_iterations == y.linear_iterations);
  CHECK(x.residual_evaluations == y.residual_evaluations);
  CHECK(x.jacobian_vector_products == y.jacobian_vector_products);
  CHECK(x.preconditioner_setups == y.preconditioner_setups);
  CHECK(x.preconditioner_applications == y.preconditioner_applications);
  CHECK(x.preconditioner_fallbacks == y.preconditioner_fallbacks);
  CHECK(x.jacobian_assemblies == y.jacobian_assemblies);
  CHECK(x.rejected_trials == y.rejected_trials);
  CHECK(x.non_finite_trials == y.non_finite_trials);
  CHECK(x.inadmissible_trials == y.inadmissible_trials);
  CHECK(x.steps_shortened_by_bounds == y.steps_shortened_by_bounds);
  CHECK(same_bits(x.initial_residual_norm, y.initial_residual_norm));
  CHECK(same_bits(x.final_residual_norm, y.final_residual_norm));
  CHECK(x.workspace_bytes == y.workspace_bytes);
  CHECK(x.calls.residual == y.calls.residual);
  CHECK(x.calls.jacobian_vector == y.calls.jacobian_vector);
  CHECK(x.calls.orthogonalization == y.calls.orthogonalization);
  REQUIRE(x.history.size() == y.history.size());
  for (std::size_t k = 0; k < x.history.size(); ++k) {
    const auto& p = x.history[k];
    const auto& q = y.history[k];
    INFO("history record " << k);
    CHECK(p.step == q.step);
    CHECK(same_bits(p.residual_norm, q.residual_norm));
    CHECK(same_bits(p.relative_residual_norm, q.relative_residual_norm));
    CHECK(same_bits(p.forcing_term, q.forcing_term));
    CHECK(p.linear_iterations == q.linear_iterations);
    CHECK(same_bits(p.relative_linear_residual, q.relative_linear_residual));
    CHECK(p.linear_status == q.linear_status);
    CHECK(same_bits(p.step_fraction, q.step_fraction));
    CHECK(same_bits(p.step_norm, q.step_norm));
    CHECK(p.rejected_trials == q.rejected_trials);
    CHECK(p.preconditioner_set_up == q.preconditioner_set_up);
    CHECK(p.step_shortened_by_bounds == q.step_shortened_by_bounds);
    CHECK(same_bits(p.pseudo_time_step, q.pseudo_time_step));
    CHECK(same_bits(p.trust_radius, q.trust_radius));
    CHECK(p.residual_evaluations == q.residual_evaluations);
  }
}

}  // namespace

TEST_CASE("determinism: the same solve twice is bitwise identical, every globalisation", "[determinism]") {
  const auto strategy = GENERATE(from_range(all_globalizations));
  const auto entry = mgh::make_problem_entry(mgh::broyden_banded{40});
  mgh::residual_only problem{&entry};
  const Eigen::VectorXd start = 10.0 * entry.standard_start;
  nkit::newton_settings settings = nkit_test::settings_for(strategy);
  settings.relative_tolerance = 1e-12;
  settings.newton_step_budget = 60;
  INFO(nkit::name(strategy));

  nkit::newton_krylov_solver<> first_solver(settings), second_solver(settings);
  const trajectory first = record(first_solver, problem, start);
  const trajectory second = record(second_solver, problem, start);
  CHECK(first.report.newton_steps >= 3);  // a real iteration, not a trivial one
  check_identical(first, second);
  // A reused solver (workspace and history kept from the solves before) gives the same bits.
  const trajectory reused = record(first_solver, problem, start);
  check_identical(first, reused);
  // So does the one-shot solve().
  Eigen::VectorXd u = start;
  const nkit::solve_report direct = nkit::solve(problem, u, settings);
  CHECK(std::memcmp(u.data(), first.iterates.back().data(), sizeof(double) * u.size()) == 0);
  CHECK(same_bits(direct.final_residual_norm, first.report.final_residual_norm));
}

TEST_CASE("determinism: bounds, scaling and a preconditioner keep solves bitwise identical", "[determinism]") {
  const auto strategy = GENERATE(from_range(all_globalizations));
  const Eigen::Index n = 25;
  nkit::newton_settings settings = nkit_test::settings_for(strategy);
  settings.relative_tolerance = 1e-13;
  settings.jacobian.formula = nkit::difference_formula::central;
  const Eigen::VectorXd start = Eigen::VectorXd::LinSpaced(n, 0.5, 9.0);
  auto prepare = [&](nkit_test::scripted_solver& solver) {
    solver.set_bounds(Eigen::VectorXd::Constant(n, 0.1), Eigen::VectorXd::Constant(n, 20.0));
    solver.set_scaling(Eigen::VectorXd::LinSpaced(n, 1.0, 3.0), Eigen::VectorXd::LinSpaced(n, 2.0, 0.5));
  };
  nkit_test::scripted_solver first_solver(settings), second_solver(settings);
  prepare(first_solver);
  prepare(second_solver);
  nkit_test::counted_cubic problem;
  INFO(nkit::name(strategy));
  const trajectory first = record(first_solver, problem, start);
  const trajectory second = record(second_solver, problem, start);
  CHECK(first.report.converged());
  CHECK(first.report.preconditioner_setups >= 1);
  check_identical(first, second);
}
