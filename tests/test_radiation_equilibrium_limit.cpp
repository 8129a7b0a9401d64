// The equilibrium limit of the gray radiation-diffusion problem
// (problems/radiation/gray_radiation_diffusion.hpp) against the closed-form
// Barenblatt–Pattle self-similar solution (tests/support/barenblatt_pattle.hpp).
// Part of the nkit_radiation_tests executable.
//
// Derivation. The model is
//   ∂E/∂t = ∂x(D_r ∂x E) + σ_a (T⁴ − E),   ∂T/∂t = ∂x(D_t ∂x T) − σ_a (T⁴ − E),
//   σ_a = z³/T³,  D_r = 1/(3σ_a) = T³/(3z³),  D_t = κ T^(5/2).
// Adding the two equations removes the exchange exactly:
//   ∂(E + T)/∂t = ∂x(D_r ∂x E + D_t ∂x T).
// Where σ_a is large against the inverse time scale of the wave, the exchange
// forces E = T⁴ up to O(1/(σ_a t)) (the equilibrium diffusion limit; Ya.B.
// Zel'dovich & Yu.P. Raizer, Physics of Shock Waves and High-Temperature
// Hydrodynamic Phenomena, ch. II and X, radiant heat conduction, from memory).
// Then e = E + T = T + T⁴ and the flux is
//   D_r ∂x(T⁴) = (T³/(3z³)) 4T³ ∂x T = (4/(3z³)) T⁶ ∂x T:
// the small D_r = 1/(3σ_a) of the E equation is NOT negligible — it carries all
// of the energy flux — while E itself is negligible in the energy where T ≪ 1
// (E/T = T³). Which terms dominate, for T ≪ 1:
//   - energy: e = T (1 + T³) ≈ T (relative error T³);
//   - flux: radiation, ∝ T⁶, provided the material conduction is off: κ T^(5/2)
//     exceeds (4/3)T⁶ once T^(7/2) < 3κ/4, i.e. at the cold foot of every
//     front whatever κ > 0 is, so this check sets κ = 0 (problem setting
//     conduction_coefficient = 0);
//   - coupling: σ_a = z³/T³ >= 8000 where T <= 0.05, against wave times ~1e6:
//     equilibrium holds to ~1e-10.
// So T obeys u_t = (a u^n u_x)_x with n = 6 and a = 4/(3z³); with t' = a t,
// u_t' = (u⁶ u_x)_x, whose instantaneous plane-source solution is the
// Barenblatt–Pattle profile with m = n = 6: u ∝ [1 − x²/x_f²]^(1/6), front
// x_f ∝ t^(1/(n+2)) = t^(1/8) (the radiant heat wave of Zel'dovich & Raizer
// ch. X with heat conductivity ∝ T⁶, from memory).
//
// Scenario: a planar release at the centre of a symmetric domain, solved on
// the half domain [0, 1] with the symmetry plane at x = 0 and insulated ends
// (problem setting insulated_boundaries: zero flux at x = 0 is the symmetry
// condition, and the wave never reaches x = 1). Total heat Q = 0.03 over the
// whole line, Q/2 on the half domain. The state at t0 is the closed form's
// cell averages (so each grid starts with the same heat; the release at t = 0
// is the limit t0 → 0 of the same self-similar family), on a background
// T_b = 1e-6 (the model needs T > 0): the background is a constant, which the
// equation leaves alone, but it raises the diffusivity (T_b + v)⁶ against v⁶
// by the factor 1 + 6T_b/v, ~2e-4 where v ~ 0.03 (measured: T_b = 1e-3 moved
// the front by 2.7 %, T_b = 1e-5 and 1e-8 change the errors below by < 10 %).
// E = T⁴ in every cell at t0.
#include <Eigen/Core>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/time/implicit_time_stepper.hpp>
#include <sstream>
#include <vector>

#include "problems/radiation/gray_radiation_diffusion.hpp"
#include "support/barenblatt_pattle.hpp"

