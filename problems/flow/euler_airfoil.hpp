// Steady two-dimensional Euler flow around an airfoil on the O-grid of
// airfoil_grid.hpp: cell-centred finite volumes, Roe fluxes with Harten's
// entropy fix, MUSCL reconstruction of primitive variables with the van
// Albada limiter (or first order), slip wall and characteristic far field.
//
//   ∂U/∂t + ∂F/∂x + ∂G/∂y = 0,  U = (ρ, ρu, ρv, ρE),  p = (γ − 1)(ρE − ½ρ(u² + v²)),  γ = 1.4.
//
// Non-dimensional: free-stream density ρ∞ = 1 and sound speed c∞ = 1 (so
// p∞ = 1/γ), chord 1, free-stream velocity M∞ (cos α, sin α).
//
// Residual of cell P (no division by the area; the steady equations are R = 0):
//   R_P = Σ_faces F̂(U_L, U_R; S_f) · (±1 for the orientation of S_f),
// S_f = outward normal × length (airfoil_grid.hpp). Each interior face flux is
// added to one cell and subtracted from the other, so Σ_P R_P equals the sum
// of the wall and far-field fluxes exactly up to round-off (telescoping).
//
// Face flux: Roe's approximate Riemann solver, P.L. Roe, "Approximate Riemann
// solvers, parameter vectors, and difference schemes", J. Comput. Phys. 43
// (1981) 357–372, with Roe averages weighted by √ρ, written for a face with
// unit normal n as
//   F̂ = |S| [½(F_n(U_L) + F_n(U_R)) − ½ Σ_k |λ_k| α_k r_k],
//   λ = q̃ − c̃, q̃, q̃ + c̃ (q̃ = ũ·n), α_∓ = (Δp ∓ ρ̃ c̃ Δq)/(2c̃²), α_0 = Δρ − Δp/c̃²
// plus the shear wave ρ̃ |q̃| (Δu − Δq n) — the form given by J. Blazek,
// "Computational Fluid Dynamics: Principles and Applications", Elsevier 2001,
// §4.3.3 (from memory). Entropy fix of A. Harten, "High resolution schemes for
// hyperbolic conservation laws", J. Comput. Phys. 49 (1983) 357–393: |λ| is
// replaced by (λ² + δ²)/(2δ) where |λ| < δ, on all three waves, with
// δ = entropy_fix_fraction·c̃ (a fraction of the Roe-averaged sound speed:
// common practice; unlike a fraction of |q̃| + c̃ it has no corner at q̃ = 0).
// Why Roe and not HLLC (nozzle.hpp): Newton needs a residual that is
// differentiable at the solution. HLLC switches branch where the contact
// speed S* changes sign, which happens at every wall face (S* = 0 with the
// mirror ghost) and along the stagnation streamline; Roe's flux with
// Harten's fix is C¹ in the states (the fix rounds the corners of |λ|).
//
// Reconstruction (second_order = true): MUSCL extrapolation of the primitive
// variables w = (ρ, u, v, p) to each face along the grid line, B. van Leer,
// "Towards the ultimate conservative difference scheme V", J. Comput. Phys. 32
// (1979) 101–136:
//   w_L = w_i + ½ Δ(w_i − w_{i−1}, w_{i+1} − w_i),  w_R = w_{i+1} − ½ Δ(w_{i+1} − w_i, w_{i+2} − w_{i+1}),
// with the van Albada limited slope Δ(a, b) = [a(b² + ε²) + b(a² + ε²)]/(a² + b² + 2ε²):
// G.D. van Albada, B. van Leer & W.W. Roberts, Astron. Astrophys. 108 (1982)
// 76–84; this smooth form with a small ε² as in W.K. Anderson, J.L. Thomas &
// B. van Leer, AIAA J. 24 (1986) 1453–1460 (both from memory). We chose van
// Albada over minmod because it is differentiable (minmod has corners
// wherever two slopes are equal or one changes sign), which keeps Newton's
// quadratic convergence; it is not clipped at extrema (a choice for
// smoothness; the subsonic cases here have no shocks). ε² = 1e-12 (variables
// are O(1) in these units) only removes the 0/0 of a uniform state. Index
// differences along the grid lines (no metric weights): common practice on
// smooth structured grids. second_order = false gives first order (w_L = w_i):
// the operator whose Jacobian a preconditioner can use
// (euler_airfoil_first_order_jacobian.hpp).
//
// Boundaries (common practice):
//  * i: periodic (the O-grid wrap).
//  * j = 0, slip wall: the cell-side face state w_R is reconstructed with a
//    ghost cell (i, −1) that continues the flow linearly through the wall:
//    ρ and p extrapolated log-linearly from cells (i, 0) and (i, 1)
//    (ρ_g = ρ_0²/ρ_1, positive by construction), the velocity's tangential
//    part linearly (2v_0 − v_1), its normal part reversed (q_g = −q_0, zero
//    normal velocity at the face); the outer state is the mirror image of w_R
//    (normal velocity reversed), so the flux carries (almost exactly) no mass
//    or energy through the wall. The ghost keeps the reconstruction second
//    order at the wall, where the pressure has a normal gradient ρV²/r_c along
//    a curved surface (r_c the radius of curvature). A ghost that mirrors
//    cell (i, 0) instead, with ρ and p copied, makes that gradient zero: the
//    wall pressure is then only first order, and we measured the spurious
//    drag with lift falling at first order with it (NACA 0012, M = 0.5,
//    α = 2°, 64 × 32 … 256 × 128: 0.00675, 0.00229, 0.00118; tests/
//    test_euler_airfoil.cpp and docs/gallery.md give the figures now).
//  * j = m, far field: the ghost state from the Riemann invariants normal to
//    the face, R± = q ± 2c/(γ − 1): R+ from the interior cell and R− from the
//    free stream for subsonic normal flow (both from one side when
//    supersonic); q_b = ½(R+ + R−), c_b = ¼(γ − 1)(R+ − R−); tangential
//    velocity and entropy p/ρ^γ from the free stream at inflow (q_b < 0) and
//    from the interior at outflow. As in Blazek (2001) §8.6 (from memory).
//    The "free stream" there is uniform by default, so lift carries an
//    O(1/R) far-field error. With far_field_vortex_lift_coefficient = c_l it
//    is the uniform stream plus the far field of a point vortex of
//    circulation Γ = ½ V∞ c c_l (Kutta–Joukowski, L = ρ∞ V∞ Γ) at the quarter
//    chord, in the compressible form of the linearised (Prandtl–Glauert)
//    potential φ = −(Γ/2π) atan(β tan(θ − α)), β = √(1 − M∞²), whose
//    gradient is
//      (u, v) = (V∞ cos α, V∞ sin α)
//               + Γβ / (2πr (1 − M∞² sin²(θ − α))) · (sin θ, −cos θ)
//    (r, θ about the vortex; W.L. Thomas & M.D. Salas, AIAA J. 24 (1986)
//    1074–1080, from memory; derived here from φ, and checked in
//    tests/test_euler_airfoil.cpp against φ's differences and the
//    circulation −Γ around the boundary); density and pressure from the free
//    stream's total enthalpy and entropy.
//    The switch of the tangential velocity and entropy at q_b = 0 makes the
//    far-field state jump there (by the small difference between the interior
//    and the free stream at R chords): the one place where the residual is
//    not differentiable; it has not stalled Newton in the cases tested.
//  * body_boundary = free_stream (verification only): the j = 0 faces get the
//    far-field treatment too, so a uniform free stream at any angle is an
//    exact solution of the discrete equations up to round-off (free-stream
//    preservation).
//
// Unknowns interleaved per cell: cell c = i + n·j (airfoil_o_grid::cell_index)
// holds (ρ, ρu, ρv, ρE) at 4c .. 4c + 3.
#ifndef NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_HPP
#define NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_HPP

