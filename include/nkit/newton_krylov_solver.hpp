#ifndef NKIT_NEWTON_KRYLOV_SOLVER_HPP
#define NKIT_NEWTON_KRYLOV_SOLVER_HPP

/// \file newton_krylov_solver.hpp
/// The reusable inexact Newton–Krylov solver and the one-shot nkit::solve().
///
/// Each Newton step: choose the forcing term η (forcing_term.hpp), rebuild
/// the preconditioner if the reuse policy says so, solve R'(u) x = R(u) with
/// right-preconditioned GMRES to relative tolerance η using matrix-free
/// Jacobian-vector products, and move along s = −x with the chosen
/// globalisation: line search, full step, trust region (trust_region.hpp) or
/// pseudo-transient continuation (pseudo_transient.hpp). The caller may drive
/// the loop itself:
///
///   auto run = solver.begin(residual, u);
///   while (run.advance() == nkit::outcome::in_progress) { /* look at u */ }
///   const nkit::solve_report& report = run.report();
///
/// solve() is exactly that loop. Between steps `u` holds the last accepted
/// iterate. When the solve ends without converging, `u` holds the iterate with
/// the smallest residual norm seen. When the user's residual (or any user
/// callback) throws, the exception propagates unchanged and `u` holds the last
/// accepted iterate.
///
/// Optional problem members (detected at compile time; see residual.hpp):
/// jacobian_product, assemble_jacobian, pseudo_time_weights and
///   bool is_admissible(const vector_type& u)   physical admissibility; the
///                                              residual is never evaluated
///                                              where it returns false.
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

#include "detail/checks.hpp"
#include "detail/timer.hpp"
#include "eigen_vector_space.hpp"
#include "finite_difference_jacobian.hpp"
#include "forcing_term.hpp"
#include "gmres.hpp"
#include "line_search.hpp"
#include "monitor.hpp"
#include "outcome.hpp"
#include "preconditioner.hpp"
#include "pseudo_transient.hpp"
#include "report.hpp"
#include "residual.hpp"
#include "row_partition.hpp"
#include "settings.hpp"
#include "sparse_jacobian.hpp"
#include "trace.hpp"
#include "trust_region.hpp"
#include "vector_space.hpp"

namespace nkit {

namespace detail {
/// Thrown internally to unwind from deep inside GMRES or a line search when a
/// budget, the time limit or the cancellation flag stops the solve. Never
/// escapes the solver.
struct stop_signal {
  outcome reason;
};

template <class Problem, class Matrix, class Vector, class = void>
struct has_assemble_jacobian : std::false_type {};
template <class Problem, class Matrix, class Vector>
struct has_assemble_jacobian<Problem, Matrix, Vector,
                             std::void_t<decltype(std::declval<Problem&>().assemble_jacobian(
                                 std::declval<const Vector&>(), std::declval<Matrix&>()))>> : std::true_type {};

template <class Problem, class Vector, class = void>
struct has_is_admissible : std::false_type {};
template <class Problem, class Vector>
struct has_is_admissible<
    Problem, Vector, std::void_t<decltype(bool(std::declval<Problem&>().is_admissible(std::declval<const Vector&>())))>>
    : std::true_type {};

template <class Problem, class Vector, class = void>
struct has_pseudo_time_weights : std::false_type {};
template <class Problem, class Vector>
struct has_pseudo_time_weights<Problem, Vector,
                               std::void_t<decltype(std::declval<Problem&>().pseudo_time_weights(
                                   std::declval<const Vector&>(), std::declval<Vector&>()))>> : std::true_type {};

/// J(i, first_column + i) += shift(i) for every local row i; inserts missing
/// diagonal entries. first_column is the global index of local row 0 in the
/// distributed layout of row_partition.hpp (0 on a serial space).
template <class Vector>
void add_to_diagonal(sparse_matrix& jacobian, const Vector& shift, Eigen::Index first_column) {
  for (Eigen::Index i = 0; i < shift.size(); ++i) jacobian.coeffRef(i, first_column + i) += shift(i);
}
}  // namespace detail

template <class Solver, class Problem, class Monitor>
class newton_run;

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
        m_preconditioner(std::move(preconditioner)),
        m_gmres(m_settings.linear, m_space),
        m_difference(m_settings.jacobian, m_space) {}

  /// Validates and stores the settings; throws std::invalid_argument naming
  /// the first bad field. Must not be called while a run is in progress.
  void configure(const newton_settings& settings) {
    settings.validate();
    m_settings = settings;
    m_gmres.configure(settings.linear);
    m_difference.configure(settings.jacobian);
  }
  const newton_settings& settings() const { return m_settings; }
  const Space& space() const { return m_space; }
  Preconditioner& preconditioner() { return m_preconditioner; }
  const Preconditioner& preconditioner() const { return m_preconditioner; }

  /// Records a timeline of every later solve into `recorder` (trace.hpp);
  /// nullptr stops recording. With none attached each phase call costs one
  /// pointer test.
  void record_trace(trace_recorder* recorder) {
    m_trace = recorder;
    m_gmres.record_trace(recorder);
  }

  /// The next Newton step rebuilds the preconditioner whatever the reuse policy says.
  void request_preconditioner_rebuild() { m_rebuild_requested = true; }

  /// Declares lower <= u <= upper (physical units; ±infinity where a side is
  /// unbounded). Every state at which the residual is evaluated respects them
  /// (settings.bounds says how steps are shortened). Throws
  /// std::invalid_argument on sizes that differ or on lower > upper.
  void set_bounds(const_view lower, const_view upper) {
    if (lower.size() != upper.size()) {
      throw std::invalid_argument("nkit: set_bounds: lower has " + std::to_string(lower.size()) +
                                  " entries but upper has " + std::to_string(upper.size()));
    }
    // Checked before anything is stored: a rejected call leaves the old bounds
    // in force. NaN fails every comparison, so x <= x is false only for NaN.
    if (!m_space.within_bounds(lower, lower, lower) || !m_space.within_bounds(upper, upper, upper)) {
      throw std::invalid_argument("nkit: set_bounds: lower or upper contains NaN (use -inf/+inf for no bound)");
    }
    if (!m_space.within_bounds(lower, lower, upper)) {
      throw std::invalid_argument("nkit: set_bounds: contradictory bounds (lower > upper somewhere)");
    }
    m_space.allocate_like(m_lower_bound, lower);
    m_space.allocate_like(m_upper_bound, upper);
    m_space.copy(lower, m_lower_bound);
    m_space.copy(upper, m_upper_bound);
    m_has_bounds = true;
  }
  void clear_bounds() { m_has_bounds = false; }

