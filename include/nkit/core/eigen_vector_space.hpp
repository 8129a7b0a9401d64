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

namespace nkit {

namespace detail {
/// Ratio test for bounds on local data: min over i of the distance to the bound
/// d_i points at, divided by |d_i| (+inf when no d_i points at a finite bound).
template <class X, class D, class L, class U>
typename X::Scalar local_max_step_to_bounds(const X& x, const D& d, const L& lower, const U& upper) {
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
}  // namespace detail

/// Vector space over Eigen::Matrix<Scalar, Dynamic, 1>. Serial: its
/// "reductions" are plain local reductions. Stateless and cheap to copy.
/// With NKIT_USE_OPENMP defined (CMake target nkit::openmp), members on
/// vectors of at least detail::parallel_length_threshold entries run on the
/// OpenMP team in omp_get_max_threads() contiguous chunks; reductions then
/// add chunk results in chunk order, so they are reproducible for a given
/// requested thread count, whatever team size the runtime grants
/// (detail/parallel_loops.hpp). max_step_to_bounds and within_bounds stay
/// serial (once per Newton step). Without NKIT_USE_OPENMP the code is the
/// serial Eigen expressions, unchanged.
template <class Scalar = double>
class eigen_vector_space {
 public:
  using scalar_type = Scalar;
  using vector_type = Eigen::Matrix<Scalar, Eigen::Dynamic, 1>;
  using state_view = Eigen::Ref<vector_type>;
  using const_view = Eigen::Ref<const vector_type>;

  /// Resizes `target` to the size of `prototype`; allocates only when the size differs.
  void allocate_like(vector_type& target, const_view prototype) const {
    if (target.size() != prototype.size()) target.resize(prototype.size());
  }

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
  Scalar norm(const_view x) const {
#if defined(NKIT_USE_OPENMP)
    if (detail::run_in_parallel(x.size())) {
      using std::sqrt;
      return sqrt(detail::sum_over_chunks<Scalar>(
          x.size(), [&](Eigen::Index begin, Eigen::Index count) { return x.segment(begin, count).squaredNorm(); }));
    }
#endif
    return x.norm();
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

#if defined(NKIT_USE_OPENMP)
  // Element-wise members: one contiguous chunk per thread for long vectors.
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
#else
  void add_scaled(Scalar alpha, const_view x, state_view y) const { y.noalias() += alpha * x; }
  void combine(Scalar a, const_view x, Scalar b, const_view y, state_view out) const { out.noalias() = a * x + b * y; }
  void scale(Scalar alpha, state_view x) const { x *= alpha; }
  void copy(const_view from, state_view to) const { to = from; }
  void fill(Scalar value, state_view x) const { x.setConstant(value); }
  void multiply(const_view weights, state_view x) const { x.array() *= weights.array(); }
  void divide(const_view weights, state_view x) const { x.array() /= weights.array(); }
  void add_product(const_view weights, const_view x, state_view y) const { y.array() += weights.array() * x.array(); }
#endif

  /// Largest t >= 0 with lower <= x + t d <= upper (+inf if unbounded along d).
  Scalar max_step_to_bounds(const_view x, const_view d, const_view lower, const_view upper) const {
    return detail::local_max_step_to_bounds(x, d, lower, upper);
  }
  bool within_bounds(const_view x, const_view lower, const_view upper) const {
    return (x.array() >= lower.array()).all() && (x.array() <= upper.array()).all();
  }

#if defined(NKIT_USE_OPENMP)
 private:
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

#endif  // NKIT_CORE_EIGEN_VECTOR_SPACE_HPP
