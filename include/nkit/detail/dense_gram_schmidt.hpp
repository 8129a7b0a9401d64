#ifndef NKIT_DETAIL_DENSE_GRAM_SCHMIDT_HPP
#define NKIT_DETAIL_DENSE_GRAM_SCHMIDT_HPP

/// \file dense_gram_schmidt.hpp
/// Thin QR of the leading columns of a small dense matrix by modified
/// Gram–Schmidt applied twice ("twice is enough", common practice), in place,
/// with no allocation.

#include <cmath>

namespace nkit::detail {

/// Orthonormalises columns 0..count−1 (rows 0..rows−1) of `q` in place and
/// accumulates the upper triangular factor in `r` (zeroed by the caller), so
/// that the original columns equal q · r. Stops at the first column whose
/// remainder is not above 10⁻¹⁰ of its original norm (numerically dependent on
/// the earlier ones; the same relative test as the recycled-image refresh,
/// common practice) or not finite; returns how many columns were done, the
/// leading ones being usable.
template <class Matrix, class Factor>
int dense_gram_schmidt_qr(Matrix& q, Factor& r, int rows, int count) {
  for (int c = 0; c < count; ++c) {
    double original = 0.0;
    for (int i = 0; i < rows; ++i) original += q(i, c) * q(i, c);
    original = std::sqrt(original);
    for (int pass = 0; pass < 2; ++pass) {
      for (int p = 0; p < c; ++p) {
        double projection = 0.0;
        for (int i = 0; i < rows; ++i) projection += q(i, p) * q(i, c);
        r(p, c) += projection;
        for (int i = 0; i < rows; ++i) q(i, c) -= projection * q(i, p);
      }
    }
    double norm = 0.0;
    for (int i = 0; i < rows; ++i) norm += q(i, c) * q(i, c);
    norm = std::sqrt(norm);
    if (!(norm > 1e-10 * original) || !std::isfinite(norm)) return c;
    r(c, c) = norm;
    for (int i = 0; i < rows; ++i) q(i, c) /= norm;
  }
  return count;
}

}  // namespace nkit::detail

#endif  // NKIT_DETAIL_DENSE_GRAM_SCHMIDT_HPP
