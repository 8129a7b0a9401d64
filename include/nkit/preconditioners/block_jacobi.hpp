#ifndef NKIT_PRECONDITIONERS_BLOCK_JACOBI_HPP
#define NKIT_PRECONDITIONERS_BLOCK_JACOBI_HPP

/// \file block_jacobi.hpp
/// Block Jacobi for b unknowns per cell: M = blockdiag(J), the b × b blocks
/// on the diagonal (unknowns b·c .. b·c + b − 1 belong to cell c, the layout
/// of sparsity_pattern.hpp's grid helpers). Setup: dense LU with partial
/// pivoting of each block, O(n b²) time, n·b doubles + n ints of storage;
/// apply: one pair of b × b triangular solves per block, no allocation.
/// apply_transpose (z = M⁻ᵀ r, adjoint solves): each block was factored as
/// P B = L U, so B⁻ᵀ = Pᵀ L⁻ᵀ U⁻ᵀ: forward substitution with Uᵀ, backward
/// with Lᵀ, then the row interchanges undone in reverse order; same cost, no
/// allocation.
///
/// Fallback (setup_status::ready_with_fallback): a block whose LU meets a
/// pivot |u_kk| <= ε·b·‖block‖∞ (singular to working precision) is replaced
/// by its diagonal, each zero entry of which is handled like point Jacobi
/// (jacobi.hpp): the block becomes a point-Jacobi block. The count is in
/// singular_blocks(). Non-finite values give setup_status::failed.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "../core/preconditioner.hpp"
#include "../detail/dense_block_lu.hpp"
#include "../detail/sparse_helpers.hpp"
#include "jacobi.hpp"

namespace nkit {

class block_jacobi_preconditioner {
 public:
  block_jacobi_preconditioner() : block_jacobi_preconditioner(1) {}
  explicit block_jacobi_preconditioner(int block_size) : m_block(block_size) {
    if (block_size < 1 || block_size > maximum_block_size) {
      throw std::invalid_argument("nkit: block_jacobi_preconditioner block_size must be in [1, 64] (got " +
                                  std::to_string(block_size) + ")");
    }
  }
  int block_size() const { return m_block; }
  /// Largest supported block (the fallback keeps a block's diagonal on the stack).
  static constexpr int maximum_block_size = 64;

