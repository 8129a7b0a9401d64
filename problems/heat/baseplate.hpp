// Steady 2D heat conduction in a power-electronics baseplate: the flagship demo.
//
// ALL GEOMETRY AND MATERIAL DATA HERE ARE INVENTED FOR THE DEMO. They are of a
// plausible size for a liquid-cooled power module but describe no real
// product and come from no data sheet.
//
// Cross-section (x across, y up; per metre of depth into the page), 40 mm × 8 mm:
//   y 0.0–4.0 mm  aluminium baseplate
//   y 4.0–4.2 mm  solder (substrate attach)
//   y 4.2–5.0 mm  ceramic substrate (alumina-like)
//   y 5.0–6.0 mm  copper spreader
//   y 6.0–6.2 mm  solder (die attach), under the chips only
//   y 6.2–6.7 mm  silicon chips (heat sources), three footprints
//   elsewhere above the copper: silicone gel encapsulant
// Boundary: the part of the bottom face in contact with the cold plate
// (x in 4–36 mm) loses heat by convection, q = h (T − T∞); every other
// boundary face is insulated.
//
// Conductivity per material, k(T) = k_ref (T_ref / T)^n (1 + β (T − T_ref)),
// T in kelvin, T_ref = 300 K (invented parameters, see material_table()).
//
// Discretisation (cell-centred finite volume, structured nx × ny grid,
// unknown p = i + nx·j): balance per cell of width dx and height dy,
//   R_P = Σ_faces F_face − q_P dx dy       [W per metre of depth]
// with the outward face flux between cells P and Q
//   F = k_f (T_P − T_Q) · (face length / centre distance),
//   k_f = 2 k_P k_Q / (k_P + k_Q)   (harmonic mean: the series resistance of
//   the two half cells, which keeps the flux right across material
//   interfaces; common practice, e.g. S.V. Patankar, "Numerical Heat Transfer
//   and Fluid Flow", Hemisphere 1980, §4.2 — from memory),
// and on a cooled bottom face, the half cell in series with the film,
//   F = dx (T_P − T∞) / (1/h + (dy/2)/k_P).
// The analytic Jacobian of this residual is assemble_jacobian(); the
// frozen-coefficient (Picard) matrix, symmetric positive definite, is
// assemble_frozen_conduction().
#ifndef NKIT_PROBLEMS_HEAT_BASEPLATE_HPP
#define NKIT_PROBLEMS_HEAT_BASEPLATE_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <array>
#include <cmath>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <vector>

#include "problems/heat/harmonic_face.hpp"

