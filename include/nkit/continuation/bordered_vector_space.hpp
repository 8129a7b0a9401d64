#ifndef NKIT_CONTINUATION_BORDERED_VECTOR_SPACE_HPP
#define NKIT_CONTINUATION_BORDERED_VECTOR_SPACE_HPP

/// \file continuation/bordered_vector_space.hpp
/// The vector space of the bordered (augmented) systems used by parameter
/// continuation: a state vector of the user's space plus one scalar, the
/// continuation parameter λ.
///
/// The scalar is replicated: on a distributed space every rank holds the same
/// λ, and a reduction is the inner space's reduction of the state part plus
/// the (identical) scalar contribution, so every rank still receives the same
/// value. Element-wise operations act on the local state part and on the
/// scalar. Nothing here allocates except allocate_like(), which forwards to
/// the inner space (and so allocates only when the layout differs).
///
/// There is no fused dot_many(): the basis of bordered vectors is not a
/// contiguous array of inner vectors, so the solvers fall back to separate
/// dots (one reduction each on a distributed space).

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <type_traits>
#include <utility>

#include "../core/residual.hpp"
#include "../core/vector_space.hpp"

namespace nkit {

/// A state of the user's space together with the continuation parameter.
template <class Vector, class Scalar = double>
struct bordered_vector {
  Vector state;
  Scalar parameter = 0;

  /// Local length: the state's local length plus one (the replicated parameter).
  auto size() const { return state.size() + 1; }
};

/// The unwritten-entry check (newton/problem_access.hpp) on the state part;
/// the parameter entry is written by nkit itself.
template <class Vector, class Scalar>
auto find_unwritten_entries(const bordered_vector<Vector, Scalar>& r) -> decltype(find_unwritten_entries(r.state)) {
  return find_unwritten_entries(r.state);
}

/// Vector space over bordered_vector<Space::vector_type>. Holds a copy of the
/// inner space (which may carry a communicator).
template <class Space>
class bordered_vector_space {
  static_assert(is_vector_space_v<Space>, "nkit: bordered_vector_space needs a vector space (vector_space.hpp)");

 public:
  using inner_space_type = Space;
  using scalar_type = typename Space::scalar_type;
  using inner_vector_type = typename Space::vector_type;
  using vector_type = bordered_vector<inner_vector_type, scalar_type>;
  using state_view = vector_type&;
  using const_view = const vector_type&;

  explicit bordered_vector_space(Space space = {}) : m_space(std::move(space)) {}
  const Space& inner() const { return m_space; }

  /// Gives target.state the layout of prototype.state (allocates only when it differs).
  void allocate_like(vector_type& target, const_view prototype) const {
    m_space.allocate_like(target.state, prototype.state);
  }
  /// Same, from a state of the inner space. Not collective.
  void allocate_like_state(vector_type& target, typename Space::const_view prototype) const {
    m_space.allocate_like(target.state, prototype);
  }

  /// Euclidean inner product of the stacked vectors. Collective.
  scalar_type dot(const_view x, const_view y) const {
    return m_space.dot(x.state, y.state) + x.parameter * y.parameter;
  }
  /// Euclidean norm of the stacked vector. Collective.
  scalar_type norm(const_view x) const {
    const scalar_type state_norm = m_space.norm(x.state);
    return std::hypot(state_norm, x.parameter);
  }
  /// Collective (the parameter is replicated, so its test agrees on every rank).
  bool all_finite(const_view x) const { return m_space.all_finite(x.state) && std::isfinite(x.parameter); }
  /// Unknowns of the stacked system: the inner global size plus one. Collective.
  std::int64_t global_size(const_view x) const { return m_space.global_size(x.state) + 1; }

  void add_scaled(scalar_type alpha, const_view x, state_view y) const {
    m_space.add_scaled(alpha, x.state, y.state);
    y.parameter += alpha * x.parameter;
  }
  void combine(scalar_type a, const_view x, scalar_type b, const_view y, state_view out) const {
    const scalar_type parameter = a * x.parameter + b * y.parameter;  // before out may overwrite x or y
    m_space.combine(a, x.state, b, y.state, out.state);
    out.parameter = parameter;
  }
  void scale(scalar_type alpha, state_view x) const {
    m_space.scale(alpha, x.state);
    x.parameter *= alpha;
  }
  void copy(const_view from, state_view to) const {
    m_space.copy(from.state, to.state);
    to.parameter = from.parameter;
  }
  void fill(scalar_type value, state_view x) const {
    m_space.fill(value, x.state);
    x.parameter = value;
  }
  void multiply(const_view weights, state_view x) const {
    m_space.multiply(weights.state, x.state);
    x.parameter *= weights.parameter;
  }
  void divide(const_view weights, state_view x) const {
    m_space.divide(weights.state, x.state);
    x.parameter /= weights.parameter;
  }
  void add_product(const_view weights, const_view x, state_view y) const {
    m_space.add_product(weights.state, x.state, y.state);
    y.parameter += weights.parameter * x.parameter;
  }

  /// Largest t >= 0 with lower <= x + t d <= upper, parameter included. Collective.
  scalar_type maximum_step_to_bounds(const_view x, const_view d, const_view lower, const_view upper) const {
    scalar_type step = m_space.maximum_step_to_bounds(x.state, d.state, lower.state, upper.state);
    if (d.parameter > 0) step = std::min(step, (upper.parameter - x.parameter) / d.parameter);
    if (d.parameter < 0) step = std::min(step, (lower.parameter - x.parameter) / d.parameter);
    return std::max<scalar_type>(step, 0);
  }
  /// Collective.
  bool within_bounds(const_view x, const_view lower, const_view upper) const {
    return m_space.within_bounds(x.state, lower.state, upper.state) && x.parameter >= lower.parameter &&
           x.parameter <= upper.parameter;
  }

  /// The inner space's range combined with the parameter's magnitude. Collective.
  template <class S = Space, class = std::enable_if_t<detail::has_magnitudes<S>::value>>
  magnitude_range<scalar_type> magnitudes(const_view x) const {
    magnitude_range<scalar_type> range = m_space.magnitudes(x.state);
    const scalar_type parameter = std::abs(x.parameter);
    range.largest = std::max(range.largest, parameter);
    if (parameter > 0 && (range.smallest_nonzero == 0 || parameter < range.smallest_nonzero)) {
      range.smallest_nonzero = parameter;
    }
    return range;
  }
  template <class S = Space, class = std::enable_if_t<detail::has_weighted_max_norm<S>::value>>
  scalar_type weighted_max_norm(const_view x, const_view reference, scalar_type absolute, scalar_type relative) const {
    const scalar_type state = m_space.weighted_max_norm(x.state, reference.state, absolute, relative);
    const scalar_type parameter = std::abs(x.parameter) / (absolute + relative * std::abs(reference.parameter));
    return parameter <= state ? state : parameter;
  }

  /// Collective OR, forwarded to the inner space.
  bool any_of(bool local) const { return nkit::any_of(m_space, local); }

 private:
  Space m_space;
};

}  // namespace nkit

#endif  // NKIT_CONTINUATION_BORDERED_VECTOR_SPACE_HPP
