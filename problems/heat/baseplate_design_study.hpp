// The baseplate of baseplate.hpp as a design study R(T, p) = 0 with a vector
// p of design parameters, and a smooth peak junction temperature per chip
// as the output. ALL DATA ARE INVENTED FOR THE DEMO (see baseplate.hpp): a
// plausible liquid-cooled power module, no product, no data sheet.
//
// Parameters p (SI units), parameter_count() = 17:
//   0–6    reference conductivity k_ref of each material of material_table()
//          (aluminium plate, solder under the substrate, ceramic, copper,
//          die-attach solder, silicon, silicone gel), W/(m K): the material's
//          k(T) law is scaled, k = k_ref (300/T)^n (1 + β (T − 300));
//   7–12   thickness of the six layers from the bottom (aluminium plate,
//          substrate solder, ceramic, copper, die-attach row, chip row), m;
//   13     heat-transfer coefficient h of the cold plate, W/(m² K);
//   14–16  the power of each chip, W per metre of depth.
//
// How the thicknesses enter the residual: the grid is aligned with the
// layers. Each layer has a fixed number of cell rows (chosen once from the
// nominal thicknesses); a row's height is (layer thickness)/(rows of the
// layer). Changing a thickness stretches its rows smoothly — a mapped grid,
// the same discrete problem as a uniform grid of the new layer — so R is a
// smooth function of the thickness. The top gel layer (above the chips) has
// a fixed thickness. The die-attach and chip rows are solder and silicon
// under the chip footprints and gel elsewhere.
//
// Discretisation (cell-centred finite volume, nx uniform columns of width
// dx, rows of height h_j): R_P = Σ_faces F − q_P  [W per metre of depth],
//   x face in row j:       F = h_j 2 k_P k_Q/(k_P + k_Q) (T_P − T_Q)/dx,
//   y face rows j, j+1:    F = dx (T_P − T_Q)/(h_j/(2 k_P) + h_{j+1}/(2 k_Q)),
//   cooled bottom face:    F = dx (T_P − T∞)/(1/h + h_0/(2 k_P)),
// the half cells in series (the harmonic-mean face of harmonic_face.hpp
// extended to unequal half-cell distances; common practice, e.g. S.V.
// Patankar, "Numerical Heat Transfer and Fluid Flow", Hemisphere 1980,
// §4.2.3 — section number from memory). q_P = P_c / N_c on the N_c silicon
// cells of chip c. With equal row heights this is baseplate.hpp's residual.
// Written for any scalar type, so nkit's forward-mode AD gives exact
// products R_T v and R_p dp; the Jacobian comes from colored differences of
// jacobian_pattern() (five-point stencil).
//
// Output: chip_peak_temperature, the Kreisselmeier–Steinhauser soft maximum
// of the chip's cell temperatures (see that class).
#ifndef NKIT_PROBLEMS_HEAT_BASEPLATE_DESIGN_STUDY_HPP
#define NKIT_PROBLEMS_HEAT_BASEPLATE_DESIGN_STUDY_HPP

#include <Eigen/Core>
#include <algorithm>
#include <array>
#include <cmath>
#include <cstddef>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "problems/heat/baseplate.hpp"

namespace nkit_problems {

/// The design parameters of baseplate_design_study, by position in p.
struct baseplate_parameter {
  const char* key;           ///< for command-line options and CSV
  const char* name;          ///< full words, for tables
  const char* unit;          ///< SI unit of the entry of p
  double display_scale;      ///< multiply p_j by this for display ...
  const char* display_unit;  ///< ... in this unit
};

class baseplate_design_study {
 public:
  static constexpr int conductivity_first = 0, thickness_first = 7, film_coefficient_index = 13, power_first = 14;
  static constexpr int layer_count = 6;  ///< layers whose thickness is a parameter (the gel cap is fixed)

