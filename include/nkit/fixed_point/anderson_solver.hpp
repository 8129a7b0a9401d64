#ifndef NKIT_FIXED_POINT_ANDERSON_SOLVER_HPP
#define NKIT_FIXED_POINT_ANDERSON_SOLVER_HPP

/// \file fixed_point/anderson_solver.hpp
/// The reusable Anderson-accelerated fixed-point solver for u = G(u).
///
/// Method: D.G. Anderson, "Iterative procedures for nonlinear integral
/// equations", J. ACM 12 (1965) 547–560, in the form of H.F. Walker & P. Ni,
/// "Anderson acceleration for fixed-point iterations", SIAM J. Numer. Anal.
/// 49 (2011) 1715–1735. With f(u) = G(u) − u, depth m and mixing β, iteration
/// k (m_k = min(m, k) columns, ΔF_k = [f_{i+1} − f_i], ΔG_k = [G(u_{i+1}) −
/// G(u_i)] over the last m_k iterations):
///   γ_k     = argmin_γ ‖f_k − ΔF_k γ‖₂          (anderson_least_squares.hpp)
///   u_{k+1} = G(u_k) − ΔG_k γ_k − (1 − β)(f_k − ΔF_k γ_k)
/// which is u_k + β f_k − (ΔU_k + β ΔF_k) γ_k. With m = 0 it is the plain
/// (damped) fixed-point iteration u_{k+1} = u_k + β f_k.
///
/// Safeguards (each counted in the report): the condition-number limit on
/// the least-squares factor drops the oldest columns; when ‖f‖ has not
/// improved for restart_window iterations the history is cleared (restart);
/// when G returns NaN/Inf at an accelerated iterate (or the iterate itself
/// overflows; G is then not called) the history is cleared and the plain
/// step is taken instead, and a plain step whose G is not finite is halved (at most maximum_step_halvings times, then
/// stop_reason::no_acceptable_step). Bounds (set_bounds) shorten each step to
/// bounds.boundary_fraction of the room left, as the Newton driver does; G is
/// never evaluated outside them.
///
/// The caller may drive the loop (as with newton_krylov_solver):
///   auto run = solver.begin(map, u);
///   while (run.advance() == nkit::run_state::running) { /* look at u */ }
/// Between iterations `u` holds the current iterate; when the solve ends
/// without converging it holds the iterate with the smallest ‖f‖ seen. When
/// the map or the monitor throws, the exception propagates unchanged and u
/// holds the last accepted iterate.
///
/// Allocation: the workspace (2m + 8 vectors, the m × m factor, history
/// capacity) is allocated on the first solve and kept, so a later solve of the
/// same size and depth allocates nothing in its iterations; solve() allocates
/// once at the end, to copy the history into the returned report.

#include <algorithm>
#include <atomic>
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
#include "../core/vector_space.hpp"
#include "../detail/timer.hpp"
#include "../globalization/bounds.hpp"
#include "../newton/run_handle.hpp"
#include "../report/monitor.hpp"
#include "../report/outcome.hpp"
#include "anderson_least_squares.hpp"
#include "anderson_monitor.hpp"
#include "anderson_report.hpp"
#include "anderson_settings.hpp"
#include "fixed_point_residual.hpp"

namespace nkit {

template <class Space = eigen_vector_space<double>>
class anderson_solver {
  static_assert(is_vector_space_v<Space>, "nkit: Space does not provide the vector-space members (vector_space.hpp)");

 public:
  using space_type = Space;
  using vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;
  using state_view = typename Space::state_view;
  using const_view = typename Space::const_view;

  /// Halvings of a plain step whose G is not finite before the solve stops.
  static constexpr int maximum_step_halvings = 30;

  explicit anderson_solver(anderson_settings settings = {}, Space space = {})
      : m_settings(validated(settings)), m_space(std::move(space)), m_least_squares(m_space) {}

  /// Validates and stores the settings; throws std::invalid_argument naming
  /// the first bad field. Must not be called while a run is in progress.
  void configure(const anderson_settings& settings) {
    settings.validate();
    m_settings = settings;
  }
  const anderson_settings& settings() const { return m_settings; }
  const Space& space() const { return m_space; }

