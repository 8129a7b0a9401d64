// The configurations of the model-problem suite and the child-process side
// that runs one of them: builds the problem at size n, times one residual
// evaluation (the work unit), solves, and prints "key value" lines.
#ifndef NKIT_BENCH_MODEL_PROBLEM_CONFIGURATIONS_HPP
#define NKIT_BENCH_MODEL_PROBLEM_CONFIGURATIONS_HPP

#include <Eigen/SparseCholesky>
#include <Eigen/SparseLU>
#include <algorithm>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <functional>
#include <new>
#include <nkit/nkit.hpp>
#include <string>
#include <vector>

#if NKIT_BENCH_HAS_UMFPACK
#include <Eigen/UmfPackSupport>
#endif
#if NKIT_BENCH_HAS_ODEINT
#include "explicit_marching.hpp"
#endif
#if defined(NKIT_USE_OPENMP)
#include <omp.h>
#endif
#if NKIT_BENCH_HAS_HYPRE
#include <mpi.h>

#include <nkit/preconditioners/hypre_algebraic_multigrid.hpp>
#include <nkit/preconditioners/hypre_structured_multigrid.hpp>
#endif

#include "fresh_process.hpp"
#include "model_problem_baselines.hpp"
#include "problems/baselines/process_resources.hpp"

namespace nkit_bench {

/// Prints one result line "key value" for the parent.
inline void emit(const char* key, double value) { std::printf("%s %.17g\n", key, value); }
inline void emit_text(const char* key, const std::string& value) {
  std::string single_line = value;
  std::replace(single_line.begin(), single_line.end(), '\n', ' ');
  std::printf("%s %s\n", key, single_line.c_str());
}

/// Median wall time of one residual evaluation at this size (11 evaluations
/// on T = 0.3, after one to warm the caches): the work unit.
inline double residual_seconds(const model& problem) {
  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), 0.3), r(problem.unknowns());
  problem(t, r);
  std::vector<double> samples;
  for (int k = 0; k < 11; ++k) {
    wall_clock clock;
    problem(t, r);
    samples.push_back(clock.seconds());
  }
  std::nth_element(samples.begin(), samples.begin() + 5, samples.end());
  return samples[5];
}

/// Newton–GMRES settings for every nkit configuration: the model problem's tolerance (1e-8 relative),
/// Eisenstat–Walker forcing (the default), GMRES(30) (the default restart).
inline nkit::newton_settings suite_newton_settings(double time_cap) {
  nkit::newton_settings settings;
  settings.relative_tolerance = target_reduction;
  settings.newton_step_budget = 100;
  settings.linear.maximum_iterations = 20000;
  settings.wall_time_budget_seconds = time_cap;
  return settings;
}

/// Prints the figures of an nkit solve report.
inline void emit_report(const nkit::solve_report& report) {
  emit("reached", report.converged() ? 1 : 0);
  emit("solve_seconds", report.wall_seconds);
  emit("relative_residual", report.final_residual_norm / report.initial_residual_norm);
  emit("steps", report.newton_steps);
  emit("linear_iterations", static_cast<double>(report.linear_iterations));
  emit("residual_evaluations", static_cast<double>(report.residual_evaluations));
  emit("preconditioner_setups", static_cast<double>(report.preconditioner_setups));
  emit("workspace_bytes", static_cast<double>(report.workspace_bytes));
  emit("solver_work_units", report.work_units());
  emit("unattributed_fraction", report.time.other / report.wall_seconds);
  emit("orthogonalization_fraction", report.time.orthogonalization / report.wall_seconds);
  emit("preconditioner_fraction",
       (report.time.preconditioner_setup + report.time.preconditioner_apply + report.time.jacobian_assembly) /
           report.wall_seconds);
  if (!report.converged()) emit_text("failure", std::string(nkit::name(report.reason)));
}

