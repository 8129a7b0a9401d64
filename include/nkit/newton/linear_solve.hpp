#ifndef NKIT_NEWTON_LINEAR_SOLVE_HPP
#define NKIT_NEWTON_LINEAR_SOLVE_HPP

/// \file newton/linear_solve.hpp
/// The linear solve of one Newton step, R'(u) x = R(u): the preconditioner's
/// life cycle (rebuilt when the preconditioner_schedule says so, set up from
/// the state and, on demand, the assembled Jacobian; every application timed)
/// and right-preconditioned GMRES on the problem's J·v operator (or recycling
/// GMRES, krylov/recycling_gmres.hpp, when newton_settings.recycling asks for
/// it; its recycled subspace outlives the solve). The Newton
/// driver owns one and asks it for a direction once per step. After a
/// converged solve it also solves with the transposed assembled Jacobian,
/// preconditioned by the preconditioner's apply_transpose (adjoint
/// sensitivities; newton_krylov_solver::linearized_transpose_solve).
///
/// Booked phases (report/phase_ledger.hpp): preconditioner_setup (minus the
/// Jacobian assembly inside it), preconditioner_apply, orthogonalization and
/// krylov_update (the rest of each GMRES call). Nothing allocates after the
/// first solve of a given size.

#include <cstddef>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>

#include "../core/preconditioner.hpp"
#include "../jacobian/sparse_jacobian.hpp"
#include "../krylov/gmres.hpp"
#include "../krylov/recycling_gmres.hpp"
#include "../report/phase_ledger.hpp"
#include "../report/report.hpp"
#include "newton_settings.hpp"
#include "preconditioner_schedule.hpp"
#include "problem_access.hpp"

namespace nkit::detail {

template <class Space, class Preconditioner>
class preconditioned_linear_solve {
 public:
  using vector_type = typename Space::vector_type;
  /// The preconditioner object itself (Preconditioner may be a std::reference_wrapper or std::unique_ptr to it).
  using target_type = typename preconditioner_target<Preconditioner>::type;

  preconditioned_linear_solve(const newton_settings& settings, const Space& space, Preconditioner preconditioner)
      : m_space(space),
        m_preconditioner(std::move(preconditioner)),
        m_gmres(settings.linear, space),
        m_recycling(recycling_settings(settings), space),
        m_recycles(settings.recycling.recycle_dimension > 0),
        m_refresh_every_solve(settings.recycling.refresh_for_each_jacobian),
        m_schedule(settings.preconditioner_rebuild) {}

  void configure(const newton_settings& settings) {
    m_gmres.configure(settings.linear);
    m_recycling.configure(recycling_settings(settings));
    m_recycles = settings.recycling.recycle_dimension > 0;
    m_refresh_every_solve = settings.recycling.refresh_for_each_jacobian;
    m_schedule.configure(settings.preconditioner_rebuild);
  }
  Preconditioner& preconditioner() { return m_preconditioner; }
  const Preconditioner& preconditioner() const { return m_preconditioner; }
  gmres_solver<Space>& gmres() { return m_gmres; }
  /// Used for the Newton steps when newton_settings.recycling.recycle_dimension > 0.
  recycling_gmres_solver<Space>& recycling_gmres() { return m_recycling; }
  int recycled_dimension() const { return m_recycling.recycled_dimension(); }
  preconditioner_schedule& schedule() { return m_schedule; }

  void record_trace(trace_recorder* recorder) { m_gmres.record_trace(recorder); }

  /// Sizes the GMRES workspace and starts the rebuild schedule for a new solve.
  /// With recycling, the recycled subspace of earlier solves is kept when the
  /// size is the same.
  void start_solve(const vector_type& prototype) {
    if (m_recycles) {
      if (changes_between_applications(target())) {
        throw std::invalid_argument(
            "nkit: newton_settings.recycling.recycle_dimension > 0 needs a preconditioner that stays the same "
            "between applications (this one declares changes_between_applications); set recycle_dimension = 0");
      }
      m_recycling.allocate_like(prototype);
    } else {
      m_gmres.allocate_like(prototype, changes_between_applications(target()));
    }
    m_schedule.start_solve(prototype.size());
  }

