// Steady two-species reaction–diffusion in the unit square (b = 2 unknowns
// per cell), with NO hand-written Jacobian: the problem only declares its
// sparsity pattern and nkit assembles R'(u) by colored finite differences
// for the preconditioner (sparse_jacobian.hpp).
//
// Model: Gray–Scott kinetics (P. Gray & S.K. Scott, Chem. Eng. Sci. 38
// (1983) 29–43; J.E. Pearson, Science 261 (1993) 189–192 — from memory),
// scaled by a Damköhler number Da:
//   −D_u Δu + Da (u v² − F (1 − u)) = s_u
//   −D_v Δv + Da (−u v² + (F + κ) v) = s_v
// with Dirichlet walls. The sources s_u, s_v and the wall values come from
// the manufactured solution (method of manufactured solutions; K. Salari &
// P. Knupp, SAND2000-1444, 2000)
//   u* = 1 − ½ sin(πx) sin(πy),  v* = ¼ + ¼ sin(πx) sin(2πy) + ⅛ x,
// so the discrete solution converges to u*, v* at second order.
//
// Discretisation: cell-centred finite volume on n × n cells (h = 1/n),
// five-point Laplacian, walls at half a cell (T_wall from u*, v*), reaction
// and source at the cell centre; R per cell multiplied by h²:
//   R_u = D_u Σ_faces g (u_P − u_Q) + h² [Da (u v² − F(1 − u)) − s_u],
//   g = 1 for an interior face, 2 for a wall face.
// Unknowns interleaved per cell: u at 2p, v at 2p+1, p = i + n j.
#ifndef NKIT_PROBLEMS_REACTION_DIFFUSION_GRAY_SCOTT_HPP
#define NKIT_PROBLEMS_REACTION_DIFFUSION_GRAY_SCOTT_HPP

#include <Eigen/Core>
#include <cmath>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <stdexcept>

namespace nkit_problems {

/// Invented demo values: from no published source, describing no real system.
struct gray_scott_parameters {
  double diffusion_u = 1.0, diffusion_v = 0.5;
  double damkoehler = 10.0;
  double feed = 0.04, kill = 0.06;  ///< F and κ
};

struct gray_scott_manufactured {
  static constexpr double pi = 3.14159265358979323846;
  static double u(double x, double y) { return 1.0 - 0.5 * std::sin(pi * x) * std::sin(pi * y); }
  static double v(double x, double y) { return 0.25 + 0.25 * std::sin(pi * x) * std::sin(2 * pi * y) + 0.125 * x; }
  /// −Δu* and −Δv*, worked out by hand from the formulas above.
  static double minus_laplacian_u(double x, double y) {
    return -0.5 * 2.0 * pi * pi * std::sin(pi * x) * std::sin(pi * y);
  }
  static double minus_laplacian_v(double x, double y) {
    return 0.25 * 5.0 * pi * pi * std::sin(pi * x) * std::sin(2 * pi * y);
  }
};

class gray_scott_steady {
 public:
  gray_scott_steady(int cells, gray_scott_parameters parameters = {})
      : m_n(cells), m_parameters(parameters), m_pattern(nkit::five_point_grid_pattern(cells, cells, 2)) {
    if (cells < 2) throw std::invalid_argument("gray_scott_steady: need at least 2 x 2 cells");
    m_h = 1.0 / cells;
    m_source.resize(unknowns());
    using m = gray_scott_manufactured;
    const auto& p = m_parameters;
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const double x = center(i), y = center(j), u = m::u(x, y), v = m::v(x, y);
        const Eigen::Index c = i + static_cast<Eigen::Index>(m_n) * j;
        m_source(2 * c) = p.diffusion_u * m::minus_laplacian_u(x, y) + p.damkoehler * (u * v * v - p.feed * (1 - u));
        m_source(2 * c + 1) =
            p.diffusion_v * m::minus_laplacian_v(x, y) + p.damkoehler * (-u * v * v + (p.feed + p.kill) * v);
      }
    }
  }

  int cells() const { return m_n; }
  Eigen::Index unknowns() const { return 2 * static_cast<Eigen::Index>(m_n) * m_n; }
  double center(int i) const { return (i + 0.5) * m_h; }
  /// The only Jacobian information the problem gives nkit.
  const nkit::sparsity_pattern& jacobian_pattern() const { return m_pattern; }

  /// Starting guess: the wall-average state u = 1, v = ¼ everywhere.
  Eigen::VectorXd initial_guess() const {
    Eigen::VectorXd w(unknowns());
    for (Eigen::Index c = 0; c < unknowns() / 2; ++c) {
      w(2 * c) = 1.0;
      w(2 * c + 1) = 0.25;
    }
    return w;
  }
  /// The manufactured solution at the cell centres.
  Eigen::VectorXd exact() const {
    Eigen::VectorXd w(unknowns());
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const Eigen::Index c = i + static_cast<Eigen::Index>(m_n) * j;
        w(2 * c) = gray_scott_manufactured::u(center(i), center(j));
        w(2 * c + 1) = gray_scott_manufactured::v(center(i), center(j));
      }
    }
    return w;
  }

  /// R(w) of the file comment. Templated on the scalar so tests can also
  /// evaluate it on nkit's dual numbers. Allocates nothing.
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& w,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    const auto& p = m_parameters;
    const double h2 = m_h * m_h;
    const Eigen::Index n = m_n;
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const Eigen::Index c = i + n * j;
        const Scalar u = w(2 * c), v = w(2 * c + 1);
        Scalar diffusion_u = Scalar(0.0), diffusion_v = Scalar(0.0);
        auto face = [&](Eigen::Index q) {
          diffusion_u += u - w(2 * q);
          diffusion_v += v - w(2 * q + 1);
        };
        auto wall = [&](double x, double y) {
          diffusion_u += 2.0 * (u - gray_scott_manufactured::u(x, y));
          diffusion_v += 2.0 * (v - gray_scott_manufactured::v(x, y));
        };
        if (i > 0)
          face(c - 1);
        else
          wall(0.0, center(j));
        if (i + 1 < m_n)
          face(c + 1);
        else
          wall(1.0, center(j));
        if (j > 0)
          face(c - n);
        else
          wall(center(i), 0.0);
        if (j + 1 < m_n)
          face(c + n);
        else
          wall(center(i), 1.0);
        const Scalar uvv = u * v * v;
        r(2 * c) = p.diffusion_u * diffusion_u + h2 * (p.damkoehler * (uvv - p.feed * (1.0 - u)) - m_source(2 * c));
        r(2 * c + 1) =
            p.diffusion_v * diffusion_v + h2 * (p.damkoehler * (-uvv + (p.feed + p.kill) * v) - m_source(2 * c + 1));
      }
    }
  }

 private:
  int m_n;
  gray_scott_parameters m_parameters;
  nkit::sparsity_pattern m_pattern;
  double m_h = 0.0;
  Eigen::VectorXd m_source;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_REACTION_DIFFUSION_GRAY_SCOTT_HPP
