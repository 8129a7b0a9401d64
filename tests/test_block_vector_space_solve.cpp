// The same Newton–Krylov solve through block_vector_space (2 and 3 blocks, the
// stand-in for a distributed space) and through eigen_vector_space gives the
// same iterates to rounding. Problem: Broyden tridiagonal, n = 1000, from its
// standard start (Moré, Garbow & Hillstrom, ACM TOMS 7 (1981) 17–41, problem 30).
//
// What is asserted, and why not bitwise: the block space forms every dot
// product and norm as a sum of per-block partial sums, so its reductions
// differ from the Eigen space's in summation order, hence in rounding. Each
// reduction of n terms carries a relative error of at most γ_n ≈ n u
// (Higham, "Accuracy and Stability of Numerical Algorithms", 2nd ed. 2002,
// §3.1; common practice); for n = 1000 that is ~1.1e-13.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/core/block_vector_space.hpp>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>

#include "problems/test_sets/more_garbow_hillstrom.hpp"
#include "support/matchers.hpp"
#include "support/unit_roundoff.hpp"

namespace mgh = nkit_problems::more_garbow_hillstrom;

namespace {

constexpr Eigen::Index problem_size = 1000;
using nkit_test::unit_roundoff;  // support/unit_roundoff.hpp

nkit::newton_settings test_settings() {
  nkit::newton_settings settings;
  settings.absolute_tolerance = 1e-10;
  settings.relative_tolerance = 0.0;
  return settings;
}

struct solve_result {
  Eigen::VectorXd state;
  nkit::solve_report report;
};

template <class Space, class Problem>
solve_result solve_in(Space space, Problem& problem) {
  solve_result result{mgh::broyden_tridiagonal{problem_size}.standard_start(), {}};
  nkit::newton_krylov_solver<Space> solver(test_settings(), std::move(space));
  result.report = solver.solve(problem, result.state);
  return result;
}

/// Same discrete path: converged, equal Newton-step count and equal GMRES
/// iteration count in every step. A discrete decision (a GMRES or line-search
/// test) could flip only if its quantity fell within rounding of its
/// threshold; none does here, so equality is asserted.
void check_same_path(const solve_result& a, const solve_result& b) {
  REQUIRE(a.report.reason == nkit::stop_reason::absolute_tolerance_met);
  REQUIRE(b.report.reason == nkit::stop_reason::absolute_tolerance_met);
  REQUIRE(a.report.history.size() == b.report.history.size());
  CHECK(a.report.residual_evaluations == b.report.residual_evaluations);
  for (std::size_t k = 0; k < a.report.history.size(); ++k) {
    INFO("Newton step " << k + 1);
    CHECK(a.report.history[k].linear_iterations == b.report.history[k].linear_iterations);
    CHECK(a.report.history[k].rejected_trials == b.report.history[k].rejected_trials);
  }
}

}  // namespace

TEST_CASE("Block and Eigen vector spaces give the same iterates with exact J·v", "[space][newton]") {
  // With exact (AD) J·v the only difference is the reductions' rounding.
  // Tolerance per step: |‖F_k‖_block − ‖F_k‖_eigen| <= 10 γ_n κ ‖F(x0)‖ with
  // κ = 6 bounding cond(F') on the path (σ_max <= 7 + 3 = 10, σ_min >= 1.6:
  // the Weyl bound of test_convergence_order.cpp), i.e. rounding relative to
  // the size of the quantities that were summed (~‖F(x0)‖ = 31.8), not to the
  // current, small residual. Measured: <= 6e-15 absolute. Final states: 10 γ_n
  // κ max|x| ≈ 7e-12; measured 1.1e-16.
  const int block_count = GENERATE(2, 3);
  INFO(block_count << " blocks");
  auto problem = nkit::with_automatic_differentiation(mgh::broyden_tridiagonal{problem_size});
  const solve_result reference = solve_in(nkit::eigen_vector_space<double>{}, problem);
  const solve_result blocked = solve_in(nkit::block_vector_space(block_count), problem);
  check_same_path(reference, blocked);

  const double gamma_n = static_cast<double>(problem_size) * unit_roundoff;
  const double condition_bound = 6.0;
  const double residual_tolerance = 10.0 * gamma_n * condition_bound * reference.report.initial_residual_norm;
  // Same R(x0); its norm differs at most by the reduction's rounding.
  CHECK_THAT(blocked.report.initial_residual_norm,
             Catch::Matchers::WithinRel(reference.report.initial_residual_norm, gamma_n));
  for (std::size_t k = 0; k < reference.report.history.size(); ++k) {
    INFO("Newton step " << k + 1);
    CHECK_THAT(blocked.report.history[k].residual_norm,
               Catch::Matchers::WithinAbs(reference.report.history[k].residual_norm, residual_tolerance));
  }
  CHECK_THAT(blocked.state, nkit_test::is_close_to(reference.state, 10.0 * gamma_n * condition_bound));
}

TEST_CASE("Block and Eigen vector spaces agree with finite-difference J·v", "[space][newton]") {
  // With the default finite-difference J·v the difference step δ depends on
  // ‖u‖ and ‖v‖, which the two spaces round differently; a one-ulp change in
  // δ changes the O(ε/δ) rounding error of each difference quotient, a
  // relative error of order √ε ≈ 1.5e-8 in J·v (Pernice & Walker 1998, from
  // memory; finite_difference_jacobian.hpp). Newton steps therefore differ by
  // up to ~√ε ‖J‖ ‖s_k‖, and ‖F_{k+1}‖ by as much; we allow 100 √ε ‖s_k‖
  // (‖J‖ <= 10 on the path). Measured relative differences: 1e-9 ... 1e-4,
  // all within that. The final states still agree closely, because Newton
  // corrects: both are within ‖F'⁻¹‖ ‖F‖ <= 0.62 × 1e-10 of the root;
  // measured 1.7e-15.
  const int block_count = GENERATE(2, 3);
  INFO(block_count << " blocks");
  mgh::broyden_tridiagonal problem{problem_size};
  const solve_result reference = solve_in(nkit::eigen_vector_space<double>{}, problem);
  const solve_result blocked = solve_in(nkit::block_vector_space(block_count), problem);
  check_same_path(reference, blocked);

  const double root_epsilon = std::sqrt(std::numeric_limits<double>::epsilon());
  for (std::size_t k = 0; k < reference.report.history.size(); ++k) {
    INFO("Newton step " << k + 1);
    const double tolerance = 100.0 * root_epsilon * reference.report.history[k].step_norm;
    CHECK_THAT(blocked.report.history[k].residual_norm,
               Catch::Matchers::WithinAbs(reference.report.history[k].residual_norm, tolerance));
  }
  const double inverse_norm_bound = 1.0 / 1.6;
  CHECK_THAT(blocked.state,
             nkit_test::is_close_to(reference.state, inverse_norm_bound * (reference.report.final_residual_norm +
                                                                           blocked.report.final_residual_norm)));
}
