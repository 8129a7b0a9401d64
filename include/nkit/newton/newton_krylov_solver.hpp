#ifndef NKIT_NEWTON_NEWTON_KRYLOV_SOLVER_HPP
#define NKIT_NEWTON_NEWTON_KRYLOV_SOLVER_HPP

/// \file newton/newton_krylov_solver.hpp
/// The Newton driver: the reusable inexact Newton–Krylov solver (the loop,
/// its stopping tests and the Newton direction) and the one-shot nkit::solve().
///
/// Each Newton step: choose the forcing term η (globalization/forcing_term.hpp),
/// rebuild the preconditioner if the schedule says so
/// (preconditioner_schedule.hpp), solve R'(u) x = R(u) with
/// right-preconditioned GMRES to relative tolerance η using matrix-free
/// Jacobian-vector products (problem_access.hpp, linear_solve.hpp), and move
/// along s = −x with the chosen globalisation (step_control.hpp over the
/// kernels in globalization/): line search, full step, trust region or
/// pseudo-transient continuation. The caller may drive the
/// loop itself with begin() and advance() (run_handle.hpp); solve() is
/// exactly that loop.
///
/// Between steps `u` holds the last accepted iterate. When the solve ends
/// without converging, `u` holds the iterate with the smallest residual norm
/// seen. When the user's residual (or any user callback) throws, the
/// exception propagates unchanged and `u` holds the last accepted iterate.
///
/// Optional problem members are detected at compile time (core/residual.hpp):
/// jacobian_product, assemble_jacobian, jacobian_pattern, is_admissible,
/// pseudo_time_weights; and field_layout() (newton/field_residual_tracker.hpp:
/// the report then holds ‖R_f‖ per field; serial Eigen space only).
///
/// After a converged run, the linearized_* members work with R'(u*) at its
/// state u* (converged_linearization.hpp): J·v products and GMRES solves
/// with the run's operator and last preconditioner, transposed products and
/// solves from the Jacobian assembled at u*. Sensitivities use them.
///
/// Allocation: the workspace (Newton vectors, GMRES basis, difference
/// vectors, history capacity) is allocated on the first solve and kept, so a
/// later solve of the same size allocates nothing in its iterations; solve()
/// allocates once at the end, to copy the history into the returned report.
/// (History room is reserved for min(newton_step_budget, 1024) steps; a solve
/// longer than that grows it once, and the larger capacity is kept.)

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <optional>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>
#include <vector>

#include "../core/eigen_vector_space.hpp"
#include "../core/preconditioner.hpp"
#include "../core/residual.hpp"
#include "../core/vector_space.hpp"
#include "../globalization/forcing_term.hpp"
#include "../krylov/gmres.hpp"
#include "../report/monitor.hpp"
#include "../report/outcome.hpp"
#include "../report/phase_ledger.hpp"
#include "../report/report.hpp"
#include "../report/trace.hpp"
#include "converged_linearization.hpp"
#include "field_residual_tracker.hpp"
#include "linear_solve.hpp"
#include "newton_settings.hpp"
#include "preconditioner_schedule.hpp"
#include "problem_access.hpp"
#include "run_handle.hpp"
#include "step_control.hpp"

namespace nkit {

template <class Space = eigen_vector_space<double>, class Preconditioner = identity_preconditioner>
class newton_krylov_solver {
  static_assert(is_vector_space_v<Space>, "nkit: Space does not provide the vector-space members (vector_space.hpp)");
  static_assert(std::is_move_constructible_v<Preconditioner>,
                "nkit: the solver owns its preconditioner, so the preconditioner type must be movable. For one that "
                "cannot move (e.g. it holds an Eigen sparse solver), use newton_krylov_solver<Space, "
                "std::reference_wrapper<Type>> and pass std::ref(object), or newton_krylov_solver<Space, "
                "std::unique_ptr<Type>> and pass the pointer");

 public:
  using space_type = Space;
  using preconditioner_type = Preconditioner;
  using vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;
  using state_view = typename Space::state_view;
  using const_view = typename Space::const_view;

  explicit newton_krylov_solver(newton_settings settings = {}, Space space = {}, Preconditioner preconditioner = {})
      : m_settings(validated(settings)),
        m_space(std::move(space)),
        m_linear(m_settings, m_space, std::move(preconditioner)),
        m_access(m_settings, m_space),
        m_steps(m_settings, m_space) {}