/// Solves the model problem with nkit from T0 = 0 and prints the figures.
template <class Preconditioner>
void run_nkit(const model& problem, const nkit::newton_settings& settings, Preconditioner preconditioner = {}) {
  model copy = problem;
  Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, Preconditioner> solver(settings, {},
                                                                                      std::move(preconditioner));
  emit_report(solver.solve(copy, t));
}

/// Lagged preconditioner: kept for up to 4 Newton steps, rebuilt sooner
/// when the last linear solve needed more than 30 iterations.
inline nkit::newton_settings lagged(nkit::newton_settings settings) {
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 4;
  settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 30;
  return settings;
}

#if NKIT_BENCH_HAS_HYPRE
/// hypre needs MPI even for one process: each child process that runs a hypre
/// configuration starts it once (and finalises it when the solve is done).
inline void start_mpi_once() {
  int initialised = 0;
  MPI_Initialized(&initialised);
  if (!initialised) MPI_Init(nullptr, nullptr);
}

/// Red/black Gauss–Seidel (symmetric order) with the non-Galerkin coarse
/// operators it needs: the structured-multigrid choice measured fastest on
/// the model problem.
inline nkit::structured_multigrid_settings red_black_structured_multigrid() {
  nkit::structured_multigrid_settings multigrid;
  multigrid.smoother = nkit::structured_multigrid_smoother::red_black_gauss_seidel_symmetric;
  multigrid.coarse_operator = nkit::structured_coarse_operator::non_galerkin;
  return multigrid;
}

/// nkit with BoomerAMG on MPI_COMM_SELF: a serial AMG in a serial code.
/// GMRES(10): multigrid-preconditioned GMRES needs a few iterations per
/// Newton step here (about 3), so a 10-vector basis never restarts and holds
/// 20 vectors (8 bytes × 20 N) less than the default GMRES(30).
inline void run_algebraic_multigrid(const model& problem, nkit::newton_settings settings,
                                    const nkit::algebraic_multigrid_settings& multigrid = {}) {
  settings.linear.restart_length = 10;
  start_mpi_once();
  run_nkit(problem, settings, nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF, multigrid));
  MPI_Finalize();
}

/// The model problem's grid (n² or n³ cells, one unknown per cell).
inline nkit::structured_grid model_grid(int cells_per_side, int dimensions) {
  return nkit::structured_grid(std::vector<int>(static_cast<std::size_t>(dimensions), cells_per_side));
}

/// nkit with hypre's structured (semicoarsening) multigrid on MPI_COMM_SELF,
/// GMRES(10) as for BoomerAMG.
inline void run_structured_multigrid(const model& problem, nkit::newton_settings settings,
                                     const nkit::structured_multigrid_settings& multigrid = {}) {
  settings.linear.restart_length = 10;
  start_mpi_once();
  run_nkit(problem, settings,
           nkit::structured_multigrid_preconditioner(
               MPI_COMM_SELF, model_grid(problem.cells_per_side(), problem.dimensions()), multigrid));
  MPI_Finalize();
}
#endif

/// Levels of the suite's grid sequencing: from 32 cells per side (or n
/// itself when smaller or odd) to n, halving.
inline int sequencing_level_count(int n) {
  int level_count = 1;
  for (int coarsest = n; coarsest % 2 == 0 && coarsest / 2 >= 32; coarsest /= 2) ++level_count;
  return level_count;
}

