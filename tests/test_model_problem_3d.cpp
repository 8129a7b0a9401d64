// The heat-conduction model problem on the unit cube (7-point stencil,
// problems/model_problem/model_problem.hpp): its analytic Jacobian and
// frozen-coefficient matrix against the residual itself, and the discrete
// solution against the separation-of-variables series of the linear limit.
#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <stdexcept>
#include <vector>

#include "problems/model_problem/model_problem.hpp"

using nkit_problems::heat_conduction_model_problem;

namespace {

/// A smooth, non-trivial temperature field on an n³ grid (invented test data:
/// any state with |T| <= 1 serves).
Eigen::VectorXd smooth_state_3d(int n) {
  Eigen::VectorXd t(static_cast<Eigen::Index>(n) * n * n);
  for (int k = 0; k < n; ++k) {
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const double x = (i + 0.5) / n, y = (j + 0.5) / n, z = (k + 0.5) / n;
        t(i + n * j + n * n * k) = 0.6 * std::sin(3.0 * x) * std::sin(3.0 * y) * std::sin(3.0 * z) +
                                   0.1 * std::cos(7.0 * x + 3.0 * y - 2.0 * z);
      }
    }
  }
  return t;
}

/// Mean over the unit cube of u with −Δu = 1, u = 0 on the boundary, by
/// separation of variables (common practice: expand 1 = Σ_odd 4/(iπ) sin(iπx)
/// in each direction, divide by π²(i² + j² + k²), average each sine to
/// 2/(iπ)):  mean u = Σ_{i,j,k odd} 512 / (π⁸ i² j² k² (i² + j² + k²)).
/// Summed to 401 in each index, the tail is below 1e-9 absolute: at most
/// 3 · (π²/8)² · 512/π⁸ · Σ_{i>401, odd} 1/i⁴ ≈ 6e-10 (each term is bounded by
/// 512/(π⁸ i⁴ j² k²) when i is the largest index, and Σ_odd 1/j² = π²/8), far
/// below the discretisation errors compared with it.
double cube_mean_of_poisson_solution() {
  const double pi = std::acos(-1.0);
  double sum = 0.0;
  for (int i = 1; i <= 401; i += 2) {
    for (int j = 1; j <= 401; j += 2) {
      for (int k = 1; k <= 401; k += 2) {
        const double ii = i * i, jj = j * j, kk = k * k;
        sum += 1.0 / (ii * jj * kk * (ii + jj + kk));
      }
    }
  }
  return 512.0 / std::pow(pi, 8) * sum;
}

}  // namespace

TEST_CASE("the 3-D residual of a 2 x 2 x 2 grid matches the definition worked by hand", "[model_problem][3d]") {
  // Independent of the code's loops: the definition in model_problem.hpp,
  // k(T) = 1 + T², interior flux ½(k_P + k_Q)(T_P − T_Q), wall flux
  // (k_P + 1) T_P, R_P = Σ fluxes − q h², with q = 10, h = ½. On 2³ cells every
  // cell has 3 interior faces (to the cells differing in one index) and 3 walls.
  // T_p = 0.1 (p + 1) for p = i + 2j + 4k (our own values).
  heat_conduction_model_problem problem(2, 10.0, 3);
  Eigen::VectorXd t(8), r(8);
  for (int p = 0; p < 8; ++p) t(p) = 0.1 * (p + 1);
  problem(t, r);
  const auto k = [](double temperature) { return 1.0 + temperature * temperature; };
  for (int p = 0; p < 8; ++p) {
    double expected = -10.0 * 0.25;
    for (const int bit : {1, 2, 4}) {
      const int q = p ^ bit;  // the neighbour across the interior face in that direction
      expected += 0.5 * (k(t(p)) + k(t(q))) * (t(p) - t(q));
      expected += (k(t(p)) + 1.0) * t(p);  // the wall on the other side
    }
    INFO("cell " << p);
    CHECK(std::abs(r(p) - expected) <= 1e-14);
  }
}

