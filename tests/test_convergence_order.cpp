// Local convergence order of the Newton iteration, read from report.history.
//
// Problem: Broyden tridiagonal (Moré, Garbow & Hillstrom, ACM TOMS 7 (1981)
// 17–41, problem 30), f_i = (3 − 2x_i)x_i − x_{i−1} − 2x_{i+1} + 1. It is
// quadratic, so for any step s exactly
//   F(x + s) = F(x) + F'(x)s − 2 s∘s        (s∘s: componentwise square),
// and F'(x) = tridiag(−1, 3 − 4x_i, −2) = D + E with ‖E‖₂ <= √(‖E‖₁‖E‖∞) = 3,
// so σ_min(F'(x)) >= min_i |3 − 4x_i| − 3 (Weyl's inequality for singular
// values; common practice), positive while every x_i < 0 (true from the
// standard start x0 = −1 to the root, whose entries lie in [−0.71, −0.41]).
//
// Newton's theory (e.g. Dennis & Schnabel 1996, Thm 5.2.1; from memory) gives
// local q-quadratic convergence with a nonsingular Jacobian; for this F the
// constant is explicit. With a full step s_k and linear residual
// ‖F_k + F'_k s_k‖ <= η_k ‖F_k‖:
//   ‖s_k‖ <= (1 + η_k) ‖F_k‖ / σ_k,
//   ‖F_{k+1}‖ <= η_k ‖F_k‖ + 2‖s_k‖₂² <= η_k ‖F_k‖ + 2(1 + η_k)² ‖F_k‖² / σ_k²,
// with σ_k the lower bound above at x_k. So ‖F_{k+1}‖/‖F_k‖² stays below
// 2(1 + η_k)²/σ_k² + η_k/‖F_k‖ (bounded for tiny constant η), while a merely
// linearly convergent iteration, ‖F_{k+1}‖ ≈ ρ‖F_k‖, violates it as soon as
// ‖F_k‖ < ρσ_k²/2.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "problems/test_sets/more_garbow_hillstrom.hpp"
#include "support/matchers.hpp"

namespace mgh = nkit_problems::more_garbow_hillstrom;

namespace {

/// Broyden tridiagonal with exact J·v (AD), optionally multiplied by a wrong
/// factor to build a deliberately broken Newton method for the sanity checks.
struct broyden_problem {
  nkit::residual_with_automatic_differentiation<mgh::broyden_tridiagonal> exact;
  double jacobian_factor = 1.0;  // 1: exact product
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& f) { exact(x, f); }
  void jacobian_product(const Eigen::VectorXd& x, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
    exact.jacobian_product(x, v, jv);
    jv *= jacobian_factor;
  }
};

/// The same residual with nkit's default finite-difference J·v.
struct broyden_residual_only {
  mgh::broyden_tridiagonal problem;
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& f) const { problem(x, f); }
};

struct newton_step_data {
  double residual_before;       // ‖F(x_k)‖
  double residual_after;        // ‖F(x_{k+1})‖
  double forcing_term;          // η_k requested
  double linear_residual;       // achieved relative linear residual
  double step_fraction;         // λ
  double singular_value_bound;  // σ_k >= min_i |3 − 4x_i| − 3 at x_k
};

double singular_value_lower_bound(const Eigen::VectorXd& x) { return (3.0 - 4.0 * x.array()).abs().minCoeff() - 3.0; }

/// Runs the caller-driven loop, recording x_k-dependent data before each step.
template <class Problem>
std::vector<newton_step_data> run_newton(Problem& problem, Eigen::Index n, const nkit::newton_settings& settings,
                                         nkit::stop_reason_if_stopped& result) {
  Eigen::VectorXd x = Eigen::VectorXd::Constant(n, -1.0);  // standard start of problem 30
  nkit::newton_krylov_solver<> solver(settings);
  auto run = solver.begin(problem, x);
  std::vector<newton_step_data> steps;
  while (true) {
    const double sigma = singular_value_lower_bound(x);
    const double before = steps.empty() ? run.report().initial_residual_norm : steps.back().residual_after;
    const nkit::run_state state = run.advance();
    const auto& history = run.report().history;
    if (history.size() > steps.size()) {
      const nkit::newton_step_record& record = history.back();
      steps.push_back({before, record.residual_norm, record.forcing_term, record.relative_linear_residual,
                       record.step_fraction, sigma});
    }
    if (state == nkit::run_state::stopped) {
      result = run.reason();
      return steps;
    }
  }
}

