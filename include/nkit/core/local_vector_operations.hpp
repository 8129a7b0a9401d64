#ifndef NKIT_CORE_LOCAL_VECTOR_OPERATIONS_HPP
#define NKIT_CORE_LOCAL_VECTOR_OPERATIONS_HPP

/// \file core/local_vector_operations.hpp
/// The element-wise operations of a vector space on local Eigen vectors —
/// y += αx, out = ax + by, scaling, copies, fills, element-wise products and
/// quotients — written once, with the OpenMP path, and shared by every space
/// whose vectors are plain local Eigen vectors: eigen_vector_space,
/// block_vector_space and mpi_vector_space inherit them and differ only in
/// their reductions. Also linear_combinations(), several y = Σ a_i x_i in one
/// pass over memory, and the local pieces those reductions are built from:
/// the bounds ratio test and an overflow-safe Euclidean norm.
///
/// With NKIT_USE_OPENMP defined (CMake target nkit::openmp), members on
/// vectors of at least detail::parallel_length_threshold entries run on the
/// OpenMP team in omp_get_max_threads() contiguous chunks
/// (detail/parallel_loops.hpp); element-wise results are the same bits as the
/// serial code. Without it the members are the plain serial Eigen expressions.
/// Nothing here allocates except allocate_like() when the size differs.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>

#include "../detail/parallel_loops.hpp"
#include "vector_space.hpp"

namespace nkit {

namespace detail {

/// Ratio test for bounds on local data: min over i of the distance to the bound
/// d_i points at, divided by |d_i| (+inf when no d_i points at a finite bound).
template <class X, class D, class L, class U>
typename X::Scalar local_maximum_step_to_bounds(const X& x, const D& d, const L& lower, const U& upper) {
  using scalar = typename X::Scalar;
  scalar step = std::numeric_limits<scalar>::infinity();
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    if (d(i) > 0) {
      const scalar room = (upper(i) - x(i)) / d(i);
      if (room < step) step = room;
    } else if (d(i) < 0) {
      const scalar room = (lower(i) - x(i)) / d(i);
      if (room < step) step = room;
    }
  }
  return step < 0 ? scalar(0) : step;
}

/// Whether √(sum of squares) = `sum_of_squares` may be wrong through overflow
/// (inf from finite entries) or underflow (0 or subnormal from nonzero
/// entries): then the norm must be recomputed from scaled entries. NaN is
/// passed through (the vector holds a NaN).
template <class Scalar>
bool sum_of_squares_out_of_range(Scalar sum_of_squares) {
  return sum_of_squares == std::numeric_limits<Scalar>::infinity() ||
         sum_of_squares < std::numeric_limits<Scalar>::min();
}

/// ‖x‖ from entries scaled by `largest` = max |x_i| (over all ranks):
/// largest · √Σ (x_i / largest)², exact in range whatever the magnitudes
/// (common practice, as in the reference BLAS dnrm2). `partial_sum` adds the
/// local Σ (x_i / largest)² over ranks.
template <class Scalar, class SumOverRanks>
Scalar rescaled_norm(Scalar largest, Scalar local_scaled_sum, SumOverRanks&& sum_over_ranks) {
  using std::sqrt;
  if (largest == Scalar(0) || !(largest < std::numeric_limits<Scalar>::infinity())) return largest;
  return largest * sqrt(sum_over_ranks(local_scaled_sum));
}

}  // namespace detail

template <class Scalar = double>
class local_vector_operations {
 public:
  using scalar_type = Scalar;
  using vector_type = Eigen::Matrix<Scalar, Eigen::Dynamic, 1>;
  using state_view = Eigen::Ref<vector_type>;
  using const_view = Eigen::Ref<const vector_type>;

  /// Resizes `target` to the size of `prototype`; allocates only when the size differs.
  void allocate_like(vector_type& target, const_view prototype) const {
    if (target.size() != prototype.size()) target.resize(prototype.size());
  }

#if defined(NKIT_USE_OPENMP)
  // One contiguous chunk per thread for long vectors.
  void add_scaled(Scalar alpha, const_view x, state_view y) const {
    chunked(y.size(), [&](auto b, auto c) { y.segment(b, c).noalias() += alpha * x.segment(b, c); });
  }
  void combine(Scalar a, const_view x, Scalar b, const_view y, state_view out) const {
    chunked(out.size(),
            [&](auto s, auto c) { out.segment(s, c).noalias() = a * x.segment(s, c) + b * y.segment(s, c); });
  }
  void scale(Scalar alpha, state_view x) const {
    chunked(x.size(), [&](auto b, auto c) { x.segment(b, c) *= alpha; });
  }
  void copy(const_view from, state_view to) const {
    chunked(to.size(), [&](auto b, auto c) { to.segment(b, c) = from.segment(b, c); });
  }
  void fill(Scalar value, state_view x) const {
    chunked(x.size(), [&](auto b, auto c) { x.segment(b, c).setConstant(value); });
  }
  void multiply(const_view weights, state_view x) const {
    chunked(x.size(), [&](auto b, auto c) { x.segment(b, c).array() *= weights.segment(b, c).array(); });
  }
  void divide(const_view weights, state_view x) const {
    chunked(x.size(), [&](auto b, auto c) { x.segment(b, c).array() /= weights.segment(b, c).array(); });
  }
  void add_product(const_view weights, const_view x, state_view y) const {
    chunked(y.size(), [&](auto b, auto c) {
      y.segment(b, c).array() += weights.segment(b, c).array() * x.segment(b, c).array();
    });
  }
#endif

