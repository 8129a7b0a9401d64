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
/// Jacobian-vector products (problem_access.hpp), and move along s = −x with
/// the chosen globalisation kernel: line search, full step, trust region or
/// pseudo-transient continuation (globalization/). The caller may drive the
/// loop itself with begin() and advance() (newton_run.hpp); solve() is
/// exactly that loop.
///
/// Between steps `u` holds the last accepted iterate. When the solve ends
/// without converging, `u` holds the iterate with the smallest residual norm
/// seen. When the user's residual (or any user callback) throws, the
/// exception propagates unchanged and `u` holds the last accepted iterate.
///
/// Optional problem members are detected at compile time (core/residual.hpp):
/// jacobian_product, assemble_jacobian, jacobian_pattern, is_admissible,
/// pseudo_time_weights.
///
/// Allocation: the workspace (Newton vectors, GMRES basis, difference
/// vectors, history capacity) is allocated on the first solve and kept, so a
/// later solve of the same size allocates nothing in its iterations; solve()
/// allocates once at the end, to copy the history into the returned report.
/// (History room is reserved for min(max_newton_steps, 1024) steps; a solve
/// longer than that grows it once, and the larger capacity is kept.)

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>

#include "../core/eigen_vector_space.hpp"
#include "../core/preconditioner.hpp"
#include "../core/residual.hpp"
#include "../core/vector_space.hpp"
#include "../globalization/forcing_term.hpp"
#include "../globalization/line_search.hpp"
#include "../globalization/pseudo_transient.hpp"
#include "../globalization/trust_region.hpp"
#include "../krylov/gmres.hpp"
#include "../report/monitor.hpp"
#include "../report/outcome.hpp"
#include "../report/phase_ledger.hpp"
#include "../report/report.hpp"
#include "../report/trace.hpp"
#include "linear_solve.hpp"
#include "newton_run.hpp"
#include "newton_settings.hpp"
#include "preconditioner_schedule.hpp"
#include "problem_access.hpp"

namespace nkit {

template <class Space = eigen_vector_space<double>, class Preconditioner = identity_preconditioner>
class newton_krylov_solver {
  static_assert(is_vector_space_v<Space>, "nkit: Space does not provide the vector-space members (vector_space.hpp)");

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
        m_access(m_settings, m_space) {}

