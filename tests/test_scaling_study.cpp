// The scaling-study helper: power-law fits on log–log data checked against
// exact synthetic laws and against Eigen's least-squares solver (a
// general-purpose reference library), and the study driver on synthetic and
// real solves.
#include <Eigen/Dense>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/nkit.hpp>
#include <nkit/report/scaling_study.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "problems/model_problem/model_problem.hpp"

using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("a power law is recovered exactly from exact data", "[scaling]") {
  // y = 3 N^1.5 sampled at N = 10^3 ... 10^6 (exact synthetic data): the
  // least-squares line through (ln N, ln y) is the law itself, so the
  // exponent and coefficient agree to rounding of a few logarithms (1e-12
  // relative) and the fit is perfect.
  std::vector<double> n, y;
  for (double size = 1e3; size <= 1e6; size *= 10.0) {
    n.push_back(size);
    y.push_back(3.0 * std::pow(size, 1.5));
  }
  const nkit::power_law_fit fit = nkit::fit_power_law(n, y);
  REQUIRE(fit.valid());
  CHECK(fit.points == 4);
  CHECK_THAT(fit.exponent, WithinRel(1.5, 1e-12));
  CHECK_THAT(fit.coefficient, WithinRel(3.0, 1e-10));
  CHECK_THAT(fit.r_squared, WithinAbs(1.0, 1e-12));
  CHECK_THAT(fit.rms_log_residual, WithinAbs(0.0, 1e-12));
  CHECK_THAT(fit.exponent_standard_error, WithinAbs(0.0, 1e-12));
  CHECK_THAT(fit.predict(2e4), WithinRel(3.0 * std::pow(2e4, 1.5), 1e-10));
}

TEST_CASE("the fit on scattered data equals Eigen's least-squares solution", "[scaling]") {
  // Invented data for the test: y = 0.02 N^1.15 times a deterministic
  // scatter of up to ±8 %. The reference is the least-squares solution of
  // [1 ln N] [ln c, p]^T ≈ ln y by Eigen's column-pivoting QR, its R² and
  // the standard error of p from sigma² (X^T X)^-1 (ordinary least squares,
  // common practice). Both sides solve the same small problem in different
  // ways: agreement to 1e-10 relative.
  const int points = 7;
  std::vector<double> n, y;
  Eigen::MatrixXd design(points, 2);
  Eigen::VectorXd logs(points);
  for (int k = 0; k < points; ++k) {
    const double size = 1e4 * std::pow(2.0, k);
    const double value = 0.02 * std::pow(size, 1.15) * (1.0 + 0.08 * std::sin(1.7 * k + 0.3));
    n.push_back(size);
    y.push_back(value);
    design(k, 0) = 1.0;
    design(k, 1) = std::log(size);
    logs(k) = std::log(value);
  }
  const Eigen::Vector2d solution = design.colPivHouseholderQr().solve(logs);
  const Eigen::VectorXd residual = logs - design * solution;
  const double total = (logs.array() - logs.mean()).square().sum();
  const double sigma_squared = residual.squaredNorm() / (points - 2);
  const double standard_error = std::sqrt(sigma_squared * (design.transpose() * design).inverse()(1, 1));

  const nkit::power_law_fit fit = nkit::fit_power_law(n, y);
  REQUIRE(fit.valid());
  CHECK_THAT(fit.exponent, WithinRel(solution(1), 1e-10));
  CHECK_THAT(std::log(fit.coefficient), WithinRel(solution(0), 1e-10));
  CHECK_THAT(fit.r_squared, WithinRel(1.0 - residual.squaredNorm() / total, 1e-10));
  CHECK_THAT(fit.rms_log_residual, WithinRel(std::sqrt(residual.squaredNorm() / points), 1e-10));
  CHECK_THAT(fit.exponent_standard_error, WithinRel(standard_error, 1e-9));
  // The slope moves by Σ(x − x̄) e / S_xx for log errors e, at most
  // max|e| Σ|x − x̄| / S_xx = |ln 0.92| · 12 ln 2 / (28 ln² 2) ≈ 0.052 for
  // x = ln N at 7 equally spaced points (spacing ln 2).
  CHECK_THAT(fit.exponent, WithinAbs(1.15, 0.052));
}

