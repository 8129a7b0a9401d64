// The nonlinear heat wave from an instantaneous point release, against the
// closed-form Barenblatt–Pattle (Zel'dovich–Kompaneets) solution of
// u_t = (u^m u_x)_x (tests/support/barenblatt_pattle.hpp: formula, sources,
// derivation), here with m = 1: α = 1/3, front |x_f| = √(12C) (t/2)^(1/3).
#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/time/implicit_time_stepper.hpp>
#include <vector>

#include "support/barenblatt_pattle.hpp"

namespace {

constexpr double released_heat = 1.0;  // Q
const nkit_test::barenblatt_pattle_solution closed_form(1.0, released_heat);

/// u(x, t) of u_t = (u u_x)_x (m = 1).
double barenblatt(double x, double t) { return closed_form(x, t); }
double barenblatt_front(double t) { return closed_form.front(t); }

/// Finite volumes on [−L, L], N cells, insulated ends: du_i/dt = (F_(i−½) − F_(i+½))/Δx,
/// F_(i+½) = −½(u_i + u_(i+1)) (u_(i+1) − u_i)/Δx. Conservative: Σ_i f_i = 0 exactly.
struct porous_medium_1d {
  int cells;
  double length;
  double dx;
  porous_medium_1d(int n, double half_length) : cells(n), length(half_length), dx(2.0 * half_length / n) {}
  double centre(int i) const { return -length + (i + 0.5) * dx; }

  void rate(double /*t*/, const Eigen::VectorXd& u, Eigen::VectorXd& f) const {
    f.setZero();
    const double scale = 1.0 / (dx * dx);
    for (int i = 0; i + 1 < cells; ++i) {
      const double flux = 0.5 * (u(i) + u(i + 1)) * (u(i + 1) - u(i)) * scale;  // −F_(i+½)/Δx
      f(i) += flux;
      f(i + 1) -= flux;
    }
  }
  void assemble_rate_jacobian(double /*t*/, const Eigen::VectorXd& u, nkit::sparse_matrix& jacobian) const {
    std::vector<Eigen::Triplet<double, int>> entries;
    const double scale = 1.0 / (dx * dx);
    for (int i = 0; i < cells; ++i) entries.emplace_back(i, i, 0.0);
    for (int i = 0; i + 1 < cells; ++i) {
      const double d = 0.5 * (u(i) + u(i + 1));
      const double du = u(i + 1) - u(i);
      const double by_left = (0.5 * du - d) * scale;   // ∂(flux)/∂u_i
      const double by_right = (0.5 * du + d) * scale;  // ∂(flux)/∂u_(i+1)
      entries.emplace_back(i, i, by_left);
      entries.emplace_back(i, i + 1, by_right);
      entries.emplace_back(i + 1, i, -by_left);
      entries.emplace_back(i + 1, i + 1, -by_right);
    }
    jacobian.resize(cells, cells);
    jacobian.setFromTriplets(entries.begin(), entries.end());
  }
};

struct wave_result {
  double profile_error = 0.0;       ///< L1 error at the final time
  double front_error = 0.0;         ///< |x_num − x_exact| at the level 5 % of the peak
  double heat_drift = 0.0;          ///< |Q(t1) − Q(t0)| / Q(t0)
  double moment_front_error = 0.0;  ///< |√5 x_rms − x_f|: for this profile ∫x²u / ∫u = x_f²/5
  double cell_size = 0.0;
};

constexpr double start_time = 0.2, end_time = 2.0, half_length = 3.0;

wave_result run_wave(int cells, nkit::time_method method) {
  porous_medium_1d problem(cells, half_length);
  Eigen::VectorXd u(cells);
  for (int i = 0; i < cells; ++i) u(i) = barenblatt(problem.centre(i), start_time);
  const double heat_before = u.sum() * problem.dx;
  nkit::time_stepper_settings s;
  s.method = method;
  s.relative_tolerance = 1e-6;
  s.absolute_tolerance = 1e-8;
  nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> stepper(s);
  const nkit::integration_report& report = stepper.integrate(problem, u, start_time, end_time);
  REQUIRE(report.reached_end());
  wave_result r;
  r.heat_drift = std::abs(u.sum() * problem.dx - heat_before) / heat_before;
  for (int i = 0; i < cells; ++i)
    r.profile_error += std::abs(u(i) - barenblatt(problem.centre(i), end_time)) * problem.dx;
  // Right-hand crossing of the level ε·peak: exact at x_f √(1 − ε) (the profile is C − k x² τ^(−2/3) scaled).
  const double epsilon = 0.05;
  const double level = epsilon * barenblatt(0.0, end_time);
  int last = cells / 2;
  while (last + 1 < cells && u(last + 1) >= level) ++last;
  const double x_num = problem.centre(last) + (u(last) - level) / (u(last) - u(last + 1)) * problem.dx;
  r.front_error = std::abs(x_num - barenblatt_front(end_time) * std::sqrt(1.0 - epsilon));
  // Second moment: ∫x²(1 − x²/x_f²)dx / ∫(1 − x²/x_f²)dx = x_f²/5 over |x| < x_f.
  double moment = 0.0;
  for (int i = 0; i < cells; ++i) moment += problem.centre(i) * problem.centre(i) * u(i);
  r.moment_front_error = std::abs(std::sqrt(5.0 * moment / u.sum()) - barenblatt_front(end_time));
  r.cell_size = problem.dx;
  return r;
}

}  // namespace

