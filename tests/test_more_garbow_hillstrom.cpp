// The nonlinear systems of Moré, Garbow & Hillstrom, "Testing unconstrained
// optimization software", ACM TOMS 7(1) (1981) 17–41 (definitions, checked
// against published transcriptions of the set, in
// problems/test_sets/more_garbow_hillstrom.hpp):
//  1. ‖F(x0)‖ against values computed independently from those definitions,
//     which validates the implementation;
//  2. nkit's default line-search Newton–GMRES from each standard start;
//  3. a cross-check of the roots against a general-purpose reference solver,
//     Powell's hybrid (dogleg) method as implemented in Eigen's
//     HybridNonLinearSolver (unsupported/Eigen/NonLinearOptimization).
#include <Eigen/Dense>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <string>
#include <unsupported/Eigen/NonLinearOptimization>

#include "problems/test_sets/more_garbow_hillstrom.hpp"
#include "support/matchers.hpp"
#include "support/tridiagonal_preconditioner.hpp"
#include "support/unit_roundoff.hpp"

namespace mgh = nkit_problems::more_garbow_hillstrom;

namespace {

using nkit_test::unit_roundoff;  // support/unit_roundoff.hpp

/// Dense F'(x), column by column from the exact (AD) Jacobian-vector product.
Eigen::MatrixXd dense_jacobian(const mgh::problem_entry& entry, const Eigen::VectorXd& x) {
  const Eigen::Index n = x.size();
  Eigen::MatrixXd jacobian(n, n);
  Eigen::VectorXd unit(n), column(n);
  for (Eigen::Index j = 0; j < n; ++j) {
    unit.setZero();
    unit(j) = 1.0;
    entry.jacobian_product(x, unit, column);
    jacobian.col(j) = column;
  }
  return jacobian;
}

double smallest_singular_value(const Eigen::MatrixXd& matrix) {
  return Eigen::JacobiSVD<Eigen::MatrixXd>(matrix).singularValues().minCoeff();
}

double residual_norm(const mgh::problem_entry& entry, const Eigen::VectorXd& x) {
  Eigen::VectorXd f(x.size());
  entry.residual(x, f);
  return f.norm();
}

/// Bound on ‖x − x*‖ for a root x* where F'(x*) is nonsingular. From
/// F(x) = F'(x*)(x − x*) + O(‖x − x*‖²): ‖x − x*‖ <= ‖F'(x*)⁻¹‖ ‖F(x)‖ (1 + o(1));
/// the factor 2 covers the o(1) term for the residual sizes used here
/// (‖F‖ <= 1e-10), and 100 u (1 + ‖x‖) covers rounding in x itself.
double distance_bound(double inverse_norm, double residual, double state_norm) {
  return 2.0 * inverse_norm * residual + 100.0 * unit_roundoff * (1.0 + state_norm);
}

/// Powell singular: F'(0) is singular, so the bound above does not apply.
/// Instead, with a = x1 − x4, b = x2 − 2x3, c = x1 + 10x2, d = x3 − x4 the
/// residual is exactly f1 = c, f2 = √5 d, f3 = b², f4 = √10 a², and
/// (a, b, c, d) = M x for an invertible 4×4 matrix M. Hence, with no
/// linearisation, ‖x − 0‖ <= ‖M⁻¹‖₂ ‖(√(|f4|/√10), √|f3|, |f1|, |f2|/√5)‖.
double powell_singular_distance_bound(const Eigen::VectorXd& f) {
  Eigen::MatrixXd m(4, 4);  // dynamic size: g++ 12 warns falsely on JacobiSVD of a fixed 4×4
  m << 1, 0, 0, -1,         //
      0, 1, -2, 0,          //
      1, 10, 0, 0,          //
      0, 0, 1, -1;
  const double inverse_norm = 1.0 / Eigen::JacobiSVD<Eigen::MatrixXd>(m).singularValues().minCoeff();
  const Eigen::Vector4d combinations(std::sqrt(std::abs(f(3)) / std::sqrt(10.0)), std::sqrt(std::abs(f(2))),
                                     std::abs(f(0)), std::abs(f(1)) / std::sqrt(5.0));
  return inverse_norm * combinations.norm() + 100.0 * unit_roundoff;
}

/// The default solver with the convergence test of this file: ‖F‖ <= 1e-10
/// (absolute; the relative test is switched off so it cannot stop earlier).
nkit::newton_settings settings_for_absolute_tolerance() {
  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-10;
  settings.relative_tolerance = 0.0;
  return settings;
}

const mgh::problem_entry& find(const std::vector<mgh::problem_entry>& entries, const std::string& name) {
  for (const auto& entry : entries) {
    if (entry.name == name) return entry;
  }
  throw std::invalid_argument("no problem named " + name);
}

/// Solves from the standard start with nkit's default line-search
/// Newton–GMRES and finite-difference J·v, and checks ‖F‖ <= 1e-10 both as
/// reported and recomputed at the returned x.
Eigen::VectorXd solve_and_check_residual(const mgh::problem_entry& entry) {
  Eigen::VectorXd x = entry.standard_start;
  const nkit::solve_report report = nkit::solve(mgh::residual_only{&entry}, x, settings_for_absolute_tolerance());
  INFO(entry.name << " n = " << entry.dimension << ": " << report.message() << " after " << report.newton_steps
                  << " Newton steps, " << report.residual_evaluations << " residual evaluations, final ‖F‖ "
                  << report.final_residual_norm);
  CHECK(report.reason == nkit::stop_reason::absolute_tolerance_met);
  CHECK(report.final_residual_norm <= 1e-10);
  CHECK(residual_norm(entry, x) <= 1e-10);
  return x;
}

}  // namespace