  /// cells_x uniform columns over the width; about cells_y rows over the height, split over the seven
  /// layers in proportion to their nominal thickness, at least 2 rows per layer. Three chips expected.
  baseplate_design_study(int cells_x, int cells_y, baseplate_design design = {})
      : m_nx(cells_x), m_design(std::move(design)) {
    if (cells_x < 8 || cells_y < 8) throw std::invalid_argument("baseplate_design_study: need at least 8 x 8 cells");
    if (m_design.chips.size() != 3) throw std::invalid_argument("baseplate_design_study: expects three chips");
    const std::array<double, layer_count + 1> tops{
        m_design.aluminium_top,  m_design.base_solder_top, m_design.ceramic_top, m_design.copper_top,
        m_design.die_solder_top, m_design.chip_top,        m_design.height};
    double bottom = 0.0;
    for (int layer = 0; layer <= layer_count; ++layer) {
      const double thickness = tops[static_cast<std::size_t>(layer)] - bottom;
      if (!(thickness > 0.0)) throw std::invalid_argument("baseplate_design_study: layers must have thickness > 0");
      m_nominal_thickness[static_cast<std::size_t>(layer)] = thickness;
      const int rows = std::max(2, static_cast<int>(std::lround(cells_y * thickness / m_design.height)));
      m_layer_rows[static_cast<std::size_t>(layer)] = rows;
      for (int r = 0; r < rows; ++r) m_layer_of_row.push_back(layer);
      bottom = tops[static_cast<std::size_t>(layer)];
    }
    m_ny = static_cast<int>(m_layer_of_row.size());
    m_dx = m_design.width / m_nx;
    const Eigen::Index n = unknowns();
    m_region.resize(n);
    m_chip.assign(static_cast<std::size_t>(n), -1);
    m_chip_cells.assign(m_design.chips.size(), {});
    m_cooled.resize(static_cast<std::size_t>(m_nx));
    for (int i = 0; i < m_nx; ++i) {
      const double x = (i + 0.5) * m_dx;
      int chip = -1;
      for (std::size_t c = 0; c < m_design.chips.size(); ++c) {
        if (x > m_design.chips[c].x_begin && x < m_design.chips[c].x_end) chip = static_cast<int>(c);
      }
      m_cooled[static_cast<std::size_t>(i)] = x > m_design.cooled_x_begin && x < m_design.cooled_x_end;
      for (int j = 0; j < m_ny; ++j) {
        const Eigen::Index p = index(i, j);
        const int layer = m_layer_of_row[static_cast<std::size_t>(j)];
        int region = gel;
        if (layer <= copper) {
          region = layer;  // aluminium, base_solder, ceramic, copper: the layer is the material
        } else if (layer == 4 && chip >= 0) {
          region = die_solder;
        } else if (layer == 5 && chip >= 0) {
          region = silicon;
          m_chip[static_cast<std::size_t>(p)] = chip;
          m_chip_cells[static_cast<std::size_t>(chip)].push_back(p);
        }
        m_region(p) = region;
      }
    }
    for (const auto& cells : m_chip_cells) {
      if (cells.empty()) throw std::invalid_argument("baseplate_design_study: a chip covers no cell; use more cells_x");
    }
    m_pattern = nkit::five_point_grid_pattern(m_nx, m_ny);
  }

  int cells_x() const { return m_nx; }
  int cells_y() const { return m_ny; }
  Eigen::Index unknowns() const { return static_cast<Eigen::Index>(m_nx) * m_ny; }
  Eigen::Index parameter_count() const { return 17; }
  Eigen::Index index(int i, int j) const { return i + static_cast<Eigen::Index>(m_nx) * j; }
  const baseplate_design& design() const { return m_design; }
  const Eigen::VectorXi& regions() const { return m_region; }
  /// The silicon cells of chip c (all of equal area).
  const std::vector<Eigen::Index>& chip_cells(std::size_t c) const { return m_chip_cells.at(c); }
  const nkit::sparsity_pattern& jacobian_pattern() const { return m_pattern; }

  /// The nominal parameters of the design (the invented data of baseplate.hpp).
  Eigen::VectorXd nominal_parameters() const {
    Eigen::VectorXd p(parameter_count());
    const auto& table = material_table();
    for (int r = 0; r < region_count; ++r)
      p(conductivity_first + r) = table[static_cast<std::size_t>(r)].reference_conductivity;
    for (int layer = 0; layer < layer_count; ++layer)
      p(thickness_first + layer) = m_nominal_thickness[static_cast<std::size_t>(layer)];
    p(film_coefficient_index) = m_design.film_coefficient;
    for (int c = 0; c < 3; ++c) p(power_first + c) = m_design.chips[static_cast<std::size_t>(c)].power_per_depth;
    return p;
  }

