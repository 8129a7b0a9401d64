#ifndef NKIT_CORE_EIGEN_VECTOR_SPACE_HPP
#define NKIT_CORE_EIGEN_VECTOR_SPACE_HPP

/// \file core/eigen_vector_space.hpp
/// Default vector space: Eigen column vectors in one address space.
/// The state view is Eigen::Ref, so an Eigen::Map over a user's existing
/// array binds with zero copy.

#include <Eigen/Core>
#include <cmath>
#include <cstdint>
#include <limits>

#include "../detail/parallel_loops.hpp"
#include "local_vector_operations.hpp"

namespace nkit {

/// Vector space over Eigen::Matrix<Scalar, Dynamic, 1>. Serial: its
/// "reductions" are plain local reductions. Stateless and cheap to copy.
/// Element-wise members come from local_vector_operations (with the OpenMP
/// path when NKIT_USE_OPENMP is defined). With OpenMP, dot, norm and
/// all_finite on long vectors add chunk results in chunk order, so they are
/// reproducible for a given requested thread count whatever team size the
/// runtime grants (detail/parallel_loops.hpp); maximum_step_to_bounds and
/// within_bounds stay serial (once per Newton step).
template <class Scalar = double>
class eigen_vector_space : public local_vector_operations<Scalar> {
  using base = local_vector_operations<Scalar>;

 public:
  using typename base::const_view;
  using typename base::scalar_type;
  using typename base::state_view;
  using typename base::vector_type;

  Scalar dot(const_view x, const_view y) const {
#if defined(NKIT_USE_OPENMP)
    if (detail::run_in_parallel(x.size())) {
      return detail::sum_over_chunks<Scalar>(x.size(), [&](Eigen::Index begin, Eigen::Index count) {
        return x.segment(begin, count).dot(y.segment(begin, count));
      });
    }
#endif
    return x.dot(y);
  }
  /// Euclidean norm; exact in range even when Σ x_i² overflows or underflows
  /// (then recomputed from scaled entries: a second pass, rare).
  Scalar norm(const_view x) const {
    using std::sqrt;
    const Scalar sum = base::local_sum_of_squares(x);
    if (!detail::sum_of_squares_out_of_range(sum)) return sqrt(sum);
    const Scalar largest = base::local_largest_magnitude(x);
    return detail::rescaled_norm(largest, largest > Scalar(0) ? base::local_scaled_sum_of_squares(x, largest) : 0,
                                 [](Scalar local) { return local; });
  }
  bool all_finite(const_view x) const {
#if defined(NKIT_USE_OPENMP)
    if (detail::run_in_parallel(x.size())) {
      return detail::all_chunks(
          x.size(), [&](Eigen::Index begin, Eigen::Index count) { return x.segment(begin, count).allFinite(); });
    }
#endif
    return x.allFinite();
  }
  std::int64_t global_size(const_view x) const { return static_cast<std::int64_t>(x.size()); }
  magnitude_range<Scalar> magnitudes(const_view x) const { return base::local_magnitudes(x); }
  Scalar weighted_max_norm(const_view x, const_view reference, Scalar absolute, Scalar relative) const {
    return base::local_weighted_max_norm(x, reference, absolute, relative);
  }

  /// Largest t >= 0 with lower <= x + t d <= upper (+inf if unbounded along d).
  Scalar maximum_step_to_bounds(const_view x, const_view d, const_view lower, const_view upper) const {
    return detail::local_maximum_step_to_bounds(x, d, lower, upper);
  }
  bool within_bounds(const_view x, const_view lower, const_view upper) const {
    return (x.array() >= lower.array()).all() && (x.array() <= upper.array()).all();
  }
};

}  // namespace nkit

#endif  // NKIT_CORE_EIGEN_VECTOR_SPACE_HPP
