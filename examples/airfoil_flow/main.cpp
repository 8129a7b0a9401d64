// Steady two-dimensional Euler flow around a NACA four-digit airfoil
// (problems/flow/euler_airfoil.hpp: cell-centred finite volumes on a
// body-fitted O-grid, Roe fluxes with Harten's entropy fix, MUSCL with the van
// Albada limiter), converged from the uniform free stream by nkit's
// pseudo-transient continuation with Newton–GMRES, preconditioned by block
// ILU(0) (4 × 4 blocks, one per cell) of the first-order operator's Jacobian
// (problems/flow/euler_airfoil_first_order_jacobian.hpp,
// euler_airfoil_solve.hpp), set up again every fifth Newton step by default
// (lagged: 1.8–2.0× faster than setting it up at every step on 48 × 24 to
// 96 × 48, and on the transonic grids of docs/gallery.md; docs/performance/
// README.md, "Lagging the preconditioner").
//
// A CONVERGED RESIDUAL IS NOT A VALIDATED AERODYNAMIC MODEL. The equations
// are inviscid (no boundary layer, no viscous drag, no separation), the
// far-field boundary has no vortex correction unless --far_field_vortex is
// given (without it lift carries an O(1/R) error for a far field R chords
// away) and the grid is algebraic and coarse; the
// printed coefficients are those of this discretisation, to be compared with
// published inviscid results (docs/gallery.md names them), not with a wing.
//
// Printed: lift and drag coefficients (pressure forces only: in subsonic
// inviscid flow the drag is zero, so c_d is the discretisation's spurious
// drag), Newton steps, GMRES iterations, wall time, work units (wall time /
// the median time of one residual evaluation) and the residual reduction; on a
// surface with supersonic flow, where the captured shock stands (the most
// downstream point where c_p rises through the critical pressure coefficient
// c_p*, the sonic value, by linear interpolation between wall faces;
// problems/flow/airfoil_surface_quantities.hpp).
// Written in --output: surface_pressure.csv (x/c, c_p, surface), residual_history.csv
// (Newton step, wall seconds, work units, relative residual, GMRES iterations,
// CFL), mach_field.dat (node-averaged Mach number near the airfoil, gnuplot
// grid blocks), airfoil_flow.vtk (curvilinear structured grid: density,
// velocity, pressure, Mach number, entropy error per cell) and, with gnuplot,
// airfoil_mach.png, airfoil_pressure_coefficient.png, airfoil_residuals.png.
//
//   airfoil_flow [--airfoil=0012] [--mach=0.5] [--angle_of_attack_degrees=2] [--cells_around=128]
//                [--cells_outward=64] [--far_field_radius=20] [--stretching_ratio=0] [--initial_cfl=50]
//                [--relative_tolerance=1e-10] [--newton_step_budget=200] [--gmres_restart=30]
//                [--preconditioner_rebuild_every=5] [--maximum_returns_to_pseudo_time=3] [--far_field_vortex]
//                [--karman_trefftz] [--output=airfoil_flow_output]
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>
#include <vector>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "common/vtk_legacy.hpp"
#include "problems/flow/airfoil_surface_quantities.hpp"
#include "problems/flow/euler_airfoil_far_field_vortex.hpp"
#include "problems/flow/euler_airfoil_solve.hpp"
#include "problems/flow/karman_trefftz_airfoil.hpp"

