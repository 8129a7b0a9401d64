#ifndef NKIT_TIME_IMPLICIT_TIME_STEPPER_HPP
#define NKIT_TIME_IMPLICIT_TIME_STEPPER_HPP

/// \file time/implicit_time_stepper.hpp
/// The adaptive implicit time stepper for M du/dt = f(t, u): variable-step
/// BDF1/BDF2 or the TR-BDF2 ESDIRK pair, each stage solved by ONE reusable
/// nkit Newton–Krylov solver with matrix-free J·v, a PI step-size controller,
/// rejection and retry, and a preconditioner carried across stages and steps.
///
///   nkit::implicit_time_stepper<> stepper(settings);
///   const nkit::integration_report& report = stepper.integrate(problem, u, t0, t1);
///
/// `u` holds u(t0) on entry; after every accepted step it holds the newest
/// state, and when the integration ends (whatever the reason) the state at
/// report.final_time. An exception from user code propagates and leaves u at
/// the last accepted step.
///
/// Stages. Every stage solves G(U) = M U − b − γΔt f(t, U) = 0 (scaled as in
/// stage_residual.hpp) from an extrapolated predictor, by the Newton–Krylov
/// solver with the convergence test and rebuild policy of stage_solver.hpp. A
/// failed stage rejects the step, shrinks Δt and requests a fresh
/// preconditioner.
///
/// BDF start: the first step is taken as two backward-Euler half steps and
/// compared with one full backward-Euler step (Richardson estimate), which
/// leaves the three states that BDF2 and its predictor need.
///
/// ESDIRK: the stage equations use f(t_n, u_n) (evaluated once per step) and
/// the increments Δt f_j = (M Z_j − b_j)/γ, so M is never inverted. The error
/// estimate Σ_j (b_j − b̂_j) Δt M⁻¹f_j needs du/dt in state units at t_n: for
/// M = I or an invertible diagonal it is M⁻¹ f(t_n, u_n); otherwise the last
/// stage's increment of the previous step (exact for TR-BDF2, whose last
/// stage does not depend on the first), and on the first step M⁻¹f on the
/// rows with a nonzero mass and 0 elsewhere (algebraic rows, mass operators):
/// the first estimate is then approximate and a few extra rejections at the
/// start are possible.
///
/// Allocation: vectors, the Newton solver's workspace and the history room
/// are allocated at the first integrate(); a later integration of the same
/// size allocates nothing while stepping (the history room is reserved anew
/// only when history_capacity grows). The report is held by the stepper and
/// returned by reference (valid until the next integrate()).

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>

#include "../detail/timer.hpp"
#include "../newton/newton_krylov_solver.hpp"
#include "../report/monitor.hpp"
#include "bdf_formulas.hpp"
#include "error_weights.hpp"
#include "esdirk_tableau.hpp"
#include "stage_residual.hpp"
#include "stage_solver.hpp"
#include "step_size_controller.hpp"
#include "time_problem.hpp"
#include "time_report.hpp"
#include "time_settings.hpp"

namespace nkit {

/// The default time monitor: observes nothing.
struct null_time_monitor {
  monitor_decision operator()(const time_step_record& /*record*/) const { return monitor_decision::keep_going; }
};

template <class Space = eigen_vector_space<double>, class Preconditioner = identity_preconditioner>
class implicit_time_stepper {
 public:
  using space_type = Space;
  using vector_type = typename Space::vector_type;
  using state_view = typename Space::state_view;
  using const_view = typename Space::const_view;
  using newton_solver_type = newton_krylov_solver<Space, Preconditioner>;

  explicit implicit_time_stepper(time_stepper_settings settings = {}, Space space = {},
                                 Preconditioner preconditioner = {})
      : m_settings(validated(settings)),
        m_space(space),
        m_stage_solver(inner_settings(m_settings), std::move(space), std::move(preconditioner)),
        m_tableau(tr_bdf2_tableau()) {}

