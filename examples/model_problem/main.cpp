// Solves the benchmark model problem (nonlinear heat conduction, k = 1 + T²)
// with matrix-free Newton–GMRES and prints the convergence table.
//   model_problem_demo [cells_per_side=128]
#include <cstdlib>
#include <iostream>
#include <nkit/nkit.hpp>

#include "problems/model_problem/model_problem.hpp"

int main(int argc, char** argv) {
  const int n = argc > 1 ? std::atoi(argv[1]) : 128;
  if (n < 2) {
    std::cerr << "usage: model_problem_demo [cells_per_side >= 2]\n";
    return 2;
  }
  nkit_problems::heat_conduction_model_problem problem(n);
  Eigen::VectorXd temperature = Eigen::VectorXd::Zero(problem.unknowns());

  nkit::newton_settings settings;
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 5000;
  nkit::newton_krylov_solver<> solver(settings);
  const nkit::solve_report report = solver.solve(problem, temperature);

  std::cout << "Model problem on a " << n << " x " << n << " grid (" << problem.unknowns() << " unknowns)\n";
  nkit::print_convergence_table(std::cout, report);
  std::cout << "maximum temperature " << temperature.maxCoeff() << "\n";
  return report.converged() ? 0 : 1;
}
