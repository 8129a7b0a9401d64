// The Liouville–Bratu–Gelfand problem, discretised by second-order finite
// differences, written as parametrized residuals R(u, λ) for continuation.
//
//   1D:  u'' + λ e^u = 0 on (0, 1),   u(0) = u(1) = 0
//   2D:  −Δu = λ e^u on (0, 1)²,      u = 0 on the boundary
//
// Unknowns are the values at the interior nodes of a uniform grid with n
// interior nodes per direction, h = 1/(n + 1) (2D: p = i + n·j). Both are
// written as −(discrete Laplacian) − λ e^u, so R_u = −Δ_h − λ diag(e^u) is
// symmetric positive definite at λ = 0 and becomes singular at the fold.
// Published facts the tests use (exact 1D solution, folds) are cited where
// they are checked: tests/test_continuation.cpp and problems/README.md.
#ifndef NKIT_PROBLEMS_REACTION_DIFFUSION_BRATU_HPP
#define NKIT_PROBLEMS_REACTION_DIFFUSION_BRATU_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <cmath>
#include <stdexcept>
#include <vector>

namespace nkit_problems {

/// 1D Bratu, 3-point stencil: R_i = (−u_{i−1} + 2u_i − u_{i+1})/h² − λ e^{u_i}.
class bratu_1d {
 public:
  explicit bratu_1d(int interior_nodes) : m_n(interior_nodes) {
    if (interior_nodes < 1) throw std::invalid_argument("bratu_1d: interior_nodes must be >= 1");
  }
  Eigen::Index unknowns() const { return m_n; }
  double grid_spacing() const { return 1.0 / (m_n + 1); }
  /// x of unknown i.
  double node(Eigen::Index i) const { return static_cast<double>(i + 1) * grid_spacing(); }

  /// R(u, λ); works for double and for dual numbers.
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, const Scalar& parameter,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    using std::exp;
    const double inverse_h2 = 1.0 / (grid_spacing() * grid_spacing());
    for (Eigen::Index i = 0; i < m_n; ++i) {
      Scalar laplacian = 2.0 * u(i);
      if (i > 0) laplacian -= u(i - 1);
      if (i + 1 < m_n) laplacian -= u(i + 1);
      r(i) = inverse_h2 * laplacian - parameter * exp(u(i));
    }
  }

  /// R_u(u, λ): tridiagonal.
  template <class SparseMatrix>
  void assemble_jacobian(const Eigen::VectorXd& u, double parameter, SparseMatrix& jacobian) const {
    const double inverse_h2 = 1.0 / (grid_spacing() * grid_spacing());
    std::vector<Eigen::Triplet<double, typename SparseMatrix::StorageIndex>> entries;
    entries.reserve(static_cast<std::size_t>(3 * m_n));
    for (Eigen::Index i = 0; i < m_n; ++i) {
      if (i > 0) entries.emplace_back(i, i - 1, -inverse_h2);
      entries.emplace_back(i, i, 2.0 * inverse_h2 - parameter * std::exp(u(i)));
      if (i + 1 < m_n) entries.emplace_back(i, i + 1, -inverse_h2);
    }
    jacobian.resize(m_n, m_n);
    jacobian.setFromTriplets(entries.begin(), entries.end());
  }

 private:
  Eigen::Index m_n;
};

/// 2D Bratu, 5-point stencil: R_P = (4u_P − u_E − u_W − u_N − u_S)/h² − λ e^{u_P}.
class bratu_2d {
 public:
  explicit bratu_2d(int interior_nodes_per_side) : m_n(interior_nodes_per_side) {
    if (interior_nodes_per_side < 1) throw std::invalid_argument("bratu_2d: interior_nodes_per_side must be >= 1");
  }
  int nodes_per_side() const { return m_n; }
  Eigen::Index unknowns() const { return static_cast<Eigen::Index>(m_n) * m_n; }
  double grid_spacing() const { return 1.0 / (m_n + 1); }

  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, const Scalar& parameter,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    using std::exp;
    const int n = m_n;
    const double inverse_h2 = 1.0 / (grid_spacing() * grid_spacing());
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const Eigen::Index p = i + static_cast<Eigen::Index>(n) * j;
        Scalar laplacian = 4.0 * u(p);
        if (i > 0) laplacian -= u(p - 1);
        if (i + 1 < n) laplacian -= u(p + 1);
        if (j > 0) laplacian -= u(p - n);
        if (j + 1 < n) laplacian -= u(p + n);
        r(p) = inverse_h2 * laplacian - parameter * exp(u(p));
      }
    }
  }

  /// R_u(u, λ): 5-point stencil.
  template <class SparseMatrix>
  void assemble_jacobian(const Eigen::VectorXd& u, double parameter, SparseMatrix& jacobian) const {
    const int n = m_n;
    const double inverse_h2 = 1.0 / (grid_spacing() * grid_spacing());
    std::vector<Eigen::Triplet<double, typename SparseMatrix::StorageIndex>> entries;
    entries.reserve(static_cast<std::size_t>(5 * unknowns()));
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const Eigen::Index p = i + static_cast<Eigen::Index>(n) * j;
        if (j > 0) entries.emplace_back(p, p - n, -inverse_h2);
        if (i > 0) entries.emplace_back(p, p - 1, -inverse_h2);
        entries.emplace_back(p, p, 4.0 * inverse_h2 - parameter * std::exp(u(p)));
        if (i + 1 < n) entries.emplace_back(p, p + 1, -inverse_h2);
        if (j + 1 < n) entries.emplace_back(p, p + n, -inverse_h2);
      }
    }
    jacobian.resize(unknowns(), unknowns());
    jacobian.setFromTriplets(entries.begin(), entries.end());
  }

 private:
  int m_n;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_REACTION_DIFFUSION_BRATU_HPP
