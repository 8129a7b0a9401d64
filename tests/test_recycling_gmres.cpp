// Recycling GMRES (GCRO-DR, krylov/recycling_gmres.hpp) against outside
// references: Eigen's SparseLU, plain GMRES(m) (krylov/gmres.hpp, itself
// checked against SparseLU in test_gmres.cpp), and the deflation argument of
// M.L. Parks, E. de Sturler, G. Mackey, D.D. Johnson & S. Maiti, "Recycling
// Krylov subspaces for sequences of linear systems", SIAM J. Sci. Comput. 28
// (2006) 1651–1674, §2, and R.B. Morgan, "GMRES with deflated restarting",
// SIAM J. Sci. Comput. 24 (2002) 20–37.
#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <Eigen/SparseLU>
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <complex>
#include <limits>
#include <nkit/core/block_vector_space.hpp>
#include <nkit/core/preconditioner.hpp>
#include <nkit/jacobian/finite_difference_jacobian.hpp>
#include <nkit/krylov/gmres.hpp>
#include <nkit/krylov/harmonic_ritz_vectors.hpp>
#include <nkit/krylov/recycling_gmres.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <random>
#include <utility>
#include <vector>

#include "problems/model_problem/linear_system_sequences.hpp"
#include "support/matchers.hpp"
#include "support/random_sparse_matrix.hpp"

namespace {

using sparse = Eigen::SparseMatrix<double>;

using nkit_test::random_sparse;  // support/random_sparse_matrix.hpp (invented test data)

Eigen::VectorXd random_vector(int n, unsigned seed) {
  std::mt19937 engine(seed);
  std::normal_distribution<double> value(0.0, 1.0);
  Eigen::VectorXd v(n);
  for (int i = 0; i < n; ++i) v(i) = value(engine);
  return v;
}

/// Diagonal matrix with `outliers` small eigenvalues 0.01, 0.02, ... and the
/// rest spread evenly over [1, 10] (our own test matrix).
sparse diagonal_with_small_outliers(int n, int outliers) {
  sparse a(n, n);
  for (int i = 0; i < n; ++i) {
    a.insert(i, i) = i < outliers ? 0.01 * (i + 1) : 1.0 + 9.0 * (i - outliers) / (n - outliers - 1);
  }
  a.makeCompressed();
  return a;
}

/// Two nearby matrices of a sequence: diagonal_with_small_outliers(n, 4) and
/// the same plus 0.05 I (our own perturbation).
struct matrix_pair {
  sparse first;
  sparse second;
};
matrix_pair outliers_and_shifted(int n) {
  matrix_pair pair{diagonal_with_small_outliers(n, 4), {}};
  pair.second = pair.first;
  for (int i = 0; i < n; ++i) pair.second.coeffRef(i, i) += 0.05;
  return pair;
}

/// GMRES(20) with 5 recycled vectors, for the sequences of two matrices.
nkit::recycling_gmres_settings pair_settings() {
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 20;
  settings.recycle_dimension = 5;
  settings.maximum_iterations = 2000;
  return settings;
}

/// A preconditioner that declares it changes between applications.
struct declared_changing {
  static constexpr bool changes_between_applications = true;
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { z = r; }
};

}  // namespace

TEST_CASE("recycling GMRES solves a first system to the tolerance and matches Eigen's SparseLU", "[recycling_gmres]") {
  const int n = 300;
  const unsigned seed = GENERATE(1u, 2u);
  const bool jacobi = GENERATE(false, true);
  // A weak diagonal (2.5) so that GMRES(10) needs several restart cycles.
  const sparse a = random_sparse(n, 5, 2.5, seed);
  const Eigen::VectorXd b = Eigen::VectorXd::LinSpaced(n, 1.0, 2.0);
  Eigen::SparseLU<sparse> lu(a);
  REQUIRE(lu.info() == Eigen::Success);
  const Eigen::VectorXd reference = lu.solve(b);
  // 2-norm condition number: cond₂(A) = sqrt(λmax/λmin) of AᵀA (its
  // eigenvalues are the squared singular values of A). Rounding perturbs λmin
  // by about ε λmax, so this is accurate while cond₂(A)² ≪ 1/ε (common
  // practice); a symmetric eigen-solve compiles in about a fifth of the time
  // of an SVD (g++ 12, a unit with only that decomposition: 6.9 s against 23.9 s).
  const Eigen::MatrixXd dense = a;
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> normal(dense.transpose() * dense, Eigen::EigenvaluesOnly);
  REQUIRE(normal.info() == Eigen::Success);
  const double condition = std::sqrt(normal.eigenvalues()(n - 1) / normal.eigenvalues()(0));
  REQUIRE(condition < 1e6);  // keeps cond₂(A)² ≪ 1/ε

  nkit::recycling_gmres_settings settings;
  settings.restart_length = 10;
  settings.recycle_dimension = 3;
  settings.maximum_iterations = 2000;
  nkit::recycling_gmres_solver<> solver(settings);
  REQUIRE(solver.recycled_dimension() == 0);
  nkit::matrix_operator<sparse> op(a);
  const double tolerance = 1e-10;
  Eigen::VectorXd x = Eigen::VectorXd::Zero(n);
  nkit::linear_solve_result result;
  const Eigen::VectorXd inverse_diagonal = a.diagonal().cwiseInverse();
  auto scaling = nkit::make_preconditioner(
      [&](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = r.cwiseProduct(inverse_diagonal); });
  nkit::identity_preconditioner none;
  if (jacobi) {
    result = solver.solve(op, scaling, b, x, tolerance, nkit::initial_guess::zero);
  } else {
    result = solver.solve(op, none, b, x, tolerance, nkit::initial_guess::zero);
  }
  INFO("iterations " << result.iterations << ", restarts " << result.restarts << ", condition " << condition);
  REQUIRE(result.status == nkit::linear_solve_status::converged);
  CHECK(result.restarts > 0);  // the recycled cycles (steps 22–34) were exercised
  CHECK(solver.recycled_dimension() == 3);
  // Right preconditioning: the minimised residual is the true one, so the
  // true residual meets the tolerance up to rounding (factor 1.01, common practice).
  const double true_residual = (b - a * x).norm();
  CHECK(true_residual <= 1.01 * tolerance * b.norm() + 1e-14 * b.norm());
  CHECK_THAT(result.final_residual_norm, Catch::Matchers::WithinRel(true_residual, 1e-3) ||
                                             Catch::Matchers::WithinAbs(true_residual, 1e-13 * b.norm()));
  // Forward error: ‖x − x*‖/‖x*‖ <= cond₂(A) ‖b − A x‖/‖b‖ (N.J. Higham,
  // "Accuracy and Stability of Numerical Algorithms", 2nd ed. 2002, §7.1), plus
  // the LU solution's own error of order cond · machine epsilon.
  const double bound = condition * (true_residual / b.norm() + 1e-14) * reference.norm();
  CHECK((x - reference).norm() <= bound);
}