  /// Validates and stores new settings (std::invalid_argument naming the field).
  void configure(const time_stepper_settings& settings) {
    settings.validate();
    m_stage_solver.newton_solver().configure(inner_settings(settings));
    m_settings = settings;
  }
  const time_stepper_settings& settings() const { return m_settings; }

  /// The inner Newton–Krylov solver: its preconditioner, bounds, scaling, trace.
  newton_solver_type& newton_solver() { return m_stage_solver.newton_solver(); }

  /// Per-entry tolerances (all absolute entries > 0, relative >= 0, finite);
  /// pass empty vectors to return to the scalar settings.
  void set_tolerances(const_view absolute, const_view relative) {
    const auto check = [](const_view v, const char* what, bool positive) {
      for (Eigen::Index i = 0; i < v.size(); ++i) {
        if (!(std::isfinite(v(i)) && (positive ? v(i) > 0.0 : v(i) >= 0.0))) {
          throw std::invalid_argument(std::string("nkit: set_tolerances: ") + what + " entry " + std::to_string(i) +
                                      " must be finite and " + (positive ? "> 0" : ">= 0") + " (got " +
                                      detail::number_text(v(i)) + ")");
        }
      }
    };
    check(absolute, "absolute", true);
    check(relative, "relative", false);
    m_tolerances.set_tolerances(absolute, relative);
  }

  /// γΔt of the stage being solved (for preconditioners built from the state).
  double current_shift() const { return m_stage_solver.current_shift(); }
  double time() const { return m_time; }
  /// The step the controller proposes next.
  double next_step_size() const { return m_next_step; }
  const integration_report& report() const { return m_report; }

  /// Integrates from t_start to t_end (t_end > t_start). The monitor is a
  /// callable taking const time_step_record& and returning monitor_decision
  /// (or void); it is called after every attempted step.
  template <class System, class Monitor = null_time_monitor>
  const integration_report& integrate(System& system, state_view u, double t_start, double t_end,
                                      Monitor&& monitor = {}) {
    if (!(std::isfinite(t_start) && std::isfinite(t_end) && t_end > t_start)) {
      throw std::invalid_argument("nkit: integrate needs finite t_start < t_end (got t_start = " +
                                  detail::number_text(t_start) + ", t_end = " + detail::number_text(t_end) + ")");
    }
    begin(system, u, t_start, t_end - t_start);
    const step_control_settings& control = m_settings.step_control;
    int consecutive_failures = 0;
    while (!m_report.reason) {
      if (m_time >= t_end) {
        m_report.reason = integration_stop_reason::end_time_reached;
        break;
      }
      if (const auto stop = budget_stop()) {
        m_report.reason = stop;
        break;
      }
      double h = control.adaptive ? std::min(m_next_step, control.maximum_step) : control.initial_step;
      const double remaining = t_end - m_time;
      if (h >= remaining * (1.0 - 1e-12)) h = remaining;
      if (h < control.minimum_step && h < remaining) {
        m_report.reason = integration_stop_reason::step_size_below_minimum;
        break;
      }
      const bool accepted = attempt_step(system, u, h, h == remaining ? t_end : m_time + h);
      consecutive_failures = accepted ? 0 : consecutive_failures + 1;
      if (notify(monitor, m_last_record) == monitor_decision::stop_now) {
        m_report.reason = integration_stop_reason::monitor_requested_stop;
      } else if (m_cancelled) {
        m_report.reason = integration_stop_reason::cancellation_flag_raised;
      } else if (consecutive_failures >= control.maximum_consecutive_rejections) {
        m_report.reason = integration_stop_reason::too_many_consecutive_rejections;
      }
    }
    finish();
    return m_report;
  }

