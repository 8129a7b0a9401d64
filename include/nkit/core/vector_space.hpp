#ifndef NKIT_CORE_VECTOR_SPACE_HPP
#define NKIT_CORE_VECTOR_SPACE_HPP

/// \file core/vector_space.hpp
/// The vector-space concept: the only place where nkit's solvers touch vector
/// elements or reduce across processes.
///
/// A vector space `Space` is a stateful object (it may carry a communicator)
/// that provides:
///
///   types
///     scalar_type                 real scalar (double)
///     vector_type                 work vector owned by the solver (local part on MPI)
///     state_view                  mutable view that binds the user's state with zero copy
///     const_view                  read-only view
///   allocation (workspace setup only; never inside an iteration)
///     void allocate_like(vector_type& target, const_view prototype) const
///         gives `target` the layout of `prototype`; allocates only when the
///         layout differs, so repeated solves of one size allocate nothing
///   reductions (collective on a distributed space: every rank must call them,
///   and every rank receives the same value)
///     scalar_type dot(const_view x, const_view y) const        Euclidean inner product
///     scalar_type norm(const_view x) const                      Euclidean norm
///     bool all_finite(const_view x) const                       no NaN or Inf anywhere
///     std::int64_t global_size(const_view x) const              total number of unknowns
///   element-wise (local, no communication)
///     void add_scaled(scalar_type alpha, const_view x, state_view y) const       y += alpha x
///     void combine(scalar_type a, const_view x, scalar_type b, const_view y,
///                  state_view out) const                                          out = a x + b y
///     void scale(scalar_type alpha, state_view x) const                          x *= alpha
///     void copy(const_view from, state_view to) const                            to = from
///     void fill(scalar_type value, state_view x) const                           x = value
///     void multiply(const_view weights, state_view x) const                      x_i *= w_i
///     void divide(const_view weights, state_view x) const                        x_i /= w_i
///     void add_product(const_view weights, const_view x, state_view y) const     y_i += w_i x_i
///   bounds (reductions; used only when bounds are set)
///     scalar_type maximum_step_to_bounds(const_view x, const_view d, const_view lower,
///                                    const_view upper) const
///         largest t >= 0 with lower <= x + t d <= upper (+inf when d never
///         reaches a bound); x must lie within the bounds
///     bool within_bounds(const_view x, const_view lower, const_view upper) const
///         lower_i <= x_i <= upper_i for every i
///   optional (detected at compile time)
///     void dot_many(const vector_type* basis, int count, const_view w,
///                   scalar_type* out) const       out[i] = dot(basis[i], w), one reduction
///                                                 (fallback: a loop over dot)
///     void linear_combinations(const vector_type* const* sources, int count,
///                              const scalar_type* coefficients, int stride,
///                              vector_type* const* targets, int target_count) const
///                                                 targets[c] = Σ_i coefficients[i + c·stride] sources[i],
///                                                 local, in one pass over memory (fallback:
///                                                 fill and add_scaled per target)
///     magnitude_range<scalar_type> magnitudes(const_view x) const
///                                                 smallest nonzero and largest |x_i|
///                                                 (collective; used for the scale-spread
///                                                 warning of a solve's report)
///     scalar_type weighted_max_norm(const_view x, const_view reference,
///                                   scalar_type absolute, scalar_type relative) const
///                                                 max_i |x_i| / (absolute + relative·|reference_i|)
///                                                 (collective; the component-wise
///                                                 convergence test)
///     bool any_of(bool local) const               collective logical OR, so that
///                                                 decisions taken from rank-local facts
///                                                 (wall clock, cancellation flag) agree
///                                                 on every rank (fallback: `local`)
///   vector_type must have size() giving the local length.
///
/// GMRES, the Jacobian-vector products and the Newton driver use only these
/// members; small dense objects (Hessenberg matrix, rotations) are ordinary
/// Eigen objects replicated on every rank.

#include <cstdint>
#include <type_traits>
#include <utility>

