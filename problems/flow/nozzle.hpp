// Quasi-one-dimensional compressible Euler flow in a converging–diverging
// nozzle with a standing normal shock.
//
//   ∂(A U)/∂t + ∂(A F(U))/∂x = (0, p dA/dx, 0)ᵀ,
//   U = (ρ, ρu, E), F = (ρu, ρu² + p, u(E + p)), p = (γ − 1)(E − ½ρu²), γ = 1.4.
//
// Nozzle area A(x) = 1 + 2.2 (x − 1.5)² on 0 <= x <= 3 (throat A* = 1 at
// x = 1.5, exit area ratio 5.95): the nozzle of J.D. Anderson,
// "Computational Fluid Dynamics: The Basics with Applications", McGraw-Hill
// 1995, ch. 7 (from memory). Non-dimensional: total pressure and total
// density at the inlet are 1 (so R T0 = 1).
//
// Discretisation: cell-centred finite volume, N cells of width dx, face areas
// A_{i±½} from the formula, first-order (piecewise-constant) states. Face
// flux: HLLC approximate Riemann solver, E.F. Toro, M. Spruce & W. Speares,
// "Restoration of the contact surface in the HLL-Riemann solver", Shock Waves
// 4 (1994) 25–34, with the wave-speed estimates S_L = min(u_L − c_L, u_R − c_R),
// S_R = max(u_L + c_L, u_R + c_R) (S.F. Davis, SIAM J. Sci. Stat. Comput. 9
// (1988) 445–473, from memory). Residual per cell:
//   R_i = A_{i+½} F̂_{i+½} − A_{i−½} F̂_{i−½} − (0, p_i (A_{i+½} − A_{i−½}), 0)ᵀ,
// which keeps a fluid at rest exactly at rest (common practice).
//
// Boundaries by ghost cells (common practice):
//  * subsonic inflow: total pressure p0 and total temperature T0 given; the
//    velocity is extrapolated from the first cell; T = T0 − u²/(2 c_p),
//    p = p0 (T/T0)^{γ/(γ−1)}, ρ = p/(R T);
//  * subsonic outflow: static back pressure given; ρ and u extrapolated.
//
// Unknowns interleaved per cell: (ρ, ρu, E) at 3i, 3i+1, 3i+2 (b = 3).
#ifndef NKIT_PROBLEMS_FLOW_NOZZLE_HPP
#define NKIT_PROBLEMS_FLOW_NOZZLE_HPP

#include <Eigen/Core>
#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <stdexcept>
#include <vector>

namespace nkit_problems {

inline constexpr double nozzle_gamma = 1.4;

struct nozzle_setup {
  double length = 3.0;
  double total_pressure = 1.0, total_density = 1.0;  ///< inlet reservoir (R T0 = p0/ρ0)
  double back_pressure = 0.75;                       ///< exit static pressure / p0
  double area(double x) const { return 1.0 + 2.2 * (x - 1.5) * (x - 1.5); }
};

class quasi_one_dimensional_nozzle {
 public:
  using state3 = std::array<double, 3>;

  quasi_one_dimensional_nozzle(int cells, nozzle_setup setup) : m_n(cells), m_setup(setup) {
    if (cells < 8) throw std::invalid_argument("quasi_one_dimensional_nozzle: need at least 8 cells");
    if (!(setup.back_pressure > 0.0 && setup.back_pressure < setup.total_pressure)) {
      throw std::invalid_argument("quasi_one_dimensional_nozzle: back pressure must be in (0, p0)");
    }
    m_dx = setup.length / cells;
    m_face_area.resize(cells + 1);
    for (int f = 0; f <= cells; ++f) m_face_area[static_cast<std::size_t>(f)] = setup.area(f * m_dx);
    m_pattern = nkit::three_point_line_pattern(cells, 3);
  }

  int cells() const { return m_n; }
  Eigen::Index unknowns() const { return 3 * static_cast<Eigen::Index>(m_n); }
  double spacing() const { return m_dx; }
  double x(int i) const { return (i + 0.5) * m_dx; }
  const nozzle_setup& setup() const { return m_setup; }
  /// Cell volume A_i dx with A_i the mean of the face areas.
  double volume(int i) const {
    return 0.5 * (m_face_area[static_cast<std::size_t>(i)] + m_face_area[static_cast<std::size_t>(i) + 1]) * m_dx;
  }

  static double pressure(const state3& u) { return (nozzle_gamma - 1.0) * (u[2] - 0.5 * u[1] * u[1] / u[0]); }
  static double sound_speed(const state3& u) { return std::sqrt(nozzle_gamma * pressure(u) / u[0]); }
  static double mach(const state3& u) { return std::abs(u[1] / u[0]) / sound_speed(u); }
  static state3 conserved(double density, double velocity, double p) {
    return {density, density * velocity, p / (nozzle_gamma - 1.0) + 0.5 * density * velocity * velocity};
  }
  state3 cell(const Eigen::VectorXd& u, int i) const { return {u(3 * i), u(3 * i + 1), u(3 * i + 2)}; }

  /// A crude start: fluid at rest with the pressure falling linearly from p0 to the back pressure.
  Eigen::VectorXd initial_guess() const {
    Eigen::VectorXd u(unknowns());
    for (int i = 0; i < m_n; ++i) {
      const double s = x(i) / m_setup.length;
      const double p = m_setup.total_pressure + s * (m_setup.back_pressure - m_setup.total_pressure);
      const double rho = m_setup.total_density * std::pow(p / m_setup.total_pressure, 1.0 / nozzle_gamma);
      const state3 c = conserved(rho, 0.0, p);
      for (int k = 0; k < 3; ++k) u(3 * i + k) = c[static_cast<std::size_t>(k)];
    }
    return u;
  }

