#ifndef NKIT_GLOBALIZATION_BOUNDS_HPP
#define NKIT_GLOBALIZATION_BOUNDS_HPP

/// \file globalization/bounds.hpp
/// Keeping iterates inside declared bounds lower <= u <= upper: how far a
/// step may go ("fraction to the boundary") and its setting.
///
/// A step u + t·s is shortened to the largest t that respects the bounds
/// times boundary_fraction, so iterates stay strictly inside and a solution
/// lying on a bound is approached geometrically. Rule: common practice in
/// interior-point methods (J. Nocedal & S.J. Wright, Numerical Optimization,
/// 2nd ed. (2006), §19.2 — section not checked).

#include <stdexcept>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

/// How declared bounds on the state are enforced (newton_krylov_solver::set_bounds).
struct bound_settings {
  /// Steps are shortened so that u + step stays within the bounds, moving at
  /// most this fraction of the way to the nearest bound.
  double boundary_fraction = 0.99;

  void validate(std::string_view prefix = "bound_settings") const {
    const std::string p(prefix);
    if (!(boundary_fraction > 0.0 && boundary_fraction < 1.0)) {
      detail::throw_invalid_setting(p + ".boundary_fraction", "in (0, 1)", boundary_fraction);
    }
  }
};

/// The part of set_bounds every solver shares: checks lower <= upper entry by
/// entry (equal sizes, no NaN; ±infinity where a side is unbounded) and keeps
/// copies in `kept_lower` and `kept_upper`. Throws std::invalid_argument and
/// keeps the old bounds when the new ones are rejected. Collective on a
/// distributed space.
template <class Space>
void keep_checked_bounds(const Space& space, typename Space::const_view lower, typename Space::const_view upper,
                         typename Space::vector_type& kept_lower, typename Space::vector_type& kept_upper) {
  if (lower.size() != upper.size()) {
    throw std::invalid_argument("nkit: set_bounds: lower has " + std::to_string(lower.size()) +
                                " entries but upper has " + std::to_string(upper.size()));
  }
  // NaN fails every comparison, so x <= x is false only for NaN.
  if (!space.within_bounds(lower, lower, lower) || !space.within_bounds(upper, upper, upper)) {
    throw std::invalid_argument("nkit: set_bounds: lower or upper contains NaN (use -inf/+inf for no bound)");
  }
  if (!space.within_bounds(lower, lower, upper)) {
    throw std::invalid_argument("nkit: set_bounds: contradictory bounds (lower > upper somewhere)");
  }
  space.allocate_like(kept_lower, lower);
  space.allocate_like(kept_upper, upper);
  space.copy(lower, kept_lower);
  space.copy(upper, kept_upper);
}

/// The fraction of a step to take, given `room`, the largest multiple of the
/// step that stays within the bounds: 1 when the whole step fits, else
/// boundary_fraction · room.
inline double fraction_to_boundary(const bound_settings& settings, double room) {
  return room >= 1.0 ? 1.0 : settings.boundary_fraction * room;
}

}  // namespace nkit

#endif  // NKIT_GLOBALIZATION_BOUNDS_HPP