/// Rounding floor of ‖F‖: each f_i sums 5 terms of size <= 9 in total for
/// |x_i| <= 1, so its error is <= 5u · 9 (Higham's bound for recursive
/// summation, common practice), and ‖δF‖₂ <= 45u√n. The floor allowed below is
/// 20 times that, which also covers rounding in GMRES's linear residual.
double rounding_floor(Eigen::Index n) {
  return 20.0 * 45.0 * 0.5 * std::numeric_limits<double>::epsilon() * std::sqrt(static_cast<double>(n));
}

/// The quadratic bound of the file comment, for every full step; `detail` names the first violation.
bool within_quadratic_bound(const std::vector<newton_step_data>& steps, double floor, std::string& detail) {
  for (std::size_t k = 0; k < steps.size(); ++k) {
    const newton_step_data& s = steps[k];
    const double eta = std::max(s.forcing_term, s.linear_residual);
    const double bound = eta * s.residual_before +
                         2.0 * (1.0 + eta) * (1.0 + eta) * s.residual_before * s.residual_before /
                             (s.singular_value_bound * s.singular_value_bound) +
                         floor;
    if (!(s.residual_after <= bound)) {
      std::ostringstream text;
      text << "step " << k + 1 << ": ‖F_k‖ = " << s.residual_before << ", ‖F_k+1‖ = " << s.residual_after << " > bound "
           << bound << " (ratio ‖F_k+1‖/‖F_k‖² = " << s.residual_after / (s.residual_before * s.residual_before) << ")";
      detail = text.str();
      return false;
    }
  }
  return true;
}

/// Superlinear signature over the last three steps above the rounding floor:
/// q_j = ‖F_{j+1}‖/‖F_j‖ falls by at least a factor 4 from each step to the
/// next. A q-linear iteration has q_j → ρ > 0, so consecutive factors have
/// ratio → 1 and it fails. For Choice 2 with α = 2 the local order is α
/// (Eisenstat & Walker 1996; from memory): ‖F_{j+1}‖ ≈ C‖F_j‖^α gives
/// q_{j+1}/q_j ≈ q_j^(α−1) = q_j, already <= 0.011 in the last steps here
/// (measured ratios 1/32 and 1/22). The last factor is set by the end-game
/// safeguard η >= 0.5τ/‖F‖ rather than by Choice 2, which is why the demand
/// is a factor 4 and not a factor 10 per step; 4 still excludes linear rates.
bool looks_superlinear(const std::vector<newton_step_data>& steps, double floor, std::string& detail) {
  std::vector<double> ratios;
  for (const auto& s : steps) {
    if (s.residual_after > floor) ratios.push_back(s.residual_after / s.residual_before);
  }
  std::ostringstream text;
  text << "contraction factors:";
  for (double q : ratios) text << ' ' << q;
  detail = text.str();
  if (ratios.size() < 3) return false;
  const std::size_t last = ratios.size() - 1;
  return ratios[last] <= 0.25 * ratios[last - 1] && ratios[last - 1] <= 0.25 * ratios[last - 2];
}

}  // namespace

