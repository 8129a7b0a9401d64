// The QR-updated least-squares problem of Anderson acceleration against
// Eigen's dense solvers (a general-purpose reference library): after
// appends, removals of the oldest column and the condition safeguard, γ and
// the residual equal those of a fresh Householder QR of the same columns,
// and κ₁(R) lies within the norm-equivalence bounds of the SVD's κ₂.
#include <Eigen/Dense>
#include <catch2/catch.hpp>
#include <cmath>
#include <deque>
#include <nkit/fixed_point/anderson_least_squares.hpp>
#include <random>

#include "support/matchers.hpp"

namespace {

constexpr int length = 120;
using append_result = nkit::anderson_least_squares<>::append_result;

/// Random column pairs whose difference is the intended column (invented test data).
struct column_source {
  std::mt19937 engine{42};
  std::normal_distribution<double> normal{0.0, 1.0};
  Eigen::VectorXd next() {
    Eigen::VectorXd v(length);
    for (auto& x : v) x = normal(engine);
    return v;
  }
};

/// Reference: the same columns as a dense matrix, solved by Householder QR
/// with column pivoting (Eigen). Returns γ.
Eigen::VectorXd reference_coefficients(const std::deque<Eigen::VectorXd>& columns, const Eigen::VectorXd& f) {
  Eigen::MatrixXd matrix(length, static_cast<Eigen::Index>(columns.size()));
  for (std::size_t j = 0; j < columns.size(); ++j) matrix.col(static_cast<Eigen::Index>(j)) = columns[j];
  return matrix.colPivHouseholderQr().solve(f);
}

Eigen::MatrixXd as_matrix(const std::deque<Eigen::VectorXd>& columns) {
  Eigen::MatrixXd matrix(length, static_cast<Eigen::Index>(columns.size()));
  for (std::size_t j = 0; j < columns.size(); ++j) matrix.col(static_cast<Eigen::Index>(j)) = columns[j];
  return matrix;
}

}  // namespace

TEST_CASE("QR-updated least squares equals a fresh dense QR through appends and removals", "[anderson]") {
  const int depth = 6;
  nkit::anderson_least_squares<> problem;
  column_source source;
  const Eigen::VectorXd zero = Eigen::VectorXd::Zero(length);
  problem.allocate(depth, zero);
  std::deque<Eigen::VectorXd> columns;  // the reference copy, oldest first
  Eigen::VectorXd residual(length);
  for (int round = 0; round < 20; ++round) {
    if (problem.columns() == depth) {
      problem.remove_oldest();
      columns.pop_front();
    }
    const Eigen::VectorXd a = source.next(), b = source.next();
    REQUIRE(problem.append_difference(a, b) == append_result::appended);
    columns.push_back(a - b);
    const Eigen::VectorXd f = source.next();
    const double norm = problem.solve(f, residual);
    const Eigen::VectorXd expected = reference_coefficients(columns, f);
    Eigen::VectorXd gamma(problem.columns());
    for (int i = 0; i < problem.columns(); ++i) gamma(i) = problem.coefficient(i);
    // Random Gaussian columns are well conditioned (κ₂ ~ 10 here), so both
    // backward-stable solutions agree to a few hundred ε (round-off).
    INFO("round " << round);
    CHECK_THAT(gamma, nkit_test::is_close_to(expected, 1e-12, 1e-12));
    const Eigen::VectorXd expected_residual = f - as_matrix(columns) * expected;
    CHECK_THAT(residual, nkit_test::is_close_to(expected_residual, 1e-12));
    CHECK_THAT(norm, Catch::Matchers::WithinRel(expected_residual.norm(), 1e-12));
  }
}

