// Preconditioners for Newton–GMRES on the benchmark model problem
// (problems/model_problem/model_problem.hpp: −∇·((1 + T²)∇T) = 10 on the unit square, n × n cells,
// converged at ‖R‖ <= 1e-8 ‖R(T0)‖), side by side in one run with exact
// Newton (Eigen::SparseLU as the preconditioner on the analytic Jacobian).
//
//   bench_preconditioners --benchmark_out=preconditioners.json --benchmark_out_format=json
//   bench_preconditioners --benchmark_filter='newton/512/'   (one size)
//
// Counters per Newton case: newton_steps, gmres_iterations, setups, applies,
// setup_seconds, apply_seconds (from the solve report), work_units (wall time
// ÷ one residual evaluation), apply_cost_residuals (seconds per apply ÷
// seconds per residual evaluation), workspace_bytes (solver + preconditioner
// as reported), peak_rss_bytes and solve_rss_bytes (Linux: the same solve
// repeated in a fresh process of this program; its VmHWM at the end, and that
// minus its VmRSS just before the solve, i.e. the memory the solve itself
// touched; --nkit_memory=0 skips it), and time_vs_exact_newton /
// cpu_vs_exact_newton (this case's wall / CPU time ÷ exact Newton's at the
// same n, measured earlier in the same run). Each case is solved once per
// repetition (Iterations(1)): a solve takes seconds. The machine may be
// shared: CPU-time ratios are steadier than wall-time ones there.
#include <benchmark/benchmark.h>

#include <unistd.h>
#include <algorithm>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <map>
#include <nkit/jacobian/sparse_jacobian.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/incomplete_lut.hpp>
#include <nkit/preconditioners/jacobi.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <string>
#include <vector>
#if NKIT_HAS_SUITESPARSE
#include <nkit/preconditioners/suitesparse_direct.hpp>
#endif

#include "problems/baselines/process_resources.hpp"
#include "problems/model_problem/model_problem.hpp"

namespace {

using model = nkit_problems::heat_conduction_model_problem;

/// CPU time of this thread, seconds: on a shared machine it is steadier
/// than wall time for per-call cost ratios.
double thread_cpu_seconds() {
  timespec now{};
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &now);
  return static_cast<double>(now.tv_sec) + 1e-9 * static_cast<double>(now.tv_nsec);
}

enum case_id {
  exact_newton_sparse_lu,
  no_preconditioner,
  jacobi_every_step,
  ilu_zero_every_step,
  ilu_zero_lagged,
  milu_zero,
  ilut_every_step,
  ilut_lagged,
  umfpack_exact_newton,
  klu_exact_newton,
  case_count
};
const char* case_names[case_count] = {"exact_newton_sparse_lu",
                                      "none",
                                      "jacobi",
                                      "ilu_zero",
                                      "ilu_zero_lagged",
                                      "milu_zero",
                                      "ilut",
                                      "ilut_lagged",
                                      "umfpack_exact_newton",
                                      "klu_exact_newton"};

/// Modified ILU(0) (row_sum_compensation = 1), default-constructible for the solver.
struct milu_zero_preconditioner : nkit::ilu_zero_preconditioner {
  milu_zero_preconditioner() : nkit::ilu_zero_preconditioner(nkit::ilu_zero_settings{1.0}) {}
};

std::map<int, double>& exact_newton_seconds() {
  static std::map<int, double> seconds;
  return seconds;
}

nkit::newton_settings settings_for(case_id id) {
  nkit::newton_settings settings;
  settings.newton_step_budget = 30;
  settings.linear.restart_length = 50;
  settings.linear.maximum_iterations = 4000;
  settings.stagnation_window = 30;
  if (id == milu_zero) settings.linear.restart_length = 40;  // measured: fewer iterations per second than 20 or 50
  if (id == ilu_zero_lagged || id == ilut_lagged) {
    // Lagging: keep the factor for up to 4 Newton steps, rebuilding sooner
    // when the last linear solve needed more than 200 iterations.
    settings.preconditioner_rebuild.rebuild_every_newton_steps = 4;
    settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 200;
  }
  return settings;
}

