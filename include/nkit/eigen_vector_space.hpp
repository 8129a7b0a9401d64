#ifndef NKIT_EIGEN_VECTOR_SPACE_HPP
#define NKIT_EIGEN_VECTOR_SPACE_HPP

/// \file eigen_vector_space.hpp
/// Default vector space: Eigen column vectors in one address space.
/// The state view is Eigen::Ref, so an Eigen::Map over a user's existing
/// array binds with zero copy.

#include <Eigen/Core>
#include <cstdint>

namespace nkit {

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
};

}  // namespace nkit

#endif  // NKIT_EIGEN_VECTOR_SPACE_HPP
