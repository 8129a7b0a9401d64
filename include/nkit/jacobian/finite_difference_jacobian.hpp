#ifndef NKIT_JACOBIAN_FINITE_DIFFERENCE_JACOBIAN_HPP
#define NKIT_JACOBIAN_FINITE_DIFFERENCE_JACOBIAN_HPP

/// \file jacobian/finite_difference_jacobian.hpp
/// Matrix-free Jacobian-vector products by differences of the residual.
///
/// Forward difference (first order):  R'(u)v ≈ [R(u + δv) − R(u)] / δ
/// Central difference (second order): R'(u)v ≈ [R(u + δv) − R(u − δv)] / (2δ)
///
/// Step size, forward: δ = sqrt((1 + ‖u‖) ε) / ‖v‖, the choice of
/// M. Pernice & H.F. Walker, "NITSOL: a Newton iterative solver for nonlinear
/// systems", SIAM J. Sci. Comput. 19(1) (1998) 302–318 (formula not checked against the paper;
/// also listed in D.A. Knoll & D.E. Keyes, J. Comput. Phys. 193 (2004)
/// 357–397, §2.2). ε is the relative noise of the residual, machine epsilon
/// by default. Central: δ = cbrt((1 + ‖u‖) ε) / ‖v‖, which balances the
/// O(δ²) truncation error against the O(ε/δ) rounding error (common practice).
/// All norms are Euclidean and are reductions of the vector space.

#include <cmath>
#include <limits>
#include <string>
#include <string_view>

#include "../core/eigen_vector_space.hpp"
#include "../detail/checks.hpp"

namespace nkit {

enum class difference_formula { forward, central };

struct jacobian_settings {
  /// Forward costs one residual evaluation per product, central two.
  difference_formula formula = difference_formula::forward;
  /// Relative error of a residual evaluation; 0 means machine epsilon.
  /// Raise it when the residual is noisy (e.g. contains an inner iteration).
  double residual_relative_noise = 0.0;

  void validate(std::string_view prefix = "jacobian_settings") const {
    const std::string p(prefix);
    detail::require_enumerator(p + ".formula", formula, difference_formula::central, "forward, central");
    if (!(residual_relative_noise >= 0.0 && residual_relative_noise < 1.0)) {
      detail::throw_invalid_setting(p + ".residual_relative_noise", "in [0, 1)", residual_relative_noise);
    }
  }
};

/// Finite-difference J·v about a linearisation point (u, R(u)).
/// Workspace: one vector (forward) or two (central), allocated by
/// allocate_like() and reused.
template <class Space = eigen_vector_space<double>>
class finite_difference_jacobian {
 public:
  using vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;

  explicit finite_difference_jacobian(jacobian_settings settings = {}, Space space = {})
      : m_settings(settings), m_space(std::move(space)) {
    m_settings.validate();
  }

  void configure(const jacobian_settings& settings) {
    settings.validate();
    m_settings = settings;
  }
  const jacobian_settings& settings() const { return m_settings; }

  void allocate_like(const vector_type& prototype) {
    m_space.allocate_like(m_shifted_state, prototype);
    if (m_settings.formula == difference_formula::central) m_space.allocate_like(m_backward_residual, prototype);
  }

  /// Sets the point of linearisation. `u` and `residual_at_u` are referenced,
  /// not copied: they must stay unchanged while apply() is used. Collective.
  void linearize_at(const vector_type& u, const vector_type& residual_at_u) {
    m_state = &u;
    m_residual = &residual_at_u;
    m_state_norm = m_space.norm(u);
  }

  /// ‖u‖ at the linearisation point (set by linearize_at()).
  scalar_type state_norm() const { return m_state_norm; }

  /// Residual evaluations one product costs.
  int evaluations_per_product() const { return m_settings.formula == difference_formula::central ? 2 : 1; }

  /// The difference step δ used for a direction of norm `direction_norm`.
  scalar_type step_for(scalar_type direction_norm) const {
    const scalar_type noise = m_settings.residual_relative_noise > 0.0
                                  ? static_cast<scalar_type>(m_settings.residual_relative_noise)
                                  : std::numeric_limits<scalar_type>::epsilon();
    const scalar_type scaled = (1 + m_state_norm) * noise;
    const scalar_type numerator =
        m_settings.formula == difference_formula::central ? std::cbrt(scaled) : std::sqrt(scaled);
    return numerator / direction_norm;
  }

  /// jv ≈ R'(u) v with the automatic step. `evaluate(x, r)` must write R(x).
  /// A direction containing NaN/Inf (e.g. from a failing preconditioner)
  /// gives jv = NaN without evaluating the residual at a non-finite state.
  template <class Evaluate>
  void apply(Evaluate& evaluate, const vector_type& v, vector_type& jv) {
    const scalar_type direction_norm = m_space.norm(v);
    if (direction_norm == 0) {
      m_space.fill(0, jv);
      return;
    }
    if (!std::isfinite(direction_norm)) {
      m_space.fill(std::numeric_limits<scalar_type>::quiet_NaN(), jv);
      return;
    }
    apply_with_step(evaluate, v, step_for(direction_norm), jv);
  }

  /// jv ≈ R'(u) v with a given step δ along v (used to verify the error order).
  template <class Evaluate>
  void apply_with_step(Evaluate& evaluate, const vector_type& v, scalar_type step, vector_type& jv) {
    NKIT_ASSERT(m_state != nullptr, "linearize_at() must be called before apply()");
    m_space.combine(1, *m_state, step, v, m_shifted_state);
    evaluate(static_cast<const vector_type&>(m_shifted_state), jv);
    if (m_settings.formula == difference_formula::forward) {
      m_space.combine(1 / step, jv, -1 / step, *m_residual, jv);
      return;
    }
    m_space.combine(1, *m_state, -step, v, m_shifted_state);
    evaluate(static_cast<const vector_type&>(m_shifted_state), m_backward_residual);
    m_space.combine(1 / (2 * step), jv, -1 / (2 * step), m_backward_residual, jv);
  }

  std::size_t workspace_bytes() const {
    return sizeof(scalar_type) * static_cast<std::size_t>(m_shifted_state.size() + m_backward_residual.size());
  }

 private:
  jacobian_settings m_settings;
  Space m_space;
  const vector_type* m_state = nullptr;
  const vector_type* m_residual = nullptr;
  scalar_type m_state_norm = 0;
  vector_type m_shifted_state;
  vector_type m_backward_residual;
};

}  // namespace nkit

#endif  // NKIT_JACOBIAN_FINITE_DIFFERENCE_JACOBIAN_HPP