  /// Variable and residual scales (typical magnitudes, all > 0). The solver
  /// then works with ũ = u / variable_scale and R̃ = R / residual_scale: all
  /// norms, tolerances, forcing terms and the trust radius refer to these
  /// scaled quantities. Pass an empty vector to leave one side unscaled.
  void set_scaling(const_view variable_scale, const_view residual_scale) {
    const auto check = [this](const_view scale, const char* which) {
      vector_type smallest, largest;
      m_space.allocate_like(smallest, scale);
      m_space.allocate_like(largest, scale);
      m_space.fill(std::numeric_limits<scalar_type>::min(), smallest);
      m_space.fill(std::numeric_limits<scalar_type>::max(), largest);
      if (!m_space.within_bounds(scale, smallest, largest)) {
        throw std::invalid_argument(std::string("nkit: set_scaling: every entry of ") + which +
                                    " must be finite and > 0");
      }
    };
    if (variable_scale.size() > 0) check(variable_scale, "variable_scale");
    if (residual_scale.size() > 0) check(residual_scale, "residual_scale");
    m_variable_scaling = variable_scale.size() > 0;
    m_residual_scaling = residual_scale.size() > 0;
    if (m_variable_scaling) {
      m_space.allocate_like(m_variable_scale, variable_scale);
      m_space.copy(variable_scale, m_variable_scale);
    }
    if (m_residual_scaling) {
      m_space.allocate_like(m_residual_scale, residual_scale);
      m_space.copy(residual_scale, m_residual_scale);
    }
  }
  void clear_scaling() { m_variable_scaling = m_residual_scaling = false; }

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

  /// Bytes of workspace held now: Newton vectors, bounds and scales, GMRES,
  /// difference workspace, the assembled Jacobian (values, indices and row
  /// offsets as allocated), the preconditioner's memory_bytes() and the
  /// history capacity.
  std::size_t workspace_bytes() const {
    std::size_t entries = 0;
    for (const vector_type* v :
         {&m_state, &m_residual, &m_step, &m_trial_state, &m_trial_residual, &m_best_state, &m_product, &m_cauchy,
          &m_cauchy_product, &m_physical, &m_physical_direction, &m_weights, &m_shift, &m_lower_bound, &m_upper_bound,
          &m_scaled_lower, &m_scaled_upper, &m_variable_scale, &m_residual_scale}) {
      entries += static_cast<std::size_t>(v->size());
    }
    return sizeof(scalar_type) * entries + m_gmres.workspace_bytes() + m_difference.workspace_bytes() +
           preconditioner_memory_bytes(m_preconditioner) + m_report.history.capacity() * sizeof(newton_step_record) +
           assembled_jacobian_bytes();
  }

  /// Bytes held for the assembled Jacobian: values, indices and row offsets
  /// as allocated (row- and column-major copies), plus the coloring workspace.
  std::size_t assembled_jacobian_bytes() const {
    const auto matrix_bytes = [](auto const& matrix) {
      using index_type = typename std::decay_t<decltype(matrix)>::StorageIndex;
      const auto outer = static_cast<std::size_t>(matrix.outerSize());
      return static_cast<std::size_t>(matrix.data().allocatedSize()) * (sizeof(double) + sizeof(index_type)) +
             (outer > 0 ? outer + 1 : 0) * sizeof(index_type) +
             (matrix.isCompressed() ? 0 : outer * sizeof(index_type));
    };
    return matrix_bytes(m_jacobian) + matrix_bytes(m_column_major_jacobian) + m_colored.workspace_bytes();
  }

 private:
  template <class Solver, class Problem, class Monitor>
  friend class newton_run;

  enum class phase { residual, none };

  /// History records reserved up front (about 130 bytes each).
  static constexpr int max_reserved_history = 1024;

  static const newton_settings& validated(const newton_settings& settings) {
    settings.validate();
    return settings;
  }

  // ---- setup and finish --------------------------------------------------------

  template <class Problem>
  void start(Problem& problem, state_view u) {
    static_assert(is_residual_v<Problem, vector_type>,
                  "nkit: the residual must be callable as residual(const vector_type& u, vector_type& r)");
    // Collective: a rank may own no unknowns; only a globally empty state is an error.
    if (m_space.global_size(u) == 0) throw std::invalid_argument("nkit: the state vector u is empty");
    if (!m_space.all_finite(u)) throw std::invalid_argument("nkit: the initial guess u0 contains NaN or Inf entries");
    const auto check_size = [&](const vector_type& v, bool active, const char* what) {
      if (active && v.size() != u.size()) {
        throw std::invalid_argument(std::string("nkit: ") + what + " has " + std::to_string(v.size()) +
                                    " entries but the state has " + std::to_string(u.size()));
      }
    };
    check_size(m_lower_bound, m_has_bounds, "the lower bound");
    check_size(m_variable_scale, m_variable_scaling, "variable_scale");
    check_size(m_residual_scale, m_residual_scaling, "residual_scale");

    m_clock.restart();
    auto history = std::move(m_report.history);  // keep its capacity: no allocation on repeat solves
    m_report = solve_report{};
    m_report.history = std::move(history);
    m_report.history.clear();
    // Capped: max_newton_steps = INT_MAX ("no limit") must not reserve ~250 GB.
    // Longer solves grow the history once; the capacity is kept for later solves.
    m_history_capacity = std::max(
        m_history_capacity, static_cast<std::size_t>(std::min(m_settings.max_newton_steps, max_reserved_history)));
    m_report.history.reserve(m_history_capacity);
    m_residual_samples.clear();

    for (vector_type* v :
         {&m_state, &m_residual, &m_step, &m_trial_state, &m_trial_residual, &m_best_state, &m_product}) {
      m_space.allocate_like(*v, u);
    }
    if (m_variable_scaling || detail::has_jacobian_product_impl<Problem, vector_type>::value ||
        detail::has_is_admissible<Problem, vector_type>::value) {
      m_space.allocate_like(m_physical, u);
      m_space.allocate_like(m_physical_direction, u);
    }
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
    }
    m_difference.allocate_like(m_state);
    m_gmres.allocate_like(m_state, changes_between_applications(m_preconditioner));