namespace nkit {

/// Smallest nonzero and largest magnitude of a vector's entries (both 0 for a zero vector).
template <class Scalar = double>
struct magnitude_range {
  Scalar smallest_nonzero = 0;
  Scalar largest = 0;
  /// largest / smallest_nonzero (1 for a zero vector): how many orders of magnitude the entries span.
  Scalar spread() const { return smallest_nonzero > 0 ? largest / smallest_nonzero : Scalar(1); }
};

namespace detail {

template <class Space, class = void>
struct has_vector_space_members : std::false_type {};

template <class Space>
struct has_vector_space_members<
    Space,
    std::void_t<
        typename Space::scalar_type, typename Space::vector_type, typename Space::state_view,
        typename Space::const_view,
        decltype(std::declval<const Space&>().allocate_like(std::declval<typename Space::vector_type&>(),
                                                            std::declval<const typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().dot(std::declval<const typename Space::vector_type&>(),
                                                  std::declval<const typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().norm(std::declval<const typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().all_finite(std::declval<const typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().global_size(std::declval<const typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().add_scaled(std::declval<typename Space::scalar_type>(),
                                                         std::declval<const typename Space::vector_type&>(),
                                                         std::declval<typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().combine(
            std::declval<typename Space::scalar_type>(), std::declval<const typename Space::vector_type&>(),
            std::declval<typename Space::scalar_type>(), std::declval<const typename Space::vector_type&>(),
            std::declval<typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().scale(std::declval<typename Space::scalar_type>(),
                                                    std::declval<typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().copy(std::declval<const typename Space::vector_type&>(),
                                                   std::declval<typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().fill(std::declval<typename Space::scalar_type>(),
                                                   std::declval<typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().multiply(std::declval<const typename Space::vector_type&>(),
                                                       std::declval<typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().divide(std::declval<const typename Space::vector_type&>(),
                                                     std::declval<typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().add_product(std::declval<const typename Space::vector_type&>(),
                                                          std::declval<const typename Space::vector_type&>(),
                                                          std::declval<typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().maximum_step_to_bounds(
            std::declval<const typename Space::vector_type&>(), std::declval<const typename Space::vector_type&>(),
            std::declval<const typename Space::vector_type&>(), std::declval<const typename Space::vector_type&>())),
        decltype(std::declval<const Space&>().within_bounds(
            std::declval<const typename Space::vector_type&>(), std::declval<const typename Space::vector_type&>(),
            std::declval<const typename Space::vector_type&>()))>> : std::true_type {};

template <class Space, class = void>
struct has_dot_many : std::false_type {};

template <class Space>
struct has_dot_many<
    Space, std::void_t<decltype(std::declval<const Space&>().dot_many(
               std::declval<const typename Space::vector_type*>(), 0,
               std::declval<const typename Space::vector_type&>(), std::declval<typename Space::scalar_type*>()))>>
    : std::true_type {};

template <class Space, class = void>
struct has_linear_combinations : std::false_type {};

template <class Space>
struct has_linear_combinations<Space, std::void_t<decltype(std::declval<const Space&>().linear_combinations(
                                          std::declval<const typename Space::vector_type* const*>(), 0,
                                          std::declval<const typename Space::scalar_type*>(), 0,
                                          std::declval<typename Space::vector_type* const*>(), 0))>> : std::true_type {
};

template <class Space, class = void>
struct has_any_of : std::false_type {};

template <class Space>
struct has_any_of<Space, std::void_t<decltype(std::declval<const Space&>().any_of(true))>> : std::true_type {};

template <class Space, class = void>
struct has_magnitudes : std::false_type {};
template <class Space>
struct has_magnitudes<Space, std::void_t<decltype(std::declval<const Space&>().magnitudes(
                                 std::declval<const typename Space::vector_type&>()))>> : std::true_type {};

template <class Space, class = void>
struct has_weighted_max_norm : std::false_type {};
template <class Space>
struct has_weighted_max_norm<
    Space, std::void_t<decltype(std::declval<const Space&>().weighted_max_norm(
               std::declval<const typename Space::vector_type&>(), std::declval<const typename Space::vector_type&>(),
               std::declval<typename Space::scalar_type>(), std::declval<typename Space::scalar_type>()))>>
    : std::true_type {};

}  // namespace detail

/// True when `Space` offers the optional reductions magnitudes() and weighted_max_norm().
template <class Space>
inline constexpr bool has_magnitude_reductions_v =
    detail::has_magnitudes<Space>::value&& detail::has_weighted_max_norm<Space>::value;

/// True when `Space` provides every required member of the vector-space concept.
template <class Space>
inline constexpr bool is_vector_space_v = detail::has_vector_space_members<Space>::value;

/// out[i] = space.dot(basis[i], w) for i < count: the space's fused version
/// when it has one (one reduction on MPI), otherwise `count` separate dots.
template <class Space>
void dot_many(const Space& space, const typename Space::vector_type* basis, int count,
              const typename Space::vector_type& w, typename Space::scalar_type* out) {
  if constexpr (detail::has_dot_many<Space>::value) {
    space.dot_many(basis, count, w, out);
  } else {
    for (int i = 0; i < count; ++i) out[i] = space.dot(basis[i], w);
  }
}

/// targets[c] = Σ_{i < count} coefficients[i + c·stride] · sources[i] for
/// c < target_count: the space's one-pass version when it has one, otherwise
/// a fill and `count` add_scaled per target. No target may be a source.
template <class Space>
void linear_combinations(const Space& space, const typename Space::vector_type* const* sources, int count,
                         const typename Space::scalar_type* coefficients, int stride,
                         typename Space::vector_type* const* targets, int target_count) {
  if constexpr (detail::has_linear_combinations<Space>::value) {
    space.linear_combinations(sources, count, coefficients, stride, targets, target_count);
  } else {
    for (int c = 0; c < target_count; ++c) {
      space.fill(0, *targets[c]);
      for (int i = 0; i < count; ++i) space.add_scaled(coefficients[i + c * stride], *sources[i], *targets[c]);
    }
  }
}

/// Collective OR of a rank-local fact (the fact itself on a serial space).
template <class Space>
bool any_of(const Space& space, bool local) {
  if constexpr (detail::has_any_of<Space>::value) {
    return space.any_of(local);
  } else {
    static_cast<void>(space);
    return local;
  }
}

}  // namespace nkit

#endif  // NKIT_CORE_VECTOR_SPACE_HPP
