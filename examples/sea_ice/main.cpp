// Viscous-plastic sea-ice momentum, solved every time step of a multi-day run
// by Jacobian-free Newton–Krylov (preconditioned by the frozen-viscosity
// matrix, factored by sparse LU) and by the Picard loop that sea-ice codes use
// (freeze the viscosities, solve, repeat a fixed small number of passes).
//
// DEMONSTRATION ONLY. The basin, the ocean gyre, the cyclone and the ice are
// our own invented scenario (problems/sea_ice/cyclone_basin.hpp); the rheology
// and constants follow the published model (problems/sea_ice/
// viscous_plastic_momentum.hpp gives the sources). It is not a forecast, and a
// converged solve is not a validated model: operational use needs validated
// models and their applicable practice.
//
// Two trajectories run side by side from the same start: one advances with the
// Newton–Krylov velocities (converged to --newton_tolerance), one with the
// velocities left after --picard_passes Picard passes; both move the ice with
// the same upwind transport. Per step it records the residual each solver
// reached, its work and time; for the first step it also runs Picard towards
// the Newton tolerance (at most --convergence_passes passes) and writes both
// residual histories against wall time. Pictures: ice thickness and velocity,
// the deformation rate, the residual left per step, the first-step histories;
// a VTK file of the final fields.
//
// --globalization (line search, trust region, pseudo-transient continuation),
// --picard_start_passes (Picard passes before each Newton solve) and
// --forcing_maximum (the largest Eisenstat–Walker forcing term) are the knobs
// compared at 10 km by compare_globalizations.sh (docs/gallery.md).
//
//   sea_ice [--cells_per_side=50] [--days=2] [--time_step_hours=2] [--picard_passes=10]
//           [--newton_tolerance=1e-8] [--globalization=line_search] [--picard_start_passes=0]
//           [--forcing_maximum=0.9] [--rebuild_every=3] [--convergence_passes=300]
//           [--output=sea_ice_output] [--help]
#include <algorithm>
#include <chrono>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <stdexcept>
#include <string>
#include <vector>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "common/vtk_legacy.hpp"
#include "problems/sea_ice/cyclone_basin.hpp"
#include "problems/sea_ice/sea_ice_solvers.hpp"
#include "problems/sea_ice/viscous_plastic_momentum.hpp"