TEST_CASE("Newton with exact J·v and tight forcing converges quadratically", "[newton][order]") {
  // Theory and bound: file comment. Constant forcing η = 1e-12 and full steps,
  // so the only departure from exact Newton is the tiny linear residual.
  const Eigen::Index n = 100;
  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-12;
  settings.relative_tolerance = 0.0;
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-12;
  settings.globalization = nkit::globalization_strategy::full_step;
  const double floor = rounding_floor(n);

  broyden_problem exact{nkit::with_automatic_differentiation(mgh::broyden_tridiagonal{n}), 1.0};
  nkit::stop_reason_if_stopped result;
  const std::vector<newton_step_data> steps = run_newton(exact, n, settings, result);
  CHECK(result == nkit::stop_reason::absolute_tolerance_met);
  REQUIRE(steps.size() >= 4);
  for (const auto& s : steps) {
    REQUIRE(s.singular_value_bound > 0.0);
    CHECK(s.step_fraction == 1.0);
  }
  std::string detail;
  const bool quadratic = within_quadratic_bound(steps, floor, detail);
  INFO(detail);
  CHECK(quadratic);
  // The check reached the regime where a linear method would fail it:
  // steps with ‖F_k‖ < 1e-3 and ‖F_{k+1}‖ above the rounding floor.
  int asymptotic_steps = 0;
  for (const auto& s : steps) asymptotic_steps += (s.residual_before < 1e-3 && s.residual_after > floor) ? 1 : 0;
  CHECK(asymptotic_steps >= 1);

  // Sanity check that the bound can fail: J·v off by 10 % makes the iteration
  // converge only linearly, ‖F_{k+1}‖ ≈ (1 − 1/1.1)‖F_k‖ ≈ 0.091‖F_k‖.
  broyden_problem wrong{nkit::with_automatic_differentiation(mgh::broyden_tridiagonal{n}), 1.1};
  nkit::stop_reason_if_stopped wrong_result;
  const std::vector<newton_step_data> wrong_steps = run_newton(wrong, n, settings, wrong_result);
  CHECK(wrong_result == nkit::stop_reason::absolute_tolerance_met);  // it still converges, but ...
  CHECK(wrong_steps.size() > steps.size() + 5);
  std::string wrong_detail;
  CHECK_FALSE(within_quadratic_bound(wrong_steps, floor, wrong_detail));  // ... not quadratically
  REQUIRE(wrong_steps.size() >= 8);
  CHECK_THAT(wrong_steps[7].residual_after / wrong_steps[7].residual_before,
             Catch::Matchers::WithinAbs(1.0 - 1.0 / 1.1, 1e-3));
}

TEST_CASE("Newton with Eisenstat-Walker Choice 2 forcing converges superlinearly", "[newton][order]") {
  // Default settings: forcing Choice 2 (γ = 0.9, α = 2), line search; J·v
  // exact (AD) or by finite differences (its O(√ε) error only matters once
  // ‖F‖ is far below what is reached here). ‖F‖ <= 1e-10, n = 1000.
  const Eigen::Index n = 1000;
  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-10;
  settings.relative_tolerance = 0.0;
  REQUIRE(settings.forcing.formula == nkit::forcing_term_formula::eisenstat_walker_choice_2);
  const double floor = rounding_floor(n);

  nkit::stop_reason_if_stopped result;
  std::vector<newton_step_data> steps;
  SECTION("exact J·v") {
    broyden_problem exact{nkit::with_automatic_differentiation(mgh::broyden_tridiagonal{n}), 1.0};
    steps = run_newton(exact, n, settings, result);
  }
  SECTION("finite-difference J·v") {
    broyden_residual_only residual{mgh::broyden_tridiagonal{n}};
    steps = run_newton(residual, n, settings, result);
  }
  CHECK(result == nkit::stop_reason::absolute_tolerance_met);
  std::string detail;
  const bool superlinear = looks_superlinear(steps, floor, detail);
  INFO(detail);
  CHECK(superlinear);
  // The forcing terms themselves shrink (Choice 2 tightens as ‖F‖ falls).
  REQUIRE(steps.size() >= 3);
  CHECK(steps.back().forcing_term < steps.front().forcing_term);
}

TEST_CASE("The superlinear check fails for a linearly convergent iteration", "[newton][order]") {
  // Sanity check of looks_superlinear(): Choice 2 forcing, but J·v off by 10 %,
  // so ‖F_{k+1}‖/‖F_k‖ → 1 − 1/1.1 ≈ 0.091 instead of → 0.
  const Eigen::Index n = 1000;
  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-10;
  settings.relative_tolerance = 0.0;
  broyden_problem wrong{nkit::with_automatic_differentiation(mgh::broyden_tridiagonal{n}), 1.1};
  nkit::stop_reason_if_stopped result;
  const std::vector<newton_step_data> steps = run_newton(wrong, n, settings, result);
  CHECK(result == nkit::stop_reason::absolute_tolerance_met);
  std::string detail;
  const bool superlinear = looks_superlinear(steps, rounding_floor(n), detail);
  INFO(detail);
  CHECK_FALSE(superlinear);
}
