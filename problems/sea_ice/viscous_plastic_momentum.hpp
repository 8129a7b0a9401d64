// Sea-ice momentum with the viscous-plastic rheology: one implicit (backward
// Euler) time step of the 2-D momentum equation on a regular B-grid, as a
// steady nkit residual R(u) = 0, with the frozen-viscosity (Picard) matrix
// that sea-ice codes iterate with, and conservative upwind advection of ice
// thickness and concentration between momentum solves.
//
// Momentum (W.D. Hibler III, "A dynamic thermodynamic sea ice model",
// J. Phys. Oceanogr. 9 (1979) 815–846, eq. 1; the form as in J.-F. Lemieux et
// al., "Improving the numerical convergence of viscous-plastic sea ice models
// with the Jacobian-free Newton–Krylov method", J. Comput. Phys. 229 (2010)
// 2840–2852, eqs. 1–9 — both from memory):
//   m ∂u/∂t = −m f k×u + τ_a + τ_w − m g ∇η_s + ∇·σ,      m = ρ_i h
//   τ_a = ρ_a C_a |U_a| U_a                    (quadratic air drag, no turning angle)
//   τ_w = ρ_w C_w |U_w − u| (U_w − u)          (quadratic water drag, no turning angle)
//   −m g ∇η_s = m f k×U_w                      (sea-surface tilt of a geostrophic ocean current)
// Viscous-plastic stress with the elliptical yield curve of ratio e = 2:
//   σ = 2η ε̇ + (ζ − η) tr(ε̇) I − (P_r/2) I,   η = ζ/e²
//   Δ = sqrt( (ε̇₁₁ + ε̇₂₂)² + e⁻² ((ε̇₁₁ − ε̇₂₂)² + 4 ε̇₁₂²) )
//   P = P* h exp(−C (1 − A)),  P* = 27.5 kN/m², C = 20           (Hibler 1979)
//   ζ = ζ_max tanh(P / (2 Δ ζ_max)),  ζ_max = P / (2 Δ_min)
// The tanh cap is the smooth form of Hibler's ζ = P/(2 max(Δ, Δ_min)) (J.-F.
// Lemieux & B. Tremblay, J. Geophys. Res. 114 (2009) C05009, from memory): it
// keeps R differentiable, which Newton needs. Δ_min = 2·10⁻⁹ s⁻¹ is Hibler's
// ζ_max = 2.5·10⁸ s · P (common practice). Replacement pressure P_r = 2ζΔ
// (W.D. Hibler III & C.F. Ip, Ann. Glaciol. 21 (1995) 197–204; M. Kreyscher
// et al., J. Geophys. Res. 105 (2000) 11299–11320; from memory), so that ice at
// rest (Δ = 0) carries no stress. Algebra (tests/test_sea_ice.cpp checks it):
// with P_r = 2ζΔ the stress lies exactly ON the ellipse of strength P_r, and
// since tanh(x) <= x, P_r = P (Δ/Δ_min) tanh(Δ_min/Δ) <= P: inside or on the
// ellipse of strength P, and P_r/P >= 1 − (Δ_min/Δ)²/3 where the ice deforms
// plastically (Δ ≫ Δ_min).
//
// Discretisation: n × n square cells of side d on a closed basin of side L;
// h, A and P at cell centres; both velocity components at the cell corners
// (Arakawa B-grid, as in Hibler 1979): Coriolis and drag act at the velocity
// points with no averaging, and the stress of a cell is computed once from its
// four corners. No-slip walls: the corners on the boundary hold u = 0 and are
// not unknowns; the (n−1)² interior corners hold (u, v), interleaved.
// Strain rates in cell (i, j) from its corners (00 lower left, 10 lower right,
// 01 upper left, 11 upper right):
//   ε̇₁₁ = (u₁₀ + u₁₁ − u₀₀ − u₀₁)/(2d),  ε̇₂₂ = (v₀₁ + v₁₁ − v₀₀ − v₁₀)/(2d),
//   ε̇₁₂ = ½[(u₀₁ + u₁₁ − u₀₀ − u₁₀)/(2d) + (v₁₀ + v₁₁ − v₀₀ − v₀₁)/(2d)].
// The stress divergence at a corner is the exact negative transpose of that
// strain operator: a cell adds (s_x σ₁₁ + s_y σ₁₂, s_x σ₁₂ + s_y σ₂₂)/(2d) to each
// of its corners, s_x = +1 when the cell lies to the corner's right (−1 to its
// left), s_y likewise upward. Hence, summing by parts, for every u
//   Σ_corners u·(∇·σ) d² = −Σ_cells σ:ε̇ d²            (the work identity)
// and the frozen-viscosity operator is symmetric positive semi-definite
// (common practice for energy-consistent B-grid stencils). The averaging lets
// a checkerboard velocity escape the strain operator; the mass and water-drag
// terms hold it.
// Residual per interior corner (N/m², one backward-Euler step of Δt):
//   R = m (u − u_old)/Δt + m f k×(u − U_w) − τ_a − τ_w(u) − ∇·σ(u).
// Frozen-viscosity (Picard) form R(u) = A(û) u − b(û): ζ, η, P_r and the
// water-drag coefficient ρ_w C_w |U_w − û| taken at û (Hibler 1979; Lemieux et
// al. 2010 call it the outer loop).
//
// The physical constants are those of Hibler 1979 and Lemieux et al. 2010
// (from memory except P* and C, which the momentum form above quotes); the
// forcing is set by the caller (problems/sea_ice/cyclone_basin.hpp holds our
// invented demonstration scenario).
#ifndef NKIT_PROBLEMS_SEA_ICE_VISCOUS_PLASTIC_MOMENTUM_HPP
#define NKIT_PROBLEMS_SEA_ICE_VISCOUS_PLASTIC_MOMENTUM_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <algorithm>
#include <array>
#include <cmath>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <stdexcept>
#include <string>
#include <vector>

