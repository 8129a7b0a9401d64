#ifndef NKIT_NEWTON_NEWTON_SETTINGS_HPP
#define NKIT_NEWTON_NEWTON_SETTINGS_HPP

/// \file newton/newton_settings.hpp
/// Everything that configures a Newton–Krylov solve, as one aggregate with
/// defaults, checked by validate() before any iteration.
///
/// Norms: every residual norm and tolerance here is the Euclidean norm of the
/// residual vector as the solver sees it: of D_r⁻¹ R(u) when residual scaling
/// is set (newton_krylov_solver::set_scaling), of R(u) otherwise. Step norms
/// are Euclidean norms of the scaled step D_u⁻¹ (u_k − u_{k−1}) likewise
/// (unscaled when no variable scaling is set).

#include <atomic>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>
#include <string_view>

#include "../core/globalization_strategy.hpp"
#include "../detail/checks.hpp"
#include "../globalization/bounds.hpp"
#include "../globalization/forcing_term.hpp"
#include "../globalization/line_search.hpp"
#include "../globalization/pseudo_transient.hpp"
#include "../globalization/trust_region.hpp"
#include "../jacobian/finite_difference_jacobian.hpp"
#include "../krylov/gmres.hpp"
#include "preconditioner_schedule.hpp"

namespace nkit {

/// How nkit makes sure the residual writes every entry of its output r. A
/// residual that leaves entries unwritten (a grid-size mismatch is the usual
/// cause) would otherwise hand nkit whatever an earlier call left there, and a
/// solve can then be reported converged while part of u never moved. Before a
/// checked call nkit fills r with a marker value (a quiet NaN with a payload
/// no arithmetic produces) and afterwards throws std::invalid_argument if any
/// entry still holds it. Each checked call costs one extra write and one read
/// of r (measured on the benchmark model problem: 0.28–0.33 work units).
enum class unwritten_entry_check {
  off,               ///< never (the residual is trusted)
  initial_residual,  ///< the first call of every solve, R(u0): catches entries a residual never writes
  every_evaluation   ///< every call, J·v and assembly included: also catches entries written only sometimes
};

constexpr std::string_view name(unwritten_entry_check value) {
  switch (value) {
    case unwritten_entry_check::off:
      return "off";
    case unwritten_entry_check::initial_residual:
      return "initial_residual";
    case unwritten_entry_check::every_evaluation:
      return "every_evaluation";
  }
  return "unknown";
}

/// Krylov subspace recycling of the Newton driver's linear solves.
struct linear_recycling_settings {
  /// k > 0: every linear solve uses recycling GMRES (GCRO-DR,
  /// krylov/recycling_gmres.hpp) in place of GMRES, with the restart_length,
  /// maximum_iterations and reorthogonalization of newton_settings.linear, and
  /// keeps k harmonic Ritz vectors from one Newton step to the next and from
  /// one solve to the next (the implicit time stepper's stages and steps). Each
  /// recycled subspace U comes with C = J M⁻¹ U, kept up to date as
  /// refresh_for_each_jacobian says. 0 (default): GMRES,
  /// nothing kept. Needs a preconditioner that stays the same between
  /// applications and a globalisation other than trust_region (the dogleg's
  /// Cauchy point comes from plain GMRES's first cycle).
  int recycle_dimension = 0;
  /// false (default): C = J M⁻¹ U is recomputed only after a preconditioner
  /// setup, or when a solve's true-residual check disagrees with GMRES's
  /// estimate; otherwise the previous C is used as if J M⁻¹ had not changed.
  /// true: every linear solve recomputes C for its own Jacobian (k more J·v
  /// products and preconditioner applications per solve; the paper's
  /// treatment of a changed matrix). Either way a solve with a C that may be
  /// stale stops only when the true residual ‖R + J s‖ meets the forcing
  /// term; once C is of the current Jacobian, GMRES's estimate decides, as in
  /// plain GMRES (recycling_gmres.hpp). Measured on tests/test_newton_recycling.cpp (20
  /// time steps, k = 8): 456 GMRES iterations and 727 evaluations of f with
  /// false, 458 and 1,163 with true, 848 and 949 without recycling.
  bool refresh_for_each_jacobian = false;
  /// A GMRES cycle of fewer Arnoldi steps than this keeps the recycled
  /// subspace as it is (recycling_gmres_settings::minimum_cycle_steps_for_update);
  /// 0 (default): every cycle updates it.
  int minimum_cycle_steps_for_update = 0;
};

/// A component-wise convergence test on the Newton step, alongside the
/// residual-norm test. With unknowns of very different magnitudes the
/// Euclidean residual norm is dominated by the rows of the large ones, and a
/// solve can meet relative_tolerance while small unknowns are still far off;
/// this test looks at every unknown. When enabled, a solve converges only
/// when the residual test holds and the last accepted step satisfies
///   max_i |Δu_i| / (absolute_tolerance + relative_tolerance·|u_i|) <= 1
/// (a scaled max-norm, in the solver's variables: ũ = u / variable_scale when
/// scaling is set). Needs a vector space with weighted_max_norm() (every
/// space nkit provides has it).
struct componentwise_step_test {
  bool enabled = false;
  double relative_tolerance = 1e-8;
  double absolute_tolerance = 0.0;

