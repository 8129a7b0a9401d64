// Distributed model problem: each rank owns a strip of grid rows, the
// residual exchanges one halo row with each neighbour, nkit reduces over
// MPI_COMM_WORLD and preconditions with additive Schwarz (local ILU or local
// direct solve) or hypre's BoomerAMG.
//
//   mpirun -np 2 distributed_heat_demo [--cells_per_side=128] [--preconditioner=amg]
//                                      [--rebuild_every_newton_steps=1] [--help]
//
// --preconditioner: schwarz_ilut, schwarz_direct, amg, structured_multigrid or none.
#include <mpi.h>

#include <exception>
#include <iostream>
#include <nkit/report/report_output.hpp>
#include <stdexcept>
#include <string>

#include "common/command_line.hpp"
#include "problems/model_problem/solve_strip_problem.hpp"

int main(int argc, char** argv) {
  MPI_Init(&argc, &argv);
  int rank = 0;
  int size = 1;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank);
  MPI_Comm_size(MPI_COMM_WORLD, &size);
  // Every rank parses the same arguments; only rank 0 prints help or errors.
  nkit_examples::command_line options("distributed_heat_demo",
                                      "the model problem on MPI ranks (run it with mpirun -np P)");
  options.option("cells_per_side", "128", "n: the grid has n x n cells, split into strips of rows");
  options.option("preconditioner", "amg", "schwarz_ilut, schwarz_direct, amg, structured_multigrid or none");
  options.option("rebuild_every_newton_steps", "1", "rebuild the preconditioner at least every this many Newton steps");
  int cells_per_side = 0;
  nkit_problems::strip_preconditioner choice{};
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  try {
    if (!options.parse(argc, argv, rank == 0 ? &std::cout : nullptr)) {
      MPI_Finalize();
      return 0;
    }
    cells_per_side = options.integer("cells_per_side");
    settings.preconditioner_rebuild.rebuild_every_newton_steps = options.integer("rebuild_every_newton_steps");
    try {
      choice = nkit_problems::strip_preconditioner_from_name(options.text("preconditioner"));
    } catch (const std::invalid_argument& error) {
      throw std::invalid_argument(std::string("distributed_heat_demo: --preconditioner: ") + error.what());
    }
  } catch (const std::invalid_argument& error) {
    if (rank == 0) std::cerr << error.what() << "\n";
    MPI_Finalize();
    return 2;
  }
  const int n = cells_per_side;
  int status = 0;
  try {
    const auto result = nkit_problems::solve_strip_problem(MPI_COMM_WORLD, n, choice, settings);
    double local_maximum = result.local_temperature.size() > 0 ? result.local_temperature.maxCoeff() : 0.0;
    double maximum = 0.0;
    MPI_Allreduce(&local_maximum, &maximum, 1, MPI_DOUBLE, MPI_MAX, MPI_COMM_WORLD);
    if (rank == 0) {
      std::cout << "Model problem on a " << n << " x " << n << " grid, " << size << " rank(s), preconditioner "
                << options.text("preconditioner") << "\n";
      nkit::print_convergence_table(std::cout, result.report);
      std::cout << "maximum temperature " << maximum << ", work units " << result.report.work_units()
                << ", halo exchanges on rank 0: " << result.halo_exchanges
                << ", global reductions: " << result.reductions << "\n";
    }
    status = result.report.converged() ? 0 : 1;
  } catch (const std::exception& error) {
    std::cerr << "rank " << rank << ": " << error.what() << "\n";
    MPI_Abort(MPI_COMM_WORLD, 2);
  }
  MPI_Finalize();
  return status;
}
