// The performance suite, side by side in one run, on the heat-conduction
// model problem (problems/model_problem/model_problem.hpp: −∇·((1 + T²)∇T) = 10 on the unit
// square, n × n cells, T0 = 0, converged at ‖R‖ <= 1e-8 ‖R(T0)‖):
//
//   model_problem/<configuration>/<n>/threads:<t>     (the unit square, n² cells)
//   model_problem_3d/<configuration>/<n>/threads:<t>  (the unit cube, n³ cells, 7-point)
//       nkit Newton–GMRES (matrix-free J·v) with each built-in preconditioner,
//       exact Newton + SparseLU / UMFPACK, Picard + SparseLU / SimplicialLDLT,
//       explicit pseudo-time marching with RK4 / Dormand–Prince (Boost.Odeint).
//       Each solve runs in a fresh process (fresh_process.hpp): time, work
//       units, iterations, peak resident memory (VmHWM). A configuration that
//       did not reach the criterion within the time cap is reported with the
//       residual it reached, and its larger sizes are skipped.
//   residual_evaluation/<n>       one evaluation of R: the work unit, its flop rate
//                                 and least memory traffic as fractions of the
//                                 arithmetic peak and of the triad
//   arithmetic_peak               independent multiply–add chains: one core's flop rate as built
//   unwritten_entry_check/<n>     marker fill + scan of r, in work units
//   stream_triad/<N>              a = b + s c, the memory-bandwidth limit
//   orthogonalization/<n>         GMRES(30) Gram–Schmidt on a 2D 5-point operator
//   broyden_tridiagonal_*/<N>     Newton–GMRES time per unknown, 1e4 … 4e6 unknowns
//   trace_overhead/<mode>         the same solve with no recorder, recording, detached
//
//   bench_model_problem --benchmark_out=suite.json --benchmark_out_format=json
//   options (before Google Benchmark's own):
//     --nkit_sizes=128,256,512,1024,2048   model-problem sizes n (cells per side)
//     --nkit_sizes_3d=32,64,128,256        sizes n of the 3-D model problem (default none)
//     --nkit_time_cap=600                  seconds per model-problem solve
//     --nkit_memory_limit_gib=22           address-space cap of each child process
//     --nkit_threads=1,2                   thread counts (OpenMP builds: default 1,2; without: 1)
// bench/make_performance_table.py turns the JSON into the README table and plot.
#include <benchmark/benchmark.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <map>
#include <nkit/nkit.hpp>
#include <string>
#include <vector>

#include "fresh_process.hpp"
#include "model_problem_configurations.hpp"
#include "suite_kernels.hpp"