std::string& program_path() {
  static std::string path;
  return path;
}
bool& measure_memory() {
  static bool enabled = true;
  return enabled;
}

/// Runs this program as `--peak-memory-case=<id>:<n>` and reads back its
/// "<VmHWM bytes> <VmRSS before the solve bytes>" line; false on failure.
bool fresh_process_memory(int n, case_id id, double& peak, double& before_solve) {
  if (program_path().empty()) return false;
  const std::string command =
      "'" + program_path() + "' --peak-memory-case=" + std::to_string(static_cast<int>(id)) + ":" + std::to_string(n);
  std::FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return false;
  const int read = std::fscanf(pipe, "%lf %lf", &peak, &before_solve);
  return pclose(pipe) == 0 && read == 2;
}

template <class Preconditioner>
nkit::solve_report solve_once(int n, case_id id, double* rss_before_solve = nullptr) {
  model problem(n);
  Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, Preconditioner> solver(settings_for(id));
  if (rss_before_solve != nullptr) *rss_before_solve = nkit_problems::resident_memory_bytes();
  nkit::solve_report report = solver.solve(problem, t);
  benchmark::DoNotOptimize(t.data());
  return report;
}

std::map<int, double>& exact_newton_cpu_seconds() {
  static std::map<int, double> seconds;
  return seconds;
}

template <class Preconditioner>
void solve_case(benchmark::State& state, int n, case_id id) {
  nkit::solve_report report;
  double cpu_seconds = 0.0;
  for (auto _ : state) {
    const double cpu_start = thread_cpu_seconds();
    report = solve_once<Preconditioner>(n, id);
    cpu_seconds = thread_cpu_seconds() - cpu_start;
    if (!report.converged()) {
      state.SkipWithError(("not converged: " + std::string(report.message())).c_str());
      return;
    }
  }
  const double residual_seconds = report.median_residual_seconds;
  state.counters["newton_steps"] = report.newton_steps;
  state.counters["gmres_iterations"] = static_cast<double>(report.linear_iterations);
  state.counters["setups"] = static_cast<double>(report.preconditioner_setups);
  state.counters["applies"] = static_cast<double>(report.preconditioner_applications);
  state.counters["setup_seconds"] = report.time.preconditioner_setup;
  state.counters["apply_seconds"] = report.time.preconditioner_apply;
  state.counters["assembly_seconds"] = report.time.jacobian_assembly;
  state.counters["total_seconds"] = report.wall_seconds;
  state.counters["cpu_seconds"] = cpu_seconds;
  state.counters["work_units"] = report.work_units();
  state.counters["setup_work_units"] = residual_seconds > 0 ? report.time.preconditioner_setup / residual_seconds : 0;
  state.counters["apply_cost_residuals"] = report.preconditioner_applications > 0 && residual_seconds > 0
                                               ? report.time.preconditioner_apply /
                                                     static_cast<double>(report.preconditioner_applications) /
                                                     residual_seconds
                                               : 0.0;
  state.counters["workspace_bytes"] = static_cast<double>(report.workspace_bytes);
  if (id == exact_newton_sparse_lu) {
    exact_newton_seconds()[n] = report.wall_seconds;
    exact_newton_cpu_seconds()[n] = cpu_seconds;
  }
  if (const auto exact = exact_newton_seconds().find(n); exact != exact_newton_seconds().end()) {
    state.counters["time_vs_exact_newton"] = report.wall_seconds / exact->second;
    state.counters["cpu_vs_exact_newton"] = cpu_seconds / exact_newton_cpu_seconds()[n];
  }
  double peak = 0.0, before_solve = 0.0;
  if (measure_memory() && fresh_process_memory(n, id, peak, before_solve)) {
    state.counters["peak_rss_bytes"] = peak;
    state.counters["solve_rss_bytes"] = peak - before_solve;
  }
  state.SetLabel(case_names[id]);
}