TEST_CASE("the 1-norm condition number of R is within the norm-equivalence bounds of the SVD's", "[anderson]") {
  // Golub & Van Loan, Matrix Computations (4th ed., 2013), §2.3 (from memory):
  // ‖X‖₂/√k <= ‖X‖₁ <= √k ‖X‖₂ for k × k matrices, so κ₂/k <= κ₁ <= k κ₂;
  // κ₂(R) = κ₂(ΔF) because Q has orthonormal columns.
  const int depth = 5;
  nkit::anderson_least_squares<> problem;
  column_source source;
  problem.allocate(depth, Eigen::VectorXd::Zero(length));
  std::deque<Eigen::VectorXd> columns;
  for (int k = 1; k <= depth; ++k) {
    Eigen::VectorXd a = source.next();
    if (k == depth) a = columns.back() + 1e-6 * source.next();  // nearly dependent on its predecessor
    const Eigen::VectorXd b = Eigen::VectorXd::Zero(length);
    REQUIRE(problem.append_difference(a, b) == append_result::appended);
    columns.push_back(a);
    Eigen::JacobiSVD<Eigen::MatrixXd> svd(as_matrix(columns));
    const double kappa2 = svd.singularValues()(0) / svd.singularValues()(k - 1);
    INFO("columns " << k << ", kappa_2 " << kappa2);
    CHECK(problem.condition_number() >= kappa2 / k * (1 - 1e-8));
    CHECK(problem.condition_number() <= kappa2 * k * (1 + 1e-8));
  }
}

TEST_CASE("the condition safeguard removes the oldest columns until kappa_1(R) is below the limit", "[anderson]") {
  nkit::anderson_least_squares<> problem;
  column_source source;
  const Eigen::VectorXd zero = Eigen::VectorXd::Zero(length);
  problem.allocate(4, zero);
  const Eigen::VectorXd first = source.next();
  const Eigen::VectorXd second = source.next();
  REQUIRE(problem.append_difference(first, zero) == append_result::appended);
  REQUIRE(problem.append_difference(second, zero) == append_result::appended);
  // Nearly parallel to the first column: κ grows like 1/1e-9.
  const Eigen::VectorXd third = first + 1e-9 * source.next();
  REQUIRE(problem.append_difference(third, zero) == append_result::appended);
  REQUIRE(problem.condition_number() > 1e8);
  const int removed = problem.enforce_condition_limit(1e6);
  // Removing the first column already cures it: columns 2 and 3 are independent.
  CHECK(removed == 1);
  CHECK(problem.columns() == 2);
  CHECK(problem.condition_number() <= 1e6);
  // The kept factorisation solves the least-squares problem of columns 2 and 3
  // (against Eigen's dense QR of those two columns).
  const Eigen::VectorXd f = source.next();
  Eigen::VectorXd residual(length);
  problem.solve(f, residual);
  const Eigen::VectorXd expected = reference_coefficients({second, third}, f);
  CHECK_THAT(problem.coefficient(0), Catch::Matchers::WithinRel(expected(0), 1e-10));
  CHECK_THAT(problem.coefficient(1), Catch::Matchers::WithinRel(expected(1), 1e-10));
}

TEST_CASE("least squares rejects a zero, non-finite or exactly dependent column and keeps its factorisation",
          "[anderson]") {
  nkit::anderson_least_squares<> problem;
  column_source source;
  const Eigen::VectorXd zero = Eigen::VectorXd::Zero(length);
  problem.allocate(3, zero);
  const Eigen::VectorXd a = source.next();
  REQUIRE(problem.append_difference(a, zero) == append_result::appended);
  CHECK(problem.append_difference(a, a) == append_result::not_usable);  // zero column
  Eigen::VectorXd not_finite = source.next();
  not_finite(3) = std::nan("");
  CHECK(problem.append_difference(not_finite, zero) == append_result::not_usable);
  CHECK(problem.append_difference(Eigen::VectorXd(2.0 * a), zero) == append_result::dependent);
  problem.allocate(1, zero);
  REQUIRE(problem.append_difference(a, zero) == append_result::appended);
  CHECK(problem.append_difference(a, zero) == append_result::full);
  problem.allocate(3, zero);
  REQUIRE(problem.append_difference(a, zero) == append_result::appended);
  CHECK(problem.columns() == 1);
  Eigen::VectorXd residual(length);
  const Eigen::VectorXd f = source.next();
  problem.solve(f, residual);
  // One column: γ = aᵀf / aᵀa (normal equations of a single column, exact).
  CHECK_THAT(problem.coefficient(0), Catch::Matchers::WithinRel(a.dot(f) / a.squaredNorm(), 1e-13));
}