#include <Eigen/Core>
#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <set>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "problems/flow/airfoil_grid.hpp"

namespace nkit_problems {

inline constexpr double euler_gamma = 1.4;

enum class airfoil_body_boundary {
  slip_wall,   ///< the airfoil (default)
  free_stream  ///< far-field treatment on the body faces too: for free-stream preservation checks only
};

struct euler_airfoil_settings {
  double mach_number = 0.5;              ///< M∞, > 0
  double angle_of_attack_degrees = 0.0;  ///< α in degrees, |α| < 90
  bool second_order = true;              ///< MUSCL + van Albada; false: first order
  double entropy_fix_fraction = 0.1;     ///< Harten's δ / c̃, in [0, 1]
  airfoil_body_boundary body_boundary = airfoil_body_boundary::slip_wall;
  /// c_l of the point vortex whose far field the far-field boundary imposes
  /// instead of the uniform free stream (file comment: vortex correction);
  /// 0 = the uniform free stream. Subsonic free streams only. Set it to the
  /// lift of a converged solve and solve again, until the two agree
  /// (solve_euler_airfoil_with_far_field_vortex in euler_airfoil_far_field_vortex.hpp).
  double far_field_vortex_lift_coefficient = 0.0;

  void validate() const {
    const auto fail = [](const std::string& what) { throw std::invalid_argument("euler_airfoil_settings." + what); };
    if (!(mach_number > 0.0 && mach_number < 10.0)) {
      fail("mach_number must be in (0, 10) (got " + std::to_string(mach_number) + ")");
    }
    if (!(std::abs(angle_of_attack_degrees) < 90.0)) {
      fail("angle_of_attack_degrees must be in (-90, 90) (got " + std::to_string(angle_of_attack_degrees) + ")");
    }
    if (!(entropy_fix_fraction >= 0.0 && entropy_fix_fraction <= 1.0)) {
      fail("entropy_fix_fraction must be in [0, 1] (got " + std::to_string(entropy_fix_fraction) + ")");
    }
    if (!std::isfinite(far_field_vortex_lift_coefficient)) {
      fail("far_field_vortex_lift_coefficient must be finite (got " +
           std::to_string(far_field_vortex_lift_coefficient) + ")");
    }
    if (far_field_vortex_lift_coefficient != 0.0 && !(mach_number < 1.0)) {
      fail("far_field_vortex_lift_coefficient needs a subsonic free stream (mach_number < 1; got " +
           std::to_string(mach_number) + ")");
    }
  }
};

/// Lift, drag and the pressure coefficient along the surface.
struct airfoil_forces {
  double lift_coefficient = 0.0;             ///< c_l = L / (½ ρ∞ V∞² c), normal to the free stream
  double drag_coefficient = 0.0;             ///< c_d, along the free stream (pressure drag only: inviscid)
  std::vector<point2> wall_face_centre;      ///< midpoint of each wall face, i = 0..n−1
  std::vector<double> pressure_coefficient;  ///< c_p = (p_w − p∞)/(½ ρ∞ V∞²) at each wall face
};

class euler_airfoil_flow {
 public:
  template <class Scalar>
  using state4 = std::array<Scalar, 4>;  ///< conserved (ρ, ρu, ρv, ρE) or primitive (ρ, u, v, p)

