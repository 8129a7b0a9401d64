// The second-order airfoil flow of euler_airfoil.hpp handed to nkit with the
// Jacobian of the FIRST-order operator as the matrix its preconditioners are
// built from: the low-order operator's Jacobian used to solve for the
// high-order residual (common practice in implicit finite-volume codes).
//
// Newton's J·v products stay those of the second-order residual (nkit's
// finite differences), so the converged state is the second-order solution;
// only the preconditioner changes. The first-order Jacobian has the
// five-point pattern (5 blocks of 4 × 4 per row instead of 9), is cheaper to
// assemble (fewer colors) and to factor, and is better conditioned (more
// dissipation), at the price of more GMRES iterations per Newton step with an
// exact factorisation. Measured on NACA 0012, M = 0.5, α = 2°, 96 × 48 cells,
// pseudo-transient Newton–GMRES from CFL 50 to 1e-10 (euler_airfoil_solve.hpp;
// bench_airfoil_flow, one run of every configuration, 5 December 2026, one
// core of the shared development machine; docs/performance/README.md has all
// three grids), the preconditioner set up at every Newton step: block ILU(0)
// of this first-order Jacobian 23 Newton steps, 253 GMRES iterations, 0.91 s;
// block ILU(0) of the second-order (exact) Jacobian 27 steps, 1 048
// iterations, 3.6 s; sparse LU of the exact Jacobian 15 steps, one GMRES
// iteration each, 33.9 s (32.3 s of it factorising); sparse LU of the
// first-order Jacobian 16 steps, 79 iterations, 6.7 s. Block ILU(0) (4 × 4
// blocks, one per cell) builds the same M as point ILU(0) in exact arithmetic
// (the same steps and iterations; point ILU(0) 1.04 s in the same run). Set
// up every fifth step, block ILU(0) of this matrix took 0.51 s.
//
// assemble_jacobian builds it by colored forward differences of the
// first-order residual (nkit::colored_difference_jacobian, Curtis, Powell &
// Reid 1974) from its five-point pattern. Allocates on the first assembly only.
#ifndef NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_FIRST_ORDER_JACOBIAN_HPP
#define NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_FIRST_ORDER_JACOBIAN_HPP

#include <Eigen/Core>
#include <nkit/jacobian/sparse_jacobian.hpp>
#include <stdexcept>

#include "problems/flow/euler_airfoil.hpp"

namespace nkit_problems {

class euler_airfoil_with_first_order_jacobian {
 public:
  /// `flow` must be second order (a first-order flow needs no wrapper).
  explicit euler_airfoil_with_first_order_jacobian(const euler_airfoil_flow& flow)
      : m_flow(flow), m_first_order(flow.grid(), first_order_settings(flow.settings())) {
    if (!flow.settings().second_order) {
      throw std::invalid_argument(
          "euler_airfoil_with_first_order_jacobian: the flow is already first order (second_order = false)");
    }
    m_colored.prepare(m_first_order.jacobian_pattern());
  }

  const euler_airfoil_flow& flow() const { return m_flow; }
  const euler_airfoil_flow& first_order_flow() const { return m_first_order; }

  /// The second-order residual.
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const { m_flow(u, r); }
  void pseudo_time_weights(const Eigen::VectorXd& u, Eigen::VectorXd& weights) const {
    m_flow.pseudo_time_weights(u, weights);
  }
  /// The first-order operator's Jacobian at u (five-point block pattern).
  void assemble_jacobian(const Eigen::VectorXd& u, nkit::sparse_matrix& jacobian) const {
    m_residual.resize(u.size());
    m_first_order(u, m_residual);
    m_colored.assemble([this](const Eigen::VectorXd& x, Eigen::VectorXd& r) { m_first_order(x, r); }, u, m_residual,
                       jacobian);
  }

 private:
  static euler_airfoil_settings first_order_settings(euler_airfoil_settings settings) {
    settings.second_order = false;
    return settings;
  }

  euler_airfoil_flow m_flow;
  euler_airfoil_flow m_first_order;
  mutable nkit::colored_difference_jacobian m_colored;
  mutable Eigen::VectorXd m_residual;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_FIRST_ORDER_JACOBIAN_HPP