namespace nkit_problems {

struct sea_ice_parameters {
  double ice_density = 900.0;         ///< ρ_i, kg/m³ (from memory)
  double air_density = 1.3;           ///< ρ_a, kg/m³ (from memory)
  double water_density = 1026.0;      ///< ρ_w, kg/m³ (from memory)
  double air_drag = 1.2e-3;           ///< C_a (from memory)
  double water_drag = 5.5e-3;         ///< C_w (from memory)
  double coriolis = 1.46e-4;          ///< f, s⁻¹ (about 80° N; from memory)
  double ice_strength = 27.5e3;       ///< P*, N/m² (Hibler 1979)
  double concentration_decay = 20.0;  ///< C (Hibler 1979)
  double ellipse_ratio = 2.0;         ///< e (Hibler 1979)
  double minimum_deformation = 2e-9;  ///< Δ_min, s⁻¹ (Hibler 1979's ζ_max = 2.5e8 s · P)
  bool replacement_pressure = true;   ///< P_r = 2ζΔ instead of P in the stress
  double minimum_thickness = 0.01;    ///< m: floor of h in the mass (open water keeps a little inertia)
  void validate() const {
    const auto positive = [](const char* name, double value) {
      if (!(value > 0.0) || !std::isfinite(value)) {
        throw std::invalid_argument(std::string("sea_ice_parameters.") + name + " must be finite and > 0 (got " +
                                    std::to_string(value) + ")");
      }
    };
    positive("ice_density", ice_density);
    positive("air_density", air_density);
    positive("water_density", water_density);
    positive("air_drag", air_drag);
    positive("water_drag", water_drag);
    positive("ice_strength", ice_strength);
    positive("concentration_decay", concentration_decay);
    positive("ellipse_ratio", ellipse_ratio);
    positive("minimum_deformation", minimum_deformation);
    positive("minimum_thickness", minimum_thickness);
    if (!std::isfinite(coriolis)) throw std::invalid_argument("sea_ice_parameters.coriolis must be finite");
  }
};

/// The stress state of one cell and the quantities it came from.
struct sea_ice_cell_stress {
  double sigma11 = 0.0, sigma22 = 0.0, sigma12 = 0.0;  ///< N/m
  double deformation = 0.0;                            ///< Δ, s⁻¹
  double bulk_viscosity = 0.0;                         ///< ζ, kg/s
  double strength = 0.0;                               ///< P, N/m
  double pressure = 0.0;                               ///< the P_r (or P) the stress uses, N/m
};

class sea_ice_momentum {
 public:
  /// n × n cells on a square basin of side `basin_length` metres.
  sea_ice_momentum(int cells_per_side, double basin_length, sea_ice_parameters parameters = {})
      : m_n(cells_per_side), m_parameters(parameters) {
    if (cells_per_side < 3) {
      throw std::invalid_argument("sea_ice_momentum: cells_per_side must be >= 3 (got " +
                                  std::to_string(cells_per_side) + ")");
    }
    if (!(basin_length > 0.0) || !std::isfinite(basin_length)) {
      throw std::invalid_argument("sea_ice_momentum: basin_length must be finite and > 0 (got " +
                                  std::to_string(basin_length) + ")");
    }
    m_parameters.validate();
    m_d = basin_length / cells_per_side;
    const int cells = m_n * m_n;
    m_thickness = Eigen::VectorXd::Constant(cells, 1.0);
    m_concentration = Eigen::VectorXd::Constant(cells, 1.0);
    m_strength.resize(cells);
    m_mass.resize(interior_corners());
    m_old_velocity = Eigen::VectorXd::Zero(unknowns());
    m_wind = Eigen::VectorXd::Zero(unknowns());
    m_ocean = Eigen::VectorXd::Zero(unknowns());
    m_pattern = nkit::nine_point_grid_pattern(m_n - 1, m_n - 1, 2);
    update_cell_quantities();
  }