  euler_airfoil_flow(airfoil_o_grid grid, euler_airfoil_settings settings)
      : m_grid(std::move(grid)), m_settings(settings) {
    settings.validate();
    const double pi = std::acos(-1.0), alpha = settings.angle_of_attack_degrees * pi / 180.0;
    m_free_stream = {1.0, settings.mach_number * std::cos(alpha), settings.mach_number * std::sin(alpha),
                     1.0 / euler_gamma};
    m_pattern = stencil_pattern(settings.second_order ? 2 : 1);
    const int n = m_grid.cells_around(), m = m_grid.cells_outward();
    m_far_field_outer.resize(static_cast<std::size_t>(n));
    for (int i = 0; i < n; ++i) {
      const point2 a = m_grid.node(i, m), b = m_grid.node(i + 1, m);
      m_far_field_outer[static_cast<std::size_t>(i)] = vortex_far_field({0.5 * (a.x + b.x), 0.5 * (a.y + b.y)});
    }
  }

  /// The primitive state the far-field boundary imposes at point x: the
  /// uniform free stream plus the velocity of a point vortex of circulation
  /// Γ = ½ V∞ c c_l at the quarter chord (0.25, 0), in its compressible
  /// (Prandtl–Glauert) form, with the free stream's total enthalpy and entropy
  /// (file comment). The free stream itself when far_field_vortex_lift_coefficient = 0.
  state4<double> vortex_far_field(point2 x) const {
    const double lift = m_settings.far_field_vortex_lift_coefficient;
    if (lift == 0.0) return m_free_stream;
    const double g = euler_gamma, mach = m_settings.mach_number, pi = std::acos(-1.0);
    const double alpha = m_settings.angle_of_attack_degrees * pi / 180.0, beta = std::sqrt(1.0 - mach * mach);
    const double circulation = 0.5 * mach * lift;  // V∞ = M (c∞ = 1), chord 1
    const double dx = x.x - 0.25, dy = x.y, r = std::hypot(dx, dy), theta = std::atan2(dy, dx);
    const double sine = std::sin(theta - alpha);
    const double swirl = circulation * beta / (2.0 * pi * r * (1.0 - mach * mach * sine * sine));
    const double u = m_free_stream[1] + swirl * std::sin(theta), v = m_free_stream[2] - swirl * std::cos(theta);
    const double c2 = 1.0 + 0.5 * (g - 1.0) * (mach * mach - u * u - v * v);  // same total enthalpy, c∞ = 1
    const double rho = std::pow(c2, 1.0 / (g - 1.0));                         // same entropy p/ρ^γ = 1/γ
    return {rho, u, v, rho * c2 / g};
  }