  /// Starts a caller-driven integration at (t_start, u): clears the history
  /// and the report. `time_span` (> 0) only sizes the automatic first step.
  template <class System>
  void begin(System& system, const_view u, double t_start, double time_span) {
    static_assert(is_time_problem_v<System, vector_type>,
                  "nkit: the problem needs rate(double t, const vector_type& u, vector_type& f) (time_problem.hpp)");
    if (m_space.global_size(u) == 0) throw std::invalid_argument("nkit: the state vector u is empty");
    if (!m_space.all_finite(u)) throw std::invalid_argument("nkit: the initial state u contains NaN or Inf entries");
    const auto& mass = mass_of(system);
    mass.check_size(u.size());
    check_tolerance_sizes(u.size());
    m_clock.restart();
    auto history = std::move(m_report.history);
    m_report = integration_report{};
    m_report.history = std::move(history);
    m_report.history.clear();
    m_report.history.reserve(static_cast<std::size_t>(m_settings.history_capacity));
    m_workspace.rate_evaluations = 0;
    m_workspace.rate_seconds.clear();
    for (vector_type* v : {&m_rate, &m_slope, &m_known, &m_candidate, &m_predicted, &m_error, &m_scratch, &m_weights,
                           &m_midpoint, &m_full_step}) {
      m_space.allocate_like(*v, u);
    }
    for (auto& v : m_states) m_space.allocate_like(v, u);
    for (int i = 0; i < m_tableau.stages; ++i) {
      m_space.allocate_like(m_stage_values[i], u);
      m_space.allocate_like(m_increments[i], u);
      m_space.allocate_like(m_mass_increments[i], u);
    }
    m_space.copy(u, m_states[0]);
    m_times[0] = t_start;
    m_history_count = 1;
    m_time = t_start;
    m_report.final_time = t_start;
    m_controller.reset();
    m_attempts = 0;
    m_cancelled = false;
    m_stage_solver.reset(u);
    detail::stage_residual<System, Space> stage(system, m_space, mass, m_workspace);
    initial_slope(stage, mass);
    m_next_step = initial_step(time_span);
  }

  /// One attempt of a step of size h from time(); returns true when accepted
  /// (u and time() advance to t_end_of_step, or time() + h when not given).
  template <class System>
  bool attempt_step(System& system, state_view u, double h, double t_end_of_step = -1.0) {
    if (!(h > 0.0 && std::isfinite(h))) {
      throw std::invalid_argument("nkit: attempt_step needs a finite step > 0 (got " + detail::number_text(h) + ")");
    }
    if (!(t_end_of_step > m_time)) t_end_of_step = m_time + h;
    detail::stage_residual<System, Space> stage(system, m_space, mass_of(system), m_workspace);
    time_step_record& record = m_last_record;
    record = time_step_record{};
    record.attempt = ++m_attempts;
    record.start_time = m_time;
    record.step_size = h;
    const std::int64_t evaluations_before = m_workspace.rate_evaluations;
    int k = 0;  // the local error estimate is O(Δt^k): the controller's exponent is 1/k
    bool solved = false;
    if (m_settings.method == time_method::esdirk) {
      record.order = m_tableau.order;
      k = std::min(m_tableau.order, m_tableau.embedded_order) + 1;
      solved = esdirk_attempt(stage, h, record);
    } else if (m_history_count == 1) {
      record.order = 1;
      k = 2;
      solved = bdf_start_attempt(stage, h, record);
    } else {
      record.order = std::min(m_settings.bdf_order, m_history_count - 1);
      k = record.order + 1;
      solved = bdf_attempt(stage, h, record.order, record);
    }
    const step_control_settings& control = m_settings.step_control;
    bool accepted = false;
    if (!solved) {
      record.rejection = step_rejection::stage_solve_failed;
      record.error_norm = std::numeric_limits<double>::quiet_NaN();
      ++m_report.stage_solve_failures;
      m_stage_solver.after_failed_step(m_settings.preconditioner_rebuild);
      m_controller.reset();
      m_next_step = h * control.stage_failure_shrink_factor;
    } else {
      compute_weights(m_states[0], m_candidate);
      record.error_norm = detail::error_weights<Space>::norm(m_space, m_error, m_weights, m_scratch);
      if (!control.adaptive || record.error_norm <= 1.0) {
        accepted = true;
        double growth = control.maximum_step_growth;
        if (m_settings.method == time_method::bdf) growth = std::min(growth, control.bdf_maximum_step_ratio);
        const double last_interval = m_settings.method == time_method::bdf && m_history_count == 1 ? 0.5 * h : h;
        const double proposal = m_controller.after_acceptance(control, h, record.error_norm, k, growth);
        m_next_step = m_settings.method == time_method::bdf
                          ? std::min(proposal, control.bdf_maximum_step_ratio * last_interval)
                          : proposal;
        accept(u, h, t_end_of_step, stage);
      } else {
        record.rejection = step_rejection::error_test;
        ++m_report.error_test_failures;
        m_next_step = m_controller.after_rejection(control, h, record.error_norm, k);
      }
    }
    record.accepted = accepted;
    record.accepted_steps = m_report.accepted_steps;
    record.rate_evaluations = m_workspace.rate_evaluations - evaluations_before;
    record.next_step_size = m_next_step;
    record.elapsed_seconds = m_clock.seconds();
    if (static_cast<std::int64_t>(m_report.history.size()) < m_settings.history_capacity) {
      m_report.history.push_back(record);
    } else {
      ++m_report.records_not_stored;
    }
    m_report.newton_steps += record.newton_steps;
    m_report.linear_iterations += record.linear_iterations;
    m_report.preconditioner_setups += record.preconditioner_setups;
    m_report.recycled_space_refreshes += record.recycled_space_refreshes;
    m_report.true_residual_mismatches += record.true_residual_mismatches;
    m_report.stage_solves += record.stage_solves;
    m_report.rate_evaluations = m_workspace.rate_evaluations;
    m_report.median_rate_seconds = m_workspace.rate_seconds.median();
    m_report.wall_seconds = m_clock.seconds();
    return accepted;
  }