  /// Declares lower <= u <= upper (±infinity where a side is unbounded); G is
  /// never evaluated outside. Throws std::invalid_argument on sizes that
  /// differ, NaN, or lower > upper.
  void set_bounds(const_view lower, const_view upper) {
    keep_checked_bounds(m_space, lower, upper, m_lower_bound, m_upper_bound);
    m_has_bounds = true;
  }
  void clear_bounds() { m_has_bounds = false; }

  /// Starts a caller-driven solve: evaluates G(u0) and returns a handle whose
  /// advance() takes one iteration. `map` and `u` must outlive the run.
  template <class Map, class Monitor = null_monitor>
  run_handle<anderson_solver, Map, Monitor> begin(Map& map, state_view u, Monitor monitor = {}) {
    return run_handle<anderson_solver, Map, Monitor>(*this, map, u, std::move(monitor));
  }

  /// Solves u = G(u) starting from u; see the file comment for what u holds afterwards.
  template <class Map, class Monitor = null_monitor>
  anderson_report solve(Map&& map, state_view u, Monitor&& monitor = {}) {
    using map_type = std::remove_reference_t<Map>;
    using monitor_type = std::remove_reference_t<Monitor>&;
    run_handle<anderson_solver, map_type, monitor_type> run(*this, map, u, monitor);
    while (run.advance() == run_state::running) {
    }
    return run.report();
  }

  /// Bytes of workspace held now (see anderson_report::workspace_bytes).
  std::size_t workspace_bytes() const {
    std::size_t entries = 0;
    for (const vector_type* v : {&m_state, &m_map_value, &m_residual, &m_trial_state, &m_trial_map_value,
                                 &m_trial_residual, &m_work, &m_best_state, &m_lower_bound, &m_upper_bound}) {
      entries += static_cast<std::size_t>(v->size());
    }
    for (const vector_type& v : m_map_differences) entries += static_cast<std::size_t>(v.size());
    return sizeof(scalar_type) * entries + m_least_squares.workspace_bytes() +
           m_report.history.capacity() * sizeof(anderson_step_record);
  }

 private:
  template <class Solver, class Map, class Monitor>
  friend class run_handle;

  static constexpr int maximum_reserved_history = 1024;

  static const anderson_settings& validated(const anderson_settings& settings) {
    settings.validate();
    return settings;
  }

  // ---- setup and finish ----------------------------------------------------------

  template <class Map>
  void start(Map& map, state_view u) {
    static_assert(is_fixed_point_map_v<Map, vector_type>,
                  "nkit: the fixed-point map must be callable as map(const vector_type& u, vector_type& g)");
    if (m_space.global_size(u) == 0) throw std::invalid_argument("nkit: the state vector u is empty");
    if (!m_space.all_finite(u)) throw std::invalid_argument("nkit: the initial guess u0 contains NaN or Inf entries");
    if (m_has_bounds && m_lower_bound.size() != u.size()) {
      throw std::invalid_argument("nkit: the lower bound has " + std::to_string(m_lower_bound.size()) +
                                  " entries but the state has " + std::to_string(u.size()));
    }
    m_clock.restart();
    auto history = std::move(m_report.history);  // keep its capacity: no allocation on repeat solves
    m_report = anderson_report{};
    m_report.history = std::move(history);
    m_report.history.clear();
    m_history_capacity = std::max(
        m_history_capacity, static_cast<std::size_t>(std::min(m_settings.iteration_budget, maximum_reserved_history)));
    m_report.history.reserve(m_history_capacity);
    m_residual_samples.clear();

    for (vector_type* v : {&m_state, &m_map_value, &m_residual, &m_trial_state, &m_trial_map_value, &m_trial_residual,
                           &m_work, &m_best_state}) {
      m_space.allocate_like(*v, u);
    }
    const auto depth = static_cast<std::size_t>(m_settings.depth);
    if (m_map_differences.size() != depth) m_map_differences.resize(depth);
    for (vector_type& v : m_map_differences) m_space.allocate_like(v, u);
    m_least_squares.allocate(m_settings.depth, m_state);

    m_space.copy(u, m_state);
    if (m_has_bounds && !m_space.within_bounds(m_state, m_lower_bound, m_upper_bound)) {
      throw std::invalid_argument("nkit: the initial guess u0 violates the bounds given to set_bounds");
    }
    m_best_is_current = true;
    m_steps_without_progress = 0;
    m_pending_dropped = 0;
    m_norm = m_best_norm = std::numeric_limits<double>::quiet_NaN();
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    m_norm = evaluate(map, m_state, m_map_value, m_residual);
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    m_best_norm = m_norm;
    m_progress_reference = m_norm;
  }