  void validate(std::string_view prefix = "componentwise_step_test") const {
    const std::string p(prefix);
    detail::require_non_negative(p + ".relative_tolerance", relative_tolerance);
    detail::require_non_negative(p + ".absolute_tolerance", absolute_tolerance);
    if (enabled && relative_tolerance == 0.0 && absolute_tolerance == 0.0) {
      detail::throw_invalid_setting(p + ".relative_tolerance",
                                    "> 0 when absolute_tolerance is 0 and the test is enabled", relative_tolerance);
    }
  }
};

struct newton_settings {
  /// Converged when ‖R(u)‖ <= relative_tolerance · ‖R(u0)‖; in [0, 1).
  double relative_tolerance = 1e-8;
  /// Converged when ‖R(u)‖ <= absolute_tolerance (0 = off).
  double absolute_tolerance = 0.0;
  /// Stop (not converged) when ‖u_k − u_{k−1}‖ <= negligible_step_size · (1 + ‖u_k‖) (0 = off).
  double negligible_step_size = 0.0;
  /// Newton steps allowed.
  int newton_step_budget = 50;
  /// Calls of the user's residual allowed, J·v ones included (always holds: checked before each call).
  std::int64_t residual_evaluation_budget = std::numeric_limits<std::int64_t>::max();
  /// GMRES iterations allowed over the whole solve.
  std::int64_t linear_iteration_budget = std::numeric_limits<std::int64_t>::max();
  /// Wall-clock limit, checked before every residual evaluation, J·v product,
  /// preconditioner setup and application, and after every GMRES iteration:
  /// a solve overruns it by at most one such call.
  double wall_time_budget_seconds = std::numeric_limits<double>::infinity();
  /// Stop (stop_reason::residual_stagnated) when, within this many Newton steps, the
  /// residual norm never fell below stagnation_factor times its value at the
  /// last such progress (not checked during pseudo-transient steps; the window
  /// starts afresh when that phase ends, and a stagnating Newton phase after it
  /// goes back to pseudo-time stepping while returns are left:
  /// pseudo_transient_settings::maximum_returns_to_pseudo_time).
  int stagnation_window = 10;
  double stagnation_factor = 0.99;
  /// When not null, raising the flag stops the solve before the next residual evaluation.
  const std::atomic<bool>* cancellation_flag = nullptr;
  /// Which residual calls are checked for entries of r left unwritten: every
  /// call in builds without NDEBUG (debug builds), the initial residual of
  /// every solve otherwise. A check writes a marker into r and scans r after
  /// the call: measured at 0.28–0.33 of one residual evaluation of the
  /// 5-point heat-conduction model problem, n = 128 … 1024 (benchmark
  /// unwritten_entry_check in bench_model_problem); relatively less for a
  /// costlier residual.
#if defined(NDEBUG)
  unwritten_entry_check check_unwritten_residual_entries = unwritten_entry_check::initial_residual;
#else
  unwritten_entry_check check_unwritten_residual_entries = unwritten_entry_check::every_evaluation;
#endif

  /// The component-wise step test (off by default).
  componentwise_step_test componentwise;
  /// When the entries of u0 or of R(u0) (in the solver's variables) span more
  /// than this factor between the largest and the smallest nonzero magnitude,
  /// the report carries a warning (solve_warnings): the Euclidean norms then
  /// hide the small ones; set_scaling or the component-wise test help. 0 = never.
  double magnitude_spread_warning = 1e8;

