// Steady two-species reaction–diffusion (Gray–Scott kinetics, manufactured
// solution; problems/reaction_diffusion/gray_scott.hpp) solved by Newton–GMRES with NO
// hand-written Jacobian: the problem declares its sparsity pattern, nkit
// assembles the Jacobian by colored finite differences (10 residual
// evaluations for a 5-point stencil with 2 unknowns per cell) and builds
// block Jacobi or ILU(0) from it. Both are run and compared.
//
// INVENTED DATA: the kinetics are Gray–Scott's (P. Gray & S.K. Scott, Chem.
// Eng. Sci. 38 (1983) 29–43), but the diffusivities, Damköhler number, feed
// and kill rates and the manufactured solution were chosen for this demo and
// describe no real system. The printed error is measured against that
// manufactured solution (method of manufactured solutions: K. Salari &
// P. Knupp, Sandia report SAND2000-1444, 2000), so it checks the solve and the
// discretisation, not a physical result.
//
//   reaction_diffusion [--cells=128] [--preconditioner=both] [--output=reaction_output] [--help]
//   (--preconditioner: both, block_jacobi or ilu_zero)
#include <cstdio>
#include <iostream>
#include <string>
#include <vector>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "common/vtk_legacy.hpp"
#include "problems/reaction_diffusion/gray_scott_runs.hpp"

namespace {

int run(int argc, char** argv) {
  nkit_examples::command_line options("reaction_diffusion",
                                      "2-species reaction-diffusion, colored-FD Jacobian, block Jacobi vs ILU(0)");
  options.option("cells", "128", "cells per side (2 unknowns per cell)");
  options.option("preconditioner", "both", "block_jacobi, ilu_zero or both");
  options.option("output", "reaction_output", "folder for CSV, VTK and PNG files");
  if (!options.parse(argc, argv)) return 0;
  const int cells = options.integer("cells");
  const std::string choice = options.text("preconditioner");
  if (choice != "both" && choice != "block_jacobi" && choice != "ilu_zero") {
    throw std::invalid_argument("reaction_diffusion: unknown --preconditioner " + choice);
  }
  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  std::printf(
      "Gray-Scott reaction-diffusion (manufactured solution), %d x %d cells, %lld unknowns\n"
      "NOTE: the parameters and the manufactured solution are INVENTED for this demo (kinetics of Gray & Scott "
      "1983)\n"
      "Jacobian: colored finite differences from the declared 5-point pattern (no hand-written Jacobian)\n"
      "options: %s\n",
      cells, cells, 2LL * cells * cells, options.summary().c_str());

  std::vector<nkit_examples::history_curve> curves;
  std::vector<std::pair<std::string, nkit_problems::reaction_run>> runs;
  if (choice != "ilu_zero") {
    runs.emplace_back("block_jacobi",
                      nkit_problems::run_reaction_diffusion(cells, nkit::block_jacobi_preconditioner(2)));
  }
  if (choice != "block_jacobi") {
    runs.emplace_back("ilu_zero", nkit_problems::run_reaction_diffusion(cells, nkit::ilu_zero_preconditioner()));
  }
  bool converged = true;
  for (const auto& [name, result] : runs) {
    std::printf("\nNewton-GMRES, preconditioner %s:\n", name.c_str());
    nkit::print_convergence_table(std::cout, result.report);
    std::printf("max error vs the (invented) manufactured solution: u %.3e, v %.3e\n", result.max_error_u,
                result.max_error_v);
    nkit_examples::write_history(folder, "history_" + name + ".csv", result.report);
    curves.push_back({"history_" + name + ".csv", 1, 4, name});
    converged = converged && result.report.converged();
  }
  std::printf("\n%-14s | Newton steps | GMRES iterations | residual evaluations | Jacobian assemblies | time [s]\n",
              "preconditioner");
  for (const auto& [name, result] : runs) {
    const auto& r = result.report;
    std::printf("%-14s | %12d | %16lld | %20lld | %19lld | %8.3f\n", name.c_str(), r.newton_steps,
                static_cast<long long>(r.linear_iterations), static_cast<long long>(r.residual_evaluations),
                static_cast<long long>(r.jacobian_assemblies), r.wall_seconds);
  }

  const Eigen::VectorXd& w = runs.back().second.solution;
  auto vtk = nkit_examples::vtk_rectilinear_file::uniform(cells, cells, 0.0, 1.0, 0.0, 1.0);
  Eigen::VectorXd u(w.size() / 2), v(w.size() / 2);
  for (Eigen::Index c = 0; c < u.size(); ++c) {
    u(c) = w(2 * c);
    v(c) = w(2 * c + 1);
  }
  vtk.add_scalar("u", u);
  vtk.add_scalar("v", v);
  vtk.write(folder / "reaction_diffusion.vtk", "nkit reaction-diffusion (Gray-Scott kinetics, manufactured solution)");
  nkit_examples::run_gnuplot(
      folder, "reaction_residuals.gp",
      nkit_examples::residual_history_script("reaction_residuals.png", "Reaction-diffusion: block Jacobi vs ILU(0)",
                                             "Newton step", curves),
      std::cout);
  std::printf("\nwrote history CSV files, reaction_diffusion.vtk (and reaction_residuals.png with gnuplot) in %s\n",
              std::filesystem::absolute(folder).string().c_str());
  return converged ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
