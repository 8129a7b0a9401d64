// Non-equilibrium gray radiation diffusion on a rectangle with two materials:
// the model of gray_radiation_diffusion.hpp (radiation energy E and material
// temperature T, coupled by emission and absorption, dimensionless form)
//   ∂E/∂t − ∇·(D_r ∇E) =  σ_a (T⁴ − E)
//   ∂T/∂t − ∇·(D_t ∇T) = −σ_a (T⁴ − E)
//   σ_a = z³/T³,  D_r = 1/(3σ_a),  D_t = κ T^(5/2),
// on the unit square, with the atomic number z depending on the material.
//
// Scenario (OUR OWN, INVENTED DATA, for demonstration and benchmarking only:
// it describes no real target or material): a "radiatively heated layered
// target". Low-Z material (z = 1, as in the 1-D Marshak wave) fills the
// square; a rectangular layer of high-Z material (default z = 5, cells whose
// centre lies in [0.1, 0.25] × [0, 0.6]) stands in the way of the wave. The
// left side x = 0 is driven by the incoming flux q (the Marshak condition of
// the 1-D problem, ¼E − (1/(6σ_a)) ∂x E = q), the right side x = 1 is a vacuum
// boundary (¼E + (1/(6σ_a)) ∂x E = 0), top and bottom are insulated (zero flux
// of E and T); ∂n T = 0 on every side. E(x, 0) = 1e-5, T = E^(1/4). The wave
// runs fast through the low-Z material and slowly through the opaque layer
// (D_r is z³ = 125 times smaller there at equal T), so the front wraps around
// the layer: a genuinely two-dimensional front.
//
// Discretisation: cell-centred finite volumes on nx × ny cells of size
// hx × hy, cell (i, j) is c = i + nx·j (i fastest); unknowns interleaved by
// cell (E_c at 2c, T_c at 2c + 1; nkit::field_layout with fields
// "radiation_energy" and "material_temperature"; the numbering of
// nkit::five_point_grid_pattern(nx, ny, 2)). With F the face fluxes of E and G
// of T (positive towards +x or +y):
//   dE_c/dt = (F_W − F_E)/hx + (F_S − F_N)/hy + σ_c (T_c⁴ − E_c)
//   dT_c/dt = (G_W − G_E)/hx + (G_S − G_N)/hy − σ_c (T_c⁴ − E_c)
//   F = −D_face (E_right − E_left)/h (h = hx or hy), G likewise with K_face.
// Face coefficients:
//   * between two cells of the same material (same z): the arithmetic mean of the two
//     cell values, exactly as in the 1-D header, for the reason given there
//     (the coefficient varies only through the solution, continuously, and the
//     harmonic mean lets the cold cell throttle the front);
//   * between cells of different materials (radiation only; D_t does not
//     depend on z): the harmonic mean 2 D_a D_b/(D_a + D_b), the coefficient
//     that makes the flux continuous across an interface lying midway between
//     two cell centres with piecewise-constant coefficients (S.V. Patankar,
//     Numerical Heat Transfer and Fluid Flow, 1980, §4.2.3, from memory). At
//     an opaque layer the arithmetic mean would be about half the low-Z value,
//     some 60 times too large, and would let radiation leak into the layer.
//   With the optional flux limiter (as in 1-D) D_face ← 1/(1/D_face +
//   |ΔE|/(h Ē)), ΔE the difference across the face (the normal component of
//   ∇E only, a common simplification in 2-D, common practice).
// Boundaries: on x = 0 the 1-D closure per row, F_in = 2D (4q − E)/(hx + 4D);
// on x = 1 F_out = 2D E/(hx + 4D) (D the unlimited coefficient of the boundary
// cell); zero flux on y = 0 and y = 1 and for T everywhere.
//
// What the discretisation conserves exactly (tests/test_radiation_diffusion.cpp):
// exchange terms cancel cell by cell and every interior face flux enters two
// cells with opposite signs, so for EVERY state u
//   hx hy Σ_c (dE_c/dt + dT_c/dt) = P_in(u) − P_out(u),
//   P_in = hy Σ_j F_in,j,  P_out = hy Σ_j F_out,j,
// i.e. W = hx hy Σ_c (E_c + T_c) changes only through the left and right sides.
//
// Reduction to 1-D: with one material (layer_atomic_number equal to
// atomic_number) and a y-independent state, every y-face flux is exactly zero
// and each row computes the x-fluxes with the same formulas, in the same order,
// as gray_radiation_diffusion_1d with nx cells: each row reproduces the 1-D
// rate.
#ifndef NKIT_PROBLEMS_RADIATION_GRAY_RADIATION_DIFFUSION_2D_HPP
#define NKIT_PROBLEMS_RADIATION_GRAY_RADIATION_DIFFUSION_2D_HPP