TEST_CASE("the 3-D model problem's analytic Jacobian is the derivative of its residual", "[model_problem][3d]") {
  // Reference: forward-mode automatic differentiation of the same residual
  // (exact to rounding), column by column; so the assembled Jacobian must
  // agree to rounding (1e-12 of the largest entry, common practice).
  const int n = 5;
  heat_conduction_model_problem problem(n, 10.0, 3);
  REQUIRE(problem.unknowns() == n * n * n);
  const Eigen::VectorXd t = smooth_state_3d(n);
  Eigen::SparseMatrix<double> jacobian;
  problem.assemble_jacobian(t, jacobian);
  REQUIRE(jacobian.rows() == problem.unknowns());
  // 7-point stencil: n³ diagonal entries plus two per interior face in each of three directions.
  CHECK(jacobian.nonZeros() == n * n * n + 3 * 2 * (n - 1) * n * n);
  nkit::residual_with_automatic_differentiation<heat_conduction_model_problem> differentiated{problem};
  const Eigen::MatrixXd assembled(jacobian);
  const double scale = assembled.cwiseAbs().maxCoeff();
  Eigen::VectorXd unit = Eigen::VectorXd::Zero(t.size()), column(t.size());
  double worst = 0.0;
  for (Eigen::Index j = 0; j < t.size(); ++j) {
    unit(j) = 1.0;
    differentiated.jacobian_product(t, unit, column);
    unit(j) = 0.0;
    worst = std::max(worst, (column - assembled.col(j)).cwiseAbs().maxCoeff());
  }
  CHECK(worst <= 1e-12 * scale);
}

TEST_CASE("the 3-D frozen-coefficient matrix reproduces the residual: A(T) T − q h² = R(T)", "[model_problem][3d]") {
  // The identity holds by construction (model_problem.hpp), so to rounding:
  // 1e-13 of the largest flux term (common practice), and A is symmetric.
  const int n = 6;
  heat_conduction_model_problem problem(n, 10.0, 3);
  const Eigen::VectorXd t = smooth_state_3d(n);
  Eigen::VectorXd r(t.size());
  problem(t, r);
  Eigen::SparseMatrix<double> a;
  std::vector<Eigen::Triplet<double, int>> entries;
  problem.assemble_frozen_conduction(t, a, entries);
  const double h = 1.0 / n;
  const Eigen::VectorXd reproduced = a * t - Eigen::VectorXd::Constant(t.size(), problem.source() * h * h);
  const double scale = (a.cwiseAbs() * t.cwiseAbs()).maxCoeff();
  CHECK((reproduced - r).cwiseAbs().maxCoeff() <= 1e-13 * scale);
  const Eigen::SparseMatrix<double> transposed = a.transpose();
  CHECK((Eigen::MatrixXd(a) - Eigen::MatrixXd(transposed)).cwiseAbs().maxCoeff() == 0.0);
}

TEST_CASE("the 3-D model problem converges at second order to the series solution of its linear limit",
          "[model_problem][3d]") {
  // With a small source q the conductivity is 1 + T² = 1 + O(q²), so T/q
  // solves −Δu = 1 on the unit cube up to O(q²) (here T <= q/8 by comparison
  // with x(1 − x)/2, the maximum principle, so T² <= 2e-10: far under the h²
  // error); the cell-centred scheme is second order (h² truncation error of
  // the 7-point stencil and of the half-cell wall flux, common practice), so
  // the error in the mean temperature falls by about 4 per halving of h. Reference:
  // cube_mean_of_poisson_solution() above. Accepted: observed orders within
  // 0.25 of 2 on 8³ → 16³ → 32³ (the pre-asymptotic spread seen on such
  // coarse grids; common practice; measured 1.94 and 1.98).
  const double q = 1e-4;
  const double reference = cube_mean_of_poisson_solution();
  INFO("series mean " << reference);
  std::vector<double> errors;
  std::vector<double> means;
  for (const int n : {8, 16, 32}) {
    heat_conduction_model_problem problem(n, q, 3);
    Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
    nkit::newton_settings settings;
    settings.relative_tolerance = 1e-10;  // solver error far below the h² error (1e-3 .. 1e-4 relative)
    settings.linear.maximum_iterations = 2000;
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
    const nkit::solve_report report = solver.solve(problem, t);
    REQUIRE(report.converged());
    const double mean = t.mean() / q;
    errors.push_back(std::abs(mean - reference));
    means.push_back(mean);
  }
  for (std::size_t level = 1; level < errors.size(); ++level) {
    const double order = std::log2(errors[level - 1] / errors[level]);
    INFO("means T/q at 8, 16, 32: " << means[0] << ", " << means[1] << ", " << means[2] << "; observed order "
                                    << order);
    CHECK(std::abs(order - 2.0) <= 0.25);
  }
}

