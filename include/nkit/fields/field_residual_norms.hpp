#ifndef NKIT_FIELDS_FIELD_RESIDUAL_NORMS_HPP
#define NKIT_FIELDS_FIELD_RESIDUAL_NORMS_HPP

/// \file fields/field_residual_norms.hpp
/// Euclidean norm of each field's part of a residual, ‖R_f‖₂, and the
/// detection of a problem's optional `field_layout()` member.
///
/// The fields partition the unknowns, so Σ_f ‖R_f‖² = ‖R‖² (up to rounding).
/// Each sum runs in increasing global index order: the result is
/// deterministic. The overload that writes into a caller's vector allocates
/// nothing once that vector has field_count() entries.

#include <Eigen/Core>
#include <cmath>
#include <type_traits>
#include <utility>
#include <vector>

#include "field_layout.hpp"

namespace nkit {

/// norms[f] = ‖r restricted to field f‖₂, f = 0 .. field_count() − 1.
/// Throws std::invalid_argument when r does not have layout.size() entries.
inline void field_residual_norms(const field_layout& layout, const Eigen::VectorXd& r, std::vector<double>& norms) {
  layout.require_size(r.size(), "field_residual_norms: the residual");
  const auto fields = static_cast<std::size_t>(layout.field_count());
  norms.assign(fields, 0.0);  // no allocation when the capacity suffices
  if (layout.ordering() == field_ordering::contiguous_by_field) {
    for (std::size_t f = 0; f < fields; ++f) {
      const Eigen::Index first = layout.contiguous_offset(static_cast<int>(f));
      const Eigen::Index last = first + layout.field_size(static_cast<int>(f));
      double sum = 0.0;
      for (Eigen::Index i = first; i < last; ++i) sum += r(i) * r(i);
      norms[f] = sum;
    }
  } else {
    const int per_cell = layout.unknowns_per_cell_of_all_fields();
    for (Eigen::Index cell = 0; cell < layout.cells(); ++cell) {
      const double* values = r.data() + cell * per_cell;
      for (std::size_t f = 0; f < fields; ++f) {
        const int first = layout.offset_in_cell(static_cast<int>(f));
        const int last = first + layout.unknowns_per_cell(static_cast<int>(f));
        for (int k = first; k < last; ++k) norms[f] += values[k] * values[k];
      }
    }
  }
  for (double& norm : norms) norm = std::sqrt(norm);
}

/// As above, returning the norms.
inline std::vector<double> field_residual_norms(const field_layout& layout, const Eigen::VectorXd& r) {
  std::vector<double> norms;
  field_residual_norms(layout, r, norms);
  return norms;
}

namespace detail {
template <class Problem, class = void>
struct has_field_layout : std::false_type {};
template <class Problem>
struct has_field_layout<Problem, std::void_t<decltype(std::declval<const Problem&>().field_layout())>>
    : std::bool_constant<
          std::is_same_v<decltype(std::declval<const Problem&>().field_layout()), const nkit::field_layout&> ||
          std::is_same_v<decltype(std::declval<const Problem&>().field_layout()), nkit::field_layout&>> {};
}  // namespace detail

/// True when `Problem` declares its fields with a member
///   const nkit::field_layout& field_layout() const
/// returning a reference to a layout that lives as long as the problem (the
/// Newton driver keeps a pointer to it during a solve). Inside the class,
/// name the type nkit::field_layout: the member function hides it.
template <class Problem>
inline constexpr bool has_field_layout_v = detail::has_field_layout<std::remove_reference_t<Problem>>::value;

}  // namespace nkit

#endif  // NKIT_FIELDS_FIELD_RESIDUAL_NORMS_HPP