namespace nkit_problems {

/// Invented material model: k(T) = reference (T_ref/T)^exponent (1 + slope (T − T_ref)).
struct baseplate_material {
  const char* name;
  double reference_conductivity;  ///< W/(m K) at 300 K
  double exponent;                ///< power-law exponent n
  double slope;                   ///< β, 1/K
  double conductivity(double temperature) const {
    return reference_conductivity * std::pow(300.0 / temperature, exponent) * (1.0 + slope * (temperature - 300.0));
  }
  double conductivity_derivative(double temperature) const {
    const double linear = 1.0 + slope * (temperature - 300.0);
    return conductivity(temperature) * (-exponent / temperature + slope / linear);
  }
};

enum baseplate_region : int { aluminium = 0, base_solder, ceramic, copper, die_solder, silicon, gel, region_count };

/// Invented values (plausible orders of magnitude, no data sheet).
inline const std::array<baseplate_material, region_count>& material_table() {
  static const std::array<baseplate_material, region_count> table{{
      {"aluminium plate", 205.0, 0.0, 1.0e-4},
      {"solder, substrate attach", 55.0, 0.0, -2.0e-4},
      {"ceramic substrate", 28.0, 1.2, 0.0},
      {"copper spreader", 395.0, 0.0, -1.0e-4},
      {"solder, die attach", 55.0, 0.0, -2.0e-4},
      {"silicon chip", 150.0, 1.3, 0.0},
      {"silicone gel", 0.2, 0.0, 1.0e-3},
  }};
  return table;
}

/// An invented heat-source footprint: a silicon chip on the copper spreader.
struct baseplate_chip {
  const char* name;
  double x_begin, x_end;   ///< m
  double power_per_depth;  ///< W per metre of depth into the page
};

struct baseplate_design {
  double width = 0.040, height = 0.008;  ///< m
  double aluminium_top = 0.0040, base_solder_top = 0.0042, ceramic_top = 0.0050, copper_top = 0.0060;
  double die_solder_top = 0.0062, chip_top = 0.0067;
  double cooled_x_begin = 0.004, cooled_x_end = 0.036;  ///< cold-plate contact on the bottom face
  double film_coefficient = 8000.0;                     ///< h, W/(m² K)
  double coolant_temperature = 313.15;                  ///< T∞, K (40 °C)
  std::vector<baseplate_chip> chips{{"chip A (switch)", 0.006, 0.014, 4000.0},
                                    {"chip B (diode)", 0.017, 0.023, 1500.0},
                                    {"chip C (switch)", 0.026, 0.034, 4000.0}};
};

class baseplate_conduction {
 public:
  baseplate_conduction(int cells_x, int cells_y, baseplate_design design = {})
      : m_nx(cells_x), m_ny(cells_y), m_design(std::move(design)) {
    if (cells_x < 4 || cells_y < 4) throw std::invalid_argument("baseplate_conduction: need at least 4 x 4 cells");
    m_dx = m_design.width / m_nx;
    m_dy = m_design.height / m_ny;
    const Eigen::Index n = unknowns();
    m_region.resize(n);
    m_chip.assign(static_cast<std::size_t>(n), -1);
    m_load = Eigen::VectorXd::Zero(n);
    for (int j = 0; j < m_ny; ++j) {
      const double y = (j + 0.5) * m_dy;
      for (int i = 0; i < m_nx; ++i) {
        const double x = (i + 0.5) * m_dx;
        const Eigen::Index p = index(i, j);
        int chip = -1;
        for (std::size_t c = 0; c < m_design.chips.size(); ++c) {
          if (x > m_design.chips[c].x_begin && x < m_design.chips[c].x_end) chip = static_cast<int>(c);
        }
        int region = gel;
        if (y < m_design.aluminium_top)
          region = aluminium;
        else if (y < m_design.base_solder_top)
          region = base_solder;
        else if (y < m_design.ceramic_top)
          region = ceramic;
        else if (y < m_design.copper_top)
          region = copper;
        else if (chip >= 0 && y < m_design.die_solder_top)
          region = die_solder;
        else if (chip >= 0 && y < m_design.chip_top)
          region = silicon;
        m_region(p) = region;
        if (region == silicon) m_chip[static_cast<std::size_t>(p)] = chip;
      }
    }
    // Volumetric source: each chip's power spread evenly over its silicon cells.
    std::vector<int> chip_cells(m_design.chips.size(), 0);
    for (Eigen::Index p = 0; p < n; ++p) {
      if (m_chip[static_cast<std::size_t>(p)] >= 0)
        ++chip_cells[static_cast<std::size_t>(m_chip[static_cast<std::size_t>(p)])];
    }
    for (Eigen::Index p = 0; p < n; ++p) {
      const int c = m_chip[static_cast<std::size_t>(p)];
      if (c >= 0)
        m_load(p) =
            m_design.chips[static_cast<std::size_t>(c)].power_per_depth / chip_cells[static_cast<std::size_t>(c)];
    }
    m_cooled.resize(m_nx);
    for (int i = 0; i < m_nx; ++i) {
      const double x = (i + 0.5) * m_dx;
      m_cooled[static_cast<std::size_t>(i)] = x > m_design.cooled_x_begin && x < m_design.cooled_x_end;
    }
    m_conductivity.resize(n);
    m_conductivity_derivative.resize(n);
  }

  int cells_x() const { return m_nx; }
  int cells_y() const { return m_ny; }
  Eigen::Index unknowns() const { return static_cast<Eigen::Index>(m_nx) * m_ny; }
  Eigen::Index index(int i, int j) const { return i + static_cast<Eigen::Index>(m_nx) * j; }
  const baseplate_design& design() const { return m_design; }
  double cell_width() const { return m_dx; }
  double cell_height() const { return m_dy; }
  /// Region of each cell (baseplate_region values).
  const Eigen::VectorXi& regions() const { return m_region; }
  /// Chip index of each silicon cell, −1 elsewhere.
  const std::vector<int>& chip_of_cell() const { return m_chip; }
  /// Heat released in each cell, W per metre of depth (Σ = total chip power).
  const Eigen::VectorXd& heat_load() const { return m_load; }
  double total_power() const { return m_load.sum(); }

  /// R(T) of the file comment, W per metre of depth. Allocates nothing.
  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& r) {
    update_conductivity(t, false);
    const double gx = m_dy / m_dx, gy = m_dx / m_dy;
    const Eigen::Index nx = m_nx;
    for (Eigen::Index p = 0; p < unknowns(); ++p) r(p) = -m_load(p);
    for (int j = 0; j < m_ny; ++j) {
      for (int i = 0; i < m_nx; ++i) {
        const Eigen::Index p = index(i, j);
        const double kp = m_conductivity(p);
        if (i + 1 < m_nx) {
          const double flux = harmonic_face(gx, t(p), t(p + 1), kp, m_conductivity(p + 1), 0.0, 0.0).flux;
          r(p) += flux;
          r(p + 1) -= flux;
        }
        if (j + 1 < m_ny) {
          const double flux = harmonic_face(gy, t(p), t(p + nx), kp, m_conductivity(p + nx), 0.0, 0.0).flux;
          r(p) += flux;
          r(p + nx) -= flux;
        }
        if (j == 0 && m_cooled[static_cast<std::size_t>(i)]) {
          r(p) += m_dx * (t(p) - m_design.coolant_temperature) / film_resistance(kp);
        }
      }
    }
  }

  /// Analytic Jacobian R'(T) (nonsymmetric: k_f depends on both temperatures).
  template <class SparseMatrix>
  void assemble_jacobian(const Eigen::VectorXd& t, SparseMatrix& jacobian) {
    assemble(t, jacobian, nullptr, true);
  }

