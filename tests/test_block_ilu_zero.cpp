// Block ILU(0) (include/nkit/preconditioners/block_ilu_zero.hpp): the same
// preconditioner as point ILU(0) where both apply, exact on block-tridiagonal
// matrices, robust to diagonal blocks that need row interchanges, its
// transpose, its fallback and failure rules, and its use inside a
// pseudo-transient Newton–GMRES solve of the airfoil flow.
//
// The test matrices are our own invented data (random values from fixed
// seeds on the block patterns of jacobian/sparsity_pattern.hpp).
//
// Round-off bounds used below: a triangular solve, a sparse LU and their
// block forms with w terms per inner product are backward stable with a
// componentwise perturbation of order w ε |L̂||Û| (N.J. Higham, "Accuracy and
// Stability of Numerical Algorithms", 2nd ed., SIAM 2002, Theorems 8.5 and
// 9.3–9.4); with explicit inverses of the diagonal blocks the same order
// holds for block diagonally dominant matrices (J.W. Demmel, N.J. Higham &
// R.S. Schreiber, "Stability of block LU factorization", Numer. Linear
// Algebra Appl. 2 (1995) 173–190, from memory; the matrices of the
// equivalence, exactness and fallback checks are block diagonally dominant by
// construction). The forward error of a solve with M is then at most about
// w ε κ∞(M) g ‖z‖∞, g = ‖|L̂||Û|‖∞ / ‖M‖∞ (the growth; about 1 here). Each
// check allows a small multiple of that, stated.
#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <Eigen/SparseLU>
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <nkit/preconditioners/block_ilu_zero.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <numeric>
#include <random>
#include <stdexcept>
#include <vector>

#include "problems/flow/euler_airfoil_solve.hpp"
#include "support/matchers.hpp"

