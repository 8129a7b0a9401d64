// Non-equilibrium gray radiation diffusion in one dimension: two fields, the
// radiation energy density E and the material temperature T, coupled by
// emission and absorption (dimensionless form).
//
// Model (D.A. Knoll, W.J. Rider & G.L. Olson, "An efficient nonlinear solution
// method for non-equilibrium radiation diffusion", J. Quant. Spectrosc. Radiat.
// Transfer 63 (1999) 15–29; the form below is from memory, not confirmed
// against the paper):
//   ∂E/∂t − ∂x(D_r ∂x E) =  σ_a (T⁴ − E)
//   ∂T/∂t − ∂x(D_t ∂x T) = −σ_a (T⁴ − E)
//   σ_a = z³/T³,  D_r = 1/(3σ_a),  D_t = κ T^(5/2).
// κ = 0.01 is our choice (a weak material conduction that keeps the T equation
// parabolic), not a value from the paper. With the optional flux limiter
//   D_r = 1/(3σ_a + |∂x E|/E)
// (the "sum" limiter, as used by Knoll, Rider & Olson 1999, from memory; the
// limiter family goes back to C.D. Levermore & G.C. Pomraning, "A flux-limited
// diffusion theory", Astrophys. J. 248 (1981) 321–334) the radiation flux
// stays bounded by c·E (c = 1 here) where ∂x E/E is large.
//
// Marshak-wave scenario on x ∈ [0, 1] (recalled from Knoll, Rider & Olson
// 1999, from memory): E(x, 0) = 1e-5, T = E^(1/4); left boundary incoming flux
// ¼E − (1/(6σ_a)) ∂x E = 1, right boundary ¼E + (1/(6σ_a)) ∂x E = 0 (vacuum);
// ∂x T = 0 at both ends.
//
// Discretisation: cell-centred finite volume, N cells of width h = 1/N, cell
// centres x_i = (i + ½)h, unknowns interleaved by cell (E_i at 2i, T_i at
// 2i + 1; nkit::field_layout with fields "radiation_energy" and
// "material_temperature"). With F the radiation flux and G the conductive flux
// (both positive towards +x),
//   dE_i/dt = (F_(i−½) − F_(i+½))/h + σ_i (T_i⁴ − E_i)
//   dT_i/dt = (G_(i−½) − G_(i+½))/h − σ_i (T_i⁴ − E_i)
//   F_(i+½) = −D_(i+½) (E_(i+1) − E_i)/h,  G_(i+½) = −K_(i+½) (T_(i+1) − T_i)/h.
// Face coefficients: the ARITHMETIC mean of the two cell values, D_(i+½) =
// ½(D_i + D_(i+1)) (with the limiter 1/(1/D̄ + |E_(i+1) − E_i|/(h Ē)), Ē the mean
// of E). Why arithmetic: in this 1-D problem the material is uniform, so the
// coefficient varies only through the solution and is continuous; the harmonic
// mean (right at material jumps, S.V. Patankar, Numerical Heat Transfer and
// Fluid Flow, 1980, §4.2.3, from memory) is about twice the smaller value and
// so, where D ∝ T³ drops by orders of magnitude at the wave front, lets the
// cold cell throttle the flux and slows the front (common practice for
// nonlinear diffusion waves).
// Boundaries: the Marshak conditions are closed with a half-cell difference,
// ∂x E ≈ (E_0 − E_b)/(h/2) at x = 0 with D = D_0 = 1/(3σ_0) (the unlimited
// coefficient of the boundary cell, as the condition is written with 1/(6σ_a)).
// Eliminating the boundary value E_b gives
//   F_in  = F_(−½)  = 2D_0 (4q − E_0)/(h + 4D_0)       (q = 1, the incoming flux)
//   F_out = F_(N−½) = 2D_(N−1) E_(N−1)/(h + 4D_(N−1)),
// and G = 0 on both ends.
//
// What the discretisation conserves exactly (the check of
// tests/test_radiation_diffusion.cpp): the coupling terms cancel cell by cell
// and the interior fluxes telescope, so for EVERY state u
//   h Σ_i (dE_i/dt + dT_i/dt) = F_in(u) − F_out(u),
// i.e. W = h Σ_i (E_i + T_i) changes only through the boundaries. Any linear
// time-stepping formula (BDF, Runge–Kutta) inherits this per step, up to the
// residual left by the nonlinear solve.
//
// Equilibrium-limit variant (tests/test_radiation_equilibrium_limit.cpp): with
// insulated_boundaries the radiation flux is zero at both ends (F_in = F_out =
// 0, so W is conserved exactly), and conduction_coefficient = 0 turns the
// material conduction off. Where σ_a is large the two fields relax to E = T⁴
// and the pair becomes one nonlinear diffusion of e = E + T (derivation in
// that test).
//
// The scenario is a verification problem of the literature, nondimensional; it
// describes no particular device or material.
#ifndef NKIT_PROBLEMS_RADIATION_GRAY_RADIATION_DIFFUSION_HPP
#define NKIT_PROBLEMS_RADIATION_GRAY_RADIATION_DIFFUSION_HPP