namespace {

using nkit_problems::euler_airfoil_flow;
using nkit_problems::point2;

int run(int argc, char** argv) {
  nkit_examples::command_line options(
      "airfoil_flow", "steady 2-D Euler flow around a NACA airfoil, pseudo-transient Newton-GMRES (block ILU(0))");
  options.option("airfoil", "0012", "NACA four-digit designation, e.g. 0012 or 2412");
  options.option("mach", "0.5", "free-stream Mach number");
  options.option("angle_of_attack_degrees", "2", "angle of attack in degrees");
  options.option("cells_around", "128", "cells around the airfoil (even)");
  options.option("cells_outward", "64", "cells from the wall to the far field");
  options.option("far_field_radius", "20", "far-field circle radius in chords");
  options.option("stretching_ratio", "0",
                 "ratio of successive radial spacings; 0 = 1.2^(32/cells_outward), the 64 x 32 grid refined alike");
  options.option("initial_cfl", "50", "first pseudo-time step, a CFL number (local time steps)");
  options.option("relative_tolerance", "1e-10", "stop when ||R|| <= this * ||R(free stream)||");
  options.option("newton_step_budget", "200", "pseudo-time (Newton) steps allowed");
  options.option("gmres_restart", "30", "GMRES restart length (Krylov vectors kept between restarts)");
  options.option("preconditioner_rebuild_every", "5",
                 "set the preconditioner up again every this many Newton steps (1: every step; more: lagged, "
                 "cheaper steps)");
  options.option("maximum_returns_to_pseudo_time", "3",
                 "times a failing Newton phase may go back to pseudo-time stepping (0: the solve stops instead)");
  options.flag("far_field_vortex",
               "impose at the far field the point vortex of the computed lift (solved again until the lift settles "
               "to 1e-6) instead of the uniform free stream");
  options.flag("karman_trefftz",
               "the Karman-Trefftz section (circle centre (-0.07, 0.03), trailing-edge angle 10 deg: 12 % thick) "
               "instead of --airfoil, with its exact incompressible c_p, Karman-Tsien-corrected, in the c_p picture");
  options.option("output", "airfoil_flow_output", "folder for CSV, VTK and PNG files");
  if (!options.parse(argc, argv)) return 0;

  nkit_problems::airfoil_grid_settings grid_settings;
  grid_settings.cells_around = options.integer("cells_around");
  grid_settings.cells_outward = options.integer("cells_outward");
  grid_settings.far_field_radius = options.number("far_field_radius");
  const double stretching = options.number("stretching_ratio");
  if (stretching < 0.0) {
    throw std::invalid_argument("airfoil_flow: --stretching_ratio must be 0 (automatic) or in [1, 2) (got " +
                                options.text("stretching_ratio") + ")");
  }
  if (grid_settings.cells_outward < 4) {
    throw std::invalid_argument("airfoil_flow: --cells_outward must be >= 4 (got " + options.text("cells_outward") +
                                ")");
  }
  grid_settings.stretching_ratio = stretching > 0.0 ? stretching : std::pow(1.2, 32.0 / grid_settings.cells_outward);
  nkit_problems::euler_airfoil_settings flow_settings;
  flow_settings.mach_number = options.number("mach");
  flow_settings.angle_of_attack_degrees = options.number("angle_of_attack_degrees");
  // The Kármán–Trefftz section of tests/test_karman_trefftz_airfoil.cpp: 12.0 % thick at x ≈ 0.32,
  // 1.4 % camber, its exact incompressible flow known (karman_trefftz_airfoil.hpp).
  const bool karman_trefftz = options.is_set("karman_trefftz");
  const nkit_problems::karman_trefftz_airfoil exact_section(-0.07, 0.03, 10.0);
  const euler_airfoil_flow flow(
      karman_trefftz
          ? nkit_problems::airfoil_o_grid(exact_section.surface_points(grid_settings.cells_around), grid_settings)
          : nkit_problems::airfoil_o_grid(nkit_problems::naca_four_digit_airfoil(options.text("airfoil")),
                                          grid_settings),
      flow_settings);
  const std::string section_name =
      karman_trefftz ? std::string("Karman-Trefftz (-0.07, 0.03, 10 deg)") : "NACA " + options.text("airfoil");
  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  const int n = grid_settings.cells_around, m = grid_settings.cells_outward;

  std::printf(
      "%s, M = %g, alpha = %g deg: steady 2-D Euler, Roe + MUSCL/van Albada, O-grid %d x %d cells, far field "
      "%g chords, stretching %.4f\n"
      "A converged residual is not a validated aerodynamic model (inviscid, %s, algebraic grid).\noptions: %s\n\n",
      section_name.c_str(), flow_settings.mach_number, flow_settings.angle_of_attack_degrees, n, m,
      grid_settings.far_field_radius, grid_settings.stretching_ratio,
      options.is_set("far_field_vortex") ? "far field at a finite distance" : "no far-field vortex correction",
      options.summary().c_str());

  Eigen::VectorXd u = flow.initial_guess();
  auto settings =
      nkit_problems::euler_airfoil_newton_settings(options.number("initial_cfl"), options.number("relative_tolerance"));
  settings.newton_step_budget = options.integer("newton_step_budget");
  settings.stagnation_window = settings.newton_step_budget;
  settings.linear.restart_length = options.integer("gmres_restart");
  settings.preconditioner_rebuild.rebuild_every_newton_steps = options.integer("preconditioner_rebuild_every");
  settings.pseudo_transient.maximum_returns_to_pseudo_time = options.integer("maximum_returns_to_pseudo_time");
  // Block ILU(0) on the 4 × 4 cell blocks (ρ, ρu, ρv, ρE): the same factor as point ILU(0), in
  // less time (docs/performance: block ILU(0) against point ILU(0) on the airfoil).
  const auto solve = [](const euler_airfoil_flow& f, Eigen::VectorXd& state, const nkit::newton_settings& newton) {
    return nkit_problems::solve_euler_airfoil(nkit_problems::euler_airfoil_with_first_order_jacobian(f), state, newton,
                                              nkit::block_ilu_zero_preconditioner(4));
  };
  nkit::solve_report report;
  // With the far-field vortex, the whole outer iteration's figures (all solves; the reduction
  // against the first solve's free-stream residual); the table and the history: the last solve.
  std::int64_t newton_steps = 0, linear_iterations = 0;
  int returns_to_pseudo_time = 0;
  double wall_seconds = 0.0, initial_residual = 0.0;
  bool converged = false;
  if (options.is_set("far_field_vortex")) {
    // The forces below depend on the wall states only, so `flow` (uniform far field) still computes them.
    const nkit_problems::far_field_vortex_solve outer =
        nkit_problems::solve_euler_airfoil_with_far_field_vortex(flow.grid(), flow_settings, u, settings, solve);
    report = outer.last_report;
    newton_steps = outer.newton_steps;
    linear_iterations = outer.linear_iterations;
    returns_to_pseudo_time = outer.returns_to_pseudo_time;
    wall_seconds = outer.wall_seconds;
    initial_residual = outer.initial_residual_norm;
    converged = outer.converged;
    std::printf(
        "far-field vortex: %d solves; the last (table below, residual_history.csv) with the vortex of c_l = "
        "%.6f%s\n",
        outer.solves, outer.vortex_lift_coefficient, outer.converged ? "" : " (NOT settled)");
  } else {
    report = solve(flow, u, settings);
    newton_steps = report.newton_steps;
    linear_iterations = report.linear_iterations;
    returns_to_pseudo_time = report.returns_to_pseudo_time;
    wall_seconds = report.wall_seconds;
    initial_residual = report.initial_residual_norm;
    converged = report.converged();
  }
  const double residual_seconds = report.median_residual_seconds;
  nkit::print_convergence_table(std::cout, report);

  const nkit_problems::airfoil_forces forces = flow.forces(u);
  const double reduction = report.final_residual_norm / initial_residual;
  std::printf(
      "\n%s after %lld Newton steps, %lld GMRES iterations, %.3f s wall time, %.0f work units (one residual "
      "evaluation %.3g ms), residual reduced by %.2e\n",
      converged ? "converged" : "NOT converged", static_cast<long long>(newton_steps),
      static_cast<long long>(linear_iterations), wall_seconds,
      residual_seconds > 0.0 ? wall_seconds / residual_seconds : 0.0, 1e3 * residual_seconds, reduction);
  if (returns_to_pseudo_time > 0) {
    std::printf("%d Newton phase%s failed and went back to pseudo-time stepping (--maximum_returns_to_pseudo_time)\n",
                returns_to_pseudo_time, returns_to_pseudo_time == 1 ? "" : "s");
  }
  std::printf("lift coefficient c_l = %.4f, drag coefficient c_d = %.5f (pressure forces of this discretisation)\n",
              forces.lift_coefficient, forces.drag_coefficient);

  // Surfaces by increasing x/c, the sonic c_p* and the shock positions (airfoil_surface_quantities.hpp).
  const nkit_problems::airfoil_surface_pressures surfaces = nkit_problems::surface_pressure_distributions(forces);
  const auto& lower = surfaces.lower;
  const auto& upper = surfaces.upper;
  const double cp_critical = nkit_problems::critical_pressure_coefficient(flow_settings.mach_number);
  const double minimum_cp =
      std::min(*std::min_element(lower.pressure_coefficient.begin(), lower.pressure_coefficient.end()),
               *std::min_element(upper.pressure_coefficient.begin(), upper.pressure_coefficient.end()));
  std::printf("lowest c_p %.4f; sonic c_p* = %.4f:", minimum_cp, cp_critical);
  if (minimum_cp >= cp_critical) {
    std::printf(" the flow stays subsonic along the surface\n");
  } else {
    const double upper_shock = nkit_problems::shock_position(upper, cp_critical);
    const double lower_shock = nkit_problems::shock_position(lower, cp_critical);
    const auto describe = [](double x) { return x < 0.0 ? std::string("none") : std::to_string(x).substr(0, 6); };
    std::printf(" supersonic pockets; shock (c_p rising through c_p*) at x/c = %s upper, %s lower\n",
                describe(upper_shock).c_str(), describe(lower_shock).c_str());
  }

  // With --karman_trefftz: the exact incompressible flow (Kutta condition) carried to the Mach number by
  // the Kármán–Tsien rule for c_p and the Prandtl–Glauert factor 1/β for the lift (karman_trefftz_airfoil.hpp).
  if (karman_trefftz) {
    const double alpha = flow_settings.angle_of_attack_degrees, mach = flow_settings.mach_number;
    const double beta = std::sqrt(1.0 - mach * mach);
    const std::vector<double> exact_incompressible =
        exact_section.wall_face_pressure_coefficients(forces.wall_face_centre, alpha);
    double mean_difference = 0.0;
    for (std::size_t i = 0; i < exact_incompressible.size(); ++i) {
      const double exact = nkit_problems::karman_tsien_pressure_coefficient(exact_incompressible[i], mach);
      mean_difference += std::abs(forces.pressure_coefficient[i] - exact) / n;
    }
    const double exact_lift = exact_section.lift_coefficient(alpha) / beta;
    std::printf(
        "exact (Karman-Trefftz, Kutta condition): c_l0 = %.4f, times 1/beta = %.4f (computed c_l %+.1f %%); mean "
        "|c_p - exact c_p (Karman-Tsien)| over the wall faces %.4f\n",
        exact_section.lift_coefficient(alpha), exact_lift, 100.0 * (forces.lift_coefficient / exact_lift - 1.0),
        mean_difference);
    std::ofstream csv(folder / "exact_surface_pressure.csv");
    csv << "x_over_chord,pressure_coefficient,surface\n";
    for (const bool upper : {false, true}) {
      for (int k = 0; k <= 400; ++k) {
        const double x = 0.5 * (1.0 - std::cos(std::acos(-1.0) * k / 400.0));  // cosine spacing, 0 to 1
        const double cp0 = exact_section.pressure_coefficient(exact_section.circle_angle(x, upper), alpha);
        csv << x << ',' << nkit_problems::karman_tsien_pressure_coefficient(cp0, mach) << ','
            << (upper ? "upper" : "lower") << '\n';
      }
      csv << "\n\n";
    }
  }

  // surface_pressure.csv
  {
    std::ofstream csv(folder / "surface_pressure.csv");
    csv << "x_over_chord,pressure_coefficient,surface\n";
    for (std::size_t k = 0; k < lower.x_over_chord.size(); ++k) {
      csv << lower.x_over_chord[k] << ',' << lower.pressure_coefficient[k] << ",lower\n";
    }
    csv << "\n\n";  // a gnuplot data block per surface
    for (std::size_t k = 0; k < upper.x_over_chord.size(); ++k) {
      csv << upper.x_over_chord[k] << ',' << upper.pressure_coefficient[k] << ",upper\n";
    }
  }
  // residual_history.csv
  {
    std::ofstream csv(folder / "residual_history.csv");
    csv << "newton_step,wall_seconds,work_units,relative_residual,gmres_iterations,cfl\n";
    csv << "0,0,0,1,0,0\n";
    for (const auto& h : report.history) {
      csv << h.step << ',' << h.elapsed_seconds << ','
          << (residual_seconds > 0.0 ? h.elapsed_seconds / residual_seconds : 0.0) << ',' << h.relative_residual_norm
          << ',' << h.linear_iterations << ',' << h.pseudo_time_step << '\n';
    }
  }
  // Cell fields and the VTK file (the O-grid seam node repeated).
  const nkit_problems::airfoil_o_grid& grid = flow.grid();
  Eigen::VectorXd density(grid.cells()), velocity_x(grid.cells()), velocity_y(grid.cells()), pressure(grid.cells()),
      mach(grid.cells());
  for (int c = 0; c < grid.cells(); ++c) {
    const auto w = euler_airfoil_flow::primitive(euler_airfoil_flow::cell_state(u, c));
    density(c) = w[0];
    velocity_x(c) = w[1];
    velocity_y(c) = w[2];
    pressure(c) = w[3];
    mach(c) = std::hypot(w[1], w[2]) / std::sqrt(nkit_problems::euler_gamma * w[3] / w[0]);
  }
  std::vector<double> node_x, node_y;
  for (int j = 0; j <= m; ++j) {
    for (int i = 0; i <= n; ++i) {
      node_x.push_back(grid.node(i, j).x);
      node_y.push_back(grid.node(i, j).y);
    }
  }
  nkit_examples::vtk_structured_grid_file vtk(n, m, node_x, node_y);
  vtk.add_scalar("density", density);
  vtk.add_vector("velocity", velocity_x, velocity_y);
  vtk.add_scalar("pressure", pressure);
  vtk.add_scalar("mach", mach);
  vtk.add_scalar("entropy_error", flow.entropy_error(u));
  vtk.write(folder / "airfoil_flow.vtk", "nkit steady Euler flow around a NACA " + options.text("airfoil") +
                                             " airfoil (non-dimensional: free-stream density and sound speed 1)");
  // mach_field.dat: Mach number averaged to the nodes within 3 chords of mid-chord.
  {
    std::ofstream out(folder / "mach_field.dat");
    out << "# x y mach (node averages of the cell values), one block per grid ring j\n";
    for (int j = 0; j <= m; ++j) {
      bool near = false;
      for (int i = 0; i < n; ++i) near = near || std::hypot(grid.node(i, j).x - 0.5, grid.node(i, j).y) < 3.0;
      if (!near) break;
      for (int i = 0; i <= n; ++i) {
        double sum = 0.0;
        int count = 0;
        for (const int jj : {j - 1, j}) {
          if (jj < 0 || jj >= m) continue;
          sum += mach(static_cast<Eigen::Index>(grid.cell_index(i - 1, jj))) +
                 mach(static_cast<Eigen::Index>(grid.cell_index(i, jj)));
          count += 2;
        }
        out << grid.node(i, j).x << ' ' << grid.node(i, j).y << ' ' << sum / count << '\n';
      }
      out << '\n';
    }
  }

  const std::string case_title = section_name + ", M = " + options.text("mach") +
                                 ", {/Symbol a} = " + options.text("angle_of_attack_degrees") + "°, " +
                                 std::to_string(n) + " x " + std::to_string(m) + " cells";
  const std::string mach_script =
      "set terminal pngcairo size 1000,650 enhanced font 'Sans,11'\nset output 'airfoil_mach.png'\n"
      "set view map\nset size ratio -1\nset xrange [-0.6:1.6]\nset yrange [-0.7:0.7]\n"
      "set pm3d map interpolate 1,1\nset palette rgb 33,13,10\nset cblabel 'Mach number'\n"
      "set contour base\nset cntrparam levels incremental 0.1,0.1,2.0\nunset clabel\nset key off\n"
      "set title 'Steady Euler flow, " +
      case_title +
      ": Mach number (contours every 0.1)'\nset xlabel 'x / chord'\nset ylabel 'y / chord'\n"
      "splot 'mach_field.dat' using 1:2:3 with pm3d, '' using 1:2:3 with lines nosurface lc rgb 'black' lw 0.6, "
      "'mach_field.dat' every :::0::0 using 1:2:(0) with lines nocontour lc rgb 'black' lw 2\n";
  nkit_examples::run_gnuplot(folder, "airfoil_mach.gp", mach_script, std::cout);
  char critical_line[160];
  std::snprintf(critical_line, sizeof critical_line, "%.6f", -cp_critical);
  const std::string cp_script =
      "set terminal pngcairo size 900,600 enhanced font 'Sans,11'\nset output 'airfoil_pressure_coefficient.png'\n"
      "set datafile separator ','\nset grid\nset key bottom right\n"
      "set title 'Surface pressure, " +
      case_title +
      "'\nset xlabel 'x / chord'\nset ylabel '-c_p'\n"
      "plot 'surface_pressure.csv' index 1 using 1:(-$2) skip 1 with linespoints pt 7 ps 0.5 lw 2 lc rgb 'red' "
      "title 'upper surface', 'surface_pressure.csv' index 0 using 1:(-$2) skip 1 with linespoints pt 7 ps 0.5 lw 2 "
      "lc rgb 'blue' title 'lower surface', " +
      (minimum_cp < 0.7 * cp_critical
           ? std::string(critical_line) + " with lines dt 2 lc rgb 'gray' title '-c_p* (sonic)'"
           : std::string("1/0 notitle")) +
      (karman_trefftz ? std::string(", 'exact_surface_pressure.csv' index 1 using 1:(-$2) skip 1 with lines lw 1 "
                                    "lc rgb 'black' title 'exact (Karman-Trefftz, Karman-Tsien)', "
                                    "'exact_surface_pressure.csv' index 0 using 1:(-$2) skip 1 with lines lw 1 "
                                    "lc rgb 'black' notitle")
                      : std::string()) +
      "\n";
  nkit_examples::run_gnuplot(folder, "airfoil_pressure_coefficient.gp", cp_script, std::cout);
  nkit_examples::run_gnuplot(
      folder, "airfoil_residuals.gp",
      nkit_examples::residual_history_script(
          "airfoil_residuals.png",
          "Airfoil flow: pseudo-transient Newton-GMRES, block ILU(0) of the first-order "
          "Jacobian",
          "work units (wall time / one residual evaluation)", {{"residual_history.csv", 3, 4, "||R|| / ||R_0||"}}),
      std::cout);
  std::printf(
      "\nwrote surface_pressure.csv, residual_history.csv, mach_field.dat, airfoil_flow.vtk (and PNGs with gnuplot) "
      "in %s\n",
      std::filesystem::absolute(folder).string().c_str());
  return converged ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