namespace {

using nkit_problems::gray_radiation_diffusion_1d;

constexpr double released_heat = 0.03;  // Q over the whole line
constexpr double background_temperature = 1e-6;
constexpr double start_time = 2e6, end_time = 1e8;  // model time t; the closed form runs on t' = a t
constexpr double flux_coefficient = 4.0 / 3.0;      // a = 4/(3z³), z = 1
const nkit_test::barenblatt_pattle_solution closed_form(6.0, released_heat);

/// T with T + T⁴ = e (Newton from T = e; the map is increasing and convex).
double temperature_of_energy(double e) {
  double t = e;
  for (int k = 0; k < 50; ++k) {
    const double step = (t + t * t * t * t - e) / (1.0 + 4.0 * t * t * t);
    t -= step;
    if (std::abs(step) <= 1e-16 * t) break;
  }
  return t;
}

/// The closed form's average over cell i (midpoint rule on 400 sub-cells: the
/// profile's (x_f − x)^(1/6) edge costs O((h/400)^(7/6)), far below the errors measured).
double cell_average(const gray_radiation_diffusion_1d& problem, int i, double closed_form_time) {
  const double h = problem.cell_width();
  const int samples = 400;
  double sum = 0.0;
  for (int k = 0; k < samples; ++k) sum += closed_form(i * h + (k + 0.5) * h / samples, closed_form_time);
  return sum / samples;
}

struct equilibrium_wave_result {
  double cell_size = 0.0;
  double profile_error = 0.0;  ///< h Σ |e_i − e_b − ū_i(t1)| / (Q/2), ū_i the closed form's cell average
  double front_error = 0.0;    ///< |x_f,num − x_f| / x_f, x_f,num from the second moment
  double heat_drift = 0.0;     ///< |W(t1) − W(t0)| / W(t0), W = h Σ (E + T)
  double heat_bound = 0.0;     ///< the bound derived in the test case, relative
  double largest_disequilibrium = 0.0;  ///< max_i |E_i − T_i⁴| at t1
  int accepted_steps = 0;
};

equilibrium_wave_result run_equilibrium_wave(int cells) {
  nkit_problems::gray_radiation_parameters parameters;
  parameters.conduction_coefficient = 0.0;
  parameters.insulated_boundaries = true;
  const gray_radiation_diffusion_1d problem(cells, parameters);
  const double h = problem.cell_width();
  const double background_energy = background_temperature + std::pow(background_temperature, 4.0);
  Eigen::VectorXd u(problem.unknowns());
  for (int i = 0; i < cells; ++i) {
    const double t = temperature_of_energy(background_energy + cell_average(problem, i, flux_coefficient * start_time));
    u(2 * i) = std::pow(t, 4.0);
    u(2 * i + 1) = t;
  }
  const double heat_before = problem.total_energy(u);

  nkit::time_stepper_settings settings;
  settings.method = nkit::time_method::bdf;
  settings.relative_tolerance = 1e-6;
  settings.absolute_tolerance = 1e-9;
  nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> stepper(settings);
  gray_radiation_diffusion_1d copy = problem;
  const nkit::integration_report& report = stepper.integrate(copy, u, start_time, end_time);
  REQUIRE(report.reached_end());

  equilibrium_wave_result result;
  result.cell_size = h;
  result.accepted_steps = static_cast<int>(report.accepted_steps);
  result.heat_drift = std::abs(problem.total_energy(u) - heat_before) / heat_before;
  // Heat: with insulated ends h Σ f_i = 0 for every state (the conservation law
  // of the header), so BDF2 keeps W exactly for exact stage solutions; each
  // stage stops at an estimated weighted RMS error <= 0.1, so W moves by at most
  // h · 2N · 0.1 · w_max = 0.2 w_max per step (w_max = atol + rtol·max|u|),
  // times a factor 10 because the estimate is not a bound (the argument of
  // test_radiation_diffusion.cpp's energy-balance check).
  const double w_max = settings.absolute_tolerance + settings.relative_tolerance * u.cwiseAbs().maxCoeff();
  result.heat_bound = 10.0 * 0.2 * w_max * static_cast<double>(report.accepted_steps) / heat_before;

  const double t1 = flux_coefficient * end_time;
  double moment = 0.0, mass = 0.0;
  for (int i = 0; i < cells; ++i) {
    const double x = problem.cell_centre(i);
    const double e = gray_radiation_diffusion_1d::energy(u, i), t = gray_radiation_diffusion_1d::temperature(u, i);
    const double v = e + t - background_energy;
    result.profile_error += std::abs(v - cell_average(problem, i, t1)) * h;
    moment += x * x * v;
    mass += v;
    result.largest_disequilibrium = std::max(result.largest_disequilibrium, std::abs(e - std::pow(t, 4.0)));
  }
  result.profile_error /= 0.5 * released_heat;
  const double front = std::sqrt(moment / mass / closed_form.second_moment_fraction());
  result.front_error = std::abs(front - closed_form.front(t1)) / closed_form.front(t1);
  return result;
}

std::string describe(const std::vector<equilibrium_wave_result>& results) {
  std::ostringstream text;
  for (const auto& r : results) {
    text << "\n  h " << r.cell_size << ": L1 " << r.profile_error << ", front " << r.front_error << ", heat drift "
         << r.heat_drift << " (bound " << r.heat_bound << "), max |E - T^4| " << r.largest_disequilibrium << ", steps "
         << r.accepted_steps;
  }
  return text.str();
}

}  // namespace