TEST_CASE("recycling GMRES with recycle_dimension 0 takes GMRES(m)'s iterations", "[recycling_gmres]") {
  // With k = 0 every cycle is a GMRES(m) cycle from the true residual: the same
  // Krylov spaces as krylov/gmres.hpp in exact arithmetic (Parks et al. 2006,
  // §2: GCRO-DR(m, 0) is GMRES(m)). The counts may still differ by one: the
  // last step's estimate sits near the target, so rounding can move the
  // crossing by a step, and this solver also checks the true residual there
  // (common practice for comparing two rounding paths; not from a source).
  const int n = 400;
  const unsigned seed = GENERATE(3u, 4u);
  const sparse a = random_sparse(n, 5, 2.5, seed);
  const Eigen::VectorXd b = random_vector(n, seed + 10);
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  nkit::gmres_settings plain_settings;
  plain_settings.restart_length = 10;
  plain_settings.maximum_iterations = 3000;
  nkit::gmres_solver<> plain(plain_settings);
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 10;
  settings.recycle_dimension = 0;
  settings.maximum_iterations = 3000;
  nkit::recycling_gmres_solver<> recycling(settings);
  Eigen::VectorXd x_plain(n), x_recycling(n);
  const auto r_plain = plain.solve(op, none, b, x_plain, 1e-9, nkit::initial_guess::zero);
  const auto r_recycling = recycling.solve(op, none, b, x_recycling, 1e-9, nkit::initial_guess::zero);
  INFO("GMRES(10) " << r_plain.iterations << ", recycling with k = 0 " << r_recycling.iterations);
  REQUIRE(r_plain.converged());
  REQUIRE(r_recycling.converged());
  CHECK(r_plain.restarts > 2);
  CHECK(std::abs(r_plain.iterations - r_recycling.iterations) <= 1);
  CHECK(recycling.recycled_dimension() == 0);
}

TEST_CASE("a recycled subspace deflates small outlying eigenvalues for a second right-hand side", "[recycling_gmres]") {
  // A = diag(0.01, 0.02, 0.03, 0.04, [1, 10]). Restarted GMRES(m) must rebuild
  // the four small eigenvalues in every cycle; recycling keeps harmonic Ritz
  // vectors for them (they are the harmonic Ritz values of smallest magnitude),
  // so the second solve runs on (I − C Cᵀ) A, whose relevant spectrum is
  // [1, 10] (Parks et al. 2006 §2; Morgan 2002 §1). Fewer iterations than
  // GMRES(m) and than the first solve follows.
  const int n = 1000;
  const int outliers = 4;
  const sparse a = diagonal_with_small_outliers(n, outliers);
  const Eigen::VectorXd first_b = Eigen::VectorXd::Ones(n);
  const Eigen::VectorXd second_b = random_vector(n, 5u);
  const double tolerance = 1e-8;
  const int m = 20;
  const int k = 5;
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;

  nkit::gmres_settings plain_settings;
  plain_settings.restart_length = m;
  plain_settings.maximum_iterations = 20000;
  nkit::gmres_solver<> plain(plain_settings);
  Eigen::VectorXd x(n);
  const auto plain_second = plain.solve(op, none, second_b, x, tolerance, nkit::initial_guess::zero);
  REQUIRE(plain_second.converged());

  const bool declare_same_operator = GENERATE(false, true);
  nkit::recycling_gmres_settings settings;
  settings.restart_length = m;
  settings.recycle_dimension = k;
  settings.maximum_iterations = 20000;
  nkit::recycling_gmres_solver<> recycling(settings);
  const auto first = recycling.solve(op, none, first_b, x, tolerance, nkit::initial_guess::zero);
  REQUIRE(first.converged());
  if (declare_same_operator) recycling.next_solve_uses_same_operator();
  const auto second = recycling.solve(op, none, second_b, x, tolerance, nkit::initial_guess::zero);
  REQUIRE(second.converged());
  CHECK((second_b - a * x).norm() <= 1.01 * tolerance * second_b.norm());
  INFO("GMRES(" << m << ") " << plain_second.iterations << "; recycling first " << first.iterations << ", second "
                << second.iterations << " (operator applications " << second.operator_applications << ")");
  CHECK(second.iterations < plain_second.iterations);
  CHECK(second.iterations < first.iterations);
  // Refreshing C = A Ũ for an undeclared operator costs k products (steps 3–5).
  if (!declare_same_operator) CHECK(second.operator_applications >= second.iterations + k);
  // A declared (and true) same operator needs no refresh; an undeclared one exactly one, up front.
  // The operator is the same in both cases, so no true-residual mismatch can arise.
  CHECK(first.recycled_space_refreshes == 0);  // nothing was held
  CHECK(second.recycled_space_refreshes == (declare_same_operator ? 0 : 1));
  CHECK(second.true_residual_mismatches == 0);
  // Bound from theory: on the deflated spectrum [1, 10] (κ = 10) one cycle of
  // m − k steps reduces the residual by at least 2ρ^(m−k), ρ = (√κ − 1)/(√κ + 1)
  // (the Chebyshev bound for GMRES on a symmetric positive definite matrix, Y.
  // Saad, "Iterative Methods for Sparse Linear Systems", 2nd ed. 2003, §6.11.4,
  // from memory). The one extra cycle is our own margin (not from theory) for
  // the recycled vectors being only approximate eigenvectors, so C Cᵀ deflates
  // the small eigenvalues incompletely.
  const double rho = (std::sqrt(10.0) - 1) / (std::sqrt(10.0) + 1);
  const double per_cycle = 2 * std::pow(rho, m - k);
  const int cycles = static_cast<int>(std::ceil(std::log(tolerance) / std::log(per_cycle)));
  CHECK(second.iterations <= (cycles + 1) * (m - k));
}