  const airfoil_o_grid& grid() const { return m_grid; }
  const euler_airfoil_settings& settings() const { return m_settings; }
  Eigen::Index unknowns() const { return 4 * static_cast<Eigen::Index>(m_grid.cells()); }
  /// Free-stream primitive state (ρ∞, u∞, v∞, p∞) = (1, M cos α, M sin α, 1/γ).
  const state4<double>& free_stream() const { return m_free_stream; }
  double free_stream_speed() const { return m_settings.mach_number; }

  template <class Scalar>
  static state4<Scalar> conserved(const state4<Scalar>& w) {
    return {w[0], w[0] * w[1], w[0] * w[2], w[3] / (euler_gamma - 1.0) + 0.5 * w[0] * (w[1] * w[1] + w[2] * w[2])};
  }
  template <class Scalar>
  static state4<Scalar> primitive(const state4<Scalar>& q) {
    const Scalar u = q[1] / q[0], v = q[2] / q[0];
    return {q[0], u, v, (euler_gamma - 1.0) * (q[3] - 0.5 * q[0] * (u * u + v * v))};
  }
  /// Normal flux F·S of the primitive state w through the face vector (sx, sy).
  template <class Scalar>
  static state4<Scalar> physical_flux(const state4<Scalar>& w, double sx, double sy) {
    const Scalar q = w[1] * sx + w[2] * sy;
    const Scalar mass = w[0] * q;
    const Scalar enthalpy = euler_gamma / (euler_gamma - 1.0) * w[3] / w[0] + 0.5 * (w[1] * w[1] + w[2] * w[2]);
    return {mass, mass * w[1] + w[3] * sx, mass * w[2] + w[3] * sy, mass * enthalpy};
  }

  /// Roe's flux with Harten's entropy fix through the face vector (sx, sy),
  /// from left and right primitive states (file comment).
  template <class Scalar>
  state4<Scalar> roe_flux(const state4<Scalar>& l, const state4<Scalar>& r, double sx, double sy) const {
    using std::abs;
    using std::sqrt;
    const double length = std::hypot(sx, sy), nx = sx / length, ny = sy / length;
    const double g1 = euler_gamma / (euler_gamma - 1.0);
    const Scalar h_l = g1 * l[3] / l[0] + 0.5 * (l[1] * l[1] + l[2] * l[2]);
    const Scalar h_r = g1 * r[3] / r[0] + 0.5 * (r[1] * r[1] + r[2] * r[2]);
    const Scalar s_l = sqrt(l[0]), s_r = sqrt(r[0]), weight = 1.0 / (s_l + s_r);
    const Scalar rho = s_l * s_r, u = (s_l * l[1] + s_r * r[1]) * weight, v = (s_l * l[2] + s_r * r[2]) * weight;
    const Scalar h = (s_l * h_l + s_r * h_r) * weight, kinetic = 0.5 * (u * u + v * v);
    const Scalar c = sqrt((euler_gamma - 1.0) * (h - kinetic)), q = u * nx + v * ny;
    const Scalar d_rho = r[0] - l[0], d_u = r[1] - l[1], d_v = r[2] - l[2], d_p = r[3] - l[3];
    const Scalar d_q = d_u * nx + d_v * ny;
    const Scalar delta = m_settings.entropy_fix_fraction * c;
    const auto fixed = [&delta](const Scalar& lambda) -> Scalar {
      const Scalar magnitude = abs(lambda);
      if (magnitude < delta) return (lambda * lambda + delta * delta) / (2.0 * delta);
      return magnitude;
    };
    const Scalar l1 = fixed(q - c), l2 = fixed(q), l3 = fixed(q + c);
    const Scalar a1 = l1 * (d_p - rho * c * d_q) / (2.0 * c * c);
    const Scalar a3 = l3 * (d_p + rho * c * d_q) / (2.0 * c * c);
    const Scalar a2 = l2 * (d_rho - d_p / (c * c)), shear = l2 * rho;
    const state4<Scalar> f_l = physical_flux(l, nx, ny), f_r = physical_flux(r, nx, ny);
    const state4<Scalar> dissipation{
        a1 + a2 + a3, a1 * (u - c * nx) + a2 * u + shear * (d_u - d_q * nx) + a3 * (u + c * nx),
        a1 * (v - c * ny) + a2 * v + shear * (d_v - d_q * ny) + a3 * (v + c * ny),
        a1 * (h - q * c) + a2 * kinetic + shear * (u * d_u + v * d_v - q * d_q) + a3 * (h + q * c)};
    state4<Scalar> flux;
    for (std::size_t k = 0; k < 4; ++k) flux[k] = length * (0.5 * (f_l[k] + f_r[k]) - 0.5 * dissipation[k]);
    return flux;
  }