  /// Validates and stores the settings; throws std::invalid_argument naming
  /// the first bad field. Must not be called while a run is in progress.
  void configure(const newton_settings& settings) {
    settings.validate();
    m_settings = settings;
    m_linear.configure(settings);
    m_access.configure(settings);
    m_steps.configure(settings);
  }
  const newton_settings& settings() const { return m_settings; }
  const Space& space() const { return m_space; }
  Preconditioner& preconditioner() { return m_linear.preconditioner(); }
  const Preconditioner& preconditioner() const { return m_linear.preconditioner(); }

  /// Records a timeline of every later solve into `recorder` (report/trace.hpp);
  /// nullptr stops recording. With none attached each phase call costs one
  /// pointer test.
  void record_trace(trace_recorder* recorder) {
    m_ledger.attach_trace(recorder);
    m_linear.record_trace(recorder);
  }

  /// The next Newton step rebuilds the preconditioner whatever the reuse policy says.
  void request_preconditioner_rebuild() { m_linear.schedule().request_rebuild(); }

  /// With newton_settings.recycling.recycle_dimension > 0: forgets the Krylov
  /// subspace kept from earlier linear solves (e.g. after the problem changed
  /// beyond recognition at the same size); the memory stays. A solve of a new
  /// size forgets it by itself.
  void discard_recycled_krylov_subspace() { m_linear.recycling_gmres().discard_recycled_subspace(); }
  /// Vectors of the recycled Krylov subspace held now (0 without recycling).
  int recycled_krylov_dimension() const { return m_linear.recycled_dimension(); }

  /// Declares lower <= u <= upper (physical units; ±infinity where a side is
  /// unbounded). Every state at which the residual is evaluated respects them
  /// (settings.bounds says how steps are shortened). Throws
  /// std::invalid_argument on sizes that differ, NaN or lower > upper.
  void set_bounds(const_view lower, const_view upper) { m_access.set_bounds(lower, upper); }
  void clear_bounds() { m_access.clear_bounds(); }

  /// Variable and residual scales (typical magnitudes, all > 0). The solver
  /// then works with ũ = u / variable_scale and R̃ = R / residual_scale: all
  /// norms, tolerances, forcing terms and the trust radius refer to these
  /// scaled quantities. Pass an empty vector to leave one side unscaled.
  void set_scaling(const_view variable_scale, const_view residual_scale) {
    m_access.set_scaling(variable_scale, residual_scale);
  }
  void clear_scaling() { m_access.clear_scaling(); }

  /// Starts a caller-driven solve: evaluates R(u0) and returns a handle whose
  /// advance() takes one Newton step. `problem` and `u` must outlive the run.
  template <class Problem, class Monitor = null_monitor>
  run_handle<newton_krylov_solver, Problem, Monitor> begin(Problem& problem, state_view u, Monitor monitor = {}) {
    return run_handle<newton_krylov_solver, Problem, Monitor>(*this, problem, u, std::move(monitor));
  }

  /// Solves R(u) = 0 starting from u; see the file comment for what u holds afterwards.
  template <class Problem, class Monitor = null_monitor>
  solve_report solve(Problem&& problem, state_view u, Monitor&& monitor = {}) {
    using problem_type = std::remove_reference_t<Problem>;
    using monitor_type = std::remove_reference_t<Monitor>&;
    run_handle<newton_krylov_solver, problem_type, monitor_type> run(*this, problem, u, monitor);
    while (run.advance() == run_state::running) {
    }
    return run.report();
  }

  /// Bytes of workspace held now: Newton vectors, GMRES, problem access
  /// (bounds, scales, difference workspace, the assembled Jacobian), the
  /// preconditioner's memory_bytes() and the history capacity.
  std::size_t workspace_bytes() const {
    std::size_t entries = 0;
    for (const vector_type* v : {&m_state, &m_residual, &m_step, &m_best_state}) {
      entries += static_cast<std::size_t>(v->size());
    }
    entries += m_steps.vector_entries();
    const std::size_t field_bytes = m_field_tracker.workspace_bytes(m_report.field_residuals);
    return sizeof(scalar_type) * entries + m_linear.workspace_bytes() + m_access.workspace_bytes() +
           m_report.history.capacity() * sizeof(newton_step_record) + field_bytes;
  }

