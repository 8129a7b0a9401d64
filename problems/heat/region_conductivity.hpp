// A design-sensitivity scenario of our own (INVENTED data, for benchmarks
// only): steady conduction −∇·(k∇T) = S on the unit square, split into
// rows × columns rectangular regions of equal size; region j has the
// conductivity k = p_j k0 (1 + βT), so the parameters p are the regions'
// conductivity multipliers (1, 10 or 100 of them in bench/bench_sensitivity.cpp).
// T = 0 on the west and east walls, insulated south and north walls,
// uniform source S. Cell-centred finite volumes on an n × n grid with the
// harmonic-mean face formula of harmonic_face.hpp (written here for any
// scalar type, so forward-mode AD gives exact products); a wall face uses
// the half-cell distance and k at the wall temperature. Residual per cell:
//   R_P = Σ_faces F_face − S h².
// Output: the mean temperature J = (1/n²) Σ T_P.
#ifndef NKIT_PROBLEMS_HEAT_REGION_CONDUCTIVITY_HPP
#define NKIT_PROBLEMS_HEAT_REGION_CONDUCTIVITY_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <stdexcept>
#include <utility>
#include <vector>

#include "problems/heat/harmonic_face.hpp"

namespace nkit_problems {

class region_conductivity {
 public:
  /// n × n cells; the regions form `region_rows` × `region_columns` blocks (each at most n).
  region_conductivity(int cells, int region_rows, int region_columns, double k0 = 1.0, double beta = 1.0,
                      double source = 10.0)
      : m_n(cells), m_rows(region_rows), m_columns(region_columns), m_k0(k0), m_beta(beta), m_source(source) {
    if (cells < 1 || region_rows < 1 || region_columns < 1 || region_rows > cells || region_columns > cells) {
      throw std::invalid_argument("region_conductivity: need 1 <= region rows, columns <= cells");
    }
    m_region.resize(static_cast<std::size_t>(cells) * static_cast<std::size_t>(cells));
    for (int j = 0; j < cells; ++j) {
      for (int i = 0; i < cells; ++i) {
        m_region[static_cast<std::size_t>(index(i, j))] =
            (i * region_columns / cells) + region_columns * (j * region_rows / cells);
      }
    }
  }

  Eigen::Index unknowns() const { return static_cast<Eigen::Index>(m_n) * m_n; }
  Eigen::Index parameter_count() const { return static_cast<Eigen::Index>(m_rows) * m_columns; }
  Eigen::Index index(int i, int j) const { return i + static_cast<Eigen::Index>(m_n) * j; }
  int region(Eigen::Index cell) const { return m_region[static_cast<std::size_t>(cell)]; }

  /// R(T, p) for doubles or dual numbers; writes every entry of r.
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& t, const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& p,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    const double h = 1.0 / m_n;
    const auto k = [&](Eigen::Index cell, const Scalar& temperature) {
      return Scalar(p(region(cell)) * m_k0 * (1.0 + m_beta * temperature));
    };
    const auto flux = [](double g, const Scalar& tp, const Scalar& tq, const Scalar& kp, const Scalar& kq) {
      return Scalar(g * (2.0 * kp * kq / (kp + kq)) * (tp - tq));
    };
    for (Eigen::Index c = 0; c < unknowns(); ++c) r(c) = Scalar(-m_source * h * h);
    const Scalar wall(0.0);
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const Eigen::Index c = index(i, j);
        const Scalar kc = k(c, t(c));
        if (i + 1 < m_n) {
          const Scalar f = flux(1.0, t(c), t(c + 1), kc, k(c + 1, t(c + 1)));
          r(c) += f;
          r(c + 1) -= f;
        }
        if (j + 1 < m_n) {
          const Scalar f = flux(1.0, t(c), t(c + m_n), kc, k(c + m_n, t(c + m_n)));
          r(c) += f;
          r(c + m_n) -= f;
        }
        if (i == 0 || i + 1 == m_n) r(c) += flux(2.0, t(c), wall, kc, k(c, wall));
      }
    }
  }

  /// Analytic ∂R/∂T (derivatives of harmonic_face.hpp).
  template <class Matrix>
  void assemble_jacobian(const Eigen::VectorXd& t, const Eigen::VectorXd& p, Matrix& jacobian) const {
    using index_type = typename Matrix::StorageIndex;
    std::vector<Eigen::Triplet<double, index_type>> entries;
    entries.reserve(static_cast<std::size_t>(5 * unknowns()));
    const auto k = [&](Eigen::Index cell, double temperature) {
      return p(region(cell)) * m_k0 * (1.0 + m_beta * temperature);
    };
    const auto dk = [&](Eigen::Index cell) { return p(region(cell)) * m_k0 * m_beta; };
    const auto add = [&](Eigen::Index a, Eigen::Index b, double value) {
      entries.emplace_back(static_cast<index_type>(a), static_cast<index_type>(b), value);
    };
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const Eigen::Index c = index(i, j);
        for (const Eigen::Index q :
             {i + 1 < m_n ? c + 1 : Eigen::Index{-1}, j + 1 < m_n ? c + m_n : Eigen::Index{-1}}) {
          if (q < 0) continue;
          const face_flux f = harmonic_face(1.0, t(c), t(q), k(c, t(c)), k(q, t(q)), dk(c), dk(q));
          add(c, c, f.derivative_p), add(c, q, f.derivative_q), add(q, c, -f.derivative_p), add(q, q, -f.derivative_q);
        }
        if (i == 0 || i + 1 == m_n)
          add(c, c, harmonic_face(2.0, t(c), 0.0, k(c, t(c)), k(c, 0.0), dk(c), 0.0).derivative_p);
      }
    }
    jacobian.resize(unknowns(), unknowns());
    jacobian.setFromTriplets(entries.begin(), entries.end());
  }

  /// The output J = mean temperature, with its exact gradients.
  struct mean_temperature {
    double operator()(const Eigen::VectorXd& t, const Eigen::VectorXd&) const { return t.mean(); }
    void state_gradient(const Eigen::VectorXd& t, const Eigen::VectorXd&, Eigen::VectorXd& g) const {
      g = Eigen::VectorXd::Constant(t.size(), 1.0 / static_cast<double>(t.size()));
    }
    void parameter_gradient(const Eigen::VectorXd&, const Eigen::VectorXd& p, Eigen::VectorXd& g) const {
      g = Eigen::VectorXd::Zero(p.size());
    }
  };

 private:
  int m_n, m_rows, m_columns;
  double m_k0, m_beta, m_source;
  std::vector<int> m_region;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_HEAT_REGION_CONDUCTIVITY_HPP
