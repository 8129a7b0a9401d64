#ifndef NKIT_NEWTON_PROBLEM_ACCESS_HPP
#define NKIT_NEWTON_PROBLEM_ACCESS_HPP

/// \file newton/problem_access.hpp
/// Every contact between a solver and the user's problem: residual
/// evaluations (with budgets, wall-clock limit, cancellation and a guard
/// against non-finite states), variable and residual scaling, bounds and
/// admissibility, the Jacobian-vector operator (the problem's exact product
/// or finite differences kept inside the bounds, plus an optional diagonal
/// shift) and the assembled Jacobian handed to preconditioners. The Newton
/// driver owns one; continuation's tangent solver uses one too.
///
/// Scaling: with variable scale D_u and residual scale D_r the solver works
/// with ũ = u / D_u and R̃ = R / D_r; the user's callbacks always receive
/// physical states D_u ũ. Norms, tolerances and trust radii refer to the
/// scaled quantities.
///
/// Non-finite states: the user's residual is never called at a state with
/// NaN or Inf entries. Iterates and trial states are checked (one pass over
/// the vector, a few times per Newton step); finite-difference perturbations
/// u + δv with δ = O(√ε (1 + ‖u‖)/‖v‖) are finite whenever u is, so they
/// are checked only when ‖u‖ overflows or the variable scale is huge; the
/// colored-difference perturbations are vetted before evaluation. A refused
/// evaluation returns R = NaN without calling the user (trials then count
/// as non-finite and are rejected).
///
/// Allocation: vectors are sized by start() and reused across solves of one size.

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>
#if defined(__GLIBC__)
#include <malloc.h>  // malloc_trim
#endif

#include "../core/preconditioner.hpp"
#include "../core/residual.hpp"
#include "../core/vector_space.hpp"
#include "../distributed/row_partition.hpp"
#include "../globalization/bounds.hpp"
#include "../jacobian/finite_difference_jacobian.hpp"
#include "../jacobian/sparse_jacobian.hpp"
#include "../report/outcome.hpp"
#include "../report/phase_ledger.hpp"
#include "newton_settings.hpp"

namespace nkit {

namespace detail {

/// J(i, first_column + i) += shift(i) for every local row i; inserts missing
/// diagonal entries. first_column is the global index of local row 0 in the
/// distributed layout of row_partition.hpp (0 on a serial space).
template <class Vector>
void add_to_diagonal(sparse_matrix& jacobian, const Vector& shift, Eigen::Index first_column) {
  for (Eigen::Index i = 0; i < shift.size(); ++i) jacobian.coeffRef(i, first_column + i) += shift(i);
}
}  // namespace detail

/// Why the residual is evaluated: decides how the call is booked and whether
/// the state is checked for finiteness first.
enum class evaluation_purpose {
  state,    ///< at an iterate or a trial state: booked to the residual phase; checked
  product,  ///< inside a finite-difference J·v: booked to the J·v phase; checked only when not proved finite
  assembly  ///< inside colored-difference assembly: booked to the assembly; vetted before the call
};

template <class Space>
class problem_access {
 public:
  using vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;
  using state_view = typename Space::state_view;
  using const_view = typename Space::const_view;

  explicit problem_access(const newton_settings& settings = {}, Space space = {})
      : m_space(std::move(space)), m_difference(settings.jacobian, m_space) {
    configure(settings);
  }

  /// Takes the settings this class reads (budgets, limits, J·v, bounds); already validated by the caller.
  void configure(const newton_settings& settings) {
    m_difference.configure(settings.jacobian);
    m_jacobian_settings = settings.jacobian;
    m_bound_settings = settings.bounds;
    m_evaluation_budget = settings.residual_evaluation_budget;
    m_unwritten_check = settings.check_unwritten_residual_entries;
    m_wall_time_budget = settings.wall_time_budget_seconds;
    m_cancellation_flag = settings.cancellation_flag;
  }
  const Space& space() const { return m_space; }

  // ---- bounds and scaling (user-facing through the driver) ------------------------

