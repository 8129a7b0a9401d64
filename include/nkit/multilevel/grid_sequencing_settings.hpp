#ifndef NKIT_MULTILEVEL_GRID_SEQUENCING_SETTINGS_HPP
#define NKIT_MULTILEVEL_GRID_SEQUENCING_SETTINGS_HPP

/// \file multilevel/grid_sequencing_settings.hpp
/// Everything that configures a grid-sequencing solve
/// (grid_sequencing_solver.hpp), as one aggregate with defaults, checked by
/// validate() before any level is solved: the finest level's Newton settings
/// and the rule that sets the tolerances of the levels before it.
///
/// The level tolerance rule. Levels run 0 (coarsest) … L (finest); each
/// level ℓ is solved until
///   ‖R_ℓ(u_ℓ)‖ <= max(absolute_tolerance, τ_ℓ ‖R_ℓ(ū_ℓ)‖),
/// where ū_ℓ is the caller's state restricted to level ℓ (ū_L = the state
/// passed in) and
///   τ_L = newton.relative_tolerance                        (the finest level)
///   τ_ℓ = max(τ_L, coarsest_relative_tolerance · r^(−p ℓ))  (ℓ < L)
/// with r = refinement_ratio (h_ℓ / h_{ℓ+1}) and p = discretization_order.
/// So the finest level meets exactly the test a plain solve from the given
/// state would use, and each earlier level is solved only as far as its
/// discretisation deserves: its discretisation error falls like h^p, a
/// factor r^p per level, and so does its tolerance. Solving a coarse level
/// further buys nothing, because interpolating its solution to the next
/// level adds an error of the coarse discretisation's size anyway (nested
/// iteration: A. Brandt, Math. Comp. 31 (1977) 333–390, full multigrid;
/// C.T. Kelley, "Solving Nonlinear Equations with Newton's Method", SIAM
/// 2003, on mesh independence and grid sequencing — both from memory). The
/// default τ_0 = 1e-4 is our choice: on the benchmark model problem at 256²
/// the finest level took 2 Newton steps for every τ_0 from 1e-6 to 1e-2
/// (docs/grid_sequencing.md), and 1e-4 leaves room for problems with a larger
/// discretisation error constant.
///
/// Forcing term on refined levels. An interpolated coarse solution lies in
/// the region where Newton's method converges fast (mesh independence:
/// E.L. Allgower, K. Böhmer, F.A. Potra & W.C. Rheinboldt, SIAM J. Numer.
/// Anal. 23 (1986) 160–169, from memory), so the cautious first forcing term
/// of the Eisenstat–Walker choices (newton.forcing.initial_value, 0.5 by
/// default) would waste Newton steps there: levels 1 … L start with
/// refined_level_initial_forcing_term instead (0 keeps initial_value). The
/// default 1e-4 is our choice, measured on the model problem with modified
/// ILU(0) (docs/grid_sequencing.md): the second step's nonlinear remainder
/// shrinks with the square of the first step's linear residual, and with
/// 1e-4 the finest level ended in 2 steps at 256² and 1024², with 1e-3 in 3
/// at 1024², with the Eisenstat–Walker start 0.5 in 5 at 256².

#include <cmath>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"
#include "../newton/newton_settings.hpp"

namespace nkit {

struct grid_sequencing_settings {
  /// The Newton settings of every level; the finest level solves to their
  /// tolerances (relative to the residual at the given state, see the file
  /// comment), the earlier ones to the level tolerance rule. Budgets
  /// (Newton steps, residual evaluations, linear iterations) apply to each
  /// level's solve; wall_time_budget_seconds applies to the whole sequence.
  newton_settings newton;
  /// τ_0: the relative tolerance of the coarsest level (when it is not the
  /// finest); in (0, 1).
  double coarsest_relative_tolerance = 1e-4;
  /// p: order of accuracy of the discretisation (the error falls like h^p); > 0.
  double discretization_order = 2.0;
  /// r: cell size of a level over that of the next finer one; >= 1 (2 for the
  /// structured hierarchies of grids/, which refine by two).
  double refinement_ratio = 2.0;
  /// η_0 of the Eisenstat–Walker forcing terms on levels 1 … L; in [0, 1),
  /// 0 keeps newton.forcing.initial_value.
  double refined_level_initial_forcing_term = 1e-4;

  /// τ_ℓ of the level tolerance rule for `level` of `level_count` (file comment).
  double level_relative_tolerance(int level, int level_count) const {
    if (level >= level_count - 1) return newton.relative_tolerance;
    const double tau = coarsest_relative_tolerance * std::pow(refinement_ratio, -discretization_order * level);
    return tau > newton.relative_tolerance ? tau : newton.relative_tolerance;
  }

  /// The Newton settings handed to `level` of `level_count` before the
  /// driver sets the stop test: `newton` with the refined-level forcing term.
  newton_settings level_newton_settings(int level, int level_count) const {
    newton_settings settings = newton;
    settings.relative_tolerance = level_relative_tolerance(level, level_count);
    if (level > 0 && refined_level_initial_forcing_term > 0.0) {
      settings.forcing.initial_value = refined_level_initial_forcing_term;
    }
    return settings;
  }

  /// Throws std::invalid_argument naming the first bad field and its value.
  void validate(std::string_view prefix = "grid_sequencing_settings") const {
    const std::string p(prefix);
    newton.validate(p + ".newton");
    detail::require_open_interval(p + ".coarsest_relative_tolerance", coarsest_relative_tolerance, 0.0, 1.0);
    detail::require_positive(p + ".discretization_order", discretization_order);
    if (!(std::isfinite(refinement_ratio) && refinement_ratio >= 1.0)) {
      detail::throw_invalid_setting(p + ".refinement_ratio", "finite and >= 1", refinement_ratio);
    }
    if (!(refined_level_initial_forcing_term >= 0.0 && refined_level_initial_forcing_term < 1.0)) {
      detail::throw_invalid_setting(p + ".refined_level_initial_forcing_term", "in [0, 1)",
                                    refined_level_initial_forcing_term);
    }
  }
};

}  // namespace nkit

#endif  // NKIT_MULTILEVEL_GRID_SEQUENCING_SETTINGS_HPP