TEST_CASE("MGH residual norms at the standard starts match the computed values", "[mgh][reference]") {
  // Expected ‖F(x0)‖₂: values computed independently (high-precision
  // arithmetic) from the definitions of Moré, Garbow & Hillstrom 1981; no
  // published table of them is cited. n = 10 for the variable-size problems.
  // Each is given to 10 significant digits, so the tolerance is half a unit
  // in the last digit given. Powell singular is √215 and helical valley 50
  // exactly; a wrong f4 factor (√2 instead of √10, an error seen in one
  // public transcription of the set) would give √567 instead.
  struct expectation {
    const char* name;
    double norm;
    double half_unit_in_last_digit;
  };
  const expectation expected[] = {
      {"Rosenbrock", 4.9193495505, 0.5e-10},
      {"Helical valley", 50.0, 1e-13},
      {"Powell singular", std::sqrt(215.0), 1e-13},
      {"Broyden tridiagonal", 4.582575695, 0.5e-9},
      {"Broyden banded", 18.97366596, 0.5e-8},
      {"Discrete boundary value", 0.02808058228, 0.5e-11},
      {"Discrete integral equation", 0.2518270072, 0.5e-10},
      {"Trigonometric", 0.08411753364, 0.5e-11},
  };
  const auto entries = mgh::more_garbow_hillstrom_problems(10);
  REQUIRE(entries.size() == 8);
  for (const expectation& e : expected) {
    const mgh::problem_entry& entry = find(entries, e.name);
    INFO(entry.name);
    CHECK(entry.standard_start.size() == entry.dimension);
    CHECK_THAT(residual_norm(entry, entry.standard_start),
               Catch::Matchers::WithinAbs(e.norm, e.half_unit_in_last_digit));
  }
  // Powell singular, also to 9 digits: ‖F(x0)‖ = √215 = 14.6628783.
  CHECK_THAT(residual_norm(find(entries, "Powell singular"), find(entries, "Powell singular").standard_start),
             Catch::Matchers::WithinAbs(14.6628783, 0.5e-7));
}

