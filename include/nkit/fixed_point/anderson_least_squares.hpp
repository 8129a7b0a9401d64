#ifndef NKIT_FIXED_POINT_ANDERSON_LEAST_SQUARES_HPP
#define NKIT_FIXED_POINT_ANDERSON_LEAST_SQUARES_HPP

/// \file fixed_point/anderson_least_squares.hpp
/// The least-squares problem of Anderson acceleration, min_γ ‖f − ΔF γ‖₂,
/// kept as a thin QR factorisation ΔF = Q R that is updated, not recomputed:
/// a new column (newest residual difference) is orthogonalised against Q,
/// the oldest column is removed by Givens rotations that restore R to
/// triangular form, and a condition-number safeguard removes oldest columns
/// while R is ill-conditioned.
///
/// Method: H.F. Walker & P. Ni, "Anderson acceleration for fixed-point
/// iterations", SIAM J. Numer. Anal. 49 (2011) 1715–1735, the QR-updating
/// implementation of their unconstrained least-squares form (section not
/// checked against the paper); column removal by Givens rotations as in G.H. Golub &
/// C.F. Van Loan, "Matrix Computations", 4th ed. (2013), §6.5 (QR updating;
/// section number not checked). New columns are orthogonalised by classical Gram–Schmidt
/// applied twice (one fused reduction, dot_many, per pass): "twice is
/// enough" (L. Giraud, J. Langou & M. Rozložník, Comput. Math. Appl. 50
/// (2005) 1069–1075; citation not checked against the paper).
///
/// Condition number: κ₁(R) = ‖R‖₁ ‖R⁻¹‖₁, computed exactly from R⁻¹ (at most
/// depth × depth, O(k³) per evaluation); it bounds the 2-norm condition
/// number within a factor k (Golub & Van Loan, §2.3, norm equivalences).
///
/// Memory: `depth` vectors for Q plus one work vector, and three depth ×
/// depth dense matrices, allocated by allocate() and reused while the depth
/// and vector size stay the same. Nothing else allocates.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <utility>
#include <vector>

#include "../core/eigen_vector_space.hpp"
#include "../core/vector_space.hpp"
#include "../detail/givens.hpp"

namespace nkit {

template <class Space = eigen_vector_space<double>>
class anderson_least_squares {
 public:
  using vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;

  explicit anderson_least_squares(Space space = {}) : m_space(std::move(space)) {}

  /// Room for `depth` columns shaped like `prototype`; clears the columns.
  void allocate(int depth, const vector_type& prototype) {
    const auto count = static_cast<std::size_t>(std::max(depth, 0));
    if (m_q.size() != count) m_q.resize(count);
    for (auto& q : m_q) m_space.allocate_like(q, prototype);
    m_space.allocate_like(m_work, prototype);
    if (m_r.rows() != depth) {
      m_r.setZero(depth, depth);
      m_inverse.setZero(depth, depth);
      m_projections.setZero(depth);
      m_coefficients.setZero(depth);
    }
    m_columns = 0;
  }

  int depth() const { return static_cast<int>(m_q.size()); }
  int columns() const { return m_columns; }
  void clear() { m_columns = 0; }

  /// What append_difference() did.
  enum class append_result {
    appended,    ///< the column is now the newest one
    not_usable,  ///< zero or not finite: not appended
    dependent,   ///< in the span of the kept columns to working precision: not appended
    full         ///< columns() == depth(): remove the oldest first
  };

  /// Appends the column a − b (the newest difference). On any result but
  /// appended the factorisation is unchanged.
  append_result append_difference(const vector_type& a, const vector_type& b) {
    if (m_columns >= depth()) return append_result::full;
    const int k = m_columns;
    vector_type& v = m_q[static_cast<std::size_t>(k)];
    m_space.combine(1, a, -1, b, v);
    const double original = m_space.norm(v);
    if (!(std::isfinite(original) && original > 0.0)) return append_result::not_usable;
    m_r.col(k).setZero();
    for (int pass = 0; pass < 2 && k > 0; ++pass) {
      dot_many(m_space, m_q.data(), k, v, m_projections.data());
      for (int i = 0; i < k; ++i) m_space.add_scaled(-m_projections(i), m_q[static_cast<std::size_t>(i)], v);
      m_r.col(k).head(k) += m_projections.head(k);
    }
    const double remaining = m_space.norm(v);
    // Dependent columns: what is left is rounding noise of the projections.
    if (!(remaining > 16 * std::numeric_limits<double>::epsilon() * original)) return append_result::dependent;
    m_r(k, k) = remaining;
    m_space.scale(1 / remaining, v);
    ++m_columns;
    return append_result::appended;
  }