  /// Rebuilds the preconditioner for Newton step k when the schedule says so
  /// (R'(u) at the access's linearisation point, plus `shift` when given).
  /// Returns whether it rebuilt; `failed` tells whether that setup failed.
  template <class Problem>
  bool rebuild_if_due(problem_access<Space>& access, Problem& problem, phase_ledger& ledger, const vector_type& state,
                      const vector_type& residual, int k, const vector_type* shift, bool& failed) {
    failed = false;
    if constexpr (has_setup_v<target_type, Space>) {
      if (!m_schedule.rebuild_due(k)) return false;
      access.check_cancellation_and_clock();  // a setup can be long: do not start one past the limit
      phase_scope scope(ledger, trace_phase::preconditioner_setup, k + 1);
      setup_status status;
      if constexpr (can_assemble_jacobian_v<Problem, vector_type>) {
        typename problem_access<Space>::template assembled_jacobian_source<Problem> source(access, problem);
        preconditioner_context<Space> context{m_space, state, residual, k, shift, &source};
        status = setup_preconditioner(target(), context);
      } else {
        preconditioner_context<Space> context{m_space, state, residual, k, shift, nullptr};
        status = setup_preconditioner(target(), context);
      }
      scope.close();
      solve_report& report = ledger.report();
      ++report.preconditioner_setups;
      if (status == setup_status::ready_with_fallback) ++report.preconditioner_fallbacks;
      m_schedule.record_setup(k, state.size(), status != setup_status::failed);
      m_preconditioner_changed = true;
      failed = status == setup_status::failed;
      return true;
    } else {
      static_cast<void>(access), static_cast<void>(problem), static_cast<void>(ledger), static_cast<void>(state);
      static_cast<void>(residual), static_cast<void>(k), static_cast<void>(shift);
      return false;
    }
  }

  /// Solves R'(u) x = rhs to relative tolerance eta from x = 0 (x: the
  /// Newton direction; `monitor(iteration, relative)` may stop GMRES), and
  /// records the outcome with the schedule. `cauchy`, when not null,
  /// receives the Krylov-subspace Cauchy point (trust region).
  template <class Problem, class LinearMonitor>
  linear_solve_result solve(problem_access<Space>& access, Problem& problem, phase_ledger& ledger,
                            const vector_type& rhs, vector_type& x, double eta, LinearMonitor&& monitor,
                            vector_type* cauchy) {
    auto op = access.jacobian(problem);
    m_gmres.capture_cauchy_point(cauchy);
    linear_solve_result result;
    solve_report& report = ledger.report();
    const std::int64_t used_before = report.linear_iterations;
    // The GMRES call's own time (basis updates, rotations, restarts) is the
    // krylov_update phase; Gram–Schmidt time is booked to orthogonalization.
    phase_scope scope(ledger, trace_phase::linear_solve, report.newton_steps + 1);
    const auto run = [&](auto& preconditioner) {
      if (m_recycles) {
        if (!m_refresh_every_solve && !m_preconditioner_changed) m_recycling.next_solve_uses_same_operator();
        m_preconditioner_changed = false;
        return m_recycling.solve(op, preconditioner, rhs, x, eta, initial_guess::zero, monitor);
      }
      return m_gmres.solve(op, preconditioner, rhs, x, eta, initial_guess::zero, monitor);
    };
    try {
      if constexpr (std::is_same_v<target_type, identity_preconditioner>) {
        result = run(target());
      } else {
        timed_preconditioner preconditioner{this, &ledger, &access};
        result = run(preconditioner);
      }
    } catch (const stop_signal&) {
      // A budget, limit or cancellation inside a J·v or preconditioner
      // apply: GMRES's result is lost, its Gram–Schmidt time is not (plain
      // GMRES keeps it; recycling GMRES does not, and a stopped solve also
      // leaves its C = J M⁻¹ U stale, so the next solve recomputes it anyway).
      if (!m_recycles) ledger.add(trace_phase::orthogonalization, m_gmres.orthogonalization_seconds_of_last_solve());
      throw;
    }
    ledger.add(trace_phase::orthogonalization, result.orthogonalization_seconds);
    scope.close();
    report.linear_iterations = used_before + result.iterations;
    report.calls.orthogonalization += result.iterations;
    m_schedule.record_linear_solve(result.iterations, result.converged());
    return result;
  }

