#ifndef NKIT_CORE_RESIDUAL_HPP
#define NKIT_CORE_RESIDUAL_HPP

/// \file core/residual.hpp
/// The residual (problem) concept and the optional capabilities nkit detects.
///
/// Required: `residual(const vector_type& u, vector_type& r)` writes R(u) into
/// `r`, which nkit passes already sized like `u`. The residual must not resize
/// `r`; nkit checks the size after every call.
///
/// Optional members, detected at compile time (zero cost when absent):
///   void jacobian_product(const vector_type& u, const vector_type& v, vector_type& jv)
///       jv = R'(u) v exactly (analytic or automatic differentiation); when
///       absent nkit uses finite differences of the residual.
///   void assemble_jacobian(const vector_type& u, Eigen::SparseMatrix<double, Options>& jacobian)
///       the assembled sparse Jacobian R'(u), for preconditioners that need
///       one (see preconditioner.hpp and sparse_jacobian.hpp).
///   bool is_admissible(const vector_type& u)
///       physical admissibility (e.g. positive densities); the residual is
///       never evaluated where it returns false.
///   void pseudo_time_weights(const vector_type& u, vector_type& weights)
///       the diagonal W of pseudo-transient continuation
///       (globalization/pseudo_transient.hpp).
///   const nkit::field_layout& field_layout() const
///       the problem's named fields (fields/field_layout.hpp, detected by
///       has_field_layout_v in fields/field_residual_norms.hpp): the report
///       then gives ‖R_f‖ per field, and field-split preconditioners
///       (preconditioners/field_split.hpp) can use the same layout.

#include <Eigen/Core>
#include <cstdint>
#include <cstring>
#include <type_traits>
#include <utility>

namespace nkit {

namespace detail {

template <class Residual, class Vector, class = void>
struct is_residual_impl : std::false_type {};

template <class Residual, class Vector>
struct is_residual_impl<
    Residual, Vector,
    std::void_t<decltype(std::declval<Residual&>()(std::declval<const Vector&>(), std::declval<Vector&>()))>>
    : std::true_type {};

template <class Residual, class Vector, class = void>
struct has_jacobian_product_impl : std::false_type {};

template <class Residual, class Vector>
struct has_jacobian_product_impl<
    Residual, Vector,
    std::void_t<decltype(std::declval<Residual&>().jacobian_product(
        std::declval<const Vector&>(), std::declval<const Vector&>(), std::declval<Vector&>()))>> : std::true_type {};

template <class Problem, class Vector, class = void>
struct has_is_admissible : std::false_type {};
template <class Problem, class Vector>
struct has_is_admissible<
    Problem, Vector, std::void_t<decltype(bool(std::declval<Problem&>().is_admissible(std::declval<const Vector&>())))>>
    : std::true_type {};

template <class Problem, class Vector, class = void>
struct has_pseudo_time_weights : std::false_type {};
template <class Problem, class Vector>
struct has_pseudo_time_weights<Problem, Vector,
                               std::void_t<decltype(std::declval<Problem&>().pseudo_time_weights(
                                   std::declval<const Vector&>(), std::declval<Vector&>()))>> : std::true_type {};

}  // namespace detail

/// Entries of a residual output still holding the marker of an unwritten-entry
/// check (newton_settings::check_unwritten_residual_entries (newton/newton_settings.hpp)).
struct unwritten_entries {
  std::int64_t count = 0;   ///< entries still holding the marker (local to this rank)
  std::int64_t first = -1;  ///< local index of the first one (-1: none)
};

/// The marker written into r before a checked residual call: a quiet NaN
/// whose payload spells "NKIT" (0x4E4B4954). Arithmetic never produces it; a
/// residual that accumulates into r without clearing it propagates it.
inline double unwritten_entry_marker() {
  constexpr std::uint64_t bits = 0x7FF800004E4B4954ULL;
  double value;
  std::memcpy(&value, &bits, sizeof value);
  return value;
}

/// Finds the entries of `r` that still hold unwritten_entry_marker(). An
/// overload for another vector type (found by argument-dependent lookup)
/// enables the check for a vector space built on it; without one the check
/// is skipped for that type.
template <class Derived>
unwritten_entries find_unwritten_entries(const Eigen::DenseBase<Derived>& r) {
  unwritten_entries found;
  if constexpr (std::is_same_v<typename Derived::Scalar, double>) {
    const double marker = unwritten_entry_marker();
    for (Eigen::Index i = 0; i < r.size(); ++i) {
      const double value = r.derived().coeff(i);
      if (value != value && std::memcmp(&value, &marker, sizeof value) == 0) {
        if (found.count++ == 0) found.first = static_cast<std::int64_t>(i);
      }
    }
  }
  return found;
}

namespace detail {
template <class Vector, class = void>
struct can_find_unwritten_entries : std::false_type {};
template <class Vector>
struct can_find_unwritten_entries<Vector, std::void_t<decltype(find_unwritten_entries(std::declval<const Vector&>()))>>
    : std::true_type {};
}  // namespace detail

/// True when `Residual` can be called as residual(const Vector& u, Vector& r).
template <class Residual, class Vector>
inline constexpr bool is_residual_v = detail::is_residual_impl<std::remove_reference_t<Residual>, Vector>::value;

/// True when `Residual` has jacobian_product(u, v, jv).
template <class Residual, class Vector>
inline constexpr bool has_jacobian_product_v =
    detail::has_jacobian_product_impl<std::remove_reference_t<Residual>, Vector>::value;

}  // namespace nkit

#endif  // NKIT_CORE_RESIDUAL_HPP