TEST_CASE("the harmonic Ritz step keeps recycling when the cycle matrix is ill-conditioned", "[recycling_gmres]") {
  // A = diag(1e-7, 2e-7, 3e-7, [1, 10]) (our own test matrix): Ḡ inherits a
  // condition number near 10⁸ from A. Forming Ḡᵀ Ḡ would square it to 10¹⁶,
  // beyond what a Cholesky factorisation in double precision can resolve; the
  // triangular factor R of Ḡ (Ḡᵀ Ḡ = Rᵀ R) keeps 10⁸, far inside the pivot
  // test |r_jj| > 10³ ε ‖Ḡ e_j‖ (≈ 1/4.5·10¹²). So no harmonic Ritz step is
  // skipped and all k vectors are kept.
  const int n = 300;
  sparse a = diagonal_with_small_outliers(n, 3);
  for (int i = 0; i < 3; ++i) a.coeffRef(i, i) = 1e-7 * (i + 1);
  const Eigen::VectorXd b = random_vector(n, 31u);
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 20;
  settings.recycle_dimension = 5;
  settings.maximum_iterations = 5000;
  nkit::recycling_gmres_solver<> solver(settings);
  Eigen::VectorXd x(n);
  const auto result = solver.solve(op, none, b, x, 1e-8, nkit::initial_guess::zero);
  INFO("iterations " << result.iterations << ", skipped Ritz steps " << result.recycle_updates_skipped);
  CHECK(result.converged());
  CHECK(result.recycle_updates_skipped == 0);
  CHECK(solver.recycled_dimension() == settings.recycle_dimension);
}

TEST_CASE("recycling GMRES without keeping the subspace starts every solve afresh", "[recycling_gmres]") {
  const int n = 500;
  const sparse a = diagonal_with_small_outliers(n, 3);
  const Eigen::VectorXd b = random_vector(n, 8u);
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 20;
  settings.recycle_dimension = 4;
  settings.maximum_iterations = 5000;
  settings.keep_recycled_subspace = false;
  nkit::recycling_gmres_solver<> solver(settings);
  Eigen::VectorXd x(n), y(n);
  const auto first = solver.solve(op, none, b, x, 1e-9, nkit::initial_guess::zero);
  CHECK(solver.recycled_dimension() == 0);
  const auto second = solver.solve(op, none, b, y, 1e-9, nkit::initial_guess::zero);
  REQUIRE(first.converged());
  // Nothing carried over: the same arithmetic twice (serial build, fixed reduction order).
  CHECK(first.iterations == second.iterations);
  CHECK(x == y);
  // The settings' own tolerance is used by the overload without one.
  settings.relative_tolerance = 1e-6;
  solver.configure(settings);
  const auto loose = solver.solve(op, none, b, y, nkit::initial_guess::zero);
  REQUIRE(loose.converged());
  CHECK((b - a * y).norm() <= 1.01e-6 * b.norm());
  CHECK(loose.iterations < first.iterations);
}

namespace {

/// Total linear work over a time-stepping or Newton sequence of the model problem.
struct sequence_totals {
  long iterations = 0;
  long operator_applications = 0;
  int systems = 0;
};

template <class Solve>
sequence_totals run_sequence(nkit_problems::model_problem_system_sequence sequence, int systems, double tolerance,
                             Solve&& solve) {
  sequence_totals totals;
  nkit::sparse_matrix matrix;
  Eigen::VectorXd right_hand_side;
  Eigen::VectorXd increment;
  for (int i = 0; i < systems; ++i) {
    sequence.assemble(matrix, right_hand_side);
    increment.setZero(right_hand_side.size());
    const nkit::linear_solve_result result = solve(matrix, right_hand_side, increment);
    REQUIRE(result.converged());
    // The true residual meets the tolerance on every system: with a changed
    // matrix a stale C = A U (no refresh, steps 3–5) would break this while
    // the recurrence still reported convergence.
    CHECK((right_hand_side - matrix * increment).norm() <= 1.01 * tolerance * right_hand_side.norm());
    totals.iterations += result.iterations;
    totals.operator_applications += result.operator_applications;
    ++totals.systems;
    sequence.advance(increment);
  }
  return totals;
}

}  // namespace