  /// Solves Jᵀ x = rhs to relative tolerance eta from x = 0 with GMRES on
  /// the transposed assembled Jacobian `jacobian`, right-preconditioned by
  /// M⁻ᵀ (the preconditioner's apply_transpose; the identity needs none).
  /// Throws std::invalid_argument when the preconditioner has no
  /// apply_transpose. Serial Eigen vectors only. Each product Jᵀ v is booked
  /// to the J·v phase and counted in `transposed_products`.
  linear_solve_result solve_transposed(const sparse_matrix& jacobian, phase_ledger& ledger, const vector_type& rhs,
                                       vector_type& x, double eta, std::int64_t& transposed_products) {
    static_assert(std::is_same_v<vector_type, Eigen::VectorXd>,
                  "nkit: transposed solves need the serial Eigen vector space (the Jacobian is assembled locally)");
    struct transposed_operator {
      const sparse_matrix* matrix;
      phase_ledger* ledger;
      std::int64_t* count;
      void apply(const vector_type& v, vector_type& out) const {
        const auto start = clock_type::now();
        out.noalias() = matrix->transpose() * v;
        ledger->record(trace_phase::jacobian_vector, start, clock_type::now());
        ++*count;
      }
    };
    transposed_operator op{&jacobian, &ledger, &transposed_products};
    solve_report& report = ledger.report();
    phase_scope scope(ledger, trace_phase::linear_solve, 0);
    linear_solve_result result;
    if constexpr (std::is_same_v<target_type, identity_preconditioner>) {
      result = m_gmres.solve(op, target(), rhs, x, eta, initial_guess::zero);
    } else if constexpr (has_apply_transpose_v<target_type, vector_type>) {
      struct timed_transpose {
        preconditioned_linear_solve* owner;
        phase_ledger* ledger;
        void apply(const vector_type& r, vector_type& z) {
          const auto start = clock_type::now();
          owner->target().apply_transpose(r, z);
          ledger->record(trace_phase::preconditioner_apply, start, clock_type::now());
          ++ledger->report().preconditioner_applications;
        }
        bool changes_between_applications() const { return nkit::changes_between_applications(owner->target()); }
      };
      timed_transpose preconditioner{this, &ledger};
      result = m_gmres.solve(op, preconditioner, rhs, x, eta, initial_guess::zero);
    } else {
      static_cast<void>(op), static_cast<void>(rhs), static_cast<void>(x), static_cast<void>(eta);
      throw std::invalid_argument(
          "nkit: the Newton solver's preconditioner has no apply_transpose(r, z), which the transposed (adjoint) "
          "solve needs; give it one, or use one of nkit's preconditioners (all have it)");
    }
    ledger.add(trace_phase::orthogonalization, result.orthogonalization_seconds);
    scope.close();
    report.linear_iterations += result.iterations;
    report.calls.orthogonalization += result.iterations;
    return result;
  }

  /// Whether the preconditioner's output for `r` is finite (z is overwritten):
  /// tells a preconditioner that produces NaN or Inf from other causes of a
  /// failed linear solve. Not timed (a diagnosis after failure). Collective.
  bool output_is_finite(const vector_type& r, vector_type& z) {
    target().apply(r, z);
    return m_space.all_finite(z);
  }

  std::size_t workspace_bytes() const {
    return m_gmres.workspace_bytes() + m_recycling.workspace_bytes() + preconditioner_memory_bytes(target());
  }

 private:
  /// Times each application of the user's preconditioner and checks its
  /// output size; the time limit and cancellation flag are checked first.
  struct timed_preconditioner {
    preconditioned_linear_solve* owner;
    phase_ledger* ledger;
    const problem_access<Space>* access;
    void apply(const vector_type& r, vector_type& z) {
      access->check_cancellation_and_clock();
      const auto start = clock_type::now();
      const auto expected = r.size();
      owner->target().apply(r, z);
      if (z.size() != expected) {
        throw std::invalid_argument("nkit: the preconditioner's apply() wrote a vector of size " +
                                    std::to_string(z.size()) + ", expected " + std::to_string(expected) +
                                    "; it must write into z without resizing it");
      }
      ledger->record(trace_phase::preconditioner_apply, start, clock_type::now());
      ++ledger->report().preconditioner_applications;
    }
    bool changes_between_applications() const { return nkit::changes_between_applications(owner->target()); }
  };

  static recycling_gmres_settings recycling_settings(const newton_settings& settings) {
    recycling_gmres_settings out;
    out.restart_length = settings.linear.restart_length;
    out.recycle_dimension = settings.recycling.recycle_dimension;
    out.maximum_iterations = settings.linear.maximum_iterations;
    out.reorthogonalization = settings.linear.reorthogonalization;
    out.keep_recycled_subspace = true;
    out.minimum_cycle_steps_for_update = settings.recycling.minimum_cycle_steps_for_update;
    return out;
  }

  target_type& target() { return preconditioner_target<Preconditioner>::get(m_preconditioner); }
  const target_type& target() const { return preconditioner_target<Preconditioner>::get(m_preconditioner); }

  Space m_space;
  Preconditioner m_preconditioner;
  gmres_solver<Space> m_gmres;
  recycling_gmres_solver<Space> m_recycling;
  bool m_recycles = false;
  bool m_refresh_every_solve = false;
  bool m_preconditioner_changed = true;  ///< set up since the last solve (or never solved): C must be recomputed
  preconditioner_schedule m_schedule;
};

}  // namespace nkit::detail

#endif  // NKIT_NEWTON_LINEAR_SOLVE_HPP
