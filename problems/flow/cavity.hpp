// Lid-driven cavity: steady incompressible Navier–Stokes in the unit square,
// lid (y = 1) moving with u = 1, no slip elsewhere.
//
// Formulation: streamfunction–vorticity (ψ, ω), as Ghia, Ghia & Shin (1982)
// used, on a uniform grid of (n+1) × (n+1) nodes. Why this and not primitive
// variables on a staggered grid: (1) the unknowns sit at the same nodes as
// Ghia's tabulated points (n = 128 reproduces their 129 × 129 grid, so the
// comparison needs no interpolation); (2) there is no pressure and no
// saddle-point structure, so the Jacobian has a nonzero diagonal and
// incomplete factorisations and block Jacobi apply directly; (3) continuity
// holds exactly (u = ψ_y, v = −ψ_x).
//
// Equations (u = ψ_y, v = −ψ_x, ω = v_x − u_y):
//   ∇²ψ + ω = 0,     (1/Re) ∇²ω − (u ω_x + v ω_y) = 0.
// Second-order central differences on the 5-point stencil at every interior
// node, multiplied by h² (common practice):
//   F_ψ = ψ_E + ψ_W + ψ_N + ψ_S − 4ψ_P + h² ω_P
//   F_ω = (ω_E + ω_W + ω_N + ω_S − 4ω_P)/Re
//         − ¼[(ψ_N − ψ_S)(ω_E − ω_W) − (ψ_E − ψ_W)(ω_N − ω_S)]
// Walls: ψ = 0; wall vorticity from Thom's formula (A. Thom, Proc. R. Soc.
// Lond. A 141 (1933) 651–669, from memory; the standard second-order-in-ψ
// wall closure, common practice): ω_wall = −2ψ_adjacent/h² − 2U_wall/h.
//
// Unknowns: ψ and ω at the (n−1)² interior nodes, interleaved per node
// (ψ at 2p, ω at 2p+1, p = (i−1) + (n−1)(j−1)): b = 2 unknowns per node.
#ifndef NKIT_PROBLEMS_FLOW_CAVITY_HPP
#define NKIT_PROBLEMS_FLOW_CAVITY_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <stdexcept>
#include <vector>

namespace nkit_problems {

class lid_driven_cavity {
 public:
  lid_driven_cavity(int intervals, double reynolds) : m_n(intervals), m_reynolds(reynolds) {
    if (intervals < 4) throw std::invalid_argument("lid_driven_cavity: intervals must be >= 4");
    if (!(reynolds > 0.0)) throw std::invalid_argument("lid_driven_cavity: Reynolds number must be > 0");
    m_h = 1.0 / intervals;
  }

  int intervals() const { return m_n; }
  double spacing() const { return m_h; }
  double reynolds() const { return m_reynolds; }
  void set_reynolds(double reynolds) { m_reynolds = reynolds; }
  Eigen::Index nodes() const { return static_cast<Eigen::Index>(m_n - 1) * (m_n - 1); }
  Eigen::Index unknowns() const { return 2 * nodes(); }
  /// Interior node (i, j), 1 <= i, j <= n−1.
  Eigen::Index node(int i, int j) const { return (i - 1) + static_cast<Eigen::Index>(m_n - 1) * (j - 1); }

  /// Streamfunction at any node (0 on walls).
  double streamfunction(const Eigen::VectorXd& state, int i, int j) const {
    return interior(i, j) ? state(2 * node(i, j)) : 0.0;
  }
  /// Vorticity at any node; walls by Thom's formula (corners: 0, unused).
  double vorticity(const Eigen::VectorXd& state, int i, int j) const {
    if (interior(i, j)) return state(2 * node(i, j) + 1);
    const double h2 = m_h * m_h;
    if (j == m_n && i > 0 && i < m_n) return -2.0 * streamfunction(state, i, j - 1) / h2 - 2.0 / m_h;
    if (j == 0 && i > 0 && i < m_n) return -2.0 * streamfunction(state, i, 1) / h2;
    if (i == 0 && j > 0 && j < m_n) return -2.0 * streamfunction(state, 1, j) / h2;
    if (i == m_n && j > 0 && j < m_n) return -2.0 * streamfunction(state, m_n - 1, j) / h2;
    return 0.0;
  }
  /// u = ψ_y (central difference; 1 on the lid, 0 on other walls).
  double u(const Eigen::VectorXd& state, int i, int j) const {
    if (j == m_n) return (i > 0 && i < m_n) ? 1.0 : 0.0;
    if (j == 0 || i == 0 || i == m_n) return 0.0;
    return (streamfunction(state, i, j + 1) - streamfunction(state, i, j - 1)) / (2.0 * m_h);
  }
  /// v = −ψ_x (central difference; 0 on walls).
  double v(const Eigen::VectorXd& state, int i, int j) const {
    if (i == 0 || i == m_n || j == 0 || j == m_n) return 0.0;
    return -(streamfunction(state, i + 1, j) - streamfunction(state, i - 1, j)) / (2.0 * m_h);
  }