    m_space.copy(u, m_state);
    if (m_has_bounds && !m_space.within_bounds(m_state, m_lower_bound, m_upper_bound)) {
      throw std::invalid_argument("nkit: the initial guess u0 violates the bounds given to set_bounds");
    }
    if (m_variable_scaling) {
      m_space.divide(m_variable_scale, m_state);
      m_space.allocate_like(m_scaled_lower, u);
      m_space.allocate_like(m_scaled_upper, u);
    }
    if (m_has_bounds && m_variable_scaling) {
      m_space.copy(m_lower_bound, m_scaled_lower);
      m_space.divide(m_variable_scale, m_scaled_lower);
      m_space.copy(m_upper_bound, m_scaled_upper);
      m_space.divide(m_variable_scale, m_scaled_upper);
    }
    if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
      if (!admissible(problem, m_state)) throw std::invalid_argument("nkit: the initial guess u0 is not admissible");
    }
    m_forcing = forcing_term_sequence(m_settings.forcing);
    m_forcing.reset();
    m_best_is_current = true;
    m_steps_since_best = 0;
    m_linear_budget_spent = false;
    m_monitor_stopped = false;
    m_last_linear_iterations = 0;
    m_last_linear_failed = false;
    if (m_settings.preconditioner_reuse.rebuild_at_solve_start || m_last_setup_step < 0 ||
        m_preconditioner_size != u.size()) {
      m_preconditioner_current = false;
    } else {
      m_last_setup_step = 0;  // carried over from the previous solve
    }
    m_trust_radius = m_settings.trust_region.initial_radius;

    // Until R(u0) is known the norms are unknown (NaN), not those of an earlier
    // solve: a time limit or cancellation can stop the run before it is evaluated.
    m_norm = m_best_norm = std::numeric_limits<double>::quiet_NaN();
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    evaluate(problem, m_state, m_residual, phase::residual);
    m_norm = m_space.norm(m_residual);
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    m_best_norm = m_norm;
    m_target_norm = std::max(m_settings.absolute_tolerance, m_settings.relative_tolerance * m_norm);
    m_stagnation_reference = m_norm;
    if (m_trace != nullptr) m_trace->record_counter(trace_counter::residual_norm, detail::clock_type::now(), m_norm);
  }

  /// Ends the run: on a non-converged outcome u gets the best iterate.
  void finish(outcome reason, state_view u) {
    m_report.result = reason;
    if (!is_converged(reason) && !m_best_is_current) {
      std::swap(m_state, m_best_state);
      m_norm = m_best_norm;
      m_best_is_current = true;
    }
    if (m_state.size() == u.size()) write_state(u);
    m_report.final_residual_norm = m_norm;
    m_report.wall_seconds = m_clock.seconds();
    m_report.median_residual_seconds = m_residual_samples.median();
    phase_seconds& t = m_report.time;
    t.other = m_report.wall_seconds - t.measured();
    m_report.workspace_bytes = workspace_bytes();
  }

  /// u = variable_scale ⊙ ũ (or a plain copy).
  void write_state(state_view u) {
    m_space.copy(m_state, u);
    if (m_variable_scaling) m_space.multiply(m_variable_scale, u);
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
    const nested_phase_timer step_timer(*this, &phase_seconds::newton_update, &phase_calls::newton_update);
    const auto step_start = step_timer.start;

    outcome early = outcome::in_progress;
    try {
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
    } catch (const detail::stop_signal&) {
      account_globalization();  // a budget, limit or cancellation ended the step inside it
      throw;
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
    write_state(u);

    record.residual_norm = new_norm;
    record.relative_residual_norm =
        m_report.initial_residual_norm > 0.0 ? new_norm / m_report.initial_residual_norm : 0.0;
    record.elapsed_seconds = m_clock.seconds();
    record.residual_evaluations = m_report.residual_evaluations;
    m_report.history.push_back(record);
    m_report.final_residual_norm = new_norm;
    const monitor_decision decision = notify_timed(monitor, record);
    if (m_trace != nullptr) {
      const auto now = detail::clock_type::now();
      m_trace->record(trace_phase::newton_step, step_start, now, record.step);
      m_trace->record_counter(trace_counter::residual_norm, now, new_norm);
      m_trace->record_counter(trace_counter::forcing_term, now, record.forcing_term);
      if (record.pseudo_time_step > 0.0) {
        m_trace->record_counter(trace_counter::pseudo_time_step, now, record.pseudo_time_step);
      }
      if (record.trust_radius > 0.0) m_trace->record_counter(trace_counter::trust_radius, now, record.trust_radius);
    }

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
    if constexpr (has_setup_v<Preconditioner, Space>) {
      if (needs_rebuild(k)) {
        record.preconditioner_rebuilt = true;
        if (rebuild_preconditioner(problem, k) == setup_status::failed) return outcome::preconditioner_failed;
      }
    }
    m_difference.linearize_at(m_state, m_residual);
    const std::int64_t budget_left = m_settings.linear_iteration_budget - m_report.linear_iterations;
    if (budget_left <= 0) return outcome::linear_iteration_budget;
    const linear_solve_result linear = solve_linear(problem, monitor, eta, budget_left);
    if (m_monitor_stopped) return outcome::stopped_by_monitor;
    record.linear_iterations = linear.iterations;
    record.linear_status = linear.status;
    m_last_linear_iterations = linear.iterations;
    m_last_linear_failed = !linear.converged();
    m_achieved_eta = linear.relative_residual();
    record.relative_linear_residual = m_achieved_eta;
    if (linear.iterations == 0 || !(m_achieved_eta < 1.0)) return outcome::linear_solver_no_progress;
    m_forcing.record(eta, m_norm, linear.final_residual_norm);
    return outcome::in_progress;
  }

  /// Largest fraction of the step −x (x in m_step or given) that respects the
  /// bounds, times boundary_fraction when the full step would not (1 if it would).
  double bound_limit(const vector_type& x) {
    if (!m_has_bounds) return 1.0;
    m_space.combine(-1, x, 0, x, m_trial_state);  // direction s = −x
    const double room = m_space.max_step_to_bounds(m_state, m_trial_state, lower(), upper());
    return room >= 1.0 ? 1.0 : m_settings.bounds.boundary_fraction * room;
  }
  const vector_type& lower() const { return m_variable_scaling ? m_scaled_lower : m_lower_bound; }
  const vector_type& upper() const { return m_variable_scaling ? m_scaled_upper : m_upper_bound; }

  /// Evaluates R at m_trial_state = u − t x; returns ‖R‖, or +inf when the
  /// state is inadmissible (the residual is then not called).
  template <class Problem>
  double trial(Problem& problem, const vector_type& x, double t) {
    m_space.combine(1, m_state, -t, x, m_trial_state);
    if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
      if (!admissible(problem, m_trial_state)) {
        ++m_report.inadmissible_trials;
        return std::numeric_limits<double>::infinity();
      }
    }
    evaluate(problem, m_trial_state, m_trial_residual, phase::residual);
    return m_space.norm(m_trial_residual);
  }

  template <class Problem>
  outcome line_search_step(Problem& problem, newton_step_record& record, bool require_decrease) {
    begin_globalization();
    const double limit = bound_limit(m_step);
    record.bound_active = limit < 1.0;
    // Shortening the direction to t·s raises the linear-model residual to (1 − t(1 − η))‖R‖.
    const double eta = 1.0 - limit * (1.0 - m_achieved_eta);
    const line_search_result search = backtracking_line_search(
        m_settings.line_search, m_norm, eta, require_decrease,
        [&](double lambda) { return trial(problem, m_step, lambda * limit); },
        [&]() {
          apply_jacobian(problem, m_step, m_product);  // φ'(0) = Rᵀ R'(u) s with s = −limit·x
          return -limit * m_space.dot(m_residual, m_product);
        });
    account_globalization();
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

  template <class Problem>
  outcome trust_region_step(Problem& problem, newton_step_record& record) {
    begin_globalization();
    const trust_region_settings& tr = m_settings.trust_region;
    // Newton point x_N = m_step, Cauchy point x_C = m_cauchy (both for R'(u) x = R(u); s = −x).
    if (!m_gmres.cauchy_point_available()) m_space.fill(0, m_cauchy);
    apply_jacobian(problem, m_step, m_product);
    apply_jacobian(problem, m_cauchy, m_cauchy_product);
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
    if (!(m_trust_radius > 0.0)) m_trust_radius = std::min(newton_norm, tr.maximum_radius);

    for (int attempt = 0;; ++attempt) {
      const dogleg_point point = dogleg(m_trust_radius, newton_norm, cauchy_norm, cauchy_dot_newton);
      // x = a x_C + b x_N (held in m_trial_residual until the trial is evaluated).
      m_space.combine(point.cauchy_weight, m_cauchy, point.newton_weight, m_step, m_trial_residual);
      const double limit = bound_limit(m_trial_residual);
      const double a = point.cauchy_weight * limit;
      const double b = point.newton_weight * limit;
      const double step_norm = limit * m_space.norm(m_trial_residual);
      const double predicted = model.predicted_reduction(a, b);
      m_space.scale(limit, m_trial_residual);
      m_space.combine(1, m_state, -1, m_trial_residual, m_trial_state);
      double trial_norm = std::numeric_limits<double>::infinity();
      bool admissible_state = true;
      if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
        admissible_state = admissible(problem, m_trial_state);
        if (!admissible_state) ++m_report.inadmissible_trials;
      }
      if (admissible_state) {
        evaluate(problem, m_trial_state, m_trial_residual, phase::residual);
        trial_norm = m_space.norm(m_trial_residual);
      }
      const double actual = 0.5 * (m_norm * m_norm - trial_norm * trial_norm);
      const double ratio = predicted > 0.0 ? actual / predicted : -1.0;
      if (std::isfinite(trial_norm) && ratio > tr.acceptance_ratio) {
        if (ratio > tr.grow_above_ratio && step_norm >= 0.99 * m_trust_radius) {
          m_trust_radius = std::min(tr.growth_factor * m_trust_radius, tr.maximum_radius);
        } else if (ratio < tr.shrink_below_ratio) {
          m_trust_radius = tr.shrink_factor * step_norm;
        }
        m_trial_norm = trial_norm;
        record.step_length = 1.0;
        record.step_norm = step_norm;
        record.trust_radius = m_trust_radius;
        record.bound_active = limit < 1.0;
        record.backtracks = attempt;
        m_report.backtracks += attempt;
        account_globalization();
        return outcome::in_progress;
      }
      if (admissible_state && !std::isfinite(trial_norm)) ++m_report.non_finite_trials;
      m_trust_radius = tr.shrink_factor * std::min(m_trust_radius, step_norm);
      if (m_trust_radius < tr.minimum_radius) {
        account_globalization();
        return outcome::trust_region_collapsed;
      }
    }
  }

  /// One pseudo-time step: (W/δ + R'(u)) x = R(u), u ← u − x; δ by SER.
  template <class Problem, class Monitor>
  outcome pseudo_transient_step(Problem& problem, Monitor& monitor, newton_step_record& record) {
    const pseudo_transient_settings& ptc = m_settings.pseudo_transient;
    if constexpr (detail::has_pseudo_time_weights<Problem, vector_type>::value) {
      problem.pseudo_time_weights(physical_state(m_state), m_weights);
      // In scaled variables the term is D_r⁻¹ (W/δ) D_u.
      if (m_variable_scaling) m_space.multiply(m_variable_scale, m_weights);
      if (m_residual_scaling) m_space.divide(m_residual_scale, m_weights);
    }
    for (int attempt = 0;; ++attempt) {
      m_space.copy(m_weights, m_shift);
      m_space.scale(1 / m_pseudo_time_step, m_shift);
      if (attempt > 0) request_preconditioner_rebuild();  // the shift changed
      if (const outcome early = newton_direction(problem, monitor, record); early != outcome::in_progress) return early;
      begin_globalization();
      const double limit = bound_limit(m_step);
      const std::int64_t inadmissible_before = m_report.inadmissible_trials;
      const double trial_norm = trial(problem, m_step, limit);
      account_globalization();
      if (std::isfinite(trial_norm) && trial_norm <= ptc.maximum_residual_growth * m_norm) {
        record.pseudo_time_step = m_pseudo_time_step;
        record.step_length = limit;
        record.step_norm = limit * m_space.norm(m_step);
        record.bound_active = limit < 1.0;
        record.backtracks = attempt;
        m_report.backtracks += attempt;
        m_trial_norm = trial_norm;
        m_pseudo_time_step = next_pseudo_time_step(ptc, m_pseudo_time_step, m_norm, trial_norm);
        if (trial_norm <= ptc.switch_ratio * m_report.initial_residual_norm || m_pseudo_time_step >= ptc.maximum_step) {
          m_pseudo_transient = false;  // Newton with line search from here on
          m_forcing.reset();
          m_rebuild_requested = true;  // the preconditioner holds the pseudo-time shift
        }
        return outcome::in_progress;
      }
      if (m_report.inadmissible_trials == inadmissible_before && !std::isfinite(trial_norm))
        ++m_report.non_finite_trials;
      m_pseudo_time_step *= ptc.failure_shrink;
      if (m_pseudo_time_step < ptc.minimum_step) return outcome::pseudo_time_step_collapsed;
    }
  }

  /// Opens a globalisation interval; account_globalization() closes it. A
  /// limit or cancellation raised inside (detail::stop_signal) is closed by
  /// step(), so stopped solves keep an honest breakdown too.
  void begin_globalization() {
    m_globalization_clock = {detail::clock_type::now(), m_report.time.residual, m_report.time.jacobian_vector, true};
  }

  void account_globalization() {
    if (!m_globalization_clock.open) return;
    m_globalization_clock.open = false;
    const auto stop = detail::clock_type::now();
    const auto start = m_globalization_clock.start;
    if (m_trace != nullptr) m_trace->record(trace_phase::globalization, start, stop, m_report.newton_steps + 1);
    const double seconds = detail::seconds_between(start, stop);
    m_report.time.globalization += seconds - (m_report.time.residual - m_globalization_clock.residual_before) -
                                   (m_report.time.jacobian_vector - m_globalization_clock.product_before);
    ++m_report.calls.globalization;
  }

  // ---- residual, admissibility, J·v, preconditioner -------------------------------

  /// m_physical = variable_scale ⊙ x (or a copy); returns the physical state.
  const vector_type& physical_state(const vector_type& x) {
    if (!m_variable_scaling) return x;
    m_space.copy(x, m_physical);
    m_space.multiply(m_variable_scale, m_physical);
    return m_physical;
  }

  template <class Problem>
  bool admissible(Problem& problem, const vector_type& x) {
    const bool local = problem.is_admissible(physical_state(x));
    return !any_of(m_space, !local);
  }

  /// Every call of the user's residual goes through here: budget, time limit
  /// and cancellation are checked first, so they always hold.
  template <class Problem>
  void evaluate(Problem& problem, const vector_type& x, vector_type& r, phase attributed_to) {
    if (m_report.residual_evaluations >= m_settings.residual_evaluation_budget) {
      throw detail::stop_signal{outcome::residual_evaluation_budget};
    }
    check_cancellation_and_clock();
    const vector_type& physical = physical_state(x);
    const auto expected = x.size();
    const auto start = detail::clock_type::now();
    problem(physical, r);
    const auto stop = detail::clock_type::now();
    const double seconds = detail::seconds_between(start, stop);
    if (m_trace != nullptr) m_trace->record(trace_phase::residual, start, stop);
    ++m_report.residual_evaluations;
    m_residual_samples.add(seconds);
    if (attributed_to == phase::residual) {
      m_report.time.residual += seconds;
      ++m_report.calls.residual;
    }
    if (r.size() != expected) {
      throw std::invalid_argument("nkit: the residual changed the size of its output vector from " +
                                  std::to_string(expected) + " to " + std::to_string(r.size()) +
                                  "; it must write into r without resizing it");
    }
    if (m_residual_scaling) m_space.divide(m_residual_scale, r);
  }

  /// Stops the solve when the cancellation flag is raised or the wall-clock
  /// limit has passed. Both are rank-local facts, so they are combined with a
  /// collective OR (any_of) on distributed spaces; nothing is checked, and no
  /// communication happens, when neither is configured.
  void check_cancellation_and_clock() {
    const std::atomic<bool>* flag = m_settings.cancellation_flag;
    if (flag != nullptr && any_of(m_space, flag->load(std::memory_order_relaxed))) {
      throw detail::stop_signal{outcome::cancelled};
    }
    if (std::isfinite(m_settings.wall_time_limit_seconds) &&
        any_of(m_space, m_clock.seconds() > m_settings.wall_time_limit_seconds)) {
      throw detail::stop_signal{outcome::wall_time_limit};
    }
  }

  /// out = R̃'(ũ) v at the current state (plus the pseudo-time shift while it
  /// is active): analytic / AD product when the problem has one, finite
  /// differences otherwise (with the step kept inside the bounds).
  template <class Problem>
  void apply_jacobian(Problem& problem, const vector_type& v, vector_type& out) {
    const auto start = detail::clock_type::now();
    if constexpr (has_jacobian_product_v<Problem, vector_type>) {
      check_cancellation_and_clock();
      const auto expected = v.size();
      const vector_type* direction = &v;
      if (m_variable_scaling) {
        m_space.copy(v, m_physical_direction);
        m_space.multiply(m_variable_scale, m_physical_direction);
        direction = &m_physical_direction;
      }
      problem.jacobian_product(physical_state(m_state), *direction, out);
      if (out.size() != expected) {
        throw std::invalid_argument("nkit: jacobian_product wrote a vector of size " + std::to_string(out.size()) +
                                    ", expected " + std::to_string(expected));
      }
      if (m_residual_scaling) m_space.divide(m_residual_scale, out);
    } else {
      auto residual = [this, &problem](const vector_type& x, vector_type& r) { evaluate(problem, x, r, phase::none); };
      if (!m_has_bounds && !detail::has_is_admissible<Problem, vector_type>::value) {
        m_difference.apply(residual, v, out);
      } else {
        bounded_difference(problem, residual, v, out);
      }
    }
    if (m_pseudo_transient) m_space.add_product(m_shift, v, out);
    const auto stop = detail::clock_type::now();
    if (m_trace != nullptr) m_trace->record(trace_phase::jacobian_vector, start, stop);
    m_report.time.jacobian_vector += detail::seconds_between(start, stop);
    ++m_report.calls.jacobian_vector;
    ++m_report.jacobian_vector_products;
  }

  /// Finite-difference J·v whose perturbed states stay within the bounds and
  /// admissible: the step is capped at half the room along ±v, a backward
  /// difference is used when the forward side has less room, and the step is
  /// halved while the problem's predicate rejects the perturbed state.
  template <class Problem, class Residual>
  void bounded_difference(Problem& problem, Residual& residual, const vector_type& v, vector_type& out) {
    const double direction_norm = m_space.norm(v);
    if (direction_norm == 0.0) {
      m_space.fill(0, out);
      return;
    }
    if (!std::isfinite(direction_norm)) {  // never evaluate the residual at a non-finite state
      m_space.fill(std::numeric_limits<scalar_type>::quiet_NaN(), out);
      return;
    }
    double step = m_difference.step_for(direction_norm);
    if (m_has_bounds) {
      const double forward_room = m_space.max_step_to_bounds(m_state, v, lower(), upper());
      m_space.combine(-1, v, 0, v, m_trial_state);
      const double backward_room = m_space.max_step_to_bounds(m_state, m_trial_state, lower(), upper());
      if (forward_room >= 2.0 * step) {
      } else if (backward_room >= 2.0 * step) {
        step = -step;
      } else {
        step = forward_room >= backward_room ? 0.5 * forward_room : -0.5 * backward_room;
      }
    }
    if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
      for (int attempt = 0;; ++attempt) {
        m_space.combine(1, m_state, step, v, m_trial_state);
        if (admissible(problem, m_trial_state)) break;
        if (attempt == 60) throw detail::stop_signal{outcome::linear_solver_no_progress};
        step = attempt % 2 == 0 ? -step : -0.5 * step;  // try the other side, then a shorter step
      }
    }
    m_difference.apply_with_step(residual, v, step, out);
  }

  template <class Problem>
  struct jacobian_operator {
    newton_krylov_solver* solver;
    Problem* problem;
    void apply(const vector_type& v, vector_type& out) { solver->apply_jacobian(*problem, v, out); }
  };

  struct timed_preconditioner {
    newton_krylov_solver* solver;
    void apply(const vector_type& r, vector_type& z) {
      const auto start = detail::clock_type::now();
      const auto expected = r.size();
      solver->m_preconditioner.apply(r, z);
      if (z.size() != expected) {
        throw std::invalid_argument("nkit: the preconditioner's apply() wrote a vector of size " +
                                    std::to_string(z.size()) + ", expected " + std::to_string(expected) +
                                    "; it must write into z without resizing it");
      }
      const auto stop = detail::clock_type::now();
      if (solver->m_trace != nullptr) solver->m_trace->record(trace_phase::preconditioner_apply, start, stop);
      solver->m_report.time.preconditioner_apply += detail::seconds_between(start, stop);
      ++solver->m_report.calls.preconditioner_apply;
      ++solver->m_report.preconditioner_applications;
    }
    bool changes_between_applications() const { return nkit::changes_between_applications(solver->m_preconditioner); }
  };

  /// Adds to `field` the wall time of its own scope minus the time of the
  /// phases measured inside it (the remainder phases krylov_update and
  /// newton_update); counts one call. Works on every exit path.
  struct nested_phase_timer {
    newton_krylov_solver& solver;
    double phase_seconds::*field;
    std::int64_t phase_calls::*calls;
    detail::clock_type::time_point start = detail::clock_type::now();
    double measured_before = solver.m_report.time.measured();
    nested_phase_timer(newton_krylov_solver& s, double phase_seconds::*f, std::int64_t phase_calls::*c)
        : solver(s), field(f), calls(c) {}
    nested_phase_timer(const nested_phase_timer&) = delete;
    nested_phase_timer& operator=(const nested_phase_timer&) = delete;
    ~nested_phase_timer() {
      const double wall = detail::seconds_between(start, detail::clock_type::now());
      phase_seconds& time = solver.m_report.time;
      time.*field += wall - (time.measured() - measured_before);
      ++(solver.m_report.calls.*calls);
    }
  };

  /// Calls the monitor after a Newton step, timed as the monitor phase
  /// (the default null_monitor is neither called nor timed).
  template <class Monitor>
  monitor_decision notify_timed(Monitor& monitor, const newton_step_record& record) {
    if constexpr (std::is_same_v<std::decay_t<Monitor>, null_monitor>) {
      static_cast<void>(monitor);
      static_cast<void>(record);
      return monitor_decision::keep_going;
    } else {
      const auto start = detail::clock_type::now();
      const monitor_decision decision = detail::notify_newton_step(monitor, record);
      account_monitor(start, record.step);
      return decision;
    }
  }
  /// `step`: the 1-based Newton step the call belongs to.
  void account_monitor(detail::clock_type::time_point start, int step) {
    const auto stop = detail::clock_type::now();
    if (m_trace != nullptr) m_trace->record(trace_phase::monitor, start, stop, step);
    m_report.time.monitor += detail::seconds_between(start, stop);
    ++m_report.calls.monitor;
  }

  template <class Problem, class Monitor>
  linear_solve_result solve_linear(Problem& problem, Monitor& monitor, double eta, std::int64_t budget_left) {
    jacobian_operator<Problem> op{this, &problem};
    const std::int64_t used_before = m_report.linear_iterations;
    auto observer = [&](int iteration, double relative) {
      m_report.linear_iterations = used_before + iteration;
      monitor_decision decision = monitor_decision::keep_going;
      if constexpr (detail::watches_linear_iterations_v<std::remove_reference_t<Monitor>>) {
        const auto start = detail::clock_type::now();
        decision = detail::notify_linear_iteration(monitor, iteration, relative);
        account_monitor(start, m_report.newton_steps + 1);
      }
      if (decision == monitor_decision::stop_now) {
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
    m_gmres.capture_cauchy_point(trust_region ? &m_cauchy : nullptr);
    linear_solve_result result;
    const double measured_before = m_report.time.measured();
    const auto start = detail::clock_type::now();
    const auto account = [&](double orthogonalization_seconds) {
      const auto stop = detail::clock_type::now();
      if (m_trace != nullptr) m_trace->record(trace_phase::linear_solve, start, stop, m_report.newton_steps + 1);
      m_report.time.orthogonalization += orthogonalization_seconds;
      m_report.time.krylov_update +=
          detail::seconds_between(start, stop) - (m_report.time.measured() - measured_before);
    };
    try {
      if constexpr (std::is_same_v<Preconditioner, identity_preconditioner>) {
        result = m_gmres.solve(op, m_preconditioner, m_residual, m_step, eta, initial_guess::zero, observer);
      } else {
        timed_preconditioner preconditioner{this};
        result = m_gmres.solve(op, preconditioner, m_residual, m_step, eta, initial_guess::zero, observer);
      }
    } catch (const detail::stop_signal&) {
      // A budget, limit or cancellation inside a J·v or preconditioner
      // apply: GMRES's result is lost, its Gram–Schmidt time is not.
      account(m_gmres.orthogonalization_seconds_of_last_solve());
      ++m_report.calls.krylov_update;
      throw;
    }
    account(result.orthogonalization_seconds);
    m_report.linear_iterations = used_before + result.iterations;
    m_report.calls.orthogonalization += result.iterations;
    ++m_report.calls.krylov_update;
    return result;
  }

  bool needs_rebuild(int k) const {
    const preconditioner_reuse_settings& policy = m_settings.preconditioner_reuse;
    if (!m_preconditioner_current || m_rebuild_requested) return true;
    if (k - m_last_setup_step >= policy.rebuild_every_newton_steps) return true;
    if (policy.rebuild_when_linear_iterations_exceed > 0 &&
        m_last_linear_iterations > policy.rebuild_when_linear_iterations_exceed) {
      return true;
    }
    return policy.rebuild_after_linear_failure && m_last_linear_failed;
  }

  /// Gives preconditioners the problem's assembled Jacobian on demand, in the
  /// solver's scaled variables and with the pseudo-time shift included: the
  /// user's assemble_jacobian (row- or column-major), or colored finite
  /// differences from jacobian_pattern() through the counted evaluate(), so
  /// budgets hold and the perturbed states respect bounds and admissibility.
  /// Either way the time counts as jacobian_assembly.
  template <class Problem>
  class problem_jacobian final : public jacobian_source {
   public:
    problem_jacobian(newton_krylov_solver& solver, Problem& problem) : m_solver(solver), m_problem(problem) {}
    const sparse_matrix& assembled_jacobian() override {
      if (!m_assembled) {
        newton_krylov_solver& s = m_solver;
        const auto start = detail::clock_type::now();
        if constexpr (assembles_row_major_jacobian_v<Problem, vector_type> ||
                      assembles_column_major_jacobian_v<Problem, vector_type>) {
          if constexpr (assembles_row_major_jacobian_v<Problem, vector_type>) {
            m_problem.assemble_jacobian(s.physical_state(s.m_state), s.m_jacobian);
          } else {
            m_problem.assemble_jacobian(s.physical_state(s.m_state), s.m_column_major_jacobian);
            s.m_jacobian = s.m_column_major_jacobian;
          }
          // The user's matrix is in physical units: J̃ = D_r⁻¹ J D_u.
          if (s.m_residual_scaling) s.m_jacobian = s.m_residual_scale.cwiseInverse().asDiagonal() * s.m_jacobian;
          if (s.m_variable_scaling) s.m_jacobian = s.m_jacobian * s.m_variable_scale.asDiagonal();
        } else {
          // Differences of the scaled residual in scaled variables give J̃ directly.
          s.m_colored.configure(s.m_settings.jacobian);
          s.m_colored.prepare(m_problem.jacobian_pattern());
          auto evaluate = [this](const vector_type& x, vector_type& r) {
            m_solver.evaluate(m_problem, x, r, phase::none);
          };
          auto admissible = [this](const vector_type& x) {
            if (m_solver.m_has_bounds && !m_solver.m_space.within_bounds(x, m_solver.lower(), m_solver.upper())) {
              return false;
            }
            if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
              return m_solver.admissible(m_problem, x);
            } else {
              return true;
            }
          };
          s.m_colored.assemble(evaluate, s.m_state, s.m_residual, s.m_jacobian, admissible);
        }
        if (s.m_pseudo_transient) {
          detail::add_to_diagonal(s.m_jacobian, s.m_shift, first_global_row(s.m_space, s.m_state));
        }
        const auto stop = detail::clock_type::now();
        if (s.m_trace != nullptr) s.m_trace->record(trace_phase::jacobian_assembly, start, stop);
        s.m_report.time.jacobian_assembly += detail::seconds_between(start, stop);
        ++s.m_report.calls.jacobian_assembly;
        ++s.m_report.jacobian_assemblies;
        m_assembled = true;
      }
      return m_solver.m_jacobian;
    }

   private:
    newton_krylov_solver& m_solver;
    Problem& m_problem;
    bool m_assembled = false;
  };

  template <class Problem>
  setup_status rebuild_preconditioner(Problem& problem, int k) {
    const auto start = detail::clock_type::now();
    const double assembly_before = m_report.time.jacobian_assembly;
    const vector_type* shift = m_pseudo_transient ? &m_shift : nullptr;
    setup_status status;
    if constexpr (can_assemble_jacobian_v<Problem, vector_type>) {
      problem_jacobian<Problem> source(*this, problem);
      preconditioner_context<Space> context{m_space, m_state, m_residual, k, shift, &source};
      status = setup_preconditioner(m_preconditioner, context);
    } else {
      static_cast<void>(problem);
      preconditioner_context<Space> context{m_space, m_state, m_residual, k, shift, nullptr};
      status = setup_preconditioner(m_preconditioner, context);
    }
    const auto stop = detail::clock_type::now();
    if (m_trace != nullptr) m_trace->record(trace_phase::preconditioner_setup, start, stop, k + 1);
    const double seconds = detail::seconds_between(start, stop);
    m_report.time.preconditioner_setup += seconds - (m_report.time.jacobian_assembly - assembly_before);
    ++m_report.calls.preconditioner_setup;
    ++m_report.preconditioner_setups;
    if (status == setup_status::ready_with_fallback) ++m_report.preconditioner_fallbacks;
    m_last_setup_step = k;
    m_preconditioner_size = m_state.size();
    m_rebuild_requested = false;
    m_preconditioner_current = status != setup_status::failed;
    return status;
  }

  // ---- members ------------------------------------------------------------------------

  newton_settings m_settings;
  Space m_space;
  Preconditioner m_preconditioner;
  gmres_solver<Space> m_gmres;
  finite_difference_jacobian<Space> m_difference;
  forcing_term_sequence m_forcing;

  // Newton vectors (scaled variables when scaling is set).
  vector_type m_state, m_residual, m_step, m_trial_state, m_trial_residual, m_best_state, m_product;
  vector_type m_cauchy, m_cauchy_product;        // trust region
  vector_type m_physical, m_physical_direction;  // scaling / user callbacks
  vector_type m_weights, m_shift;                // pseudo-transient term W/δ
  vector_type m_lower_bound, m_upper_bound, m_scaled_lower, m_scaled_upper;
  vector_type m_variable_scale, m_residual_scale;
  sparse_matrix m_jacobian;
  column_major_sparse_matrix m_column_major_jacobian;
  struct globalization_clock {
    detail::clock_type::time_point start{};
    double residual_before = 0.0, product_before = 0.0;
    bool open = false;
  } m_globalization_clock;                // only for problems that assemble column-major
  colored_difference_jacobian m_colored;  // only for problems that offer jacobian_pattern()

  solve_report m_report;
  std::size_t m_history_capacity = 0;
  detail::stopwatch m_clock;
  detail::median_window m_residual_samples;

  double m_norm = 0.0;
  double m_trial_norm = 0.0;
  double m_best_norm = 0.0;
  double m_target_norm = 0.0;
  double m_achieved_eta = 0.0;
  double m_trust_radius = 0.0;
  double m_pseudo_time_step = 0.0;
  bool m_pseudo_transient = false;
  bool m_has_bounds = false;
  bool m_variable_scaling = false;
  bool m_residual_scaling = false;
  bool m_best_is_current = true;
  int m_steps_since_best = 0;
  double m_stagnation_reference = 0.0;
  trace_recorder* m_trace = nullptr;
  bool m_linear_budget_spent = false;
  bool m_monitor_stopped = false;
  bool m_rebuild_requested = false;
  bool m_preconditioner_current = false;
  int m_last_setup_step = -1;
  Eigen::Index m_preconditioner_size = -1;
  int m_last_linear_iterations = 0;
  bool m_last_linear_failed = false;
};

