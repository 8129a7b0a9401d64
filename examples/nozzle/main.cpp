// Quasi-1D Euler flow through a converging–diverging nozzle with a standing
// normal shock (problems/flow/nozzle.hpp), converged from a crude start by nkit's
// pseudo-transient continuation with Newton–GMRES (problems/flow/nozzle_solve.hpp), compared with the exact
// isentropic/normal-shock solution (isentropic_relations.hpp).
//
//   nozzle [--cells=400] [--back_pressure=0.75] [--initial_step=50] [--relative_tolerance=1e-10]
//          [--newton_step_budget=400] [--output=nozzle_output] [--help]
#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "common/vtk_legacy.hpp"
#include "nozzle/isentropic_relations.hpp"
#include "problems/flow/nozzle_solve.hpp"

namespace {

using nkit_problems::quasi_one_dimensional_nozzle;

int run(int argc, char** argv) {
  nkit_examples::command_line options("nozzle",
                                      "quasi-1D Euler nozzle with a normal shock, pseudo-transient Newton-GMRES");
  options.option("cells", "400", "finite-volume cells along the nozzle");
  options.option("back_pressure", "0.75", "exit static pressure / inlet total pressure");
  options.option("initial_step", "50",
                 "first pseudo-time step (pseudo_transient.initial_step), a CFL number: local time steps");
  options.option("relative_tolerance", "1e-10", "stop when ||R|| <= this * ||R(crude start)||");
  options.option("newton_step_budget", "400", "pseudo-time (Newton) steps allowed");
  options.option("output", "nozzle_output", "folder for CSV, VTK and PNG files");
  if (!options.parse(argc, argv)) return 0;
  nkit_problems::nozzle_setup setup;
  setup.back_pressure = options.number("back_pressure");
  const quasi_one_dimensional_nozzle problem(options.integer("cells"), setup);
  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  std::printf("Quasi-1D nozzle A(x) = 1 + 2.2 (x - 1.5)^2, HLLC flux, %d cells, p_back/p0 = %g\noptions: %s\n\n",
              problem.cells(), setup.back_pressure, options.summary().c_str());

  Eigen::VectorXd u = problem.initial_guess();
  auto settings =
      nkit_problems::nozzle_newton_settings(options.number("initial_step"), options.number("relative_tolerance"));
  settings.newton_step_budget = options.integer("newton_step_budget");
  settings.stagnation_window = settings.newton_step_budget;  // the residual rises while the start-up transient moves
  const nkit::solve_report report = nkit_problems::solve_nozzle(problem, u, settings);
  std::printf(" step | pseudo-time step (CFL) |  residual norm | relative to initial | GMRES iterations\n");
  for (const auto& h : report.history) {
    std::printf(" %4d | %22.3e | %14.6e | %19.3e | %16d\n", h.step, h.pseudo_time_step, h.residual_norm,
                h.relative_residual_norm, h.linear_iterations);
  }
  nkit::print_convergence_table(std::cout, report);

  nkit_examples::compressible::shocked_nozzle_flow exact{[&](double x) { return setup.area(x); }, 1.5, setup.length,
                                                         setup.back_pressure / setup.total_pressure};
  exact.locate_shock();
  const double shock = nkit_problems::captured_shock_position(problem, u);
  const double m1 = nkit_examples::compressible::mach_from_area_ratio(setup.area(exact.shock_position), true);
  std::printf(
      "\nshock position: captured %.4f, exact %.4f (area-Mach and normal-shock relations of NACA Report 1135, "
      "Ames Research Staff 1953); "
      "cell size %.4f\n",
      shock, exact.shock_position, problem.spacing());
  std::printf("exact pre-shock Mach %.4f, post-shock Mach %.4f (same relations)\n", m1,
              nkit_examples::compressible::shock_mach(m1));
  // Total pressure p0 = p / (p/p0)(M): exactly the inlet's ahead of the shock
  // (isentropic flow), p02/p01 behind it; what the scheme loses ahead of the
  // shock is numerical dissipation, first order in the cell size.
  const auto total_pressure = [&](int i) {
    const auto c = problem.cell(u, i);
    return quasi_one_dimensional_nozzle::pressure(c) /
           nkit_examples::compressible::pressure_ratio(quasi_one_dimensional_nozzle::mach(c)) / setup.total_pressure;
  };
  int upstream = 0;  // the last cell at least 4 cells ahead of the captured shock
  while (shock > 0.0 && upstream + 1 < problem.cells() && problem.x(upstream + 1) <= shock - 4.0 * problem.spacing()) {
    ++upstream;
  }
  if (shock > 0.0) {
    std::printf(
        "total pressure / inlet total pressure: %.4f 4 cells ahead of the shock (exact 1: a loss of %.2f %%), "
        "%.4f at the exit (exact %.4f)\n",
        total_pressure(upstream), 100.0 * (1.0 - total_pressure(upstream)), total_pressure(problem.cells() - 1),
        nkit_examples::compressible::total_pressure_ratio(m1));
  }

  std::ofstream csv(folder / "nozzle_mach.csv");
  csv << "x,area,mach,mach_exact,pressure,density\n";
  Eigen::VectorXd mach(problem.cells()), pressure(problem.cells()), density(problem.cells()), velocity(problem.cells());
  for (int i = 0; i < problem.cells(); ++i) {
    const auto c = problem.cell(u, i);
    mach(i) = quasi_one_dimensional_nozzle::mach(c);
    pressure(i) = quasi_one_dimensional_nozzle::pressure(c);
    density(i) = c[0];
    velocity(i) = c[1] / c[0];
    csv << problem.x(i) << ',' << setup.area(problem.x(i)) << ',' << mach(i) << ',' << exact.mach(problem.x(i)) << ','
        << pressure(i) << ',' << density(i) << '\n';
  }
  csv.close();
  nkit_examples::write_history(folder, "pseudo_transient_history.csv", report);
  auto vtk = nkit_examples::vtk_rectilinear_file::uniform(problem.cells(), 1, 0.0, setup.length, 0.0, 0.05);
  vtk.add_scalar("mach", mach);
  vtk.add_scalar("pressure", pressure);
  vtk.add_scalar("density", density);
  vtk.add_scalar("velocity", velocity);
  vtk.write(folder / "nozzle.vtk", "nkit quasi-1D nozzle (non-dimensional)");

  const std::string mach_script =
      "set terminal pngcairo size 900,600 enhanced font 'Sans,11'\nset output 'nozzle_mach.png'\n"
      "set datafile separator ','\nset grid\nset key top left\n"
      "set title 'Quasi-1D nozzle with a normal shock: Mach number'\nset xlabel 'x'\nset ylabel 'Mach number'\n"
      "plot 'nozzle_mach.csv' using 1:4 skip 1 with lines lw 3 lc rgb 'gray' title 'exact (area-Mach + normal shock)', "
      "'nozzle_mach.csv' using 1:3 skip 1 with points pt 7 ps 0.5 lc rgb 'blue' title 'nkit, HLLC finite volume'\n";
  nkit_examples::run_gnuplot(folder, "nozzle_mach.gp", mach_script, std::cout);
  nkit_examples::run_gnuplot(folder, "nozzle_residuals.gp",
                             nkit_examples::residual_history_script(
                                 "nozzle_residuals.png", "Nozzle: pseudo-transient Newton-GMRES", "pseudo-time step",
                                 {{"pseudo_transient_history.csv", 1, 4, "||R|| / ||R_0||"}}),
                             std::cout);
  std::printf("\nwrote nozzle_mach.csv, pseudo_transient_history.csv, nozzle.vtk (and PNGs with gnuplot) in %s\n",
              std::filesystem::absolute(folder).string().c_str());
  return report.converged() ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
