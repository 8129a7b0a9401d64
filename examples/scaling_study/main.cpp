// How Newton–GMRES cost grows with the mesh on the heat-conduction model
// problem (problems/model_problem/model_problem.hpp: −∇·((1 + T²)∇T) = 10
// on the unit square, T = 0 on the walls): a scaling study over cells per side,
// with fitted exponents, a CSV of the rows and fits, and a log–log plot.
//
//   scaling_study [--size_parameters=32,64,128,256] [--skip_larger_sizes_after_seconds=120]
//                 [--output=scaling_study_output] [--help]
//
// Writes, in the --output folder:
//   scaling_study.csv        one row per size (nkit::write_scaling_study_csv)
//   scaling_study_fits.csv   the fitted power laws
//   scaling_study.gp         a gnuplot script for the log–log plot
//   scaling_study.png        the plot, when gnuplot is installed
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <nkit/nkit.hpp>
#include <nkit/report/scaling_study.hpp>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "problems/model_problem/model_problem.hpp"

namespace {

// Gnuplot script: wall time and linear iterations per Newton step against
// unknowns, on log–log axes, with the fitted laws as lines.
std::string gnuplot_script(const nkit::scaling_study_result& result) {
  std::ostringstream script;
  script << "set terminal pngcairo size 900,600\n"
            "set output 'scaling_study.png'\n"
            "set datafile separator ','\n"
            "set logscale xy\n"
            "set key bottom right\n"
            "set xlabel 'unknowns N'\n"
            "set ylabel 'wall seconds / linear iterations per Newton step'\n"
            "set title 'Newton-GMRES on the heat-conduction model problem'\n";
  const auto law = [](const nkit::power_law_fit& fit) {
    char text[96];
    std::snprintf(text, sizeof text, "%.10g*x**%.10g", fit.coefficient, fit.exponent);
    return std::string(text);
  };
  char title[160];
  script << "plot 'scaling_study.csv' every ::1 using 2:7 with points pointtype 7 title 'wall seconds'";
  if (result.wall_seconds.valid()) {
    std::snprintf(title, sizeof title, "time fit: N^{%.2f}", result.wall_seconds.exponent);
    script << ", " << law(result.wall_seconds) << " with lines title '" << title << "'";
  }
  script << ", 'scaling_study.csv' every ::1 using 2:6 with points pointtype 5 title 'linear iterations per step'";
  if (result.linear_iterations_per_newton_step.valid()) {
    std::snprintf(title, sizeof title, "iterations fit: N^{%.2f}", result.linear_iterations_per_newton_step.exponent);
    script << ", " << law(result.linear_iterations_per_newton_step) << " with lines title '" << title << "'";
  }
  script << '\n';
  return script.str();
}

/// "32,64,128" -> {32, 64, 128}; every entry an integer >= 2.
std::vector<long long> size_list(const std::string& text) {
  std::vector<long long> sizes;
  std::istringstream in(text);
  std::string item;
  while (std::getline(in, item, ',')) {
    char* end = nullptr;
    const long long value = std::strtoll(item.c_str(), &end, 10);
    if (item.empty() || *end != '\0' || value < 2) {
      throw std::invalid_argument(
          "scaling_study: --size_parameters must be a comma-separated list of integers >= 2 "
          "(got '" +
          text + "')");
    }
    sizes.push_back(value);
  }
  if (sizes.empty()) throw std::invalid_argument("scaling_study: --size_parameters is empty");
  return sizes;
}

int run(int argc, char** argv) {
  nkit_examples::command_line options("scaling_study",
                                      "Newton-GMRES cost against grid size on the heat-conduction model problem");
  options.option("size_parameters", "32,64,128,256", "cells per side of each grid, comma-separated");
  options.option("skip_larger_sizes_after_seconds", "120", "do not start a larger size after a solve this slow");
  options.option("output", "scaling_study_output", "folder for the CSV files, gnuplot script and plot");
  if (!options.parse(argc, argv)) return 0;
  nkit::scaling_study_settings study;
  study.size_parameters = size_list(options.text("size_parameters"));
  study.skip_larger_sizes_after_seconds = options.number("skip_larger_sizes_after_seconds");
  const std::filesystem::path folder = nkit_examples::make_output_folder(options.text("output"));

  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-8;  // the model problem's convergence criterion
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 20000;

  const nkit::scaling_study_result result = nkit::run_scaling_study(study, [&](long long cells_per_side) {
    nkit_problems::heat_conduction_model_problem problem(static_cast<int>(cells_per_side));
    Eigen::VectorXd temperature = Eigen::VectorXd::Zero(problem.unknowns());
    nkit::newton_krylov_solver<> solver(settings);
    nkit::solve_report report = solver.solve(problem, temperature);
    std::cout << "  " << cells_per_side << " x " << cells_per_side << ": " << nkit::name(report.reason) << " in "
              << report.wall_seconds << " s\n";
    return nkit::scaling_sample{problem.unknowns(), std::move(report)};
  });

  std::cout << "\nNewton-GMRES, no preconditioner, heat-conduction model problem\n";
  nkit::print_scaling_study(std::cout, result);
  // Reading the fits: linear iterations per Newton step that grow with N mean
  // the preconditioner (here none) does not scale; a multigrid-class one
  // keeps them flat and the time close to N^1.
  if (result.linear_iterations_per_newton_step.valid() && result.linear_iterations_per_newton_step.exponent > 0.2) {
    std::printf("linear iterations per Newton step grow like N^%.2f: the solve needs a preconditioner that scales\n",
                result.linear_iterations_per_newton_step.exponent);
  }
  std::ofstream csv(folder / "scaling_study.csv");
  nkit::write_scaling_study_csv(csv, result);
  std::ofstream fits(folder / "scaling_study_fits.csv");
  nkit::write_scaling_fits_csv(fits, result);
  csv.close();
  fits.close();
  std::cout << "wrote scaling_study.csv and scaling_study_fits.csv in " << folder.string() << '\n';
  if (nkit_examples::run_gnuplot(folder, "scaling_study.gp", gnuplot_script(result), std::cout)) {
    std::cout << "wrote the plot " << (folder / "scaling_study.png").string() << '\n';
  } else {
    std::cout << "or plot columns unknowns (2) against wall_seconds (7) and linear_iterations_per_newton_step (6) "
                 "on log-log axes.\n";
  }
  return result.rows.empty() || !result.rows.back().converged() ? 1 : 0;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