  // ---- R'(u*) at the converged state of the last run (converged_linearization.hpp) ----
  // Each throws std::invalid_argument when the last run did not converge or when a
  // vector's size differs from the state's. Vectors are physical; with scaling,
  // tolerances apply to the scaled residual. `problem` must be the residual that run solved.

  /// out = R'(u*) v with the run's J·v operator (the problem's product or finite differences).
  template <class Problem>
  void linearized_product(Problem& problem, const vector_type& v, vector_type& out) {
    m_linearized.product(linearized_parts(), problem, v, out);
  }
  /// Solves R'(u*) x = rhs from x = 0 until ‖rhs − R'(u*) x‖ <= relative_tolerance·‖rhs‖, with GMRES
  /// (settings.linear) and the preconditioner as set up for the last Newton step.
  template <class Problem>
  linear_solve_result linearized_solve(Problem& problem, const vector_type& rhs, vector_type& x,
                                       double relative_tolerance) {
    return m_linearized.solve(linearized_parts(), problem, rhs, x, relative_tolerance);
  }
  /// out = R'(u*)ᵀ w, from the Jacobian assembled at u* (once per converged state).
  template <class Problem>
  void linearized_transpose_product(Problem& problem, const vector_type& w, vector_type& out) {
    m_linearized.transpose_product(linearized_parts(), problem, w, out);
  }
  /// Solves R'(u*)ᵀ x = rhs as linearized_solve does, with the assembled Jacobian transposed and the
  /// preconditioner's apply_transpose (std::invalid_argument when it has none).
  template <class Problem>
  linear_solve_result linearized_transpose_solve(Problem& problem, const vector_type& rhs, vector_type& x,
                                                 double relative_tolerance) {
    return m_linearized.transpose_solve(linearized_parts(), problem, rhs, x, relative_tolerance);
  }
  /// R'(u*) assembled at the converged state (D_r⁻¹ R'(u*) D_u with scaling): the matrix the transposed members use.
  template <class Problem>
  const sparse_matrix& linearized_jacobian(Problem& problem) {
    m_linearized.prepare(linearized_parts(), m_state, "linearized_jacobian");
    return m_linearized.assembled(linearized_parts(), problem);
  }
  /// Costs of the linearized_* calls since the last run ended (wall_seconds is not filled in).
  const solve_report& linearized_report() const { return m_linearized.report(); }
  /// Which budget (residual evaluations, wall time, cancellation) stopped a linearized call since the last run
  /// ended; empty when none did. Stopped products return NaN, stopped solves status monitor_requested_stop.
  stop_reason_if_stopped linearized_stop_reason() const { return m_linearized.last_stop_reason(); }
  /// Transposed products R'(u*)ᵀ w since the last run ended.
  std::int64_t linearized_transposed_products() const { return m_linearized.transposed_products(); }
  /// The state the last run ended at in physical units (u*, when last_report().converged()); empty before any run.
  const vector_type& converged_state() { return m_linearized.physical_state(linearized_parts()); }
  /// The last run's report (its stop reason, median residual time).
  const solve_report& last_report() const { return m_report; }

  /// Bytes held for the assembled Jacobian (values, indices, row offsets, coloring workspace).
  std::size_t assembled_jacobian_bytes() const { return m_access.assembled_jacobian_bytes(); }

 private:
  template <class Solver, class Problem, class Monitor>
  friend class run_handle;

  /// History records reserved up front (about 130 bytes each).
  static constexpr int maximum_reserved_history = 1024;

  typename detail::converged_linearization<Space, Preconditioner>::driver_parts linearized_parts() {
    return {m_report, m_access, m_linear, m_ledger, m_state, m_residual};
  }

  static const newton_settings& validated(const newton_settings& settings) {
    settings.validate();
    return settings;
  }

  // ---- start and finish ----------------------------------------------------------