  /// Declares lower <= u <= upper (physical units; ±infinity where a side is
  /// unbounded). Throws std::invalid_argument on sizes that differ, NaN, or
  /// lower > upper; a rejected call leaves the old bounds in force.
  void set_bounds(const_view lower, const_view upper) {
    keep_checked_bounds(m_space, lower, upper, m_lower_bound, m_upper_bound);
    m_has_bounds = true;
  }
  void clear_bounds() { m_has_bounds = false; }
  bool has_bounds() const { return m_has_bounds; }

  /// Variable and residual scales (typical magnitudes, all finite and > 0);
  /// an empty vector leaves that side unscaled.
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
      // Largest entry (collective): decides whether perturbed states are provably finite.
      m_space.fill(scalar_type(1e100), largest);
      return m_space.within_bounds(scale, smallest, largest);
    };
    bool moderate = true;
    if (variable_scale.size() > 0) moderate = check(variable_scale, "variable_scale");
    if (residual_scale.size() > 0) check(residual_scale, "residual_scale");
    m_variable_scaling = variable_scale.size() > 0;
    m_residual_scaling = residual_scale.size() > 0;
    m_moderate_variable_scale = moderate;
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
  /// Whether a variable or residual scale is set.
  bool scaled() const { return m_variable_scaling || m_residual_scaling; }
  /// In place: x ← D_u x (`physical`) or x ← D_u⁻¹ x, for states and state directions; nothing without scaling.
  void apply_variable_scale(vector_type& x, bool physical) const {
    if (!m_variable_scaling) return;
    if (physical) {
      m_space.multiply(m_variable_scale, x);
    } else {
      m_space.divide(m_variable_scale, x);
    }
  }
  /// In place: r ← D_r r (`physical`) or r ← D_r⁻¹ r, for residuals; nothing without scaling.
  void apply_residual_scale(vector_type& r, bool physical) const {
    if (!m_residual_scaling) return;
    if (physical) {
      m_space.multiply(m_residual_scale, r);
    } else {
      m_space.divide(m_residual_scale, r);
    }
  }

  // ---- a solve's start and end -------------------------------------------------------

  /// Prepares a solve whose work vectors are shaped like `prototype` (the
  /// driver's state vector) and books into `ledger`. Throws
  /// std::invalid_argument when bounds or scales do not match its size.
  template <class Problem>
  void start(phase_ledger& ledger, const vector_type& prototype) {
    const auto check_size = [&](const vector_type& v, bool active, const char* what) {
      if (active && v.size() != prototype.size()) {
        throw std::invalid_argument(std::string("nkit: ") + what + " has " + std::to_string(v.size()) +
                                    " entries but the state has " + std::to_string(prototype.size()));
      }
    };
    check_size(m_lower_bound, m_has_bounds, "the lower bound");
    check_size(m_variable_scale, m_variable_scaling, "variable_scale");
    check_size(m_residual_scale, m_residual_scaling, "residual_scale");
    m_ledger = &ledger;
    if (m_variable_scaling) {  // physical copies are needed only when the solver's variables are scaled
      m_space.allocate_like(m_physical, prototype);
      m_space.allocate_like(m_physical_direction, prototype);
    }
    if (m_has_bounds || detail::has_is_admissible<Problem, vector_type>::value) {
      m_space.allocate_like(m_direction, prototype);
    }
    if (m_variable_scaling) {
      m_space.allocate_like(m_scaled_lower, prototype);
      m_space.allocate_like(m_scaled_upper, prototype);
    }
    m_difference.allocate_like(prototype);
    m_shift = nullptr;
  }

