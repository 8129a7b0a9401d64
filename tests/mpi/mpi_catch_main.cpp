// Catch2 runner for the MPI tests: every rank runs every test case (they are
// collective), and the process exit status is the worst over all ranks, so a
// failure seen on any rank fails the run.
#define CATCH_CONFIG_RUNNER
#include <mpi.h>

#include <catch2/catch.hpp>

int main(int argc, char** argv) {
  MPI_Init(&argc, &argv);
  Catch::Session session;
  int status = session.applyCommandLine(argc, argv);
  if (status == 0) status = session.run();
  int worst = 0;
  MPI_Allreduce(&status, &worst, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
  MPI_Finalize();
  return worst;
}
