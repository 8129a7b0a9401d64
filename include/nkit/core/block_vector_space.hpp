#ifndef NKIT_CORE_BLOCK_VECTOR_SPACE_HPP
#define NKIT_CORE_BLOCK_VECTOR_SPACE_HPP

/// \file core/block_vector_space.hpp
/// A vector space that splits every vector into contiguous blocks and forms
/// each reduction as a sum of per-block partial results, in block order.
/// It stands in for a distributed space (each block playing one rank) in
/// tests that must run without MPI. Iterates agree with eigen_vector_space
/// to rounding, not bitwise: the summation order differs.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>

#include "../detail/checks.hpp"
#include "local_vector_operations.hpp"

namespace nkit {

/// Element-wise members come from local_vector_operations (they never
/// communicate, so blocks play no part in them); only the reductions are
/// formed block by block.
class block_vector_space : public local_vector_operations<double> {
  using base = local_vector_operations<double>;

 public:
  using base::const_view;
  using base::scalar_type;
  using base::state_view;
  using base::vector_type;

  /// `block_count` >= 1 blocks of (nearly) equal length.
  explicit block_vector_space(int block_count = 2) : m_block_count(block_count) {
    detail::require_at_least("block_vector_space::block_count", block_count, 1);
  }
  int block_count() const { return m_block_count; }

  double dot(const_view x, const_view y) const {
    double sum = 0.0;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      sum += x.segment(start, length).dot(y.segment(start, length));
    }
    return sum;
  }
  /// Euclidean norm, overflow-safe like eigen_vector_space::norm (per-block
  /// maxima and scaled sums when Σ x_i² is out of range).
  double norm(const_view x) const {
    double sum = 0.0;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      sum += x.segment(start, length).squaredNorm();
    }
    if (!detail::sum_of_squares_out_of_range(sum)) return std::sqrt(sum);
    double largest = 0.0;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      largest = std::max(largest, local_largest_magnitude(x.segment(start, length)));
    }
    if (!(largest > 0.0)) return detail::rescaled_norm(largest, 0.0, [](double local) { return local; });
    double scaled = 0.0;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      scaled += local_scaled_sum_of_squares(x.segment(start, length), largest);
    }
    return detail::rescaled_norm(largest, scaled, [](double total) { return total; });
  }
  bool all_finite(const_view x) const {
    bool finite = true;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      finite = finite && x.segment(start, length).allFinite();
    }
    return finite;
  }
  std::int64_t global_size(const_view x) const { return static_cast<std::int64_t>(x.size()); }
  /// Per-block ranges combined (min of the nonzero smallest, max of the largest).
  magnitude_range<double> magnitudes(const_view x) const {
    magnitude_range<double> range;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      const magnitude_range<double> part = local_magnitudes(x.segment(start, length));
      range.largest = std::max(range.largest, part.largest);
      if (part.smallest_nonzero > 0 &&
          (range.smallest_nonzero == 0 || part.smallest_nonzero < range.smallest_nonzero)) {
        range.smallest_nonzero = part.smallest_nonzero;
      }
    }
    return range;
  }
  double weighted_max_norm(const_view x, const_view reference, double absolute, double relative) const {
    double largest = 0.0;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      const double part =
          local_weighted_max_norm(x.segment(start, length), reference.segment(start, length), absolute, relative);
      if (!(part <= largest)) largest = part;
    }
    return largest;
  }

  /// Per-block ratio tests combined with a min, as a distributed space would.
  double maximum_step_to_bounds(const_view x, const_view d, const_view lower, const_view upper) const {
    double step = std::numeric_limits<double>::infinity();
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      const double local =
          detail::local_maximum_step_to_bounds(x.segment(start, length), d.segment(start, length),
                                               lower.segment(start, length), upper.segment(start, length));
      step = std::min(step, local);
    }
    return step;
  }
  bool within_bounds(const_view x, const_view lower, const_view upper) const {
    return (x.array() >= lower.array()).all() && (x.array() <= upper.array()).all();
  }

 private:
  struct range {
    Eigen::Index start;
    Eigen::Index length;
  };
  range block(int b, Eigen::Index size) const {
    const Eigen::Index base = size / m_block_count;
    const Eigen::Index extra = size % m_block_count;
    const Eigen::Index start = b * base + (b < extra ? b : extra);
    return {start, base + (b < extra ? 1 : 0)};
  }
  int m_block_count;
};

}  // namespace nkit

#endif  // NKIT_CORE_BLOCK_VECTOR_SPACE_HPP