  /// x = u / variable_scale (or a copy), after checking u against the bounds
  /// and the admissibility predicate (std::invalid_argument when it fails).
  template <class Problem>
  void load_state(Problem& problem, const_view u, vector_type& x) {
    m_space.copy(u, x);
    if (m_has_bounds && !m_space.within_bounds(x, m_lower_bound, m_upper_bound)) {
      throw std::invalid_argument("nkit: the initial guess u0 violates the bounds given to set_bounds");
    }
    if (m_variable_scaling) m_space.divide(m_variable_scale, x);
    if (m_has_bounds && m_variable_scaling) {
      m_space.copy(m_lower_bound, m_scaled_lower);
      m_space.divide(m_variable_scale, m_scaled_lower);
      m_space.copy(m_upper_bound, m_scaled_upper);
      m_space.divide(m_variable_scale, m_scaled_upper);
    }
    if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
      if (!admissible(problem, x)) throw std::invalid_argument("nkit: the initial guess u0 is not admissible");
    }
  }

  /// u = variable_scale ⊙ x (or a plain copy).
  void write_state(const vector_type& x, state_view u) const {
    m_space.copy(x, u);
    if (m_variable_scaling) m_space.multiply(m_variable_scale, u);
  }

  /// The physical state D_u x (x itself without scaling); valid until the next call.
  const vector_type& physical_state(const vector_type& x) {
    if (!m_variable_scaling) return x;
    m_space.copy(x, m_physical);
    m_space.multiply(m_variable_scale, m_physical);
    return m_physical;
  }

  /// Pseudo-time weights W given in physical units become D_r⁻¹ W D_u in scaled variables.
  void scale_pseudo_time_weights(vector_type& weights) const {
    if (m_variable_scaling) m_space.multiply(m_variable_scale, weights);
    if (m_residual_scaling) m_space.divide(m_residual_scale, weights);
  }

  /// The problem's is_admissible at the physical state, agreed by every rank (collective OR).
  template <class Problem>
  bool admissible(Problem& problem, const vector_type& x) {
    const bool local = problem.is_admissible(physical_state(x));
    return !any_of(m_space, !local);
  }

  // ---- residual evaluations --------------------------------------------------------

  /// Every call of the user's residual goes through here: the budget, the
  /// time limit and the cancellation flag are checked first (so they always
  /// hold), and the state is never non-finite (see the file comment).
  template <class Problem>
  void evaluate(Problem& problem, const vector_type& x, vector_type& r, evaluation_purpose purpose) {
    solve_report& report = m_ledger->report();
    if (report.residual_evaluations >= m_evaluation_budget) {
      throw detail::stop_signal{stop_reason::residual_evaluation_budget_spent};
    }
    check_cancellation_and_clock();
    const vector_type& physical = physical_state(x);
    const bool proved_finite =
        purpose == evaluation_purpose::assembly || (purpose == evaluation_purpose::product && m_products_proved_finite);
    if (!proved_finite && !m_space.all_finite(physical)) {
      m_space.fill(std::numeric_limits<scalar_type>::quiet_NaN(), r);
      return;
    }
    const auto expected = x.size();
    const bool checked =
        detail::can_find_unwritten_entries<vector_type>::value &&
        (m_unwritten_check == unwritten_entry_check::every_evaluation ||
         (m_unwritten_check == unwritten_entry_check::initial_residual && report.residual_evaluations == 0));
    if (checked) m_space.fill(unwritten_entry_marker(), r);
    const auto start = detail::clock_type::now();
    problem(physical, r);
    const auto stop = detail::clock_type::now();
    ++report.residual_evaluations;
    m_ledger->record_residual(start, stop, purpose == evaluation_purpose::state);
    if (r.size() != expected) {
      throw std::invalid_argument("nkit: the residual changed the size of its output vector from " +
                                  std::to_string(expected) + " to " + std::to_string(r.size()) +
                                  "; it must write into r without resizing it");
    }
    if constexpr (detail::can_find_unwritten_entries<vector_type>::value) {
      if (checked) require_every_entry_written(r);
    }
    if (m_residual_scaling) m_space.divide(m_residual_scale, r);
  }

  /// Throws std::invalid_argument when entries of r still hold the marker
  /// (collective: every rank throws when any rank found one).
  void require_every_entry_written(const vector_type& r) const {
    const unwritten_entries found = find_unwritten_entries(r);
    if (!any_of(m_space, found.count > 0)) return;
    throw std::invalid_argument("nkit: the residual left " + std::to_string(found.count) + " of " +
                                std::to_string(r.size()) + " entries of r unwritten" +
                                (found.first >= 0 ? " (the first at index " + std::to_string(found.first) + ")"
                                                  : std::string(" on another rank")) +
                                "; it must write every entry on every call (a grid-size mismatch is the usual cause; "
                                "the check is newton_settings::check_unwritten_residual_entries)");
  }

  /// R at a trial state into `trial_residual`; returns ‖R‖, or +inf without
  /// calling the residual when the state is inadmissible (counted in the report).
  template <class Problem>
  double evaluate_trial(Problem& problem, const vector_type& trial_state, vector_type& trial_residual) {
    if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
      if (!admissible(problem, trial_state)) {
        ++m_ledger->report().inadmissible_trials;
        return std::numeric_limits<double>::infinity();
      }
    }
    evaluate(problem, trial_state, trial_residual, evaluation_purpose::state);
    return m_space.norm(trial_residual);
  }

  /// Stops the solve when the cancellation flag is raised or the wall-clock
  /// limit has passed. Both are rank-local facts, combined with a collective
  /// OR (any_of) on distributed spaces; nothing is checked, and no
  /// communication happens, when neither is configured.
  void check_cancellation_and_clock() const {
    const std::atomic<bool>* flag = m_cancellation_flag;
    if (flag != nullptr && any_of(m_space, flag->load(std::memory_order_relaxed))) {
      throw detail::stop_signal{stop_reason::cancellation_flag_raised};
    }
    if (std::isfinite(m_wall_time_budget) && any_of(m_space, m_ledger->elapsed_seconds() > m_wall_time_budget)) {
      throw detail::stop_signal{stop_reason::wall_time_budget_spent};
    }
  }

  // ---- steps and bounds ----------------------------------------------------------------

  /// Fraction of the step −x from `state` that respects the bounds
  /// (fraction_to_boundary; 1 without bounds or when the whole step fits).
  double bound_limit(const vector_type& state, const vector_type& x) {
    if (!m_has_bounds) return 1.0;
    m_space.combine(-1, x, 0, x, m_direction);  // s = −x
    return fraction_to_boundary(m_bound_settings, m_space.maximum_step_to_bounds(state, m_direction, lower(), upper()));
  }

  // ---- Jacobian-vector products ---------------------------------------------------------

  /// Sets the point (u, R(u)) the products linearise about; both are
  /// referenced and must stay unchanged while products are taken. Collective.
  void linearize_at(const vector_type& state, const vector_type& residual) {
    m_state = &state;
    m_residual = &residual;
    m_difference.linearize_at(state, residual);
    m_products_proved_finite =
        std::isfinite(m_difference.state_norm()) && (!m_variable_scaling || m_moderate_variable_scale);
  }

  /// Adds diag(shift) to every product and to the assembled Jacobian (the
  /// pseudo-transient term); nullptr removes it. Referenced, not copied.
  void set_diagonal_shift(const vector_type* shift) { m_shift = shift; }

  /// out = R̃'(ũ) v at the linearisation point (plus the diagonal shift):
  /// the problem's exact product when it has one, finite differences
  /// otherwise (with perturbed states kept inside the bounds and admissible).
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
      problem.jacobian_product(physical_state(*m_state), *direction, out);
      if (out.size() != expected) {
        throw std::invalid_argument("nkit: jacobian_product wrote a vector of size " + std::to_string(out.size()) +
                                    ", expected " + std::to_string(expected));
      }
      if (m_residual_scaling) m_space.divide(m_residual_scale, out);
    } else {
      auto residual = [this, &problem](const vector_type& x, vector_type& r) {
        evaluate(problem, x, r, evaluation_purpose::product);
      };
      if (!m_has_bounds && !detail::has_is_admissible<Problem, vector_type>::value) {
        m_difference.apply(residual, v, out);
      } else {
        bounded_difference(problem, residual, v, out);
      }
    }
    if (m_shift != nullptr) m_space.add_product(*m_shift, v, out);
    m_ledger->record(trace_phase::jacobian_vector, start, detail::clock_type::now());
    ++m_ledger->report().jacobian_vector_products;
  }

  /// The J·v operator as a linear operator for GMRES.
  template <class Problem>
  struct jacobian_operator {
    problem_access* access;
    Problem* problem;
    void apply(const vector_type& v, vector_type& out) { access->apply_jacobian(*problem, v, out); }
  };
  template <class Problem>
  jacobian_operator<Problem> jacobian(Problem& problem) {
    return {this, &problem};
  }

  // ---- the assembled Jacobian ---------------------------------------------------------------

  /// Gives preconditioners the assembled R̃'(ũ) at the linearisation point,
  /// in scaled variables and with the diagonal shift: the problem's
  /// assemble_jacobian (row- or column-major), or colored finite differences
  /// from its jacobian_pattern() through the counted evaluate(), so budgets
  /// hold and perturbed states respect bounds and admissibility. Assembled at
  /// most once per object; the time counts as jacobian_assembly.
  template <class Problem>
  class assembled_jacobian_source final : public jacobian_source {
   public:
    assembled_jacobian_source(problem_access& access, Problem& problem) : m_access(access), m_problem(problem) {}
    const sparse_matrix& assembled_jacobian() override {
      if (!m_assembled) {
        m_access.assemble(m_problem);
        m_assembled = true;
      }
      return m_access.m_jacobian;
    }
    void release_assembled_jacobian() override {
      m_access.release_assembled_jacobian();
      m_assembled = false;
    }

   private:
    problem_access& m_access;
    Problem& m_problem;
    bool m_assembled = false;
  };

  /// Frees the assembled Jacobian's storage (row- and column-major); the
  /// next assembly allocates it again. The coloring workspace is kept.
  /// With glibc the freed pages are also handed back to the system
  /// (malloc_trim). Measured with Open MPI on the 1024² model problem: glibc
  /// kept every block on its heap (no block was mapped separately), and the
  /// resident set did not shrink at all after the free; with the trim it
  /// shrank by the matrix's 64 MiB.
  void release_assembled_jacobian() {
    sparse_matrix().swap(m_jacobian);
    column_major_sparse_matrix().swap(m_column_major_jacobian);
#if defined(__GLIBC__)
    malloc_trim(0);
#endif
  }

  /// Bytes held: vectors, the difference workspace and the assembled Jacobian.
  std::size_t workspace_bytes() const {
    std::size_t entries = 0;
    for (const vector_type* v : {&m_physical, &m_physical_direction, &m_direction, &m_lower_bound, &m_upper_bound,
                                 &m_scaled_lower, &m_scaled_upper, &m_variable_scale, &m_residual_scale}) {
      entries += static_cast<std::size_t>(v->size());
    }
    return sizeof(scalar_type) * entries + m_difference.workspace_bytes() + assembled_jacobian_bytes();
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
  const vector_type& lower() const { return m_variable_scaling ? m_scaled_lower : m_lower_bound; }
  const vector_type& upper() const { return m_variable_scaling ? m_scaled_upper : m_upper_bound; }

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
    const vector_type& state = *m_state;
    double step = m_difference.step_for(direction_norm);
    if (m_has_bounds) {
      const double forward_room = m_space.maximum_step_to_bounds(state, v, lower(), upper());
      m_space.combine(-1, v, 0, v, m_direction);
      const double backward_room = m_space.maximum_step_to_bounds(state, m_direction, lower(), upper());
      if (forward_room >= 2.0 * step) {
      } else if (backward_room >= 2.0 * step) {
        step = -step;
      } else {
        step = forward_room >= backward_room ? 0.5 * forward_room : -0.5 * backward_room;
      }
    }
    if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
      for (int attempt = 0;; ++attempt) {
        m_space.combine(1, state, step, v, m_direction);
        if (admissible(problem, m_direction)) break;
        if (attempt == 60) throw detail::stop_signal{stop_reason::no_newton_direction};
        step = attempt % 2 == 0 ? -step : -0.5 * step;  // try the other side, then a shorter step
      }
    }
    m_difference.apply_with_step(residual, v, step, out);
  }

  template <class Problem>
  void assemble(Problem& problem) {
    const auto start = detail::clock_type::now();
    const vector_type& state = *m_state;
    if constexpr (assembles_row_major_jacobian_v<Problem, vector_type> ||
                  assembles_column_major_jacobian_v<Problem, vector_type>) {
      if constexpr (assembles_row_major_jacobian_v<Problem, vector_type>) {
        problem.assemble_jacobian(physical_state(state), m_jacobian);
      } else {
        problem.assemble_jacobian(physical_state(state), m_column_major_jacobian);
        m_jacobian = m_column_major_jacobian;
      }
      // The user's matrix is in physical units: J̃ = D_r⁻¹ J D_u.
      if (m_residual_scaling) m_jacobian = m_residual_scale.cwiseInverse().asDiagonal() * m_jacobian;
      if (m_variable_scaling) m_jacobian = m_jacobian * m_variable_scale.asDiagonal();
    } else {
      // Differences of the scaled residual in scaled variables give J̃ directly.
      m_colored.configure(m_jacobian_settings);
      m_colored.prepare(problem.jacobian_pattern());
      auto evaluate_colored = [this, &problem](const vector_type& x, vector_type& r) {
        evaluate(problem, x, r, evaluation_purpose::assembly);
      };
      auto vet = [this, &problem](const vector_type& x) {
        static_cast<void>(problem);  // used only when the problem has is_admissible
        if (m_has_bounds && !m_space.within_bounds(x, lower(), upper())) return false;
        if (!m_space.all_finite(physical_state(x))) return false;
        if constexpr (detail::has_is_admissible<Problem, vector_type>::value) {
          return admissible(problem, x);
        } else {
          return true;
        }
      };
      m_colored.assemble(evaluate_colored, state, *m_residual, m_jacobian, vet);
    }
    if (m_shift != nullptr) detail::add_to_diagonal(m_jacobian, *m_shift, first_global_row(m_space, state));
    m_ledger->record(trace_phase::jacobian_assembly, start, detail::clock_type::now());
    ++m_ledger->report().jacobian_assemblies;
  }

  Space m_space;
  finite_difference_jacobian<Space> m_difference;
  jacobian_settings m_jacobian_settings;
  bound_settings m_bound_settings;
  std::int64_t m_evaluation_budget = std::numeric_limits<std::int64_t>::max();
  unwritten_entry_check m_unwritten_check = unwritten_entry_check::initial_residual;
  double m_wall_time_budget = std::numeric_limits<double>::infinity();
  const std::atomic<bool>* m_cancellation_flag = nullptr;
  phase_ledger* m_ledger = nullptr;

  const vector_type* m_state = nullptr;     ///< linearisation point (the driver's)
  const vector_type* m_residual = nullptr;  ///< R there
  const vector_type* m_shift = nullptr;     ///< diagonal shift, when active
  bool m_products_proved_finite = false;

  vector_type m_physical, m_physical_direction;  ///< scaled → physical copies for user callbacks
  vector_type m_direction;                       ///< bounds work: −x, perturbed states
  vector_type m_lower_bound, m_upper_bound, m_scaled_lower, m_scaled_upper;
  vector_type m_variable_scale, m_residual_scale;
  bool m_has_bounds = false;
  bool m_variable_scaling = false;
  bool m_residual_scaling = false;
  bool m_moderate_variable_scale = true;  ///< every variable scale <= 1e100

  sparse_matrix m_jacobian;
  column_major_sparse_matrix m_column_major_jacobian;  ///< only for problems that assemble column-major
  colored_difference_jacobian m_colored;               ///< only for problems that offer jacobian_pattern()
};

}  // namespace nkit

#endif  // NKIT_NEWTON_PROBLEM_ACCESS_HPP