  /// Names and units of the parameters, by position in p.
  static const std::array<baseplate_parameter, 17>& parameters() {
    static const std::array<baseplate_parameter, 17> table{{
        {"aluminium_conductivity", "conductivity of the aluminium plate", "W/(m K)", 1.0, "W/(m K)"},
        {"substrate_solder_conductivity", "conductivity of the substrate solder", "W/(m K)", 1.0, "W/(m K)"},
        {"ceramic_conductivity", "conductivity of the ceramic substrate", "W/(m K)", 1.0, "W/(m K)"},
        {"copper_conductivity", "conductivity of the copper spreader", "W/(m K)", 1.0, "W/(m K)"},
        {"die_attach_solder_conductivity", "conductivity of the die-attach solder", "W/(m K)", 1.0, "W/(m K)"},
        {"silicon_conductivity", "conductivity of the silicon chips", "W/(m K)", 1.0, "W/(m K)"},
        {"gel_conductivity", "conductivity of the silicone gel", "W/(m K)", 1.0, "W/(m K)"},
        {"aluminium_thickness", "thickness of the aluminium plate", "m", 1e3, "mm"},
        {"substrate_solder_thickness", "thickness of the substrate solder", "m", 1e3, "mm"},
        {"ceramic_thickness", "thickness of the ceramic substrate", "m", 1e3, "mm"},
        {"copper_thickness", "thickness of the copper spreader", "m", 1e3, "mm"},
        {"die_attach_solder_thickness", "thickness of the die-attach solder", "m", 1e3, "mm"},
        {"silicon_thickness", "thickness of the silicon chips", "m", 1e3, "mm"},
        {"heat_transfer_coefficient", "heat-transfer coefficient of the cold plate", "W/(m2 K)", 1.0, "W/(m2 K)"},
        {"chip_a_power", "power of chip A", "W/m", 1.0, "W/m"},
        {"chip_b_power", "power of chip B", "W/m", 1.0, "W/m"},
        {"chip_c_power", "power of chip C", "W/m", 1.0, "W/m"},
    }};
    return table;
  }

  /// R(T, p) of the file comment for doubles or dual numbers; writes every entry of r.
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& t, const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& p,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    if (p.size() != parameter_count() || t.size() != unknowns() || r.size() != unknowns()) {
      throw std::invalid_argument("baseplate_design_study: T, p or R has the wrong size");
    }
    std::array<Scalar, layer_count + 1> row_height;
    for (int layer = 0; layer <= layer_count; ++layer) {
      const Scalar thickness =
          layer < layer_count ? p(thickness_first + layer) : Scalar(m_nominal_thickness[layer_count]);
      row_height[static_cast<std::size_t>(layer)] = thickness / double(m_layer_rows[static_cast<std::size_t>(layer)]);
    }
    const auto& table = material_table();
    const auto conductivity = [&](Eigen::Index cell) {
      using std::pow;
      const int region = m_region(cell);
      const baseplate_material& m = table[static_cast<std::size_t>(region)];
      const Scalar& temperature = t(cell);
      Scalar k = p(conductivity_first + region) * (1.0 + m.slope * (temperature - 300.0));
      if (m.exponent != 0.0) k = k * pow(Scalar(300.0) / temperature, m.exponent);
      return k;
    };
    const double dx = m_dx;
    const Scalar& film = p(film_coefficient_index);
    const Eigen::Index nx = m_nx;
    for (Eigen::Index c = 0; c < unknowns(); ++c) {
      const int chip = m_chip[static_cast<std::size_t>(c)];
      r(c) = chip >= 0 ? Scalar(-p(power_first + chip) / double(m_chip_cells[static_cast<std::size_t>(chip)].size()))
                       : Scalar(0.0);
    }
    for (int j = 0; j < m_ny; ++j) {
      const Scalar& height = row_height[static_cast<std::size_t>(m_layer_of_row[static_cast<std::size_t>(j)])];
      for (int i = 0; i < m_nx; ++i) {
        const Eigen::Index c = index(i, j);
        const Scalar kc = conductivity(c);
        if (i + 1 < m_nx) {
          const Scalar kq = conductivity(c + 1);
          const Scalar f = height * (2.0 * kc * kq / (kc + kq)) * (t(c) - t(c + 1)) / dx;
          r(c) += f;
          r(c + 1) -= f;
        }
        if (j + 1 < m_ny) {
          const Scalar& above = row_height[static_cast<std::size_t>(m_layer_of_row[static_cast<std::size_t>(j + 1)])];
          const Scalar kq = conductivity(c + nx);
          const Scalar f = dx * (t(c) - t(c + nx)) / (0.5 * height / kc + 0.5 * above / kq);
          r(c) += f;
          r(c + nx) -= f;
        }
        if (j == 0 && m_cooled[static_cast<std::size_t>(i)]) {
          r(c) += dx * (t(c) - m_design.coolant_temperature) / (1.0 / film + 0.5 * height / kc);
        }
      }
    }
  }