TEST_CASE("MGH banded and integral residuals match a literal transcription away from x0", "[mgh][reference]") {
  // At x0 = −1 every Broyden-banded coupling term x_j(1 + x_j) vanishes, so
  // the check of ‖F(x0)‖ cannot see the band; and the integral equation is
  // implemented with running sums. Both are compared here, at a generic point,
  // with a literal 1-based transcription of the formulas of MGH 1981 (problems 31, 29):
  //   31: f_i = x_i(2 + 5x_i²) + 1 − Σ_{j∈J_i} x_j(1 + x_j),
  //       J_i = {j ≠ i : max(1, i−5) <= j <= min(n, i+1)};
  //   29: f_i = x_i + h[(1 − t_i) Σ_{j<=i} t_j c_j + t_i Σ_{j>i} (1 − t_j) c_j]/2.
  // Tolerance: both sides sum the same O(1) terms in different order, ~n u each.
  const int n = 12;
  Eigen::VectorXd x(n);
  for (int j = 0; j < n; ++j) x(j) = std::sin(1.0 + j);
  auto at = [&x](int one_based) { return x(one_based - 1); };

  Eigen::VectorXd banded(n), literal(n);
  mgh::broyden_banded{n}(x, banded);
  for (int i = 1; i <= n; ++i) {
    double sum = 0.0;
    for (int j = std::max(1, i - 5); j <= std::min(n, i + 1); ++j) {
      if (j != i) sum += at(j) * (1.0 + at(j));
    }
    literal(i - 1) = at(i) * (2.0 + 5.0 * at(i) * at(i)) + 1.0 - sum;
  }
  CHECK_THAT(banded, nkit_test::is_close_to(literal, 1e-14));

  Eigen::VectorXd integral(n);
  mgh::discrete_integral_equation{n}(x, integral);
  const double h = 1.0 / (n + 1);
  auto c = [&](int j) { return std::pow(at(j) + j * h + 1.0, 3); };
  for (int i = 1; i <= n; ++i) {
    const double t_i = i * h;
    double lower = 0.0, upper = 0.0;
    for (int j = 1; j <= i; ++j) lower += j * h * c(j);
    for (int j = i + 1; j <= n; ++j) upper += (1.0 - j * h) * c(j);
    literal(i - 1) = at(i) + h * ((1.0 - t_i) * lower + t_i * upper) / 2.0;
  }
  CHECK_THAT(integral, nkit_test::is_close_to(literal, 1e-14));
}

TEST_CASE("MGH: the known solutions are zeros of the residual", "[mgh][reference]") {
  // Known solutions (Moré, Garbow & Hillstrom 1981): Rosenbrock (1, 1), helical valley
  // (1, 0, 0), Powell singular 0. F must vanish there to rounding.
  for (const auto& entry : mgh::more_garbow_hillstrom_problems(10)) {
    if (!entry.known_solution) continue;
    INFO(entry.name);
    CHECK(residual_norm(entry, *entry.known_solution) <= 1e-14);
  }
}

TEST_CASE("MGH helical valley: theta follows the published branches and is differentiable on x1 = 0",
          "[mgh][reference]") {
  // θ = (1/2π) arctan(x2/x1), + 0.5 when x1 < 0, ±0.25 on x1 = 0
  // (Moré, Garbow & Hillstrom 1981, problem 7).
  const double two_pi = 8.0 * std::atan(1.0);
  using helical = mgh::helical_valley;
  CHECK_THAT(helical::theta(1.0, 1.0), Catch::Matchers::WithinAbs(0.125, 1e-16));    // arctan(1)/2π
  CHECK_THAT(helical::theta(-1.0, 1.0), Catch::Matchers::WithinAbs(0.375, 1e-16));   // −1/8 + 1/2
  CHECK_THAT(helical::theta(-1.0, -1.0), Catch::Matchers::WithinAbs(0.625, 1e-16));  // 1/8 + 1/2
  CHECK_THAT(helical::theta(-1.0, 0.0), Catch::Matchers::WithinAbs(0.5, 1e-16));     // the standard start
  CHECK(helical::theta(0.0, 2.0) == 0.25);
  CHECK(helical::theta(0.0, -2.0) == -0.25);
  // Continuous across x1 = 0 for x2 > 0 from both sides (both limits are 1/4).
  CHECK_THAT(helical::theta(1e-12, 1.0), Catch::Matchers::WithinAbs(0.25, 1e-12));
  CHECK_THAT(helical::theta(-1e-12, 1.0), Catch::Matchers::WithinAbs(0.25, 1e-12));

  // On x1 = 0 the dual-number sweep must give the true gradient of θ,
  // ∂θ/∂x1 = −x2 / (2π r²), ∂θ/∂x2 = x1 / (2π r²) (differentiating
  // arctan(x2/x1)/2π), not the zero gradient of a constant branch.
  const auto entry = mgh::make_problem_entry(helical{});
  const Eigen::VectorXd x = (Eigen::VectorXd(3) << 0.0, 2.0, 0.3).finished();
  const Eigen::MatrixXd jacobian = dense_jacobian(entry, x);
  // f1 = 10 x3 − 100 θ: ∂f1/∂x1 = −100 ∂θ/∂x1 = 100 x2 / (2π r²) = 100 / (4π).
  CHECK_THAT(jacobian(0, 0), Catch::Matchers::WithinRel(100.0 * 2.0 / (two_pi * 4.0), 1e-14));
  CHECK_THAT(jacobian(0, 1), Catch::Matchers::WithinAbs(0.0, 1e-14));
  CHECK_THAT(jacobian(0, 2), Catch::Matchers::WithinRel(10.0, 1e-15));
}