/// Calls visit.template operator()<Preconditioner>() for the case's type;
/// false when the case is not built.
template <class Visit>
bool with_case_type(case_id id, Visit&& visit) {
  switch (id) {
    case exact_newton_sparse_lu:
      visit(nkit::sparse_direct_preconditioner{});
      return true;
    case no_preconditioner:
      visit(nkit::identity_preconditioner{});
      return true;
    case jacobi_every_step:
      visit(nkit::jacobi_preconditioner{});
      return true;
    case ilu_zero_every_step:
    case ilu_zero_lagged:
      visit(nkit::ilu_zero_preconditioner{});
      return true;
    case milu_zero:
      visit(milu_zero_preconditioner{});
      return true;
    case ilut_every_step:
    case ilut_lagged:
      visit(nkit::incomplete_lut_preconditioner{});
      return true;
#if NKIT_HAS_SUITESPARSE
    case umfpack_exact_newton:
      visit(nkit::umfpack_direct_preconditioner{});
      return true;
    case klu_exact_newton:
      visit(nkit::klu_direct_preconditioner{});
      return true;
#endif
    default:
      return false;
  }
}

void newton(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  const auto id = static_cast<case_id>(state.range(1));
  const bool built = with_case_type(id, [&](auto tag) { solve_case<decltype(tag)>(state, n, id); });
  if (!built) {
    state.SkipWithError("not built (SuiteSparse not found)");
    for (auto _ : state) {
    }
  }
}

void register_newton_cases() {
  for (const int n : {256, 512, 1024}) {
    for (int id = 0; id < case_count; ++id) {
      // Unpreconditioned and point-Jacobi GMRES need ~5000 iterations at
      // n = 256 (about 40 s there on a shared machine, growing ~8x per
      // doubling of n): they are run at n = 256 only. At n = 1024 only the
      // reference and the fastest cases of each kind at n = 512 are run
      // (plain ILU(0), ILUT rebuilt every step and KLU take 10+ minutes each there).
      if (n > 256 && (id == no_preconditioner || id == jacobi_every_step)) continue;
      if (n > 512 &&
          (id == ilu_zero_every_step || id == ilu_zero_lagged || id == ilut_every_step || id == klu_exact_newton)) {
        continue;
      }
      benchmark::RegisterBenchmark(("newton/" + std::to_string(n) + "/" + case_names[id]).c_str(), newton)
          ->Args({n, id})
          ->Iterations(1)
          ->Unit(benchmark::kSecond)
          ->UseRealTime();
    }
  }
}

/// One residual evaluation (the work unit) at size n.
void residual_evaluation(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  model problem(n);
  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), 0.3), r(problem.unknowns());
  for (auto _ : state) {
    problem(t, r);
    benchmark::DoNotOptimize(r.data());
  }
}
BENCHMARK(residual_evaluation)->Arg(256)->Arg(512)->Arg(1024)->Unit(benchmark::kMicrosecond);

/// ILU(0) apply on the model Jacobian, template path and through
/// any_preconditioner (one virtual call), and its cost in residual evaluations.
template <bool TypeErased>
void ilu_zero_apply(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  model problem(n);
  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), 0.3), r(problem.unknowns());
  nkit::sparse_matrix jacobian;
  problem.assemble_jacobian(t, jacobian);
  nkit::ilu_zero_preconditioner ilu;
  ilu.build(jacobian);
  nkit::any_preconditioner<> erased{ilu};
  Eigen::VectorXd z(problem.unknowns());
  problem(t, r);
  // Time of one residual evaluation, for the ratio (median of 21).
  // CPU time of one residual evaluation (mean of 50), for the ratio.
  const double residual_start = thread_cpu_seconds();
  for (int k = 0; k < 50; ++k) problem(t, r);
  const double residual_seconds = (thread_cpu_seconds() - residual_start) / 50.0;
  std::int64_t applies = 0;
  const double apply_start = thread_cpu_seconds();
  for (auto _ : state) {
    if constexpr (TypeErased) {
      erased.apply(r, z);
    } else {
      ilu.apply(r, z);
    }
    ++applies;
    benchmark::DoNotOptimize(z.data());
  }
  const double apply_seconds = thread_cpu_seconds() - apply_start;
  state.counters["apply_cost_residuals_cpu"] = apply_seconds / static_cast<double>(applies) / residual_seconds;
}
BENCHMARK_TEMPLATE(ilu_zero_apply, false)->Arg(256)->Arg(512)->Arg(1024)->Unit(benchmark::kMicrosecond);
BENCHMARK_TEMPLATE(ilu_zero_apply, true)->Arg(256)->Arg(512)->Arg(1024)->Unit(benchmark::kMicrosecond);