  /// Heat leaving through the cooled face, W per metre of depth (equals Σ chip powers at convergence).
  double heat_removed(const Eigen::VectorXd& t, const Eigen::VectorXd& p) const {
    const double height = p(thickness_first) / m_layer_rows[0];
    const baseplate_material& m = material_table()[aluminium];
    double total = 0.0;
    for (int i = 0; i < m_nx; ++i) {
      if (!m_cooled[static_cast<std::size_t>(i)]) continue;
      const double temperature = t(index(i, 0));
      const double k = p(conductivity_first + aluminium) * (1.0 + m.slope * (temperature - 300.0));
      total +=
          m_dx * (temperature - m_design.coolant_temperature) / (1.0 / p(film_coefficient_index) + 0.5 * height / k);
    }
    return total;
  }

 private:
  int m_nx, m_ny = 0;
  baseplate_design m_design;
  double m_dx = 0.0;
  std::array<double, layer_count + 1> m_nominal_thickness{};
  std::array<int, layer_count + 1> m_layer_rows{};
  std::vector<int> m_layer_of_row;
  Eigen::VectorXi m_region;
  std::vector<int> m_chip;
  std::vector<std::vector<Eigen::Index>> m_chip_cells;
  std::vector<bool> m_cooled;
  nkit::sparsity_pattern m_pattern;
};

/// A smooth peak temperature of one chip: the Kreisselmeier–Steinhauser soft
/// maximum over the chip's N silicon cells (equal areas, weights 1/N),
///   J(T) = M + (1/ρ) ln( (1/N) Σ_P exp(ρ (T_P − M)) ),   M = max_P T_P,
/// G. Kreisselmeier and R. Steinhauser, "Systematic control design by
/// optimizing a vector performance index", IFAC Proceedings 12(7), 1979
/// (from memory); aggregating a maximum this way (or by a p-norm) is common
/// practice in gradient-based thermal and stress design. The shift by M
/// only avoids overflow: J is a smooth function of T (M cancels). Bounds:
/// mean ≤ J ≤ max and max − J ≤ ln(N)/ρ; in practice the gap is much
/// smaller because the hot spot spans many cells (the example prints it).
/// ∂J/∂T_P = exp(ρ (T_P − J))/N (the soft-max weights, Σ = 1); ∂J/∂p = 0.
class chip_peak_temperature {
 public:
  /// `sharpness` ρ in 1/K.
  chip_peak_temperature(const baseplate_design_study& study, std::size_t chip, double sharpness)
      : m_cells(&study.chip_cells(chip)), m_sharpness(sharpness) {
    if (!(sharpness > 0.0)) throw std::invalid_argument("chip_peak_temperature: sharpness must be > 0");
  }
  double operator()(const Eigen::VectorXd& t, const Eigen::VectorXd& /*p*/) const {
    double largest = -HUGE_VAL;
    for (const Eigen::Index c : *m_cells) largest = std::max(largest, t(c));
    double sum = 0.0;
    for (const Eigen::Index c : *m_cells) sum += std::exp(m_sharpness * (t(c) - largest));
    return largest + std::log(sum / static_cast<double>(m_cells->size())) / m_sharpness;
  }
  void state_gradient(const Eigen::VectorXd& t, const Eigen::VectorXd& p, Eigen::VectorXd& g) const {
    const double value = (*this)(t, p);
    g = Eigen::VectorXd::Zero(t.size());
    for (const Eigen::Index c : *m_cells) {
      g(c) = std::exp(m_sharpness * (t(c) - value)) / static_cast<double>(m_cells->size());
    }
  }
  void parameter_gradient(const Eigen::VectorXd& /*t*/, const Eigen::VectorXd& p, Eigen::VectorXd& g) const {
    g = Eigen::VectorXd::Zero(p.size());
  }
  /// The plain maximum over the chip's cells (not smooth), for comparison.
  double largest(const Eigen::VectorXd& t) const {
    double largest = -HUGE_VAL;
    for (const Eigen::Index c : *m_cells) largest = std::max(largest, t(c));
    return largest;
  }

 private:
  const std::vector<Eigen::Index>* m_cells;
  double m_sharpness;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_HEAT_BASEPLATE_DESIGN_STUDY_HPP
