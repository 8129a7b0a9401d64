// Solves the strip-split model problem (strip_heat_problem.hpp) with nkit on
// an MPI communicator, with one of the distributed preconditioners. Shared by
// the example program, the MPI tests and the benchmark.
#ifndef NKIT_PROBLEMS_MODEL_PROBLEM_SOLVE_STRIP_PROBLEM_HPP
#define NKIT_PROBLEMS_MODEL_PROBLEM_SOLVE_STRIP_PROBLEM_HPP

#include <mpi.h>

#include <Eigen/Core>
#include <cstdint>
#include <nkit/distributed/mpi_vector_space.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/additive_schwarz.hpp>
#include <nkit/preconditioners/hypre_algebraic_multigrid.hpp>
#include <nkit/preconditioners/hypre_structured_multigrid.hpp>
#include <stdexcept>
#include <string>
#include <string_view>

#include "problems/model_problem/strip_heat_problem.hpp"

namespace nkit_problems {

enum class strip_preconditioner {
  schwarz_incomplete_lut,
  schwarz_direct,
  algebraic_multigrid,
  structured_multigrid,
  none
};

inline strip_preconditioner strip_preconditioner_from_name(std::string_view text) {
  if (text == "schwarz_ilut") return strip_preconditioner::schwarz_incomplete_lut;
  if (text == "schwarz_direct") return strip_preconditioner::schwarz_direct;
  if (text == "amg") return strip_preconditioner::algebraic_multigrid;
  if (text == "structured_multigrid") return strip_preconditioner::structured_multigrid;
  if (text == "none") return strip_preconditioner::none;
  throw std::invalid_argument("unknown preconditioner '" + std::string(text) +
                              "' (schwarz_ilut, schwarz_direct, amg, structured_multigrid or none)");
}

/// Settings used for the distributed model problem unless the caller overrides them.
inline nkit::newton_settings strip_default_settings() {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-8;  // the model problem's convergence criterion (problems/README.md)
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 5000;
  // Two fused reductions per Arnoldi step instead of j + 2 (see docs/scaling_model.md).
  settings.linear.orthogonalization = nkit::orthogonalization_method::classical_gram_schmidt_twice;
  return settings;
}

struct strip_solve_result {
  nkit::solve_report report;
  Eigen::VectorXd local_temperature;  ///< this rank's strip, natural order
  std::int64_t first_global_index = 0;
  std::int64_t halo_exchanges = 0;
  std::int64_t reductions = 0;
};

/// Solves from T0 = 0. Collective over `communicator`.
inline strip_solve_result solve_strip_problem(MPI_Comm communicator, int cells_per_side, strip_preconditioner choice,
                                              const nkit::newton_settings& settings = strip_default_settings(),
                                              const nkit::algebraic_multigrid_settings& multigrid = {},
                                              const nkit::structured_multigrid_settings& structured = {}) {
  using space_type = nkit::mpi_vector_space;
  strip_heat_problem problem(communicator, cells_per_side);
  nkit::any_preconditioner<space_type> preconditioner;
  switch (choice) {
    case strip_preconditioner::schwarz_incomplete_lut:
      preconditioner = nkit::additive_schwarz_preconditioner({nkit::subdomain_solver::incomplete_lut});
      break;
    case strip_preconditioner::schwarz_direct:
      preconditioner = nkit::additive_schwarz_preconditioner({nkit::subdomain_solver::sparse_direct});
      break;
    case strip_preconditioner::algebraic_multigrid:
      preconditioner = nkit::algebraic_multigrid_preconditioner(communicator, multigrid);
      break;
    case strip_preconditioner::structured_multigrid:  // each rank's strip is one box of the n × n grid
      preconditioner = nkit::structured_multigrid_preconditioner(
          communicator, nkit::structured_grid({cells_per_side, cells_per_side}), structured);
      break;
    case strip_preconditioner::none:
      break;
  }
  space_type space(communicator);
  nkit::newton_krylov_solver<space_type, nkit::any_preconditioner<space_type>> solver(settings, space,
                                                                                      std::move(preconditioner));
  strip_solve_result result;
  result.local_temperature = Eigen::VectorXd::Zero(problem.local_unknowns());
  const std::int64_t reductions_before = space.reduction_count();
  result.report = solver.solve(problem, result.local_temperature);
  result.reductions = space.reduction_count() - reductions_before;
  result.first_global_index = problem.first_global_index();
  result.halo_exchanges = problem.halo_exchanges();
  return result;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_MODEL_PROBLEM_SOLVE_STRIP_PROBLEM_HPP