TEST_CASE("recycling cuts the linear work over the implicit time steps of the model problem", "[recycling_gmres]") {
  // Our own scenario: 20 linearly implicit Euler steps (Δt = 0.01) of the
  // model problem's heat equation (problems/model_problem/linear_system_sequences.hpp),
  // GMRES(30) against recycling with k = 10, to ‖b − A x‖ <= 1e-8 ‖b‖ from x = 0:
  // 32 × 32 cells without a preconditioner, 64 × 64 with ILU(0) rebuilt each step.
  // The matrices h²/Δt I + J(T_i) change slowly, so the harmonic Ritz vectors
  // of one step still fit the next (Parks et al. 2006 §3, slowly changing
  // matrices).
  //
  // Expected size of the effect (our own estimate, constant-coefficient
  // Laplacian, 32 × 32, no preconditioner): eigenvalues s + k·π²h²(i² + j²) for
  // small modes, s = h²/Δt = 0.098, largest about 8·k_max ≈ 11 (k = 1 + T² <= 1.4).
  // Deflating the 10 smallest moves the smallest from mode (1,1) (0.117) to
  // mode (3,3) (0.27), so κ falls from about 94 to 41 and the √κ iteration
  // bound for symmetric positive definite matrices (Saad 2003 §6.11.4, from
  // memory) predicts about √(41/94) ≈ 0.66 of the iterations. Measured when
  // written: 503/816 = 0.62 iterations and 709/837 = 0.85 operator applications
  // without preconditioner; 447/705 = 0.63 and 654/725 = 0.90 with ILU(0)
  // (before convergence was checked on the true residual, which adds one
  // product per solve). The thresholds are not from theory: the iteration
  // ratio below 0.8 is our own estimate (0.66) plus a measured margin, and
  // fewer operator applications in total (ratio < 1) is the measured 0.85 and
  // 0.90 plus margin. Those counts include the 10 products per step that
  // refresh C = A U (steps 3–5 of Algorithm 2.1); that this refresh eats about
  // half the iterations saved is our expectation from the counts, not timed.
  const int steps = 20;
  const double tolerance = 1e-8;
  const bool ilu = GENERATE(false, true);
  const int cells = ilu ? 64 : 32;
  const int m = 30;
  const int k = 10;
  const nkit_problems::model_problem_system_sequence sequence(
      cells, nkit_problems::model_problem_sequence_kind::time_steps, 0.01);

  nkit::ilu_zero_preconditioner factorization;
  nkit::gmres_settings plain_settings;
  plain_settings.restart_length = m;
  plain_settings.maximum_iterations = 5000;
  nkit::gmres_solver<> plain(plain_settings);
  const auto plain_totals = run_sequence(
      sequence, steps, tolerance, [&](const nkit::sparse_matrix& a, const Eigen::VectorXd& b, Eigen::VectorXd& x) {
        nkit::matrix_operator<nkit::sparse_matrix> op(a);
        if (!ilu) {
          nkit::identity_preconditioner none;
          return plain.solve(op, none, b, x, tolerance, nkit::initial_guess::zero);
        }
        REQUIRE(factorization.build(a) != nkit::setup_status::failed);
        return plain.solve(op, factorization, b, x, tolerance, nkit::initial_guess::zero);
      });

  nkit::recycling_gmres_settings settings;
  settings.restart_length = m;
  settings.recycle_dimension = k;
  settings.maximum_iterations = 5000;
  nkit::recycling_gmres_solver<> recycling(settings);
  const auto recycling_totals = run_sequence(
      sequence, steps, tolerance, [&](const nkit::sparse_matrix& a, const Eigen::VectorXd& b, Eigen::VectorXd& x) {
        nkit::matrix_operator<nkit::sparse_matrix> op(a);
        if (!ilu) {
          nkit::identity_preconditioner none;
          return recycling.solve(op, none, b, x, tolerance, nkit::initial_guess::zero);
        }
        REQUIRE(factorization.build(a) != nkit::setup_status::failed);
        return recycling.solve(op, factorization, b, x, tolerance, nkit::initial_guess::zero);
      });

  const double iteration_ratio =
      static_cast<double>(recycling_totals.iterations) / static_cast<double>(plain_totals.iterations);
  const double product_ratio = static_cast<double>(recycling_totals.operator_applications) /
                               static_cast<double>(plain_totals.operator_applications);
  INFO("time-step sequence " << cells << "^2, " << steps << " steps, " << (ilu ? "ILU(0)" : "no preconditioner")
                             << ": GMRES(" << m << ") " << plain_totals.iterations << " iterations, "
                             << plain_totals.operator_applications << " operator applications; recycling (k = " << k
                             << ") " << recycling_totals.iterations << ", " << recycling_totals.operator_applications);
  CHECK(iteration_ratio < 0.8);
  CHECK(product_ratio < 1.0);
}

TEST_CASE("cycles shorter than minimum_cycle_steps_for_update keep the recycled subspace as it is",
          "[recycling_gmres]") {
  // The first solve (no subspace held) builds one from its first cycle. With
  // minimum_cycle_steps_for_update above any cycle's length no later cycle may
  // replace it, so two identical solves that follow (same operator, same b,
  // x = 0) start from the same Ũ and C and must give bitwise the same x and
  // iteration count (a failed true-residual check would recompute C, but the
  // same arithmetic then happens in both solves: the code is deterministic).
  // With the default 0 every cycle replaces the subspace, so the same pair
  // differs (the control: it shows the check can see an update).
  const int n = 1000;
  const sparse a = diagonal_with_small_outliers(n, 4);
  const Eigen::VectorXd first_b = Eigen::VectorXd::Ones(n);
  const Eigen::VectorXd b = random_vector(n, 11u);
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  const double tolerance = 1e-8;
  const auto repeated_solves = [&](int minimum_steps) {
    nkit::recycling_gmres_settings settings = pair_settings();
    settings.minimum_cycle_steps_for_update = minimum_steps;
    nkit::recycling_gmres_solver<> solver(settings);
    Eigen::VectorXd x(n);
    REQUIRE(solver.solve(op, none, first_b, x, tolerance, nkit::initial_guess::zero).converged());
    std::vector<Eigen::VectorXd> solutions;
    std::vector<int> iterations;
    for (int repeat = 0; repeat < 2; ++repeat) {
      solver.next_solve_uses_same_operator();
      const auto result = solver.solve(op, none, b, x, tolerance, nkit::initial_guess::zero);
      REQUIRE(result.converged());
      CHECK((b - a * x).norm() <= 1.01 * tolerance * b.norm());  // the true-residual stop still holds
      CHECK(solver.recycled_dimension() == settings.recycle_dimension);
      solutions.push_back(x);
      iterations.push_back(result.iterations);
    }
    return std::make_pair(solutions, iterations);
  };
  const auto [kept_solutions, kept_iterations] = repeated_solves(1000);
  CHECK(kept_iterations[0] == kept_iterations[1]);
  CHECK((kept_solutions[0].array() == kept_solutions[1].array()).all());
  const auto [updated_solutions, updated_iterations] = repeated_solves(0);
  INFO("iterations kept " << kept_iterations[0] << ", " << kept_iterations[1] << "; updated " << updated_iterations[0]
                          << ", " << updated_iterations[1]);
  CHECK_FALSE((updated_solutions[0].array() == updated_solutions[1].array()).all());
}