#include <Eigen/Core>
#include <cmath>
#include <limits>
#include <nkit/fields/field_layout.hpp>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "problems/radiation/gray_radiation_diffusion.hpp"

namespace nkit_problems {

/// Parameters of the 2-D layered target (invented data, see above).
struct layered_target_parameters {
  /// The low-Z material and the drive (atomic_number is the low-Z z).
  gray_radiation_parameters material{};
  double layer_atomic_number = 5.0;  ///< z of the high-Z layer (invented)
  double layer_left = 0.1;           ///< the layer: cells whose centre lies in
  double layer_right = 0.25;         ///< [layer_left, layer_right] ×
  double layer_bottom = 0.0;         ///< [layer_bottom, layer_top]
  double layer_top = 0.6;

  void validate() const {
    material.validate();
    if (!(layer_atomic_number > 0.0 && std::isfinite(layer_atomic_number))) {
      throw std::invalid_argument("layered_target_parameters.layer_atomic_number must be finite and > 0 (got " +
                                  std::to_string(layer_atomic_number) + ")");
    }
    if (!(layer_left <= layer_right) || !(layer_bottom <= layer_top)) {
      throw std::invalid_argument(
          "layered_target_parameters: the layer needs layer_left <= layer_right and "
          "layer_bottom <= layer_top");
    }
  }
  /// One material everywhere (the layer has the background z): y-independent data.
  static layered_target_parameters uniform(gray_radiation_parameters material = {}) {
    layered_target_parameters p;
    p.material = material;
    p.layer_atomic_number = material.atomic_number;
    return p;
  }
};

/// The 2-D two-field problem in nkit's time form du/dt = f(t, u): rate(),
/// field_layout(), jacobian_pattern() (five-point, 2 unknowns per cell; nkit
/// assembles ∂f/∂u by colored differences). rate() uses work arrays held by
/// the object (allocated in the constructor: no allocation per call, but one
/// object must not be evaluated from two threads at once). A state with
/// T_c <= 0 (or E_c <= 0 with the limiter) is outside the model: rate() then
/// returns NaN in that cell, which nkit's Newton driver rejects.
class gray_radiation_diffusion_2d {
 public:
  gray_radiation_diffusion_2d(int cells_x, int cells_y, layered_target_parameters parameters = {})
      : m_nx(cells_x),
        m_ny(cells_y),
        m_parameters(parameters),
        m_layout({{"radiation_energy", 1}, {"material_temperature", 1}}, checked_cells(cells_x, cells_y),
                 nkit::field_ordering::interleaved_by_cell),
        m_pattern(nkit::five_point_grid_pattern(cells_x, cells_y, 2)) {
    m_parameters.validate();
    m_hx = 1.0 / cells_x;
    m_hy = 1.0 / cells_y;
    const int n = cells();
    m_atomic_cubed.resize(n);
    m_layer.assign(static_cast<std::size_t>(n), 0);
    for (int j = 0; j < m_ny; ++j) {
      for (int i = 0; i < m_nx; ++i) {
        const double x = (i + 0.5) * m_hx, y = (j + 0.5) * m_hy;
        const bool inside = x >= m_parameters.layer_left && x <= m_parameters.layer_right &&
                            y >= m_parameters.layer_bottom && y <= m_parameters.layer_top;
        const double z = inside ? m_parameters.layer_atomic_number : m_parameters.material.atomic_number;
        m_layer[static_cast<std::size_t>(i + m_nx * j)] = inside ? 1 : 0;
        m_atomic_cubed(i + m_nx * j) = z * z * z;
      }
    }
    m_diffusion.resize(n);
    m_conduction.resize(n);
  }

