// Side-by-side cost of solving the benchmark model problem (problems/model_problem/model_problem.hpp)
// on an n×n grid, all from T0 = 0 to ‖R‖ ≤ 1e-8 ‖R(T0)‖:
//   nkit_amg             nkit Newton–GMRES (matrix-free J·v, CGS2) with hypre
//                        BoomerAMG built from the analytic Jacobian; arguments
//                        n, rebuild_every_newton_steps, restart_length,
//                        aggressive_coarsening_levels.
//                        Runs on all ranks of MPI_COMM_WORLD (strips).
//   nkit_structured_multigrid  the same with hypre's structured-grid multigrid
//                        (hypre_structured_multigrid.hpp, one box per rank);
//                        arguments n, rebuild_every_newton_steps,
//                        restart_length, red_black (1: red/black Gauss–Seidel
//                        with non-Galerkin coarse operators; 0: hypre's defaults).
//   exact_newton_sparse_lu  Newton with the analytic Jacobian factored by
//                        Eigen::SparseLU every step (one rank; the baselines
//                        of bench/model_problem_baselines.hpp, which the
//                        side-by-side suite bench_model_problem runs too).
//   picard_sparse_cholesky  Picard (frozen k) iteration, each step a sparse
//                        Cholesky (Eigen::SimplicialLDLT, AMD ordering) of the
//                        symmetric positive definite frozen-k matrix (one rank).
// Counters: newton_steps (or Picard steps), gmres_per_newton, work_units
// (solve time ÷ median time of one residual evaluation at the same n, one
// thread per rank), and the time per phase for nkit.
//
//   mpirun -np 1 bench_distributed --benchmark_out=distributed.json --benchmark_out_format=json
//   mpirun -np 2 bench_distributed --benchmark_filter=nkit_amg
// Timings on a shared machine are rough. Each case runs once (Iterations(1)):
// every rank must run the same cases in lockstep, and a solve takes seconds.
#include <mpi.h>

#include <benchmark/benchmark.h>
#include <Eigen/SparseCholesky>
#include <Eigen/SparseLU>
#include <algorithm>
#include <chrono>
#include <cstring>
#include <string>
#include <vector>

#include "model_problem_baselines.hpp"
#include "problems/model_problem/solve_strip_problem.hpp"