TEST_CASE("recycling GMRES settings are validated with the field named", "[recycling_gmres][input]") {
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 0;
  settings.recycle_dimension = 0;
  CHECK_THROWS_WITH(nkit::recycling_gmres_solver<>(settings),
                    "nkit: recycling_gmres_settings.restart_length must be >= 1 (got 0)");
  settings.restart_length = 10;
  settings.recycle_dimension = 10;
  CHECK_THROWS_WITH(nkit::recycling_gmres_solver<>(settings),
                    "nkit: recycling_gmres_settings.recycle_dimension must be < restart_length (10) (got 10)");
  settings.recycle_dimension = -1;
  CHECK_THROWS_WITH(nkit::recycling_gmres_solver<>(settings),
                    "nkit: recycling_gmres_settings.recycle_dimension must be >= 0 (got -1)");
  settings.recycle_dimension = 3;
  settings.maximum_iterations = 0;
  CHECK_THROWS_WITH(nkit::recycling_gmres_solver<>(settings),
                    "nkit: recycling_gmres_settings.maximum_iterations must be >= 1 (got 0)");
  settings.maximum_iterations = 100;
  settings.relative_tolerance = -1e-3;
  CHECK_THROWS_WITH(nkit::recycling_gmres_solver<>(settings),
                    "nkit: recycling_gmres_settings.relative_tolerance must be finite and >= 0 (got -0.001)");
  settings.relative_tolerance = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(nkit::recycling_gmres_solver<>(settings),
                    "nkit: recycling_gmres_settings.relative_tolerance must be finite and >= 0 (got nan)");
  settings.relative_tolerance = 1e-8;
  settings.minimum_cycle_steps_for_update = -1;
  CHECK_THROWS_WITH(nkit::recycling_gmres_solver<>(settings),
                    "nkit: recycling_gmres_settings.minimum_cycle_steps_for_update must be >= 0 (got -1)");
  settings.minimum_cycle_steps_for_update = 0;
  settings.reorthogonalization = static_cast<nkit::reorthogonalization_policy>(3);
  CHECK_THROWS_WITH(nkit::recycling_gmres_solver<>(settings),
                    "nkit: recycling_gmres_settings.reorthogonalization must be one of never, when_needed, always "
                    "(got 3)");
  settings.reorthogonalization = nkit::reorthogonalization_policy::when_needed;
  nkit::recycling_gmres_solver<> solver(settings);
  const Eigen::MatrixXd identity = Eigen::MatrixXd::Identity(4, 4);
  nkit::matrix_operator<Eigen::MatrixXd> op(identity);
  nkit::identity_preconditioner none;
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(4);
  Eigen::VectorXd x(4);
  CHECK_THROWS_WITH(solver.solve(op, none, b, x, -1.0),
                    "nkit: recycling_gmres_solver::solve relative_tolerance must be >= 0 (got -1)");
  // The test sequence names the bad time step it was given.
  CHECK_THROWS_WITH(
      nkit_problems::model_problem_system_sequence(8, nkit_problems::model_problem_sequence_kind::time_steps, -0.5),
      "model_problem_system_sequence: time_step must be > 0 (got -0.5)");
  // A preconditioner that changes between applications needs a flexible
  // variant, which this solver does not have.
  declared_changing varying;
  CHECK_THROWS_AS(solver.solve(op, varying, b, x, 1e-8), std::invalid_argument);
}

TEST_CASE("a huge but valid restart_length allocates only what a cycle can use", "[recycling_gmres][input]") {
  // As gmres_solver: a cycle never holds more than recycle_dimension +
  // maximum_iterations vectors. Without that cap this test would ask for a
  // (2·10⁶ + 1) × 2·10⁶ dense matrix and fail with std::bad_alloc.
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 2000000;
  settings.recycle_dimension = 2;
  settings.maximum_iterations = 10;
  nkit::recycling_gmres_solver<> solver(settings);
  const Eigen::VectorXd diagonal = Eigen::VectorXd::LinSpaced(10, 1.0, 2.0);
  const Eigen::MatrixXd a = diagonal.asDiagonal();
  nkit::matrix_operator<Eigen::MatrixXd> op(a);
  nkit::identity_preconditioner none;
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(10);
  Eigen::VectorXd x(10);
  nkit::linear_solve_result result;
  REQUIRE_NOTHROW(result = solver.solve(op, none, b, x, 1e-12, nkit::initial_guess::zero));
  // Ten distinct eigenvalues: GMRES terminates in at most 10 steps (Saad & Schultz 1986).
  // Convergence is declared on the true residual ‖b − A x‖ <= 1e-12 ‖b‖ as the
  // solver computed it; Eigen's product sums in another order, a difference of
  // order ε ‖A‖ ‖x‖ ≈ 2·10⁻¹⁶ ‖b‖ here, inside the factor 1.01 (common practice).
  CHECK(result.converged());
  CHECK((b - a * x).norm() <= 1.01e-12 * b.norm());
}