TEST_CASE("degenerate data give an invalid or trivial fit, not garbage", "[scaling]") {
  SECTION("one point") {
    const auto fit = nkit::fit_power_law({100.0}, {1.0});
    CHECK_FALSE(fit.valid());
    CHECK(fit.points == 1);
  }
  SECTION("every point at one N") {
    const auto fit = nkit::fit_power_law({100.0, 100.0, 100.0}, {1.0, 2.0, 3.0});
    CHECK_FALSE(fit.valid());
    CHECK(fit.points == 3);
  }
  SECTION("zero, negative and non-finite values are left out") {
    const double inf = std::numeric_limits<double>::infinity();
    const auto fit = nkit::fit_power_law({10.0, 100.0, 1000.0, 1e4, 1e5}, {0.0, 5.0, -1.0, 50.0, inf});
    REQUIRE(fit.valid());
    CHECK(fit.points == 2);
    CHECK_THAT(fit.exponent, WithinRel(0.5, 1e-12));  // 5 → 50 over a factor 100
  }
  SECTION("constant data: exponent 0, perfect fit") {
    const auto fit = nkit::fit_power_law({10.0, 100.0, 1000.0}, {6.0, 6.0, 6.0});
    REQUIRE(fit.valid());
    CHECK_THAT(fit.exponent, WithinAbs(0.0, 1e-14));
    CHECK_THAT(fit.r_squared, WithinAbs(1.0, 1e-14));
  }
  CHECK_THROWS_AS(nkit::fit_power_law({1.0, 2.0}, {1.0}), std::invalid_argument);
}

namespace {
/// Invented solve reports with known growth laws (demo data for the test):
/// time = 1e-7 N^1.2 s, 6 Newton steps, 4 N^0.25 linear iterations per step,
/// a residual evaluation of 1e-8 N s, workspace 400 N bytes.
nkit::scaling_sample synthetic_solve(long long cells_per_side, double slowdown = 1.0) {
  const double n = static_cast<double>(cells_per_side * cells_per_side);
  nkit::scaling_sample sample;
  sample.unknowns = cells_per_side * cells_per_side;
  nkit::solve_report& report = sample.report;
  report.reason = nkit::stop_reason::relative_tolerance_met;
  report.newton_steps = 6;
  report.linear_iterations = std::llround(6 * 4.0 * std::pow(n, 0.25));
  report.wall_seconds = slowdown * 1e-7 * std::pow(n, 1.2);
  report.median_residual_seconds = 1e-8 * n;
  report.workspace_bytes = static_cast<std::size_t>(400 * n);
  return sample;
}
}  // namespace

TEST_CASE("a study of synthetic solves recovers the growth laws it was built with", "[scaling]") {
  nkit::scaling_study_settings settings;
  settings.size_parameters = {64, 128, 256, 512, 1024};
  settings.repetitions = 2;
  int calls = 0;
  const auto result = nkit::run_scaling_study(settings, [&](long long size) {
    ++calls;
    return synthetic_solve(size, calls % 2 == 1 ? 1.5 : 1.0);  // second repetition is faster: kept
  });
  CHECK(calls == 10);
  REQUIRE(result.rows.size() == 5);
  CHECK(result.skipped_size_parameters.empty());
  CHECK(result.rows[2].unknowns == 256 * 256);
  CHECK_THAT(result.rows[2].wall_seconds, WithinRel(1e-7 * std::pow(256.0 * 256.0, 1.2), 1e-12));
  CHECK_THAT(result.wall_seconds.exponent, WithinRel(1.2, 1e-10));
  CHECK_THAT(result.wall_seconds.r_squared, WithinAbs(1.0, 1e-10));
  CHECK_THAT(result.work_units.exponent, WithinRel(0.2, 1e-9));  // time / (1e-8 N)
  CHECK_THAT(result.newton_steps.exponent, WithinAbs(0.0, 1e-12));
  CHECK_THAT(result.workspace_bytes.exponent, WithinRel(1.0, 1e-6));  // 400 N rounded to whole bytes
  // Iterations are rounded to integers: exponent 0.25 to within the
  // rounding of ~4 N^0.25 (≥ 32 at N = 4096): a relative error ≤ 1/64.
  CHECK_THAT(result.linear_iterations_per_newton_step.exponent, WithinAbs(0.25, 0.01));
}