  /// Uniform free stream in every cell (the usual start).
  Eigen::VectorXd initial_guess() const {
    Eigen::VectorXd u(unknowns());
    const state4<double> q = conserved(m_free_stream);
    for (int c = 0; c < m_grid.cells(); ++c) {
      for (int k = 0; k < 4; ++k) u(4 * c + k) = q[static_cast<std::size_t>(k)];
    }
    return u;
  }

  /// R(U) of the file comment, for any scalar (double, dual numbers). States
  /// with ρ <= 0 or p <= 0 in any cell give NaN (a rejected trial point for
  /// the Newton driver). Allocates nothing.
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    const int n = m_grid.cells_around(), m = m_grid.cells_outward();
    r.setZero();
    for (int c = 0; c < m_grid.cells(); ++c) {
      const state4<Scalar> w = primitive(cell_state(u, c));
      if (!(value(w[0]) > 0.0 && value(w[3]) > 0.0)) {
        r.setConstant(Scalar(std::numeric_limits<double>::quiet_NaN()));
        return;
      }
    }
    const auto add = [&r](std::size_t cell, const state4<Scalar>& flux, double sign) {
      for (std::size_t k = 0; k < 4; ++k) r(static_cast<Eigen::Index>(4 * cell + k)) += sign * flux[k];
    };
    // i-faces (periodic): face (i, j) between cells (i − 1, j) and (i, j).
    for (int j = 0; j < m; ++j) {
      for (int i = 0; i < n; ++i) {
        const point2 s = m_grid.i_face(i, j);
        const state4<Scalar> flux = face_flux(cell_primitive(u, i - 2, j), cell_primitive(u, i - 1, j),
                                              cell_primitive(u, i, j), cell_primitive(u, i + 1, j), s);
        add(m_grid.cell_index(i - 1, j), flux, 1.0);
        add(m_grid.cell_index(i, j), flux, -1.0);
      }
    }
    // Interior j-faces: face (i, j) between cells (i, j − 1) and (i, j).
    for (int j = 1; j < m; ++j) {
      for (int i = 0; i < n; ++i) {
        const point2 s = m_grid.j_face(i, j);
        const state4<Scalar> below = j >= 2 ? cell_primitive(u, i, j - 2) : body_ghost(u, i);
        const state4<Scalar> above = j + 1 < m ? cell_primitive(u, i, j + 1) : far_field_ghost(u, i);
        const state4<Scalar> flux = face_flux(below, cell_primitive(u, i, j - 1), cell_primitive(u, i, j), above, s);
        add(m_grid.cell_index(i, j - 1), flux, 1.0);
        add(m_grid.cell_index(i, j), flux, -1.0);
      }
    }
    // Boundary faces.
    for (int i = 0; i < n; ++i) {
      add(m_grid.cell_index(i, 0), body_flux(u, i), -1.0);
      add(m_grid.cell_index(i, m - 1), far_field_flux(u, i), 1.0);
    }
  }

  /// Flux through the body face (i, 0) along S_j(i, 0) (into the flow).
  template <class Scalar>
  state4<Scalar> body_flux(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, int i) const {
    const point2 s = m_grid.j_face(i, 0);
    const state4<Scalar> inner = cell_primitive(u, i, 0);
    const state4<Scalar> ghost = body_ghost(u, i);
    const state4<Scalar> right = m_settings.second_order ? reconstruct(cell_primitive(u, i, 1), inner, ghost) : inner;
    const state4<Scalar> left =
        m_settings.body_boundary == airfoil_body_boundary::slip_wall ? mirrored(right, s) : ghost;
    return roe_flux(left, right, s.x, s.y);
  }
  /// Flux through the far-field face (i, m) along S_j(i, m) (out of the domain).
  template <class Scalar>
  state4<Scalar> far_field_flux(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, int i) const {
    const int m = m_grid.cells_outward();
    const point2 s = m_grid.j_face(i, m);
    const state4<Scalar> inner = cell_primitive(u, i, m - 1);
    const state4<Scalar> ghost = far_field_state(inner, s, m_far_field_outer[static_cast<std::size_t>(i)]);
    const state4<Scalar> left =
        m_settings.second_order ? reconstruct(cell_primitive(u, i, m - 2), inner, ghost) : inner;
    return roe_flux(left, ghost, s.x, s.y);
  }

