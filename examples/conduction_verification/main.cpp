// Verifies the baseplate's finite-volume discretisation of nonlinear
// conduction, k = k0(1 + βT): 1D against the exact Kirchhoff-transform
// solution, 2D by a manufactured solution, each on a sequence of grids with
// the observed order of accuracy (expected 2).
// Sources of the exact solutions: the Kirchhoff transform as presented in
// F.P. Incropera & D.P. DeWitt, "Fundamentals of Heat and Mass Transfer"
// (plane wall with k = k0(1 + βT)); the method of manufactured solutions,
// K. Salari & P. Knupp, Sandia report SAND2000-1444 (2000). The β, boundary
// values and manufactured solution are our own choices for the study.
//
//   conduction_verification [--coarsest=16] [--levels=4] [--beta=1] [--output=conduction_output] [--help]
#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>
#include <vector>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "common/vtk_legacy.hpp"
#include "problems/heat/conduction_verification_runs.hpp"

namespace {

int run(int argc, char** argv) {
  nkit_examples::command_line options("conduction_verification",
                                      "order-of-accuracy study of the nonlinear-conduction finite-volume scheme");
  options.option("coarsest", "16", "cells per side on the coarsest grid");
  options.option("levels", "4", "number of grids (each refines by 2)");
  options.option("beta", "1", "beta in k = k0 (1 + beta T)");
  options.option("output", "conduction_output", "folder for CSV, VTK and PNG files");
  if (!options.parse(argc, argv)) return 0;
  const int coarsest = options.integer("coarsest"), levels = options.integer("levels");
  if (coarsest < 2 || levels < 2)
    throw std::invalid_argument("conduction_verification: need coarsest >= 2, levels >= 2");
  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  std::ofstream csv(folder / "errors.csv");
  csv << "case,cells,cell_size,max_error,rms_error,flux_error,newton_steps,linear_iterations\n";
  bool all_converged = true;

  nkit_problems::kirchhoff_plane_wall wall;
  wall.beta = options.number("beta");
  wall.t1 = 1.0;
  wall.t2 = 0.0;
  std::printf(
      "1D plane wall, k = %g (1 + %g T), T(0) = %g, T(1) = %g: exact Kirchhoff-transform solution\n"
      "(transform as in Incropera & DeWitt, Fundamentals of Heat and Mass Transfer)\n",
      wall.k0, wall.beta, wall.t1, wall.t2);
  std::printf("  cells |  max |T - T_exact| | order |  flux error | order | Newton steps\n");
  std::vector<nkit_problems::verification_run> runs1d;
  for (int level = 0; level < levels; ++level) {
    runs1d.push_back(nkit_problems::run_kirchhoff_wall(coarsest << level, wall));
    const auto& r = runs1d.back();
    all_converged = all_converged && r.report.converged();
    char order[32] = "     ", flux_order[32] = "     ";
    if (level > 0) {
      std::snprintf(order, sizeof order, "%5.2f",
                    nkit_problems::observed_order(runs1d[level - 1].max_error, r.max_error, 2));
      std::snprintf(flux_order, sizeof flux_order, "%5.2f",
                    nkit_problems::observed_order(runs1d[level - 1].flux_error, r.flux_error, 2));
    }
    std::printf("  %5d | %18.3e | %s | %11.3e | %s | %d\n", r.cells, r.max_error, order, r.flux_error, flux_order,
                r.report.newton_steps);
    csv << "kirchhoff_1d," << r.cells << ',' << r.cell_size << ',' << r.max_error << ',' << r.rms_error << ','
        << r.flux_error << ',' << r.report.newton_steps << ',' << r.report.linear_iterations << '\n';
  }

  nkit_problems::manufactured_conduction solution;
  solution.beta = options.number("beta");
  std::printf(
      "\n2D manufactured solution T = 1 + %g sin(pi x) sin(pi y) + %g x y, k = %g (1 + %g T)\n"
      "(method of manufactured solutions, Salari & Knupp, SAND2000-1444, 2000; our own choice of T)\n",
      solution.a, solution.b, solution.k0, solution.beta);
  std::printf("  cells |  max |T - T_exact| | order |   rms error | order | Newton steps | GMRES iterations\n");
  std::vector<nkit_problems::verification_run> runs2d;
  for (int level = 0; level < levels; ++level) {
    runs2d.push_back(nkit_problems::run_manufactured(coarsest << level, solution));
    const auto& r = runs2d.back();
    all_converged = all_converged && r.report.converged();
    char order[32] = "     ", rms_order[32] = "     ";
    if (level > 0) {
      std::snprintf(order, sizeof order, "%5.2f",
                    nkit_problems::observed_order(runs2d[level - 1].max_error, r.max_error, 2));
      std::snprintf(rms_order, sizeof rms_order, "%5.2f",
                    nkit_problems::observed_order(runs2d[level - 1].rms_error, r.rms_error, 2));
    }
    std::printf("  %5d | %18.3e | %s | %11.3e | %s | %12d | %lld\n", r.cells, r.max_error, order, r.rms_error,
                rms_order, r.report.newton_steps, static_cast<long long>(r.report.linear_iterations));
    csv << "manufactured_2d," << r.cells << ',' << r.cell_size << ',' << r.max_error << ',' << r.rms_error << ",,"
        << r.report.newton_steps << ',' << r.report.linear_iterations << '\n';
  }
  csv.close();

  const auto& finest = runs2d.back();
  std::printf("\nNewton-GMRES on the finest 2D grid (%d x %d):\n", finest.cells, finest.cells);
  nkit::print_convergence_table(std::cout, finest.report);
  nkit_examples::write_history(folder, "newton_history_finest.csv", finest.report);
  auto vtk = nkit_examples::vtk_rectilinear_file::uniform(finest.cells, finest.cells, 0.0, 1.0, 0.0, 1.0);
  vtk.add_scalar("temperature", finest.temperature);
  vtk.add_scalar("error", finest.temperature - finest.exact);
  vtk.write(folder / "manufactured_solution.vtk", "nkit conduction verification: manufactured solution and error");

  const std::string script =
      "set terminal pngcairo size 900,600 enhanced font 'Sans,11'\n"
      "set output 'conduction_order.png'\nset datafile separator ','\n"
      "set logscale xy\nset grid\nset key bottom right\nset format y '10^{%L}'\n"
      "set title 'Nonlinear conduction, k = k_0(1+{/Symbol b}T): error vs cell size'\n"
      "set xlabel 'cell size h'\nset ylabel 'max |T_h - T_{exact}|'\n"
      "set xrange [" +
      std::to_string(finest.cell_size / 1.5) + ":" + std::to_string(1.5 / coarsest) + "]\n" +
      "c = " + std::to_string(finest.max_error / (finest.cell_size * finest.cell_size)) +
      "\nf(x) = c*x**2\n"
      "plot 'errors.csv' using 3:(strcol(1) eq 'kirchhoff_1d' ? $4 : 1/0) with linespoints lw 2 pt 7 title "
      "'1D, exact Kirchhoff solution', \\\n"
      "     'errors.csv' using 3:(strcol(1) eq 'manufactured_2d' ? $4 : 1/0) with linespoints lw 2 pt 5 title "
      "'2D, manufactured solution', \\\n"
      "     f(x) with lines dt 2 lc rgb 'gray' title 'slope 2'\n";
  nkit_examples::run_gnuplot(folder, "conduction_order.gp", script, std::cout);
  std::printf(
      "\nwrote errors.csv, newton_history_finest.csv, manufactured_solution.vtk (and conduction_order.png "
      "with gnuplot) in %s\n",
      std::filesystem::absolute(folder).string().c_str());
  return all_converged ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
