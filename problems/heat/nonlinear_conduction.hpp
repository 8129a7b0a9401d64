// Verification of the baseplate's discretisation: steady nonlinear conduction
//   −∇·(k(T)∇T) = S(x, y),  k(T) = k0 (1 + βT),
// on a rectangle, cell-centred finite volume on a uniform nx × ny grid with
// the same harmonic-mean face formula as the baseplate demo
// (harmonic_face.hpp). Dirichlet walls use the half-cell distance and
// the harmonic mean of k(T_P) and k(T_wall); insulated walls carry no flux.
// The source is the point value at the cell centre times the cell area
// (second-order accurate). Residual per cell (per unit depth):
//   R_P = Σ_faces F_face − S(x_P, y_P) dx dy.
//
// Two exact solutions are provided with it:
//  * 1D (ny = 1, insulated top and bottom), T(0) = T1, T(L) = T2, S = 0: the
//    Kirchhoff transform U = T + βT²/2 is linear in x, so
//    T(x) = [−1 + √((1 + βT1)² + ((1 + βT2)² − (1 + βT1)²) x/L)] / β,
//    heat flux q = k0 [(T1 − T2) + β(T1² − T2²)/2] / L
//    (transform: Kirchhoff 1894 as presented in F.P. Incropera & D.P. DeWitt,
//    "Fundamentals of Heat and Mass Transfer"; the closed form follows from
//    U(T(x)) = U(T1) + (U(T2) − U(T1)) x/L, solved for T);
//  * 2D manufactured solution (method of manufactured solutions: K. Salari &
//    P. Knupp, "Code Verification by the Method of Manufactured Solutions",
//    Sandia report SAND2000-1444, 2000; P.J. Roache, J. Fluids Eng. 124(1)
//    (2002) 4–10, from memory): T = 1 + a sin(πx) sin(πy) + b x y on the unit
//    square with Dirichlet data from T itself and S = −∇·(k(T)∇T)
//    = −k0 [(1 + βT) ΔT + β |∇T|²] worked out analytically below.
#ifndef NKIT_PROBLEMS_HEAT_NONLINEAR_CONDUCTION_HPP
#define NKIT_PROBLEMS_HEAT_NONLINEAR_CONDUCTION_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <cmath>
#include <functional>
#include <stdexcept>
#include <vector>

#include "problems/heat/harmonic_face.hpp"

namespace nkit_problems {

inline constexpr double pi = 3.14159265358979323846;

/// Wall condition on one side of the rectangle.
struct conduction_wall {
  bool insulated = true;
  std::function<double(double, double)> temperature;  ///< T_wall(x, y) when not insulated
};

struct conduction_case {
  double length_x = 1.0, length_y = 1.0;
  double k0 = 1.0, beta = 0.0;
  conduction_wall west, east, south, north;
  std::function<double(double, double)> source;  ///< S(x, y); empty = 0
};

class nonlinear_conduction {
 public:
  nonlinear_conduction(int cells_x, int cells_y, conduction_case setup)
      : m_nx(cells_x), m_ny(cells_y), m_case(std::move(setup)) {
    if (cells_x < 1 || cells_y < 1) throw std::invalid_argument("nonlinear_conduction: need at least one cell");
    m_dx = m_case.length_x / m_nx;
    m_dy = m_case.length_y / m_ny;
    m_load = Eigen::VectorXd::Zero(unknowns());
    if (m_case.source) {
      for (int j = 0; j < m_ny; ++j) {
        for (int i = 0; i < m_nx; ++i) m_load(index(i, j)) = m_case.source(x(i), y(j)) * m_dx * m_dy;
      }
    }
    // Wall temperatures at the face midpoints, NaN where insulated.
    auto sample = [](const conduction_wall& wall, int count, auto point) {
      std::vector<double> values(static_cast<std::size_t>(count), std::nan(""));
      if (!wall.insulated) {
        for (int m = 0; m < count; ++m) {
          const auto [px, py] = point(m);
          values[static_cast<std::size_t>(m)] = wall.temperature(px, py);
        }
      }
      return values;
    };
    m_west = sample(m_case.west, m_ny, [&](int j) { return std::pair{0.0, y(j)}; });
    m_east = sample(m_case.east, m_ny, [&](int j) { return std::pair{m_case.length_x, y(j)}; });
    m_south = sample(m_case.south, m_nx, [&](int i) { return std::pair{x(i), 0.0}; });
    m_north = sample(m_case.north, m_nx, [&](int i) { return std::pair{x(i), m_case.length_y}; });
  }

  Eigen::Index unknowns() const { return static_cast<Eigen::Index>(m_nx) * m_ny; }
  Eigen::Index index(int i, int j) const { return i + static_cast<Eigen::Index>(m_nx) * j; }
  double x(int i) const { return (i + 0.5) * m_dx; }
  double y(int j) const { return (j + 0.5) * m_dy; }
  int cells_x() const { return m_nx; }
  int cells_y() const { return m_ny; }
  double conductivity(double t) const { return m_case.k0 * (1.0 + m_case.beta * t); }
  double conductivity_derivative() const { return m_case.k0 * m_case.beta; }

  /// R(T) of the file comment; allocates nothing.
  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& r) const {
    r = -m_load;
    visit_faces(t, [&](Eigen::Index p, Eigen::Index q, const face_flux& f) {
      r(p) += f.flux;
      if (q >= 0) r(q) -= f.flux;
    });
  }