  globalization_strategy globalization = globalization_strategy::line_search;
  forcing_term_settings forcing;
  line_search_settings line_search;
  trust_region_settings trust_region;
  pseudo_transient_settings pseudo_transient;
  bound_settings bounds;
  gmres_settings linear;
  linear_recycling_settings recycling;
  jacobian_settings jacobian;
  preconditioner_rebuild_settings preconditioner_rebuild;

  /// Throws std::invalid_argument naming the first bad field and its value.
  /// `prefix` names this struct in messages (e.g. "time_stepper_settings.stage.newton" when nested).
  void validate(std::string_view prefix = "newton_settings") const {
    const std::string p(prefix);
    detail::require_non_negative(p + ".relative_tolerance", relative_tolerance);
    if (!(relative_tolerance < 1.0)) {
      // ‖R(u0)‖ <= 1·‖R(u0)‖ holds before any step: such a solve "converges" without doing anything.
      detail::throw_invalid_setting(p + ".relative_tolerance",
                                    "< 1 (a relative tolerance of 1 or more is met by the initial guess itself)",
                                    relative_tolerance);
    }
    detail::require_non_negative(p + ".absolute_tolerance", absolute_tolerance);
    if (relative_tolerance == 0.0 && absolute_tolerance == 0.0) {
      detail::throw_invalid_setting(p + ".relative_tolerance",
                                    "> 0 when absolute_tolerance is 0 (otherwise nothing can converge)",
                                    relative_tolerance);
    }
    detail::require_non_negative(p + ".negligible_step_size", negligible_step_size);
    detail::require_at_least(p + ".newton_step_budget", newton_step_budget, 1);
    detail::require_at_least<std::int64_t>(p + ".residual_evaluation_budget", residual_evaluation_budget, 1);
    detail::require_at_least<std::int64_t>(p + ".linear_iteration_budget", linear_iteration_budget, 1);
    detail::require_positive(p + ".wall_time_budget_seconds", wall_time_budget_seconds, true);
    detail::require_at_least(p + ".stagnation_window", stagnation_window, 1);
    detail::require_enumerator(p + ".check_unwritten_residual_entries", check_unwritten_residual_entries,
                               unwritten_entry_check::every_evaluation, "off, initial_residual, every_evaluation");
    detail::require_open_interval(p + ".stagnation_factor", stagnation_factor, 0.0, 1.0);
    detail::require_enumerator(p + ".globalization", globalization, globalization_strategy::pseudo_transient,
                               "line_search, full_step, trust_region, pseudo_transient");
    componentwise.validate(p + ".componentwise");
    detail::require_non_negative(p + ".magnitude_spread_warning", magnitude_spread_warning);
    forcing.validate(p + ".forcing");
    line_search.validate(p + ".line_search");
    trust_region.validate(p + ".trust_region");
    pseudo_transient.validate(p + ".pseudo_transient");
    bounds.validate(p + ".bounds");
    linear.validate(p + ".linear");
    detail::require_at_least(p + ".recycling.recycle_dimension", recycling.recycle_dimension, 0);
    detail::require_at_least(p + ".recycling.minimum_cycle_steps_for_update", recycling.minimum_cycle_steps_for_update,
                             0);
    if (recycling.recycle_dimension > 0) {
      if (recycling.recycle_dimension >= linear.restart_length) {
        detail::throw_invalid_setting(p + ".recycling.recycle_dimension",
                                      "< linear.restart_length (" + std::to_string(linear.restart_length) + ")",
                                      recycling.recycle_dimension);
      }
      if (linear.variant != gmres_variant::standard) {
        throw std::invalid_argument("nkit: " + p +
                                    ".recycling.recycle_dimension > 0 needs linear.variant = standard (recycling "
                                    "GMRES has no flexible variant)");
      }
      if (linear.orthogonalization != orthogonalization_method::modified_gram_schmidt) {
        throw std::invalid_argument("nkit: " + p +
                                    ".recycling.recycle_dimension > 0 needs linear.orthogonalization = "
                                    "modified_gram_schmidt (the one recycling GMRES uses)");
      }
      if (globalization == globalization_strategy::trust_region) {
        throw std::invalid_argument("nkit: " + p +
                                    ".recycling.recycle_dimension > 0 cannot be combined with globalization = "
                                    "trust_region (the dogleg needs plain GMRES's Cauchy point)");
      }
    }
    jacobian.validate(p + ".jacobian");
    preconditioner_rebuild.validate(p + ".preconditioner_rebuild");
  }
};

}  // namespace nkit

#endif  // NKIT_NEWTON_NEWTON_SETTINGS_HPP