  /// Ends the run: when not converged, u gets the best iterate.
  void finish(stop_reason reason, state_view u) {
    m_report.reason = reason;
    if (!is_converged(reason) && !m_best_is_current) {
      std::swap(m_state, m_best_state);
      m_norm = m_best_norm;
      m_best_is_current = true;
    }
    if (m_state.size() == u.size()) m_space.copy(m_state, u);
    m_report.final_residual_norm = m_norm;
    m_report.wall_seconds = m_clock.seconds();
    m_report.median_residual_seconds = m_residual_samples.median();
    m_report.time.other = m_report.wall_seconds - m_report.time.measured();
    m_report.workspace_bytes = workspace_bytes();
  }

  /// After start(): the stop reason when no iteration is needed or possible.
  std::optional<stop_reason> initial_stop() const {
    if (!std::isfinite(m_norm)) return stop_reason::non_finite_initial_residual;
    return convergence();
  }
  /// Anderson's monitors see iterations only (anderson_monitor.hpp).
  template <class Monitor>
  void notify_start(Monitor& /*monitor*/) {}

  std::optional<stop_reason> convergence() const {
    if (m_norm <= m_settings.absolute_tolerance) return stop_reason::absolute_tolerance_met;
    if (m_norm <= m_settings.relative_tolerance * m_report.initial_residual_norm) {
      return stop_reason::relative_tolerance_met;
    }
    return std::nullopt;
  }

  // ---- one iteration ----------------------------------------------------------------

  template <class Map, class Monitor>
  std::optional<stop_reason> step(Map& map, Monitor& monitor, state_view u) {
    if (m_report.iterations >= m_settings.iteration_budget) return stop_reason::iteration_budget_spent;
    const auto step_start = detail::clock_type::now();
    const double measured_before = m_report.time.measured();
    anderson_step_record record;
    record.iteration = m_report.iterations + 1;
    record.dropped_columns = m_pending_dropped;
    m_pending_dropped = 0;

    // Proposal, then trial points along it until G is finite there.
    propose(record);
    double length = 1.0;
    double trial_norm = 0.0;
    for (int halvings = 0;;) {
      const double limit = bound_limit();
      record.step_shortened_by_bounds = limit < 1.0;
      record.step_fraction = length * limit;
      m_space.combine(1, m_state, record.step_fraction, m_work, m_trial_state);
      // G is never evaluated at a non-finite state (an extrapolation can overflow).
      trial_norm = m_space.all_finite(m_trial_state) ? evaluate(map, m_trial_state, m_trial_map_value, m_trial_residual)
                                                     : std::numeric_limits<double>::infinity();
      if (std::isfinite(trial_norm)) break;
      ++m_report.non_finite_trials;
      if (m_least_squares.columns() > 0) {  // retreat to the plain step
        restart(record);
        propose(record);
        length = 1.0;
        continue;
      }
      if (++halvings > maximum_step_halvings) {
        account_update(step_start, measured_before);
        return stop_reason::no_acceptable_step;
      }
      length *= 0.5;
    }
    record.step_norm = record.step_fraction * m_space.norm(m_work);
    update_history();

    // Accept the trial iterate.
    if (m_best_is_current && !(trial_norm < m_best_norm)) {
      m_space.copy(m_state, m_best_state);
      m_best_is_current = false;
    }
    std::swap(m_state, m_trial_state);
    std::swap(m_map_value, m_trial_map_value);
    std::swap(m_residual, m_trial_residual);
    m_norm = trial_norm;
    if (trial_norm < m_best_norm) {
      m_best_norm = trial_norm;
      m_best_is_current = true;
    }
    if (trial_norm < m_settings.stagnation_factor * m_progress_reference) {
      m_progress_reference = trial_norm;
      m_steps_without_progress = 0;
    } else {
      ++m_steps_without_progress;
      if (m_settings.restart_window > 0 && m_steps_without_progress % m_settings.restart_window == 0 &&
          m_least_squares.columns() > 0) {
        restart(record);
      }
    }
    ++m_report.iterations;
    if (record.step_shortened_by_bounds) ++m_report.steps_shortened_by_bounds;
    m_space.copy(m_state, u);

    record.residual_norm = trial_norm;
    record.relative_residual_norm =
        m_report.initial_residual_norm > 0.0 ? trial_norm / m_report.initial_residual_norm : 0.0;
    record.elapsed_seconds = m_clock.seconds();
    record.residual_evaluations = m_report.residual_evaluations;
    m_report.history.push_back(record);
    m_report.final_residual_norm = trial_norm;
    account_update(step_start, measured_before);

    monitor_decision decision = monitor_decision::keep_going;
    if constexpr (!std::is_same_v<std::decay_t<Monitor>, null_monitor>) {
      const auto start = detail::clock_type::now();
      decision = detail::notify_anderson_step(monitor, record);
      m_report.time.monitor += detail::seconds_between(start, detail::clock_type::now());
    }
    if (decision == monitor_decision::stop_now) return stop_reason::monitor_requested_stop;
    if (const auto converged = convergence()) return converged;
    if (m_steps_without_progress >= m_settings.stagnation_window) return stop_reason::residual_stagnated;
    return std::nullopt;
  }

