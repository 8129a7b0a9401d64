// Solves the benchmark model problem (nonlinear heat conduction, k = 1 + T²;
// problems/README.md) with matrix-free Newton–GMRES and no preconditioner,
// and prints the convergence table.
//
//   model_problem_demo [--cells_per_side=128] [--relative_tolerance=1e-8] [--restart_length=50] [--help]
#include <iostream>
#include <nkit/nkit.hpp>

#include "common/command_line.hpp"
#include "problems/model_problem/model_problem.hpp"

namespace {

int run(int argc, char** argv) {
  nkit_examples::command_line options("model_problem_demo",
                                      "the heat-conduction model problem by matrix-free Newton-GMRES");
  options.option("cells_per_side", "128", "n: the grid has n x n cells (n >= 2)");
  options.option("relative_tolerance", "1e-8", "stop when ||R||_2 <= this * ||R(T0)||_2");
  options.option("restart_length", "50", "GMRES restart length");
  if (!options.parse(argc, argv)) return 0;
  const int n = options.integer("cells_per_side");
  if (n < 2)
    throw std::invalid_argument("model_problem_demo: --cells_per_side must be >= 2 (got " +
                                options.text("cells_per_side") + ")");
  nkit_problems::heat_conduction_model_problem problem(n);
  Eigen::VectorXd temperature = Eigen::VectorXd::Zero(problem.unknowns());

  nkit::newton_settings settings;
  settings.relative_tolerance = options.number("relative_tolerance");
  settings.linear.restart_length = options.integer("restart_length");
  settings.linear.maximum_iterations = 5000;
  nkit::newton_krylov_solver<> solver(settings);
  const nkit::solve_report report = solver.solve(problem, temperature);

  std::cout << "Model problem on a " << n << " x " << n << " grid (" << problem.unknowns() << " unknowns)\n";
  nkit::print_convergence_table(std::cout, report);
  std::cout << "maximum temperature " << temperature.maxCoeff() << "\n";
  return report.converged() ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
