#ifndef NKIT_EIGEN_VECTOR_SPACE_HPP
#define NKIT_EIGEN_VECTOR_SPACE_HPP

/// \file eigen_vector_space.hpp
/// Default vector space: Eigen column vectors in one address space.
/// The state view is Eigen::Ref, so an Eigen::Map over a user's existing
/// array binds with zero copy.

#include <Eigen/Core>
#include <cstdint>
#include <limits>

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

  Scalar dot(const_view x, const_view y) const { return x.dot(y); }
  Scalar norm(const_view x) const { return x.norm(); }
  bool all_finite(const_view x) const { return x.allFinite(); }
  std::int64_t global_size(const_view x) const { return static_cast<std::int64_t>(x.size()); }

  void add_scaled(Scalar alpha, const_view x, state_view y) const { y.noalias() += alpha * x; }
  void combine(Scalar a, const_view x, Scalar b, const_view y, state_view out) const { out.noalias() = a * x + b * y; }
  void scale(Scalar alpha, state_view x) const { x *= alpha; }
  void copy(const_view from, state_view to) const { to = from; }
  void fill(Scalar value, state_view x) const { x.setConstant(value); }
  void multiply(const_view weights, state_view x) const { x.array() *= weights.array(); }
  void divide(const_view weights, state_view x) const { x.array() /= weights.array(); }
  void add_product(const_view weights, const_view x, state_view y) const { y.array() += weights.array() * x.array(); }

  /// Largest t >= 0 with lower <= x + t d <= upper (+inf if unbounded along d).
  Scalar max_step_to_bounds(const_view x, const_view d, const_view lower, const_view upper) const {
    return detail::local_max_step_to_bounds(x, d, lower, upper);
  }
  bool within_bounds(const_view x, const_view lower, const_view upper) const {
    return (x.array() >= lower.array()).all() && (x.array() <= upper.array()).all();
  }
};

}  // namespace nkit

#endif  // NKIT_EIGEN_VECTOR_SPACE_HPP
