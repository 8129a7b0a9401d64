#ifndef NKIT_TIME_STAGE_SOLVER_HPP
#define NKIT_TIME_STAGE_SOLVER_HPP

/// \file time/stage_solver.hpp
/// The Newton–Krylov solve of one implicit stage: ONE reusable nkit
/// newton_krylov_solver driven step by step, the stage convergence test, and
/// the preconditioner-rebuild policy across stages and steps.
///
/// Convergence: the stage has converged when θ/(1 − θ)·‖Δ_k‖ <=
/// newton_tolerance_fraction in the weighted error norm, θ the observed
/// contraction of the Newton updates Δ_k (Hairer & Wanner, Solving ODEs II,
/// §IV.8; common practice). For the first update θ is the larger of the
/// residual reduction ‖G(U_1)‖/‖G(U_0)‖ of that Newton step (free: the step
/// evaluated G(U_1); it reflects an inexact linear solve) and the remembered
/// contraction of earlier stages, θ_old^0.8 as in Hairer & Wanner, so that it
/// drifts up and a second iteration re-measures it now and then. The Newton
/// solver's own residual test also ends the stage as converged; any other
/// ending of it, or θ >= divergence_contraction, is a failure.
///
/// Rebuild policy (time_preconditioner_rebuild_settings): before a stage, ask the
/// Newton solver for a fresh preconditioner when γΔt differs from its value at
/// the last setup by more than shift_change_factor, when the previous stage
/// contracted slower than slow_contraction, when the previous stage needed more
/// than linear_iterations_growth_factor times the GMRES iterations per Newton
/// step of the first stage after the last setup, every every_accepted_steps
/// accepted steps, after a failed stage, and at the first stage of an
/// integration. The row scales of the stage residual (stage_residual.hpp) are
/// refreshed only then, so a lagged preconditioner stays consistent with them.

#include <algorithm>
#include <cmath>
#include <limits>

#include "../newton/newton_krylov_solver.hpp"
#include "error_weights.hpp"
#include "mass_matrix.hpp"
#include "time_report.hpp"
#include "time_settings.hpp"

namespace nkit {

enum class stage_solve_status { converged, failed, cancelled };

namespace detail {

template <class Space, class Preconditioner>
class stage_solver {
 public:
  using vector_type = typename Space::vector_type;
  using newton_solver_type = newton_krylov_solver<Space, Preconditioner>;

  stage_solver(const newton_settings& settings, Space space, Preconditioner preconditioner)
      : m_space(space), m_newton(settings, std::move(space), std::move(preconditioner)) {}

  newton_solver_type& newton_solver() { return m_newton; }
  double current_shift() const { return m_current_shift; }

  /// Start of an integration: sizes the workspace like u, forgets the history.
  template <class View>
  void reset(const View& u) {
    for (vector_type* v : {&m_update, &m_previous_iterate, &m_row_scale, &m_scratch}) m_space.allocate_like(*v, u);
    m_last_contraction = 0.0;
    m_contraction_memory = 1.0;
    m_setup_shift = -1.0;
    m_rebuild_after_failure = false;
    m_accepted_since_setup = 0;
    m_baseline_iterations_per_newton_step = -1.0;
    m_last_iterations_per_newton_step = 0.0;
  }
  void after_accepted_step() { ++m_accepted_since_setup; }
  void after_failed_step(const time_preconditioner_rebuild_settings& policy) {
    m_rebuild_after_failure = policy.after_stage_failure;
  }