#include <Eigen/Core>
#include <cmath>
#include <limits>
#include <nkit/fields/field_layout.hpp>
#include <nkit/jacobian/sparsity_pattern.hpp>
#include <stdexcept>
#include <string>
#include <utility>

namespace nkit_problems {

/// Parameters of the dimensionless model (defaults: the Marshak wave above).
struct gray_radiation_parameters {
  double atomic_number = 1.0;              ///< z in σ_a = z³/T³ (from memory: z = 1 in the 1-D case of the paper)
  double conduction_coefficient = 0.01;    ///< κ in D_t = κ T^(5/2) (our choice); 0 = no material conduction
  double incoming_flux = 1.0;              ///< q: ¼E − (1/(6σ_a)) ∂x E = q at x = 0
  double initial_radiation_energy = 1e-5;  ///< E(x, 0); T(x, 0) = E^(1/4)
  bool flux_limiter = false;               ///< D_r = 1/(3σ_a + |∂x E|/E) on interior faces
  bool insulated_boundaries = false;       ///< F_in = F_out = 0 instead of the Marshak conditions

  void validate() const {
    const auto positive = [](const char* name, double value) {
      if (!(value > 0.0 && std::isfinite(value))) {
        throw std::invalid_argument(std::string("gray_radiation_parameters.") + name + " must be finite and > 0 (got " +
                                    std::to_string(value) + ")");
      }
    };
    positive("atomic_number", atomic_number);
    if (!(conduction_coefficient >= 0.0 && std::isfinite(conduction_coefficient))) {
      throw std::invalid_argument("gray_radiation_parameters.conduction_coefficient must be finite and >= 0 (got " +
                                  std::to_string(conduction_coefficient) + ")");
    }
    positive("initial_radiation_energy", initial_radiation_energy);
    if (!(incoming_flux >= 0.0 && std::isfinite(incoming_flux))) {
      throw std::invalid_argument("gray_radiation_parameters.incoming_flux must be finite and >= 0 (got " +
                                  std::to_string(incoming_flux) + ")");
    }
  }
};

/// The 1-D two-field problem in nkit's time form M du/dt = f(t, u), M = I:
/// rate(), field_layout(), jacobian_pattern() (nkit assembles ∂f/∂u by colored
/// differences). A state with T_i <= 0 (or E_i <= 0 with the limiter) is outside
/// the model: rate() then returns NaN in that cell, which nkit's Newton driver
/// rejects as a trial point.
class gray_radiation_diffusion_1d {
 public:
  explicit gray_radiation_diffusion_1d(int cells, gray_radiation_parameters parameters = {})
      : m_cells(cells),
        m_parameters(parameters),
        m_layout({{"radiation_energy", 1}, {"material_temperature", 1}}, cells < 2 ? 2 : cells,
                 nkit::field_ordering::interleaved_by_cell),
        m_pattern(nkit::three_point_line_pattern(cells < 2 ? 2 : cells, 2)) {
    if (cells < 2) {
      throw std::invalid_argument("gray_radiation_diffusion_1d: cells must be >= 2 (got " + std::to_string(cells) +
                                  ")");
    }
    m_parameters.validate();
    m_h = 1.0 / cells;
  }

