// Distributed model problem: each rank owns a strip of grid rows, the
// residual exchanges one halo row with each neighbour, nkit reduces over
// MPI_COMM_WORLD and preconditions with additive Schwarz (local ILU or local
// direct solve) or hypre's BoomerAMG.
//   mpirun -np 2 distributed_heat_demo [cells_per_side=128] [schwarz_ilut|schwarz_direct|amg|none]
//                                      [rebuild_every_newton_steps=1]
#include <mpi.h>

#include <cstdio>
#include <cstdlib>
#include <exception>
#include <iostream>
#include <nkit/report/report_output.hpp>

#include "problems/model_problem/solve_strip_problem.hpp"

int main(int argc, char** argv) {
  MPI_Init(&argc, &argv);
  int rank = 0;
  int size = 1;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank);
  MPI_Comm_size(MPI_COMM_WORLD, &size);
  int status = 0;
  try {
    const int n = argc > 1 ? std::atoi(argv[1]) : 128;
    const auto choice = nkit_problems::strip_preconditioner_from_name(argc > 2 ? argv[2] : "amg");
    nkit::newton_settings settings = nkit_problems::strip_default_settings();
    if (argc > 3) settings.preconditioner_rebuild.rebuild_every_newton_steps = std::atoi(argv[3]);
    const auto result = nkit_problems::solve_strip_problem(MPI_COMM_WORLD, n, choice, settings);
    double local_maximum = result.local_temperature.size() > 0 ? result.local_temperature.maxCoeff() : 0.0;
    double maximum = 0.0;
    MPI_Allreduce(&local_maximum, &maximum, 1, MPI_DOUBLE, MPI_MAX, MPI_COMM_WORLD);
    if (rank == 0) {
      std::cout << "Model problem on a " << n << " x " << n << " grid, " << size << " rank(s), preconditioner "
                << (argc > 2 ? argv[2] : "amg") << "\n";
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
