// Grid sequencing (include/nkit/multilevel/): the benchmark model problem
// sequenced 32² → 256² against a solve from T = 0, a different preconditioner
// per level and the level tolerance rule, the given state kept when nothing
// better is found, bad input.
#include <Eigen/Core>
#include <atomic>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/grids/structured_grid.hpp>
#include <nkit/grids/structured_grid_hierarchy.hpp>
#include <nkit/multilevel/grid_sequencing_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

#include "problems/model_problem/model_problem.hpp"
#include "support/matchers.hpp"

namespace {

using nkit::structured_grid;

/// Newton settings of the model-problem comparison: the benchmark's criterion
/// ‖R‖₂ <= 1e-8 ‖R(T0)‖₂ (problems/model_problem/model_problem.hpp), room for
/// ILU(0)-preconditioned GMRES(30) at 256².
nkit::newton_settings model_problem_settings() {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-8;
  settings.linear.maximum_iterations = 2000;
  return settings;
}

}  // namespace

TEST_CASE("Grid sequencing 32² to 256² on the model problem: the finest level needs at most 2 Newton steps",
          "[grid_sequencing][slow_unoptimized]") {
  // Mesh independence (Allgower, Böhmer, Potra & Rheinboldt, SIAM J. Numer.
  // Anal. 23 (1986) 160–169, from memory) with nested iteration (Brandt 1977,
  // Math. Comp. 31, 333–390, from memory): from the interpolated coarse
  // solution Newton converges in one or two steps on the finest grid, while
  // from T = 0 it needs several. Criterion of the benchmark model problem
  // (problems/model_problem/model_problem.hpp): ‖R‖₂ <= 1e-8 ‖R(0)‖₂ on the
  // finest grid, the same test for both solves. Modified ILU(0) per level.
  const int finest_cells = 256;
  const nkit::structured_grid_hierarchy hierarchy(structured_grid({finest_cells, finest_cells}, 1, {1.0, 1.0}), 4);
  std::vector<nkit_problems::heat_conduction_model_problem> problems;
  for (int level = 0; level < hierarchy.level_count(); ++level) problems.emplace_back(hierarchy.grid(level).cells(0));
  REQUIRE(problems.front().cells_per_side() == 32);

  nkit::grid_sequencing_settings settings;
  settings.newton = model_problem_settings();
  nkit::grid_sequencing_solver sequencing(settings);
  // Modified ILU(0) (row_sum_compensation = 1; Gustafsson 1978, see
  // preconditioners/ilu_zero.hpp): far fewer GMRES iterations than ILU(0) here.
  using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner>;
  const nkit::ilu_zero_settings modified{1.0};
  const auto solver_at_level = [&](int, const nkit::newton_settings& level_settings) {
    return solver_type(level_settings, {}, nkit::ilu_zero_preconditioner(modified));
  };
  Eigen::VectorXd sequenced = Eigen::VectorXd::Zero(hierarchy.unknowns(3));
  const nkit::grid_sequencing_report report = sequencing.solve(
      hierarchy, [&](int level) -> auto& { return problems[static_cast<std::size_t>(level)]; }, solver_at_level,
      sequenced);
  std::ostringstream table;
  nkit::print_grid_sequencing_table(table, report);
  INFO(table.str());

  Eigen::VectorXd from_zero = Eigen::VectorXd::Zero(hierarchy.unknowns(3));
  solver_type plain(model_problem_settings(), {}, nkit::ilu_zero_preconditioner(modified));
  const nkit::solve_report direct = plain.solve(problems.back(), from_zero);
  INFO("from T = 0: " << direct.newton_steps << " Newton steps, " << direct.linear_iterations << " GMRES iterations");

  REQUIRE(report.converged());
  REQUIRE(direct.converged());
  REQUIRE(report.levels.size() == 4);
  for (const nkit::grid_level_record& level : report.levels) CHECK(level.converged());
  CHECK(report.finest().unknowns == 65536);
  CHECK(report.finest().newton_steps <= 2);
  CHECK(report.finest().newton_steps < direct.newton_steps);
  CHECK_FALSE(report.returned_given_state);
  // Both meet ‖R‖₂ <= 1e-8 ‖R(0)‖₂ with ‖R(0)‖₂ = q/n = 10/256 (model_problem.hpp).
  const double target = 1e-8 * 10.0 / finest_cells;
  CHECK(report.finest().final_residual_norm <= target * (1.0 + 1e-12));
  CHECK_THAT(report.finest().reference_residual_norm, Catch::Matchers::WithinRel(10.0 / finest_cells, 1e-12));
  Eigen::VectorXd r(from_zero.size());
  problems.back()(sequenced, r);
  CHECK(r.norm() <= target * (1.0 + 1e-9));
  // The solutions agree to the solver tolerance: ‖Δu‖₂ <= ‖J⁻¹‖₂ (‖R(u1)‖ + ‖R(u2)‖),
  // ‖J⁻¹‖₂ ≈ 1/λ_min of the unscaled cell-centred Dirichlet Laplacian with k >= 1,
  // λ_min ≈ 2π² h² (common practice); a factor 2 for J's nonsymmetric part.
  const double h = 1.0 / finest_cells;
  const double pi = std::acos(-1.0);
  const double inverse_norm = 2.0 / (2.0 * pi * pi * h * h);
  CHECK((sequenced - from_zero).norm() <= inverse_norm * 2.0 * target);
}