namespace {

using clock_type = std::chrono::steady_clock;
double seconds_since(clock_type::time_point start) {
  return std::chrono::duration<double>(clock_type::now() - start).count();
}

int world_size() {
  int size = 1;
  MPI_Comm_size(MPI_COMM_WORLD, &size);
  return size;
}

/// Median wall time of one residual evaluation at T = t.
template <class Problem>
double median_residual_seconds(Problem& problem, const Eigen::VectorXd& t) {
  Eigen::VectorXd r(t.size());
  std::vector<double> samples;
  for (int k = 0; k < 11; ++k) {
    const auto start = clock_type::now();
    problem(t, r);
    benchmark::DoNotOptimize(r.data());
    samples.push_back(seconds_since(start));
  }
  std::nth_element(samples.begin(), samples.begin() + 5, samples.end());
  return samples[5];
}

/// Counters of a distributed nkit solve (shared by the multigrid cases).
void report_distributed_solve(benchmark::State& state, int n, const nkit_problems::strip_solve_result& result) {
  const nkit::solve_report& report = result.report;
  if (!report.converged()) {
    state.SkipWithError(("not converged: " + std::string(nkit::name(report.reason))).c_str());
    return;
  }
  state.SetComplexityN(static_cast<int64_t>(n) * n);
  state.counters["ranks"] = world_size();
  state.counters["newton_steps"] = report.newton_steps;
  state.counters["gmres_per_newton"] = static_cast<double>(report.linear_iterations) / report.newton_steps;
  state.counters["work_units"] = report.work_units();
  state.counters["setups"] = static_cast<double>(report.preconditioner_setups);
  state.counters["seconds_assembly"] = report.time.jacobian_assembly;
  state.counters["seconds_preconditioner_setup"] = report.time.preconditioner_setup;
  state.counters["seconds_preconditioner_apply"] = report.time.preconditioner_apply;
  state.counters["seconds_residual_and_jv"] = report.time.residual + report.time.jacobian_vector;
  state.counters["seconds_orthogonalization"] = report.time.orthogonalization;
}

void nkit_amg(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  settings.preconditioner_rebuild.rebuild_every_newton_steps = static_cast<int>(state.range(1));
  settings.linear.restart_length = static_cast<int>(state.range(2));
  nkit::algebraic_multigrid_settings multigrid;
  multigrid.aggressive_coarsening_levels = static_cast<int>(state.range(3));
  nkit_problems::strip_solve_result result;
  for (auto _ : state) {
    result = nkit_problems::solve_strip_problem(
        MPI_COMM_WORLD, n, nkit_problems::strip_preconditioner::algebraic_multigrid, settings, multigrid);
  }
  report_distributed_solve(state, n, result);
}

void nkit_structured_multigrid(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  nkit::newton_settings settings = nkit_problems::strip_default_settings();
  settings.preconditioner_rebuild.rebuild_every_newton_steps = static_cast<int>(state.range(1));
  settings.linear.restart_length = static_cast<int>(state.range(2));
  nkit::structured_multigrid_settings structured;
  if (state.range(3) != 0) {
    structured.smoother = nkit::structured_multigrid_smoother::red_black_gauss_seidel_symmetric;
    structured.coarse_operator = nkit::structured_coarse_operator::non_galerkin;
  }
  nkit_problems::strip_solve_result result;
  for (auto _ : state) {
    result = nkit_problems::solve_strip_problem(
        MPI_COMM_WORLD, n, nkit_problems::strip_preconditioner::structured_multigrid, settings, {}, structured);
  }
  report_distributed_solve(state, n, result);
}

/// A serial baseline of bench/model_problem_baselines.hpp (the same code the
/// side-by-side suite runs) on the whole grid, one rank.
template <class Baseline>
void serial_baseline(benchmark::State& state, Baseline&& baseline, const char* steps_counter) {
  const int n = static_cast<int>(state.range(0));
  if (world_size() != 1) {
    state.SkipWithError("serial baseline: run with one rank");
    return;
  }
  const nkit_problems::heat_conduction_model_problem problem(n);
  Eigen::VectorXd t;
  nkit_bench::baseline_result result;
  double solve_seconds = 0.0;
  for (auto _ : state) {
    const auto start = clock_type::now();
    t = Eigen::VectorXd::Zero(problem.unknowns());
    result = baseline(problem, t, 1e9);
    solve_seconds = seconds_since(start);
  }
  if (!result.reached) {
    state.SkipWithError(("did not converge: " + result.failure).c_str());
    return;
  }
  state.SetComplexityN(static_cast<int64_t>(n) * n);
  state.counters[steps_counter] = static_cast<double>(result.iterations);
  const double residual_seconds = median_residual_seconds(problem, t);
  state.counters["median_residual_seconds"] = residual_seconds;
  state.counters["work_units"] = solve_seconds / residual_seconds;
}

using column_matrix = nkit_bench::column_matrix;

void exact_newton_sparse_lu(benchmark::State& state) {
  serial_baseline(state, nkit_bench::exact_newton<Eigen::SparseLU<column_matrix, Eigen::COLAMDOrdering<int>>>,
                  "newton_steps");
}

void picard_sparse_cholesky(benchmark::State& state) {
  serial_baseline(state, nkit_bench::picard<Eigen::SimplicialLDLT<column_matrix>>, "picard_steps");
}

// nkit + AMG: rebuild every step or every 3 steps; restart 50 (default) or 20.
BENCHMARK(nkit_amg)
    ->ArgNames({"n", "rebuild_every", "restart", "aggressive_levels"})
    ->ArgsProduct({{256, 512, 1024, 2048}, {1, 3}, {50}, {0, 1}})
    ->Args({1024, 1, 20, 0})
    ->Iterations(1)
    ->UseRealTime()
    ->Unit(benchmark::kSecond);
// nkit + structured multigrid: lagged (every 4 steps), GMRES(10), both smoother families.
BENCHMARK(nkit_structured_multigrid)
    ->ArgNames({"n", "rebuild_every", "restart", "red_black"})
    ->ArgsProduct({{256, 512, 1024, 2048}, {4}, {10}, {0, 1}})
    ->Iterations(1)
    ->UseRealTime()
    ->Unit(benchmark::kSecond);
// Baselines: n = 2048 is not run (SparseLU-Newton needs ~14 min and ~9 GiB there; extrapolate).
void baseline_sizes(benchmark::internal::Benchmark* baseline) {
  baseline->ArgName("n")->Arg(256)->Arg(512)->Arg(1024)->Iterations(1)->UseRealTime()->Unit(benchmark::kSecond);
}
BENCHMARK(exact_newton_sparse_lu)->Apply(baseline_sizes);
BENCHMARK(picard_sparse_cholesky)->Apply(baseline_sizes);

/// Swallows the output of ranks other than 0.
class silent_reporter : public benchmark::BenchmarkReporter {
 public:
  bool ReportContext(const Context&) override { return true; }
  void ReportRuns(const std::vector<Run>&) override {}
};

}  // namespace

int main(int argc, char** argv) {
  MPI_Init(&argc, &argv);
  int rank = 0;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank);
  std::vector<char*> arguments(argv, argv + argc);
  if (rank != 0) {  // only rank 0 writes the JSON file
    arguments.erase(std::remove_if(arguments.begin() + 1, arguments.end(),
                                   [](const char* a) { return std::strncmp(a, "--benchmark_out", 15) == 0; }),
                    arguments.end());
  }
  int count = static_cast<int>(arguments.size());
  benchmark::Initialize(&count, arguments.data());
  if (rank == 0) {
    benchmark::RunSpecifiedBenchmarks();
  } else {
    silent_reporter silent;
    benchmark::RunSpecifiedBenchmarks(&silent);
  }
  benchmark::Shutdown();
  MPI_Finalize();
  return 0;
}
