#ifndef NKIT_FIXED_POINT_FIXED_POINT_RESIDUAL_HPP
#define NKIT_FIXED_POINT_FIXED_POINT_RESIDUAL_HPP

/// \file fixed_point/fixed_point_residual.hpp
/// The fixed-point adapter: a user's map G (one pass of an existing
/// fixed-point loop, u ← G(u)) seen as the residual R(u) = u − G(u), so that
/// newton_krylov_solver solves the fixed-point problem by Newton–Krylov.
///
/// Map concept: `map(const vector_type& u, vector_type& g)` writes G(u) into
/// `g`, which nkit passes already sized like `u` (the same signature as a
/// residual). Optional: `bool is_admissible(const vector_type& u)`, forwarded
/// unchanged (see newton_krylov_solver.hpp).
///
/// Which nonlinear preconditioning. P.R. Brune, M.G. Knepley, B.F. Smith &
/// X. Tu, "Composing scalable nonlinear algebraic solvers", SIAM Review 57
/// (2015) 535–565, distinguish left nonlinear preconditioning (the outer
/// method solves x − M(x) = 0, M one pass of an inner solver) from right
/// nonlinear preconditioning (the outer method works on F(M(y)) = 0 and
/// applies M before each of its own updates). This adapter is the LEFT form,
/// R(u) = u − G(u), because
///   * it needs only G: the user of a fixed-point loop may have no residual
///     F of the original equations in code at all (the right form needs F);
///   * x − G(x) is an ordinary residual, so everything nkit offers for
///     residuals holds unchanged: bounds and admissibility, budgets (each
///     residual evaluation is one application of G), monitors, the report,
///     the caller-driven loop;
///   * its Jacobian is I − G'(u): when G already contracts (as a working
///     Picard loop does), the eigenvalues cluster near 1 and unpreconditioned
///     GMRES needs few iterations — the old solver acts as the preconditioner.
///
/// Cost: one G per residual evaluation, so one G per finite-difference J·v
/// (forward differences, the default) and one per line-search trial.
/// Convergence is measured on ‖u − G(u)‖ (the change one more pass of the old
/// loop would make), not on the residual of the original equations: check
/// that one yourself when you have it. A G containing an inner iterative
/// solve is noisy at the level of that solve's tolerance: raise
/// newton_settings.jacobian.residual_relative_noise to match (the difference
/// step grows like its square root).
///
/// Allocation: none; G writes into the solver's vector and R is formed in place.

#include <type_traits>
#include <utility>

#include "../core/eigen_vector_space.hpp"
#include "../core/vector_space.hpp"

namespace nkit {

namespace detail {
template <class Map, class Vector, class = void>
struct map_has_is_admissible : std::false_type {};
template <class Map, class Vector>
struct map_has_is_admissible<
    Map, Vector, std::void_t<decltype(bool(std::declval<Map&>().is_admissible(std::declval<const Vector&>())))>>
    : std::true_type {};
}  // namespace detail

/// True when `Map` can be called as map(const Vector& u, Vector& g).
template <class Map, class Vector>
inline constexpr bool is_fixed_point_map_v = std::is_invocable_v<std::remove_reference_t<Map>&, const Vector&, Vector&>;

/// R(u) = u − G(u) for a map G held by reference (the map must outlive the
/// adapter) or by value (pass an rvalue, e.g. a lambda). The space does the
/// vector arithmetic (one combine per evaluation).
template <class Map, class Space = eigen_vector_space<double>>
class fixed_point_residual {
 public:
  using vector_type = typename Space::vector_type;
  static_assert(is_fixed_point_map_v<Map, vector_type>,
                "nkit: the fixed-point map must be callable as map(const vector_type& u, vector_type& g)");

  explicit fixed_point_residual(Map map, Space space = {}) : m_map(std::forward<Map>(map)), m_space(std::move(space)) {}

  /// r = u − G(u). G writes into r (already sized like u); no allocation.
  void operator()(const vector_type& u, vector_type& r) {
    const auto expected = u.size();
    m_map(u, r);
    ++m_map_evaluations;
    if (r.size() != expected) return;  // the solver reports the resize with its own message
    m_space.combine(1, u, -1, r, r);
  }

  /// Physical admissibility, when the map declares it (forwarded unchanged).
  template <class M = Map,
            std::enable_if_t<detail::map_has_is_admissible<std::remove_reference_t<M>, vector_type>::value, int> = 0>
  bool is_admissible(const vector_type& u) {
    return m_map.is_admissible(u);
  }

  /// Applications of G through this adapter since construction (or reset).
  long long map_evaluations() const { return m_map_evaluations; }
  void reset_map_evaluations() { m_map_evaluations = 0; }

  std::remove_reference_t<Map>& map() { return m_map; }

 private:
  Map m_map;
  Space m_space;
  long long m_map_evaluations = 0;
};

/// Deduction: an lvalue map is held by reference, an rvalue by value.
template <class Map>
fixed_point_residual(Map&&) -> fixed_point_residual<Map>;

/// Makes the adapter; `fixed_point_residual_of(map)` keeps a reference to an
/// lvalue `map` and moves an rvalue into the adapter.
template <class Space = eigen_vector_space<double>, class Map>
fixed_point_residual<Map, Space> fixed_point_residual_of(Map&& map, Space space = {}) {
  return fixed_point_residual<Map, Space>(std::forward<Map>(map), std::move(space));
}

}  // namespace nkit

#endif  // NKIT_FIXED_POINT_FIXED_POINT_RESIDUAL_HPP