TEST_CASE("the model problem names a dimension it does not have", "[model_problem][input]") {
  CHECK_THROWS_WITH(heat_conduction_model_problem(8, 10.0, 4), Catch::Matchers::Contains("dimensions"));
  CHECK_THROWS_WITH(heat_conduction_model_problem(8, 10.0, 1), Catch::Matchers::Contains("got 1"));
  CHECK(heat_conduction_model_problem(8, 10.0, 2).unknowns() == 64);
}

TEST_CASE("the model problem refuses a matrix whose entries its index type cannot count", "[model_problem][input]") {
  // At most 2d + 1 entries per row: 7 n³ in 3-D passes 2³¹ − 1 = 2 147 483 647, the largest
  // 32-bit index, from n = 675 on (7 · 675³ = 2.153e9); 700³ cells need 2.401e9. The check
  // comes before any use of the state, so a one-entry vector suffices here.
  const heat_conduction_model_problem big(700, 10.0, 3);
  const Eigen::VectorXd t = Eigen::VectorXd::Zero(1);
  Eigen::SparseMatrix<double, Eigen::ColMajor, int> narrow;
  CHECK_THROWS_WITH(big.assemble_jacobian(t, narrow), Catch::Matchers::Contains("cells_per_side 700"));
  std::vector<Eigen::Triplet<double, int>> entries;
  CHECK_THROWS_WITH(big.assemble_frozen_conduction(t, narrow, entries),
                    Catch::Matchers::Contains("32-bit") && Catch::Matchers::Contains("cells_per_side 700"));
  // The same size fits a 64-bit index: no exception from the check (the state is then too
  // short, which the check does not see, so it is not called here). In 2-D, 5 n² fits in 32 bits
  // up to n = 20724: 17000 fits, 21000 does not (2.205e9).
  CHECK_NOTHROW(heat_conduction_model_problem(17000, 10.0, 2).check_index_range<int>());
  CHECK_THROWS(heat_conduction_model_problem(21000, 10.0, 2).check_index_range<int>());
  CHECK_NOTHROW(big.check_index_range<std::int64_t>());
}

namespace {

/// Assembles at t1, then again into the same matrix at t2, and compares with a
/// fresh assembly at t2: equal to the last bit (the same sums in the same order),
/// and the second assembly wrote into the first one's storage.
template <class Matrix>
void check_reassembly_in_place(int n, int dimensions) {
  const heat_conduction_model_problem problem(n, 10.0, dimensions);
  const Eigen::VectorXd t1 = Eigen::VectorXd::LinSpaced(problem.unknowns(), 0.0, 0.7);
  const Eigen::VectorXd t2 = Eigen::VectorXd::LinSpaced(problem.unknowns(), 0.9, -0.2);
  Matrix reused, fresh;
  problem.assemble_jacobian(t1, reused);
  const double* storage = reused.valuePtr();
  problem.assemble_jacobian(t2, reused);
  problem.assemble_jacobian(t2, fresh);
  CHECK(reused.valuePtr() == storage);
  REQUIRE(reused.nonZeros() == fresh.nonZeros());
  CHECK(Eigen::MatrixXd(reused) == Eigen::MatrixXd(fresh));
}

}  // namespace