  setup_status build(const sparse_matrix& matrix) {
    detail::require_square(matrix, "block_jacobi_preconditioner");
    const Eigen::Index n = matrix.rows();
    if (n % m_block != 0) {
      throw std::invalid_argument("nkit: block_jacobi_preconditioner block_size " + std::to_string(m_block) +
                                  " does not divide the number of unknowns " + std::to_string(n));
    }
    if (!detail::stored_values_finite(matrix)) return setup_status::failed;
    const auto b = static_cast<std::size_t>(m_block);
    const std::size_t blocks = static_cast<std::size_t>(n) / b;
    m_factors.assign(blocks * b * b, 0.0);
    m_pivots.resize(blocks * b);
    m_singular = 0;
    for (Eigen::Index i = 0; i < n; ++i) {  // gather the diagonal blocks
      const std::size_t block = static_cast<std::size_t>(i) / b;
      const std::size_t local_row = static_cast<std::size_t>(i) % b;
      const Eigen::Index first_column = static_cast<Eigen::Index>(block * b);
      for (sparse_matrix::InnerIterator entry(matrix, i); entry; ++entry) {
        if (entry.col() >= first_column && entry.col() < first_column + m_block) {
          m_factors[block * b * b + local_row * b + static_cast<std::size_t>(entry.col() - first_column)] +=
              entry.value();
        }
      }
    }
    for (std::size_t block = 0; block < blocks; ++block) {
      if (!factorize(block)) ++m_singular;
    }
    return m_singular == 0 ? setup_status::ready : setup_status::ready_with_fallback;
  }

  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    return build(context.assembled_jacobian());
  }

  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if (z.size() != r.size()) z.resize(r.size());
    const auto b = static_cast<std::size_t>(m_block);
    const std::size_t blocks = m_pivots.size() / b;
    for (std::size_t block = 0; block < blocks; ++block) {
      const double* lu = &m_factors[block * b * b];
      const int* pivot = &m_pivots[block * b];
      double* x = z.data() + block * b;
      const double* rhs = r.data() + block * b;
      for (std::size_t k = 0; k < b; ++k) x[k] = rhs[k];
      for (std::size_t k = 0; k < b; ++k) std::swap(x[k], x[pivot[k]]);  // row interchanges, in order
      for (std::size_t i = 1; i < b; ++i) {                              // unit lower
        for (std::size_t k = 0; k < i; ++k) x[i] -= lu[i * b + k] * x[k];
      }
      for (std::size_t i = b; i-- > 0;) {  // upper
        for (std::size_t k = i + 1; k < b; ++k) x[i] -= lu[i * b + k] * x[k];
        x[i] /= lu[i * b + i];
      }
    }
  }

  /// z = M⁻ᵀ r with the same factors (see the file comment).
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if (z.size() != r.size()) z.resize(r.size());
    const auto b = static_cast<std::size_t>(m_block);
    const std::size_t blocks = m_pivots.size() / b;
    for (std::size_t block = 0; block < blocks; ++block) {
      const double* lu = &m_factors[block * b * b];
      const int* pivot = &m_pivots[block * b];
      double* x = z.data() + block * b;
      const double* rhs = r.data() + block * b;
      for (std::size_t k = 0; k < b; ++k) x[k] = rhs[k];
      for (std::size_t i = 0; i < b; ++i) {  // Uᵀ: lower, column i of U is row i of Uᵀ
        for (std::size_t k = 0; k < i; ++k) x[i] -= lu[k * b + i] * x[k];
        x[i] /= lu[i * b + i];
      }
      for (std::size_t i = b; i-- > 0;) {  // Lᵀ: unit upper
        for (std::size_t k = i + 1; k < b; ++k) x[i] -= lu[k * b + i] * x[k];
      }
      for (std::size_t k = b; k-- > 0;) std::swap(x[k], x[pivot[k]]);  // interchanges undone, in reverse
    }
  }

  std::size_t memory_bytes() const { return sizeof(double) * m_factors.size() + sizeof(int) * m_pivots.size(); }
  /// Blocks replaced by the point-Jacobi fallback in the last setup.
  std::int64_t singular_blocks() const { return m_singular; }

 private:
  /// In-place LU with partial pivoting of one row-major block; on a
  /// vanishing pivot restores the fallback diagonal block and returns false.
  bool factorize(std::size_t block) {
    const auto b = static_cast<std::size_t>(m_block);
    double* a = &m_factors[block * b * b];
    int* pivot = &m_pivots[block * b];
    double norm = 0.0;
    for (std::size_t i = 0; i < b; ++i) {
      double row = 0.0;
      for (std::size_t k = 0; k < b; ++k) row += std::abs(a[i * b + k]);
      norm = std::max(norm, row);
    }
    // Keep the diagonal and row maxima in case the block is singular.
    double diagonal[maximum_block_size];
    double row_max[maximum_block_size];
    for (std::size_t i = 0; i < b; ++i) {
      diagonal[i] = a[i * b + i];
      row_max[i] = 0.0;
      for (std::size_t k = 0; k < b; ++k) row_max[i] = std::max(row_max[i], std::abs(a[i * b + k]));
    }
    const double tiny = std::numeric_limits<double>::epsilon() * static_cast<double>(b) * norm;
    if (detail::factor_dense_block(a, pivot, b, tiny)) return true;
    std::int64_t replaced = 0;
    for (std::size_t i = 0; i < b; ++i) {
      for (std::size_t c = 0; c < b; ++c) a[i * b + c] = 0.0;
      a[i * b + i] = jacobi_preconditioner::safe_pivot(diagonal[i], row_max[i], replaced);
      pivot[i] = static_cast<int>(i);
    }
    return false;
  }

  int m_block;
  std::vector<double> m_factors;  // per block: L (unit, strictly lower) and U, row-major
  std::vector<int> m_pivots;      // per block: row interchanged with k at step k
  std::int64_t m_singular = 0;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_BLOCK_JACOBI_HPP