/// Grid sequencing (multilevel/grid_sequencing_solver.hpp) of the model
/// problem: levels from 32² (or n itself when smaller or odd) to n², each a
/// Newton–GMRES solve with the preconditioner `make_solver(level, settings)`
/// builds; the finest level meets the suite's criterion ‖R‖₂ <= 1e-8 ‖R(0)‖₂.
/// "steps" is the finest level's Newton steps (the figure nested iteration
/// is about); "total_steps" and the iteration counts cover all levels.
template <class SolverAtLevel>
void run_grid_sequencing(const model& problem, const nkit::newton_settings& settings, SolverAtLevel make_solver) {
  const int n = problem.cells_per_side();
  const int dimensions = problem.dimensions();
  const int level_count = sequencing_level_count(n);
  const std::vector<int> extents(static_cast<std::size_t>(dimensions), n);
  const std::vector<double> lengths(static_cast<std::size_t>(dimensions), 1.0);
  const nkit::structured_grid_hierarchy hierarchy(nkit::structured_grid(extents, 1, lengths), level_count);
  std::vector<model> problems;
  for (int level = 0; level < level_count; ++level) {
    problems.emplace_back(hierarchy.grid(level).cells(0), problem.source(), dimensions);
  }
  nkit::grid_sequencing_settings sequencing_settings;
  sequencing_settings.newton = settings;
  nkit::grid_sequencing_solver solver(sequencing_settings);
  Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
  const nkit::grid_sequencing_report report = solver.solve(
      hierarchy, [&](int level) -> model& { return problems[static_cast<std::size_t>(level)]; }, make_solver, t);
  const bool finest = report.reached_finest_level;
  const nkit::grid_level_record* last = finest ? &report.finest() : nullptr;
  emit("reached", report.converged() ? 1 : 0);
  emit("solve_seconds", report.wall_seconds);
  emit("relative_residual", last ? last->final_residual_norm / last->reference_residual_norm : 1.0);
  emit("steps", last ? last->newton_steps : 0);
  emit("levels", level_count);
  emit("total_steps", report.total_newton_steps());
  emit("linear_iterations", static_cast<double>(report.total_linear_iterations()));
  emit("finest_linear_iterations", last ? static_cast<double>(last->linear_iterations) : 0.0);
  emit("residual_evaluations", static_cast<double>(report.total_residual_evaluations()));
  emit("finest_seconds", last ? last->wall_seconds : 0.0);
  emit("solver_work_units", report.work_units());
  if (!report.converged()) emit_text("failure", std::string(nkit::name(report.reason)));
}

#if NKIT_BENCH_HAS_HYPRE
/// Grid sequencing with the structured multigrid per level, lagged, GMRES(10).
inline void run_grid_sequencing_structured_multigrid(const model& problem, double cap,
                                                     const nkit::structured_multigrid_settings& multigrid) {
  start_mpi_once();
  nkit::newton_settings settings = lagged(suite_newton_settings(cap));
  settings.linear.restart_length = 10;
  const int finest = sequencing_level_count(problem.cells_per_side()) - 1;
  using solver_type =
      nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::structured_multigrid_preconditioner>;
  run_grid_sequencing(problem, settings, [&](int level, const nkit::newton_settings& level_settings) {
    const nkit::structured_grid grid = model_grid(problem.cells_per_side() >> (finest - level), problem.dimensions());
    return solver_type(level_settings, {}, nkit::structured_multigrid_preconditioner(MPI_COMM_SELF, grid, multigrid));
  });
  MPI_Finalize();
}
#endif

/// Prints a baseline's figures.
inline void emit_baseline(const baseline_result& result, double seconds) {
  emit("reached", result.reached ? 1 : 0);
  emit("solve_seconds", seconds);
  emit("relative_residual", result.relative_residual);
  emit("steps", static_cast<double>(result.iterations));
  emit("residual_evaluations", static_cast<double>(result.residual_evaluations));
  emit("factorizations", static_cast<double>(result.factorizations));
  if (result.projected_seconds > 0.0) emit("projected_seconds", result.projected_seconds);
  if (!result.reached) emit_text("failure", result.failure);
}

template <class Baseline>
void run_baseline(const model& problem, double time_cap, Baseline&& baseline) {
  Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
  wall_clock clock;
  const baseline_result result = baseline(problem, t, time_cap);
  emit_baseline(result, clock.seconds());
}

/// One configuration of the suite.
struct configuration {
  const char* name;
  bool available;
  const char* unavailable_reason;
  bool uses_threads;  ///< worth running at more than one OpenMP thread
  std::function<void(const model&, double)> run;
};