  /// The newest accepted state (at time()).
  const vector_type& state() const { return m_states[0]; }
  /// True once begin() or integrate() has set a start state.
  bool started() const { return m_history_count > 0; }

  /// The record of the last attempt.
  const time_step_record& last_record() const { return m_last_record; }

 private:
  static const time_stepper_settings& validated(const time_stepper_settings& settings) {
    settings.validate();
    return settings;
  }

  template <class Monitor>
  static monitor_decision notify(Monitor& monitor, const time_step_record& record) {
    if constexpr (std::is_void_v<decltype(monitor(record))>) {
      monitor(record);
      return monitor_decision::keep_going;
    } else {
      return monitor(record);
    }
  }

  static newton_settings inner_settings(const time_stepper_settings& settings) {
    newton_settings inner = settings.stage.newton;
    inner.preconditioner_rebuild.rebuild_at_solve_start = false;
    inner.preconditioner_rebuild.rebuild_every_newton_steps = std::numeric_limits<int>::max();
    if (inner.cancellation_flag == nullptr) inner.cancellation_flag = settings.cancellation_flag;
    return inner;
  }

  template <class System>
  const mass_matrix<vector_type>& mass_of(System& system) const {
    if constexpr (detail::has_mass<System>::value) {
      return system.mass();
    } else {
      static_cast<void>(system);
      return m_identity_mass;
    }
  }

  void check_tolerance_sizes(Eigen::Index size) const {
    if (m_tolerances.has_vector_absolute() && m_tolerances.vector_absolute().size() != size) {
      throw std::invalid_argument("nkit: set_tolerances: absolute has " +
                                  std::to_string(m_tolerances.vector_absolute().size()) +
                                  " entries but the state has " + std::to_string(size));
    }
    if (m_tolerances.has_vector_relative() && m_tolerances.vector_relative().size() != size) {
      throw std::invalid_argument("nkit: set_tolerances: relative has " +
                                  std::to_string(m_tolerances.vector_relative().size()) +
                                  " entries but the state has " + std::to_string(size));
    }
  }

  /// m_weights = atol + rtol · max(|a|, |b|).
  void compute_weights(const vector_type& a, const vector_type& b) {
    m_tolerances.compute(m_space, m_settings.absolute_tolerance, m_settings.relative_tolerance, a, b, m_weights);
  }

  double weighted_norm(const vector_type& x) {
    return detail::error_weights<Space>::norm(m_space, x, m_weights, m_scratch);
  }