  /// targets[c] = Σ_{i < count} coefficients[i + c·stride] · sources[i] for
  /// c < target_count (a tall-skinny matrix product [x_0 … x_{count−1}] A with
  /// A column-major, leading dimension `stride`), in one pass over memory:
  /// entry blocks of combination_block_length, so the target blocks stay in
  /// cache while each source block is read from memory once. fill(0, y) and
  /// add_scaled over i would read and write every target `count` times. Each
  /// entry is summed over i in order (with count = 0 the targets are zeroed).
  /// No target may be one of the sources. Allocates nothing.
  void linear_combinations(const vector_type* const* sources, int count, const Scalar* coefficients, int stride,
                           vector_type* const* targets, int target_count) const {
    if (target_count <= 0) return;
    const auto body = [&](Eigen::Index begin, Eigen::Index length) {
      const Eigen::Index end = begin + length;
      for (Eigen::Index block = begin; block < end; block += combination_block_length) {
        const Eigen::Index size = std::min(combination_block_length, end - block);
        for (int c = 0; c < target_count; ++c) {
          auto out = targets[c]->segment(block, size);
          const Scalar* a = coefficients + static_cast<std::ptrdiff_t>(c) * stride;
          if (count == 0) {
            out.setZero();
            continue;
          }
          out.noalias() = a[0] * sources[0]->segment(block, size);
          for (int i = 1; i < count; ++i) out.noalias() += a[i] * sources[i]->segment(block, size);
        }
      }
    };
#if defined(NKIT_USE_OPENMP)
    chunked(targets[0]->size(), body);
#else
    body(Eigen::Index(0), targets[0]->size());
#endif
  }
  /// Entries per block of linear_combinations: 256 doubles = 2 KiB per vector,
  /// so a dozen target blocks and the current source block fit a 32 KiB L1
  /// cache (common practice for cache blocking; not tuned).
  static constexpr Eigen::Index combination_block_length = 256;

#if !defined(NKIT_USE_OPENMP)
  void add_scaled(Scalar alpha, const_view x, state_view y) const { y.noalias() += alpha * x; }
  void combine(Scalar a, const_view x, Scalar b, const_view y, state_view out) const { out.noalias() = a * x + b * y; }
  void scale(Scalar alpha, state_view x) const { x *= alpha; }
  void copy(const_view from, state_view to) const { to = from; }
  void fill(Scalar value, state_view x) const { x.setConstant(value); }
  void multiply(const_view weights, state_view x) const { x.array() *= weights.array(); }
  void divide(const_view weights, state_view x) const { x.array() /= weights.array(); }
  void add_product(const_view weights, const_view x, state_view y) const { y.array() += weights.array() * x.array(); }
#endif

 protected:
  /// Σ x_i² of the local entries (chunked and added in chunk order with OpenMP).
  static Scalar local_sum_of_squares(const_view x) {
#if defined(NKIT_USE_OPENMP)
    if (detail::run_in_parallel(x.size())) {
      return detail::sum_over_chunks<Scalar>(
          x.size(), [&](Eigen::Index begin, Eigen::Index count) { return x.segment(begin, count).squaredNorm(); });
    }
#endif
    return x.squaredNorm();
  }
  /// max |x_i| of the local entries (0 when empty).
  static Scalar local_largest_magnitude(const_view x) { return x.size() > 0 ? x.cwiseAbs().maxCoeff() : Scalar(0); }
  /// Smallest nonzero and largest |x_i| of the local entries.
  static magnitude_range<Scalar> local_magnitudes(const_view x) {
    magnitude_range<Scalar> range;
    range.smallest_nonzero = std::numeric_limits<Scalar>::infinity();
    for (Eigen::Index i = 0; i < x.size(); ++i) {
      const Scalar magnitude = std::abs(x(i));
      if (magnitude > range.largest) range.largest = magnitude;
      if (magnitude > 0 && magnitude < range.smallest_nonzero) range.smallest_nonzero = magnitude;
    }
    if (range.smallest_nonzero == std::numeric_limits<Scalar>::infinity()) range.smallest_nonzero = 0;
    return range;
  }
  /// max_i |x_i| / (absolute + relative·|reference_i|) over the local entries (0 when empty).
  static Scalar local_weighted_max_norm(const_view x, const_view reference, Scalar absolute, Scalar relative) {
    Scalar largest = 0;
    for (Eigen::Index i = 0; i < x.size(); ++i) {
      const Scalar ratio = std::abs(x(i)) / (absolute + relative * std::abs(reference(i)));
      if (!(ratio <= largest)) largest = ratio;  // NaN propagates
    }
    return largest;
  }
  /// Σ (x_i / largest)² of the local entries.
  static Scalar local_scaled_sum_of_squares(const_view x, Scalar largest) { return (x / largest).squaredNorm(); }

#if defined(NKIT_USE_OPENMP)
  /// body(begin, count) over the whole length: in parallel chunks when long
  /// enough, else once, serially.
  template <class Body>
  static void chunked(Eigen::Index length, Body&& body) {
    if (detail::run_in_parallel(length)) {
      detail::for_each_chunk(length, body);
    } else {
      body(Eigen::Index(0), length);
    }
  }
#endif
};

}  // namespace nkit

#endif  // NKIT_CORE_LOCAL_VECTOR_OPERATIONS_HPP
