// Checks an assembled Jacobian against the definition of the Jacobian:
// column j ≈ [R(x + δe_j) − R(x − δe_j)]/(2δ), a central difference with
// O(δ²) truncation error (common practice). Dense, one column at a time: for
// the small grids of the problem tests only.
#ifndef NKIT_TESTS_SUPPORT_JACOBIAN_CHECK_HPP
#define NKIT_TESTS_SUPPORT_JACOBIAN_CHECK_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <algorithm>
#include <nkit/core/preconditioner.hpp>

namespace nkit_test {

struct jacobian_deviation {
  double worst = 0.0;          ///< max over entries of |central difference − assembled|
  double largest_entry = 0.0;  ///< max |entry| of the assembled Jacobian, for relative bounds
};

/// Compares problem.assemble_jacobian(x, J) with central differences of
/// problem(x, r) with step `delta`.
template <class Problem>
jacobian_deviation central_difference_deviation(Problem& problem, const Eigen::VectorXd& x, double delta) {
  nkit::sparse_matrix jacobian;
  problem.assemble_jacobian(x, jacobian);
  const Eigen::MatrixXd dense(jacobian);
  Eigen::VectorXd plus(x.size()), minus(x.size());
  jacobian_deviation result;
  for (Eigen::Index j = 0; j < x.size(); ++j) {
    Eigen::VectorXd shifted = x;
    shifted(j) += delta;
    problem(shifted, plus);
    shifted(j) -= 2 * delta;
    problem(shifted, minus);
    result.worst = std::max(result.worst, ((plus - minus) / (2 * delta) - dense.col(j)).cwiseAbs().maxCoeff());
  }
  result.largest_entry = dense.cwiseAbs().maxCoeff();
  return result;
}

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_JACOBIAN_CHECK_HPP