TEST_CASE("a study stops before the sizes that follow a solve slower than the limit", "[scaling]") {
  nkit::scaling_study_settings settings;
  settings.size_parameters = {100, 200, 400, 800};
  // 1e-7 N^1.2 s: 0.033 s at N = 4e4, 0.18 s at 1.6e5 — the limit falls between.
  settings.skip_larger_sizes_after_seconds = 0.1;
  const auto result = nkit::run_scaling_study(settings, [](long long size) { return synthetic_solve(size); });
  REQUIRE(result.rows.size() == 3);  // 100, 200 and the slow 400 itself
  CHECK(result.rows.back().size_parameter == 400);
  CHECK(result.skipped_size_parameters == std::vector<long long>{800});
}

TEST_CASE("unconverged sizes are listed but left out of the fits", "[scaling]") {
  nkit::scaling_study_settings settings;
  settings.size_parameters = {64, 128, 256, 512};
  const auto result = nkit::run_scaling_study(settings, [](long long size) {
    nkit::scaling_sample sample = synthetic_solve(size);
    if (size == 512) sample.report.reason = nkit::stop_reason::wall_time_budget_spent;
    return sample;
  });
  CHECK(result.rows.size() == 4);
  CHECK(result.wall_seconds.points == 3);
}

TEST_CASE("bad study settings are rejected with the field named", "[scaling]") {
  nkit::scaling_study_settings settings;
  auto solve = [](long long size) { return synthetic_solve(size); };
  CHECK_THROWS_WITH(nkit::run_scaling_study(settings, solve),
                    "nkit: scaling_study_settings.size_parameters must not be empty");
  settings.size_parameters = {8, 0};
  CHECK_THROWS_WITH(nkit::run_scaling_study(settings, solve),
                    "nkit: scaling_study_settings.size_parameters must all be >= 1 (got 0)");
  settings.size_parameters = {8};
  settings.repetitions = 0;
  CHECK_THROWS_WITH(nkit::run_scaling_study(settings, solve),
                    "nkit: scaling_study_settings.repetitions must be >= 1 (got 0)");
}

TEST_CASE("a study of the heat-conduction model problem tabulates real solves", "[scaling]") {
  // The model problem's criterion (model_problem.hpp): converged at ‖R‖ <= 1e-8 ‖R(T0)‖ (the solver's
  // default relative tolerance is looser or equal; set it explicitly).
  nkit::scaling_study_settings settings;
  settings.size_parameters = {8, 16, 32};
  const auto result = nkit::run_scaling_study(settings, [](long long size) {
    nkit_problems::heat_conduction_model_problem problem(static_cast<int>(size));
    Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
    nkit::newton_settings newton;
    newton.relative_tolerance = 1e-8;
    newton.linear.maximum_iterations = 2000;
    nkit::newton_krylov_solver<> solver(newton);
    return nkit::scaling_sample{problem.unknowns(), solver.solve(problem, t)};
  });
  REQUIRE(result.rows.size() == 3);
  for (const auto& row : result.rows) {
    CAPTURE(row.size_parameter);
    CHECK(row.converged());
    CHECK(row.unknowns == row.size_parameter * row.size_parameter);
    CHECK(row.linear_iterations_per_newton_step > 1.0);
    CHECK(row.work_units > 0.0);
  }
  // Unpreconditioned GMRES on a 2D diffusion operator: iterations grow with
  // the square root of the condition number, ∝ n ∝ N^0.5 (common practice);
  // on these coarse grids restarts and the pre-asymptotic range move it, so
  // the band 0.2–0.8 is a measured range, not theory (measured: 0.61).
  CHECK(result.linear_iterations_per_newton_step.exponent > 0.2);
  CHECK(result.linear_iterations_per_newton_step.exponent < 0.8);

  std::ostringstream table, csv, fits;
  nkit::print_scaling_study(table, result);
  nkit::write_scaling_study_csv(csv, result);
  nkit::write_scaling_fits_csv(fits, result);
  CHECK(table.str().find("linear iterations per Newton step") != std::string::npos);
  std::istringstream lines(csv.str());
  std::string line;
  std::getline(lines, line);
  CHECK(line == nkit::scaling_study_csv_columns);
  int rows = 0;
  while (std::getline(lines, line)) {
    ++rows;
    CHECK(std::count(line.begin(), line.end(), ',') == 9);
  }
  CHECK(rows == 3);
  CHECK(fits.str().find("linear_iterations_per_newton_step,") != std::string::npos);
}