  /// Least-squares solve and proposal: m_work = u_{k+1} − u_k (the direction).
  void propose(anderson_step_record& record) {
    const auto start = detail::clock_type::now();
    const int columns = m_least_squares.columns();
    record.depth_used = columns;
    record.condition_number = m_least_squares.condition_number();
    // m_work = f_k − ΔF γ (f_k itself without columns).
    record.least_squares_residual_norm = m_least_squares.solve(m_residual, m_work);
    m_report.time.least_squares += detail::seconds_between(start, detail::clock_type::now());
    // u_{k+1} = G(u_k) − ΔG γ − (1 − β)(f_k − ΔF γ); direction = u_{k+1} − u_k.
    m_space.combine(1, m_map_value, -(1 - m_settings.mixing), m_work, m_trial_state);
    for (int i = 0; i < columns; ++i) {
      m_space.add_scaled(-m_least_squares.coefficient(i), m_map_differences[static_cast<std::size_t>(i)],
                         m_trial_state);
    }
    m_space.combine(1, m_trial_state, -1, m_state, m_work);
  }

  /// Adds the newest differences (trial minus current) to the history,
  /// removing the oldest column when the window is full, the oldest columns
  /// while the new one depends on them (newer information wins), and then
  /// any the condition safeguard rejects.
  void update_history() {
    if (m_settings.depth == 0) return;
    using append_result = typename anderson_least_squares<Space>::append_result;
    const auto start = detail::clock_type::now();
    int dropped = 0;
    for (;;) {
      const append_result result = m_least_squares.append_difference(m_trial_residual, m_residual);
      if (result == append_result::appended) {
        const auto newest = static_cast<std::size_t>(m_least_squares.columns() - 1);
        m_space.combine(1, m_trial_map_value, -1, m_map_value, m_map_differences[newest]);
        const int before = m_least_squares.columns();
        const int removed = m_least_squares.enforce_condition_limit(m_settings.maximum_condition_number);
        remove_oldest_map_differences(removed, before);
        dropped += removed;
        break;
      }
      if (result == append_result::not_usable || m_least_squares.columns() == 0) {
        ++dropped;  // a zero or non-finite difference is not kept
        break;
      }
      if (result == append_result::dependent) ++dropped;
      m_least_squares.remove_oldest();
      remove_oldest_map_differences(1, m_least_squares.columns() + 1);
    }
    m_pending_dropped += dropped;
    m_report.dropped_columns += dropped;
    m_report.time.least_squares += detail::seconds_between(start, detail::clock_type::now());
  }