// The generalised closed form (m = 6) satisfies u_t = (u⁶ u_x)_x and holds Q:
// substitution by central differences (error O(δ²), δ = 1e-4 relative to the
// scales x_f and t) at points inside the support, where the profile is smooth.
TEST_CASE("radiation equilibrium limit: the m = 6 Barenblatt-Pattle form solves u_t = (u^6 u_x)_x",
          "[radiation][barenblatt]") {
  const double t = flux_coefficient * start_time;
  const double front = closed_form.front(t);
  const double dx = 1e-4 * front, dt = 1e-4 * t;
  const auto u = [&](double x, double time) { return closed_form(x, time); };
  for (const double fraction : {0.0, 0.3, 0.6, 0.85}) {
    const double x = fraction * front;
    const double u_t = (u(x, t + dt) - u(x, t - dt)) / (2.0 * dt);
    const auto flux = [&](double xx) { return std::pow(u(xx, t), 6.0) * (u(xx + dx, t) - u(xx - dx, t)) / (2.0 * dx); };
    const double divergence = (flux(x + dx) - flux(x - dx)) / (2.0 * dx);
    // Relative to the size of u_t at the centre; O(δ²) ≈ 1e-8 with the constants, 1e-5 leaves room.
    const double scale = std::abs((u(0.0, t + dt) - u(0.0, t - dt)) / (2.0 * dt));
    CHECK_THAT(u_t - divergence, Catch::Matchers::WithinAbs(0.0, 1e-5 * scale));
  }
  // ∫ u over the support by the midpoint rule in s (x = x_f sin θ removes the
  // endpoint singularity of (1 − s²)^(1/6)'s derivative): error far below 1e-8.
  const int samples = 200000;
  double heat = 0.0;
  const double pi = std::acos(-1.0);
  for (int k = 0; k < samples; ++k) {
    const double theta = -0.5 * pi + pi * (k + 0.5) / samples;
    heat += u(front * std::sin(theta), t) * front * std::cos(theta) * pi / samples;
  }
  CHECK_THAT(heat, Catch::Matchers::WithinRel(released_heat, 1e-8));
  // Front law x_f ∝ t^(1/(n+2)) = t^(1/8).
  CHECK_THAT(closed_form.front(256.0 * t) / front, Catch::Matchers::WithinRel(2.0, 1e-12));
}