  int cells_per_side() const { return m_n; }
  double cell_size() const { return m_d; }
  int interior_corners() const { return (m_n - 1) * (m_n - 1); }
  Eigen::Index unknowns() const { return 2 * static_cast<Eigen::Index>(interior_corners()); }
  const sea_ice_parameters& parameters() const { return m_parameters; }
  const nkit::sparsity_pattern& jacobian_pattern() const { return m_pattern; }
  /// Unknown index of component c (0 = u, 1 = v) at corner (a, b), 0 < a, b < n.
  Eigen::Index index(int a, int b, int c) const {
    return 2 * static_cast<Eigen::Index>((a - 1) + (m_n - 1) * (b - 1)) + c;
  }
  /// Position (metres) of corner (a, b).
  double corner_x(int a) const { return a * m_d; }
  double cell_centre(int i) const { return (i + 0.5) * m_d; }

  // ---- state of the ice and forcing (set by the caller between steps) ----
  const Eigen::VectorXd& thickness() const { return m_thickness; }          ///< h per cell, m (cell i + n j)
  const Eigen::VectorXd& concentration() const { return m_concentration; }  ///< A per cell, in [0, 1]
  /// Sets h and A per cell (h >= 0, 0 <= A <= 1) and recomputes P and the corner masses.
  void set_ice(const Eigen::VectorXd& thickness, const Eigen::VectorXd& concentration) {
    if (thickness.size() != m_thickness.size() || concentration.size() != m_concentration.size()) {
      throw std::invalid_argument("sea_ice_momentum::set_ice: thickness and concentration need one entry per cell (" +
                                  std::to_string(m_thickness.size()) + ")");
    }
    for (Eigen::Index k = 0; k < thickness.size(); ++k) {
      if (!(thickness(k) >= 0.0) || !(concentration(k) >= 0.0 && concentration(k) <= 1.0)) {
        throw std::invalid_argument("sea_ice_momentum::set_ice: cell " + std::to_string(k) +
                                    " needs h >= 0 and 0 <= A <= 1 (got h = " + std::to_string(thickness(k)) +
                                    ", A = " + std::to_string(concentration(k)) + ")");
      }
    }
    m_thickness = thickness;
    m_concentration = concentration;
    update_cell_quantities();
  }
  /// Wind and ocean velocity (m/s) at the interior corners, laid out like u.
  Eigen::VectorXd& wind() { return m_wind; }
  Eigen::VectorXd& ocean() { return m_ocean; }
  const Eigen::VectorXd& wind() const { return m_wind; }
  const Eigen::VectorXd& ocean() const { return m_ocean; }
  /// Velocity at the start of the step and the step Δt (s); Δt = +inf solves the steady momentum balance.
  void set_step(const Eigen::VectorXd& old_velocity, double time_step) {
    if (old_velocity.size() != unknowns()) {
      throw std::invalid_argument("sea_ice_momentum::set_step: old_velocity needs " + std::to_string(unknowns()) +
                                  " entries (got " + std::to_string(old_velocity.size()) + ")");
    }
    if (!(time_step > 0.0)) {
      throw std::invalid_argument("sea_ice_momentum::set_step: time_step must be > 0 (got " +
                                  std::to_string(time_step) + ")");
    }
    m_old_velocity = old_velocity;
    m_inverse_time_step = std::isinf(time_step) ? 0.0 : 1.0 / time_step;
  }

