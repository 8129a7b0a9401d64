// The two ways of solving the baseplate problem that the demo compares:
//  * a physics-based preconditioner for Newton–GMRES: the frozen-coefficient
//    conduction matrix A(T̂) (symmetric positive definite) factored once by a
//    sparse LDLᵀ (Eigen::SimplicialLDLT) and reused over Newton steps;
//  * the hand-rolled fixed-point (Picard) loop that Newton–Krylov replaces:
//    freeze k at the current iterate, assemble A(T_k), solve A(T_k) T_{k+1} = b
//    by the same sparse LDLᵀ, repeat until ‖R(T)‖₂ <= tolerance · ‖R(T0)‖₂.
#ifndef NKIT_PROBLEMS_HEAT_BASEPLATE_SOLVERS_HPP
#define NKIT_PROBLEMS_HEAT_BASEPLATE_SOLVERS_HPP

#include <Eigen/SparseCholesky>
#include <algorithm>
#include <chrono>
#include <cstddef>
#include <memory>
#include <nkit/newton_krylov_solver.hpp>
#include <nkit/preconditioner.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/incomplete_lut.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <stdexcept>
#include <string>
#include <vector>

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

/// One Picard iteration's record.
struct picard_step_record {
  int iteration = 0;
  double residual_norm = 0.0;
  double relative_residual_norm = 0.0;
  double elapsed_seconds = 0.0;
  long long residual_evaluations = 0;
};

struct picard_report {
  bool converged = false;
  int iterations = 0;
  long long residual_evaluations = 0;
  long long factorizations = 0;
  double initial_residual_norm = 0.0;
  double final_residual_norm = 0.0;
  double wall_seconds = 0.0;
  double median_residual_seconds = 0.0;
  double factor_bytes = 0.0;
  std::vector<picard_step_record> history;
  double work_units() const { return median_residual_seconds > 0.0 ? wall_seconds / median_residual_seconds : 0.0; }
};

/// The fixed-point loop the demo compares with. `t` is the initial guess on
/// entry and the last iterate on exit.
inline picard_report solve_by_picard_iteration(baseplate_conduction& problem, Eigen::VectorXd& t,
                                               double relative_tolerance, int max_iterations) {
  using clock = std::chrono::steady_clock;
  const auto seconds_since = [](clock::time_point start) {
    return std::chrono::duration<double>(clock::now() - start).count();
  };
  const auto start = clock::now();
  picard_report report;
  std::vector<double> residual_times;
  Eigen::VectorXd r(t.size()), b(t.size());
  auto evaluate = [&]() {
    const auto s = clock::now();
    problem(t, r);
    residual_times.push_back(seconds_since(s));
    ++report.residual_evaluations;
    return r.norm();
  };
  Eigen::SparseMatrix<double, Eigen::ColMajor, int> a;
  Eigen::SimplicialLDLT<Eigen::SparseMatrix<double, Eigen::ColMajor, int>> factor;
  report.initial_residual_norm = report.final_residual_norm = evaluate();
  const double target = relative_tolerance * report.initial_residual_norm;
  bool analysed = false;
  while (report.final_residual_norm > target && report.iterations < max_iterations) {
    problem.assemble_frozen_conduction(t, a, b);
    if (!analysed) {
      factor.analyzePattern(a);
      analysed = true;
    }
    factor.factorize(a);
    ++report.factorizations;
    if (factor.info() != Eigen::Success) break;
    t = factor.solve(b);
    ++report.iterations;
    report.final_residual_norm = evaluate();
    report.history.push_back({report.iterations, report.final_residual_norm,
                              report.final_residual_norm / report.initial_residual_norm, seconds_since(start),
                              report.residual_evaluations});
  }
  report.converged = report.final_residual_norm <= target;
  report.wall_seconds = seconds_since(start);
  report.factor_bytes =
      static_cast<double>(factor.matrixL().nestedExpression().nonZeros()) * (sizeof(double) + sizeof(int));
  std::sort(residual_times.begin(), residual_times.end());
  if (!residual_times.empty()) report.median_residual_seconds = residual_times[residual_times.size() / 2];
  return report;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_HEAT_BASEPLATE_SOLVERS_HPP