TEST_CASE("a changed matrix needs the refresh of C = A U that recycling GMRES does by default", "[recycling_gmres]") {
  // Parks et al. 2006, Algorithm 2.1 steps 3–5: for a new matrix the kept U
  // must be re-multiplied, C = A_new U, and C re-orthonormalised; the
  // least-squares problem relies on A Ũ = C D. A false "same operator"
  // declaration keeps the old C, so the Givens estimate no longer describes
  // b − A x. The solver declares convergence only on the true residual: when
  // the estimate meets the target it forms b − A x, and on a miss recomputes C
  // and continues. So both runs must converge with the true residual within
  // the tolerance. Bound: ‖b − A x‖ <= tolerance · ‖b‖ as the solver computed
  // it; the factor 1.01 covers Eigen's product summing in another order than
  // the solver's (common practice for a change of summation order).
  const int n = 500;
  const matrix_pair matrices = outliers_and_shifted(n);
  const sparse& first_matrix = matrices.first;
  const sparse& second_matrix = matrices.second;
  const Eigen::VectorXd b = random_vector(n, 12u);
  const double tolerance = 1e-8;
  nkit::identity_preconditioner none;
  const nkit::recycling_gmres_settings settings = pair_settings();
  const bool declare_same_operator = GENERATE(false, true);
  nkit::recycling_gmres_solver<> solver(settings);
  Eigen::VectorXd x(n);
  nkit::matrix_operator<sparse> first_operator(first_matrix);
  REQUIRE(solver.solve(first_operator, none, b, x, tolerance, nkit::initial_guess::zero).converged());
  if (declare_same_operator) solver.next_solve_uses_same_operator();  // wrong on purpose
  nkit::matrix_operator<sparse> second_operator(second_matrix);
  const auto result = solver.solve(second_operator, none, b, x, tolerance, nkit::initial_guess::zero);
  const double true_relative_residual = (b - second_matrix * x).norm() / b.norm();
  INFO("true relative residual " << true_relative_residual << ", status " << nkit::name(result.status));
  REQUIRE(result.converged());
  CHECK(true_relative_residual <= 1.01 * tolerance);
  // Both runs pay the k products of C = A Ũ: up front (undeclared) or after the
  // estimate/true-residual mismatch (the false declaration), which this checks happened.
  CHECK(result.operator_applications >= result.iterations + settings.recycle_dimension);
  CHECK(result.final_residual_norm <= tolerance * b.norm());
  // The counters say which path was taken: one refresh either way; a mismatch only after the false declaration.
  if (declare_same_operator) CHECK(result.true_residual_mismatches >= 1);
  CHECK(result.recycled_space_refreshes == (declare_same_operator ? 0 : 1) + result.true_residual_mismatches);
}

TEST_CASE("a zero right-hand side for a new matrix leaves C marked for refresh", "[recycling_gmres]") {
  // A solve with b = 0 returns x = 0 before C = A Ũ is refreshed for its
  // matrix. A following solve declared to use "the same operator" must still
  // refresh C (Parks et al. 2006, Algorithm 2.1 steps 3–5). Reference: a
  // solver that saw the new matrix with a real b and no declaration does the
  // same arithmetic, so iterations and operator applications agree exactly
  // (without the stale mark, the declared run would rely on the
  // estimate/true-residual check and spend more products).
  const int n = 500;
  const matrix_pair matrices = outliers_and_shifted(n);
  const sparse& first_matrix = matrices.first;
  const sparse& second_matrix = matrices.second;
  const Eigen::VectorXd b = random_vector(n, 41u);
  const Eigen::VectorXd zero = Eigen::VectorXd::Zero(n);
  const double tolerance = 1e-8;
  nkit::identity_preconditioner none;
  const nkit::recycling_gmres_settings settings = pair_settings();
  nkit::matrix_operator<sparse> first_operator(first_matrix);
  nkit::matrix_operator<sparse> second_operator(second_matrix);
  nkit::recycling_gmres_solver<> with_zero(settings);
  nkit::recycling_gmres_solver<> reference(settings);
  Eigen::VectorXd x(n), x_reference(n);
  REQUIRE(with_zero.solve(first_operator, none, b, x, tolerance, nkit::initial_guess::zero).converged());
  REQUIRE(reference.solve(first_operator, none, b, x_reference, tolerance, nkit::initial_guess::zero).converged());
  REQUIRE(with_zero.solve(second_operator, none, zero, x, tolerance, nkit::initial_guess::zero).converged());
  with_zero.next_solve_uses_same_operator();  // true for the zero solve's matrix
  const auto result = with_zero.solve(second_operator, none, b, x, tolerance, nkit::initial_guess::zero);
  const auto expected = reference.solve(second_operator, none, b, x_reference, tolerance, nkit::initial_guess::zero);
  REQUIRE(result.converged());
  CHECK(result.iterations == expected.iterations);
  CHECK(result.operator_applications == expected.operator_applications);
  CHECK((b - second_matrix * x).norm() <= 1.01 * tolerance * b.norm());
}

TEST_CASE("recycling GMRES from a nonzero initial guess", "[recycling_gmres]") {
  // initial_guess::given: the first cycle starts from b − A x0 and the update
  // is added to x0 (Parks et al. 2006, Algorithm 2.1 step 1, r0 = b − A x0).
  // Checked: the reported initial residual is ‖b − A x0‖ (one product, to
  // rounding: relative 1e-12, common practice) and the true residual meets the
  // tolerance (factor 1.01, as above), on a first solve and on a recycled one.
  const int n = 400;
  const sparse a = diagonal_with_small_outliers(n, 4);
  const double tolerance = 1e-9;
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 20;
  settings.recycle_dimension = 5;
  settings.maximum_iterations = 3000;
  nkit::recycling_gmres_solver<> solver(settings);
  for (unsigned solve = 0; solve < 2; ++solve) {
    const Eigen::VectorXd b = random_vector(n, 51u + solve);
    Eigen::VectorXd x = random_vector(n, 61u + solve);  // invented initial guess
    const double initial = (b - a * x).norm();
    const auto result = solver.solve(op, none, b, x, tolerance, nkit::initial_guess::given);
    INFO("solve " << solve << ": iterations " << result.iterations);
    REQUIRE(result.converged());
    CHECK_THAT(result.initial_residual_norm, Catch::Matchers::WithinRel(initial, 1e-12));
    CHECK((b - a * x).norm() <= 1.01 * tolerance * b.norm());
  }
  CHECK(solver.recycled_dimension() == settings.recycle_dimension);
}