  /// Solves G(U) = S((M U − known)/shift − f(time, U)) = 0 from the predictor
  /// in `u` (overwritten with the solution). `weights` are the error weights.
  template <class Stage>
  stage_solve_status solve(const time_stepper_settings& settings, Stage& stage, double time, double shift,
                           const vector_type& known, vector_type& u, const vector_type& weights,
                           time_step_record& record) {
    if (cancel_requested(settings)) return stage_solve_status::cancelled;
    m_current_shift = shift;
    if (rebuild_wanted(settings.preconditioner_rebuild, shift) || m_setup_shift < 0.0) {
      refresh_row_scale(stage.mass(), shift);
      m_newton.request_preconditioner_rebuild();
    }
    stage.prepare(time, shift, known, m_row_scale);
    const stage_solve_settings& stage_settings = settings.stage;
    ++record.stage_solves;
    auto run = m_newton.begin(stage, u);
    bool converged = run.state() == run_state::stopped && run.report().converged();
    bool failed = run.state() == run_state::stopped && !converged;
    double previous_update = 0.0, contraction = 0.0;
    int iteration = 0;
    while (!converged && !failed) {
      m_space.copy(u, m_previous_iterate);
      const run_state step = run.advance();
      m_space.combine(1.0, u, -1.0, m_previous_iterate, m_update);
      const double update = error_weights<Space>::norm(m_space, m_update, weights, m_scratch);
      ++iteration;
      const solve_report& so_far = run.report();
      if (iteration > 1) {
        contraction = previous_update > 0.0 ? update / previous_update : 0.0;
      } else {
        const double residual_ratio =
            so_far.initial_residual_norm > 0.0 ? so_far.final_residual_norm / so_far.initial_residual_norm : 0.0;
        contraction = std::max(residual_ratio, m_contraction_memory);
      }
      record.largest_contraction = std::max(record.largest_contraction, contraction);
      if (iteration > 1 && contraction >= stage_settings.divergence_contraction) {
        failed = true;
        break;
      }
      const double eta = contraction < 1.0 ? contraction / (1.0 - contraction) : std::numeric_limits<double>::max();
      previous_update = update;
      if (step == run_state::stopped) {
        converged = run.report().converged();
        failed = !converged;
      } else if (update == 0.0 || eta * update <= stage_settings.newton_tolerance_fraction) {
        converged = true;
      }
    }
    const solve_report& inner = run.report();
    record.newton_steps += inner.newton_steps;
    record.linear_iterations += inner.linear_iterations;
    record.preconditioner_setups += inner.preconditioner_setups;
    record.recycled_space_refreshes += inner.recycled_space_refreshes;
    record.true_residual_mismatches += inner.true_residual_mismatches;
    if (inner.newton_steps > 0) {
      m_last_iterations_per_newton_step =
          static_cast<double>(inner.linear_iterations) / static_cast<double>(inner.newton_steps);
    }
    if (inner.preconditioner_setups > 0) {
      m_setup_shift = shift;
      m_accepted_since_setup = 0;
      m_rebuild_after_failure = false;
      m_baseline_iterations_per_newton_step = inner.newton_steps > 0 ? m_last_iterations_per_newton_step : -1.0;
    } else if (m_baseline_iterations_per_newton_step < 0.0 && inner.newton_steps > 0) {
      m_baseline_iterations_per_newton_step = m_last_iterations_per_newton_step;
    }
    m_last_contraction = contraction;
    m_contraction_memory = iteration > 1 ? contraction : std::pow(std::max(m_contraction_memory, 1e-16), 0.8);
    if (cancel_requested(settings)) return stage_solve_status::cancelled;
    return converged && m_space.all_finite(u) ? stage_solve_status::converged : stage_solve_status::failed;
  }

 private:
  static bool cancel_requested(const time_stepper_settings& settings) {
    return settings.cancellation_flag != nullptr && settings.cancellation_flag->load();
  }

  /// s_i = γΔt/m_i on rows with mass, 1 on algebraic rows (stage_residual.hpp).
  void refresh_row_scale(const mass_matrix<vector_type>& mass, double shift) {
    if (mass.type() == mass_matrix<vector_type>::kind::diagonal) {
      const auto& d = mass.diagonal_entries().array();
      m_row_scale = (d > 0.0).select(shift / d.max(std::numeric_limits<double>::min()), 1.0);
    } else {
      m_space.fill(shift, m_row_scale);
    }
  }

  bool rebuild_wanted(const time_preconditioner_rebuild_settings& policy, double shift) const {
    bool rebuild = m_rebuild_after_failure || m_last_contraction > policy.slow_contraction;
    if (m_setup_shift > 0.0) {
      const double ratio = shift / m_setup_shift;
      if (ratio > policy.shift_change_factor || ratio * policy.shift_change_factor < 1.0) rebuild = true;
    }
    if (policy.every_accepted_steps > 0 && m_accepted_since_setup >= policy.every_accepted_steps) rebuild = true;
    if (policy.linear_iterations_growth_factor > 0.0 && m_baseline_iterations_per_newton_step >= 0.0 &&
        m_last_iterations_per_newton_step >
            policy.linear_iterations_growth_factor * std::max(m_baseline_iterations_per_newton_step, 2.0)) {
      rebuild = true;
    }
    return rebuild;
  }

  Space m_space;
  newton_solver_type m_newton;
  vector_type m_update, m_previous_iterate, m_row_scale, m_scratch;
  double m_current_shift = 0.0;
  double m_last_contraction = 0.0;
  double m_contraction_memory = 1.0;
  double m_setup_shift = -1.0;
  bool m_rebuild_after_failure = false;
  int m_accepted_since_setup = 0;
  /// GMRES iterations per Newton step: the first stage after the last setup (−1: not yet measured), the last stage.
  double m_baseline_iterations_per_newton_step = -1.0;
  double m_last_iterations_per_newton_step = 0.0;
};

}  // namespace detail
}  // namespace nkit

#endif  // NKIT_TIME_STAGE_SOLVER_HPP
