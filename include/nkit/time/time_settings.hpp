#ifndef NKIT_TIME_TIME_SETTINGS_HPP
#define NKIT_TIME_TIME_SETTINGS_HPP

/// \file time/time_settings.hpp
/// Everything that configures an implicit time integration, as aggregates with
/// defaults, checked by validate() (std::invalid_argument naming the field).
///
/// Error norm: the local error estimate e of a step is measured as the
/// weighted root-mean-square norm ‖e‖ = sqrt(mean_i (e_i / w_i)²) with
/// w_i = absolute_tolerance_i + relative_tolerance_i · max(|u_n,i|, |u_n+1,i|);
/// a step is accepted when ‖e‖ <= 1 (common practice; E. Hairer & G. Wanner,
/// Solving Ordinary Differential Equations II, 2nd ed. (1996), §IV.8).

#include <atomic>
#include <cstdint>
#include <limits>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"
#include "../newton/newton_settings.hpp"

namespace nkit {

/// The time discretisation.
enum class time_method {
  /// Variable-step backward differentiation formulas of order 1 or 2
  /// (bdf_order), with a backward-Euler start and Milne's error estimate.
  bdf,
  /// TR-BDF2 as an L-stable, stiffly accurate ESDIRK with an embedded
  /// third-order error estimate (esdirk_tableau.hpp).
  esdirk
};

constexpr std::string_view name(time_method value) {
  switch (value) {
    case time_method::bdf:
      return "bdf";
    case time_method::esdirk:
      return "esdirk";
  }
  return "unknown";
}

/// Step-size selection: the PI controller of K. Gustafsson, "Control theoretic
/// techniques for stepsize selection in explicit Runge–Kutta methods", ACM
/// TOMS 17 (1991) 533–554, in the form h_new = h · safety · e_n^(−a/k) ·
/// e_(n−1)^(b/k) with k = (order of the error estimate) + 1, written as the
/// controller "PI.3.4" (a = 0.7, b = 0.4) in G. Söderlind, "Digital filters in
/// adaptive time-stepping", ACM TOMS 29 (2003) 1–26 (gains not checked against
/// those papers; they are settings).
struct step_control_settings {
  /// false: every step has length initial_step (the error estimate is still
  /// computed and reported, never used to reject). For order studies.
  bool adaptive = true;
  /// First step; 0 = automatic (0.01 ‖u0‖ / ‖du/dt(0)‖ in the error norm,
  /// Hairer, Nørsett & Wanner, Solving ODEs I, §II.4, common practice).
  double initial_step = 0.0;
  /// Stop (step_size_below_minimum) when a step would be shorter than this.
  double minimum_step = 1e-14;
  double maximum_step = std::numeric_limits<double>::infinity();
  double safety_factor = 0.9;
  double integral_gain = 0.7;          ///< a above
  double proportional_gain = 0.4;      ///< b above
  double maximum_step_growth = 5.0;    ///< h_new <= maximum_step_growth · h after an accepted step
  double minimum_shrink_factor = 0.2;  ///< h_new >= minimum_shrink_factor · h after an error-test failure
  /// h is multiplied by this after a failed stage solve.
  double stage_failure_shrink_factor = 0.25;
  /// Variable-step BDF2 is zero-stable for step ratios below 1 + √2
  /// (R.D. Grigorieff, Numer. Math. 42 (1983) 359–377; bound not checked against the paper); BDF
  /// steps grow by at most this ratio.
  double bdf_maximum_step_ratio = 2.0;
  /// Stop (too_many_consecutive_rejections) after this many failed attempts in a row.
  int maximum_consecutive_rejections = 25;