  /// Σ over boundary faces of the flux leaving the domain: −(body fluxes) + far-field fluxes.
  /// Equals Σ_P R_P up to round-off (telescoping).
  Eigen::Vector4d boundary_outflow(const Eigen::VectorXd& u) const {
    Eigen::Vector4d total = Eigen::Vector4d::Zero();
    for (int i = 0; i < m_grid.cells_around(); ++i) {
      const state4<double> body = body_flux(u, i), far = far_field_flux(u, i);
      for (int k = 0; k < 4; ++k) {
        total(k) += far[static_cast<std::size_t>(k)] - body[static_cast<std::size_t>(k)];
      }
    }
    return total;
  }

  /// Lift and drag from the wall pressure (the pressure of the wall-face state
  /// w_R, second-order extrapolated when second_order), integrated face by
  /// face: force on the body = −Σ p_w S_j(i, 0) (S points into the flow).
  airfoil_forces forces(const Eigen::VectorXd& u) const {
    airfoil_forces result;
    const int n = m_grid.cells_around();
    const double dynamic_pressure = 0.5 * m_settings.mach_number * m_settings.mach_number;  // ½ ρ∞ V∞²
    double fx = 0.0, fy = 0.0;
    for (int i = 0; i < n; ++i) {
      const point2 s = m_grid.j_face(i, 0);
      const state4<double> inner = cell_primitive(u, i, 0);
      const double p_wall =
          m_settings.second_order ? reconstruct(cell_primitive(u, i, 1), inner, body_ghost(u, i))[3] : inner[3];
      fx -= p_wall * s.x;
      fy -= p_wall * s.y;
      const point2 a = m_grid.node(i, 0), b = m_grid.node(i + 1, 0);
      result.wall_face_centre.push_back({0.5 * (a.x + b.x), 0.5 * (a.y + b.y)});
      result.pressure_coefficient.push_back((p_wall - m_free_stream[3]) / dynamic_pressure);
    }
    const double pi = std::acos(-1.0), alpha = m_settings.angle_of_attack_degrees * pi / 180.0;
    result.lift_coefficient = (-fx * std::sin(alpha) + fy * std::cos(alpha)) / dynamic_pressure;
    result.drag_coefficient = (fx * std::cos(alpha) + fy * std::sin(alpha)) / dynamic_pressure;
    return result;
  }

  /// Entropy error (s − s∞)/s∞ per cell, s = p/ρ^γ (zero in exact isentropic
  /// subsonic flow: a measure of the numerical dissipation).
  Eigen::VectorXd entropy_error(const Eigen::VectorXd& u) const {
    Eigen::VectorXd error(m_grid.cells());
    const double s_inf = m_free_stream[3] / std::pow(m_free_stream[0], euler_gamma);
    for (int c = 0; c < m_grid.cells(); ++c) {
      const state4<double> w = primitive(cell_state(u, c));
      error(c) = (w[3] / std::pow(w[0], euler_gamma) - s_inf) / s_inf;
    }
    return error;
  }

  /// Pseudo-time weights for nkit's pseudo-transient continuation: the
  /// spectral radius Σ_faces (|q| + c)|S| of each cell (cell state), the same
  /// for its four unknowns (as in nozzle.hpp).
  void pseudo_time_weights(const Eigen::VectorXd& u, Eigen::VectorXd& weights) const {
    for (int j = 0; j < m_grid.cells_outward(); ++j) {
      for (int i = 0; i < m_grid.cells_around(); ++i) {
        const state4<double> w = cell_primitive(u, i, j);
        const double c = std::sqrt(euler_gamma * w[3] / w[0]);
        double radius = 0.0;
        for (const point2 s :
             {m_grid.i_face(i, j), m_grid.i_face(i + 1, j), m_grid.j_face(i, j), m_grid.j_face(i, j + 1)}) {
          radius += std::abs(w[1] * s.x + w[2] * s.y) + c * std::hypot(s.x, s.y);
        }
        const std::size_t cell = m_grid.cell_index(i, j);
        for (std::size_t k = 0; k < 4; ++k) weights(static_cast<Eigen::Index>(4 * cell + k)) = radius;
      }
    }
  }