TEST_CASE("a first solve shorter than k steps keeps fewer vectors and the next solve still works",
          "[recycling_gmres]") {
  // A has three distinct eigenvalues, so GMRES reaches the exact solution in
  // at most three steps (its minimal polynomial has degree 3; Y. Saad & M.H.
  // Schultz, "GMRES", SIAM J. Sci. Stat. Comput. 7 (1986) 856–869, from
  // memory). With k = 5 the first solve has at most three columns to choose
  // harmonic Ritz vectors from, so fewer than k are kept; the second solve
  // must still meet the tolerance (factor 1.01, as above).
  const int n = 60;
  sparse a(n, n);
  for (int i = 0; i < n; ++i) a.insert(i, i) = 1.0 + i % 3;  // our own matrix: eigenvalues 1, 2, 3
  a.makeCompressed();
  const double tolerance = 1e-10;
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 10;
  settings.recycle_dimension = 5;
  settings.maximum_iterations = 100;
  nkit::recycling_gmres_solver<> solver(settings);
  const Eigen::VectorXd first_b = random_vector(n, 71u);
  const Eigen::VectorXd second_b = random_vector(n, 72u);
  Eigen::VectorXd x(n);
  const auto first = solver.solve(op, none, first_b, x, tolerance, nkit::initial_guess::zero);
  REQUIRE(first.converged());
  CHECK(first.iterations <= 3);
  CHECK(solver.recycled_dimension() >= 1);
  CHECK(solver.recycled_dimension() < settings.recycle_dimension);
  const auto second = solver.solve(op, none, second_b, x, tolerance, nkit::initial_guess::zero);
  REQUIRE(second.converged());
  CHECK((second_b - a * x).norm() <= 1.01 * tolerance * second_b.norm());
}

TEST_CASE("harmonic Ritz vectors match the generalized eigenproblem solved by Eigen", "[recycling_gmres][ritz]") {
  // The harmonic Ritz pairs of a cycle solve Ḡᵀ Ḡ z = θ Ḡᵀ (Ŵᵀ V̂) z (Parks et
  // al. 2006 §2.4; Morgan 2002 for the plain cycle, Ŵᵀ V̂ = [I; 0]). Here Ḡ
  // comes from 8 Arnoldi steps on a symmetric matrix (our own: diagonal
  // 1..40), whose harmonic Ritz values are real. Reference: the same pencil
  // reduced to a standard eigenproblem and solved by Eigen::EigenSolver. The
  // solver uses the same Eigen class on a different matrix (it factors
  // ḠᵀḠ = L Lᵀ and solves the inverse pencil), so this checks the reduction
  // and the selection, not Eigen's eigen-solver itself. The k = 3 of smallest |θ| must span the
  // returned coordinates: ‖z − W Wᵀ z‖ <= 1e-8 ‖z‖ (rounding amplified by the
  // pencil's conditioning; our own margin, common practice).
  const int size = 40;
  const int n = 8;
  const int k = 3;
  const Eigen::VectorXd diagonal = Eigen::VectorXd::LinSpaced(size, 1.0, 40.0);
  Eigen::MatrixXd basis = Eigen::MatrixXd::Zero(size, n + 1);
  Eigen::MatrixXd extended = Eigen::MatrixXd::Zero(n + 1, n);
  basis.col(0) = random_vector(size, 81u).normalized();
  for (int j = 0; j < n; ++j) {
    Eigen::VectorXd w = diagonal.cwiseProduct(basis.col(j));
    for (int pass = 0; pass < 2; ++pass) {
      for (int i = 0; i <= j; ++i) {
        const double h = basis.col(i).dot(w);
        extended(i, j) += h;
        w -= h * basis.col(i);
      }
    }
    extended(j + 1, j) = w.norm();
    basis.col(j + 1) = w / w.norm();
  }
  Eigen::MatrixXd cross = Eigen::MatrixXd::Zero(n + 1, n);
  cross.topRows(n).setIdentity();
  const Eigen::HouseholderQR<Eigen::MatrixXd> qr(extended);
  const Eigen::MatrixXd triangular = qr.matrixQR().topRows(n).triangularView<Eigen::Upper>();

  nkit::detail::harmonic_ritz_vectors ritz;
  ritz.allocate(n, k);
  const int found = ritz.compute(extended, triangular, cross, n, k);
  REQUIRE(found == k);
  const Eigen::MatrixXd kept = ritz.vectors().leftCols(k);

  // The pencil's right matrix Ḡᵀ [I; 0] = H_nᵀ (H_n the square Arnoldi
  // block) is invertible here (Ritz values of a positive definite matrix), so
  // θ and z are the eigenpairs of (Ḡᵀ Ŵᵀ V̂)⁻¹ ḠᵀḠ.
  const Eigen::MatrixXd left = extended.transpose() * extended;
  const Eigen::MatrixXd right = extended.transpose() * cross;
  const Eigen::FullPivLU<Eigen::MatrixXd> right_lu(right);
  REQUIRE(right_lu.isInvertible());
  Eigen::EigenSolver<Eigen::MatrixXd> reference(right_lu.solve(left));
  REQUIRE(reference.info() == Eigen::Success);
  const Eigen::VectorXcd theta = reference.eigenvalues();
  std::vector<int> order(n);
  for (int i = 0; i < n; ++i) order[static_cast<std::size_t>(i)] = i;
  std::sort(order.begin(), order.end(), [&](int p, int q) { return std::abs(theta(p)) < std::abs(theta(q)); });
  for (int c = 0; c < k; ++c) {
    const int index = order[static_cast<std::size_t>(c)];
    INFO("theta " << theta(index));
    CHECK(std::abs(theta(index).imag()) <= 1e-10 * std::abs(theta(index)));
    const Eigen::VectorXcd z = reference.eigenvectors().col(index);
    const Eigen::MatrixXcd w = kept.cast<std::complex<double>>();
    const Eigen::VectorXcd outside = z - w * (w.adjoint() * z);
    REQUIRE(z.norm() > 0.0);
    CHECK(outside.norm() <= 1e-8 * z.norm());
  }
}

