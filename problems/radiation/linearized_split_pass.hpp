// The operator-split pass of operator_split_loop.hpp, linearised at the
// current Newton state, as a physics-based preconditioner for the coupled
// implicit stage solves of gray_radiation_diffusion.hpp (wrap it with
// nkit::operator_split_pass_preconditioner).
//
// Method: V.A. Mousseau, D.A. Knoll & W.J. Rider, "Physics-based
// preconditioning and the Newton–Krylov method for non-equilibrium radiation
// diffusion", J. Comput. Phys. 160 (2000) 743–765 (the structure below is
// recalled from memory: frozen-coefficient linearisation, the material
// equation eliminated locally, one diffusion solve for the radiation
// correction, then the material correction; their material equation has no
// conduction, ours does, hence the last step). Survey: D.A. Knoll &
// D.E. Keyes, J. Comput. Phys. 193 (2004) 357–397, §3.3.
//
// The stage operator of the implicit stepper for M = I is A = I − s ∂f/∂u,
// s = γΔt (time/stage_residual.hpp), plus diag(d) when a pseudo-transient
// shift d is active. Freezing the coefficients σ_a, D_r, D_t at the state u
// (Picard linearisation: the derivatives of the coefficients are dropped) and
// with X = σ_a(T⁴ − E) = z³T − z³E/T³ the exchange,
//   σ_i = −∂X_i/∂E_i = z³/T_i³,   c_i = ∂X_i/∂T_i = z³ + 3z³E_i/T_i⁴,
// the blocks are, L_r and L_t the frozen tridiagonal diffusion operators
// (boundary transfer included),
//   A_EE = I − s L_r + s diag(σ)    A_ET = −s diag(c)
//   A_TE = −s diag(σ)               A_TT = I − s L_t + s diag(c).
// One pass for z = (δE, δT) from r = (r_E, r_T):
//   1. the material equation with its conduction lagged is local:
//        δT_i ≈ (r_T,i + sσ_i δE_i) / (1 + s c_i);
//   2. substituted into the radiation equation: a tridiagonal solve
//        (A_EE − diag(s²c_iσ_i/(1 + s c_i))) δE = r_E + diag(s c_i/(1 + s c_i)) r_T;
//   3. the material equation with conduction and the new δE: a tridiagonal solve
//        A_TT δT = r_T + s diag(σ) δE.
// Step 1–2 is exact for the local coupling, which is what keeps the
// preconditioner good when sσ is large (the equilibrium limit). With
// local_material_elimination = false step 1 is skipped (δT = 0 in step 2):
// the plain "radiation with T frozen, then material with the new E" pass, the
// linearisation of operator_split_loop.hpp; block Gauss–Seidel with Picard
// blocks.
//
// Tridiagonal solves by the Thomas algorithm (no pivoting): every matrix
// above is strictly diagonally dominant by rows (diagonal 1 + positive terms,
// off-diagonals −s D/h² summing to less), so the elimination is stable
// (common practice; G.H. Golub & C.F. Van Loan, Matrix Computations, 4th ed.
// (2013), §4.3). set_up() allocates on the first call; apply() never does.
#ifndef NKIT_PROBLEMS_RADIATION_LINEARIZED_SPLIT_PASS_HPP
#define NKIT_PROBLEMS_RADIATION_LINEARIZED_SPLIT_PASS_HPP

#include <Eigen/Core>
#include <cmath>
#include <stdexcept>
#include <string>

#include "problems/radiation/gray_radiation_diffusion.hpp"

namespace nkit_problems {

/// A tridiagonal matrix (sub-, main and super-diagonal) factored once by the
/// Thomas algorithm, solved many times.
class tridiagonal_factor {
 public:
  void resize(Eigen::Index n) {
    m_lower.setZero(n);
    m_diagonal.setZero(n);
    m_upper.setZero(n);
    m_scaled_upper.resize(n);
    m_pivot.resize(n);
  }
  Eigen::VectorXd& lower() { return m_lower; }        ///< a_i multiplies x_(i−1) in row i (a_0 unused)
  Eigen::VectorXd& diagonal() { return m_diagonal; }  ///< b_i
  Eigen::VectorXd& upper() { return m_upper; }        ///< c_i multiplies x_(i+1) in row i (c_(n−1) unused)

  void factor() {
    const Eigen::Index n = m_diagonal.size();
    for (Eigen::Index i = 0; i < n; ++i) {
      m_pivot(i) = m_diagonal(i) - (i > 0 ? m_lower(i) * m_scaled_upper(i - 1) : 0.0);
      m_scaled_upper(i) = i + 1 < n ? m_upper(i) / m_pivot(i) : 0.0;
    }
  }
  /// x = T⁻¹ b, in place.
  void solve(Eigen::VectorXd& x) const {
    const Eigen::Index n = m_diagonal.size();
    for (Eigen::Index i = 0; i < n; ++i) x(i) = (x(i) - (i > 0 ? m_lower(i) * x(i - 1) : 0.0)) / m_pivot(i);
    for (Eigen::Index i = n - 2; i >= 0; --i) x(i) -= m_scaled_upper(i) * x(i + 1);
  }