  /// Where R'(U) may have nonzeros: 4 × 4 blocks coupling each cell with the
  /// cells up to two (second order) or one (first order) steps away along its
  /// grid lines, periodic in i. nkit assembles R'(U) from it by colored
  /// differences (Curtis, Powell & Reid 1974; sparse_jacobian.hpp).
  const nkit::sparsity_pattern& jacobian_pattern() const { return m_pattern; }
  /// The five-point pattern of the first-order operator (for a preconditioner
  /// assembled from an euler_airfoil_flow with second_order = false).
  nkit::sparsity_pattern first_order_pattern() const { return stencil_pattern(1); }

  /// The slip wall's ghost cell (file comment), in primitive variables
  /// (ρ, u, v, p), from the states of the wall cell (`wall_cell`) and of the
  /// next cell away from the wall (`next_cell`) and the wall face's vector `s`
  /// (any length, normal to the wall): ρ and p log-linearly (ρ_0²/ρ_1), the
  /// tangential velocity linearly (2v_0 − v_1), the normal velocity reversed
  /// (−q_0).
  template <class Scalar>
  static state4<Scalar> slip_wall_ghost(const state4<Scalar>& wall_cell, const state4<Scalar>& next_cell, point2 s) {
    const double length_squared = s.x * s.x + s.y * s.y;
    Scalar u_ghost = 2.0 * wall_cell[1] - next_cell[1], v_ghost = 2.0 * wall_cell[2] - next_cell[2];
    // Normal part of the extrapolated velocity replaced by −q_0 (both per |s|²).
    const Scalar correction =
        (u_ghost * s.x + v_ghost * s.y + wall_cell[1] * s.x + wall_cell[2] * s.y) / length_squared;
    u_ghost = u_ghost - correction * s.x;
    v_ghost = v_ghost - correction * s.y;
    return {wall_cell[0] * (wall_cell[0] / next_cell[0]), u_ghost, v_ghost,
            wall_cell[3] * (wall_cell[3] / next_cell[3])};
  }

  /// Conserved state of cell c.
  template <class Scalar>
  static state4<Scalar> cell_state(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, std::size_t c) {
    const auto base = static_cast<Eigen::Index>(4 * c);
    return {u(base), u(base + 1), u(base + 2), u(base + 3)};
  }
  template <class Scalar>
  static state4<Scalar> cell_state(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, int c) {
    return cell_state(u, static_cast<std::size_t>(c));
  }
  /// Primitive state of cell (i, j) (i modulo n).
  template <class Scalar>
  state4<Scalar> cell_primitive(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, int i, int j) const {
    return primitive(cell_state(u, m_grid.cell_index(i, j)));
  }

  /// The far-field boundary state (file comment) from the interior primitive
  /// state and the outward face vector s.
  template <class Scalar>
  state4<Scalar> far_field_state(const state4<Scalar>& inner, point2 s, const state4<double>& w) const {
    using std::pow;
    using std::sqrt;
    const double length = std::hypot(s.x, s.y), nx = s.x / length, ny = s.y / length;
    const double g = euler_gamma;
    const double c_inf = std::sqrt(g * w[3] / w[0]), q_inf = w[1] * nx + w[2] * ny;
    const Scalar c_in = sqrt(g * inner[3] / inner[0]), q_in = inner[1] * nx + inner[2] * ny;
    if (value(q_in) >= value(c_in)) return inner;  // supersonic outflow: everything from inside
    if (q_inf <= -c_inf) {                         // supersonic inflow: everything from outside
      return {Scalar(w[0]), Scalar(w[1]), Scalar(w[2]), Scalar(w[3])};
    }
    const Scalar outgoing = q_in + 2.0 * c_in / (g - 1.0);
    const double incoming = q_inf - 2.0 * c_inf / (g - 1.0);
    const Scalar q_b = 0.5 * (outgoing + incoming), c_b = 0.25 * (g - 1.0) * (outgoing - incoming);
    Scalar u_t, v_t, entropy;  // tangential velocity and p/ρ^γ
    if (value(q_b) < 0.0) {
      u_t = Scalar(w[1] - q_inf * nx);
      v_t = Scalar(w[2] - q_inf * ny);
      entropy = Scalar(w[3] / std::pow(w[0], g));
    } else {
      u_t = inner[1] - q_in * nx;
      v_t = inner[2] - q_in * ny;
      entropy = inner[3] / pow(inner[0], g);
    }
    const Scalar rho = pow(c_b * c_b / (g * entropy), 1.0 / (g - 1.0));
    return {rho, u_t + q_b * nx, v_t + q_b * ny, rho * c_b * c_b / g};
  }

