#ifndef NKIT_PRECONDITIONERS_JACOBI_HPP
#define NKIT_PRECONDITIONERS_JACOBI_HPP

/// \file jacobi.hpp
/// Point Jacobi: M = diag(J). Setup reads the diagonal of the assembled
/// Jacobian (O(nnz)); apply is z_i = r_i / J_ii (n multiplications, no
/// allocation once z has the right size).
///
/// Fallback (setup_status::ready_with_fallback): a diagonal entry that is
/// zero or tiny (|J_ii| <= ε·‖J_i,:‖∞) is replaced by ±‖J_i,:‖∞ (sign of
/// J_ii, + when zero), or by 1 when the whole row is zero; the count is in
/// replaced_diagonals(). Non-finite matrix values give setup_status::failed.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>

#include "../core/preconditioner.hpp"
#include "../detail/sparse_helpers.hpp"

namespace nkit {

class jacobi_preconditioner {
 public:
  /// Builds M⁻¹ = diag(J)⁻¹ from `matrix` (square, compressed rows).
  setup_status build(const sparse_matrix& matrix) {
    detail::require_square(matrix, "jacobi_preconditioner");
    if (!detail::stored_values_finite(matrix)) return setup_status::failed;
    const Eigen::Index n = matrix.rows();
    if (m_inverse_diagonal.size() != n) m_inverse_diagonal.resize(n);
    m_replaced = 0;
    for (Eigen::Index i = 0; i < n; ++i) {
      double diagonal = 0.0;
      double row_max = 0.0;
      for (sparse_matrix::InnerIterator entry(matrix, i); entry; ++entry) {
        if (entry.col() == i) diagonal += entry.value();
        row_max = std::max(row_max, std::abs(entry.value()));
      }
      m_inverse_diagonal(i) = 1.0 / safe_pivot(diagonal, row_max, m_replaced);
    }
    return m_replaced == 0 ? setup_status::ready : setup_status::ready_with_fallback;
  }

  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    return build(context.assembled_jacobian());
  }

  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { z = r.cwiseProduct(m_inverse_diagonal); }
  /// z = M⁻ᵀ r = M⁻¹ r (M is diagonal).
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { apply(r, z); }

  std::size_t memory_bytes() const { return sizeof(double) * static_cast<std::size_t>(m_inverse_diagonal.size()); }
  /// Diagonal entries replaced by the fallback in the last setup.
  std::int64_t replaced_diagonals() const { return m_replaced; }

  /// The pivot actually used for `value` in a row whose largest magnitude
  /// is `row_max` (see the file comment); counts replacements.
  static double safe_pivot(double value, double row_max, std::int64_t& replaced) {
    if (std::abs(value) > std::numeric_limits<double>::epsilon() * row_max && value != 0.0) return value;
    ++replaced;
    const double magnitude = row_max > 0.0 ? row_max : 1.0;
    return value < 0.0 ? -magnitude : magnitude;
  }

 private:
  Eigen::VectorXd m_inverse_diagonal;
  std::int64_t m_replaced = 0;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_JACOBI_HPP
