// The benchmark model problem: steady nonlinear heat conduction
//   −∇·(k(T)∇T) = q on the unit square, k(T) = 1 + T², q = 10, T = 0 on the walls,
// cell-centred finite volume on an n×n grid (h = 1/n, unknown p = i + n·j).
// Definition (common practice; our own benchmark problem, defined here once so
// that every benchmark measures the same work; problems/README.md):
//   interior face P|Q:  k_f = ½(k(T_P) + k(T_Q)),  flux = k_f (T_P − T_Q)
//   wall face:          flux = 2·½(k(T_P) + k(0))·T_P = (k(T_P) + 1) T_P
//   R_P = Σ_faces flux − q h²   (not divided by h², so ‖R(0)‖₂ = q/n)
// Benchmarks start from T0 = 0 and count a solve as converged when
// ‖R‖₂ <= 1e-8 ‖R(T0)‖₂. The solution's maximum is about 0.6466 (0.64659 at
// n = 256, 0.64660 at n = 1024; computed, a sanity check only).
#ifndef NKIT_PROBLEMS_MODEL_PROBLEM_MODEL_PROBLEM_HPP
#define NKIT_PROBLEMS_MODEL_PROBLEM_MODEL_PROBLEM_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <stdexcept>
#include <vector>

namespace nkit_problems {

class heat_conduction_model_problem {
 public:
  explicit heat_conduction_model_problem(int cells_per_side, double source = 10.0)
      : m_n(cells_per_side), m_source(source) {
    if (cells_per_side < 1) throw std::invalid_argument("heat_conduction_model_problem: cells_per_side must be >= 1");
  }

  int cells_per_side() const { return m_n; }
  Eigen::Index unknowns() const { return static_cast<Eigen::Index>(m_n) * m_n; }
  double cell_size() const { return 1.0 / m_n; }
  double source() const { return m_source; }

  template <class Scalar>
  static Scalar conductivity(const Scalar& temperature) {
    return 1.0 + temperature * temperature;
  }

  /// R(T): one pass over the faces; works for double and for dual numbers.
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& t,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    const int n = m_n;
    const double h = 1.0 / n;
    const double load = m_source * h * h;
    for (Eigen::Index p = 0; p < unknowns(); ++p) r(p) = Scalar(-load);
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const Eigen::Index p = i + static_cast<Eigen::Index>(n) * j;
        const Scalar k_p = conductivity(t(p));
        // East face (interior or wall).
        if (i + 1 < n) {
          const Scalar flux = 0.5 * (k_p + conductivity(t(p + 1))) * (t(p) - t(p + 1));
          r(p) += flux;
          r(p + 1) -= flux;
        } else {
          r(p) += (k_p + 1.0) * t(p);
        }
        // North face.
        if (j + 1 < n) {
          const Scalar flux = 0.5 * (k_p + conductivity(t(p + n))) * (t(p) - t(p + n));
          r(p) += flux;
          r(p + n) -= flux;
        } else {
          r(p) += (k_p + 1.0) * t(p);
        }
        if (i == 0) r(p) += (k_p + 1.0) * t(p);  // west wall
        if (j == 0) r(p) += (k_p + 1.0) * t(p);  // south wall
      }
    }
  }

  /// Analytic Jacobian (derivatives of the fluxes above): ∂R_P/∂T_P = Σ_faces [k_f + T_P (T_P − T_Q)]
  /// plus k_P + 1 + 2 T_P² per wall face; ∂R_P/∂T_Q = −k_f + T_Q (T_P − T_Q).
  template <class SparseMatrix>
  void assemble_jacobian(const Eigen::VectorXd& t, SparseMatrix& jacobian) const {
    const int n = m_n;
    std::vector<Eigen::Triplet<double, typename SparseMatrix::StorageIndex>> entries;
    entries.reserve(static_cast<std::size_t>(5 * unknowns()));
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const Eigen::Index p = i + static_cast<Eigen::Index>(n) * j;
        const double k_p = conductivity(t(p));
        double diagonal = 0.0;
        const auto neighbour = [&](Eigen::Index q) {
          const double k_f = 0.5 * (k_p + conductivity(t(q)));
          diagonal += k_f + t(p) * (t(p) - t(q));
          entries.emplace_back(p, q, -k_f + t(q) * (t(p) - t(q)));
        };
        const double wall = k_p + 1.0 + 2.0 * t(p) * t(p);
        if (i > 0)
          neighbour(p - 1);
        else
          diagonal += wall;
        if (i + 1 < n)
          neighbour(p + 1);
        else
          diagonal += wall;
        if (j > 0)
          neighbour(p - n);
        else
          diagonal += wall;
        if (j + 1 < n)
          neighbour(p + n);
        else
          diagonal += wall;
        entries.emplace_back(p, p, diagonal);
      }
    }
    jacobian.resize(unknowns(), unknowns());
    jacobian.setFromTriplets(entries.begin(), entries.end());
  }

  /// The frozen-coefficient (Picard) matrix A(T): every face conductance
  /// evaluated at T (interior ½(k_P + k_Q), wall k_P + 1), so that
  /// A(T) T − q h² = R(T) exactly; symmetric positive definite (common
  /// practice). `entries` is scratch space that repeated calls reuse.
  template <class SparseMatrix>
  void assemble_frozen_conduction(
      const Eigen::VectorXd& t, SparseMatrix& a,
      std::vector<Eigen::Triplet<double, typename SparseMatrix::StorageIndex>>& entries) const {
    const int n = m_n;
    entries.clear();
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const Eigen::Index p = i + static_cast<Eigen::Index>(n) * j;
        const double k_p = conductivity(t(p));
        double diagonal = 0.0;
        const auto face = [&](Eigen::Index q) {
          const double k_f = 0.5 * (k_p + conductivity(t(q)));
          diagonal += k_f;
          entries.emplace_back(p, q, -k_f);
        };
        const double wall = k_p + 1.0;
        if (i > 0)
          face(p - 1);
        else
          diagonal += wall;
        if (i + 1 < n)
          face(p + 1);
        else
          diagonal += wall;
        if (j > 0)
          face(p - n);
        else
          diagonal += wall;
        if (j + 1 < n)
          face(p + n);
        else
          diagonal += wall;
        entries.emplace_back(p, p, diagonal);
      }
    }
    a.resize(unknowns(), unknowns());
    a.setFromTriplets(entries.begin(), entries.end());
  }

 private:
  int m_n;
  double m_source;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_MODEL_PROBLEM_MODEL_PROBLEM_HPP
