#ifndef NKIT_DETAIL_DENSE_BLOCK_LU_HPP
#define NKIT_DETAIL_DENSE_BLOCK_LU_HPP

/// \file dense_block_lu.hpp
/// In-place LU with partial pivoting of one small dense b × b block (row-major),
/// as the block preconditioners factor their cell blocks.

#include <cmath>
#include <cstddef>
#include <utility>

namespace nkit::detail {

/// Factors the row-major b × b block `a` in place as P a = L U (unit lower L
/// below the diagonal, U on and above it); pivot[k] is the row swapped with row
/// k at step k (Golub & Van Loan, "Matrix Computations", Algorithm 3.4.1, from
/// memory; common practice). Returns false, leaving `a` partly factored, when a
/// pivot's magnitude is not above `tiny` (singular to working precision).
inline bool factor_dense_block(double* a, int* pivot, std::size_t b, double tiny) {
  for (std::size_t k = 0; k < b; ++k) {
    std::size_t best = k;
    for (std::size_t i = k + 1; i < b; ++i) {
      if (std::abs(a[i * b + k]) > std::abs(a[best * b + k])) best = i;
    }
    pivot[k] = static_cast<int>(best);
    if (best != k) {
      for (std::size_t c = 0; c < b; ++c) std::swap(a[k * b + c], a[best * b + c]);
    }
    if (!(std::abs(a[k * b + k]) > tiny)) return false;
    for (std::size_t i = k + 1; i < b; ++i) {
      a[i * b + k] /= a[k * b + k];
      for (std::size_t c = k + 1; c < b; ++c) a[i * b + c] -= a[i * b + k] * a[k * b + c];
    }
  }
  return true;
}

}  // namespace nkit::detail

#endif  // NKIT_DETAIL_DENSE_BLOCK_LU_HPP