inline const std::vector<configuration>& configurations() {
  using lu = Eigen::SparseLU<column_matrix, Eigen::COLAMDOrdering<int>>;
  using ldlt = Eigen::SimplicialLDLT<column_matrix>;
  static const std::vector<configuration> list = {
    {"newton_gmres_none", true, "", true,
     [](const model& problem, double cap) {
       run_nkit(problem, suite_newton_settings(cap), nkit::identity_preconditioner{});
     }},
    // The built-in preconditioners on the model problem's analytic Jacobian
    // (the solver calls its assemble_jacobian). Block Jacobi with one
    // unknown per cell is point Jacobi, so it has no row of its own. ILU
    // factors are lagged (bench_preconditioners measured lagging faster on
    // this problem); modified ILU(0) with GMRES(40), measured there as
    // fewer seconds than 20 or 50.
    {"newton_gmres_jacobi", true, "", true,
     [](const model& problem, double cap) {
       run_nkit(problem, suite_newton_settings(cap), nkit::jacobi_preconditioner{});
     }},
    {"newton_gmres_ilu_zero", true, "", true,
     [](const model& problem, double cap) {
       run_nkit(problem, lagged(suite_newton_settings(cap)), nkit::ilu_zero_preconditioner{});
     }},
    // The same with Krylov subspace recycling (GCRO-DR, newton_settings::recycling):
    // 10 harmonic Ritz vectors kept from one Newton step's GMRES(30) to the next.
    {"newton_gmres_ilu_zero_recycling", true, "", true,
     [](const model& problem, double cap) {
       nkit::newton_settings settings = lagged(suite_newton_settings(cap));
       settings.recycling.recycle_dimension = 10;
       run_nkit(problem, settings, nkit::ilu_zero_preconditioner{});
     }},
    {"newton_gmres_modified_ilu_zero", true, "", true,
     [](const model& problem, double cap) {
       nkit::newton_settings settings = lagged(suite_newton_settings(cap));
       settings.linear.restart_length = 40;
       run_nkit(problem, settings, nkit::ilu_zero_preconditioner(nkit::ilu_zero_settings{1.0}));
     }},
    {"newton_gmres_ilut", true, "", true,
     [](const model& problem, double cap) {
       run_nkit(problem, lagged(suite_newton_settings(cap)), nkit::incomplete_lut_preconditioner{});
     }},
    // Grid sequencing (nested iteration) with lagged modified ILU(0) per level, GMRES(40) as above.
    {"newton_gmres_grid_sequencing_modified_ilu_zero", true, "", true,
     [](const model& problem, double cap) {
       nkit::newton_settings settings = lagged(suite_newton_settings(cap));
       settings.linear.restart_length = 40;
       using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner>;
       run_grid_sequencing(problem, settings, [](int, const nkit::newton_settings& level_settings) {
         return solver_type(level_settings, {}, nkit::ilu_zero_preconditioner(nkit::ilu_zero_settings{1.0}));
       });
     }},
    // Sparse LU of the exact Jacobian every step: exact Newton as a mode of
    // nkit's own driver (GMRES converges in one iteration).
    {"newton_gmres_sparse_direct", true, "", false,
     [](const model& problem, double cap) {
       run_nkit(problem, suite_newton_settings(cap), nkit::sparse_direct_preconditioner{});
     }},
#if NKIT_BENCH_HAS_HYPRE
    // hypre BoomerAMG (one V-cycle per application, hypre's defaults) from the
    // analytic Jacobian, rebuilt every Newton step or lagged.
    {"newton_gmres_algebraic_multigrid", true, "", true,
     [](const model& problem, double cap) { run_algebraic_multigrid(problem, suite_newton_settings(cap)); }},
    {"newton_gmres_algebraic_multigrid_lagged", true, "", true,
     [](const model& problem, double cap) { run_algebraic_multigrid(problem, lagged(suite_newton_settings(cap))); }},
    // One level of aggressive coarsening: a smaller hierarchy (measured at
    // n = 1024: peak 500 MB instead of 796 MB) for a few more GMRES iterations.
    {"newton_gmres_algebraic_multigrid_lagged_aggressive", true, "", true,
     [](const model& problem, double cap) {
       nkit::algebraic_multigrid_settings multigrid;
       multigrid.aggressive_coarsening_levels = 1;
       run_algebraic_multigrid(problem, lagged(suite_newton_settings(cap)), multigrid);
     }},
    // Grid sequencing with BoomerAMG per level (lagged, aggressive coarsening, GMRES(10)).
    {"newton_gmres_grid_sequencing_algebraic_multigrid_lagged_aggressive", true, "", true,
     [](const model& problem, double cap) {
       start_mpi_once();
       nkit::newton_settings settings = lagged(suite_newton_settings(cap));
       settings.linear.restart_length = 10;
       nkit::algebraic_multigrid_settings multigrid;
       multigrid.aggressive_coarsening_levels = 1;
       using solver_type =
           nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::algebraic_multigrid_preconditioner>;
       run_grid_sequencing(problem, settings, [&](int, const nkit::newton_settings& level_settings) {
         return solver_type(level_settings, {}, nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF, multigrid));
       });
       MPI_Finalize();
     }},
    // hypre's semicoarsening multigrid on the analytic Jacobian's stencil
    // (hypre_structured_multigrid.hpp), lagged, GMRES(10): hypre's defaults
    // (weighted Jacobi, Galerkin coarse operators), and red/black
    // Gauss–Seidel with non-Galerkin coarse operators.
    {"newton_gmres_structured_multigrid_lagged", true, "", true,
     [](const model& problem, double cap) { run_structured_multigrid(problem, lagged(suite_newton_settings(cap))); }},
    {"newton_gmres_structured_multigrid_red_black_lagged", true, "", true,
     [](const model& problem, double cap) {
       run_structured_multigrid(problem, lagged(suite_newton_settings(cap)), red_black_structured_multigrid());
     }},
    // Grid sequencing with the structured multigrid per level (red/black, non-Galerkin, lagged, GMRES(10)).
    {"newton_gmres_grid_sequencing_structured_multigrid_red_black_lagged", true, "", true,
     [](const model& problem, double cap) {
       run_grid_sequencing_structured_multigrid(problem, cap, red_black_structured_multigrid());
     }},
    // The same, with the driver's assembled Jacobian freed once each setup has
    // copied it into hypre (structured_multigrid_settings::release_assembled_jacobian_after_copy).
    {"newton_gmres_grid_sequencing_structured_multigrid_red_black_lagged_releasing_jacobian", true, "", true,
     [](const model& problem, double cap) {
       nkit::structured_multigrid_settings multigrid = red_black_structured_multigrid();
       multigrid.release_assembled_jacobian_after_copy = true;
       run_grid_sequencing_structured_multigrid(problem, cap, multigrid);
     }},
#else
    {"newton_gmres_algebraic_multigrid", false, "not built: MPI and hypre (nkit::hypre) not found", true, nullptr},
    {"newton_gmres_algebraic_multigrid_lagged", false, "not built: MPI and hypre (nkit::hypre) not found", true,
     nullptr},
    {"newton_gmres_algebraic_multigrid_lagged_aggressive", false, "not built: MPI and hypre (nkit::hypre) not found",
     true, nullptr},
    {"newton_gmres_grid_sequencing_algebraic_multigrid_lagged_aggressive", false,
     "not built: MPI and hypre (nkit::hypre) not found", true, nullptr},
    {"newton_gmres_structured_multigrid_lagged", false, "not built: MPI and hypre (nkit::hypre) not found", true,
     nullptr},
    {"newton_gmres_structured_multigrid_red_black_lagged", false, "not built: MPI and hypre (nkit::hypre) not found",
     true, nullptr},
    {"newton_gmres_grid_sequencing_structured_multigrid_red_black_lagged", false,
     "not built: MPI and hypre (nkit::hypre) not found", true, nullptr},
    {"newton_gmres_grid_sequencing_structured_multigrid_red_black_lagged_releasing_jacobian", false,
     "not built: MPI and hypre (nkit::hypre) not found", true, nullptr},
#endif
    {"exact_newton_sparse_lu", true, "", false,
     [](const model& problem, double cap) { run_baseline(problem, cap, exact_newton<lu>); }},
#if NKIT_BENCH_HAS_UMFPACK
    {"exact_newton_umfpack", true, "", false,
     [](const model& problem, double cap) {
       run_baseline(problem, cap, exact_newton<Eigen::UmfPackLU<column_matrix>>);
     }},
#else
    {"exact_newton_umfpack", false, "not built: UMFPACK (libsuitesparse-dev) not found", false, nullptr},
#endif
    {"picard_sparse_lu", true, "", false,
     [](const model& problem, double cap) { run_baseline(problem, cap, picard<lu>); }},
    {"picard_ldlt", true, "", false,
     [](const model& problem, double cap) { run_baseline(problem, cap, picard<ldlt>); }},
#if NKIT_BENCH_HAS_ODEINT
    {"explicit_rk4", true, "", false,
     [](const model& problem, double cap) { run_baseline(problem, cap, explicit_runge_kutta4); }},
    {"explicit_dopri5", true, "", false,
     [](const model& problem, double cap) { run_baseline(problem, cap, explicit_dormand_prince); }},
#else
    {"explicit_rk4", false, "not built: Boost.Odeint not found", false, nullptr},
    {"explicit_dopri5", false, "not built: Boost.Odeint not found", false, nullptr},
#endif
  };
  return list;
}