  template <class Problem>
  void start(Problem& problem, state_view u) {
    static_assert(is_residual_v<Problem, vector_type>,
                  "nkit: the residual must be callable as residual(const vector_type& u, vector_type& r)");
    // Collective: a rank may own no unknowns; only a globally empty state is an error.
    if (m_space.global_size(u) == 0) throw std::invalid_argument("nkit: the state vector u is empty");
    if (!m_space.all_finite(u)) throw std::invalid_argument("nkit: the initial guess u0 contains NaN or Inf entries");
    if (!has_magnitude_reductions_v<Space> && m_settings.componentwise.enabled) {
      throw std::invalid_argument(
          "nkit: newton_settings.componentwise.enabled needs a vector space with weighted_max_norm() and magnitudes()");
    }

    // Capped: newton_step_budget = INT_MAX ("no limit") must not reserve ~250 GB.
    // Longer solves grow the history once; the capacity is kept for later solves.
    m_history_capacity =
        std::max(m_history_capacity,
                 static_cast<std::size_t>(std::min(m_settings.newton_step_budget, maximum_reserved_history)));
    m_ledger.begin(m_report, m_history_capacity);
    m_linearized.reset();

    for (vector_type* v : {&m_state, &m_residual, &m_step, &m_best_state}) m_space.allocate_like(*v, u);
    m_access.template start<Problem>(m_ledger, m_state);
    m_steps.start(m_state, m_access);
    m_linear.start_solve(m_state);
    m_field_tracker.template start<vector_type>(problem, m_state.size(), m_history_capacity, m_report.field_residuals);
    m_access.load_state(problem, u, m_state);

    m_forcing = forcing_term_sequence(m_settings.forcing);
    m_forcing.reset();
    m_best_is_current = true;
    m_steps_since_best = 0;
    m_linear_budget_spent = false;
    m_monitor_stopped = false;

    // Until R(u0) is known the norms are unknown (NaN), not those of an earlier
    // solve: a time limit or cancellation can stop the run before it is evaluated.
    m_norm = m_best_norm = std::numeric_limits<double>::quiet_NaN();
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    m_access.evaluate(problem, m_state, m_residual, evaluation_purpose::state);
    m_norm = m_space.norm(m_residual);
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    m_best_norm = m_norm;
    m_field_tracker.record_initial(m_residual, m_report.field_residuals);
    m_target_norm = std::max(m_settings.absolute_tolerance, m_settings.relative_tolerance * m_norm);
    m_report.target_residual_norm = m_target_norm;
    m_stagnation_reference = m_norm;
    m_step_ratio = std::numeric_limits<double>::infinity();
    check_magnitude_spread();
    if (m_ledger.trace() != nullptr) {
      m_ledger.record_counter(trace_counter::residual_norm, detail::clock_type::now(), m_norm);
    }
  }

  /// Tells the monitor the solve has started (R(u0), the target norm, warnings).
  template <class Monitor>
  void notify_start(Monitor& monitor) {
    if constexpr (detail::has_at_start<std::remove_reference_t<Monitor>>::value) {
      solve_start_record record;
      record.initial_residual_norm = m_report.initial_residual_norm;
      record.target_residual_norm = m_target_norm;
      record.unknowns = m_space.global_size(m_state);
      record.warnings = m_report.warnings;
      detail::notify_start_timed(monitor, record, m_ledger);
    } else {
      static_cast<void>(monitor);
    }
  }

  /// After start(): the stop reason when no step is needed or possible (the
  /// component-wise test needs a step, so u0 converges by the residual test alone).
  std::optional<stop_reason> initial_stop() const {
    if (!m_space.all_finite(m_residual)) return stop_reason::non_finite_initial_residual;
    return residual_convergence();
  }

  /// The report's warnings about widely spread magnitudes in u0 and R(u0).
  void check_magnitude_spread() {
    if constexpr (has_magnitude_reductions_v<Space>) {
      solve_warnings& warnings = m_report.warnings;
      warnings.state_magnitude_spread = m_space.magnitudes(m_state).spread();
      warnings.residual_magnitude_spread = m_space.magnitudes(m_residual).spread();
      const double threshold = m_settings.magnitude_spread_warning;
      warnings.state_magnitudes_spread_widely = threshold > 0.0 && warnings.state_magnitude_spread > threshold;
      warnings.residual_magnitudes_spread_widely = threshold > 0.0 && warnings.residual_magnitude_spread > threshold;
    }
  }