  /// R(ψ, ω) of the file comment; allocates nothing.
  void operator()(const Eigen::VectorXd& state, Eigen::VectorXd& r) const {
    const double h2 = m_h * m_h, inverse_re = 1.0 / m_reynolds;
    for (int j = 1; j < m_n; ++j) {
      for (int i = 1; i < m_n; ++i) {
        const Eigen::Index p = node(i, j);
        const double psi_e = streamfunction(state, i + 1, j), psi_w = streamfunction(state, i - 1, j);
        const double psi_n = streamfunction(state, i, j + 1), psi_s = streamfunction(state, i, j - 1);
        const double om_e = vorticity(state, i + 1, j), om_w = vorticity(state, i - 1, j);
        const double om_n = vorticity(state, i, j + 1), om_s = vorticity(state, i, j - 1);
        const double psi_p = state(2 * p), om_p = state(2 * p + 1);
        r(2 * p) = psi_e + psi_w + psi_n + psi_s - 4.0 * psi_p + h2 * om_p;
        r(2 * p + 1) = inverse_re * (om_e + om_w + om_n + om_s - 4.0 * om_p) -
                       0.25 * ((psi_n - psi_s) * (om_e - om_w) - (psi_e - psi_w) * (om_n - om_s));
      }
    }
  }

  /// Analytic Jacobian R'(ψ, ω) (wall vorticity depends on the adjacent ψ).
  template <class SparseMatrix>
  void assemble_jacobian(const Eigen::VectorXd& state, SparseMatrix& jacobian) const {
    assemble(state, jacobian, false);
  }

  /// Picard (Oseen) matrix M(x̂): the residual with the convecting velocity
  /// (ψ differences) frozen at x̂ is affine in x with this matrix, and equals
  /// R at x = x̂, so the fixed-point iteration is x ← x − M(x)⁻¹ R(x).
  template <class SparseMatrix>
  void assemble_picard_matrix(const Eigen::VectorXd& state, SparseMatrix& matrix) const {
    assemble(state, matrix, true);
  }

 private:
  template <class SparseMatrix>
  void assemble(const Eigen::VectorXd& state, SparseMatrix& jacobian, bool frozen_velocity) const {
    using index_type = typename SparseMatrix::StorageIndex;
    std::vector<Eigen::Triplet<double, index_type>> entries;
    entries.reserve(static_cast<std::size_t>(14 * nodes()));
    const double h2 = m_h * m_h, inverse_re = 1.0 / m_reynolds;
    auto add = [&](Eigen::Index row, Eigen::Index column, double value) {
      entries.emplace_back(static_cast<index_type>(row), static_cast<index_type>(column), value);
    };
    for (int j = 1; j < m_n; ++j) {
      for (int i = 1; i < m_n; ++i) {
        const Eigen::Index p = node(i, j);
        const Eigen::Index row_psi = 2 * p, row_om = 2 * p + 1;
        const double psi_e = streamfunction(state, i + 1, j), psi_w = streamfunction(state, i - 1, j);
        const double psi_n = streamfunction(state, i, j + 1), psi_s = streamfunction(state, i, j - 1);
        const double om_e = vorticity(state, i + 1, j), om_w = vorticity(state, i - 1, j);
        const double om_n = vorticity(state, i, j + 1), om_s = vorticity(state, i, j - 1);
        const double a = psi_n - psi_s, b = om_e - om_w, c = psi_e - psi_w, d = om_n - om_s;
        // Streamfunction equation.
        add(row_psi, row_psi, -4.0);
        add(row_psi, row_om, h2);
        // Vorticity equation: own node.
        add(row_om, row_om, -4.0 * inverse_re);
        // Neighbours: (di, dj, ∂F_ω/∂ψ_neighbour, ∂F_ω/∂ω_neighbour).
        const struct {
          int di, dj;
          double d_psi, d_omega;
        } neighbours[4] = {{1, 0, 0.25 * d, inverse_re - 0.25 * a},
                           {-1, 0, -0.25 * d, inverse_re + 0.25 * a},
                           {0, 1, -0.25 * b, inverse_re + 0.25 * c},
                           {0, -1, 0.25 * b, inverse_re - 0.25 * c}};
        const double convected = frozen_velocity ? 0.0 : 1.0;  // drop ∂(convection)/∂ψ for Picard
        double own_psi_from_walls = 0.0;
        for (const auto& nb : neighbours) {
          const int qi = i + nb.di, qj = j + nb.dj;
          if (interior(qi, qj)) {
            const Eigen::Index q = node(qi, qj);
            add(row_psi, 2 * q, 1.0);
            add(row_om, 2 * q, convected * nb.d_psi);
            add(row_om, 2 * q + 1, nb.d_omega);
          } else {
            // Wall node: ψ = 0; ω_wall = −2ψ_P/h² + const (Thom), so it feeds ∂/∂ψ_P.
            own_psi_from_walls += nb.d_omega * (-2.0 / h2);
          }
        }
        add(row_om, row_psi, own_psi_from_walls);
      }
    }
    jacobian.resize(unknowns(), unknowns());
    jacobian.setFromTriplets(entries.begin(), entries.end());
  }

 public:
  /// Minimum streamfunction over the nodes (the primary vortex) and where it is.
  struct vortex {
    double streamfunction, x, y;
  };
  vortex primary_vortex(const Eigen::VectorXd& state) const {
    vortex best{0.0, 0.5, 0.5};
    for (int j = 1; j < m_n; ++j) {
      for (int i = 1; i < m_n; ++i) {
        const double psi = state(2 * node(i, j));
        if (psi < best.streamfunction) best = {psi, i * m_h, j * m_h};
      }
    }
    return best;
  }

 private:
  bool interior(int i, int j) const { return i > 0 && i < m_n && j > 0 && j < m_n; }

  int m_n;
  double m_reynolds;
  double m_h = 0.0;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_CAVITY_HPP
