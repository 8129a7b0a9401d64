// The baseplate demo's Picard loop as a fixed-point map: one pass of
// solve_by_picard_iteration (examples/baseplate/baseplate_solvers.hpp),
// unchanged — freeze k at T, assemble A(T) and b(T), factor A(T) by sparse
// LDLᵀ, solve — so that nkit can drive it: Anderson acceleration on u = G(u),
// or Newton–Krylov on u − G(u) = 0 (fixed_point_residual.hpp). The
// discretisation and its INVENTED data are examples/baseplate/baseplate.hpp's.
#ifndef NKIT_EXAMPLES_BASEPLATE_PICARD_MAP_HPP
#define NKIT_EXAMPLES_BASEPLATE_PICARD_MAP_HPP

#include <Eigen/SparseCholesky>
#include <cstddef>
#include <limits>
#include <memory>
#include <nkit/fixed_point/anderson_report.hpp>
#include <nkit/report/monitor.hpp>
#include <nkit/report/report.hpp>

#include "problems/baselines/picard_iteration.hpp"
#include "problems/heat/baseplate.hpp"

namespace nkit_problems {

/// G(T) = A(T)⁻¹ b(T). When the factorisation fails, G returns NaN, which
/// nkit treats as an unusable point (Anderson restarts and steps back, the
/// Newton line search shortens the step).
class baseplate_picard_map {
 public:
  explicit baseplate_picard_map(baseplate_conduction& problem) : m_problem(&problem) {}

  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& g) {
    // ---- the loop body of solve_by_picard_iteration --------------------------------
    m_problem->assemble_frozen_conduction(t, m_matrix, m_right_hand_side);
    ++factorizations;
    if (!m_factorization.factorize(m_matrix)) {
      g.setConstant(std::numeric_limits<double>::quiet_NaN());
      return;
    }
    g = m_factorization.solve(m_right_hand_side);
    // ---- end of the loop body --------------------------------------------------------
  }

  /// Bytes of the LDLᵀ factor (values and row indices of L).
  double factor_bytes() const {
    return static_cast<double>(m_factorization.factor().matrixL().nestedExpression().nonZeros()) *
           (sizeof(double) + sizeof(int));
  }

  long long factorizations = 0;

 private:
  using matrix_type = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;
  baseplate_conduction* m_problem;
  matrix_type m_matrix;
  Eigen::VectorXd m_right_hand_side;
  reusing_factorization<Eigen::SimplicialLDLT<matrix_type>> m_factorization;
};

/// Stops a fixed-point solve when the residual of the conduction equations
/// themselves, ‖R(T)‖₂, meets the Picard loop's criterion ‖R(T)‖ <=
/// tolerance · ‖R(T0)‖ (the fixed-point residual ‖G(T) − T‖ that nkit
/// watches is a different quantity). One residual evaluation per iteration.
/// Works as a monitor of both solvers (after_newton_step and after_anderson_step).
class physical_residual_monitor {
 public:
  physical_residual_monitor(baseplate_conduction& problem, const Eigen::VectorXd& state, double target)
      : m_problem(&problem), m_state(&state), m_target(target), m_residual(state.size()) {}
  template <class Record>
  nkit::monitor_decision check(const Record&) {
    (*m_problem)(*m_state, m_residual);
    last_norm = m_residual.norm();
    met = last_norm <= m_target;
    return met ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
  }
  nkit::monitor_decision after_newton_step(const nkit::newton_step_record& record) { return check(record); }
  nkit::monitor_decision after_anderson_step(const nkit::anderson_step_record& record) { return check(record); }

  bool met = false;
  double last_norm = 0.0;

 private:
  baseplate_conduction* m_problem;
  const Eigen::VectorXd* m_state;
  double m_target;
  Eigen::VectorXd m_residual;
};

}  // namespace nkit_problems

#endif  // NKIT_EXAMPLES_BASEPLATE_PICARD_MAP_HPP