  reason_if_stopped<integration_stop_reason> budget_stop() const {
    if (m_settings.cancellation_flag != nullptr && m_settings.cancellation_flag->load()) {
      return integration_stop_reason::cancellation_flag_raised;
    }
    if (m_attempts >= m_settings.attempted_step_budget) return integration_stop_reason::attempted_step_budget_spent;
    if (m_clock.seconds() > m_settings.wall_time_budget_seconds) return integration_stop_reason::wall_time_budget_spent;
    return std::nullopt;
  }

  void finish() {
    m_report.final_time = m_time;
    m_report.wall_seconds = m_clock.seconds();
    m_report.median_rate_seconds = m_workspace.rate_seconds.median();
    m_report.rate_evaluations = m_workspace.rate_evaluations;
    m_attempts = 0;
  }

  /// du/dt at the start in state units (see the file comment) and the rate f(t0, u0).
  template <class Stage>
  void initial_slope(Stage& stage, const mass_matrix<vector_type>& mass) {
    stage.evaluate_rate(m_time, m_states[0], m_rate);
    m_space.copy(m_rate, m_slope);
    if (mass.type() == mass_matrix<vector_type>::kind::diagonal) {
      const vector_type& d = mass.diagonal_entries();
      m_slope = (d.array() > 0.0).select(m_rate.array() / d.array().max(std::numeric_limits<double>::min()), 0.0);
    } else if (mass.type() == mass_matrix<vector_type>::kind::linear_operator) {
      m_space.fill(0.0, m_slope);
    }
  }

  double initial_step(double time_span) {
    const step_control_settings& control = m_settings.step_control;
    if (control.initial_step > 0.0) return control.initial_step;
    compute_weights(m_states[0], m_states[0]);
    const double d0 = weighted_norm(m_states[0]);
    const double d1 = weighted_norm(m_slope);
    double h = (d0 < 1e-5 || d1 < 1e-5) ? 1e-6 * time_span : 0.01 * d0 / d1;
    h = std::min({h, time_span, control.maximum_step});
    return std::max(h, control.minimum_step);
  }

  /// Solves one stage from the predictor in `u` (stage_solver.hpp); false on failure.
  template <class Stage>
  bool solve_stage(Stage& stage, double time, double shift, const vector_type& known, vector_type& u,
                   time_step_record& record) {
    compute_weights(m_states[0], m_states[0]);
    const stage_solve_status status = m_stage_solver.solve(m_settings, stage, time, shift, known, u, m_weights, record);
    if (status == stage_solve_status::cancelled) m_cancelled = true;
    return status == stage_solve_status::converged;
  }

  /// u_pred = polynomial through (times[j], values[j]) at t (count points).
  void extrapolate(const double* times, const vector_type* const* values, int count, double t, vector_type& out) {
    std::array<double, 3> weights{};
    detail::extrapolation_weights(times, count, t, weights.data());
    m_space.fill(0.0, out);
    for (int j = 0; j < count; ++j) m_space.add_scaled(weights[j], *values[j], out);
  }

  /// Predictor from the accepted states (newest first in m_states) at time t, of degree <= degree.
  void predict_from_history(int degree, double t, vector_type& out) {
    const int count = std::min(degree + 1, m_history_count);
    std::array<double, 3> times{};
    std::array<const vector_type*, 3> values{};
    for (int j = 0; j < count; ++j) {
      times[j] = m_times[j];
      values[j] = &m_states[j];
    }
    extrapolate(times.data(), values.data(), count, t, out);
  }