namespace {

using namespace nkit_bench;

struct suite_options {
  std::vector<int> sizes{128, 256, 512, 1024, 2048};
  std::vector<int> sizes_3d{};
  double time_cap = 600.0;
  double memory_limit_gib = 22.0;
  std::vector<int> threads{1};
};
suite_options& options() {
  static suite_options value;
  return value;
}

std::vector<int> parse_list(const char* text) {
  std::vector<int> values;
  for (const char* p = text; *p != '\0';) {
    char* end = nullptr;
    values.push_back(static_cast<int>(std::strtol(p, &end, 10)));
    p = *end == ',' ? end + 1 : end;
    if (end == p && *p != '\0') break;
  }
  return values;
}

// ---- model problem, one fresh process per solve ----------------------------------

/// What earlier sizes of a configuration showed (at one thread count).
struct history_entry {
  int n = 0;
  double unknowns = 0.0;
  bool reached = false;
  double seconds = 0.0;
  double peak_bytes = 0.0;
};
std::map<std::string, std::vector<history_entry>>& configuration_history() {
  static std::map<std::string, std::vector<history_entry>> value;
  return value;
}

/// Unknowns of the model problem with n cells per side.
double unknowns_of(int n, int dimensions) { return dimensions == 3 ? double(n) * n * n : double(n) * n; }

/// Empty when size n should run; otherwise why not.
std::string reason_to_skip(const std::vector<history_entry>& earlier, int n, int dimensions) {
  const double unknowns = unknowns_of(n, dimensions);
  // Only smaller sizes count: with --benchmark_repetitions the same size
  // comes again and must neither project from itself nor be skipped.
  std::vector<history_entry> smaller;
  for (const history_entry& entry : earlier) {
    if (entry.unknowns >= unknowns) continue;
    if (!smaller.empty() && smaller.back().unknowns == entry.unknowns) smaller.pop_back();  // keep its latest run
    smaller.push_back(entry);
  }
  if (smaller.empty()) return {};
  const history_entry& last = smaller.back();
  char text[200];
  if (!last.reached) {
    std::snprintf(text, sizeof text, "not run: did not reach the criterion at n = %d", last.n);
    return text;
  }
  // Growth exponent in N from the last two sizes (at least 1: no solver is
  // cheaper than linear), projected to this size.
  double exponent = 1.0;
  if (smaller.size() >= 2) {
    const history_entry& before = smaller[smaller.size() - 2];
    exponent = std::max(1.0, std::log(last.seconds / before.seconds) / std::log(last.unknowns / before.unknowns));
  }
  const double growth = std::pow(unknowns / last.unknowns, exponent);
  const double projected_seconds = last.seconds * growth;
  const double projected_bytes = last.peak_bytes * unknowns / last.unknowns;
  if (projected_seconds > 2.0 * options().time_cap) {
    std::snprintf(text, sizeof text, "not run: projected %.0f s (N^%.2f from n = %d) > 2 x time cap", projected_seconds,
                  exponent, last.n);
    return text;
  }
  if (projected_bytes > options().memory_limit_gib * 1024.0 * 1024.0 * 1024.0) {
    std::snprintf(text, sizeof text, "not run: projected %.1f GiB > memory limit", projected_bytes / (1 << 30));
    return text;
  }
  return {};
}

void model_problem(benchmark::State& state, const configuration* config, int n, int dimensions, int threads) {
  const std::string key =
      std::to_string(dimensions) + "d/" + std::string(config->name) + "/threads:" + std::to_string(threads);
  std::vector<history_entry>& earlier = configuration_history()[key];
  if (!config->available) {
    state.SkipWithError(config->unavailable_reason);
    for (auto _ : state) {
    }
    return;
  }
  if (const std::string skip = reason_to_skip(earlier, n, dimensions); !skip.empty()) {
    state.SkipWithError(skip.c_str());
    for (auto _ : state) {
    }
    return;
  }
  char arguments[256];
  std::snprintf(arguments, sizeof arguments,
                "--run-configuration=%s --size=%d --dimensions=%d --time-cap=%.0f --threads=%d --memory-limit-gib=%.1f",
                config->name, n, dimensions, options().time_cap, threads, options().memory_limit_gib);
  child_output output;
  for (auto _ : state) {
    output = run_fresh_process(own_executable(), arguments, options().time_cap * 1.5 + 120.0);
    state.SetIterationTime(std::max(output.number("solve_seconds"), 1e-9));
  }
  if (!output.ok || output.numbers.count("reached") == 0) {
    earlier.push_back({n, unknowns_of(n, dimensions), false, 0.0, 0.0});
    const std::string message = "child process failed (exit status " + std::to_string(output.exit_status) +
                                "): " + output.text("failure") + output.text("error");
    state.SkipWithError(message.c_str());
    return;
  }
  const bool reached = output.number("reached") > 0.5;
  earlier.push_back(
      {n, unknowns_of(n, dimensions), reached, output.number("solve_seconds"), output.number("peak_rss_bytes")});
  for (const auto& [name, value] : output.numbers) state.counters[name] = value;
  state.counters["n"] = n;
  state.counters["dimensions"] = dimensions;
  state.counters["unknowns"] = unknowns_of(n, dimensions);
  state.counters["threads"] = threads;
  const double residual_seconds = output.number("residual_seconds");
  if (residual_seconds > 0.0) state.counters["work_units"] = output.number("solve_seconds") / residual_seconds;
  char label[200];
  if (reached) {
    std::snprintf(label, sizeof label, "%s", config->name);
  } else {
    std::snprintf(label, sizeof label, "%s: did not reach (%s), residual %.2e of initial", config->name,
                  output.text("failure").c_str(), output.number("relative_residual"));
  }
  state.SetLabel(label);
}

void register_model_problem(int dimensions, const std::vector<int>& sizes) {
  const std::string family = dimensions == 3 ? "model_problem_3d/" : "model_problem/";
  for (const configuration& config : configurations()) {
    for (const int threads : options().threads) {
      if (threads > 1 && !config.uses_threads) continue;
      for (const int n : sizes) {
        const std::string name =
            family + std::string(config.name) + "/" + std::to_string(n) + "/threads:" + std::to_string(threads);
        benchmark::RegisterBenchmark(name.c_str(), model_problem, &config, n, dimensions, threads)
            ->Iterations(1)
            ->UseManualTime()
            ->Unit(benchmark::kSecond);
      }
    }
  }
}

}  // namespace

int main(int argc, char** argv) {
  // Child mode: one configuration, one size, results on stdout.
  for (int k = 1; k < argc; ++k) {
    if (std::strncmp(argv[k], "--run-configuration=", 20) == 0) return run_configuration_in_child(argc, argv);
  }
  // Our options, removed before Google Benchmark parses the rest.
  int kept = 1;
  bool threads_given = false;
  for (int k = 1; k < argc; ++k) {
    const char* argument = argv[k];
    if (std::strncmp(argument, "--nkit_sizes=", 13) == 0) {
      options().sizes = parse_list(argument + 13);
    } else if (std::strncmp(argument, "--nkit_sizes_3d=", 16) == 0) {
      options().sizes_3d = parse_list(argument + 16);
    } else if (std::strncmp(argument, "--nkit_time_cap=", 16) == 0) {
      options().time_cap = std::atof(argument + 16);
    } else if (std::strncmp(argument, "--nkit_memory_limit_gib=", 24) == 0) {
      options().memory_limit_gib = std::atof(argument + 24);
    } else if (std::strncmp(argument, "--nkit_threads=", 15) == 0) {
      options().threads = parse_list(argument + 15);
      threads_given = true;
    } else {
      argv[kept++] = argv[k];
    }
  }
  argc = kept;
#if defined(NKIT_USE_OPENMP)
  if (!threads_given) options().threads = {1, 2};
#else
  options().threads = {1};
#endif
  register_kernel_benchmarks(options().sizes, options().threads);
  register_model_problem(2, options().sizes);
  register_model_problem(3, options().sizes_3d);
  benchmark::Initialize(&argc, argv);
  if (benchmark::ReportUnrecognizedArguments(argc, argv)) return 1;
  benchmark::AddCustomContext("nkit_time_cap_seconds", std::to_string(options().time_cap));
  benchmark::AddCustomContext("nkit_memory_measure", "VmHWM of a fresh process per model-problem solve");
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  return 0;
}