  void validate(std::string_view prefix = "step_control_settings") const {
    const std::string p(prefix);
    detail::require_non_negative(p + ".initial_step", initial_step);
    if (!adaptive && !(initial_step > 0.0)) {
      detail::throw_invalid_setting(p + ".initial_step", "> 0 when adaptive is false", initial_step);
    }
    detail::require_positive(p + ".minimum_step", minimum_step);
    detail::require_positive(p + ".maximum_step", maximum_step, true);
    if (maximum_step < minimum_step) {
      detail::throw_invalid_setting(p + ".maximum_step", ">= minimum_step (" + detail::number_text(minimum_step) + ")",
                                    maximum_step);
    }
    detail::require_open_interval(p + ".safety_factor", safety_factor, 0.0, 1.0);
    detail::require_closed_interval(p + ".integral_gain", integral_gain, 0.0, 2.0);
    detail::require_closed_interval(p + ".proportional_gain", proportional_gain, 0.0, 2.0);
    if (!(maximum_step_growth > 1.0 && std::isfinite(maximum_step_growth))) {
      detail::throw_invalid_setting(p + ".maximum_step_growth", "finite and > 1", maximum_step_growth);
    }
    detail::require_open_interval(p + ".minimum_shrink_factor", minimum_shrink_factor, 0.0, 1.0);
    detail::require_open_interval(p + ".stage_failure_shrink_factor", stage_failure_shrink_factor, 0.0, 1.0);
    detail::require_open_interval(p + ".bdf_maximum_step_ratio", bdf_maximum_step_ratio, 1.0, 2.414);
    detail::require_at_least(p + ".maximum_consecutive_rejections", maximum_consecutive_rejections, 1);
  }
};

/// When the preconditioner of the stage Jacobian M − γΔt ∂f/∂u is rebuilt.
/// The Newton solver carries it across stages and steps; the stepper asks for
/// a rebuild when one of these holds (checked before each stage solve).
struct time_preconditioner_rebuild_settings {
  /// γΔt differs from its value at the last setup by more than this factor
  /// (either way). Must be > 1. Why 3: for M symmetric positive definite and
  /// ∂f/∂u = −K with K symmetric positive semi-definite, an exact factor of
  /// M + c₀K applied to M + cK gives eigenvalues between 1 and c/c₀ (a
  /// generalized Rayleigh quotient bound, common practice), so a ratio up to 3
  /// keeps the preconditioned condition number ≤ 3. Measured on the transient
  /// model problem of bench/bench_time_integration.cpp (n = 128, 256; ILU(0)):
  /// 2 → 3 cut the setups from 10 to 6–7 with 0–4 % more GMRES iterations.
  double shift_change_factor = 3.0;
  /// At least every this many accepted steps (0 = never for this reason).
  int every_accepted_steps = 0;
  /// The previous stage's Newton contraction rate ‖Δ_k‖/‖Δ_(k−1)‖ exceeded this.
  double slow_contraction = 0.5;
  /// After a failed stage solve, the retry starts from a fresh preconditioner.
  bool after_stage_failure = true;
  /// The previous stage needed more GMRES iterations per Newton step than this
  /// factor times the first stage after the last setup did (that baseline
  /// counted as at least 2, so a direct factor, one iteration per Newton step,
  /// is kept until a stage needs more than 2 × factor). 0 = never for this
  /// reason; otherwise > 1. This catches a preconditioner that ages while Δt
  /// stays fixed, which neither the shift nor the contraction test sees: the
  /// Newton contraction does not depend on the preconditioner. Why 3 (our
  /// choice, measured): on the 2-D radiation-diffusion benchmark with fixed
  /// steps, the GMRES iterations of a lagged field split grew from about 2.4 to
  /// 61 per Newton step; 3 rebuilds it before the count passes about 7
  /// (docs/field_split.md gives the figures).
  double linear_iterations_growth_factor = 3.0;