  /// Validates and stores the settings; throws std::invalid_argument naming
  /// the first bad field. Must not be called while a run is in progress.
  void configure(const newton_settings& settings) {
    settings.validate();
    m_settings = settings;
    m_linear.configure(settings);
    m_access.configure(settings);
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
  newton_run<newton_krylov_solver, Problem, Monitor> begin(Problem& problem, state_view u, Monitor monitor = {}) {
    return newton_run<newton_krylov_solver, Problem, Monitor>(*this, problem, u, std::move(monitor));
  }

  /// Solves R(u) = 0 starting from u; see the file comment for what u holds afterwards.
  template <class Problem, class Monitor = null_monitor>
  solve_report solve(Problem&& problem, state_view u, Monitor&& monitor = {}) {
    using problem_type = std::remove_reference_t<Problem>;
    using monitor_type = std::remove_reference_t<Monitor>&;
    newton_run<newton_krylov_solver, problem_type, monitor_type> run(*this, problem, u, monitor);
    while (run.advance() == outcome::in_progress) {
    }
    return run.report();
  }

  /// Bytes of workspace held now: Newton vectors, GMRES, problem access
  /// (bounds, scales, difference workspace, the assembled Jacobian), the
  /// preconditioner's memory_bytes() and the history capacity.
  std::size_t workspace_bytes() const {
    std::size_t entries = 0;
    for (const vector_type* v : {&m_state, &m_residual, &m_step, &m_trial_state, &m_trial_residual, &m_best_state,
                                 &m_product, &m_cauchy, &m_cauchy_product, &m_weights, &m_shift}) {
      entries += static_cast<std::size_t>(v->size());
    }
    return sizeof(scalar_type) * entries + m_linear.workspace_bytes() + m_access.workspace_bytes() +
           m_report.history.capacity() * sizeof(newton_step_record);
  }

  /// Bytes held for the assembled Jacobian (values, indices, row offsets, coloring workspace).
  std::size_t assembled_jacobian_bytes() const { return m_access.assembled_jacobian_bytes(); }

 private:
  template <class Solver, class Problem, class Monitor>
  friend class newton_run;

  /// History records reserved up front (about 130 bytes each).
  static constexpr int max_reserved_history = 1024;

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

    // Capped: max_newton_steps = INT_MAX ("no limit") must not reserve ~250 GB.
    // Longer solves grow the history once; the capacity is kept for later solves.
    m_history_capacity = std::max(
        m_history_capacity, static_cast<std::size_t>(std::min(m_settings.max_newton_steps, max_reserved_history)));
    m_ledger.begin(m_report, m_history_capacity);

    for (vector_type* v :
         {&m_state, &m_residual, &m_step, &m_trial_state, &m_trial_residual, &m_best_state, &m_product}) {
      m_space.allocate_like(*v, u);
    }
    m_access.template start<Problem>(m_ledger, m_state);
    if (m_settings.globalization == globalization_strategy::trust_region) {
      m_space.allocate_like(m_cauchy, u);
      m_space.allocate_like(m_cauchy_product, u);
    }
    m_pseudo_transient = m_settings.globalization == globalization_strategy::pseudo_transient;
    if (m_pseudo_transient) {
      m_space.allocate_like(m_weights, u);
      m_space.allocate_like(m_shift, u);
      m_space.fill(1, m_weights);
      m_pseudo_time_step = m_settings.pseudo_transient.initial_step;
      m_access.set_diagonal_shift(&m_shift);
    }
    m_linear.start_solve(m_state);
    m_access.load_state(problem, u, m_state);

    m_forcing = forcing_term_sequence(m_settings.forcing);
    m_forcing.reset();
    m_best_is_current = true;
    m_steps_since_best = 0;
    m_linear_budget_spent = false;
    m_monitor_stopped = false;
    m_trust_radius = m_settings.trust_region.initial_radius;

    // Until R(u0) is known the norms are unknown (NaN), not those of an earlier
    // solve: a time limit or cancellation can stop the run before it is evaluated.
    m_norm = m_best_norm = std::numeric_limits<double>::quiet_NaN();
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    m_access.evaluate(problem, m_state, m_residual, evaluation_purpose::state);
    m_norm = m_space.norm(m_residual);
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    m_best_norm = m_norm;
    m_target_norm = std::max(m_settings.absolute_tolerance, m_settings.relative_tolerance * m_norm);
    m_stagnation_reference = m_norm;
    if (m_ledger.trace() != nullptr) {
      m_ledger.record_counter(trace_counter::residual_norm, detail::clock_type::now(), m_norm);
    }
  }

  /// After start(): the outcome when no step is needed or possible.
  outcome initial_outcome() const {
    if (!m_space.all_finite(m_residual)) return outcome::non_finite_initial_residual;
    return convergence();
  }

  /// Ends the run: on a non-converged outcome u gets the best iterate.
  void finish(outcome reason, state_view u) {
    m_report.result = reason;
    if (!is_converged(reason) && !m_best_is_current) {
      std::swap(m_state, m_best_state);
      m_norm = m_best_norm;
      m_best_is_current = true;
    }
    if (m_state.size() == u.size()) m_access.write_state(m_state, u);
    m_report.final_residual_norm = m_norm;
    m_report.wall_seconds = m_ledger.elapsed_seconds();
    m_report.median_residual_seconds = m_ledger.median_residual_seconds();
    phase_seconds& t = m_report.time;
    t.other = m_report.wall_seconds - t.measured();
    m_report.workspace_bytes = workspace_bytes();
  }

  outcome convergence() const {
    if (m_norm <= m_settings.absolute_tolerance) return outcome::converged_absolute_residual;
    if (m_norm <= m_settings.relative_tolerance * m_report.initial_residual_norm) {
      return outcome::converged_relative_residual;
    }
    return outcome::in_progress;
  }

  // ---- one Newton step ----------------------------------------------------------