/// Handle for a caller-driven solve (see newton_krylov_solver::begin).
template <class Solver, class Problem, class Monitor>
class newton_run {
 public:
  using state_view = typename Solver::state_view;

  newton_run(Solver& solver, Problem& problem, state_view u, Monitor monitor)
      : m_solver(&solver), m_problem(&problem), m_u(u), m_monitor(std::forward<Monitor>(monitor)) {
    try {
      m_solver->start(*m_problem, m_u);
      if (!m_solver->m_space.all_finite(m_solver->m_residual)) {
        m_solver->finish(outcome::non_finite_initial_residual, m_u);
      } else if (const outcome converged = m_solver->convergence(); converged != outcome::in_progress) {
        m_solver->finish(converged, m_u);
      }
    } catch (const detail::stop_signal& signal) {
      m_solver->finish(signal.reason, m_u);
    }
  }

  newton_run(const newton_run&) = delete;
  newton_run& operator=(const newton_run&) = delete;
  newton_run(newton_run&&) noexcept = default;

  /// Takes one Newton step; returns outcome::in_progress until the solve stops.
  outcome advance() {
    if (m_broken) {
      throw std::logic_error("nkit: this run cannot continue after an exception from user code; start a new one");
    }
    if (m_solver->m_report.result != outcome::in_progress) return m_solver->m_report.result;
    try {
      const outcome result = m_solver->step(*m_problem, m_monitor, m_u);
      if (result != outcome::in_progress) m_solver->finish(result, m_u);
      return result;
    } catch (const detail::stop_signal& signal) {
      m_solver->finish(signal.reason, m_u);
      return signal.reason;
    } catch (...) {
      m_broken = true;  // u already holds the last accepted iterate
      throw;
    }
  }

  /// The report so far (complete once advance() returned a final outcome).
  const solve_report& report() const { return m_solver->m_report; }
  outcome result() const { return m_solver->m_report.result; }

 private:
  Solver* m_solver;
  Problem* m_problem;
  state_view m_u;
  Monitor m_monitor;
  bool m_broken = false;
};

/// One-shot convenience: solve R(u) = 0 from u with the default vector space,
/// no preconditioner and the given settings.
template <class Residual>
solve_report solve(Residual&& residual, Eigen::Ref<Eigen::VectorXd> u, const newton_settings& settings = {}) {
  newton_krylov_solver<> solver(settings);
  return solver.solve(std::forward<Residual>(residual), u);
}

}  // namespace nkit

#endif  // NKIT_NEWTON_KRYLOV_SOLVER_HPP