TEST_CASE("MGH Rosenbrock: line-search Newton reaches (1, 1)", "[mgh][newton]") {
  // A full Newton step from (−1.2, 1) lands at (1, −3.84) where ‖F‖ = 48.4 >
  // ‖F(x0)‖, so the line search shortens the early steps; it still converges.
  const auto entry = mgh::make_problem_entry(mgh::rosenbrock{});
  const Eigen::VectorXd x = solve_and_check_residual(entry);
  const double inverse_norm = 1.0 / smallest_singular_value(dense_jacobian(entry, *entry.known_solution));
  CHECK_THAT(x, nkit_test::is_close_to(*entry.known_solution,
                                       distance_bound(inverse_norm, residual_norm(entry, x), x.norm())));
}

TEST_CASE("MGH helical valley: line-search Newton reaches (1, 0, 0)", "[mgh][newton]") {
  const auto entry = mgh::make_problem_entry(mgh::helical_valley{});
  const Eigen::VectorXd x = solve_and_check_residual(entry);
  const double inverse_norm = 1.0 / smallest_singular_value(dense_jacobian(entry, *entry.known_solution));
  CHECK_THAT(x, nkit_test::is_close_to(*entry.known_solution,
                                       distance_bound(inverse_norm, residual_norm(entry, x), x.norm())));
}

TEST_CASE("MGH Powell singular: line-search Newton approaches the singular root 0", "[mgh][newton]") {
  // F'(0) is singular, so Newton converges only linearly here (the error
  // roughly halves per step: the classical behaviour at a singular root,
  // e.g. Dennis & Schnabel 1996, from memory); ‖F‖ <= 1e-10 is still reached
  // within the default 50 steps because F is quadratic in the singular
  // directions (‖x‖ ~ 1e-5 gives ‖F‖ ~ 1e-10).
  const auto entry = mgh::make_problem_entry(mgh::powell_singular{});
  const Eigen::VectorXd x = solve_and_check_residual(entry);
  Eigen::VectorXd f(4);
  entry.residual(x, f);
  CHECK_THAT(x, nkit_test::is_close_to(*entry.known_solution, powell_singular_distance_bound(f)));
  CHECK(x.norm() > 0.0);  // exactly 0 would mean the singular root was hit by luck, not approached
}

TEST_CASE("MGH Broyden tridiagonal, n = 1000: line-search Newton converges", "[mgh][newton]") {
  solve_and_check_residual(mgh::make_problem_entry(mgh::broyden_tridiagonal{1000}));
}

TEST_CASE("MGH Broyden banded, n = 1000: line-search Newton converges", "[mgh][newton]") {
  solve_and_check_residual(mgh::make_problem_entry(mgh::broyden_banded{1000}));
}

TEST_CASE("MGH discrete boundary value, n = 1000: preconditioned line-search Newton converges", "[mgh][newton]") {
  // F'(x) = tridiag(−1, 2 + 1.5 h² (x_i + t_i + 1)², −1) is a 1D
  // second-difference matrix with condition number ~ 4/(π² h²) ≈ 4e5 at
  // n = 1000 (common practice), which unpreconditioned GMRES(30) cannot solve
  // to the forcing terms within its 300 iterations (measured: 50 Newton steps,
  // 15000 GMRES iterations, ‖F‖ stuck near 1.4e-6). Everything else is the
  // default solver; the preconditioner is the fixed second-difference part
  // tridiag(−1, 2, −1), so M⁻¹F'(x) = I + (small diagonal term) and GMRES
  // needs a few iterations per step.
  const auto entry = mgh::make_problem_entry(mgh::discrete_boundary_value{1000});
  Eigen::VectorXd x = entry.standard_start;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit_test::constant_tridiagonal_preconditioner> solver(
      settings_for_absolute_tolerance(), {}, nkit_test::constant_tridiagonal_preconditioner(1000, -1.0, 2.0, -1.0));
  const nkit::solve_report report = solver.solve(mgh::residual_only{&entry}, x);
  INFO(report.message() << " after " << report.newton_steps << " Newton steps, " << report.linear_iterations
                        << " GMRES iterations, final ‖F‖ " << report.final_residual_norm);
  CHECK(report.reason == nkit::stop_reason::absolute_tolerance_met);
  CHECK(residual_norm(entry, x) <= 1e-10);
  CHECK(report.linear_iterations <= 10 * report.newton_steps);
}