  template <class Problem, class Monitor>
  outcome step(Problem& problem, Monitor& monitor, state_view u) {
    const int k = m_report.newton_steps;
    if (k >= m_settings.max_newton_steps) return outcome::newton_step_limit;
    newton_step_record record;
    record.step = k + 1;
    phase_scope step_scope(m_ledger, trace_phase::newton_step, record.step, /*traced=*/false);

    outcome early = outcome::in_progress;
    if (m_pseudo_transient) {
      early = pseudo_transient_step(problem, monitor, record);
    } else {
      early = newton_direction(problem, monitor, record);
      if (early == outcome::in_progress) {
        early =
            m_settings.globalization == globalization_strategy::trust_region
                ? trust_region_step(problem, record)
                : line_search_step(problem, record, m_settings.globalization == globalization_strategy::line_search);
      }
    }
    if (early != outcome::in_progress) return early;

    // The trial (m_trial_state, m_trial_residual, m_trial_norm) is accepted.
    const double new_norm = m_trial_norm;
    if (m_best_is_current && !(new_norm < m_best_norm)) {
      m_space.copy(m_state, m_best_state);
      m_best_is_current = false;
    }
    std::swap(m_state, m_trial_state);
    std::swap(m_residual, m_trial_residual);
    m_norm = new_norm;
    if (new_norm < m_best_norm) {
      m_best_norm = new_norm;
      m_best_is_current = true;
    }
    // Stagnation: no new best below stagnation_factor times the last reference.
    if (new_norm < m_settings.stagnation_factor * m_stagnation_reference) {
      m_stagnation_reference = new_norm;
      m_steps_since_best = 0;
    } else {
      ++m_steps_since_best;
    }
    ++m_report.newton_steps;
    if (record.bound_active) ++m_report.bound_limited_steps;
    m_access.write_state(m_state, u);

    record.residual_norm = new_norm;
    record.relative_residual_norm =
        m_report.initial_residual_norm > 0.0 ? new_norm / m_report.initial_residual_norm : 0.0;
    record.elapsed_seconds = m_ledger.elapsed_seconds();
    record.residual_evaluations = m_report.residual_evaluations;
    m_report.history.push_back(record);
    m_report.final_residual_norm = new_norm;
    const monitor_decision decision = detail::notify_newton_step_timed(monitor, record, m_ledger);
    m_ledger.trace_newton_step(record, step_scope.start());

    if (decision == monitor_decision::stop_now) return outcome::stopped_by_monitor;
    if (const outcome converged = convergence(); converged != outcome::in_progress) return converged;
    if (m_settings.step_tolerance > 0.0 &&
        record.step_norm <= m_settings.step_tolerance * (1.0 + m_space.norm(m_state))) {
      return outcome::step_below_tolerance;
    }
    if (!m_pseudo_transient && m_steps_since_best >= m_settings.stagnation_window) return outcome::stagnated;
    if (m_linear_budget_spent) return outcome::linear_iteration_budget;
    return outcome::in_progress;
  }

  /// Forcing term, preconditioner, GMRES: leaves x (R'(u) x ≈ R(u)) in m_step.
  template <class Problem, class Monitor>
  outcome newton_direction(Problem& problem, Monitor& monitor, newton_step_record& record) {
    const int k = m_report.newton_steps;
    const double eta = m_forcing.next(m_norm, m_target_norm);
    record.forcing_term = eta;
    m_access.linearize_at(m_state, m_residual);
    bool setup_failed = false;
    record.preconditioner_rebuilt = m_linear.rebuild_if_due(m_access, problem, m_ledger, m_state, m_residual, k,
                                                            m_pseudo_transient ? &m_shift : nullptr, setup_failed);
    if (setup_failed) return outcome::preconditioner_failed;
    const std::int64_t budget_left = m_settings.linear_iteration_budget - m_report.linear_iterations;
    if (budget_left <= 0) return outcome::linear_iteration_budget;
    const std::int64_t used_before = m_report.linear_iterations;
    auto observer = [&](int iteration, double relative) {
      m_report.linear_iterations = used_before + iteration;
      if (detail::notify_linear_iteration_timed(monitor, iteration, relative, m_ledger, record.step) ==
          monitor_decision::stop_now) {
        m_monitor_stopped = true;
        return false;
      }
      if (iteration >= budget_left) {
        m_linear_budget_spent = true;
        return false;
      }
      return true;
    };
    const bool trust_region = m_settings.globalization == globalization_strategy::trust_region && !m_pseudo_transient;
    const linear_solve_result linear = m_linear.solve(m_access, problem, m_ledger, m_residual, m_step, eta, observer,
                                                      trust_region ? &m_cauchy : nullptr);
    if (m_monitor_stopped) return outcome::stopped_by_monitor;
    record.linear_iterations = linear.iterations;
    record.linear_status = linear.status;
    m_achieved_eta = linear.relative_residual();
    record.relative_linear_residual = m_achieved_eta;
    if (linear.iterations == 0 || !(m_achieved_eta < 1.0)) return outcome::linear_solver_no_progress;
    m_forcing.record(eta, m_norm, linear.final_residual_norm);
    return outcome::in_progress;
  }