 private:
  Eigen::VectorXd m_lower, m_diagonal, m_upper, m_scaled_upper, m_pivot;
};

class gray_radiation_linearized_split_pass {
 public:
  explicit gray_radiation_linearized_split_pass(const gray_radiation_diffusion_1d& problem,
                                                bool local_material_elimination = true)
      : m_problem(problem), m_eliminate(local_material_elimination) {}

  /// Freezes the coefficients at the interleaved state u for the stage
  /// operator I − shift ∂f/∂u + diag(diagonal_shift) (diagonal_shift may be null).
  void set_up(const Eigen::VectorXd& u, double shift, const Eigen::VectorXd* diagonal_shift = nullptr) {
    if (!(shift > 0.0 && std::isfinite(shift))) {
      throw std::invalid_argument("gray_radiation_linearized_split_pass: shift must be finite and > 0 (got " +
                                  std::to_string(shift) + ")");
    }
    m_problem.field_layout().require_size(u.size(), "gray_radiation_linearized_split_pass: the state");
    const int n = m_problem.cells();
    if (m_sigma.size() != n) {
      m_radiation.resize(n);
      m_material.resize(n);
      m_sigma.resize(n);
      m_ratio.resize(n);
      m_energy_work.resize(n);
      m_temperature_work.resize(n);
    }
    const double h2 = m_problem.cell_width() * m_problem.cell_width();
    const double z3 = std::pow(m_problem.parameters().atomic_number, 3);
    for (int i = 0; i < n; ++i) {
      const double e = gray_radiation_diffusion_1d::energy(u, i);
      const double t = gray_radiation_diffusion_1d::temperature(u, i);
      const double t3 = t * t * t;
      const double sigma = z3 / t3;
      const double c = z3 + 3.0 * z3 * e / (t3 * t);
      const double d_energy = diagonal_shift != nullptr ? (*diagonal_shift)(2 * i) : 0.0;
      const double d_temperature = diagonal_shift != nullptr ? (*diagonal_shift)(2 * i + 1) : 0.0;
      m_sigma(i) = shift * sigma;
      // s c_i / (1 + s c_i + d_T,i): the weight of the local elimination (0 without it).
      m_ratio(i) = m_eliminate ? shift * c / (1.0 + shift * c + d_temperature) : 0.0;
      m_radiation.diagonal()(i) = 1.0 + d_energy + shift * sigma * (1.0 - m_ratio(i));
      m_material.diagonal()(i) = 1.0 + d_temperature + shift * c;
    }
    for (int i = 0; i + 1 < n; ++i) {
      const double radiation = shift * m_problem.radiation_face_coefficient(u, i) / h2;
      const double conduction = shift * m_problem.conduction_face_coefficient(u, i) / h2;
      add_face(m_radiation, i, radiation);
      add_face(m_material, i, conduction);
    }
    const double h = m_problem.cell_width();
    m_radiation.diagonal()(0) +=
        shift * m_problem.boundary_transfer(gray_radiation_diffusion_1d::temperature(u, 0)) / h;
    m_radiation.diagonal()(n - 1) +=
        shift * m_problem.boundary_transfer(gray_radiation_diffusion_1d::temperature(u, n - 1)) / h;
    m_radiation.factor();
    m_material.factor();
  }

  /// z = one pass (steps 1–3 above) applied to r; both interleaved like the state.
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    const int n = m_problem.cells();
    for (int i = 0; i < n; ++i) m_energy_work(i) = r(2 * i) + m_ratio(i) * r(2 * i + 1);
    m_radiation.solve(m_energy_work);
    for (int i = 0; i < n; ++i) m_temperature_work(i) = r(2 * i + 1) + m_sigma(i) * m_energy_work(i);
    m_material.solve(m_temperature_work);
    for (int i = 0; i < n; ++i) {
      z(2 * i) = m_energy_work(i);
      z(2 * i + 1) = m_temperature_work(i);
    }
  }

 private:
  /// Face between cells i and i + 1 with coefficient w = s D/h²: −w off the diagonal, +w on it.
  static void add_face(tridiagonal_factor& matrix, int i, double w) {
    matrix.diagonal()(i) += w;
    matrix.diagonal()(i + 1) += w;
    matrix.upper()(i) = -w;
    matrix.lower()(i + 1) = -w;
  }

  const gray_radiation_diffusion_1d& m_problem;
  bool m_eliminate;
  tridiagonal_factor m_radiation, m_material;
  Eigen::VectorXd m_sigma;  // s σ_i
  Eigen::VectorXd m_ratio;  // s c_i / (1 + s c_i + d_T,i), or 0
  Eigen::VectorXd m_energy_work, m_temperature_work;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_RADIATION_LINEARIZED_SPLIT_PASS_HPP
