// Follows the solution branch of the 2D Bratu problem −Δu = λe^u (unit
// square, u = 0 on the boundary, 5-point finite differences) from λ = 0
// around its fold with pseudo-arclength continuation, prints every point, and writes the bifurcation diagram
// (λ, ‖u‖∞, Newton steps) as CSV and, when gnuplot is installed, as PNG.
// The printed check value is the continuum fold λc ≈ 6.80812442259 of
// R.A. Bolstad & H.B. Keller, "A multigrid continuation method for elliptic
// problems with folds", SIAM J. Sci. Stat. Comput. 7 (1986) 1081–1104
// (as quoted in secondary sources); the 5-point fold of a coarse grid lies
// close to it, not on it.
//
//   bratu_continuation [--nodes_per_side=47] [--maximum_height=8] [--output=bratu_output] [--help]
//
// Writes bratu_branch.csv (and bratu_branch.png) into the --output folder.
// The run stops once ‖u‖∞ exceeds maximum_height (the upper branch goes on to
// infinity as λ → 0). The state block is preconditioned with nkit's
// sparse_direct_preconditioner, an exact sparse LU factorisation of R_u
// (refactorised whenever the driver asks), which continuation turns into a
// preconditioner of the bordered system.
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nkit/continuation/continuation.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <stdexcept>
#include <string>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "problems/reaction_diffusion/bratu.hpp"

namespace {

const char* kind_label(nkit::point_kind kind) {
  switch (kind) {
    case nkit::point_kind::start:
      return "start";
    case nkit::point_kind::step:
      return "";
    case nkit::point_kind::fold:
      return "FOLD";
    case nkit::point_kind::parameter_bound:
      return "bound";
  }
  return "?";
}

int run(int argc, char** argv) {
  nkit_examples::command_line options("bratu_continuation",
                                      "follows the 2D Bratu branch around its fold (pseudo-arclength continuation)");
  options.option("nodes_per_side", "47", "interior nodes per side (>= 3)");
  options.option("maximum_height", "8", "stop once max |u| exceeds this (> 0)");
  options.option("output", "bratu_output", "folder for bratu_branch.csv and bratu_branch.png");
  if (!options.parse(argc, argv)) return 0;
  const int nodes = options.integer("nodes_per_side");
  const double maximum_height = options.number("maximum_height");
  if (nodes < 3) {
    throw std::invalid_argument("bratu_continuation: --nodes_per_side must be >= 3 (got " +
                                options.text("nodes_per_side") + ")");
  }
  if (!(maximum_height > 0.0)) {
    throw std::invalid_argument("bratu_continuation: --maximum_height must be > 0 (got " +
                                options.text("maximum_height") + ")");
  }
  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  const std::string csv_name = "bratu_branch.csv";
  const nkit_problems::bratu_2d problem(nodes);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(problem.unknowns());

  nkit::continuation_settings settings;
  settings.initial_step = 0.1;
  settings.maximum_step = 0.5;  // arclength in (rms u, λ); keeps the plotted branch smooth
  settings.parameter_lower_bound = 0.0;
  settings.point_budget = 400;
  settings.corrector.absolute_tolerance = 1e-7;  // R is O(λ) per node here; u = 0 at λ = 0 is exact
  nkit::continuation_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> solver(settings);

  std::ofstream csv(folder / csv_name);
  if (!csv) throw std::runtime_error("bratu_continuation: cannot write " + (folder / csv_name).string());
  csv << "kind,parameter,max_norm,newton_steps\n";
  std::printf("2D Bratu, %d x %d interior nodes (h = 1/%d), pseudo-arclength continuation from lambda = 0\n\n", nodes,
              nodes, nodes + 1);
  // One header per column; "tangent lambda" is the parameter component of the unit tangent.
  std::printf("%5s  %-5s  %14s  %10s  %10s  %14s  %9s  %12s  %14s  %16s  %20s\n", "point", "kind", "lambda", "max |u|",
              "||u||_2", "tangent lambda", "step size", "Newton steps", "rejected steps", "GMRES iterations",
              "residual evaluations");
  const auto show = [&](const nkit::continuation_point& point, const Eigen::VectorXd& state) {
    const double height = state.lpNorm<Eigen::Infinity>();
    std::printf("%5d  %-5s  %14.10f  %10.6f  %10.4f  %+14.2e  %9.2e  %12d  %14d  %16lld  %20lld\n", point.index,
                kind_label(point.kind), point.parameter, height, point.state_norm, point.tangent_parameter, point.step,
                point.newton_steps, point.rejected_steps, static_cast<long long>(point.linear_iterations),
                static_cast<long long>(point.residual_evaluations));
    csv << (point.kind == nkit::point_kind::fold ? "fold" : "branch") << ',' << point.parameter << ',' << height << ','
        << point.newton_steps << '\n';
    return height > maximum_height ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
  };
  csv.precision(12);
  const nkit::continuation_report report = solver.follow_branch(problem, u, 0.0, show);
  csv.close();

  std::cout << "\noutcome: " << nkit::name(report.reason) << ". " << report.message() << '\n';
  std::printf(
      "points %zu, rejected steps %d, Newton steps %d, GMRES iterations %lld, residual evaluations %lld, "
      "%.2f s\n",
      report.points.size(), report.rejected_steps, report.newton_steps,
      static_cast<long long>(report.linear_iterations), static_cast<long long>(report.residual_evaluations),
      report.wall_seconds);
  for (const nkit::fold_record& fold : report.folds) {
    std::printf(
        "fold at lambda = %.10f (%s after %d location solves); continuum value 6.80812442259 "
        "(Bolstad & Keller 1986, SIAM J. Sci. Stat. Comput. 7)\n",
        fold.point.parameter, fold.located ? "located" : "not located to tolerance", fold.location_iterations);
  }
  std::cout << "wrote " << (folder / csv_name).string() << "\n";

  const std::string script =
      "set terminal pngcairo size 800,600\n"
      "set output 'bratu_branch.png'\n"
      "set datafile separator ','\n"
      "set key autotitle columnhead\n"
      "set xlabel 'lambda'\nset ylabel 'max |u|'\n"
      "set title '2D Bratu, " +
      std::to_string(nodes) + " x " + std::to_string(nodes) +
      " nodes'\n"
      "plot 'bratu_branch.csv' using 2:(stringcolumn(1) eq 'branch' ? $3 : 1/0) with linespoints title 'branch', "
      "'' using 2:(stringcolumn(1) eq 'fold' ? $3 : 1/0) with points pt 7 ps 2 title 'fold'\n";
  if (nkit_examples::run_gnuplot(folder, "bratu_branch.gnuplot", script, std::cout)) {
    std::cout << "wrote " << (folder / "bratu_branch.png").string() << "\n";
  }
  return report.folds.empty() ? 1 : 0;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