  /// Evaluates R at m_trial_state = u − t x; returns ‖R‖ (+inf when inadmissible).
  template <class Problem>
  double trial(Problem& problem, const vector_type& x, double t) {
    m_space.combine(1, m_state, -t, x, m_trial_state);
    return m_access.evaluate_trial(problem, m_trial_state, m_trial_residual);
  }

  template <class Problem>
  outcome line_search_step(Problem& problem, newton_step_record& record, bool require_decrease) {
    phase_scope scope(m_ledger, trace_phase::globalization, record.step);
    const double limit = m_access.bound_limit(m_state, m_step);
    record.bound_active = limit < 1.0;
    // Shortening the direction to t·s raises the linear-model residual to (1 − t(1 − η))‖R‖.
    const double eta = 1.0 - limit * (1.0 - m_achieved_eta);
    const line_search_result search = backtracking_line_search(
        m_settings.line_search, m_norm, eta, require_decrease,
        [&](double lambda) { return trial(problem, m_step, lambda * limit); },
        [&]() {
          m_access.apply_jacobian(problem, m_step, m_product);  // φ'(0) = Rᵀ R'(u) s with s = −limit·x
          return -limit * m_space.dot(m_residual, m_product);
        });
    scope.close();
    record.backtracks = search.trials - 1;
    m_report.backtracks += search.trials - 1;
    m_report.non_finite_trials += search.non_finite_trials;
    if (!search.accepted) return outcome::line_search_failed;
    // The last trial evaluated is the accepted one: m_trial_* hold it.
    m_trial_norm = search.residual_norm;
    record.step_length = search.step_length * limit;
    record.step_norm = record.step_length * m_space.norm(m_step);
    return outcome::in_progress;
  }

  /// Dogleg between the Krylov-subspace Cauchy point and the Newton step
  /// (globalization/trust_region.hpp); two J·v products give the linear model.
  template <class Problem>
  outcome trust_region_step(Problem& problem, newton_step_record& record) {
    phase_scope scope(m_ledger, trace_phase::globalization, record.step);
    // Newton point x_N = m_step, Cauchy point x_C = m_cauchy (both for R'(u) x = R(u); s = −x).
    if (!m_linear.gmres().cauchy_point_available()) m_space.fill(0, m_cauchy);
    m_access.apply_jacobian(problem, m_step, m_product);
    m_access.apply_jacobian(problem, m_cauchy, m_cauchy_product);
    dogleg_model model;
    model.residual_squared = m_norm * m_norm;
    model.residual_dot_cauchy = -m_space.dot(m_residual, m_cauchy_product);  // R·J s_C with s_C = −x_C
    model.residual_dot_newton = -m_space.dot(m_residual, m_product);
    model.cauchy_squared = m_space.dot(m_cauchy_product, m_cauchy_product);
    model.newton_squared = m_space.dot(m_product, m_product);
    model.cauchy_dot_newton = m_space.dot(m_cauchy_product, m_product);
    const double newton_norm = m_space.norm(m_step);
    const double cauchy_norm = m_space.norm(m_cauchy);
    const double cauchy_dot_newton = m_space.dot(m_cauchy, m_step);
    double limit = 1.0;
    const trust_region_result result = dogleg_search(
        m_settings.trust_region, m_trust_radius, m_norm, newton_norm, cauchy_norm, cauchy_dot_newton,
        [&](const dogleg_point& point) {
          // x = a x_C + b x_N (held in m_trial_residual until the trial is evaluated).
          m_space.combine(point.cauchy_weight, m_cauchy, point.newton_weight, m_step, m_trial_residual);
          limit = m_access.bound_limit(m_state, m_trial_residual);
          trust_region_trial tried;
          tried.step_norm = limit * m_space.norm(m_trial_residual);
          tried.predicted_reduction =
              model.predicted_reduction(point.cauchy_weight * limit, point.newton_weight * limit);
          m_space.scale(limit, m_trial_residual);
          m_space.combine(1, m_state, -1, m_trial_residual, m_trial_state);
          const std::int64_t inadmissible_before = m_report.inadmissible_trials;
          tried.residual_norm = m_access.evaluate_trial(problem, m_trial_state, m_trial_residual);
          if (!std::isfinite(tried.residual_norm) && m_report.inadmissible_trials == inadmissible_before) {
            ++m_report.non_finite_trials;
          }
          return tried;
        });
    scope.close();
    if (!result.accepted) return outcome::trust_region_collapsed;
    m_trial_norm = result.residual_norm;
    record.step_length = 1.0;
    record.step_norm = result.step_norm;
    record.trust_radius = m_trust_radius;
    record.bound_active = limit < 1.0;
    record.backtracks = result.rejected_trials;
    m_report.backtracks += result.rejected_trials;
    return outcome::in_progress;
  }

