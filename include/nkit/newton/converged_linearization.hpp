#ifndef NKIT_NEWTON_CONVERGED_LINEARIZATION_HPP
#define NKIT_NEWTON_CONVERGED_LINEARIZATION_HPP

/// \file newton/converged_linearization.hpp
/// Linear algebra with R'(u*) at the converged state u* of the last Newton
/// run, for sensitivities (sensitivity/): products R'(u*) v and solves
/// R'(u*) x = b with the run's own J·v operator, GMRES settings and
/// preconditioner (as set up for the last Newton step, not rebuilt); and
/// products R'(u*)ᵀ w and solves R'(u*)ᵀ x = b with the Jacobian assembled
/// at u* (the problem's assemble_jacobian, or colored differences of its
/// jacobian_pattern(), through problem access), preconditioned by M⁻ᵀ.
/// newton_krylov_solver owns one and exposes it as its linearized_* members.
///
/// Costs after a run go into their own solve_report (linearized_report():
/// linear iterations, J·v products, residual evaluations, preconditioner
/// applications, assemblies, phase times), started by the first linearized
/// call after the run (all zero before it); transposed products are counted separately.
///
/// Units: every vector in and out is physical. With variable scale D_u and
/// residual scale D_r set on the solver, the run works with
/// J̃ = D_r⁻¹ R'(u*) D_u, so R'(u*) v = D_r J̃ D_u⁻¹ v and R'(u*)ᵀ w =
/// D_u⁻¹ J̃ᵀ D_r w; solves scale their right-hand side and solution alike,
/// and their relative tolerance applies to the scaled residual
/// (‖D_r⁻¹(b − R' x)‖ for R' x = b, ‖D_u(b − R'ᵀ x)‖ for R'ᵀ x = b).
/// linearized_jacobian() returns J̃ (equal to R'(u*) without scaling).
///
/// The run's budgets still hold, counted from the first linearized call: the
/// residual-evaluation budget, the wall-time budget and the cancellation
/// flag. When one stops a call, nothing is thrown: a product returns NaN, a
/// solve returns status monitor_requested_stop with x = NaN (or GMRES's best
/// iterate when the stop came between iterations), and last_stop_reason()
/// says which budget it was.
///
/// Limits: serial Eigen vectors for the transposed members. `problem` must be
/// the residual the run solved (nkit cannot check it).

#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>

#include "../core/preconditioner.hpp"
#include "../jacobian/sparse_jacobian.hpp"
#include "../krylov/gmres.hpp"
#include "../report/outcome.hpp"
#include "../report/phase_ledger.hpp"
#include "../report/report.hpp"
#include "linear_solve.hpp"
#include "problem_access.hpp"

namespace nkit::detail {

template <class Space, class Preconditioner>
class converged_linearization {
 public:
  using vector_type = typename Space::vector_type;

  /// A new run starts: what was linearised before is stale.
  void reset() {
    m_report = solve_report{};
    m_transposed_products = 0;
    m_started = false;
    m_physical_ready = false;
    m_stop = stop_reason_if_stopped{};
    m_jacobian = nullptr;
  }

  /// Everything a linearized call needs, referenced from the Newton driver.
  struct driver_parts {
    const solve_report& run;  ///< the last run's report (its stop reason)
    problem_access<Space>& access;
    preconditioned_linear_solve<Space, Preconditioner>& linear;
    phase_ledger& ledger;
    const vector_type& state;     ///< u* in the run's (scaled) variables
    const vector_type& residual;  ///< R(u*)
  };