  /// ΔG follows the least-squares columns: the oldest `count` of the first
  /// `columns` columns move behind the kept ones (no allocation).
  void remove_oldest_map_differences(int count, int columns) {
    if (count <= 0) return;
    auto first = m_map_differences.begin();
    std::rotate(first, first + count, first + columns);
  }

  void restart(anderson_step_record& record) {
    m_least_squares.clear();
    record.restarted = true;
    ++m_report.restarts;
  }

  /// Fraction of the direction m_work that keeps u within the bounds (1 when
  /// the whole step does), times boundary_fraction otherwise.
  double bound_limit() const {
    if (!m_has_bounds) return 1.0;
    const double room = m_space.maximum_step_to_bounds(m_state, m_work, m_lower_bound, m_upper_bound);
    return room >= 1.0 ? 1.0 : m_settings.bounds.boundary_fraction * room;
  }

  void account_update(detail::clock_type::time_point start, double measured_before) {
    const double wall = detail::seconds_between(start, detail::clock_type::now());
    m_report.time.update += wall - (m_report.time.measured() - measured_before);
  }

  /// g = G(x), f = g − x; returns ‖f‖ (NaN/Inf when G is not finite). Every
  /// call of the user's map goes through here: budget, time limit and
  /// cancellation are checked first, so they always hold.
  template <class Map>
  double evaluate(Map& map, const vector_type& x, vector_type& g, vector_type& f) {
    if (m_report.residual_evaluations >= m_settings.residual_evaluation_budget) {
      throw detail::stop_signal{stop_reason::residual_evaluation_budget_spent};
    }
    const std::atomic<bool>* flag = m_settings.cancellation_flag;
    if (flag != nullptr && any_of(m_space, flag->load(std::memory_order_relaxed))) {
      throw detail::stop_signal{stop_reason::cancellation_flag_raised};
    }
    if (std::isfinite(m_settings.wall_time_budget_seconds) &&
        any_of(m_space, m_clock.seconds() > m_settings.wall_time_budget_seconds)) {
      throw detail::stop_signal{stop_reason::wall_time_budget_spent};
    }
    const auto expected = x.size();
    const auto start = detail::clock_type::now();
    map(x, g);
    const auto stop = detail::clock_type::now();
    ++m_report.residual_evaluations;
    if (g.size() != expected) {
      throw std::invalid_argument("nkit: the fixed-point map changed the size of its output vector from " +
                                  std::to_string(expected) + " to " + std::to_string(g.size()) +
                                  "; it must write into g without resizing it");
    }
    m_space.combine(1, g, -1, x, f);
    const double norm = m_space.norm(f);
    const double seconds = detail::seconds_between(start, detail::clock_type::now());
    m_residual_samples.add(detail::seconds_between(start, stop));
    m_report.time.residual += seconds;
    return norm;
  }

  // ---- members ------------------------------------------------------------------------

  anderson_settings m_settings;
  Space m_space;
  anderson_least_squares<Space> m_least_squares;
  vector_type m_state, m_map_value, m_residual;                    // u_k, G(u_k), f_k
  vector_type m_trial_state, m_trial_map_value, m_trial_residual;  // the same at the trial iterate
  vector_type m_work, m_best_state;
  vector_type m_lower_bound, m_upper_bound;
  std::vector<vector_type> m_map_differences;  // ΔG, oldest column first
  anderson_report m_report;
  std::size_t m_history_capacity = 0;
  detail::stopwatch m_clock;
  detail::median_window m_residual_samples;
  double m_norm = 0.0;
  double m_best_norm = 0.0;
  double m_progress_reference = 0.0;
  int m_steps_without_progress = 0;
  int m_pending_dropped = 0;
  bool m_best_is_current = true;
  bool m_has_bounds = false;
};

}  // namespace nkit

#endif  // NKIT_FIXED_POINT_ANDERSON_SOLVER_HPP