  int cells_x() const { return m_nx; }
  int cells_y() const { return m_ny; }
  int cells() const { return m_nx * m_ny; }
  double cell_width_x() const { return m_hx; }
  double cell_width_y() const { return m_hy; }
  Eigen::Index unknowns() const { return 2 * static_cast<Eigen::Index>(cells()); }
  int cell(int i, int j) const { return i + m_nx * j; }
  double cell_centre_x(int i) const { return (i + 0.5) * m_hx; }
  double cell_centre_y(int j) const { return (j + 0.5) * m_hy; }
  /// True for cells of the high-Z layer.
  bool in_layer(int i, int j) const { return m_layer[static_cast<std::size_t>(cell(i, j))] != 0; }
  const layered_target_parameters& parameters() const { return m_parameters; }
  const nkit::field_layout& field_layout() const { return m_layout; }
  const nkit::sparsity_pattern& jacobian_pattern() const { return m_pattern; }

  static double energy(const Eigen::VectorXd& u, int c) { return u(2 * c); }
  static double temperature(const Eigen::VectorXd& u, int c) { return u(2 * c + 1); }

  /// E = initial_radiation_energy, T = E^(1/4) in every cell.
  Eigen::VectorXd initial_state() const {
    Eigen::VectorXd u(unknowns());
    const double e0 = m_parameters.material.initial_radiation_energy;
    for (int c = 0; c < cells(); ++c) {
      u(2 * c) = e0;
      u(2 * c + 1) = std::pow(e0, 0.25);
    }
    return u;
  }

  /// Radiation power into the domain through x = 0, P_in = hy Σ_j F_in,j.
  double inflow(const Eigen::VectorXd& u) const {
    double sum = 0.0;
    for (int j = 0; j < m_ny; ++j) sum += boundary_inflow(u, cell(0, j));
    return m_hy * sum;
  }
  /// Radiation power out of the domain through x = 1, P_out = hy Σ_j F_out,j.
  double outflow(const Eigen::VectorXd& u) const {
    double sum = 0.0;
    for (int j = 0; j < m_ny; ++j) sum += boundary_outflow(u, cell(m_nx - 1, j));
    return m_hy * sum;
  }
  /// W = hx hy Σ_c (E_c + T_c), the total energy.
  double total_energy(const Eigen::VectorXd& u) const {
    double sum = 0.0;
    for (int c = 0; c < cells(); ++c) sum += energy(u, c) + temperature(u, c);
    return m_hx * m_hy * sum;
  }

  /// f(t, u): the rates above (f sized like u; t unused, the problem is autonomous).
  void rate(double /*t*/, const Eigen::VectorXd& u, Eigen::VectorXd& f) const {
    if (f.size() != u.size()) f.resize(u.size());
    const double nan = std::numeric_limits<double>::quiet_NaN();
    const bool limited = m_parameters.material.flux_limiter;
    const double kappa = m_parameters.material.conduction_coefficient;
    const int n = cells();
    for (int c = 0; c < n; ++c) {
      const double t = temperature(u, c);
      // D_r = 1/(3σ) with σ = z³/T³, written as in the 1-D header (1/(3σ)) so that rows match it bit for bit.
      m_diffusion(c) = 1.0 / (3.0 * (m_atomic_cubed(c) / (t * t * t)));
      m_conduction(c) = kappa * t * t * std::sqrt(t);
      f(2 * c) = 0.0;
      f(2 * c + 1) = 0.0;
    }
    // x-faces, row by row, left to right (the order of the 1-D rate()).
    for (int j = 0; j < m_ny; ++j) {
      const int first = cell(0, j);
      double radiation_left = boundary_inflow(u, first), conduction_left = 0.0;
      for (int i = 0; i < m_nx; ++i) {
        const int c = first + i;
        const bool last = i + 1 == m_nx;
        const double radiation_right = last ? boundary_outflow(u, c) : radiation_flux(u, c, c + 1, m_hx, limited);
        const double conduction_right = last ? 0.0 : conduction_flux(u, c, c + 1, m_hx);
        f(2 * c) = (radiation_left - radiation_right) / m_hx;
        f(2 * c + 1) = (conduction_left - conduction_right) / m_hx;
        radiation_left = radiation_right;
        conduction_left = conduction_right;
      }
    }
    // y-faces (zero flux on y = 0 and y = 1).
    for (int j = 0; j + 1 < m_ny; ++j) {
      for (int i = 0; i < m_nx; ++i) {
        const int below = cell(i, j), above = below + m_nx;
        const double radiation = radiation_flux(u, below, above, m_hy, limited) / m_hy;
        const double conduction = conduction_flux(u, below, above, m_hy) / m_hy;
        f(2 * below) -= radiation;
        f(2 * above) += radiation;
        f(2 * below + 1) -= conduction;
        f(2 * above + 1) += conduction;
      }
    }
    // Exchange, and the cells outside the model.
    for (int c = 0; c < n; ++c) {
      const double e = energy(u, c), t = temperature(u, c);
      if (!(t > 0.0) || (limited && !(e > 0.0))) {
        f(2 * c) = nan;
        f(2 * c + 1) = nan;
        continue;
      }
      const double t2 = t * t;
      const double exchange = m_atomic_cubed(c) / (t2 * t) * (t2 * t2 - e);
      f(2 * c) += exchange;
      f(2 * c + 1) -= exchange;
    }
  }