  void validate(std::string_view prefix = "time_preconditioner_rebuild_settings") const {
    const std::string p(prefix);
    if (!(shift_change_factor > 1.0))
      detail::throw_invalid_setting(p + ".shift_change_factor", "> 1", shift_change_factor);
    detail::require_at_least(p + ".every_accepted_steps", every_accepted_steps, 0);
    detail::require_open_interval(p + ".slow_contraction", slow_contraction, 0.0, 1.0);
    if (!(linear_iterations_growth_factor == 0.0 || linear_iterations_growth_factor > 1.0))
      detail::throw_invalid_setting(p + ".linear_iterations_growth_factor", "0 (off) or > 1",
                                    linear_iterations_growth_factor);
  }
};

/// The Newton–Krylov solve of each stage equation.
struct stage_solve_settings {
  /// A stage has converged when the estimated distance to the solution,
  /// θ/(1 − θ) ‖Δ_k‖ (θ the contraction rate), is below this fraction of the
  /// error tolerance (weighted norm); Hairer & Wanner II, §IV.8 (common practice).
  double newton_tolerance_fraction = 0.1;
  /// Give up (and retry with a shorter step) when θ exceeds this.
  double divergence_contraction = 0.9;
  /// Settings of the inner Newton–Krylov solver. The stepper overrides
  /// preconditioner_rebuild.rebuild_at_solve_start (false) and
  /// rebuild_every_newton_steps (never by count): preconditioner_rebuild decides.
  newton_settings newton = default_newton();

  static newton_settings default_newton() {
    newton_settings s;
    s.relative_tolerance = 1e-10;  // the weighted test above normally stops first
    s.newton_step_budget = 8;
    s.forcing.formula = forcing_term_formula::constant;
    s.forcing.constant_value = 1e-2;
    s.linear.restart_length = 30;
    return s;
  }

  void validate(std::string_view prefix = "stage_solve_settings") const {
    const std::string p(prefix);
    detail::require_open_interval(p + ".newton_tolerance_fraction", newton_tolerance_fraction, 0.0, 1.0);
    detail::require_open_interval(p + ".divergence_contraction", divergence_contraction, 0.0, 1.0);
    newton.validate(p + ".newton");
  }
};

struct time_stepper_settings {
  time_method method = time_method::bdf;
  /// 1 (backward Euler) or 2; used with time_method::bdf.
  int bdf_order = 2;
  /// Scalar tolerances of the error norm (see the file comment); per-entry
  /// tolerances: implicit_time_stepper::set_tolerances. The absolute one must
  /// be > 0 (it keeps every weight positive).
  double relative_tolerance = 1e-4;
  double absolute_tolerance = 1e-8;
  /// Weight of the extrapolation predictor: polynomial degree through the
  /// last accepted states and stages (0 = previous state, 1 linear, 2 quadratic).
  int predictor_degree = 2;
  step_control_settings step_control;
  stage_solve_settings stage;
  time_preconditioner_rebuild_settings preconditioner_rebuild;
  /// Attempted steps allowed per integrate() call (accepted + rejected).
  std::int64_t attempted_step_budget = 1000000;
  double wall_time_budget_seconds = std::numeric_limits<double>::infinity();
  /// When not null, raising it stops the integration after the current stage.
  const std::atomic<bool>* cancellation_flag = nullptr;
  /// Per-step records kept in the report (room reserved at the start of each
  /// integration; later records are counted, not stored).
  std::int64_t history_capacity = 10000;  // 112 bytes per record: about 1.1 MB

  void validate() const {
    detail::require_enumerator("time_stepper_settings.method", method, time_method::esdirk, "bdf, esdirk");
    if (bdf_order < 1 || bdf_order > 2)
      detail::throw_invalid_setting("time_stepper_settings.bdf_order", "1 or 2", bdf_order);
    detail::require_non_negative("time_stepper_settings.relative_tolerance", relative_tolerance);
    detail::require_positive("time_stepper_settings.absolute_tolerance", absolute_tolerance);
    if (predictor_degree < 0 || predictor_degree > 2) {
      detail::throw_invalid_setting("time_stepper_settings.predictor_degree", "0, 1 or 2", predictor_degree);
    }
    step_control.validate("time_stepper_settings.step_control");
    stage.validate("time_stepper_settings.stage");
    preconditioner_rebuild.validate("time_stepper_settings.preconditioner_rebuild");
    detail::require_at_least<std::int64_t>("time_stepper_settings.attempted_step_budget", attempted_step_budget, 1);
    detail::require_positive("time_stepper_settings.wall_time_budget_seconds", wall_time_budget_seconds, true);
    detail::require_at_least<std::int64_t>("time_stepper_settings.history_capacity", history_capacity, 0);
  }
};

}  // namespace nkit

#endif  // NKIT_TIME_TIME_SETTINGS_HPP