  /// Ends the run: when not converged, u gets the best iterate.
  void finish(stop_reason reason, state_view u) {
    m_report.reason = reason;
    m_report.globalization_at_stop =
        m_steps.pseudo_transient() ? globalization_strategy::pseudo_transient : m_settings.globalization;
    const bool returned_best = !is_converged(reason) && !m_best_is_current;
    if (returned_best) {
      std::swap(m_state, m_best_state);
      m_norm = m_best_norm;
      m_best_is_current = true;
    }
    m_field_tracker.finish(returned_best, m_report.field_residuals);
    if (m_state.size() == u.size()) m_access.write_state(m_state, u);
    m_report.final_residual_norm = m_norm;
    m_report.wall_seconds = m_ledger.elapsed_seconds();
    m_report.median_residual_seconds = m_ledger.median_residual_seconds();
    phase_seconds& t = m_report.time;
    t.other = m_report.wall_seconds - t.measured();
    m_report.workspace_bytes = workspace_bytes();
  }

  std::optional<stop_reason> residual_convergence() const {
    if (m_norm <= m_settings.absolute_tolerance) return stop_reason::absolute_tolerance_met;
    if (m_norm <= m_settings.relative_tolerance * m_report.initial_residual_norm) {
      return stop_reason::relative_tolerance_met;
    }
    return std::nullopt;
  }
  /// After a step: the residual test and, when enabled, the component-wise step test.
  std::optional<stop_reason> convergence() const {
    const std::optional<stop_reason> residual_test = residual_convergence();
    if (!residual_test || !m_settings.componentwise.enabled) return residual_test;
    if (m_step_ratio <= 1.0) return residual_test;
    return std::nullopt;
  }

  // ---- one Newton step ----------------------------------------------------------

  template <class Problem, class Monitor>
  std::optional<stop_reason> step(Problem& problem, Monitor& monitor, state_view u) {
    const int k = m_report.newton_steps;
    if (k >= m_settings.newton_step_budget) return stop_reason::newton_step_budget_spent;
    newton_step_record record;
    record.step = k + 1;
    phase_scope step_scope(m_ledger, trace_phase::newton_step, record.step, /*traced=*/false);

    const detail::step_inputs<Space> in{m_access, m_ledger, m_state, m_residual, m_step, m_norm, record};
    std::optional<stop_reason> early;
    bool phase_ended = false;
    if (m_steps.pseudo_transient()) {
      early = m_steps.pseudo_time_step(
          problem, in, [&] { return newton_direction(problem, monitor, record); }, m_linear.schedule(), phase_ended);
      if (phase_ended) {  // full Newton steps from here on
        m_forcing.reset();
        m_linear.schedule().request_rebuild();  // the preconditioner holds the pseudo-time shift
      }
    } else {
      early = newton_direction(problem, monitor, record);
      if (!early) {
        early =
            m_settings.globalization == globalization_strategy::trust_region
                ? m_steps.trust_region(problem, in, m_linear_residual_norm, m_linear.gmres().cauchy_point_available())
                : m_steps.line_search(problem, in, m_achieved_eta,
                                      m_settings.globalization == globalization_strategy::line_search);
      }
    }
    if (early) {
      record_failed_step(record);
      if (returned_to_pseudo_time(*early)) return std::nullopt;
      return early;
    }

    // The trial (state, residual and norm held by the step control) is accepted.
    const double new_norm = m_steps.trial_norm();
    if (m_settings.componentwise.enabled) {
      if constexpr (has_magnitude_reductions_v<Space>) {
        m_space.combine(1, m_steps.trial_state(), -1, m_state, m_steps.scratch());  // the step Δu
        m_step_ratio = m_space.weighted_max_norm(m_steps.scratch(), m_steps.trial_state(),
                                                 m_settings.componentwise.absolute_tolerance,
                                                 m_settings.componentwise.relative_tolerance);
        record.componentwise_step_ratio = m_step_ratio;
      }
    }
    if (m_best_is_current && !(new_norm < m_best_norm)) {
      m_space.copy(m_state, m_best_state);
      m_best_is_current = false;
    }
    std::swap(m_state, m_steps.trial_state());
    std::swap(m_residual, m_steps.trial_residual());
    m_norm = new_norm;
    const bool new_best = new_norm < m_best_norm;
    if (new_best) {
      m_best_norm = new_norm;
      m_best_is_current = true;
    }
    // Stagnation: no new best below stagnation_factor times the last reference.
    // The window counts Newton-phase steps only: it starts afresh where the pseudo-transient phase ends.
    if (phase_ended || new_norm < m_settings.stagnation_factor * m_stagnation_reference) {
      m_stagnation_reference = new_norm;
      m_steps_since_best = 0;
    } else {
      ++m_steps_since_best;
    }
    ++m_report.newton_steps;
    if (record.step_shortened_by_bounds) ++m_report.steps_shortened_by_bounds;
    m_access.write_state(m_state, u);

    append_to_history(record, new_norm, new_best);
    m_report.final_residual_norm = new_norm;
    const monitor_decision decision = detail::notify_newton_step_timed(monitor, record, m_ledger);
    m_ledger.trace_newton_step(record, step_scope.start());

    if (decision == monitor_decision::stop_now) return stop_reason::monitor_requested_stop;
    if (const auto converged = convergence()) return converged;
    if (m_settings.negligible_step_size > 0.0 &&
        record.step_norm <= m_settings.negligible_step_size * (1.0 + m_space.norm(m_state))) {
      return stop_reason::negligible_step;
    }
    if (!m_steps.pseudo_transient() && m_steps_since_best >= m_settings.stagnation_window &&
        !returned_to_pseudo_time(stop_reason::residual_stagnated)) {
      return stop_reason::residual_stagnated;
    }
    if (m_linear_budget_spent) return stop_reason::linear_iteration_budget_spent;
    return std::nullopt;
  }

