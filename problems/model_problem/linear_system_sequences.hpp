// Sequences of linear systems from the benchmark model problem (model_problem.hpp),
// for comparing Krylov solvers over a whole sequence (subspace recycling):
//   Newton steps      J(T_i) δ = −R(T_i),                 T_{i+1} = T_i + δ,  T_0 = 0;
//   time steps        (h²/Δt I + J(T_i)) δ = −R(T_i),     T_{i+1} = T_i + δ,  T_0 = 0,
// the second being the linearly implicit Euler method (one Newton step of
// backward Euler per time step; E. Hairer & G. Wanner, "Solving Ordinary
// Differential Equations II", 2nd ed., Springer 1996, §IV.7, from memory) for
// h² dT/dt = −R(T), i.e. dT/dt = ∇·(k(T)∇T) + q with cell volume h² (R is
// not divided by h²). Consecutive matrices differ by a small change of the
// coefficients: the slowly changing sequence that recycling targets. Our own
// scenario on our own benchmark problem (problems/README.md).
#ifndef NKIT_PROBLEMS_MODEL_PROBLEM_LINEAR_SYSTEM_SEQUENCES_HPP
#define NKIT_PROBLEMS_MODEL_PROBLEM_LINEAR_SYSTEM_SEQUENCES_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <sstream>
#include <stdexcept>

#include "problems/model_problem/model_problem.hpp"

namespace nkit_problems {

enum class model_problem_sequence_kind { newton_steps, time_steps };

class model_problem_system_sequence {
 public:
  /// time_step (Δt) is used by time_steps only and must then be > 0.
  model_problem_system_sequence(int cells_per_side, model_problem_sequence_kind kind, double time_step = 0.0)
      : m_problem(cells_per_side), m_kind(kind), m_time_step(time_step) {
    if (kind == model_problem_sequence_kind::time_steps && !(time_step > 0.0)) {
      std::ostringstream text;
      text << "model_problem_system_sequence: time_step must be > 0 (got " << time_step << ")";
      throw std::invalid_argument(text.str());
    }
    m_state = Eigen::VectorXd::Zero(m_problem.unknowns());
    m_residual.resize(m_problem.unknowns());
  }

  const heat_conduction_model_problem& problem() const { return m_problem; }
  const Eigen::VectorXd& state() const { return m_state; }

  /// The current system: matrix (J or h²/Δt I + J at the state) and right-hand side −R(state).
  template <class SparseMatrix>
  void assemble(SparseMatrix& matrix, Eigen::VectorXd& right_hand_side) {
    m_problem(m_state, m_residual);
    right_hand_side = -m_residual;
    m_problem.assemble_jacobian(m_state, matrix);
    if (m_kind == model_problem_sequence_kind::time_steps) {
      const double h = m_problem.cell_size();
      for (Eigen::Index p = 0; p < m_problem.unknowns(); ++p) matrix.coeffRef(p, p) += h * h / m_time_step;
    }
    matrix.makeCompressed();
  }

  /// state += increment (the solution of the current system).
  void advance(const Eigen::VectorXd& increment) { m_state += increment; }

  /// ‖R(state)‖₂.
  double residual_norm() {
    m_problem(m_state, m_residual);
    return m_residual.norm();
  }

 private:
  heat_conduction_model_problem m_problem;
  model_problem_sequence_kind m_kind;
  double m_time_step;
  Eigen::VectorXd m_state;
  Eigen::VectorXd m_residual;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_MODEL_PROBLEM_LINEAR_SYSTEM_SEQUENCES_HPP