TEST_CASE("The Barenblatt-Pattle closed form satisfies u_t = (u u_x)_x and releases Q", "[time][barenblatt]") {
  // Substitution by central differences (error O(δ²) with δ = 1e-4) at points inside the support.
  const double delta = 1e-4;
  for (double x : {0.0, 0.3, 0.9, 1.5}) {
    const double t = 1.0;
    const auto u = [](double xx, double tt) { return barenblatt(xx, tt); };
    const double u_t = (u(x, t + delta) - u(x, t - delta)) / (2 * delta);
    const auto flux = [&](double xx) { return u(xx, t) * (u(xx + delta, t) - u(xx - delta, t)) / (2 * delta); };
    const double divergence = (flux(x + delta) - flux(x - delta)) / (2 * delta);
    CHECK_THAT(u_t - divergence, Catch::Matchers::WithinAbs(0.0, 1e-6));
  }
  // Total heat by the trapezoidal rule on a fine grid (error O(h²) on a parabola's kink-free interior).
  const double front = barenblatt_front(1.0);
  const int samples = 200000;
  double heat = 0.0;
  for (int i = 0; i <= samples; ++i) {
    const double x = -front + 2.0 * front * i / samples;
    heat += (i == 0 || i == samples ? 0.5 : 1.0) * barenblatt(x, 1.0) * 2.0 * front / samples;
  }
  CHECK_THAT(heat, Catch::Matchers::WithinRel(released_heat, 1e-8));
}

TEST_CASE("Nonlinear heat wave: front and profile converge to Barenblatt-Pattle, heat conserved",
          "[time][barenblatt][slow_unoptimized]") {
  // Expected rates: the scheme is second order where the profile is smooth;
  // at the front the profile has a kink (u ∝ x_f − |x|), which spoils the
  // local accuracy only in O(1) cells of width Δx, so the L1 profile error and
  // the moment-based front position both fall like Δx² asymptotically
  // (common practice for degenerate diffusion with Lipschitz fronts). On
  // these grids the observed L1 rate is still rising (1.5, 1.9, 2.1), so the
  // check takes the two finest grids and accepts >= 1.85 (2 − 0.15).
  // Heat: Σ_i f_i = 0 exactly, so the heat changes only by the sum of the
  // final linear residual of each stage solve (an exact factorisation here):
  // conserved to round-off, checked at 1e-11.
  for (auto method : {nkit::time_method::bdf, nkit::time_method::esdirk}) {
    std::vector<wave_result> r;
    for (int cells : {60, 120, 240, 480}) r.push_back(run_wave(cells, method));
    for (const wave_result& x : r) {
      INFO(nkit::name(method) << " dx " << x.cell_size << ": L1 " << x.profile_error << ", front (moment) "
                              << x.moment_front_error << ", front (5 % level) " << x.front_error << ", heat drift "
                              << x.heat_drift);
      CHECK(x.heat_drift < 1e-11);
      // The 5 %-level crossing lies within one cell of the exact one.
      CHECK(x.front_error < x.cell_size);
    }
    const auto rate = [](double coarse, double fine) { return std::log2(coarse / fine); };
    CHECK(rate(r[2].profile_error, r[3].profile_error) >= 1.85);
    // The moment-based front error changes sign between grids (measured 4.8e-4,
    // 5.8e-5, 6.2e-5, 6.8e-6), so its rate is taken over the whole sequence
    // (8× refinement; measured 2.05).
    CHECK(rate(r[0].moment_front_error, r[3].moment_front_error) / 3.0 >= 1.85);
    CHECK(r[3].profile_error < r[2].profile_error);
    CHECK(r[2].profile_error < r[1].profile_error);
  }
}