TEST_CASE("recycling GMRES through the block space matches the Eigen space", "[recycling_gmres][space]") {
  // The solver touches vectors only through the space (core/vector_space.hpp);
  // the block space sums its reductions in another order, so the two runs
  // agree to rounding: the same iteration counts up to one, both true residuals
  // within the tolerance (common practice for a change of summation order).
  const int n = 500;
  const sparse a = diagonal_with_small_outliers(n, 3);
  const Eigen::VectorXd b = random_vector(n, 21u);
  const double tolerance = 1e-9;
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  nkit::recycling_gmres_settings settings;
  settings.restart_length = 15;
  settings.recycle_dimension = 4;
  settings.maximum_iterations = 3000;
  nkit::recycling_gmres_solver<> plain(settings);
  nkit::recycling_gmres_solver<nkit::block_vector_space> blocked(settings, nkit::block_vector_space(3));
  Eigen::VectorXd x_plain(n), x_blocked(n);
  for (int solve = 0; solve < 2; ++solve) {  // the second solve starts from the recycled subspace
    const auto r1 = plain.solve(op, none, b, x_plain, tolerance, nkit::initial_guess::zero);
    const auto r2 = blocked.solve(op, none, b, x_blocked, tolerance, nkit::initial_guess::zero);
    INFO("solve " << solve << ": Eigen space " << r1.iterations << ", block space " << r2.iterations);
    REQUIRE(r1.converged());
    REQUIRE(r2.converged());
    CHECK(std::abs(r1.iterations - r2.iterations) <= 1);
    CHECK((b - a * x_blocked).norm() <= 1.01 * tolerance * b.norm());
  }
  CHECK(blocked.recycled_dimension() == plain.recycled_dimension());
}

namespace {

// R(u) = A u + u³ (component-wise) − f with A the 1-D Laplacian (Dirichlet,
// unit spacing) on n points: λ_min(A) = 4 sin²(π/(2(n+1))) ≈ 6.1e-5 at n = 400,
// so R'(u) = A + 3 diag(u²) is ill-conditioned like a fine diffusion mesh.
struct cubic_diffusion {
  int n;
  Eigen::VectorXd f;
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    for (int i = 0; i < n; ++i) {
      const double left = i > 0 ? u[i - 1] : 0.0, right = i + 1 < n ? u[i + 1] : 0.0;
      r[i] = 2.0 * u[i] - left - right + u[i] * u[i] * u[i] - f[i];
    }
  }
};

// The finite-difference product (jacobian/finite_difference_jacobian.hpp) as a linear operator.
struct difference_operator {
  nkit::finite_difference_jacobian<>& products;
  const cubic_diffusion& residual;
  void apply(const Eigen::VectorXd& v, Eigen::VectorXd& out) {
    auto evaluate = [this](const Eigen::VectorXd& x, Eigen::VectorXd& r) { residual(x, r); };
    products.apply(evaluate, v, out);
  }
};

}  // namespace

TEST_CASE("recycling GMRES on finite-difference products converges where GMRES does", "[recycling_gmres]") {
  // Finite-difference J·v is not linear in v: its error is about
  // √ε (1 + ‖u‖) ‖v‖ · |R''| (common practice), relative to ‖J v‖ >= λ_min ‖v‖,
  // so here up to about 1.5e-8 · 15 · 6 / 6.1e-5 ≈ 2e-2 of ‖J v‖ for smooth v.
  // A tolerance of 1e-8 lies far below that: the true residual b − "J" x,
  // formed by one more difference, cannot confirm GMRES's estimate. Plain
  // GMRES accepts its estimate; recycling GMRES must do the same once C is of
  // this operator, not re-check after every further Arnoldi step. Before that
  // rule it ran one-step cycles until maximum_iterations (measured: 2,000
  // iterations, 1,942 mismatches, on both solves) while GMRES needed 69;
  // after it, 59 and 48 iterations.
  const int n = 400;
  cubic_diffusion problem{n, Eigen::VectorXd::Constant(n, 1e-3)};
  Eigen::VectorXd u(n), r(n);
  for (int i = 0; i < n; ++i) u[i] = std::sin(3.14159 * (i + 1) / (n + 1));  // ‖u‖ ≈ 14
  problem(u, r);
  nkit::finite_difference_jacobian<> products;
  products.allocate_like(u);
  products.linearize_at(u, r);
  difference_operator op{products, problem};
  nkit::identity_preconditioner none;
  const Eigen::VectorXd b = -r;
  const double tolerance = 1e-8;

  nkit::gmres_settings plain_settings;
  plain_settings.restart_length = 30;
  plain_settings.maximum_iterations = 2000;
  nkit::gmres_solver<> plain(plain_settings);
  Eigen::VectorXd x_plain = Eigen::VectorXd::Zero(n);
  const auto plain_result = plain.solve(op, none, b, x_plain, tolerance, nkit::initial_guess::zero);
  REQUIRE(plain_result.converged());

  nkit::recycling_gmres_settings settings;
  settings.restart_length = 30;
  settings.recycle_dimension = 10;
  settings.maximum_iterations = 2000;
  nkit::recycling_gmres_solver<> solver(settings);
  for (int solve = 0; solve < 2; ++solve) {  // the second starts with a kept subspace, refreshed for this operator
    Eigen::VectorXd x = Eigen::VectorXd::Zero(n);
    const auto result = solver.solve(op, none, b, x, tolerance, nkit::initial_guess::zero);
    INFO("solve " << solve << ": " << nkit::name(result.status) << " after " << result.iterations
                  << " iterations (GMRES " << plain_result.iterations << "), mismatches "
                  << result.true_residual_mismatches);
    REQUIRE(result.converged());
    // Recycling keeps GMRES's minimisation over a larger space: no more
    // iterations than GMRES needed, with one restart's worth of slack.
    CHECK(result.iterations <= plain_result.iterations + settings.restart_length);
    // The solution agrees with GMRES's to the level the products allow: both
    // meet ‖b − J x‖ <= 1e-8 ‖b‖ in their own estimate; with ‖J⁻¹‖ <= 1/λ_min
    // ≈ 1.6e4 and ‖b‖ <= ‖J‖ ‖x‖ <= 7 ‖x‖ the two differ by at most
    // 2 · 1e-8 · 1.6e4 · 7 ‖x‖ ≈ 2e-3 ‖x‖ plus the products' error; asked:
    // 1e-2 ‖x‖ (measured 1e-7).
    CHECK((x - x_plain).norm() <= 1e-2 * x_plain.norm());
  }
}