  int cells() const { return m_cells; }
  double cell_width() const { return m_h; }
  Eigen::Index unknowns() const { return 2 * static_cast<Eigen::Index>(m_cells); }
  double cell_centre(int i) const { return (i + 0.5) * m_h; }
  const gray_radiation_parameters& parameters() const { return m_parameters; }
  const nkit::field_layout& field_layout() const { return m_layout; }
  const nkit::sparsity_pattern& jacobian_pattern() const { return m_pattern; }

  static double energy(const Eigen::VectorXd& u, int i) { return u(2 * i); }
  static double temperature(const Eigen::VectorXd& u, int i) { return u(2 * i + 1); }

  /// E = initial_radiation_energy, T = E^(1/4) in every cell.
  Eigen::VectorXd initial_state() const {
    Eigen::VectorXd u(unknowns());
    const double e0 = m_parameters.initial_radiation_energy;
    for (int i = 0; i < m_cells; ++i) {
      u(2 * i) = e0;
      u(2 * i + 1) = std::pow(e0, 0.25);
    }
    return u;
  }

  /// σ_a = z³/T³.
  double absorption(double t) const {
    const double z = m_parameters.atomic_number;
    return z * z * z / (t * t * t);
  }
  /// D_r = 1/(3σ_a) = T³/(3z³) (unlimited).
  double radiation_diffusion(double t) const { return 1.0 / (3.0 * absorption(t)); }
  /// D_t = κ T^(5/2).
  double conduction(double t) const { return m_parameters.conduction_coefficient * t * t * std::sqrt(t); }

  /// 2D/(h + 4D) with D = D_r(t) of a boundary cell: F_in = b (4q − E_0), F_out
  /// = b E_(N−1) (above); 0 with insulated_boundaries.
  double boundary_transfer(double t) const {
    if (m_parameters.insulated_boundaries) return 0.0;
    const double d = radiation_diffusion(t);
    return 2.0 * d / (m_h + 4.0 * d);
  }
  /// Radiation flux into the domain at x = 0 (F_in above).
  double inflow(const Eigen::VectorXd& u) const {
    if (m_parameters.insulated_boundaries) return 0.0;
    const double d = radiation_diffusion(temperature(u, 0));
    return 2.0 * d * (4.0 * m_parameters.incoming_flux - energy(u, 0)) / (m_h + 4.0 * d);
  }
  /// Radiation flux out of the domain at x = 1 (F_out above).
  double outflow(const Eigen::VectorXd& u) const {
    if (m_parameters.insulated_boundaries) return 0.0;
    const double d = radiation_diffusion(temperature(u, m_cells - 1));
    return 2.0 * d * energy(u, m_cells - 1) / (m_h + 4.0 * d);
  }
  /// W = h Σ_i (E_i + T_i), the total energy per unit area.
  double total_energy(const Eigen::VectorXd& u) const {
    double sum = 0.0;
    for (int i = 0; i < m_cells; ++i) sum += energy(u, i) + temperature(u, i);
    return m_h * sum;
  }

  /// D_(i+½) of interior face i + ½ (i = 0 … N−2), limited when flux_limiter is set.
  double radiation_face_coefficient(const Eigen::VectorXd& u, int i) const {
    const double d = 0.5 * (radiation_diffusion(temperature(u, i)) + radiation_diffusion(temperature(u, i + 1)));
    if (!m_parameters.flux_limiter) return d;
    const double e_left = energy(u, i), e_right = energy(u, i + 1);
    const double mean = 0.5 * (e_left + e_right);
    return 1.0 / (1.0 / d + std::abs(e_right - e_left) / (m_h * mean));
  }
  /// K_(i+½) of interior face i + ½.
  double conduction_face_coefficient(const Eigen::VectorXd& u, int i) const {
    return 0.5 * (conduction(temperature(u, i)) + conduction(temperature(u, i + 1)));
  }
  /// Radiation flux through interior face i + ½ (i = 0 … N−2).
  double radiation_face_flux(const Eigen::VectorXd& u, int i) const {
    return -radiation_face_coefficient(u, i) * (energy(u, i + 1) - energy(u, i)) / m_h;
  }
  /// Conductive flux through interior face i + ½.
  double conduction_face_flux(const Eigen::VectorXd& u, int i) const {
    return -conduction_face_coefficient(u, i) * (temperature(u, i + 1) - temperature(u, i)) / m_h;
  }

