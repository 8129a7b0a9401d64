// Solves x^3 = 8 for one unknown per rank with nkit::mpi_vector_space through
// the installed (or embedded) nkit::mpi target and checks x = 2 on every rank.
// Runs as an MPI singleton (no launcher needed).
#include <mpi.h>

#include <cmath>
#include <cstdio>
#include <nkit/distributed/mpi_vector_space.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>

int main(int argc, char** argv) {
  MPI_Init(&argc, &argv);
  int status = 1;
  {
    auto residual = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r(0) = x(0) * x(0) * x(0) - 8.0; };
    Eigen::VectorXd x = Eigen::VectorXd::Constant(1, 1.0);
    nkit::newton_settings settings;
    settings.relative_tolerance = 1e-12;
    nkit::newton_krylov_solver<nkit::mpi_vector_space> solver(settings, nkit::mpi_vector_space(MPI_COMM_WORLD));
    const nkit::solve_report report = solver.solve(residual, x);
    std::printf("consumer (MPI): %s, x = %.15f\n", std::string(nkit::name(report.reason)).c_str(), x(0));
    status = report.converged() && std::abs(x(0) - 2.0) < 1e-10 ? 0 : 1;
  }
  MPI_Finalize();
  return status;
}
