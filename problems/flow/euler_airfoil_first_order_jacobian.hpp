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
// exact factorisation. Measured on NACA 0012, M = 0.5, α = 2°, 64 × 32 cells,
// pseudo-transient Newton–GMRES from CFL 50 to 1e-10 (euler_airfoil_solve.hpp),
// one core of the shared development machine: ILU(0) of the second-order
// Jacobian 19 Newton steps, 341 GMRES iterations, 0.88 s; ILU(0) of the
// first-order Jacobian 19 steps, 153 iterations, 0.35 s; sparse LU of the
// first-order Jacobian 13 steps, 76 iterations, 2.3 s (1.8 s of it factorising).
// Block ILU(0) of the first-order Jacobian (4 × 4 blocks, one per cell;
// the same M as point ILU(0) in exact arithmetic) takes the same 19 steps and
// 153 iterations in 0.327 s against 0.357 s for point ILU(0) in the same run
// (bench_airfoil_flow, medians of 3, 5 December 2026; setups 0.021 s against
// 0.041 s, applications 0.017 s against 0.029 s; docs/performance/README.md).
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