  /// Removes the oldest column: shifts R left and restores it to triangular
  /// form with Givens rotations, applied to Q as well (ΔF = Q R holds throughout).
  void remove_oldest() {
    if (m_columns == 0) return;
    const int k = m_columns;
    for (int j = 0; j + 1 < k; ++j) m_r.col(j).head(k) = m_r.col(j + 1).head(k);
    m_r.col(k - 1).setZero();
    for (int i = 0; i + 1 < k; ++i) {
      detail::givens_rotation rotation;
      m_r(i, i) = rotation.make(m_r(i, i), m_r(i + 1, i));
      m_r(i + 1, i) = 0.0;
      for (int j = i + 1; j + 1 < k; ++j) rotation.apply(m_r(i, j), m_r(i + 1, j));
      vector_type& left = m_q[static_cast<std::size_t>(i)];
      vector_type& right = m_q[static_cast<std::size_t>(i + 1)];
      // [q_i, q_{i+1}] ← [q_i, q_{i+1}] Gᵀ, G = [c s; −s c].
      m_space.combine(rotation.cosine, left, rotation.sine, right, m_work);
      m_space.combine(-rotation.sine, left, rotation.cosine, right, right);
      std::swap(left, m_work);
    }
    // The last column of Q is no longer part of the factorisation.
    m_r.row(k - 1).head(k).setZero();
    --m_columns;
  }

  /// κ₁(R) of the kept columns (+inf when R is singular, 0 without columns).
  double condition_number() {
    const int k = m_columns;
    if (k == 0) return 0.0;
    for (int i = 0; i < k; ++i) {
      if (!(std::abs(m_r(i, i)) > 0.0)) return std::numeric_limits<double>::infinity();
    }
    // R⁻¹ column by column, by back substitution (upper triangular).
    for (int column = 0; column < k; ++column) {
      for (int i = k - 1; i >= 0; --i) {
        double sum = i == column ? 1.0 : 0.0;
        for (int j = i + 1; j < k; ++j) sum -= m_r(i, j) * m_inverse(j, column);
        m_inverse(i, column) = sum / m_r(i, i);
      }
    }
    double norm = 0.0, inverse_norm = 0.0;
    for (int column = 0; column < k; ++column) {
      norm = std::max(norm, m_r.col(column).head(k).cwiseAbs().sum());
      inverse_norm = std::max(inverse_norm, m_inverse.col(column).head(k).cwiseAbs().sum());
    }
    const double kappa = norm * inverse_norm;
    return std::isfinite(kappa) ? kappa : std::numeric_limits<double>::infinity();
  }

  /// Removes oldest columns while κ₁(R) > limit; returns how many it removed.
  int enforce_condition_limit(double limit) {
    int removed = 0;
    while (m_columns > 0 && condition_number() > limit) {
      remove_oldest();
      ++removed;
    }
    return removed;
  }

  /// γ = argmin ‖f − ΔF γ‖ (γ = R⁻¹ Qᵀ f); writes f − ΔF γ into `residual`
  /// and returns its norm. Coefficients are read by coefficient(i), oldest
  /// column first. Collective: one fused reduction and one norm.
  double solve(const vector_type& f, vector_type& residual) {
    const int k = m_columns;
    m_space.copy(f, residual);
    if (k == 0) return m_space.norm(residual);
    dot_many(m_space, m_q.data(), k, f, m_projections.data());
    for (int i = k - 1; i >= 0; --i) {
      double sum = m_projections(i);
      for (int j = i + 1; j < k; ++j) sum -= m_r(i, j) * m_coefficients(j);
      m_coefficients(i) = sum / m_r(i, i);
    }
    // ΔF γ = Q R γ = Q Qᵀ f.
    for (int i = 0; i < k; ++i) m_space.add_scaled(-m_projections(i), m_q[static_cast<std::size_t>(i)], residual);
    return m_space.norm(residual);
  }

  double coefficient(int i) const { return m_coefficients(i); }

  /// Bytes held: Q, the work vector and the dense matrices.
  std::size_t workspace_bytes() const {
    const std::size_t length = m_work.size() > 0 ? static_cast<std::size_t>(m_work.size()) : 0;
    const std::size_t dense =
        static_cast<std::size_t>(m_r.size() + m_inverse.size() + m_projections.size() + m_coefficients.size());
    return sizeof(scalar_type) * ((m_q.size() + 1) * length) + sizeof(double) * dense;
  }

 private:
  Space m_space;
  std::vector<vector_type> m_q;
  vector_type m_work;
  Eigen::MatrixXd m_r, m_inverse;
  Eigen::VectorXd m_projections, m_coefficients;
  int m_columns = 0;
};

}  // namespace nkit

#endif  // NKIT_FIXED_POINT_ANDERSON_LEAST_SQUARES_HPP