  /// f(t, u): the rates above (f sized like u; t unused, the problem is autonomous).
  void rate(double /*t*/, const Eigen::VectorXd& u, Eigen::VectorXd& f) const {
    if (f.size() != u.size()) f.resize(u.size());
    const double nan = std::numeric_limits<double>::quiet_NaN();
    double radiation_left = inflow(u);
    double conduction_left = 0.0;
    for (int i = 0; i < m_cells; ++i) {
      const double e = energy(u, i), t = temperature(u, i);
      if (!(t > 0.0) || (m_parameters.flux_limiter && !(e > 0.0))) {
        f(2 * i) = nan;
        f(2 * i + 1) = nan;
        radiation_left = nan;
        conduction_left = nan;
        continue;
      }
      const double radiation_right = i + 1 < m_cells ? radiation_face_flux(u, i) : outflow(u);
      const double conduction_right = i + 1 < m_cells ? conduction_face_flux(u, i) : 0.0;
      const double t2 = t * t;
      const double exchange = absorption(t) * (t2 * t2 - e);
      f(2 * i) = (radiation_left - radiation_right) / m_h + exchange;
      f(2 * i + 1) = (conduction_left - conduction_right) / m_h - exchange;
      radiation_left = radiation_right;
      conduction_left = conduction_right;
    }
  }

  /// Position of the wave front: the first x (linear interpolation between
  /// cell centres, from the left) where T falls below `level`; 0 when T(x_0) <
  /// level, 1 when T stays above it.
  double front_position(const Eigen::VectorXd& u, double level = 0.5) const {
    if (temperature(u, 0) < level) return 0.0;
    for (int i = 0; i + 1 < m_cells; ++i) {
      const double a = temperature(u, i), b = temperature(u, i + 1);
      if (b < level) return cell_centre(i) + m_h * (a - level) / (a - b);
    }
    return 1.0;
  }

 private:
  int m_cells = 0;
  double m_h = 0.0;
  gray_radiation_parameters m_parameters;
  nkit::field_layout m_layout;
  nkit::sparsity_pattern m_pattern;
};

/// One backward-Euler step of the coupled problem as a steady nkit residual,
/// R(u) = u − u_old − Δt f(u), with the problem's field_layout() (so the Newton
/// report carries per-field residual norms) and jacobian_pattern(). Holds a
/// reference to the problem and a copy of u_old. `Problem`: the 1-D problem
/// here or the 2-D one (gray_radiation_diffusion_2d.hpp), deduced from the
/// constructor's first argument.
template <class Problem>
class gray_radiation_backward_euler_step {
 public:
  gray_radiation_backward_euler_step(const Problem& problem, Eigen::VectorXd old_state, double step_size)
      : m_problem(problem), m_old(std::move(old_state)), m_step(step_size) {
    if (!(step_size > 0.0 && std::isfinite(step_size))) {
      throw std::invalid_argument("gray_radiation_backward_euler_step: step_size must be finite and > 0 (got " +
                                  std::to_string(step_size) + ")");
    }
    m_problem.field_layout().require_size(m_old.size(), "old_state");
  }
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    m_problem.rate(0.0, u, r);
    r = u - m_old - m_step * r;
  }
  const nkit::field_layout& field_layout() const { return m_problem.field_layout(); }
  const nkit::sparsity_pattern& jacobian_pattern() const { return m_problem.jacobian_pattern(); }

 private:
  const Problem& m_problem;
  Eigen::VectorXd m_old;
  double m_step;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_RADIATION_GRAY_RADIATION_DIFFUSION_HPP