  /// When a solve that began with pseudo-transient continuation fails in its
  /// Newton phase: back to pseudo-time stepping from the current state, if
  /// the step control allows it (globalization/pseudo_transient.hpp).
  bool returned_to_pseudo_time(stop_reason reason) {
    if (!m_steps.return_to_pseudo_time(reason, m_norm, m_report.initial_residual_norm, m_access)) return false;
    ++m_report.returns_to_pseudo_time;
    m_forcing.reset();
    m_linear.schedule().request_rebuild();  // the preconditioner must hold the pseudo-time shift again
    m_stagnation_reference = m_norm;
    m_steps_since_best = 0;
    return true;
  }

  /// Forcing term, preconditioner, GMRES: leaves x (R'(u) x ≈ R(u)) in m_step.
  template <class Problem, class Monitor>
  std::optional<stop_reason> newton_direction(Problem& problem, Monitor& monitor, newton_step_record& record) {
    const int k = m_report.newton_steps;
    const double eta = m_forcing.next(m_norm, m_target_norm);
    record.forcing_term = eta;
    m_access.linearize_at(m_state, m_residual);
    bool setup_failed = false;
    record.preconditioner_set_up =
        m_linear.rebuild_if_due(m_access, problem, m_ledger, m_state, m_residual, k, m_steps.shift(), setup_failed);
    if (setup_failed) return stop_reason::preconditioner_setup_failed;
    const std::int64_t budget_left = m_settings.linear_iteration_budget - m_report.linear_iterations;
    if (budget_left <= 0) return stop_reason::linear_iteration_budget_spent;
    const std::int64_t used_before = m_report.linear_iterations;
    auto linear_monitor = [&](int iteration, double relative) {
      m_report.linear_iterations = used_before + iteration;
      m_access.check_cancellation_and_clock();  // after every Arnoldi step: the time limit holds within GMRES
      if (detail::notify_linear_iteration_timed(monitor, linear_iteration_record{record.step, iteration, relative, eta},
                                                m_ledger) == monitor_decision::stop_now) {
        m_monitor_stopped = true;
        return monitor_decision::stop_now;
      }
      if (iteration >= budget_left) {
        m_linear_budget_spent = true;
        return monitor_decision::stop_now;
      }
      return monitor_decision::keep_going;
    };
    const linear_solve_result linear =
        m_linear.solve(m_access, problem, m_ledger, m_residual, m_step, eta, linear_monitor, m_steps.cauchy_target());
    if (m_monitor_stopped) return stop_reason::monitor_requested_stop;
    record.linear_iterations = linear.iterations;
    record.linear_status = linear.status;
    m_report.recycled_space_refreshes += linear.recycled_space_refreshes;
    m_report.true_residual_mismatches += linear.true_residual_mismatches;
    m_achieved_eta = linear.relative_residual();
    m_linear_residual_norm = linear.final_residual_norm;
    record.relative_linear_residual = m_achieved_eta;
    // Recycling GMRES may converge on the recycled subspace alone, with no
    // Arnoldi step: that direction is as good as any.
    const bool none = (linear.iterations == 0 && !linear.converged()) || !(m_achieved_eta < 1.0);
    // In pseudo-time stepping too little progress counts as none: the step control retries a smaller δ.
    const bool too_little = m_steps.pseudo_transient() && !linear.converged() &&
                            m_achieved_eta > m_settings.pseudo_transient.maximum_useful_relative_linear_residual;
    if ((none || too_little) && m_linear_budget_spent) return stop_reason::linear_iteration_budget_spent;
    if (none) return no_direction_cause();
    if (too_little) return stop_reason::no_newton_direction;
    m_forcing.record(eta, m_norm, linear.final_residual_norm);
    return std::nullopt;
  }