  /// Position of the front along row j: the first x (linear interpolation
  /// between cell centres, from the left) where T falls below `level`; 0 when
  /// T of the first cell is below it, 1 when T stays above it.
  double front_position(const Eigen::VectorXd& u, int j, double level = 0.5) const {
    const int first = cell(0, j);
    if (temperature(u, first) < level) return 0.0;
    for (int i = 0; i + 1 < m_nx; ++i) {
      const double a = temperature(u, first + i), b = temperature(u, first + i + 1);
      if (b < level) return cell_centre_x(i) + m_hx * (a - level) / (a - b);
    }
    return 1.0;
  }
  /// Area (fraction of the unit square) where T >= level: a front measure that does not depend on a row.
  double heated_area(const Eigen::VectorXd& u, double level = 0.5) const {
    int count = 0;
    for (int c = 0; c < cells(); ++c) count += temperature(u, c) >= level ? 1 : 0;
    return count * m_hx * m_hy;
  }

 private:
  static int checked_cells(int cells_x, int cells_y) {
    if (cells_x < 2 || cells_y < 1) {
      throw std::invalid_argument("gray_radiation_diffusion_2d: cells must be >= 2 along x and >= 1 along y (got " +
                                  std::to_string(cells_x) + " x " + std::to_string(cells_y) + ")");
    }
    return cells_x * cells_y;
  }
  /// Unlimited D_r of cell c from T (independent of the work arrays).
  double cell_diffusion(const Eigen::VectorXd& u, int c) const {
    const double t = temperature(u, c);
    return 1.0 / (3.0 * (m_atomic_cubed(c) / (t * t * t)));
  }
  double boundary_inflow(const Eigen::VectorXd& u, int c) const {
    const double d = cell_diffusion(u, c);
    return 2.0 * d * (4.0 * m_parameters.material.incoming_flux - energy(u, c)) / (m_hx + 4.0 * d);
  }
  double boundary_outflow(const Eigen::VectorXd& u, int c) const {
    const double d = cell_diffusion(u, c);
    return 2.0 * d * energy(u, c) / (m_hx + 4.0 * d);
  }
  /// Radiation flux from cell a to cell b (b the +x or +y neighbour), h their distance.
  double radiation_flux(const Eigen::VectorXd& u, int a, int b, double h, bool limited) const {
    const double e_left = energy(u, a), e_right = energy(u, b);
    const double da = m_diffusion(a), db = m_diffusion(b);
    double d = m_atomic_cubed(a) == m_atomic_cubed(b) ? 0.5 * (da + db) : 2.0 * da * db / (da + db);
    if (limited) {
      const double mean = 0.5 * (e_left + e_right);
      d = 1.0 / (1.0 / d + std::abs(e_right - e_left) / (h * mean));
    }
    return -d * (e_right - e_left) / h;
  }
  double conduction_flux(const Eigen::VectorXd& u, int a, int b, double h) const {
    const double k = 0.5 * (m_conduction(a) + m_conduction(b));
    return -k * (temperature(u, b) - temperature(u, a)) / h;
  }

  int m_nx = 0, m_ny = 0;
  double m_hx = 0.0, m_hy = 0.0;
  layered_target_parameters m_parameters;
  nkit::field_layout m_layout;
  nkit::sparsity_pattern m_pattern;
  Eigen::VectorXd m_atomic_cubed;
  std::vector<char> m_layer;
  mutable Eigen::VectorXd m_diffusion, m_conduction;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_RADIATION_GRAY_RADIATION_DIFFUSION_2D_HPP
