// The ways of solving one sea-ice momentum step that the sea-ice example
// compares (problems/sea_ice/viscous_plastic_momentum.hpp):
//  * the Picard ("outer loop") iteration of sea-ice codes: freeze the
//    viscosities, the replacement pressure and the water-drag coefficient at
//    the current iterate, solve the linear problem A(u_k) u_{k+1} = b(u_k) by
//    sparse LU, repeat — a fixed small number of passes, or to convergence
//    (W.D. Hibler III, J. Phys. Oceanogr. 9 (1979) 815–846; J.-F. Lemieux et
//    al., J. Comput. Phys. 229 (2010) 2840–2852, from memory); the loop is the
//    shared one of baselines/picard_iteration.hpp;
//  * Jacobian-free Newton–Krylov with the same frozen-viscosity matrix A(û),
//    factored by sparse LU, as the preconditioner (the choice of Lemieux et
//    al. 2010, who precondition with their Picard solver).
#ifndef NKIT_PROBLEMS_SEA_ICE_SEA_ICE_SOLVERS_HPP
#define NKIT_PROBLEMS_SEA_ICE_SEA_ICE_SOLVERS_HPP

#include <Eigen/SparseLU>
#include <cstddef>
#include <memory>
#include <nkit/core/preconditioner.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>

#include "problems/baselines/picard_iteration.hpp"
#include "problems/sea_ice/viscous_plastic_momentum.hpp"

namespace nkit_problems {

/// M = A(û) + diag(shift), the frozen-viscosity matrix at the state the Newton
/// driver hands to setup() (plus the pseudo-transient shift when there is
/// one), factored by sparse LU; the symbolic analysis is done once.
class frozen_viscosity_preconditioner {
 public:
  explicit frozen_viscosity_preconditioner(const sea_ice_momentum& problem) : m_problem(&problem) {}

  template <class Space>
  nkit::setup_status setup(const nkit::preconditioner_context<Space>& context) {
    m_problem->assemble_frozen_viscosity(context.state, m_matrix, m_right_hand_side);
    if (context.diagonal_shift != nullptr) {
      for (Eigen::Index k = 0; k < m_matrix.rows(); ++k) m_matrix.coeffRef(k, k) += (*context.diagonal_shift)(k);
    }
    return m_factor.factorize(m_matrix) ? nkit::setup_status::ready : nkit::setup_status::failed;
  }
  template <class Vector>
  void apply(const Vector& r, Vector& z) const {
    z = m_factor.solve(r);
  }
  std::size_t memory_bytes() const {
    const auto& lu = m_factor.factor();
    return static_cast<std::size_t>(lu.nnzL() + lu.nnzU()) * (sizeof(double) + sizeof(int));
  }

 private:
  const sea_ice_momentum* m_problem;
  Eigen::SparseMatrix<double> m_matrix;
  Eigen::VectorXd m_right_hand_side;
  reusing_factorization<Eigen::SparseLU<Eigen::SparseMatrix<double>>> m_factor;
};

/// Newton–GMRES on one momentum step with the frozen-viscosity preconditioner;
/// `u` is the initial guess on entry and the solution (or the best iterate) on exit.
inline nkit::solve_report solve_momentum_by_newton_krylov(const sea_ice_momentum& problem, Eigen::VectorXd& u,
                                                          const nkit::newton_settings& settings) {
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, frozen_viscosity_preconditioner> solver(
      settings, {}, frozen_viscosity_preconditioner(problem));
  return solver.solve(problem, u);
}

/// The Picard loop u ← A(u)⁻¹ b(u) until ‖R(u)‖₂ <= relative_tolerance · ‖R(u0)‖₂
/// or `passes` passes; `u` is the initial guess on entry and the last iterate on exit.
inline picard_report solve_momentum_by_picard(const sea_ice_momentum& problem, Eigen::VectorXd& u,
                                              double relative_tolerance, long long passes) {
  picard_iteration<Eigen::SparseLU<Eigen::SparseMatrix<double>>> picard;
  picard_settings settings;
  settings.relative_tolerance = relative_tolerance;
  settings.maximum_iterations = passes;
  Eigen::VectorXd right_hand_side(u.size());
  const auto assemble = [&](const Eigen::VectorXd& state,
                            Eigen::SparseMatrix<double>& matrix) -> const Eigen::VectorXd& {
    problem.assemble_frozen_viscosity(state, matrix, right_hand_side);
    return right_hand_side;
  };
  return picard.solve_for_iterate(problem, assemble, u, settings);
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_SEA_ICE_SEA_ICE_SOLVERS_HPP