  template <class Stage>
  bool bdf_start_attempt(Stage& stage, double h, time_step_record& record) {
    const double half = 0.5 * h;
    const double t0 = m_time;
    // Two backward-Euler half steps: M U − M u − (h/2) f(U) = 0.
    m_space.fill(0.0, m_known);
    stage.add_mass_times(m_states[0], m_known);
    m_space.copy(m_states[0], m_midpoint);
    if (!solve_stage(stage, t0 + half, half, m_known, m_midpoint, record)) return false;
    m_space.fill(0.0, m_known);
    stage.add_mass_times(m_midpoint, m_known);
    m_space.combine(2.0, m_midpoint, -1.0, m_states[0], m_candidate);
    if (!solve_stage(stage, t0 + h, half, m_known, m_candidate, record)) return false;
    // One full step for the Richardson estimate: error(two halves) ≈ halves − full.
    m_space.fill(0.0, m_known);
    stage.add_mass_times(m_states[0], m_known);
    m_space.copy(m_candidate, m_full_step);
    if (!solve_stage(stage, t0 + h, h, m_known, m_full_step, record)) return false;
    m_space.combine(1.0, m_candidate, -1.0, m_full_step, m_error);
    return true;
  }

  template <class Stage>
  bool bdf_attempt(Stage& stage, double h, int order, time_step_record& record) {
    const double k = m_times[0] - m_times[1];
    const double k2 = m_history_count >= 3 ? m_times[1] - m_times[2] : k;
    const detail::bdf_step_formula formula = detail::bdf_formula(order, h, k, k2);
    const double t_new = m_time + h;
    predict_from_history(order, t_new, m_predicted);
    // known = M z, z = weight_current u_n + weight_previous u_(n−1)
    m_space.combine(formula.weight_current, m_states[0], formula.weight_previous, m_states[1], m_scratch);
    m_space.fill(0.0, m_known);
    stage.add_mass_times(m_scratch, m_known);
    m_space.copy(m_predicted, m_candidate);
    if (!solve_stage(stage, t_new, formula.gamma * h, m_known, m_candidate, record)) return false;
    m_space.combine(formula.error_factor, m_candidate, -formula.error_factor, m_predicted, m_error);
    return true;
  }

  template <class Stage>
  bool esdirk_attempt(Stage& stage, double h, time_step_record& record) {
    const esdirk_tableau& tab = m_tableau;
    const double gamma = tab.gamma();
    const int s = tab.stages;
    // Stage 1 is explicit: Z_1 = u_n, Δt f_1 (M units) and Δt M⁻¹f_1 (state units).
    m_space.copy(m_states[0], m_stage_values[0]);
    m_space.copy(m_rate, m_mass_increments[0]);
    m_space.scale(h, m_mass_increments[0]);
    m_space.copy(m_slope, m_increments[0]);
    m_space.scale(h, m_increments[0]);
    for (int i = 1; i < s; ++i) {
      // known = M (u_n) + Σ_{j<i} a_ij Δt f_j (M units)
      m_space.fill(0.0, m_known);
      stage.add_mass_times(m_states[0], m_known);
      for (int j = 0; j < i; ++j) m_space.add_scaled(tab.a[i][j], m_mass_increments[j], m_known);
      // Predictor: extrapolation through the newest accepted state(s) and this step's stages.
      predict_stage(i, h, m_stage_values[i]);
      if (!solve_stage(stage, m_time + tab.c[i] * h, gamma * h, m_known, m_stage_values[i], record)) return false;
      // Δt f_i = (M Z_i − known)/γ (M units); state units K_i = (Z_i − u_n − Σ a_ij K_j)/γ.
      m_space.fill(0.0, m_mass_increments[i]);
      stage.add_mass_times(m_stage_values[i], m_mass_increments[i]);
      m_space.add_scaled(-1.0, m_known, m_mass_increments[i]);
      m_space.scale(1.0 / gamma, m_mass_increments[i]);
      m_space.combine(1.0, m_stage_values[i], -1.0, m_states[0], m_increments[i]);
      for (int j = 0; j < i; ++j) m_space.add_scaled(-tab.a[i][j], m_increments[j], m_increments[i]);
      m_space.scale(1.0 / gamma, m_increments[i]);
    }
    m_space.copy(m_stage_values[s - 1], m_candidate);  // stiffly accurate: u_(n+1) = Z_s
    m_space.fill(0.0, m_error);
    for (int j = 0; j < s; ++j) m_space.add_scaled(tab.b[j] - tab.b_embedded[j], m_increments[j], m_error);
    return true;
  }