  /// Frozen-coefficient matrix A(T̂) and right-hand side b with A(T̂) T = b the
  /// linear conduction problem at conductivities k(T̂) (Picard iteration).
  /// A is symmetric positive definite when some face is cooled.
  template <class SparseMatrix>
  void assemble_frozen_conduction(const Eigen::VectorXd& t, SparseMatrix& matrix, Eigen::VectorXd& right_hand_side) {
    assemble(t, matrix, &right_hand_side, false);
  }

  /// Heat leaving through the cooled face at temperature T, W per metre of depth.
  double heat_removed(const Eigen::VectorXd& t) {
    update_conductivity(t, false);
    double total = 0.0;
    for (int i = 0; i < m_nx; ++i) {
      if (!m_cooled[static_cast<std::size_t>(i)]) continue;
      const Eigen::Index p = index(i, 0);
      total += m_dx * (t(p) - m_design.coolant_temperature) / film_resistance(m_conductivity(p));
    }
    return total;
  }

 private:
  double film_resistance(double k) const { return 1.0 / m_design.film_coefficient + 0.5 * m_dy / k; }

  void update_conductivity(const Eigen::VectorXd& t, bool with_derivative) {
    const auto& table = material_table();
    for (Eigen::Index p = 0; p < unknowns(); ++p) {
      const baseplate_material& m = table[static_cast<std::size_t>(m_region(p))];
      m_conductivity(p) = m.conductivity(t(p));
      if (with_derivative) m_conductivity_derivative(p) = m.conductivity_derivative(t(p));
    }
  }

  template <class SparseMatrix>
  void assemble(const Eigen::VectorXd& t, SparseMatrix& matrix, Eigen::VectorXd* right_hand_side, bool jacobian) {
    update_conductivity(t, jacobian);
    using triplet = Eigen::Triplet<double, int>;
    static_assert(std::is_same_v<typename SparseMatrix::StorageIndex, int>, "int indices expected");
    m_triplets.clear();
    m_triplets.reserve(static_cast<std::size_t>(5 * unknowns()));
    if (right_hand_side != nullptr) *right_hand_side = m_load;
    const double gx = m_dy / m_dx, gy = m_dx / m_dy;
    const Eigen::Index nx = m_nx;
    Eigen::VectorXd& diagonal = m_diagonal;
    diagonal.setZero(unknowns());
    // One face between p and q with geometric factor g: its flux F = g k_f (T_p − T_q)
    // adds +F to R_p and −F to R_q.
    auto face = [&](Eigen::Index p, Eigen::Index q, double g) {
      const face_flux f =
          harmonic_face(g, t(p), t(q), m_conductivity(p), m_conductivity(q),
                        jacobian ? m_conductivity_derivative(p) : 0.0, jacobian ? m_conductivity_derivative(q) : 0.0);
      const double dfdp = jacobian ? f.derivative_p : f.frozen_conductance;
      const double dfdq = jacobian ? f.derivative_q : -f.frozen_conductance;
      diagonal(p) += dfdp;
      diagonal(q) -= dfdq;
      m_triplets.push_back(triplet(static_cast<int>(p), static_cast<int>(q), dfdq));
      m_triplets.push_back(triplet(static_cast<int>(q), static_cast<int>(p), -dfdp));
    };
    for (int j = 0; j < m_ny; ++j) {
      for (int i = 0; i < m_nx; ++i) {
        const Eigen::Index p = index(i, j);
        if (i + 1 < m_nx) face(p, p + 1, gx);
        if (j + 1 < m_ny) face(p, p + nx, gy);
        if (j == 0 && m_cooled[static_cast<std::size_t>(i)]) {
          const double resistance = film_resistance(m_conductivity(p));
          diagonal(p) += m_dx / resistance;
          if (jacobian) {
            // d/dT_P of dx (T_P − T∞)/resistance(k_P): resistance' = −(dy/2) k'/k².
            const double k = m_conductivity(p);
            diagonal(p) += m_dx * (t(p) - m_design.coolant_temperature) * 0.5 * m_dy * m_conductivity_derivative(p) /
                           (k * k * resistance * resistance);
          }
          if (right_hand_side != nullptr) (*right_hand_side)(p) += m_dx * m_design.coolant_temperature / resistance;
        }
      }
    }
    for (Eigen::Index p = 0; p < unknowns(); ++p)
      m_triplets.push_back(triplet(static_cast<int>(p), static_cast<int>(p), diagonal(p)));
    matrix.resize(unknowns(), unknowns());
    matrix.setFromTriplets(m_triplets.begin(), m_triplets.end());
  }

  int m_nx, m_ny;
  baseplate_design m_design;
  double m_dx = 0.0, m_dy = 0.0;
  Eigen::VectorXi m_region;
  std::vector<int> m_chip;
  Eigen::VectorXd m_load;
  std::vector<bool> m_cooled;
  Eigen::VectorXd m_conductivity, m_conductivity_derivative, m_diagonal;
  std::vector<Eigen::Triplet<double, int>> m_triplets;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_HEAT_BASEPLATE_HPP