  /// One pseudo-time step: (W/δ + R'(u)) x = R(u), u ← u − x; δ by SER
  /// (globalization/pseudo_transient.hpp), retried with a smaller δ on failure.
  template <class Problem, class Monitor>
  outcome pseudo_transient_step(Problem& problem, Monitor& monitor, newton_step_record& record) {
    const pseudo_transient_settings& ptc = m_settings.pseudo_transient;
    if constexpr (detail::has_pseudo_time_weights<Problem, vector_type>::value) {
      problem.pseudo_time_weights(m_access.physical_state(m_state), m_weights);
      // In scaled variables the term is D_r⁻¹ (W/δ) D_u.
      m_access.scale_pseudo_time_weights(m_weights);
    }
    outcome abandoned = outcome::in_progress;
    double limit = 1.0;
    const pseudo_time_step_result result =
        pseudo_time_step_search(ptc, m_pseudo_time_step, m_norm, [&](double delta, int attempt) {
          m_space.copy(m_weights, m_shift);
          m_space.scale(1 / delta, m_shift);
          if (attempt > 0) m_linear.schedule().request_rebuild();  // the shift changed
          pseudo_time_attempt tried;
          abandoned = newton_direction(problem, monitor, record);
          if (abandoned != outcome::in_progress) {
            tried.abandoned = true;
            return tried;
          }
          phase_scope scope(m_ledger, trace_phase::globalization, record.step);
          limit = m_access.bound_limit(m_state, m_step);
          const std::int64_t inadmissible_before = m_report.inadmissible_trials;
          tried.residual_norm = trial(problem, m_step, limit);
          if (!std::isfinite(tried.residual_norm) && m_report.inadmissible_trials == inadmissible_before) {
            ++m_report.non_finite_trials;
          }
          return tried;
        });
    if (result.abandoned) return abandoned;
    if (!result.accepted) return outcome::pseudo_time_step_collapsed;
    record.pseudo_time_step = result.used_step;
    record.step_length = limit;
    record.step_norm = limit * m_space.norm(m_step);
    record.bound_active = limit < 1.0;
    record.backtracks = result.rejected_attempts;
    m_report.backtracks += result.rejected_attempts;
    m_trial_norm = result.residual_norm;
    if (pseudo_transient_phase_ends(ptc, result.residual_norm, m_report.initial_residual_norm, m_pseudo_time_step)) {
      m_pseudo_transient = false;  // Newton with line search from here on
      m_access.set_diagonal_shift(nullptr);
      m_forcing.reset();
      m_linear.schedule().request_rebuild();  // the preconditioner holds the pseudo-time shift
    }
    return outcome::in_progress;
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

  // Newton vectors (scaled variables when scaling is set).
  vector_type m_state, m_residual, m_step, m_trial_state, m_trial_residual, m_best_state, m_product;
  vector_type m_cauchy, m_cauchy_product;  // trust region
  vector_type m_weights, m_shift;          // pseudo-transient term W/δ

  double m_norm = 0.0;
  double m_trial_norm = 0.0;
  double m_best_norm = 0.0;
  double m_target_norm = 0.0;
  double m_achieved_eta = 0.0;
  double m_stagnation_reference = 0.0;
  int m_steps_since_best = 0;
  bool m_best_is_current = true;
  bool m_linear_budget_spent = false;
  bool m_monitor_stopped = false;
  double m_trust_radius = 0.0;      // trust region
  double m_pseudo_time_step = 0.0;  // pseudo-transient continuation
  bool m_pseudo_transient = false;  // still in the pseudo-transient phase
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