  // ---- the residual ----
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    r.resize(unknowns());
    pointwise_terms(u, r);
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const sea_ice_cell_stress s = cell_stress(u, i, j);
        add_divergence(i, j, s.sigma11, s.sigma22, s.sigma12, -1.0, r);
      }
    }
  }

  /// ∇·σ(u) at the interior corners (N/m²), laid out like u.
  void stress_divergence(const Eigen::VectorXd& u, Eigen::VectorXd& divergence) const {
    divergence = Eigen::VectorXd::Zero(unknowns());
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const sea_ice_cell_stress s = cell_stress(u, i, j);
        add_divergence(i, j, s.sigma11, s.sigma22, s.sigma12, 1.0, divergence);
      }
    }
  }
  /// Σ_cells σ:ε̇ d² (W per metre... per unit depth of ice column: N m/s over the basin).
  double stress_power(const Eigen::VectorXd& u) const {
    double total = 0.0;
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const std::array<double, 3> e = strain_rates(u, i, j);
        const sea_ice_cell_stress s = cell_stress(u, i, j);
        total += s.sigma11 * e[0] + s.sigma22 * e[1] + 2.0 * s.sigma12 * e[2];
      }
    }
    return total * m_d * m_d;
  }

  /// (ε̇₁₁, ε̇₂₂, ε̇₁₂) of cell (i, j), s⁻¹.
  std::array<double, 3> strain_rates(const Eigen::VectorXd& u, int i, int j) const {
    const std::array<double, 8> c = corners(u, i, j);  // u00 v00 u10 v10 u01 v01 u11 v11
    const double inv = 1.0 / (2.0 * m_d);
    const double e11 = (c[2] + c[6] - c[0] - c[4]) * inv;
    const double e22 = (c[5] + c[7] - c[1] - c[3]) * inv;
    const double e12 = 0.5 * ((c[4] + c[6] - c[0] - c[2]) * inv + (c[3] + c[7] - c[1] - c[5]) * inv);
    return {e11, e22, e12};
  }

  /// The viscous-plastic stress of cell (i, j) at velocity u (see the file comment).
  sea_ice_cell_stress cell_stress(const Eigen::VectorXd& u, int i, int j) const {
    const std::array<double, 3> e = strain_rates(u, i, j);
    sea_ice_cell_stress s;
    s.strength = m_strength(i + m_n * j);
    const double inv_e2 = 1.0 / (m_parameters.ellipse_ratio * m_parameters.ellipse_ratio);
    const double trace = e[0] + e[1];
    const double shear2 = (e[0] - e[1]) * (e[0] - e[1]) + 4.0 * e[2] * e[2];
    s.deformation = std::sqrt(trace * trace + inv_e2 * shear2);
    s.bulk_viscosity = bulk_viscosity(s.strength, s.deformation);
    const double zeta = s.bulk_viscosity;
    const double eta = zeta * inv_e2;
    s.pressure = m_parameters.replacement_pressure ? 2.0 * zeta * s.deformation : s.strength;
    s.sigma11 = (zeta + eta) * e[0] + (zeta - eta) * e[1] - 0.5 * s.pressure;
    s.sigma22 = (zeta - eta) * e[0] + (zeta + eta) * e[1] - 0.5 * s.pressure;
    s.sigma12 = 2.0 * eta * e[2];
    return s;
  }

  /// ζ = ζ_max tanh(P/(2Δζ_max)), ζ_max = P/(2Δ_min); ζ_max at Δ = 0.
  double bulk_viscosity(double strength, double deformation) const {
    const double dmin = m_parameters.minimum_deformation;
    const double zeta_max = strength / (2.0 * dmin);
    if (deformation <= 0.0) return zeta_max;
    return zeta_max * std::tanh(dmin / deformation);
  }

  /// Hibler's elliptical yield function of a stress state for strength P:
  /// ((σ_I + P/2)/(P/2))² + (σ_II/(P/(2e)))², σ_I = (σ₁₁ + σ₂₂)/2,
  /// σ_II = sqrt(((σ₁₁ − σ₂₂)/2)² + σ₁₂²): <= 1 inside or on the yield curve.
  double yield_function(const sea_ice_cell_stress& s, double strength) const {
    const double half = 0.5 * strength;
    const double sigma_i = 0.5 * (s.sigma11 + s.sigma22);
    const double sigma_ii = std::sqrt(0.25 * (s.sigma11 - s.sigma22) * (s.sigma11 - s.sigma22) + s.sigma12 * s.sigma12);
    const double a = (sigma_i + half) / half;
    const double b = sigma_ii * m_parameters.ellipse_ratio / half;
    return a * a + b * b;
  }

  // ---- the frozen-viscosity (Picard) operator ----
  /// R(u) = A(û) u − b(û): fills `matrix` (pattern kept between calls: no
  /// reallocation after the first) and `right_hand_side`.
  void assemble_frozen_viscosity(const Eigen::VectorXd& frozen, Eigen::SparseMatrix<double>& matrix,
                                 Eigen::VectorXd& right_hand_side) const {
    if (matrix.rows() != unknowns() || matrix.nonZeros() == 0) matrix = structure();
    matrix.coeffs().setZero();
    right_hand_side.resize(unknowns());
    const double f = m_parameters.coriolis;
    for (int b = 1; b < m_n; ++b) {
      for (int a = 1; a < m_n; ++a) {
        const Eigen::Index x = index(a, b, 0), y = x + 1;
        const double m = m_mass(x / 2);
        const double cw = water_coefficient(frozen, x);
        matrix.coeffRef(x, x) += m * m_inverse_time_step + cw;
        matrix.coeffRef(y, y) += m * m_inverse_time_step + cw;
        matrix.coeffRef(x, y) += -m * f;
        matrix.coeffRef(y, x) += m * f;
        const std::array<double, 2> ta = air_stress(x);
        right_hand_side(x) = m * m_inverse_time_step * m_old_velocity(x) - m * f * m_ocean(y) + ta[0] + cw * m_ocean(x);
        right_hand_side(y) = m * m_inverse_time_step * m_old_velocity(y) + m * f * m_ocean(x) + ta[1] + cw * m_ocean(y);
      }
    }
    const double inv_e2 = 1.0 / (m_parameters.ellipse_ratio * m_parameters.ellipse_ratio);
    const double inv = 1.0 / (2.0 * m_d);
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const sea_ice_cell_stress s = cell_stress(frozen, i, j);
        const double zeta = s.bulk_viscosity, eta = zeta * inv_e2;
        // −∇·(−P_r/2 I) frozen at û goes to the right-hand side: b += ∇·(−P_r/2 I).
        add_divergence(i, j, -0.5 * s.pressure, -0.5 * s.pressure, 0.0, 1.0, right_hand_side);
        // Columns of −∇·σ_viscous: one local unknown at a time (corner c, component k).
        for (int q = 0; q < 8; ++q) {
          const int ca = i + (q / 2) % 2, cb = j + q / 4;
          if (!interior(ca, cb)) continue;
          const Eigen::Index column = index(ca, cb, q % 2);
          // Strain rates of a unit value of local unknown q (see strain_rates()).
          const double sx = (q / 2) % 2 == 1 ? 1.0 : -1.0, sy = q / 4 == 1 ? 1.0 : -1.0;
          const double e11 = q % 2 == 0 ? sx * inv : 0.0;
          const double e22 = q % 2 == 1 ? sy * inv : 0.0;
          const double e12 = 0.5 * (q % 2 == 0 ? sy * inv : sx * inv);
          const double s11 = (zeta + eta) * e11 + (zeta - eta) * e22;
          const double s22 = (zeta - eta) * e11 + (zeta + eta) * e22;
          const double s12 = 2.0 * eta * e12;
          for_each_interior_corner(i, j, [&](Eigen::Index row_x, double cx, double cy) {
            matrix.coeffRef(row_x, column) -= (cx * s11 + cy * s12) * inv;
            matrix.coeffRef(row_x + 1, column) -= (cx * s12 + cy * s22) * inv;
          });
        }
      }
    }
  }

  // ---- transport of h and A between momentum solves ----
  /// One explicit step of conservative first-order upwind advection of h and
  /// A·(cell area) with the face velocities (the mean of each face's two
  /// corners; walls carry no flux), then A capped at 1 (a stand-in for ridging;
  /// common practice in simple models). Throws when the Courant number
  /// max |u| Δt / d exceeds 1/2.
  void advect_ice(const Eigen::VectorXd& u, double time_step) {
    const double courant = u.cwiseAbs().maxCoeff() * time_step / m_d;
    if (courant > 0.5) {
      throw std::invalid_argument("sea_ice_momentum::advect_ice: Courant number " + std::to_string(courant) +
                                  " exceeds 1/2; take smaller transport steps");
    }
    Eigen::VectorXd h = m_thickness, a = m_concentration;
    const double ratio = time_step / m_d;
    const auto corner_value = [&](int ca, int cb, int c) { return interior(ca, cb) ? u(index(ca, cb, c)) : 0.0; };
    for (int j = 0; j < m_n; ++j) {
      for (int i = 0; i + 1 < m_n; ++i) {  // x faces between cell (i, j) and (i + 1, j)
        const double w = 0.5 * (corner_value(i + 1, j, 0) + corner_value(i + 1, j + 1, 0)) * ratio;
        const int from = w > 0.0 ? i + m_n * j : i + 1 + m_n * j;
        transfer(i + m_n * j, i + 1 + m_n * j, w * m_thickness(from), w * m_concentration(from), h, a);
      }
    }
    for (int j = 0; j + 1 < m_n; ++j) {
      for (int i = 0; i < m_n; ++i) {  // y faces between cell (i, j) and (i, j + 1)
        const double w = 0.5 * (corner_value(i, j + 1, 1) + corner_value(i + 1, j + 1, 1)) * ratio;
        const int from = w > 0.0 ? i + m_n * j : i + m_n * (j + 1);
        transfer(i + m_n * j, i + m_n * (j + 1), w * m_thickness(from), w * m_concentration(from), h, a);
      }
    }
    m_thickness = h.cwiseMax(0.0);
    m_concentration = a.cwiseMax(0.0).cwiseMin(1.0);
    update_cell_quantities();
  }

 private:
  bool interior(int a, int b) const { return a > 0 && b > 0 && a < m_n && b < m_n; }

  std::array<double, 8> corners(const Eigen::VectorXd& u, int i, int j) const {
    std::array<double, 8> c{};
    for (int q = 0; q < 4; ++q) {
      const int ca = i + q % 2, cb = j + q / 2;
      if (interior(ca, cb)) {
        c[2 * q] = u(index(ca, cb, 0));
        c[2 * q + 1] = u(index(ca, cb, 1));
      }
    }
    return c;
  }

  /// Calls visit(x index, s_x, s_y) for each interior corner of cell (i, j).
  template <class Visit>
  void for_each_interior_corner(int i, int j, Visit&& visit) const {
    for (int q = 0; q < 4; ++q) {
      const int ca = i + q % 2, cb = j + q / 2;
      if (!interior(ca, cb)) continue;
      // The cell lies to the right of its left corners (s_x = +1) and above its lower corners (s_y = +1).
      visit(index(ca, cb, 0), q % 2 == 0 ? 1.0 : -1.0, q / 2 == 0 ? 1.0 : -1.0);
    }
  }

  /// target += sign · (cell (i, j)'s share of ∇·σ) at its interior corners.
  void add_divergence(int i, int j, double s11, double s22, double s12, double sign, Eigen::VectorXd& target) const {
    const double inv = sign / (2.0 * m_d);
    for_each_interior_corner(i, j, [&](Eigen::Index x, double cx, double cy) {
      target(x) += (cx * s11 + cy * s12) * inv;
      target(x + 1) += (cx * s12 + cy * s22) * inv;
    });
  }

  double water_coefficient(const Eigen::VectorXd& u, Eigen::Index x) const {
    const double du = m_ocean(x) - u(x), dv = m_ocean(x + 1) - u(x + 1);
    return m_parameters.water_density * m_parameters.water_drag * std::sqrt(du * du + dv * dv);
  }
  std::array<double, 2> air_stress(Eigen::Index x) const {
    const double ua = m_wind(x), va = m_wind(x + 1);
    const double c = m_parameters.air_density * m_parameters.air_drag * std::sqrt(ua * ua + va * va);
    return {c * ua, c * va};
  }

  /// Mass, Coriolis, tilt, drag and old-velocity terms of R at every corner.
  void pointwise_terms(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    const double f = m_parameters.coriolis;
    for (Eigen::Index x = 0; x < unknowns(); x += 2) {
      const double m = m_mass(x / 2);
      const double cw = water_coefficient(u, x);
      const std::array<double, 2> ta = air_stress(x);
      const double du = u(x) - m_ocean(x), dv = u(x + 1) - m_ocean(x + 1);
      r(x) = m * m_inverse_time_step * (u(x) - m_old_velocity(x)) - m * f * dv - ta[0] + cw * du;
      r(x + 1) = m * m_inverse_time_step * (u(x + 1) - m_old_velocity(x + 1)) + m * f * du - ta[1] + cw * dv;
    }
  }

  void update_cell_quantities() {
    for (Eigen::Index k = 0; k < m_strength.size(); ++k) {
      m_strength(k) = m_parameters.ice_strength * m_thickness(k) *
                      std::exp(-m_parameters.concentration_decay * (1.0 - m_concentration(k)));
    }
    for (int b = 1; b < m_n; ++b) {
      for (int a = 1; a < m_n; ++a) {
        const double h = 0.25 * (m_thickness(a - 1 + m_n * (b - 1)) + m_thickness(a + m_n * (b - 1)) +
                                 m_thickness(a - 1 + m_n * b) + m_thickness(a + m_n * b));
        m_mass(index(a, b, 0) / 2) = m_parameters.ice_density * std::max(h, m_parameters.minimum_thickness);
      }
    }
  }

  void transfer(int from_cell, int to_cell, double thickness_flux, double concentration_flux, Eigen::VectorXd& h,
                Eigen::VectorXd& a) const {
    h(from_cell) -= thickness_flux;
    h(to_cell) += thickness_flux;
    a(from_cell) -= concentration_flux;
    a(to_cell) += concentration_flux;
  }

  Eigen::SparseMatrix<double> structure() const {
    Eigen::SparseMatrix<double> matrix(unknowns(), unknowns());
    std::vector<Eigen::Triplet<double>> entries;
    entries.reserve(m_pattern.column_indices.size());
    for (int row = 0; row < m_pattern.rows; ++row) {
      for (int k = m_pattern.row_starts[static_cast<std::size_t>(row)];
           k < m_pattern.row_starts[static_cast<std::size_t>(row) + 1]; ++k) {
        entries.emplace_back(row, m_pattern.column_indices[static_cast<std::size_t>(k)], 0.0);
      }
    }
    matrix.setFromTriplets(entries.begin(), entries.end());
    return matrix;
  }

  int m_n;
  sea_ice_parameters m_parameters;
  double m_d = 0.0;
  double m_inverse_time_step = 0.0;
  Eigen::VectorXd m_thickness, m_concentration, m_strength, m_mass;
  Eigen::VectorXd m_old_velocity, m_wind, m_ocean;
  nkit::sparsity_pattern m_pattern;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_SEA_ICE_VISCOUS_PLASTIC_MOMENTUM_HPP