TEST_CASE("Grid sequencing with a different preconditioner per level: sparse LU on the coarsest, ILU(0) above",
          "[grid_sequencing]") {
  // The model problem 16² to 64² (problems/model_problem/model_problem.hpp). With
  // the LU of the analytic Jacobian as preconditioner, GMRES on the
  // finite-difference J·v converges in one iteration up to the difference
  // error (common practice); two per Newton step allow for it.
  const nkit::structured_grid_hierarchy hierarchy(structured_grid({64, 64}, 1, {1.0, 1.0}), 3);
  std::vector<nkit_problems::heat_conduction_model_problem> problems;
  for (int level = 0; level < 3; ++level) problems.emplace_back(hierarchy.grid(level).cells(0));
  using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::any_preconditioner<>>;
  std::vector<int> levels_built;
  const auto solver_at_level = [&](int level, const nkit::newton_settings& settings) {
    levels_built.push_back(level);
    if (level == 0) return solver_type(settings, {}, nkit::sparse_direct_preconditioner{});
    return solver_type(settings, {}, nkit::ilu_zero_preconditioner{});
  };
  nkit::grid_sequencing_settings settings;
  settings.newton = model_problem_settings();
  nkit::grid_sequencing_solver sequencing(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(4096);
  const nkit::grid_sequencing_report report = sequencing.solve(
      hierarchy, [&](int level) -> auto& { return problems[static_cast<std::size_t>(level)]; }, solver_at_level, u);
  std::ostringstream table;
  nkit::print_grid_sequencing_table(table, report);
  INFO(table.str());
  REQUIRE(report.converged());
  CHECK(levels_built == std::vector<int>{0, 1, 2});
  const nkit::grid_level_record& coarsest = report.levels.front();
  CHECK(coarsest.newton_steps >= 1);
  CHECK(coarsest.linear_iterations <= 2 * coarsest.newton_steps);
  // The level tolerance rule: τ_0 = 1e-4 (default) relative to ‖R_0(0)‖ = q/16.
  CHECK_THAT(coarsest.relative_tolerance, Catch::Matchers::WithinRel(1e-4, 1e-15));
  CHECK_THAT(coarsest.target_residual_norm, Catch::Matchers::WithinRel(1e-4 * 10.0 / 16.0, 1e-12));
  CHECK(coarsest.final_residual_norm <= coarsest.target_residual_norm);
  // τ_1 = 1e-4 / 2² (p = 2, r = 2); the finest level's τ is newton.relative_tolerance.
  CHECK_THAT(report.levels[1].relative_tolerance, Catch::Matchers::WithinRel(2.5e-5, 1e-15));
  CHECK_THAT(report.finest().relative_tolerance, Catch::Matchers::WithinRel(1e-8, 1e-15));
  CHECK(report.finest().final_residual_norm <= 1e-8 * 10.0 / 64.0);
}

TEST_CASE("Grid sequencing: one level is a plain solve, a converged given state is returned as it is",
          "[grid_sequencing]") {
  // Our own scenario on the model problem at 16² (problems/model_problem/model_problem.hpp).
  const nkit::structured_grid_hierarchy single(structured_grid({16, 16}, 1, {1.0, 1.0}), 1);
  nkit_problems::heat_conduction_model_problem problem(16);
  nkit::grid_sequencing_settings settings;
  settings.newton = model_problem_settings();
  nkit::grid_sequencing_solver sequencing(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(256);
  const auto problem_at_level = [&](int) -> auto& { return problem; };
  const nkit::grid_sequencing_report report =
      sequencing.solve(single, problem_at_level, nkit::newton_solver_per_level<nkit::ilu_zero_preconditioner>{}, u);
  REQUIRE(report.converged());
  REQUIRE(report.levels.size() == 1);
  CHECK(report.finest().final_residual_norm <= 1e-8 * report.finest().reference_residual_norm);
  // Solving again from the converged state with an absolute tolerance it meets: nothing to do.
  Eigen::VectorXd r(256);
  problem(u, r);
  settings.newton.absolute_tolerance = 2.0 * r.norm();
  sequencing.configure(settings);
  const Eigen::VectorXd before = u;
  const nkit::grid_sequencing_report again =
      sequencing.solve(single, problem_at_level, nkit::newton_solver_per_level<nkit::ilu_zero_preconditioner>{}, u);
  CHECK(again.converged());
  CHECK(again.returned_given_state);
  CHECK(again.finest().newton_steps == 0);
  CHECK(u == before);
}

TEST_CASE("Grid sequencing that does not converge returns the better of the finest iterate and the given state",
          "[grid_sequencing]") {
  // The driver's contract (multilevel/grid_sequencing_solver.hpp): u never ends
  // worse than given. Our own scenario: the model problem 16² to 64²
  // (problems/model_problem/model_problem.hpp), one Newton step per level.
  const nkit::structured_grid_hierarchy hierarchy(structured_grid({64, 64}, 1, {1.0, 1.0}), 3);
  std::vector<nkit_problems::heat_conduction_model_problem> problems;
  for (int level = 0; level < 3; ++level) problems.emplace_back(hierarchy.grid(level).cells(0));
  const auto problem_at_level = [&](int level) -> auto& { return problems[static_cast<std::size_t>(level)]; };
  const auto solver_at_level = nkit::newton_solver_per_level<nkit::ilu_zero_preconditioner>{};
  nkit::grid_sequencing_settings settings;
  settings.newton = model_problem_settings();
  settings.newton.newton_step_budget = 1;
  nkit::grid_sequencing_solver sequencing(settings);
  Eigen::VectorXd r(4096);

  SECTION("from T = 0 the finest iterate is better: u holds it") {
    Eigen::VectorXd u = Eigen::VectorXd::Zero(4096);
    const nkit::grid_sequencing_report report = sequencing.solve(hierarchy, problem_at_level, solver_at_level, u);
    CHECK(report.reason == nkit::stop_reason::newton_step_budget_spent);
    REQUIRE(report.reached_finest_level);
    CHECK(report.levels.size() == 3);  // unconverged coarse levels hand their best iterate on
    CHECK_FALSE(report.returned_given_state);
    problems.back()(u, r);
    CHECK_THAT(r.norm(), Catch::Matchers::WithinRel(report.finest().final_residual_norm, 1e-12));
    CHECK(r.norm() < report.finest().reference_residual_norm);
  }
  SECTION("from a converged state and an unreachable tolerance: u keeps the given state") {
    Eigen::VectorXd u = Eigen::VectorXd::Zero(4096);
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> plain(
        model_problem_settings());
    REQUIRE(plain.solve(problems.back(), u).converged());
    const Eigen::VectorXd given = u;
    settings.newton.relative_tolerance = 1e-12;
    sequencing.configure(settings);
    const nkit::grid_sequencing_report report = sequencing.solve(hierarchy, problem_at_level, solver_at_level, u);
    CHECK_FALSE(report.converged());
    CHECK(report.returned_given_state);
    CHECK(report.finest().final_residual_norm > report.finest().reference_residual_norm);
    CHECK(u == given);
  }
}

TEST_CASE("Grid sequencing stopped on a coarse level leaves the given state untouched", "[grid_sequencing]") {
  // A monitor-free interruption: the cancellation flag raised before the solve.
  const nkit::structured_grid_hierarchy hierarchy(structured_grid({32, 32}, 1, {1.0, 1.0}), 3);
  std::vector<nkit_problems::heat_conduction_model_problem> problems = {
      nkit_problems::heat_conduction_model_problem(8), nkit_problems::heat_conduction_model_problem(16),
      nkit_problems::heat_conduction_model_problem(32)};
  std::atomic<bool> cancel{true};
  nkit::grid_sequencing_settings settings;
  settings.newton = model_problem_settings();
  settings.newton.cancellation_flag = &cancel;
  nkit::grid_sequencing_solver sequencing(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(1024, 0.25);
  const Eigen::VectorXd given = u;
  const nkit::grid_sequencing_report report = sequencing.solve(
      hierarchy, [&](int level) -> auto& { return problems[static_cast<std::size_t>(level)]; },
      nkit::newton_solver_per_level<>{}, u);
  CHECK_FALSE(report.converged());
  CHECK(report.reason == nkit::stop_reason::cancellation_flag_raised);
  CHECK_FALSE(report.reached_finest_level);
  CHECK(report.returned_given_state);
  CHECK(u == given);
}

TEST_CASE("Grid sequencing rejects bad settings and a state of the wrong size, naming the value", "[grid_sequencing]") {
  using Catch::Matchers::Contains;
  const nkit::structured_grid_hierarchy hierarchy(structured_grid({8, 8}), 2);
  nkit::grid_sequencing_settings settings;
  settings.coarsest_relative_tolerance = 1.0;
  CHECK_THROWS_WITH(nkit::grid_sequencing_solver(settings),
                    "nkit: grid_sequencing_settings.coarsest_relative_tolerance must be in (0, 1) (got 1)");
  settings.coarsest_relative_tolerance = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(settings.validate(),
                    "nkit: grid_sequencing_settings.coarsest_relative_tolerance must be in (0, 1) (got nan)");
  settings = {};
  settings.discretization_order = std::numeric_limits<double>::infinity();
  CHECK_THROWS_WITH(settings.validate(),
                    "nkit: grid_sequencing_settings.discretization_order must be finite and > 0 (got inf)");
  settings.discretization_order = 0.0;
  CHECK_THROWS_WITH(settings.validate(),
                    "nkit: grid_sequencing_settings.discretization_order must be finite and > 0 (got 0)");
  settings = {};
  settings.refinement_ratio = 0.5;
  CHECK_THROWS_WITH(settings.validate(),
                    "nkit: grid_sequencing_settings.refinement_ratio must be finite and >= 1 (got 0.5)");
  settings = {};
  settings.refined_level_initial_forcing_term = 1.0;
  CHECK_THROWS_WITH(settings.validate(),
                    "nkit: grid_sequencing_settings.refined_level_initial_forcing_term must be in [0, 1) (got 1)");
  settings = {};
  settings.newton.newton_step_budget = 0;
  CHECK_THROWS_WITH(settings.validate(),
                    "nkit: grid_sequencing_settings.newton.newton_step_budget must be >= 1 (got 0)");

  // The state's size must be the finest level's.
  nkit_problems::heat_conduction_model_problem problem(8);
  nkit::grid_sequencing_solver sequencing;
  Eigen::VectorXd u = Eigen::VectorXd::Zero(63);
  CHECK_THROWS_WITH(sequencing.solve(
                        hierarchy, [&](int) -> auto& { return problem; }, nkit::newton_solver_per_level<>{}, u),
                    "nkit: grid_sequencing_solver: the state u has 63 entries, the finest level (1) 64 unknowns");
  CHECK(u == Eigen::VectorXd::Zero(63));
}