namespace {

using nkit_problems::sea_ice_momentum;

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

double relative_residual(const sea_ice_momentum& problem, const Eigen::VectorXd& u, double initial_norm,
                         Eigen::VectorXd& r) {
  problem(u, r);
  return r.norm() / initial_norm;
}

struct step_sample {
  double hours;
  int newton_steps;
  long long gmres_iterations;
  double newton_residual, newton_seconds;
  double picard_residual, picard_seconds;
  double velocity_difference;  // max |u_newton − u_picard| over the two trajectories
};

int run(int argc, char** argv) {
  nkit_examples::command_line options(
      "sea_ice", "Viscous-plastic sea-ice momentum by Newton-Krylov against the Picard loop (invented scenario)");
  options.option("cells_per_side", "50", "grid cells per side of the 1,000 km basin (50: 20 km)");
  options.option("days", "2", "simulated days");
  options.option("time_step_hours", "2", "time step of the momentum equation and of the ice transport");
  options.option("picard_passes", "10", "Picard passes per step in the Picard trajectory (sea-ice codes use 2-10)");
  options.option("newton_tolerance", "1e-8", "Newton-Krylov stops at |R| <= this * |R(u_old)|");
  options.option("globalization", "line_search", "line_search, trust_region or pseudo_transient");
  options.option("forcing_maximum", "0.9", "largest Eisenstat-Walker forcing term (GMRES tolerance per Newton step)");
  options.option("picard_start_passes", "0", "Picard passes before each Newton-Krylov solve (a warm start)");
  options.option("rebuild_every", "3", "refactor the frozen-viscosity preconditioner every this many Newton steps");
  options.option("convergence_passes", "300",
                 "first step only: Picard towards the Newton tolerance, at most this many passes");
  options.option("output", "sea_ice_output", "folder for CSV files and pictures");
  if (!options.parse(argc, argv)) return 0;
  const int n = options.integer("cells_per_side");
  const double step = options.number("time_step_hours") * 3600.0;
  const double days = options.number("days");
  const int passes = options.integer("picard_passes");
  const std::string globalization = options.text("globalization");
  if (!(step > 0.0)) throw std::invalid_argument("sea_ice: --time_step_hours must be > 0");
  if (!(days > 0.0)) throw std::invalid_argument("sea_ice: --days must be > 0");
  if (passes < 1)
    throw std::invalid_argument("sea_ice: --picard_passes must be >= 1 (got " + std::to_string(passes) + ")");
  if (globalization != "line_search" && globalization != "trust_region" && globalization != "pseudo_transient") {
    throw std::invalid_argument("sea_ice: --globalization must be line_search, trust_region or pseudo_transient (got " +
                                globalization + ")");
  }
  const int start_passes = options.integer("picard_start_passes");
  if (start_passes < 0)
    throw std::invalid_argument("sea_ice: --picard_start_passes must be >= 0 (got " + std::to_string(start_passes) +
                                ")");
  const int steps = std::max(1, static_cast<int>(days * 86400.0 / step + 0.5));

  nkit::newton_settings newton;
  newton.relative_tolerance = options.number("newton_tolerance");
  newton.newton_step_budget = 200;
  newton.linear.restart_length = 40;
  newton.forcing.maximum_value = options.number("forcing_maximum");
  if (!(newton.forcing.maximum_value > 0.0 && newton.forcing.maximum_value < 1.0)) {
    throw std::invalid_argument("sea_ice: --forcing_maximum must lie in (0, 1) (got " +
                                options.text("forcing_maximum") + ")");
  }
  newton.forcing.initial_value = std::min(newton.forcing.initial_value, newton.forcing.maximum_value);
  if (globalization == "pseudo_transient") newton.globalization = nkit::globalization_strategy::pseudo_transient;
  if (globalization == "trust_region") newton.globalization = nkit::globalization_strategy::trust_region;
  // Lagged preconditioner: refactor every few steps, and at once when GMRES slows down (common practice).
  newton.preconditioner_rebuild.rebuild_every_newton_steps = options.integer("rebuild_every");
  newton.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 25;
  const long long convergence_passes = options.integer("convergence_passes");

  // The two trajectories: each its own ice state, the same forcing.
  sea_ice_momentum newton_problem(n, 1.0e6), picard_problem(n, 1.0e6);
  nkit_problems::cyclone_basin newton_basin(newton_problem), picard_basin(picard_problem);
  Eigen::VectorXd u_newton = Eigen::VectorXd::Zero(newton_problem.unknowns()), u_picard = u_newton;
  Eigen::VectorXd r(newton_problem.unknowns());

  std::printf(
      "Sea-ice momentum, viscous-plastic rheology: %d x %d cells of %.0f km, %d steps of %.2g h, Newton-Krylov (%s) "
      "against %d Picard passes per step\n"
      "DEMONSTRATION ONLY: invented basin, wind, ocean and ice; not a forecast and not a validated model.\n\n",
      n, n, newton_problem.cell_size() / 1000.0, steps, step / 3600.0, globalization.c_str(), passes);
  std::printf("  %6s | %13s | %12s | %16s | %12s | %16s | %12s | %14s\n", "hours", "Newton steps", "GMRES its",
              "Newton residual", "Newton time", "Picard residual", "Picard time", "velocity gap");

  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  std::vector<step_sample> samples;
  double median_residual_seconds = 0.0;
  long long newton_failures = 0;
  for (int k = 0; k < steps; ++k) {
    const double t = (k + 1) * step;
    step_sample sample{};
    sample.hours = t / 3600.0;

    newton_basin.set_time(t);
    newton_problem.set_step(u_newton, step);
    newton_problem(u_newton, r);
    const double newton_initial = r.norm();
    auto start = std::chrono::steady_clock::now();
    if (start_passes > 0) nkit_problems::solve_momentum_by_picard(newton_problem, u_newton, 0.0, start_passes);
    const nkit::solve_report report = nkit_problems::solve_momentum_by_newton_krylov(newton_problem, u_newton, newton);
    sample.newton_seconds = seconds_since(start);
    sample.newton_steps = report.newton_steps;
    sample.gmres_iterations = report.linear_iterations;
    sample.newton_residual = relative_residual(newton_problem, u_newton, newton_initial, r);
    if (!report.converged()) ++newton_failures;
    if (k == 0) median_residual_seconds = report.median_residual_seconds;

    picard_basin.set_time(t);
    picard_problem.set_step(u_picard, step);
    picard_problem(u_picard, r);
    const double picard_initial = r.norm();
    start = std::chrono::steady_clock::now();
    nkit_problems::solve_momentum_by_picard(picard_problem, u_picard, 0.0, passes);
    sample.picard_seconds = seconds_since(start);
    sample.picard_residual = relative_residual(picard_problem, u_picard, picard_initial, r);

    if (k == 0) {
      // The first step once more, Picard towards the Newton tolerance (at most --convergence_passes): both histories.
      sea_ice_momentum first(n, 1.0e6);
      nkit_problems::cyclone_basin first_basin(first);
      first_basin.set_time(t);
      Eigen::VectorXd u = Eigen::VectorXd::Zero(first.unknowns());
      first.set_step(u, step);
      const nkit_problems::picard_report converged =
          nkit_problems::solve_momentum_by_picard(first, u, newton.relative_tolerance, convergence_passes);
      std::ofstream picard_out(folder / "first_step_picard.csv");
      picard_out << "wall_seconds,work_units,relative_residual_norm\n0,0,1\n";
      for (const auto& h : converged.history) {
        picard_out << h.elapsed_seconds << ',' << h.elapsed_seconds / median_residual_seconds << ','
                   << h.relative_residual_norm << '\n';
      }
      std::ofstream newton_out(folder / "first_step_newton.csv");
      newton_out << "wall_seconds,work_units,relative_residual_norm\n0,0,1\n";
      for (const auto& h : report.history) {
        newton_out << h.elapsed_seconds << ',' << h.elapsed_seconds / median_residual_seconds << ','
                   << h.relative_residual_norm << '\n';
      }
      std::printf(
          "  (first step: Picard reached %.1e in %lld passes, %.2f s; Newton-Krylov %.1e in %d steps, %.2f s — "
          "%.0f against %.0f work units)\n",
          converged.history.empty() ? 1.0 : converged.history.back().relative_residual_norm, converged.iterations,
          converged.wall_seconds, report.final_residual_norm / report.initial_residual_norm, report.newton_steps,
          report.wall_seconds, converged.wall_seconds / median_residual_seconds,
          report.wall_seconds / median_residual_seconds);
    }

    newton_problem.advect_ice(u_newton, step);
    picard_problem.advect_ice(u_picard, step);
    sample.velocity_difference = (u_newton - u_picard).cwiseAbs().maxCoeff();
    samples.push_back(sample);
    if (k % std::max(1, steps / 12) == 0 || k + 1 == steps) {
      std::printf("  %6.1f | %13d | %12lld | %16.2e | %10.2f s | %16.2e | %10.2f s | %10.4f m/s\n", sample.hours,
                  sample.newton_steps, sample.gmres_iterations, sample.newton_residual, sample.newton_seconds,
                  sample.picard_residual, sample.picard_seconds, sample.velocity_difference);
    }
  }

  double newton_time = 0.0, picard_time = 0.0, worst_picard = 0.0;
  long long newton_steps = 0, gmres = 0;
  for (const step_sample& s : samples) {
    newton_time += s.newton_seconds;
    picard_time += s.picard_seconds;
    newton_steps += s.newton_steps;
    gmres += s.gmres_iterations;
    worst_picard = std::max(worst_picard, s.picard_residual);
  }
  std::printf(
      "\nNewton-Krylov: %lld Newton steps, %lld GMRES iterations (%.1f per Newton step), %.1f s, %lld steps not "
      "converged\n"
      "Picard, %d passes per step: %.1f s; residual left after each step up to %.2e of its initial value\n"
      "Velocity gap between the two trajectories at the end: %.4f m/s (largest Newton-Krylov speed %.3f m/s)\n",
      newton_steps, gmres, static_cast<double>(gmres) / std::max(1LL, newton_steps), newton_time, newton_failures,
      passes, picard_time, worst_picard, samples.back().velocity_difference, u_newton.cwiseAbs().maxCoeff());

  // Hibler's yield curve on the final Newton-Krylov state: every stress inside or on it.
  double largest_yield = 0.0;
  int plastic = 0;
  for (int j = 0; j < n; ++j) {
    for (int i = 0; i < n; ++i) {
      const nkit_problems::sea_ice_cell_stress s = newton_problem.cell_stress(u_newton, i, j);
      largest_yield = std::max(largest_yield, newton_problem.yield_function(s, s.strength));
      if (s.deformation >= 10.0 * newton_problem.parameters().minimum_deformation) ++plastic;
    }
  }
  std::printf(
      "Yield curve: largest yield function %.6f (<= 1 inside or on the curve); %d of %d cells deform plastically\n",
      largest_yield, plastic, n * n);

  {
    std::ofstream out(folder / "sea_ice_steps.csv");
    out << "hours,newton_steps,gmres_iterations,newton_relative_residual,newton_seconds,picard_relative_residual,"
           "picard_seconds,velocity_gap\n";
    for (const step_sample& s : samples) {
      out << s.hours << ',' << s.newton_steps << ',' << s.gmres_iterations << ',' << s.newton_residual << ','
          << s.newton_seconds << ',' << s.picard_residual << ',' << s.picard_seconds << ',' << s.velocity_difference
          << '\n';
    }
  }
  {
    // Cell-centred fields: h, A, the deformation rate Δ (per day) and the mean of the four corner velocities.
    Eigen::VectorXd h = newton_problem.thickness(), a = newton_problem.concentration();
    Eigen::VectorXd deformation(n * n), cell_u = Eigen::VectorXd::Zero(n * n), cell_v = Eigen::VectorXd::Zero(n * n);
    std::ofstream out(folder / "sea_ice_final_state.csv");
    out << "x_km,y_km,thickness_m,concentration,deformation_per_day,u_m_per_s,v_m_per_s\n";
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const int cell = i + n * j;
        deformation(cell) = newton_problem.cell_stress(u_newton, i, j).deformation * 86400.0;
        for (int q = 0; q < 4; ++q) {
          const int ca = i + q % 2, cb = j + q / 2;
          if (ca > 0 && cb > 0 && ca < n && cb < n) {
            cell_u(cell) += 0.25 * u_newton(newton_problem.index(ca, cb, 0));
            cell_v(cell) += 0.25 * u_newton(newton_problem.index(ca, cb, 1));
          }
        }
        out << newton_problem.cell_centre(i) / 1000.0 << ',' << newton_problem.cell_centre(j) / 1000.0 << ',' << h(cell)
            << ',' << a(cell) << ',' << deformation(cell) << ',' << cell_u(cell) << ',' << cell_v(cell) << '\n';
      }
      out << '\n';
    }
    nkit_examples::vtk_rectilinear_file vtk =
        nkit_examples::vtk_rectilinear_file::uniform(n, n, 0.0, 1000.0, 0.0, 1000.0);
    vtk.add_scalar("thickness_m", h);
    vtk.add_scalar("concentration", a);
    vtk.add_scalar("deformation_rate_per_day", deformation);
    vtk.add_vector("velocity_m_per_s", cell_u, cell_v);
    vtk.write(folder / "sea_ice_final_state.vtk", "sea ice, invented scenario, Newton-Krylov trajectory (km)");
  }
  const std::string history = nkit_examples::residual_history_script(
      "sea_ice_first_step.png", "First momentum step (invented scenario): residual against wall time", "wall time (s)",
      {{"first_step_newton.csv", 1, 3, "Newton-Krylov, frozen-viscosity preconditioner"},
       {"first_step_picard.csv", 1, 3, "Picard (frozen viscosities, sparse LU)"}});
  nkit_examples::run_gnuplot(folder, "sea_ice_first_step.gp", history, std::cout);
  const int stride = std::max(1, n / 25);
  // Arrows: the largest speed drawn as 0.9 of the spacing between arrows.
  const double arrow_scale =
      0.9 * stride * newton_problem.cell_size() / 1000.0 / std::max(1e-12, u_newton.cwiseAbs().maxCoeff());
  const std::string arrow = std::to_string(arrow_scale);
  const std::string state_script =
      "set datafile separator ','\nset terminal pngcairo size 1800,560 enhanced font 'Sans,11'\n"
      "set output 'sea_ice_state.png'\nset multiplot layout 1,3 title 'Invented scenario, Newton-Krylov trajectory, "
      "end of run'\n"
      "set size ratio -1\nset xlabel 'x (km)'\nset ylabel 'y (km)'\nset xrange [0:1000]\nset yrange [0:1000]\n"
      "set title 'ice thickness (m) and velocity'\nset palette defined (0 '#08306b', 1 '#6baed6', 2 '#f7fbff')\n"
      "plot 'sea_ice_final_state.csv' using 1:2:3 skip 1 with image notitle, '' using 1:2:($6*" +
      arrow + "):($7*" + arrow + ") skip 1 every " + std::to_string(stride) + ":" + std::to_string(stride) +
      " with vectors lc rgb '#d62728' head filled size 6,20 notitle\n"
      "set title 'deformation rate {/Symbol D} (per day, log scale)'\nset logscale cb\nset format cb '10^{%L}'\n"
      "set palette defined (0 '#ffffff', 1 '#fdae6b', 2 '#e6550d', 3 '#7f2704')\n"
      "plot 'sea_ice_final_state.csv' using 1:2:5 skip 1 with image notitle\n"
      "unset logscale cb\nset format cb\nset size noratio\nset autoscale\nset logscale y\nset format y '10^{%L}'\n"
      "set grid\nset title 'residual left after each step / residual at its start'\nset xlabel 'simulated hours'\n"
      "set ylabel 'relative residual'\nset key center right\n"
      "plot 'sea_ice_steps.csv' using 1:4 skip 1 with linespoints lw 2 title 'Newton-Krylov', '' using 1:6 skip 1 "
      "with linespoints lw 2 title 'Picard, " +
      std::to_string(passes) + " passes'\nunset multiplot\n";
  nkit_examples::run_gnuplot(folder, "sea_ice_state.gp", state_script, std::cout);
  std::printf(
      "\nWrote %s (sea_ice_steps.csv, sea_ice_final_state.csv and .vtk, first-step histories, gnuplot "
      "scripts and pictures).\n",
      folder.string().c_str());
  std::printf("Invented scenario: a converged solve is not a validated sea-ice model.\n");
  return newton_failures == 0 && largest_yield <= 1.0 + 1e-9 ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