  /// R(U) of the file comment. Non-physical states (ρ <= 0 or p <= 0) give NaN,
  /// which the Newton driver treats as a rejected trial point. Allocates nothing.
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    const double nan = std::numeric_limits<double>::quiet_NaN();
    state3 left = inflow_ghost(cell(u, 0));
    state3 left_flux{};
    for (int f = 0; f <= m_n; ++f) {
      const state3 right = f < m_n ? cell(u, f) : outflow_ghost(cell(u, m_n - 1));
      const state3 flux = hllc_flux(left, right);
      const double area = m_face_area[static_cast<std::size_t>(f)];
      if (f > 0) {
        const int i = f - 1;
        const double area_left = m_face_area[static_cast<std::size_t>(f) - 1];
        const double p = pressure(left);
        const bool physical = left[0] > 0.0 && p > 0.0;
        for (int k = 0; k < 3; ++k) {
          r(3 * i + k) =
              physical ? area * flux[static_cast<std::size_t>(k)] - area_left * left_flux[static_cast<std::size_t>(k)]
                       : nan;
        }
        r(3 * i + 1) -= p * (area - area_left);
      }
      left_flux = flux;
      left = right;
    }
  }

  /// HLLC flux between states (Toro, Spruce & Speares 1994).
  static state3 hllc_flux(const state3& l, const state3& r) {
    const double rho_l = l[0], u_l = l[1] / l[0], p_l = pressure(l), c_l = std::sqrt(nozzle_gamma * p_l / rho_l);
    const double rho_r = r[0], u_r = r[1] / r[0], p_r = pressure(r), c_r = std::sqrt(nozzle_gamma * p_r / rho_r);
    const double s_l = std::min(u_l - c_l, u_r - c_r), s_r = std::max(u_l + c_l, u_r + c_r);
    const state3 f_l{l[1], l[1] * u_l + p_l, u_l * (l[2] + p_l)};
    const state3 f_r{r[1], r[1] * u_r + p_r, u_r * (r[2] + p_r)};
    if (s_l >= 0.0) return f_l;
    if (s_r <= 0.0) return f_r;
    // Contact speed S*.
    const double s_star = (p_r - p_l + rho_l * u_l * (s_l - u_l) - rho_r * u_r * (s_r - u_r)) /
                          (rho_l * (s_l - u_l) - rho_r * (s_r - u_r));
    auto star_state = [&](const state3& q, double rho, double vel, double p, double s) {
      const double factor = rho * (s - vel) / (s - s_star);
      return state3{factor, factor * s_star, factor * (q[2] / rho + (s_star - vel) * (s_star + p / (rho * (s - vel))))};
    };
    if (s_star >= 0.0) {
      const state3 q = star_state(l, rho_l, u_l, p_l, s_l);
      return {f_l[0] + s_l * (q[0] - l[0]), f_l[1] + s_l * (q[1] - l[1]), f_l[2] + s_l * (q[2] - l[2])};
    }
    const state3 q = star_state(r, rho_r, u_r, p_r, s_r);
    return {f_r[0] + s_r * (q[0] - r[0]), f_r[1] + s_r * (q[1] - r[1]), f_r[2] + s_r * (q[2] - r[2])};
  }

  /// Pseudo-time weights for nkit's pseudo-transient continuation: the
  /// spectral radius λ_i = (|u| + c)_i (A_{i−½} + A_{i+½}) of each cell
  /// (Σ over faces of wave speed × area), the same for its three unknowns.
  void pseudo_time_weights(const Eigen::VectorXd& u, Eigen::VectorXd& weights) const {
    for (int i = 0; i < m_n; ++i) {
      const double area_sum = m_face_area[static_cast<std::size_t>(i)] + m_face_area[static_cast<std::size_t>(i) + 1];
      const double value = wave_speed(u, i) * area_sum;
      for (int k = 0; k < 3; ++k) weights(3 * i + k) = value;
    }
  }

  /// Largest wave speed |u| + c of each cell.
  double wave_speed(const Eigen::VectorXd& u, int i) const {
    const state3 c = cell(u, i);
    return std::abs(c[1] / c[0]) + sound_speed(c);
  }

  /// Where R'(U) may have nonzeros: each cell's three unknowns couple with
  /// those of its two neighbours (3 × 3 blocks, block-tridiagonal). With it
  /// nkit assembles R'(U) for the preconditioner by colored forward
  /// differences, 9 colors = 9 residual evaluations per assembly (Curtis,
  /// Powell & Reid 1974; sparse_jacobian.hpp).
  const nkit::sparsity_pattern& jacobian_pattern() const { return m_pattern; }

 private:
  state3 inflow_ghost(const state3& first) const {
    const double r_t0 = m_setup.total_pressure / m_setup.total_density;  // R T0
    const double cp = nozzle_gamma / (nozzle_gamma - 1.0);               // c_p / R
    const double velocity = first[1] / first[0];
    const double r_t = std::max(1e-6 * r_t0, r_t0 - velocity * velocity / (2.0 * cp));
    const double p = m_setup.total_pressure * std::pow(r_t / r_t0, nozzle_gamma / (nozzle_gamma - 1.0));
    return conserved(p / r_t, velocity, p);
  }
  state3 outflow_ghost(const state3& last) const {
    return conserved(last[0], last[1] / last[0], m_setup.back_pressure);
  }

  int m_n;
  nozzle_setup m_setup;
  double m_dx = 0.0;
  std::vector<double> m_face_area;
  nkit::sparsity_pattern m_pattern;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_NOZZLE_HPP