  /// Checks that the run converged and that
  /// `operand` has the state's size; starts the cost report on first use.
  void prepare(const driver_parts& parts, const vector_type& operand, const char* caller) {
    if (!parts.run.reason) {
      throw std::invalid_argument(std::string("nkit: ") + caller +
                                  " needs a converged Newton solve, but no solve has finished");
    }
    if (!is_converged(*parts.run.reason)) {
      throw std::invalid_argument(std::string("nkit: ") + caller +
                                  " needs a converged Newton solve, but the last one stopped with " +
                                  std::string(name(parts.run.reason)));
    }
    if (operand.size() != parts.state.size()) {
      throw std::invalid_argument(std::string("nkit: ") + caller + " got a vector of " +
                                  std::to_string(operand.size()) + " entries but the state has " +
                                  std::to_string(parts.state.size()));
    }
    if (m_started) return;
    parts.ledger.begin(m_report, 0);
    m_transposed_products = 0;
    parts.access.set_diagonal_shift(nullptr);
    parts.access.linearize_at(parts.state, parts.residual);
    m_started = true;
  }

  /// out = R'(u*) v with the run's J·v operator.
  template <class Problem>
  void product(const driver_parts& parts, Problem& problem, const vector_type& v, vector_type& out) {
    prepare(parts, v, "linearized_product");
    if (out.size() != v.size()) parts.access.space().allocate_like(out, v);
    const bool finished = guarded(parts, out, [&] {
      if (!parts.access.scaled()) {
        parts.access.apply_jacobian(problem, v, out);
        return;
      }
      copy_to_work(parts, v);
      parts.access.apply_variable_scale(m_work, false);
      parts.access.apply_jacobian(problem, m_work, out);
      parts.access.apply_residual_scale(out, true);
    });
    static_cast<void>(finished);
  }

  /// R'(u*) x = rhs by GMRES from x = 0 to the relative tolerance.
  template <class Problem>
  linear_solve_result solve(const driver_parts& parts, Problem& problem, const vector_type& rhs, vector_type& x,
                            double relative_tolerance) {
    prepare(parts, rhs, "linearized_solve");
    check_tolerance(relative_tolerance, "linearized_solve");
    if (x.size() != rhs.size()) parts.access.space().allocate_like(x, rhs);
    problem_access<Space>& access = parts.access;
    auto monitor = [this, &access](int, double) {
      try {
        access.check_cancellation_and_clock();
      } catch (const stop_signal& signal) {
        m_stop = signal.reason;
        return monitor_decision::stop_now;
      }
      return monitor_decision::keep_going;
    };
    linear_solve_result result;
    result.status = linear_solve_status::monitor_requested_stop;  // kept when a budget stops a product
    guarded(parts, x, [&] {
      if (!parts.access.scaled()) {
        result = parts.linear.solve(parts.access, problem, parts.ledger, rhs, x, relative_tolerance, monitor, nullptr);
        return;
      }
      copy_to_work(parts, rhs);
      parts.access.apply_residual_scale(m_work, false);
      result = parts.linear.solve(parts.access, problem, parts.ledger, m_work, x, relative_tolerance, monitor, nullptr);
      parts.access.apply_variable_scale(x, true);
    });
    return result;
  }

  /// out = R'(u*)ᵀ w from the Jacobian assembled at u*.
  template <class Problem>
  void transpose_product(const driver_parts& parts, Problem& problem, const vector_type& w, vector_type& out) {
    prepare(parts, w, "linearized_transpose_product");
    const sparse_matrix* assembled_matrix = nullptr;
    if (out.size() != w.size()) out.resize(w.size());
    if (!guarded(parts, out, [&] { assembled_matrix = &assembled(parts, problem); })) return;
    const sparse_matrix& jacobian = *assembled_matrix;
    const auto start = clock_type::now();
    if (parts.access.scaled()) {
      copy_to_work(parts, w);
      parts.access.apply_residual_scale(m_work, true);
      out.noalias() = jacobian.transpose() * m_work;
      parts.access.apply_variable_scale(out, false);
    } else {
      out.noalias() = jacobian.transpose() * w;
    }
    parts.ledger.record(trace_phase::jacobian_vector, start, clock_type::now());
    ++m_transposed_products;
  }