TEST_CASE("MGH discrete integral equation, n = 200: line-search Newton converges", "[mgh][newton]") {
  const auto integral = mgh::make_problem_entry(mgh::discrete_integral_equation{200});
  const Eigen::VectorXd x = solve_and_check_residual(integral);
  // Problems 28 and 29 are the differential and integral forms of one
  // boundary-value problem (MGH 1981), and their discrete versions are
  // equivalent: with T = tridiag(−1, 2, −1), (T⁻¹)_ij = t_i (1 − t_j)/h for
  // i <= j (the discrete Green's function, common practice), so
  // F_28(x) = T x + h² c(x)/2 = T F_29(x) exactly. Hence the root of 29 is the
  // root of 28, and ‖F_28(x)‖ <= ‖T‖₂ ‖F_29(x)‖ < 4 ‖F_29(x)‖ (plus rounding
  // of the evaluation, ~1e-15 here).
  const auto boundary_value = mgh::make_problem_entry(mgh::discrete_boundary_value{200});
  CHECK(residual_norm(boundary_value, x) <= 4.0 * residual_norm(integral, x) + 1e-14);
}

TEST_CASE("MGH trigonometric, n = 10: line-search Newton stalls where the Jacobian is singular", "[mgh][newton]") {
  // Documented failure, not a solver bug. From x0 = (1/n, ..., 1/n) the
  // backtracking steps shrink towards zero (accepted λ ~ 1e-5 ... 1e-15 at the
  // end) while x approaches a point where F'(x) is singular and F ≠ 0 (‖F‖ ≈
  // 5.57e-3). That point is not a stationary point of ‖F‖²: Fᵀ F' is far
  // from zero there, so the stall is the method's — Newton directions with a
  // merit-function line search can converge to a non-stationary point when
  // the Jacobian becomes singular (M.J.D. Powell, "A hybrid method for
  // nonlinear equations", in Rabinowitz (ed.), Numerical Methods for Nonlinear
  // Algebraic Equations, Gordon & Breach 1970; from memory). Powell's own
  // hybrid method, run below through Eigen, also ends without a zero, near the
  // local minimiser of ‖F‖² with Σf² ≈ 2.79506e-5 that MGH report for n = 10
  // (from memory). Measured with this solver (exact J·v, 200
  // steps allowed): n = 2 and 5 converge with the line search, n = 3, 4, 6,
  // 7, 8, 9, 11, 12, 15, 20, 50 stall like n = 10.
  const auto entry = mgh::make_problem_entry(mgh::trigonometric{10});
  Eigen::VectorXd x = entry.standard_start;
  const nkit::solve_report report = nkit::solve(mgh::residual_only{&entry}, x, settings_for_absolute_tolerance());
  INFO(report.message() << " after " << report.newton_steps << " Newton steps, final ‖F‖ "
                        << report.final_residual_norm);
  CHECK_FALSE(report.converged());
  CHECK((report.reason == nkit::stop_reason::no_acceptable_step ||
         report.reason == nkit::stop_reason::newton_step_budget_spent ||
         report.reason == nkit::stop_reason::residual_stagnated));
  REQUIRE(report.history.size() >= 2);
  CHECK(report.history.back().step_fraction < 1e-3);  // the line search has collapsed

  Eigen::VectorXd f(10);
  entry.residual(x, f);
  CHECK(f.norm() > 1e-3);  // far from any zero
  const Eigen::MatrixXd jacobian = dense_jacobian(entry, x);
  const Eigen::VectorXd singular_values = Eigen::JacobiSVD<Eigen::MatrixXd>(jacobian).singularValues();
  // Nearly singular Jacobian (measured σ_min/σ_max ≈ 7e-8) ...
  CHECK(singular_values.minCoeff() / singular_values.maxCoeff() < 1e-5);
  // ... but the gradient of ½‖F‖², F'ᵀF, is not small (measured relative size 0.11):
  CHECK((jacobian.transpose() * f).norm() / (singular_values.maxCoeff() * f.norm()) > 1e-2);
}

// ---- cross-check against a general-purpose reference solver ------------------------