  /// Why GMRES gave no direction: a preconditioner whose output is not finite
  /// (checked by applying it once more to R(u)), or anything else.
  std::optional<stop_reason> no_direction_cause() {
    if constexpr (!std::is_same_v<typename detail::preconditioned_linear_solve<Space, Preconditioner>::target_type,
                                  identity_preconditioner>) {
      if (m_linear.output_is_finite(m_residual, m_steps.scratch())) return stop_reason::no_newton_direction;
      return stop_reason::preconditioner_output_not_finite;
    } else {
      return stop_reason::no_newton_direction;
    }
  }

  /// Keeps a step that could not be completed in the history (accepted =
  /// false, state unchanged), when it got as far as a Newton direction.
  void record_failed_step(newton_step_record& record) {
    if (!(record.forcing_term > 0.0)) return;
    record.accepted = false;
    append_to_history(record, m_norm, false);
  }

  /// Completes `record` with the residual norm it ends at and the counters
  /// so far, and appends it to the report's history.
  void append_to_history(newton_step_record& record, double residual_norm, bool new_best) {
    record.residual_norm = residual_norm;
    record.relative_residual_norm =
        m_report.initial_residual_norm > 0.0 ? residual_norm / m_report.initial_residual_norm : 0.0;
    record.elapsed_seconds = m_ledger.elapsed_seconds();
    record.residual_evaluations = m_report.residual_evaluations;
    m_report.history.push_back(record);
    m_field_tracker.record_step(m_residual, m_report.field_residuals, record.accepted, new_best);
  }

  // ---- members ------------------------------------------------------------------------

  newton_settings m_settings;
  Space m_space;
  detail::preconditioned_linear_solve<Space, Preconditioner> m_linear;
  problem_access<Space> m_access;
  forcing_term_sequence m_forcing;
  phase_ledger m_ledger;
  solve_report m_report;
  std::size_t m_history_capacity = 0;

  detail::newton_step_control<Space> m_steps;
  detail::converged_linearization<Space, Preconditioner> m_linearized;

  // Newton vectors (scaled variables when scaling is set).
  vector_type m_state, m_residual, m_step, m_best_state;

  double m_norm = 0.0;
  double m_best_norm = 0.0;
  double m_target_norm = 0.0;
  double m_achieved_eta = 0.0;
  double m_linear_residual_norm = 0.0;  // ‖R + J s‖ GMRES reached for the last direction
  double m_step_ratio = 0.0;            // component-wise measure of the last accepted step
  double m_stagnation_reference = 0.0;
  int m_steps_since_best = 0;
  field_residual_tracker m_field_tracker;  // ‖R_f‖ per field, for problems with field_layout()
  bool m_best_is_current = true;
  bool m_linear_budget_spent = false;
  bool m_monitor_stopped = false;
};

/// One-shot convenience: solve R(u) = 0 from u with the default vector space,
/// no preconditioner and the given settings.
template <class Residual>
solve_report solve(Residual&& residual, Eigen::Ref<Eigen::VectorXd> u, const newton_settings& settings = {}) {
  newton_krylov_solver<> solver(settings);
  return solver.solve(std::forward<Residual>(residual), u);
}

}  // namespace nkit

#endif  // NKIT_NEWTON_NEWTON_KRYLOV_SOLVER_HPP