/// Colored finite-difference Jacobian of the model problem (5-point
/// pattern): residual evaluations per assembly (must equal the color count,
/// 5) and seconds, also in residual evaluations.
void colored_assembly(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  model problem(n);
  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), 0.3), r(problem.unknowns());
  problem(t, r);
  std::int64_t evaluations = 0;
  auto evaluate = [&](const Eigen::VectorXd& x, Eigen::VectorXd& out) {
    ++evaluations;
    problem(x, out);
  };
  nkit::colored_difference_jacobian colored;
  const auto prepare_start = nkit::detail::clock_type::now();
  colored.prepare(nkit::five_point_grid_pattern(n, n));
  const double prepare_seconds = nkit::detail::seconds_between(prepare_start, nkit::detail::clock_type::now());
  nkit::sparse_matrix jacobian;
  colored.assemble(evaluate, t, r, jacobian);  // first assembly sizes the matrix
  evaluations = 0;
  std::int64_t assemblies = 0;
  double seconds = 0.0;
  const double cpu_start = thread_cpu_seconds();
  for (auto _ : state) {
    const auto start = nkit::detail::clock_type::now();
    colored.assemble(evaluate, t, r, jacobian);
    seconds += nkit::detail::seconds_between(start, nkit::detail::clock_type::now());
    ++assemblies;
  }
  const double cpu_seconds = thread_cpu_seconds() - cpu_start;
  const double residual_start = thread_cpu_seconds();
  for (int k = 0; k < 20; ++k) problem(t, r);
  const double residual_cpu_seconds = (thread_cpu_seconds() - residual_start) / 20.0;
  state.counters["colors"] = colored.colors();
  state.counters["residuals_per_assembly"] = static_cast<double>(evaluations) / static_cast<double>(assemblies);
  state.counters["assembly_seconds"] = seconds / static_cast<double>(assemblies);
  state.counters["assembly_cost_residuals_cpu"] = cpu_seconds / static_cast<double>(assemblies) / residual_cpu_seconds;
  state.counters["coloring_seconds_once"] = prepare_seconds;
}
BENCHMARK(colored_assembly)->Arg(256)->Arg(512)->Arg(1024)->Unit(benchmark::kMillisecond);

}  // namespace

int main(int argc, char** argv) {
  // Child mode for the fresh-process memory measurement.
  if (argc == 2 && std::strncmp(argv[1], "--peak-memory-case=", 19) == 0) {
    int id = 0, n = 0;
    if (std::sscanf(argv[1] + 19, "%d:%d", &id, &n) != 2 || id < 0 || id >= case_count || n < 2) return 2;
    double before_solve = 0.0;
    bool converged = false;
    const bool built = with_case_type(static_cast<case_id>(id), [&](auto tag) {
      converged = solve_once<decltype(tag)>(n, static_cast<case_id>(id), &before_solve).converged();
    });
    std::printf("%.0f %.0f\n", nkit_problems::peak_memory_bytes(), before_solve);
    return built && converged ? 0 : 1;
  }
  for (int k = 1; k < argc; ++k) {  // our own flag, removed before Google Benchmark parses the rest
    if (std::strcmp(argv[k], "--nkit_memory=0") == 0) {
      measure_memory() = false;
      for (int j = k; j + 1 < argc; ++j) argv[j] = argv[j + 1];
      --argc;
      break;
    }
  }
  char path[4096];
  const ssize_t length = readlink("/proc/self/exe", path, sizeof(path) - 1);
  if (length > 0) program_path().assign(path, static_cast<std::size_t>(length));
  register_newton_cases();
  benchmark::Initialize(&argc, argv);
  if (benchmark::ReportUnrecognizedArguments(argc, argv)) return 1;
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  return 0;
}
