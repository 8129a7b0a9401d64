// Random nonsymmetric sparse test matrices (invented test data), shared by the
// GMRES and recycling-GMRES tests.
#ifndef NKIT_TESTS_SUPPORT_RANDOM_SPARSE_MATRIX_HPP
#define NKIT_TESTS_SUPPORT_RANDOM_SPARSE_MATRIX_HPP

#include <Eigen/SparseCore>
#include <random>
#include <vector>

namespace nkit_test {

/// Diagonal `diagonal` plus `per_row` off-diagonal entries uniform in [-1, 1]
/// per row, at columns drawn uniformly (duplicates add up), from `seed`.
inline Eigen::SparseMatrix<double> random_sparse(int n, int per_row, double diagonal, unsigned seed) {
  std::mt19937 engine(seed);
  std::uniform_real_distribution<double> value(-1.0, 1.0);
  std::uniform_int_distribution<int> column(0, n - 1);
  std::vector<Eigen::Triplet<double>> entries;
  for (int i = 0; i < n; ++i) {
    entries.emplace_back(i, i, diagonal);
    for (int k = 0; k < per_row; ++k) entries.emplace_back(i, column(engine), value(engine));
  }
  Eigen::SparseMatrix<double> a(n, n);
  a.setFromTriplets(entries.begin(), entries.end());
  return a;
}

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_RANDOM_SPARSE_MATRIX_HPP