TEST_CASE("re-assembling the model problem's Jacobian writes the values in place", "[model_problem][3d]") {
  // Reference: a fresh assembly into an empty matrix at the same state (the pattern
  // built first, then the values). This checks the in-place path against the fresh
  // one; the values themselves are checked against automatic differentiation above
  // (column-major) and in test_sparse_jacobian.cpp (row-major).
  check_reassembly_in_place<Eigen::SparseMatrix<double, Eigen::RowMajor, int>>(5, 2);
  check_reassembly_in_place<Eigen::SparseMatrix<double, Eigen::ColMajor, int>>(5, 2);
  check_reassembly_in_place<Eigen::SparseMatrix<double, Eigen::RowMajor, int>>(4, 3);
  check_reassembly_in_place<Eigen::SparseMatrix<double, Eigen::ColMajor, std::int64_t>>(4, 3);
  check_reassembly_in_place<Eigen::SparseMatrix<double, Eigen::RowMajor, int>>(1, 2);  // one cell, no neighbours
}

TEST_CASE("a matrix with another pattern is assembled anew, not written into", "[model_problem][3d]") {
  // The same size and entry count as the 4 × 4 problem's Jacobian (16 + 2·2·3·4 = 64
  // entries), but a band instead of the 5-point pattern: the in-place path must
  // notice and rebuild. Reference: a fresh assembly.
  const heat_conduction_model_problem problem(4, 10.0, 2);
  const Eigen::VectorXd t = Eigen::VectorXd::LinSpaced(16, 0.1, 0.5);
  Eigen::SparseMatrix<double, Eigen::RowMajor, int> other(16, 16), fresh;
  std::vector<Eigen::Triplet<double, int>> band;
  for (int row = 0; row < 16; ++row) {
    for (int column = std::max(0, row - 2); column <= std::min(15, row + 2) && band.size() < 64; ++column) {
      band.emplace_back(row, column, 1.0);
    }
  }
  other.setFromTriplets(band.begin(), band.end());
  problem.assemble_jacobian(t, fresh);
  REQUIRE(fresh.nonZeros() == 64);
  REQUIRE(other.nonZeros() == 64);
  problem.assemble_jacobian(t, other);
  CHECK(Eigen::MatrixXd(other) == Eigen::MatrixXd(fresh));
}

namespace {

/// A double that counts its arithmetic operations (+, −, × and the compound
/// forms; one each), to check the model problem's stated flop count.
struct counted_double {
  double value = 0.0;
  static inline long long operations = 0;
  counted_double() = default;
  counted_double(double v) : value(v) {}  // NOLINT: implicit, as for a scalar
  friend counted_double operator+(counted_double a, counted_double b) {
    ++operations;
    return a.value + b.value;
  }
  friend counted_double operator-(counted_double a, counted_double b) {
    ++operations;
    return a.value - b.value;
  }
  friend counted_double operator*(counted_double a, counted_double b) {
    ++operations;
    return a.value * b.value;
  }
  counted_double& operator+=(counted_double b) {
    ++operations;
    value += b.value;
    return *this;
  }
  counted_double& operator-=(counted_double b) {
    ++operations;
    value -= b.value;
    return *this;
  }
};

}  // namespace

namespace Eigen {
template <>
struct NumTraits<counted_double> : GenericNumTraits<double> {
  using Real = counted_double;
  using NonInteger = counted_double;
  using Nested = counted_double;
  using Literal = counted_double;
};
}  // namespace Eigen

TEST_CASE("the model problem's stated flop count is what its residual does", "[model_problem][3d]") {
  // Reference: the residual evaluated on a scalar type that counts every +, − and ×.
  for (const auto& [n, dimensions] : {std::pair<int, int>{1, 2}, {7, 2}, {64, 2}, {1, 3}, {5, 3}}) {
    const heat_conduction_model_problem problem(n, 10.0, dimensions);
    Eigen::Matrix<counted_double, Eigen::Dynamic, 1> t(problem.unknowns()), r(problem.unknowns());
    for (Eigen::Index p = 0; p < t.size(); ++p) t(p) = 0.01 * static_cast<double>(p);
    counted_double::operations = 0;
    problem(t, r);
    INFO(dimensions << "-D, n = " << n);
    CHECK(static_cast<double>(counted_double::operations) == problem.residual_flops());
  }
}
