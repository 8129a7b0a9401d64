#ifndef NKIT_CONTINUATION_CONTINUATION_TANGENT_HPP
#define NKIT_CONTINUATION_CONTINUATION_TANGENT_HPP

/// \file continuation/continuation_tangent.hpp
/// Unit tangents of a solution branch of R(u, λ) = 0, for continuation.hpp.
///
/// At a point x on the branch, GMRES solves the bordered tangent system
///   [ R_u   R_λ ] t = [ 0 ]
///   [ σc_uᵀ σc_λ]     [ σ ]
/// with matrix-free products of the bordered residual's Jacobian taken by the
/// same problem access as the Newton driver's (newton/problem_access.hpp):
/// its jacobian_product() when present, else forward differences of the
/// bordered residual. (c_u, c_λ) is the
/// gradient of the residual's current constraint: the previous tangent
/// (θ t_u, t_λ) in pseudo-arclength, so ⟨t_prev, t⟩ = 1 and the orientation
/// is kept through folds; or (0, 1) (λ fixed), which gives R_u v = −R_λ,
/// t = (v, 1), so R_λ enters as a finite difference in λ inside the
/// differences of R along (v, μ). σ = ‖R_λ‖ (one extra product, along (0, 1))
/// weighs the constraint row like R's rows, so that the relative GMRES
/// tolerance means the same for both blocks; the residual keeps σ for the
/// next corrector solve. The result is scaled to unit length in the metric
/// ‖t‖² = θ‖t_u‖² + t_λ².
///
/// Workspace: three bordered vectors, the GMRES basis and the problem
/// access's difference workspace, allocated by allocate_like() and reused.

#include <cmath>
#include <cstdint>
#include <utility>

#include "../core/preconditioner.hpp"
#include "../core/residual.hpp"
#include "../krylov/gmres.hpp"
#include "../newton/newton_settings.hpp"
#include "../newton/problem_access.hpp"
#include "../report/phase_ledger.hpp"
#include "../report/report.hpp"
#include "bordered_system.hpp"
#include "bordered_vector_space.hpp"

namespace nkit {

struct tangent_solve_result {
  bool usable = false;                    ///< accepted (see tangent_solver::solve)
  int linear_iterations = 0;              ///< GMRES iterations
  std::int64_t residual_evaluations = 0;  ///< calls of R, including preconditioner setup
  bool preconditioner_set_up = false;     ///< the preconditioner was set up here
};

template <class Space>
class tangent_solver {
 public:
  using bordered_space_type = bordered_vector_space<Space>;
  using bordered_type = typename bordered_space_type::vector_type;
  using scalar_type = typename Space::scalar_type;

  tangent_solver(const gmres_settings& linear, const jacobian_settings& jacobian, const bordered_space_type& space)
      : m_space(space), m_gmres(linear, space), m_access(access_settings(jacobian), space) {}

  void configure(const gmres_settings& linear, const jacobian_settings& jacobian) {
    m_gmres.configure(linear);
    m_access.configure(access_settings(jacobian));
  }
  void allocate_like(typename Space::const_view prototype) {
    for (bordered_type* v : {&m_base_residual, &m_right_hand_side, &m_product}) {
      m_space.allocate_like_state(*v, prototype);
    }
  }

  /// Solves for the tangent at `at`; `tangent` holds the initial guess (or
  /// anything, with zero_guess). The result is usable when GMRES reached
  /// `relative_tolerance`, or stopped (finite-difference noise floor,
  /// iteration limit) below `residual_limit`; it is then scaled to unit
  /// length and, when `orientation` is ±1, oriented so t_λ has that sign.
  /// With `set_up_preconditioner`, the preconditioner is set up at `at`
  /// first. Collective.
  template <class Residual, class Preconditioner>
  tangent_solve_result solve(Residual& residual, const bordered_type& at, bordered_type& tangent, bool zero_guess,
                             Preconditioner& preconditioner, bool set_up_preconditioner, double relative_tolerance,
                             double residual_limit, scalar_type state_weight, scalar_type orientation) {
    tangent_solve_result result;
    const std::int64_t extra_before = residual.extra_evaluations();
    constexpr bool exact = has_jacobian_product_v<Residual, bordered_type>;
    m_ledger.begin(m_counts, 0);
    m_access.template start<Residual>(m_ledger, m_base_residual);
    if (!exact || set_up_preconditioner) {
      m_access.evaluate(residual, at, m_base_residual, evaluation_purpose::state);
    }
    if constexpr (has_setup_v<Preconditioner, bordered_space_type>) {
      if (set_up_preconditioner) {
        result.preconditioner_set_up = true;
        if (set_up(residual, at, preconditioner) == setup_status::failed) {
          result.residual_evaluations = m_counts.residual_evaluations + residual.extra_evaluations() - extra_before;
          return result;
        }
      }
    }
    m_access.linearize_at(at, m_base_residual);
    auto op = m_access.jacobian(residual);
    m_space.fill(0, m_right_hand_side);
    m_right_hand_side.parameter = 1;
    op.apply(m_right_hand_side, m_product);  // (R_λ, σ_old c_λ)
    scalar_type scale = m_space.inner().norm(m_product.state);
    if (!(scale > 0) || !std::isfinite(scale)) scale = 1;
    residual.scale_constraint(scale);
    if constexpr (!exact) m_base_residual.parameter = residual.constraint(at);
    m_right_hand_side.parameter = scale;

    const linear_solve_result linear = m_gmres.solve(op, preconditioner, m_right_hand_side, tangent, relative_tolerance,
                                                     zero_guess ? initial_guess::zero : initial_guess::given);
    result.linear_iterations = linear.iterations;
    result.residual_evaluations = m_counts.residual_evaluations + residual.extra_evaluations() - extra_before;
    const scalar_type state_norm = m_space.inner().norm(tangent.state);
    const scalar_type length =
        std::sqrt(state_weight * state_norm * state_norm + tangent.parameter * tangent.parameter);
    result.usable =
        (linear.converged() || linear.relative_residual() <= residual_limit) && length > 0 && std::isfinite(length);
    if (result.usable) m_space.scale((tangent.parameter * orientation < 0 ? -1 : 1) / length, tangent);
    return result;
  }

  std::size_t workspace_bytes() const {
    return m_gmres.workspace_bytes() + m_access.workspace_bytes() +
           3 * sizeof(scalar_type) * static_cast<std::size_t>(m_product.size());
  }

 private:
  template <class Residual, class Preconditioner>
  setup_status set_up(Residual& residual, const bordered_type& at, Preconditioner& preconditioner) {
    static_cast<void>(residual);  // the bordered preconditioner reads R_u and R_λ from the residual itself
    return setup_preconditioner(
        preconditioner, preconditioner_context<bordered_space_type>{m_space, at, m_base_residual, 0, nullptr, nullptr});
  }

  /// The problem access reads only the J·v settings here: no budgets or limits apply to tangents.
  static newton_settings access_settings(const jacobian_settings& jacobian) {
    newton_settings settings;
    settings.jacobian = jacobian;
    return settings;
  }

  bordered_space_type m_space;
  gmres_solver<bordered_space_type> m_gmres;
  problem_access<bordered_space_type> m_access;
  phase_ledger m_ledger;
  solve_report m_counts;  ///< evaluation counts of the current tangent solve
  bordered_type m_base_residual, m_right_hand_side, m_product;
};

}  // namespace nkit

#endif  // NKIT_CONTINUATION_CONTINUATION_TANGENT_HPP