// The radiation problem in its equilibrium limit converges to the closed form.
// Expected rates: first order in h. The profile's edge behaves like
// (x_f − x)^(1/6) (infinite slope), which the cell-centred scheme resolves only
// to O(h) in the front position (measured below: rates 1.0–1.1), and a front
// displaced by δ makes an L1 error ≈ δ · (the profile's total variation), so
// the L1 error is O(h) as well, below the second order of the smooth part
// (common practice for degenerate diffusion; the m = 1 test of
// test_time_barenblatt.cpp has a milder kink and shows second order). Beyond
// the grid: the model differs from u_t = (a u⁶ u_x)_x by O(T³) ≲ 1.3e-4
// relative (e = T + T⁴), the background's 6T_b/v ≈ 2e-4 and O(1/(σ_a t))
// (disequilibrium); the time error at rtol 1e-6 is negligible (rtol 1e-7
// changed the 200-cell L1 error by 0.1 %).
// Measured (Release, December 2026), relative L1 error / relative front error:
//   50 cells 2.60e-3 / 8.8e-4, 100 cells 1.28e-3 / 4.4e-4, 200 cells 7.6e-4 /
//   2.1e-4, 400 cells 4.2e-4 / 9.7e-5, 800 cells 1.5e-4 / 4.7e-5 (the last two
//   in the [.slow] case). Front rates 1.0, 1.1, 1.1, 1.0; L1 rates 1.02, 0.76,
//   0.83, 1.51: first order on average, not yet smooth in h (the front crosses
//   cells in steps). Checked: the front error falls at >= 0.9 per halving over
//   50 → 200 (first order less 0.1), the L1 error at >= 0.75 over the same
//   range (first order less the measured unevenness), both monotonically; heat
//   by the bound derived in run_equilibrium_wave.
TEST_CASE("radiation equilibrium limit: front and profile converge to Barenblatt-Pattle, heat conserved",
          "[radiation][barenblatt]") {
  std::vector<equilibrium_wave_result> results;
  for (const int cells : {50, 100, 200}) results.push_back(run_equilibrium_wave(cells));
  INFO(describe(results));
  for (const auto& r : results) {
    CHECK(r.heat_drift <= r.heat_bound);
    // E = T⁴ holds physically to O(1/(σ_a t)) ~ 1e-10 relative, but E (<= 1e-6)
    // is resolved only to the solver's absolute tolerance 1e-9 (weighted stage
    // test and error control): checked at 10 × that tolerance.
    CHECK(r.largest_disequilibrium < 1e-8);
  }
  const auto rate = [](double coarse, double fine) { return std::log2(coarse / fine); };
  CHECK(rate(results[0].profile_error, results[2].profile_error) / 2.0 >= 0.75);
  CHECK(rate(results[0].front_error, results[2].front_error) / 2.0 >= 0.9);
  CHECK(results[2].profile_error < results[1].profile_error);
  CHECK(results[1].profile_error < results[0].profile_error);
  CHECK(results[2].front_error < results[1].front_error);
  CHECK(results[1].front_error < results[0].front_error);
  WARN("equilibrium-limit Barenblatt-Pattle (n = 6):" << describe(results));
}

TEST_CASE("radiation equilibrium limit: the first-order convergence holds on finer grids",
          "[radiation][barenblatt][.slow]") {
  std::vector<equilibrium_wave_result> results;
  for (const int cells : {100, 200, 400, 800}) results.push_back(run_equilibrium_wave(cells));
  INFO(describe(results));
  const auto rate = [](double coarse, double fine) { return std::log2(coarse / fine); };
  for (std::size_t i = 0; i + 1 < results.size(); ++i) {
    CHECK(results[i].heat_drift <= results[i].heat_bound);
    CHECK(rate(results[i].front_error, results[i + 1].front_error) >= 0.9);
    CHECK(results[i + 1].profile_error < results[i].profile_error);
  }
  WARN("equilibrium-limit Barenblatt-Pattle (n = 6), finer grids:" << describe(results));
}