namespace {

/// Eigen's HybridNonLinearSolver calls functor(x, f) and expects 0 (negative = stop).
struct eigen_residual {
  const mgh::problem_entry* entry;
  int operator()(const Eigen::VectorXd& x, Eigen::VectorXd& f) const {
    entry->residual(x, f);
    return 0;
  }
};

struct hybrid_result {
  Eigen::VectorXd x;
  Eigen::HybridNonLinearSolverSpace::Status status;
};

/// Powell's hybrid method with a forward-difference Jacobian (Eigen's hybrd1),
/// relative step tolerance 1e-12.
hybrid_result solve_with_eigen_hybrid(const mgh::problem_entry& entry) {
  eigen_residual functor{&entry};
  Eigen::HybridNonLinearSolver<eigen_residual> solver(functor);
  hybrid_result result{entry.standard_start, Eigen::HybridNonLinearSolverSpace::Running};
  result.status = solver.hybrd1(result.x, 1e-12);
  return result;
}

}  // namespace

TEST_CASE("MGH small problems: nkit and Eigen's hybrid method reach the same root", "[mgh][reference]") {
  // Reference: Eigen 3.4 HybridNonLinearSolver (unsupported module), a
  // port of Powell's hybrid method (trust-region dogleg with Broyden
  // updates), independent of nkit: its own finite-difference Jacobian, its
  // own globalisation. Both solutions satisfy ‖F‖ <= ρ, so near a root x*
  // with nonsingular F'(x*): ‖x_a − x_b‖ <= ‖F'(x*)⁻¹‖ (‖F(x_a)‖ + ‖F(x_b)‖)
  // to first order; we allow twice that plus rounding, with ‖F'(x*)⁻¹‖ =
  // 1/σ_min of the exact (AD) Jacobian at nkit's root. Powell singular has a
  // singular F'(x*) and uses its exact bound (powell_singular_distance_bound).
  const auto entries = mgh::more_garbow_hillstrom_problems(10);
  for (const auto& entry : entries) {
    if (entry.name == "Trigonometric") continue;  // no zero reached from x0 (next test)
    INFO(entry.name << ", n = " << entry.dimension);
    const Eigen::VectorXd nkit_root = solve_and_check_residual(entry);
    const hybrid_result hybrid = solve_with_eigen_hybrid(entry);
    const double hybrid_residual = residual_norm(entry, hybrid.x);
    INFO("hybrid status " << static_cast<int>(hybrid.status) << ", ‖F‖ " << hybrid_residual);
    CHECK(hybrid_residual <= 1e-10);
    double tolerance;
    if (entry.name == "Powell singular") {
      Eigen::VectorXd f_nkit(4), f_hybrid(4);
      entry.residual(nkit_root, f_nkit);
      entry.residual(hybrid.x, f_hybrid);
      tolerance = powell_singular_distance_bound(f_nkit) + powell_singular_distance_bound(f_hybrid);
    } else {
      CHECK(hybrid.status == Eigen::HybridNonLinearSolverSpace::RelativeErrorTooSmall);  // converged in x
      const double inverse_norm = 1.0 / smallest_singular_value(dense_jacobian(entry, nkit_root));
      tolerance = distance_bound(inverse_norm, residual_norm(entry, nkit_root) + hybrid_residual, nkit_root.norm());
    }
    INFO("tolerance " << tolerance);
    CHECK_THAT(nkit_root, nkit_test::is_close_to(hybrid.x, tolerance));
  }
}

TEST_CASE("MGH trigonometric, n = 10: Eigen's hybrid method also ends without a zero", "[mgh][reference]") {
  // The reference solver confirms that the standard start of problem 26 at
  // n = 10 does not lead to a zero: it stops ("not making progress") near the
  // local minimiser of ‖F‖² reported by Moré, Garbow & Hillstrom (1981) for
  // n = 10, Σf² ≈ 2.79506e-5 (from memory, not checked against the paper; hence the loose 2 %
  // tolerance, which also covers the hybrid method stopping short of the
  // exact minimiser: measured Σf² = 2.8052e-5).
  const auto entry = mgh::make_problem_entry(mgh::trigonometric{10});
  const hybrid_result hybrid = solve_with_eigen_hybrid(entry);
  const double sum_of_squares = std::pow(residual_norm(entry, hybrid.x), 2);
  CHECK(hybrid.status != Eigen::HybridNonLinearSolverSpace::RelativeErrorTooSmall);
  CHECK_THAT(sum_of_squares, Catch::Matchers::WithinRel(2.79506e-5, 0.02));
}