/// Child side: --run-configuration=<name> --size=<n> --dimensions=<2|3>
/// --time-cap=<s> --threads=<t> --memory-limit-gib=<g>. Prints the results and
/// returns 0; 2 on bad arguments.
inline int run_configuration_in_child(int argc, char** argv) {
  const double start_rss = nkit_problems::resident_memory_bytes();
  std::string name;
  int n = 0, threads = 1, dimensions = 2;
  double cap = 600.0, memory = 22.0;
  for (int k = 1; k < argc; ++k) {
    const char* a = argv[k];
    if (std::strncmp(a, "--run-configuration=", 20) == 0) name = a + 20;
    if (std::strncmp(a, "--size=", 7) == 0) n = std::atoi(a + 7);
    if (std::strncmp(a, "--dimensions=", 13) == 0) dimensions = std::atoi(a + 13);
    if (std::strncmp(a, "--time-cap=", 11) == 0) cap = std::atof(a + 11);
    if (std::strncmp(a, "--threads=", 10) == 0) threads = std::atoi(a + 10);
    if (std::strncmp(a, "--memory-limit-gib=", 19) == 0) memory = std::atof(a + 19);
  }
  const auto found = std::find_if(configurations().begin(), configurations().end(),
                                  [&](const configuration& c) { return name == c.name; });
  if (found == configurations().end() || !found->available || n < 2 || (dimensions != 2 && dimensions != 3)) {
    emit_text("error", "unknown or unavailable configuration '" + name + "', or bad size or dimensions");
    return 2;
  }
#if defined(NKIT_USE_OPENMP)
  omp_set_num_threads(threads);
#else
  static_cast<void>(threads);
#endif
  limit_address_space(memory);
  const model problem(n, 10.0, dimensions);
  try {
    emit("residual_seconds", residual_seconds(problem));
    found->run(problem, cap);
  } catch (const std::bad_alloc&) {
    emit("reached", 0);
    emit_text("failure", "out of memory (address-space limit)");
  }
  emit("peak_rss_bytes", nkit_problems::peak_memory_bytes());
  emit("start_rss_bytes", start_rss);
  return 0;
}

}  // namespace nkit_bench

#endif  // NKIT_BENCH_MODEL_PROBLEM_CONFIGURATIONS_HPP