  /// Analytic Jacobian R'(T).
  template <class SparseMatrix>
  void assemble_jacobian(const Eigen::VectorXd& t, SparseMatrix& jacobian) const {
    std::vector<Eigen::Triplet<double, typename SparseMatrix::StorageIndex>> entries;
    entries.reserve(static_cast<std::size_t>(5 * unknowns()));
    using index_type = typename SparseMatrix::StorageIndex;
    visit_faces(t, [&](Eigen::Index p, Eigen::Index q, const face_flux& f) {
      entries.emplace_back(static_cast<index_type>(p), static_cast<index_type>(p), f.derivative_p);
      if (q < 0) return;
      entries.emplace_back(static_cast<index_type>(p), static_cast<index_type>(q), f.derivative_q);
      entries.emplace_back(static_cast<index_type>(q), static_cast<index_type>(p), -f.derivative_p);
      entries.emplace_back(static_cast<index_type>(q), static_cast<index_type>(q), -f.derivative_q);
    });
    jacobian.resize(unknowns(), unknowns());
    jacobian.setFromTriplets(entries.begin(), entries.end());  // duplicates are summed
  }

  /// Heat flux leaving through the east wall, per unit length of wall (1D: W/m²).
  double east_heat_flux(const Eigen::VectorXd& t) const {
    double total = 0.0;
    for (int j = 0; j < m_ny; ++j) {
      const Eigen::Index p = index(m_nx - 1, j);
      const double tw = m_east[static_cast<std::size_t>(j)];
      if (std::isnan(tw)) continue;
      total += harmonic_face(m_dy / (0.5 * m_dx), t(p), tw, conductivity(t(p)), conductivity(tw), 0.0, 0.0).flux;
    }
    return total / m_case.length_y;
  }

 private:
  /// Calls visit(p, q, face) for every face; q = −1 for a Dirichlet wall.
  template <class Visit>
  void visit_faces(const Eigen::VectorXd& t, Visit&& visit) const {
    const double dk = conductivity_derivative();
    const double gx = m_dy / m_dx, gy = m_dx / m_dy;
    auto wall = [&](Eigen::Index p, double tw, double g) {
      if (std::isnan(tw)) return;
      visit(p, Eigen::Index{-1}, harmonic_face(g, t(p), tw, conductivity(t(p)), conductivity(tw), dk, 0.0));
    };
    for (int j = 0; j < m_ny; ++j) {
      for (int i = 0; i < m_nx; ++i) {
        const Eigen::Index p = index(i, j);
        if (i + 1 < m_nx) {
          const Eigen::Index q = p + 1;
          visit(p, q, harmonic_face(gx, t(p), t(q), conductivity(t(p)), conductivity(t(q)), dk, dk));
        }
        if (j + 1 < m_ny) {
          const Eigen::Index q = p + m_nx;
          visit(p, q, harmonic_face(gy, t(p), t(q), conductivity(t(p)), conductivity(t(q)), dk, dk));
        }
        if (i == 0) wall(p, m_west[static_cast<std::size_t>(j)], 2.0 * gx);
        if (i + 1 == m_nx) wall(p, m_east[static_cast<std::size_t>(j)], 2.0 * gx);
        if (j == 0) wall(p, m_south[static_cast<std::size_t>(i)], 2.0 * gy);
        if (j + 1 == m_ny) wall(p, m_north[static_cast<std::size_t>(i)], 2.0 * gy);
      }
    }
  }

  int m_nx, m_ny;
  conduction_case m_case;
  double m_dx = 0.0, m_dy = 0.0;
  Eigen::VectorXd m_load;
  std::vector<double> m_west, m_east, m_south, m_north;
};

// ---- exact solutions ----------------------------------------------------------

/// 1D plane wall, k = k0(1 + βT), T(0) = T1, T(L) = T2 (Kirchhoff transform; file comment).
struct kirchhoff_plane_wall {
  double k0 = 1.0, beta = 1.0, t1 = 1.0, t2 = 0.0, length = 1.0;
  double temperature(double x) const {
    if (beta == 0.0) return t1 + (t2 - t1) * x / length;
    const double a = (1.0 + beta * t1) * (1.0 + beta * t1), b = (1.0 + beta * t2) * (1.0 + beta * t2);
    return (-1.0 + std::sqrt(a + (b - a) * x / length)) / beta;
  }
  double heat_flux() const { return k0 * ((t1 - t2) + 0.5 * beta * (t1 * t1 - t2 * t2)) / length; }

  conduction_case setup() const {
    conduction_case c;
    c.length_x = length;
    c.length_y = 1.0;
    c.k0 = k0;
    c.beta = beta;
    c.west = {false, [t = t1](double, double) { return t; }};
    c.east = {false, [t = t2](double, double) { return t; }};
    return c;
  }
};

/// Manufactured solution T = 1 + a sin(πx) sin(πy) + b x y on the unit square.
struct manufactured_conduction {
  double k0 = 1.0, beta = 1.0, a = 0.5, b = 0.25;
  double temperature(double x, double y) const { return 1.0 + a * std::sin(pi * x) * std::sin(pi * y) + b * x * y; }
  /// S = −k0 [(1 + βT) ΔT + β |∇T|²], derived by hand from T above.
  double source(double x, double y) const {
    const double sx = std::sin(pi * x), sy = std::sin(pi * y), cx = std::cos(pi * x), cy = std::cos(pi * y);
    const double tx = a * pi * cx * sy + b * y, ty = a * pi * sx * cy + b * x;
    const double laplacian = -2.0 * a * pi * pi * sx * sy;
    return -k0 * ((1.0 + beta * temperature(x, y)) * laplacian + beta * (tx * tx + ty * ty));
  }
  conduction_case setup() const {
    conduction_case c;
    c.k0 = k0;
    c.beta = beta;
    auto exact = [*this](double x, double y) { return temperature(x, y); };
    c.west = c.east = c.south = c.north = {false, exact};
    c.source = [*this](double x, double y) { return source(x, y); };
    return c;
  }
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_HEAT_NONLINEAR_CONDUCTION_HPP