  /// R'(u*)ᵀ x = rhs by GMRES from x = 0, preconditioned by M⁻ᵀ.
  template <class Problem>
  linear_solve_result transpose_solve(const driver_parts& parts, Problem& problem, const vector_type& rhs,
                                      vector_type& x, double relative_tolerance) {
    prepare(parts, rhs, "linearized_transpose_solve");
    check_tolerance(relative_tolerance, "linearized_transpose_solve");
    if (x.size() != rhs.size()) x.resize(rhs.size());
    const sparse_matrix* assembled_matrix = nullptr;
    if (!guarded(parts, x, [&] { assembled_matrix = &assembled(parts, problem); })) {
      linear_solve_result stopped;
      stopped.status = linear_solve_status::monitor_requested_stop;
      return stopped;
    }
    const sparse_matrix& jacobian = *assembled_matrix;
    if (!parts.access.scaled()) {
      return parts.linear.solve_transposed(jacobian, parts.ledger, rhs, x, relative_tolerance, m_transposed_products);
    }
    copy_to_work(parts, rhs);  // J̃ᵀ (D_r x) = D_u rhs
    parts.access.apply_variable_scale(m_work, true);
    const linear_solve_result result =
        parts.linear.solve_transposed(jacobian, parts.ledger, m_work, x, relative_tolerance, m_transposed_products);
    parts.access.apply_residual_scale(x, false);
    return result;
  }

  /// u* in physical units (a copy kept until the next run).
  const vector_type& physical_state(const driver_parts& parts) {
    if (!m_physical_ready) {
      parts.access.space().allocate_like(m_physical, parts.state);
      parts.access.space().copy(parts.state, m_physical);
      parts.access.apply_variable_scale(m_physical, true);
      m_physical_ready = true;
    }
    return m_physical;
  }

  /// The Jacobian assembled at u* (assembled once per converged state).
  template <class Problem>
  const sparse_matrix& assembled(const driver_parts& parts, Problem& problem) {
    static_assert(std::is_same_v<vector_type, Eigen::VectorXd>,
                  "nkit: transposed products need the serial Eigen vector space (the Jacobian is assembled locally)");
    static_assert(can_assemble_jacobian_v<Problem, vector_type>,
                  "nkit: transposed products need an assembled Jacobian: give the problem assemble_jacobian() or "
                  "jacobian_pattern()");
    if (m_jacobian == nullptr) {
      typename problem_access<Space>::template assembled_jacobian_source<Problem> source(parts.access, problem);
      m_jacobian = &source.assembled_jacobian();
    }
    return *m_jacobian;
  }

  const solve_report& report() const { return m_report; }
  /// The budget that stopped the last stopped call since the run ended (empty when none did).
  stop_reason_if_stopped last_stop_reason() const { return m_stop; }
  std::int64_t transposed_products() const { return m_transposed_products; }

 private:
  static void check_tolerance(double relative_tolerance, const char* caller) {
    if (!(relative_tolerance >= 0.0 && relative_tolerance < 1.0)) {
      throw_invalid_setting(std::string(caller) + " relative_tolerance", "in [0, 1)", relative_tolerance);
    }
  }

  /// Runs `call`; when a budget, the clock or the cancellation flag stops it
  /// (detail::stop_signal), records why, fills `output` with NaN and returns false.
  template <class Call>
  bool guarded(const driver_parts& parts, vector_type& output, Call&& call) {
    try {
      call();
      return true;
    } catch (const stop_signal& signal) {
      m_stop = signal.reason;
      parts.access.space().fill(std::numeric_limits<double>::quiet_NaN(), output);
      return false;
    }
  }

  void copy_to_work(const driver_parts& parts, const vector_type& v) {
    if (m_work.size() != v.size()) parts.access.space().allocate_like(m_work, v);
    parts.access.space().copy(v, m_work);
  }

  solve_report m_report;
  vector_type m_work;      ///< scaled copy of an input vector
  vector_type m_physical;  ///< u* in physical units
  bool m_physical_ready = false;
  stop_reason_if_stopped m_stop;
  std::int64_t m_transposed_products = 0;
  const sparse_matrix* m_jacobian = nullptr;  ///< problem access's matrix, assembled at u*
  bool m_started = false;
};

}  // namespace nkit::detail

#endif  // NKIT_NEWTON_CONVERGED_LINEARIZATION_HPP