 private:
  static double value(double x) { return x; }
  template <class Scalar>
  static double value(const Scalar& x) {
    return x.value();
  }

  /// van Albada limited slope (file comment).
  template <class Scalar>
  static Scalar limited_slope(const Scalar& a, const Scalar& b) {
    constexpr double epsilon_squared = 1e-12;
    return (a * (b * b + epsilon_squared) + b * (a * a + epsilon_squared)) / (a * a + b * b + 2.0 * epsilon_squared);
  }
  /// Face value on the `next` side of `centre`: w_c + ½ Δ(w_c − w_prev, w_next − w_c).
  template <class Scalar>
  static state4<Scalar> reconstruct(const state4<Scalar>& previous, const state4<Scalar>& centre,
                                    const state4<Scalar>& next) {
    state4<Scalar> face;
    for (std::size_t k = 0; k < 4; ++k) {
      face[k] = centre[k] + 0.5 * limited_slope(Scalar(centre[k] - previous[k]), Scalar(next[k] - centre[k]));
    }
    return face;
  }
  /// Flux through face vector s between the cells `left` and `right` with
  /// their outer neighbours `far_left`, `far_right`.
  template <class Scalar>
  state4<Scalar> face_flux(const state4<Scalar>& far_left, const state4<Scalar>& left, const state4<Scalar>& right,
                           const state4<Scalar>& far_right, point2 s) const {
    if (!m_settings.second_order) return roe_flux(left, right, s.x, s.y);
    return roe_flux(reconstruct(far_left, left, right), reconstruct(far_right, right, left), s.x, s.y);
  }
  /// Primitive state mirrored at a face with vector s: velocity component along s reversed.
  template <class Scalar>
  static state4<Scalar> mirrored(const state4<Scalar>& w, point2 s) {
    const double length_squared = s.x * s.x + s.y * s.y;
    const Scalar twice_normal = 2.0 * (w[1] * s.x + w[2] * s.y) / length_squared;
    return {w[0], w[1] - twice_normal * s.x, w[2] - twice_normal * s.y, w[3]};
  }
  /// Ghost cell below cell (i, 0): the flow continued through the wall (file
  /// comment: slip wall), or the far-field state.
  template <class Scalar>
  state4<Scalar> body_ghost(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, int i) const {
    const point2 s = m_grid.j_face(i, 0);
    const state4<Scalar> inner = cell_primitive(u, i, 0);
    if (m_settings.body_boundary == airfoil_body_boundary::slip_wall) {
      return slip_wall_ghost(inner, cell_primitive(u, i, 1), s);
    }
    return far_field_state(inner, point2{-s.x, -s.y}, m_free_stream);  // outward from the domain = into the body
  }
  template <class Scalar>
  state4<Scalar> far_field_ghost(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, int i) const {
    const int m = m_grid.cells_outward();
    return far_field_state(cell_primitive(u, i, m - 1), m_grid.j_face(i, m),
                           m_far_field_outer[static_cast<std::size_t>(i)]);
  }

  nkit::sparsity_pattern stencil_pattern(int reach) const {
    const int n = m_grid.cells_around(), m = m_grid.cells_outward();
    nkit::sparsity_pattern pattern;
    pattern.rows = pattern.columns = 4 * m_grid.cells();
    pattern.row_starts.assign(1, 0);
    for (int j = 0; j < m; ++j) {
      for (int i = 0; i < n; ++i) {
        std::set<int> neighbours;
        for (int d = -reach; d <= reach; ++d) {
          neighbours.insert(static_cast<int>(m_grid.cell_index(i + d, j)));
          if (j + d >= 0 && j + d < m) neighbours.insert(static_cast<int>(m_grid.cell_index(i, j + d)));
        }
        for (int k = 0; k < 4; ++k) {
          for (const int c : neighbours) {
            for (int l = 0; l < 4; ++l) pattern.column_indices.push_back(4 * c + l);
          }
          pattern.row_starts.push_back(static_cast<int>(pattern.column_indices.size()));
        }
      }
    }
    return pattern;
  }

  airfoil_o_grid m_grid;
  euler_airfoil_settings m_settings;
  state4<double> m_free_stream{};
  std::vector<state4<double>> m_far_field_outer;  ///< the imposed outer state at each far-field face
  nkit::sparsity_pattern m_pattern;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_HPP
