// The two ways of solving the baseplate problem that the demo compares:
//  * a physics-based preconditioner for Newton–GMRES: the frozen-coefficient
//    conduction matrix A(T̂) (symmetric positive definite) factored once by a
//    sparse LDLᵀ (Eigen::SimplicialLDLT) and reused over Newton steps;
//  * the hand-rolled fixed-point (Picard) loop that Newton–Krylov replaces:
//    freeze k at the current iterate, assemble A(T_k), solve A(T_k) T_{k+1} = b
//    by the same sparse LDLᵀ, repeat until ‖R(T)‖₂ <= tolerance · ‖R(T0)‖₂
//    (the shared loop of baselines/picard_iteration.hpp).
#ifndef NKIT_PROBLEMS_HEAT_BASEPLATE_SOLVERS_HPP
#define NKIT_PROBLEMS_HEAT_BASEPLATE_SOLVERS_HPP

#include <Eigen/SparseCholesky>
#include <cstddef>
#include <memory>
#include <nkit/core/preconditioner.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/incomplete_lut.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <stdexcept>
#include <string>

#include "problems/baselines/picard_iteration.hpp"
#include "problems/heat/baseplate.hpp"

namespace nkit_problems {

/// M = A(T̂), the frozen-coefficient conduction matrix at the state the driver
/// hands to setup(), factored by sparse LDLᵀ. The symbolic analysis is done
/// once; each setup refactors numerically.
class frozen_conduction_preconditioner {
 public:
  explicit frozen_conduction_preconditioner(baseplate_conduction& problem) : m_problem(&problem) {}

  template <class Space>
  nkit::setup_status setup(const nkit::preconditioner_context<Space>& context) {
    m_problem->assemble_frozen_conduction(context.state, m_matrix, m_right_hand_side);
    if (!m_analysed) {
      m_factor->analyzePattern(m_matrix);
      m_analysed = true;
    }
    m_factor->factorize(m_matrix);
    return m_factor->info() == Eigen::Success ? nkit::setup_status::ready : nkit::setup_status::failed;
  }
  template <class Vector>
  void apply(const Vector& r, Vector& z) const {
    z = m_factor->solve(r);
  }
  std::size_t memory_bytes() const {
    return static_cast<std::size_t>(m_factor->matrixL().nestedExpression().nonZeros()) * (sizeof(double) + sizeof(int));
  }

 private:
  baseplate_conduction* m_problem;
  Eigen::SparseMatrix<double, Eigen::ColMajor, int> m_matrix;
  Eigen::VectorXd m_right_hand_side;
  // Eigen decompositions cannot be copied or moved; the pointer makes this movable.
  std::unique_ptr<Eigen::SimplicialLDLT<Eigen::SparseMatrix<double, Eigen::ColMajor, int>>> m_factor =
      std::make_unique<Eigen::SimplicialLDLT<Eigen::SparseMatrix<double, Eigen::ColMajor, int>>>();
  bool m_analysed = false;
};

/// Newton–GMRES on the baseplate with the named preconditioner (milu,
/// frozen_ldlt, ilu_zero, ilut, sparse_direct or none; the built-in ones get
/// the Jacobian from the problem's assemble_jacobian); `t` is the initial
/// guess on entry and the solution on exit. Throws std::invalid_argument for
/// any other name.
inline nkit::solve_report solve_by_newton_gmres(baseplate_conduction& problem, Eigen::VectorXd& t,
                                                const std::string& preconditioner,
                                                const nkit::newton_settings& settings) {
  const auto solve = [&](auto chosen) {
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, decltype(chosen)> solver(settings, {},
                                                                                          std::move(chosen));
    return solver.solve(problem, t);
  };
  if (preconditioner == "milu") return solve(nkit::ilu_zero_preconditioner(nkit::ilu_zero_settings{1.0}));
  if (preconditioner == "frozen_ldlt") return solve(frozen_conduction_preconditioner(problem));
  if (preconditioner == "ilu_zero") return solve(nkit::ilu_zero_preconditioner());
  if (preconditioner == "ilut") return solve(nkit::incomplete_lut_preconditioner());
  if (preconditioner == "sparse_direct") return solve(nkit::sparse_direct_preconditioner());
  if (preconditioner == "none") return solve(nkit::identity_preconditioner{});
  throw std::invalid_argument("baseplate: unknown preconditioner '" + preconditioner + "'");
}

/// The fixed-point loop the demo compares with (baselines/picard_iteration.hpp):
/// T ← A(T)⁻¹ b(T) by sparse LDLᵀ until ‖R(T)‖₂ <= relative_tolerance · ‖R(T0)‖₂
/// or maximum_iterations. `t` is the initial guess on entry and the last iterate on exit.
inline picard_report solve_by_picard_iteration(baseplate_conduction& problem, Eigen::VectorXd& t,
                                               double relative_tolerance, int maximum_iterations) {
  using matrix_type = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;
  picard_iteration<Eigen::SimplicialLDLT<matrix_type>> picard;
  picard_settings settings;
  settings.relative_tolerance = relative_tolerance;
  settings.maximum_iterations = maximum_iterations;
  Eigen::VectorXd right_hand_side(t.size());
  const auto assemble = [&](const Eigen::VectorXd& state, matrix_type& matrix) -> const Eigen::VectorXd& {
    problem.assemble_frozen_conduction(state, matrix, right_hand_side);
    return right_hand_side;
  };
  return picard.solve_for_iterate(problem, assemble, t, settings);
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_HEAT_BASEPLATE_SOLVERS_HPP