  void predict_stage(int i, double h, vector_type& out) {
    const int degree = m_settings.predictor_degree;
    std::array<double, 3> times{};
    std::array<const vector_type*, 3> values{};
    // Candidate points, oldest to newest: u_(n−1), u_n (= Z_1), Z_2 ... Z_(i−1).
    std::array<double, esdirk_tableau::maximum_stages + 2> all_times{};
    std::array<const vector_type*, esdirk_tableau::maximum_stages + 2> all_values{};
    int count = 0;
    if (m_history_count >= 2) {
      all_times[count] = m_times[1];
      all_values[count++] = &m_states[1];
    }
    all_times[count] = m_times[0];
    all_values[count++] = &m_states[0];
    for (int j = 1; j < i; ++j) {
      all_times[count] = m_time + m_tableau.c[j] * h;
      all_values[count++] = &m_stage_values[j];
    }
    const int used = std::min(count, degree + 1);
    for (int j = 0; j < used; ++j) {
      times[j] = all_times[count - used + j];
      values[j] = all_values[count - used + j];
    }
    extrapolate(times.data(), values.data(), used, m_time + m_tableau.c[i] * h, out);
  }

  template <class Stage>
  void accept(state_view u, double h, double t_new, Stage& stage) {
    ++m_report.accepted_steps;
    m_stage_solver.after_accepted_step();
    m_report.smallest_accepted_step = std::min(m_report.smallest_accepted_step, h);
    m_report.largest_accepted_step = std::max(m_report.largest_accepted_step, h);
    // History: newest first; the BDF start adds its midpoint too.
    const auto push = [this](const vector_type& value, double t) {
      std::swap(m_states[2], m_states[1]);
      std::swap(m_states[1], m_states[0]);
      m_times[2] = m_times[1];
      m_times[1] = m_times[0];
      m_space.copy(value, m_states[0]);
      m_times[0] = t;
      m_history_count = std::min(m_history_count + 1, 3);
    };
    if (m_settings.method == time_method::bdf && m_history_count == 1) push(m_midpoint, m_time + 0.5 * h);
    if (m_settings.method == time_method::esdirk) {
      // State-unit slope at t_(n+1): the last stage's increment (FSAL), or M⁻¹f when M is diagonal-invertible.
      m_space.copy(m_increments[m_tableau.stages - 1], m_slope);
      m_space.scale(1.0 / h, m_slope);
    }
    push(m_candidate, t_new);
    m_time = t_new;
    m_space.copy(m_candidate, u);
    m_report.final_time = m_time;
    if (m_settings.method == time_method::esdirk) {
      stage.evaluate_rate(m_time, m_states[0], m_rate);
      if (stage.mass().invertible_diagonal()) {
        m_space.copy(m_rate, m_slope);
        if (stage.mass().type() == mass_matrix<vector_type>::kind::diagonal) {
          m_space.divide(stage.mass().diagonal_entries(), m_slope);
        }
      }
    }
  }

  time_stepper_settings m_settings;
  Space m_space;
  detail::stage_solver<Space, Preconditioner> m_stage_solver;
  esdirk_tableau m_tableau;
  mass_matrix<vector_type> m_identity_mass;
  detail::error_weights<Space> m_tolerances;
  detail::stage_workspace<vector_type> m_workspace;
  pi_step_size_controller m_controller;
  integration_report m_report;
  time_step_record m_last_record;
  detail::stopwatch m_clock;

  // States: newest first. Rates and slopes at t_n; stage values and increments.
  std::array<vector_type, 3> m_states;
  std::array<double, 3> m_times{};
  int m_history_count = 0;
  std::array<vector_type, esdirk_tableau::maximum_stages> m_stage_values, m_increments, m_mass_increments;
  vector_type m_rate, m_slope, m_known, m_candidate, m_predicted, m_error, m_scratch, m_weights;
  vector_type m_midpoint, m_full_step;

  double m_time = 0.0;
  double m_next_step = 0.0;
  bool m_cancelled = false;
  std::int64_t m_attempts = 0;
};

}  // namespace nkit

#endif  // NKIT_TIME_IMPLICIT_TIME_STEPPER_HPP