// Everything in one named namespace: unqualified names here never meet
// another test file's (the test sources are compiled in batches).
namespace block_ilu_zero_test {

constexpr double epsilon = std::numeric_limits<double>::epsilon();

Eigen::VectorXd random_vector(Eigen::Index n, unsigned seed) {
  std::mt19937 engine(seed);
  std::uniform_real_distribution<double> uniform(-1.0, 1.0);
  Eigen::VectorXd v(n);
  for (Eigen::Index i = 0; i < n; ++i) v(i) = uniform(engine);
  return v;
}

/// Every stored entry of `pattern` uniform in [-1, 1], then each diagonal
/// entry set to dominance·(entries in its row) + 1 + uniform [0, 1]: with
/// dominance >= 1 strictly diagonally dominant by rows and, the grid patterns
/// being symmetric, by columns.
nkit::sparse_matrix random_on_pattern(const nkit::sparsity_pattern& pattern, double dominance, unsigned seed) {
  nkit::sparse_matrix matrix = nkit::zero_matrix_with_pattern(pattern);
  std::mt19937 engine(seed);
  std::uniform_real_distribution<double> uniform(-1.0, 1.0);
  for (int i = 0; i < matrix.outerSize(); ++i) {
    const double entries = static_cast<double>(pattern.row_starts[i + 1] - pattern.row_starts[i]);
    for (nkit::sparse_matrix::InnerIterator entry(matrix, i); entry; ++entry) {
      entry.valueRef() = uniform(engine);
      if (entry.col() == i) entry.valueRef() = dominance * entries + 1.5 + 0.5 * entry.value();
    }
  }
  return matrix;
}

/// Block-tridiagonal matrix of a chain of `cells` cells with b unknowns each:
/// diagonal blocks 4 P_c + R_c (P_c a permutation matrix, R_c uniform in
/// [-0.5, 0.5]), off-diagonal blocks uniform in [-0.25, 0.25]. P_c is random
/// (so partial pivoting interchanges rows), or with `leading_zero` the
/// reversal permutation with entry (0, 0) of every diagonal block exactly 0.
/// Block diagonally dominant in the 2-norm: σ_min(4P + R) >= 4 − ‖R‖_F >=
/// 4 − b/2, each off-diagonal block has ‖·‖_F <= b/4, two per block column.
nkit::sparse_matrix chain_matrix(int cells, int b, unsigned seed, bool leading_zero) {
  nkit::sparse_matrix matrix = nkit::zero_matrix_with_pattern(nkit::three_point_line_pattern(cells, b));
  std::mt19937 engine(seed);
  std::uniform_real_distribution<double> uniform(-0.5, 0.5);
  std::vector<int> permutation(static_cast<std::size_t>(b));
  for (int cell = 0; cell < cells; ++cell) {
    std::iota(permutation.begin(), permutation.end(), 0);
    if (leading_zero) {
      std::reverse(permutation.begin(), permutation.end());
    } else {
      std::shuffle(permutation.begin(), permutation.end(), engine);
    }
    for (int i = cell * b; i < cell * b + b; ++i) {
      for (nkit::sparse_matrix::InnerIterator entry(matrix, i); entry; ++entry) {
        const int local_row = i - cell * b, local_column = static_cast<int>(entry.col()) - cell * b;
        if (local_column < 0 || local_column >= b) {
          entry.valueRef() = 0.5 * uniform(engine);
        } else {
          entry.valueRef() =
              uniform(engine) + (permutation[static_cast<std::size_t>(local_row)] == local_column ? 4 : 0);
          if (leading_zero && local_row == 0 && local_column == 0) entry.valueRef() = 0.0;
        }
      }
    }
  }
  return matrix;
}

double condition_infinity(const Eigen::MatrixXd& matrix) {
  return matrix.lpNorm<Eigen::Infinity>() * matrix.inverse().lpNorm<Eigen::Infinity>();
}

/// z = M⁻¹ r.
template <class Preconditioner>
Eigen::VectorXd applied(const Preconditioner& preconditioner, const Eigen::VectorXd& r) {
  Eigen::VectorXd z(r.size());
  preconditioner.apply(r, z);
  return z;
}

TEST_CASE("block ILU(0) equals point ILU(0) on a pattern of full blocks", "[preconditioner][block_ilu_zero]") {
  // Why (common practice; derived here): the ILU(0) factors of a pattern P are
  // the unique unit lower L and upper U supported on P with (LU)_ij = a_ij on
  // P (Saad 2003, §10.3.2: each entry of L and U is fixed by one of these
  // equations, row by row, as Algorithm 10.4 computes it). When P is a union
  // of full b × b blocks, factor each block ILU(0) pivot block D_I = L_I U_I
  // (its leading minors are the point pivots, nonzero here); then
  // L' = L_b·diag(L_I) and U' = diag(L_I)⁻¹·U_b are unit lower and upper,
  // supported on P (the blocks are full) and satisfy L'U' = L_b U_b = J on P:
  // they are the point factors, and both methods build the same M. Row
  // interchanges inside D_I change only how D_I⁻¹ is formed, not M.
  const int b = 4;
  const nkit::sparsity_pattern pattern = nkit::five_point_grid_pattern(6, 5, b);
  const nkit::sparse_matrix jacobian = random_on_pattern(pattern, 1.0, 7);
  nkit::ilu_zero_preconditioner point;
  nkit::block_ilu_zero_preconditioner blocked(b);
  REQUIRE(point.build(jacobian) == nkit::setup_status::ready);
  REQUIRE(point.replaced_pivots() == 0);
  REQUIRE(blocked.build(jacobian) == nkit::setup_status::ready);
  // Block pattern of the 5-point stencil on 6 × 5 cells: 30 diagonal blocks
  // and two per neighbouring pair, 5·(6 − 1) + 6·(5 − 1) = 49 pairs.
  CHECK(blocked.stored_blocks() == 30 + 2 * 49);
  // M = L U from the point factors, for κ∞(M) and the growth g.
  const Eigen::MatrixXd factors(point.factors());
  Eigen::MatrixXd lower = factors.triangularView<Eigen::StrictlyLower>();
  lower.diagonal().setOnes();
  const Eigen::MatrixXd upper = factors.triangularView<Eigen::Upper>();
  const Eigen::MatrixXd m = lower * upper;
  const double growth = (lower.cwiseAbs() * upper.cwiseAbs()).lpNorm<Eigen::Infinity>() / m.lpNorm<Eigen::Infinity>();
  const double condition = condition_infinity(m);
  const double width = pattern.maximum_row_nonzeros();  // w = 5b terms per inner product
  for (unsigned seed = 1; seed <= 3; ++seed) {
    const Eigen::VectorXd r = random_vector(jacobian.rows(), seed);
    const Eigen::VectorXd z_point = applied(point, r), z_block = applied(blocked, r);
    // Each within about w ε κ∞ g ‖z‖∞ of M⁻¹r (file comment), the difference
    // within twice that: 8 w ε κ∞ g ‖z‖∞ asked.
    const double tolerance = 8.0 * width * epsilon * condition * growth * z_point.lpNorm<Eigen::Infinity>();
    CAPTURE(seed, condition, growth, tolerance);
    CHECK_THAT(z_block, nkit_test::is_close_to(z_point, tolerance));
    // z really is M⁻¹r (the common M of both): M z = r to the same order.
    CHECK_THAT(Eigen::VectorXd(m * z_block), nkit_test::is_close_to(r, tolerance * m.lpNorm<Eigen::Infinity>()));
  }
}

TEST_CASE("block ILU(0) is exact on block-tridiagonal matrices", "[preconditioner][block_ilu_zero]") {
  // Saad 2003, §10.3.2 (the LU of a block-tridiagonal matrix has no fill
  // outside the tridiagonal blocks, so the zero-fill factors are the exact
  // block LU): M = J, and apply(J x) = x to round-off. The diagonal blocks
  // 4P + R with random P need row interchanges in their LU.
  const int b = GENERATE(3, 4);
  const int cells = 30;
  const nkit::sparse_matrix jacobian = chain_matrix(cells, b, 11 + static_cast<unsigned>(b), false);
  nkit::block_ilu_zero_preconditioner blocked(b);
  REQUIRE(blocked.build(jacobian) == nkit::setup_status::ready);
  CHECK(blocked.singular_blocks() == 0);
  const Eigen::MatrixXd dense(jacobian);
  const double condition = condition_infinity(dense);
  const double width = 3.0 * b;  // terms per inner product of a block-tridiagonal row
  Eigen::SparseMatrix<double> column_major = jacobian;
  Eigen::SparseLU<Eigen::SparseMatrix<double>> reference(column_major);
  REQUIRE(reference.info() == Eigen::Success);
  for (unsigned seed = 1; seed <= 2; ++seed) {
    const Eigen::VectorXd x = random_vector(jacobian.rows(), 100 + seed);
    const Eigen::VectorXd r = jacobian * x;
    const Eigen::VectorXd z = applied(blocked, r);
    // Bound of the file comment with g = 1 (block diagonally dominant: no
    // growth to speak of) and a factor 16 for the constant.
    const double tolerance = 16.0 * width * epsilon * condition * x.lpNorm<Eigen::Infinity>();
    CAPTURE(b, seed, condition, tolerance);
    CHECK_THAT(z, nkit_test::is_close_to(x, tolerance));
    // Eigen's sparse LU (a reference library) solves the same system: both within the bound, so within twice it.
    const Eigen::VectorXd z_reference = reference.solve(r);
    CHECK_THAT(z, nkit_test::is_close_to(z_reference, 2.0 * tolerance));
  }
}

TEST_CASE("block ILU(0) factors diagonal blocks with a zero leading entry; point ILU(0) must replace that pivot",
          "[preconditioner][block_ilu_zero]") {
  // Diagonal blocks 4P + R with P the reversal permutation and d_00 = 0
  // exactly: nonsingular (σ_min >= 4 − b/2), but the first pivot of point
  // elimination is d_00 = 0 (no update reaches the first row), which
  // ilu_zero.hpp replaces (its documented fallback). Dense LU with partial
  // pivoting of the block has no such problem (Higham 2002, §9.1: partial
  // pivoting succeeds for every nonsingular matrix), and the chain is exact
  // for block ILU(0) as in the previous test.
  const int b = GENERATE(2, 4);
  const nkit::sparse_matrix jacobian = chain_matrix(20, b, 23 + static_cast<unsigned>(b), true);
  nkit::ilu_zero_preconditioner point;
  CHECK(point.build(jacobian) == nkit::setup_status::ready_with_fallback);
  CHECK(point.replaced_pivots() > 0);
  nkit::block_ilu_zero_preconditioner blocked(b);
  REQUIRE(blocked.build(jacobian) == nkit::setup_status::ready);
  CHECK(blocked.singular_blocks() == 0);
  const double condition = condition_infinity(Eigen::MatrixXd(jacobian));
  const Eigen::VectorXd x = random_vector(jacobian.rows(), 5);
  const Eigen::VectorXd z = applied(blocked, Eigen::VectorXd(jacobian * x));
  const double tolerance = 16.0 * 3.0 * b * epsilon * condition * x.lpNorm<Eigen::Infinity>();  // as above
  CAPTURE(b, condition, tolerance);
  CHECK_THAT(z, nkit_test::is_close_to(x, tolerance));
}

TEST_CASE("block ILU(0) transposed: <M^-1 v, w> = <v, M^-T w>", "[preconditioner][block_ilu_zero][transpose]") {
  // The adjoint identity (core/preconditioner.hpp), with the bound of
  // tests/test_transposed_preconditioners.cpp: each application is a chain
  // of backward-stable triangular solves and products (Higham 2002,
  // Theorem 8.5, §3.5), so each side is within n ε κ∞(M) ‖M⁻¹‖ ‖v‖ ‖w‖;
  // allowed 8 n ε κ∞(M) ‖M⁻¹‖_F ‖v‖ ‖w‖ (‖·‖_F >= ‖·‖₂: conservative), M⁻¹
  // built column by column from apply(). A random block matrix on the 5-point
  // pattern, b = 3, diagonal 0.5·(entries per row) + 1 to 2: not diagonally
  // dominant in general, and not symmetric, so M⁻¹ ≠ M⁻ᵀ.
  const int b = 3;
  const nkit::sparse_matrix jacobian = random_on_pattern(nkit::five_point_grid_pattern(5, 4, b), 0.5, 31);
  nkit::block_ilu_zero_preconditioner blocked(b);
  REQUIRE(blocked.build(jacobian) == nkit::setup_status::ready);
  const Eigen::Index n = jacobian.rows();
  Eigen::MatrixXd inverse(n, n);
  for (Eigen::Index i = 0; i < n; ++i) inverse.col(i) = applied(blocked, Eigen::VectorXd::Unit(n, i));
  const double condition = condition_infinity(inverse);
  for (unsigned seed = 40; seed < 43; ++seed) {
    const Eigen::VectorXd v = random_vector(n, seed), w = random_vector(n, seed + 100);
    Eigen::VectorXd forward(n), transposed(n);
    blocked.apply(v, forward);
    blocked.apply_transpose(w, transposed);
    const double bound = 8.0 * static_cast<double>(n) * epsilon * condition * inverse.norm() * v.norm() * w.norm();
    CAPTURE(seed, bound);
    CHECK(std::abs(w.dot(forward) - v.dot(transposed)) <= bound);
    // The transpose is not the forward application: M⁻¹ in its place misses by far more.
    CHECK(std::abs(w.dot(forward) - v.dot(inverse * w)) > 100.0 * bound);
  }
}

TEST_CASE("block ILU(0): singular diagonal block falls back, non-finite values fail, bad block sizes throw",
          "[preconditioner][block_ilu_zero][failure]") {
  SECTION("a zero diagonal block becomes a point-Jacobi block") {
    // Chain of 6 cells, b = 3, with diagonal block (0, 0) zero and block (1, 0)
    // removed: the fallback (block_ilu_zero.hpp, file comment) replaces D_0 by
    // diag(safe pivot of 0 against row i's largest |J_ij|) = diag(max_j |J_ij|),
    // and the rest is the exact block LU of a block-tridiagonal matrix with no
    // fill (previous tests). So M = J with D_0 replaced: expected M⁻¹r from
    // Eigen's dense LU of that matrix, within the bound of the exact case.
    const int b = 3;
    Eigen::MatrixXd dense(chain_matrix(6, b, 47, false));
    dense.block(0, 0, b, b).setZero();
    dense.block(b, 0, b, b).setZero();
    const nkit::sparse_matrix jacobian = dense.sparseView();
    nkit::block_ilu_zero_preconditioner blocked(b);
    CHECK(blocked.build(jacobian) == nkit::setup_status::ready_with_fallback);
    CHECK(blocked.singular_blocks() == 1);
    Eigen::MatrixXd m = dense;
    for (int i = 0; i < b; ++i) m(i, i) = dense.row(i).cwiseAbs().maxCoeff();
    const Eigen::VectorXd r = random_vector(jacobian.rows(), 9);
    const Eigen::VectorXd z = applied(blocked, r);
    CHECK(z.allFinite());
    const Eigen::VectorXd expected = m.partialPivLu().solve(r);
    const double tolerance = 16.0 * 3.0 * b * epsilon * condition_infinity(m) * expected.lpNorm<Eigen::Infinity>();
    CHECK_THAT(z, nkit_test::is_close_to(expected, tolerance));
    // The same matrix with its diagonal block restored needs no fallback.
    CHECK(blocked.build(nkit::sparse_matrix(chain_matrix(6, b, 47, false))) == nkit::setup_status::ready);
    CHECK(blocked.singular_blocks() == 0);
  }
  SECTION("a NaN entry fails the setup") {
    nkit::sparse_matrix jacobian = chain_matrix(4, 2, 3, false);
    jacobian.valuePtr()[5] = std::numeric_limits<double>::quiet_NaN();
    nkit::block_ilu_zero_preconditioner blocked(2);
    CHECK(blocked.build(jacobian) == nkit::setup_status::failed);
  }
  SECTION("block sizes outside [1, 64] or not dividing the unknowns are refused, naming block_size") {
    using Catch::Matchers::Contains;
    for (const int bad : {0, -3, 65}) {
      CHECK_THROWS_AS(nkit::block_ilu_zero_preconditioner(bad), std::invalid_argument);
      CHECK_THROWS_WITH(nkit::block_ilu_zero_preconditioner(bad), Contains("block_size"));
    }
    CHECK_NOTHROW(nkit::block_ilu_zero_preconditioner(64));
    nkit::block_ilu_zero_preconditioner three(3);
    const nkit::sparse_matrix eight = chain_matrix(4, 2, 3, false);  // 8 unknowns
    CHECK_THROWS_AS(three.build(eight), std::invalid_argument);
    CHECK_THROWS_WITH(three.build(eight), Contains("block_size") && Contains("8"));
  }
}

TEST_CASE("block ILU(0): block pattern from stored entries, symbolic work kept while it is unchanged",
          "[preconditioner][block_ilu_zero][reuse]") {
  // Definition of the block pattern (file comment): blocks holding a stored
  // entry, plus every diagonal block. 8 unknowns, b = 2: the diagonal of the
  // first three blocks, block (3, 3) empty, one entry in block (0, 2).
  std::vector<Eigen::Triplet<double, int>> entries{{0, 0, 2.0}, {1, 1, 2.0}, {2, 2, 2.0}, {3, 3, 2.0},
                                                   {4, 4, 2.0}, {5, 5, 2.0}, {1, 4, 1.0}};
  nkit::sparse_matrix sparse(8, 8);
  sparse.setFromTriplets(entries.begin(), entries.end());
  nkit::block_ilu_zero_preconditioner two(2);
  // Block (3, 3) holds no entry: its fallback diagonal is 1 (empty rows, jacobi.hpp).
  CHECK(two.build(sparse) == nkit::setup_status::ready_with_fallback);
  CHECK(two.stored_blocks() == 5);
  // Refreshing the values of a pattern keeps the symbolic phase; a new pattern redoes it.
  nkit::sparse_matrix scaled = random_on_pattern(nkit::five_point_grid_pattern(4, 3, 4), 1.0, 5);
  nkit::block_ilu_zero_preconditioner four(4);
  for (int refresh = 0; refresh < 3; ++refresh) {
    scaled *= 1.5;
    CHECK(four.build(scaled) == nkit::setup_status::ready);
  }
  CHECK(four.symbolic_analyses() == 1);
  CHECK(four.build(random_on_pattern(nkit::five_point_grid_pattern(3, 4, 4), 1.0, 5)) == nkit::setup_status::ready);
  CHECK(four.symbolic_analyses() == 2);
  CHECK(four.memory_bytes() > 0);
}

TEST_CASE("block ILU(0) preconditions pseudo-transient Newton-GMRES on the airfoil flow",
          "[preconditioner][block_ilu_zero][euler]") {
  // The airfoil flow of tests/test_euler_airfoil.cpp on its smallest grid
  // (NACA 0012, 64 × 32 cells, M = 0.5, α = 2°, second order, 4 unknowns per
  // cell), converged with block ILU(0), b = 4, of the first-order operator's
  // Jacobian and, for reference, with point ILU(0) of the same matrix
  // (euler_airfoil_solve.hpp). The preconditioner changes only the linear
  // solves: the same discrete solution, so the same lift up to the two
  // solves' unconverged parts (‖R‖ <= 1e-10 ‖R(U0)‖; the reasoning of the lift
  // checks in tests/test_euler_airfoil.cpp): 1e-8.
  nkit_problems::airfoil_grid_settings grid;
  grid.cells_around = 64;
  grid.cells_outward = 32;
  nkit_problems::euler_airfoil_settings settings;
  settings.mach_number = 0.5;
  settings.angle_of_attack_degrees = 2.0;
  const nkit_problems::euler_airfoil_flow flow(
      nkit_problems::airfoil_o_grid(nkit_problems::naca_four_digit_airfoil("0012"), grid), settings);
  const nkit_problems::euler_airfoil_with_first_order_jacobian problem(flow);
  Eigen::VectorXd u_block = flow.initial_guess(), u_point = flow.initial_guess();
  const nkit::solve_report block_report = nkit_problems::solve_euler_airfoil(
      problem, u_block, nkit_problems::euler_airfoil_newton_settings(), nkit::block_ilu_zero_preconditioner(4));
  const nkit::solve_report point_report =
      nkit_problems::solve_euler_airfoil<nkit::ilu_zero_preconditioner>(problem, u_point);
  CAPTURE(block_report.newton_steps, block_report.linear_iterations, block_report.preconditioner_fallbacks,
          point_report.newton_steps, point_report.linear_iterations, point_report.preconditioner_fallbacks);
  REQUIRE(block_report.converged());
  REQUIRE(point_report.converged());
  CHECK(block_report.preconditioner_setups > 0);
  CHECK_THAT(flow.forces(u_block).lift_coefficient,
             Catch::Matchers::WithinAbs(flow.forces(u_point).lift_coefficient, 1e-8));
}

}  // namespace block_ilu_zero_test
