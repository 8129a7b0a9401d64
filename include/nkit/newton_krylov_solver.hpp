#ifndef NKIT_NEWTON_KRYLOV_SOLVER_HPP
#define NKIT_NEWTON_KRYLOV_SOLVER_HPP

/// \file newton_krylov_solver.hpp
/// The reusable inexact Newton–Krylov solver and the one-shot nkit::solve().
///
/// Each Newton step: choose the forcing term η (forcing_term.hpp), rebuild
/// the preconditioner if the reuse policy says so, solve R'(u) x = R(u) with
/// right-preconditioned GMRES to relative tolerance η using matrix-free
/// Jacobian-vector products, and move along s = −x with the chosen
/// globalisation. The caller may drive the loop itself:
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
/// Allocation: the workspace (Newton vectors, GMRES basis, difference
/// vectors, history capacity) is allocated on the first solve and kept, so a
/// later solve of the same size allocates nothing in its iterations; solve()
/// allocates once at the end, to copy the history into the returned report.

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
#include "report.hpp"
#include "residual.hpp"
#include "settings.hpp"
#include "sparse_jacobian.hpp"
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

  /// The next Newton step rebuilds the preconditioner whatever the reuse policy says.
  void request_preconditioner_rebuild() { m_rebuild_requested = true; }

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

  /// Bytes of workspace held now (vectors, GMRES, preconditioner, history).
  std::size_t workspace_bytes() const {
    const std::size_t n = static_cast<std::size_t>(m_state.size());
    const std::size_t newton_vectors = 7;  // state, residual, step, trial state, trial residual, best, product
    return sizeof(scalar_type) * newton_vectors * n + m_gmres.workspace_bytes() + m_difference.workspace_bytes() +
           preconditioner_memory_bytes(m_preconditioner) + m_report.history.capacity() * sizeof(newton_step_record) +
           assembled_jacobian_bytes();
  }

  /// Bytes held for the assembled Jacobian (values, indices, coloring workspace).
  std::size_t assembled_jacobian_bytes() const {
    const auto matrix_bytes = [](auto const& matrix) {
      return static_cast<std::size_t>(matrix.nonZeros()) * (sizeof(double) + sizeof(int)) +
             static_cast<std::size_t>(matrix.outerSize() + 1) * sizeof(int);
    };
    return matrix_bytes(m_jacobian) + matrix_bytes(m_column_major_jacobian) + m_colored.workspace_bytes();
  }

 private:
  template <class Solver, class Problem, class Monitor>
  friend class newton_run;

  enum class phase { residual, jacobian_vector, none };

  static const newton_settings& validated(const newton_settings& settings) {
    settings.validate();
    return settings;
  }

  // ---- setup ------------------------------------------------------------

  template <class Problem>
  void start(Problem& problem, state_view u) {
    static_assert(is_residual_v<Problem, vector_type>,
                  "nkit: the residual must be callable as residual(const vector_type& u, vector_type& r)");
    if (u.size() == 0) throw std::invalid_argument("nkit: the state vector u is empty");
    if (!m_space.all_finite(u)) throw std::invalid_argument("nkit: the initial guess u0 contains NaN or Inf entries");

    m_clock.restart();
    auto history = std::move(m_report.history);  // keep its capacity: no allocation on repeat solves
    m_report = solve_report{};
    m_report.history = std::move(history);
    m_report.history.clear();
    if (m_history_capacity < static_cast<std::size_t>(m_settings.max_newton_steps)) {
      m_history_capacity = static_cast<std::size_t>(m_settings.max_newton_steps);
    }
    m_report.history.reserve(m_history_capacity);
    m_residual_samples.clear();

    for (vector_type* v :
         {&m_state, &m_residual, &m_step, &m_trial_state, &m_trial_residual, &m_best_state, &m_product}) {
      m_space.allocate_like(*v, u);
    }
    m_difference.allocate_like(m_state);
    const bool flexible = changes_between_applications(m_preconditioner);
    m_gmres.allocate_like(m_state, flexible);

    m_space.copy(u, m_state);
    m_forcing = forcing_term_sequence(m_settings.forcing);
    m_forcing.reset();
    m_best_is_current = true;
    m_steps_since_best = 0;
    m_linear_budget_spent = false;
    m_monitor_stopped = false;
    m_last_setup_step = -1;
    m_last_linear_iterations = 0;
    m_last_linear_failed = false;
    if (m_settings.preconditioner_reuse.rebuild_every_newton_steps >= 1) m_preconditioner_current = false;

    evaluate(problem, m_state, m_residual, phase::residual);
    m_norm = m_space.norm(m_residual);
    m_report.initial_residual_norm = m_report.final_residual_norm = m_norm;
    m_best_norm = m_norm;
    m_target_norm = std::max(m_settings.absolute_tolerance, m_settings.relative_tolerance * m_norm);
  }

  // ---- one Newton step ----------------------------------------------------

  template <class Problem, class Monitor>
  outcome step(Problem& problem, Monitor& monitor, state_view u) {
    const int k = m_report.newton_steps;
    if (k >= m_settings.max_newton_steps) return outcome::newton_step_limit;

    newton_step_record record;
    record.step = k + 1;
    const double eta = m_forcing.next(m_norm, m_target_norm);
    record.forcing_term = eta;

    // Preconditioner.
    if constexpr (has_setup_v<Preconditioner, Space>) {
      if (needs_rebuild(k)) {
        const setup_status status = rebuild_preconditioner(problem, k);
        record.preconditioner_rebuilt = true;
        if (status == setup_status::failed) return outcome::preconditioner_failed;
      }
    }

    // Linear solve R'(u) x = R(u); the Newton direction is s = −x.
    m_difference.linearize_at(m_state, m_residual);
    const std::int64_t budget_left = m_settings.linear_iteration_budget - m_report.linear_iterations;
    if (budget_left <= 0) return outcome::linear_iteration_budget;
    const linear_solve_result linear = solve_linear(problem, monitor, eta, budget_left);
    if (m_monitor_stopped) return outcome::stopped_by_monitor;
    record.linear_iterations = linear.iterations;
    record.linear_status = linear.status;
    m_last_linear_iterations = linear.iterations;
    m_last_linear_failed = !linear.converged();
    const double achieved = linear.relative_residual();
    record.relative_linear_residual = achieved;
    if (linear.iterations == 0 || !(achieved < 1.0)) return outcome::linear_solver_no_progress;
    m_forcing.record(eta, m_norm, linear.final_residual_norm);

    // Globalisation.
    const std::int64_t evaluations_before = m_report.residual_evaluations;
    const double residual_seconds_before = m_report.time.residual;
    const double product_seconds_before = m_report.time.jacobian_vector;
    const auto globalization_start = detail::clock_type::now();
    const bool require_decrease = m_settings.globalization == globalization_strategy::line_search;
    const line_search_result search = backtracking_line_search(
        m_settings.line_search, m_norm, achieved, require_decrease,
        [&](double lambda) {
          m_space.combine(1, m_state, -lambda, m_step, m_trial_state);
          evaluate(problem, m_trial_state, m_trial_residual, phase::residual);
          return m_space.norm(m_trial_residual);
        },
        [&]() {
          apply_jacobian(problem, m_step, m_product);  // R'(u) x, and s = −x
          return -m_space.dot(m_residual, m_product);
        });
    const double globalization_seconds = detail::seconds_between(globalization_start, detail::clock_type::now());
    m_report.time.globalization += globalization_seconds - (m_report.time.residual - residual_seconds_before) -
                                   (m_report.time.jacobian_vector - product_seconds_before);
    ++m_report.calls.globalization;
    record.backtracks = search.trials - 1;
    m_report.backtracks += search.trials - 1;
    m_report.non_finite_trials += search.non_finite_trials;
    static_cast<void>(evaluations_before);
    if (!search.accepted) return outcome::line_search_failed;

    // Accept u + λ s.
    const double new_norm = search.residual_norm;
    if (m_best_is_current && !(new_norm < m_best_norm)) {
      m_space.copy(m_state, m_best_state);
      m_best_is_current = false;
    }
    const double step_norm = search.step_length * m_space.norm(m_step);
    std::swap(m_state, m_trial_state);
    std::swap(m_residual, m_trial_residual);
    m_norm = new_norm;
    if (new_norm < m_best_norm) {
      m_best_norm = new_norm;
      m_best_is_current = true;
      m_steps_since_best = 0;
    } else {
      ++m_steps_since_best;
    }
    ++m_report.newton_steps;
    m_space.copy(m_state, u);

    record.residual_norm = new_norm;
    record.relative_residual_norm =
        m_report.initial_residual_norm > 0.0 ? new_norm / m_report.initial_residual_norm : 0.0;
    record.step_length = search.step_length;
    record.step_norm = step_norm;
    record.elapsed_seconds = m_clock.seconds();
    record.residual_evaluations = m_report.residual_evaluations;
    m_report.history.push_back(record);
    m_report.final_residual_norm = new_norm;

    if (detail::notify_newton_step(monitor, record) == monitor_decision::stop_now) return outcome::stopped_by_monitor;
    if (const outcome converged = convergence(); converged != outcome::in_progress) return converged;
    if (m_settings.step_tolerance > 0.0 && step_norm <= m_settings.step_tolerance * (1.0 + m_space.norm(m_state))) {
      return outcome::step_below_tolerance;
    }
    if (m_steps_since_best >= m_settings.stagnation_window) return outcome::stagnated;
    if (m_linear_budget_spent) return outcome::linear_iteration_budget;
    return outcome::in_progress;
  }

  outcome convergence() const {
    if (m_norm <= m_settings.absolute_tolerance) return outcome::converged_absolute_residual;
    if (m_norm <= m_settings.relative_tolerance * m_report.initial_residual_norm) {
      return outcome::converged_relative_residual;
    }
    return outcome::in_progress;
  }

  /// Ends the run: on a non-converged outcome u gets the best iterate.
  void finish(outcome reason, state_view u) {
    m_report.result = reason;
    if (!is_converged(reason) && !m_best_is_current) {
      std::swap(m_state, m_best_state);
      m_norm = m_best_norm;
      m_best_is_current = true;
    }
    if (m_state.size() == u.size()) m_space.copy(m_state, u);
    m_report.final_residual_norm = m_norm;
    m_report.wall_seconds = m_clock.seconds();
    m_report.median_residual_seconds = m_residual_samples.median();
    phase_seconds& t = m_report.time;
    t.other = 0.0;
    t.other = std::max(0.0, m_report.wall_seconds - t.total());
    m_report.workspace_bytes = workspace_bytes();
  }

  // ---- residual, J·v, preconditioner ----------------------------------------

  /// Every call of the user's residual goes through here: budget, time limit
  /// and cancellation are checked first, so they always hold.
  template <class Problem>
  void evaluate(Problem& problem, const vector_type& x, vector_type& r, phase attributed_to) {
    if (m_report.residual_evaluations >= m_settings.residual_evaluation_budget) {
      throw detail::stop_signal{outcome::residual_evaluation_budget};
    }
    check_cancellation_and_clock();
    const auto expected = x.size();
    const auto start = detail::clock_type::now();
    problem(x, r);
    const double seconds = detail::seconds_between(start, detail::clock_type::now());
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

  /// out = R'(u) v at the current state (analytic / AD product when the
  /// problem has one, finite differences otherwise).
  template <class Problem>
  void apply_jacobian(Problem& problem, const vector_type& v, vector_type& out) {
    const auto start = detail::clock_type::now();
    if constexpr (has_jacobian_product_v<Problem, vector_type>) {
      check_cancellation_and_clock();
      const auto expected = v.size();
      problem.jacobian_product(static_cast<const vector_type&>(m_state), v, out);
      if (out.size() != expected) {
        throw std::invalid_argument("nkit: jacobian_product wrote a vector of size " + std::to_string(out.size()) +
                                    ", expected " + std::to_string(expected));
      }
    } else {
      auto residual = [this, &problem](const vector_type& x, vector_type& r) { evaluate(problem, x, r, phase::none); };
      m_difference.apply(residual, v, out);
    }
    m_report.time.jacobian_vector += detail::seconds_between(start, detail::clock_type::now());
    ++m_report.calls.jacobian_vector;
    ++m_report.jacobian_vector_products;
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
      solver->m_preconditioner.apply(r, z);
      solver->m_report.time.preconditioner_apply += detail::seconds_between(start, detail::clock_type::now());
      ++solver->m_report.calls.preconditioner_apply;
      ++solver->m_report.preconditioner_applications;
    }
    bool changes_between_applications() const { return nkit::changes_between_applications(solver->m_preconditioner); }
  };

  template <class Problem, class Monitor>
  linear_solve_result solve_linear(Problem& problem, Monitor& monitor, double eta, std::int64_t budget_left) {
    jacobian_operator<Problem> op{this, &problem};
    const std::int64_t used_before = m_report.linear_iterations;
    auto observer = [&](int iteration, double relative) {
      m_report.linear_iterations = used_before + iteration;
      if (detail::notify_linear_iteration(monitor, iteration, relative) == monitor_decision::stop_now) {
        m_monitor_stopped = true;
        return false;
      }
      if (iteration >= budget_left) {
        m_linear_budget_spent = true;
        return false;
      }
      return true;
    };
    linear_solve_result result;
    if constexpr (std::is_same_v<Preconditioner, identity_preconditioner>) {
      result = m_gmres.solve(op, m_preconditioner, m_residual, m_step, eta, initial_guess::zero, observer);
    } else {
      timed_preconditioner preconditioner{this};
      result = m_gmres.solve(op, preconditioner, m_residual, m_step, eta, initial_guess::zero, observer);
    }
    m_report.linear_iterations = used_before + result.iterations;
    m_report.time.orthogonalization += result.orthogonalization_seconds;
    m_report.calls.orthogonalization += result.iterations;
    return result;
  }

  bool needs_rebuild(int k) const {
    const preconditioner_reuse_settings& policy = m_settings.preconditioner_reuse;
    if (!m_preconditioner_current || m_rebuild_requested || m_last_setup_step < 0) return true;
    if (k - m_last_setup_step >= policy.rebuild_every_newton_steps) return true;
    if (policy.rebuild_when_linear_iterations_exceed > 0 &&
        m_last_linear_iterations > policy.rebuild_when_linear_iterations_exceed) {
      return true;
    }
    return policy.rebuild_after_linear_failure && m_last_linear_failed;
  }

  /// Gives preconditioners the problem's assembled Jacobian on demand: the
  /// user's assemble_jacobian (column-major converted), or colored finite
  /// differences from jacobian_pattern() through the counted evaluate(), so
  /// budgets hold; either way the time counts as jacobian_assembly.
  template <class Problem>
  class problem_jacobian final : public jacobian_source {
   public:
    problem_jacobian(newton_krylov_solver& solver, Problem& problem) : m_solver(solver), m_problem(problem) {}
    const sparse_matrix& assembled_jacobian() override {
      if (!m_assembled) {
        const auto start = detail::clock_type::now();
        const vector_type& state = m_solver.m_state;
        if constexpr (assembles_row_major_jacobian_v<Problem, vector_type>) {
          m_problem.assemble_jacobian(state, m_solver.m_jacobian);
        } else if constexpr (assembles_column_major_jacobian_v<Problem, vector_type>) {
          m_problem.assemble_jacobian(state, m_solver.m_column_major_jacobian);
          m_solver.m_jacobian = m_solver.m_column_major_jacobian;
        } else {
          m_solver.m_colored.configure(m_solver.m_settings.jacobian);
          m_solver.m_colored.prepare(m_problem.jacobian_pattern());
          auto evaluate = [this](const vector_type& x, vector_type& r) {
            m_solver.evaluate(m_problem, x, r, phase::none);
          };
          m_solver.m_colored.assemble(evaluate, state, m_solver.m_residual, m_solver.m_jacobian);
        }
        m_solver.m_report.time.jacobian_assembly += detail::seconds_between(start, detail::clock_type::now());
        ++m_solver.m_report.calls.jacobian_assembly;
        ++m_solver.m_report.jacobian_assemblies;
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
    setup_status status;
    if constexpr (can_assemble_jacobian_v<Problem, vector_type>) {
      problem_jacobian<Problem> source(*this, problem);
      preconditioner_context<Space> context{m_space, m_state, m_residual, k, nullptr, &source};
      status = setup_preconditioner(m_preconditioner, context);
    } else {
      static_cast<void>(problem);
      preconditioner_context<Space> context{m_space, m_state, m_residual, k, nullptr, nullptr};
      status = setup_preconditioner(m_preconditioner, context);
    }
    const double seconds = detail::seconds_between(start, detail::clock_type::now());
    m_report.time.preconditioner_setup += seconds - (m_report.time.jacobian_assembly - assembly_before);
    ++m_report.calls.preconditioner_setup;
    ++m_report.preconditioner_setups;
    if (status == setup_status::ready_with_fallback) ++m_report.preconditioner_fallbacks;
    m_last_setup_step = k;
    m_rebuild_requested = false;
    m_preconditioner_current = status != setup_status::failed;
    return status;
  }

  // ---- members --------------------------------------------------------------

  newton_settings m_settings;
  Space m_space;
  Preconditioner m_preconditioner;
  gmres_solver<Space> m_gmres;
  finite_difference_jacobian<Space> m_difference;
  forcing_term_sequence m_forcing;

  vector_type m_state, m_residual, m_step, m_trial_state, m_trial_residual, m_best_state, m_product;
  sparse_matrix m_jacobian;
  column_major_sparse_matrix m_column_major_jacobian;  // only for problems that assemble column-major
  colored_difference_jacobian m_colored;               // only for problems that offer jacobian_pattern()

  solve_report m_report;
  std::size_t m_history_capacity = 0;
  detail::stopwatch m_clock;
  detail::median_window m_residual_samples;

  double m_norm = 0.0;
  double m_best_norm = 0.0;
  double m_target_norm = 0.0;
  bool m_best_is_current = true;
  int m_steps_since_best = 0;
  bool m_linear_budget_spent = false;
  bool m_monitor_stopped = false;
  bool m_rebuild_requested = false;
  bool m_preconditioner_current = false;
  int m_last_setup_step = -1;
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
