// Non-equilibrium gray radiation diffusion in 2-D, side by side in one run:
// the layered target of problems/radiation/gray_radiation_diffusion_2d.hpp
// (invented data: low-Z material z = 1 with a high-Z layer z = 5 in
// [0.1, 0.25] × [0, 0.6], Marshak drive on x = 0) on n × n cells × 2 fields.
// Every configuration starts from the same state at --nkit_start_time (0.02;
// made once per n from the cold start by nkit's adaptive TR-BDF2 at rtol 1e-7
// and cached in a file: the abrupt drive on the cold target needs far shorter
// steps than the rest of the run) and runs with FIXED time steps to
// --nkit_end_time (0.3):
//   * split_lagged: the operator-split loop, one pass per step (E with T
//     frozen, then T with E frozen; problems/radiation/operator_split_loop_2d.hpp);
//   * split_iterated: the same passes repeated each step until max|Δu| <=
//     1e-6·max|u| (nonlinear block Gauss–Seidel; its fixed point is coupled
//     backward Euler);
//   * coupled_block_diagonal / coupled_block_gauss_seidel: nkit's implicit
//     stepper (BDF2) on the coupled system, every stage a Newton–GMRES solve
//     preconditioned by a field split (block diagonal or forward block
//     Gauss–Seidel) with BoomerAMG per field (hypre's defaults, one V-cycle),
//     on the Jacobian nkit assembles by colored differences; the preconditioner
//     is rebuilt by the stepper's schedule (time_preconditioner_rebuild_settings:
//     with a fixed step it is kept until Newton contracts slowly, a stage fails,
//     or a stage needs 3× the GMRES iterations per Newton step of the first
//     stage after the last setup);
//   * coupled_block_diagonal_rebuilt_every_step /
//     coupled_block_gauss_seidel_rebuilt_every_step: the same, with the
//     preconditioner rebuilt at every accepted step.
// The split loops solve each field by nkit's Newton–GMRES with BoomerAMG too
// (set up at every Newton step), so the comparison is between couplings, not
// linear solvers.
//
// Accuracy: every run's error is measured against a reference, coupled BDF2
// with --nkit_reference_steps fixed steps (default 480) from the same start on
// the same grid: error = max over the two fields of max|v − v_ref| / max|v_ref|
// at the final time (counter final_error). Each configuration runs at a ladder
// of step counts (configurations() below: easy to extend; pick rungs with
// --benchmark_filter); bench/make_radiation_table.py interpolates, per
// configuration and size, the step count and time at which the error equals
// a target (log–log between the rungs that bracket it, or extrapolated with
// the measured order). That is how the time steps are matched to equal accuracy.
//
// Counters: steps, step_size, newton_steps, gmres_per_newton (GMRES iterations
// per Newton step), linear_iterations, passes (split: passes per step),
// preconditioner_setups, wall_seconds, cpu_seconds (process CPU time),
// final_error, reached (1 = reached the final time; 0 = a solve failed or the
// CPU cap stopped it).
//   bench_radiation_diffusion --benchmark_out=radiation.json --benchmark_out_format=json
//   --nkit_sizes=256,512        cells per side (default 256,512)
//   --nkit_start_time=0.02 --nkit_end_time=0.3
//   --nkit_reference_steps=480  fixed steps of the reference run
//   --nkit_cpu_cap=1800         CPU seconds per run before it is stopped (reached = 0)
//   --nkit_reference_folder=.   where start and reference states are cached (one file each per size)
// Run with OMP_NUM_THREADS=1. Timings on a shared machine are rough; compare
// ratios within one run.
#include <benchmark/benchmark.h>
#include <mpi.h>

#include <chrono>
#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <ctime>
#include <fstream>
#include <functional>
#include <map>
#include <nkit/preconditioners/field_split.hpp>
#include <nkit/preconditioners/hypre_algebraic_multigrid.hpp>
#include <nkit/time/implicit_time_stepper.hpp>
#include <sstream>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "problems/radiation/gray_radiation_diffusion_2d.hpp"
#include "problems/radiation/operator_split_loop_2d.hpp"

namespace {

using nkit_problems::gray_radiation_diffusion_2d;

std::vector<int> sizes{256, 512};
double start_time = 0.02;
double end_time = 0.3;
int reference_steps = 480;
double cpu_cap_seconds = 1800.0;
std::string reference_folder = ".";

double cpu_seconds() { return static_cast<double>(std::clock()) / CLOCKS_PER_SEC; }

/// What one run reports.
struct run_result {
  Eigen::VectorXd state;
  std::int64_t steps = 0, newton_steps = 0, linear_iterations = 0, passes = 0, preconditioner_setups = 0;
  bool reached = true;
};

/// Coupled BDF2 with fixed steps, the given field split form, BoomerAMG per field.
const Eigen::VectorXd& start_state(int n);

run_result coupled_run(const gray_radiation_diffusion_2d& problem, int steps, nkit::field_split_form form,
                       double cap_seconds, int rebuild_every_steps = 0) {
  nkit::time_stepper_settings settings;
  settings.method = nkit::time_method::bdf;
  settings.step_control.adaptive = false;
  settings.step_control.initial_step = (end_time - start_time) / steps;
  // Stage Newton test only (no error control with fixed steps): estimated stage
  // error <= 0.1 (atol + rtol|u|), far below the time errors measured (>= 1e-4).
  settings.relative_tolerance = 1e-6;
  settings.absolute_tolerance = 1e-9;
  settings.stage.newton.linear.restart_length = 60;
  // The drive starts abruptly on a cold target: give the stage Newton solve the
  // same budget as the split loop's field solves (30 steps) and accept slow
  // contraction there, instead of rejecting the (fixed) step.
  settings.stage.newton.newton_step_budget = 30;
  settings.stage.divergence_contraction = 0.99;
  // 0: the stepper's schedule (time_preconditioner_rebuild_settings defaults).
  settings.preconditioner_rebuild.every_accepted_steps = rebuild_every_steps;
  nkit::field_split_settings split;
  split.form = form;
  nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::field_split_preconditioner> stepper(
      settings, {},
      nkit::field_split_preconditioner(
          problem.field_layout(), split,
          nkit::make_inner_preconditioners(nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF),
                                           nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF))));
  gray_radiation_diffusion_2d copy = problem;
  run_result result;
  result.state = start_state(problem.cells_x());
  const double start = cpu_seconds();
  const nkit::integration_report& report =
      stepper.integrate(copy, result.state, start_time, end_time, [&](const nkit::time_step_record&) {
        return cpu_seconds() - start > cap_seconds ? nkit::monitor_decision::stop_now
                                                   : nkit::monitor_decision::keep_going;
      });
  result.steps = report.accepted_steps;
  result.newton_steps = report.newton_steps;
  result.linear_iterations = report.linear_iterations;
  result.preconditioner_setups = report.preconditioner_setups;
  result.reached = report.reached_end();
  return result;
}

/// The split loop, fixed steps, BoomerAMG per field solve.
run_result split_run(const gray_radiation_diffusion_2d& problem, int steps, int maximum_passes) {
  nkit_problems::operator_split_settings split;
  split.maximum_passes = maximum_passes;
  split.pass_tolerance = 1e-6;
  nkit::newton_settings newton;
  newton.relative_tolerance = 1e-6;  // of the field residual at the start of the step: far below the time error
  newton.absolute_tolerance = 1e-12;
  newton.newton_step_budget = 30;
  newton.linear.restart_length = 60;
  nkit_problems::gray_radiation_operator_split_2d<nkit::algebraic_multigrid_preconditioner> loop(
      problem, split, newton, nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF),
      nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF));
  run_result result;
  result.state = start_state(problem.cells_x());
  const double dt = (end_time - start_time) / steps, start = cpu_seconds();
  for (int n = 0; n < steps; ++n) {
    if (cpu_seconds() - start > cpu_cap_seconds) {
      result.reached = false;
      break;
    }
    const auto report = loop.step(result.state, dt);
    ++result.steps;
    result.newton_steps += report.newton_steps;
    result.linear_iterations += report.linear_iterations;
    result.passes += report.passes;
    result.preconditioner_setups += report.preconditioner_setups;
    if (!report.converged) {
      result.reached = false;
      break;
    }
  }
  return result;
}

/// One configuration of the comparison: a name and how to run it with a given step count.
struct radiation_configuration {
  std::string name;
  std::vector<int> step_ladder;  ///< step counts to the final time (the table interpolates between them)
  std::function<run_result(const gray_radiation_diffusion_2d&, int)> run;
};

/// The configurations compared. To add one (say a physics-based
/// preconditioner for the coupled solve), append an entry: a name, the step
/// counts, and a function that runs the problem with a given step count.
std::vector<radiation_configuration> configurations() {
  return {
      {"split_lagged",
       {120, 240, 480, 960},
       [](const gray_radiation_diffusion_2d& p, int n) { return split_run(p, n, 1); }},
      {"split_iterated", {120, 240}, [](const gray_radiation_diffusion_2d& p, int n) { return split_run(p, n, 100); }},
      {"coupled_block_diagonal",
       {60, 120, 240},
       [](const gray_radiation_diffusion_2d& p, int n) {
         return coupled_run(p, n, nkit::field_split_form::block_diagonal, cpu_cap_seconds);
       }},
      {"coupled_block_gauss_seidel",
       {60, 120, 240},
       [](const gray_radiation_diffusion_2d& p, int n) {
         return coupled_run(p, n, nkit::field_split_form::block_lower_triangular, cpu_cap_seconds);
       }},
      // The same two, with the AMG hierarchies rebuilt at every accepted step (the
      // temperature-dependent opacities change the field blocks from step to step).
      {"coupled_block_diagonal_rebuilt_every_step",
       {60, 120, 240},
       [](const gray_radiation_diffusion_2d& p, int n) {
         return coupled_run(p, n, nkit::field_split_form::block_diagonal, cpu_cap_seconds, 1);
       }},
      // 96 and 192 steps: a fifth of the lagged loop's 480- and 960-step Δt, the step ratio the
      // comparison asks about, measured rather than interpolated.
      {"coupled_block_gauss_seidel_rebuilt_every_step",
       {60, 96, 120, 192, 240},
       [](const gray_radiation_diffusion_2d& p, int n) {
         return coupled_run(p, n, nkit::field_split_form::block_lower_triangular, cpu_cap_seconds, 1);
       }},
  };
}

/// A state read from `file` when it holds one of the right size, else made by
/// `make` and written there; kept in `cache` by n.
template <class Make>
const Eigen::VectorXd& cached_state(std::map<int, Eigen::VectorXd>& cache, int n, const std::string& file, Make make) {
  const auto found = cache.find(n);
  if (found != cache.end()) return found->second;
  const gray_radiation_diffusion_2d problem(n, n);
  Eigen::VectorXd state(problem.unknowns());
  std::ifstream in(reference_folder + "/" + file, std::ios::binary);
  if (in &&
      in.read(reinterpret_cast<char*>(state.data()), static_cast<std::streamsize>(state.size() * sizeof(double)))) {
    return cache.emplace(n, state).first->second;
  }
  state = make(problem);
  std::ofstream out(reference_folder + "/" + file, std::ios::binary);
  out.write(reinterpret_cast<const char*>(state.data()), static_cast<std::streamsize>(state.size() * sizeof(double)));
  return cache.emplace(n, state).first->second;
}

/// The common start of every run: the state at start_time from the cold start,
/// by nkit's adaptive TR-BDF2 (rtol 1e-7, the same field split). Every
/// configuration then runs with fixed steps from it: from the cold start the
/// abrupt drive needs steps far shorter than the rest of the run (the coupled
/// Newton solve diverges with steps of 0.005 there; measured at 64²).
const Eigen::VectorXd& start_state(int n) {
  static std::map<int, Eigen::VectorXd> cache;
  std::ostringstream file;
  file << "radiation_start_" << n << "_" << start_time << ".bin";
  return cached_state(cache, n, file.str(), [](const gray_radiation_diffusion_2d& problem) {
    nkit::time_stepper_settings settings;
    settings.method = nkit::time_method::esdirk;
    settings.relative_tolerance = 1e-7;
    settings.absolute_tolerance = 1e-10;
    settings.step_control.initial_step = 1e-7;
    settings.stage.newton.linear.restart_length = 60;
    nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::field_split_preconditioner> stepper(
        settings, {},
        nkit::field_split_preconditioner(
            problem.field_layout(), {},
            nkit::make_inner_preconditioners(nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF),
                                             nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF))));
    gray_radiation_diffusion_2d copy = problem;
    Eigen::VectorXd state = problem.initial_state();
    if (!stepper.integrate(copy, state, 0.0, start_time).reached_end()) {
      throw std::runtime_error("bench_radiation_diffusion: the start-up run did not reach start_time");
    }
    return state;
  });
}

/// The reference state at the final time (coupled BDF2, reference_steps fixed
/// steps from the common start, the preconditioner rebuilt every step), cached
/// like the start.
const Eigen::VectorXd& reference_state(int n) {
  static std::map<int, Eigen::VectorXd> cache;
  std::ostringstream file;
  file << "radiation_reference_" << n << "_" << start_time << "_" << end_time << "_" << reference_steps << ".bin";
  return cached_state(cache, n, file.str(), [](const gray_radiation_diffusion_2d& problem) {
    const run_result reference =
        coupled_run(problem, reference_steps, nkit::field_split_form::block_lower_triangular, 1e300, 1);
    if (!reference.reached) throw std::runtime_error("bench_radiation_diffusion: the reference run failed");
    return reference.state;
  });
}

double final_error(int n, const Eigen::VectorXd& state) {
  const Eigen::VectorXd& reference = reference_state(n);
  double error = 0.0;
  for (int field = 0; field < 2; ++field) {
    double difference = 0.0, largest = 0.0;
    for (Eigen::Index k = field; k < state.size(); k += 2) {
      difference = std::max(difference, std::abs(state(k) - reference(k)));
      largest = std::max(largest, std::abs(reference(k)));
    }
    error = std::max(error, difference / largest);
  }
  return error;
}

void run_configuration(benchmark::State& state, const radiation_configuration& configuration, int steps) {
  const int n = static_cast<int>(state.range(0));
  const gray_radiation_diffusion_2d problem(n, n);
  reference_state(n);
  run_result result;
  double wall = 0.0, cpu = 0.0;
  for (auto _ : state) {
    const auto wall_start = std::chrono::steady_clock::now();
    const double cpu_start = cpu_seconds();
    result = configuration.run(problem, steps);
    cpu = cpu_seconds() - cpu_start;
    wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - wall_start).count();
  }
  state.counters["cells_per_side"] = n;
  state.counters["steps"] = static_cast<double>(result.steps);
  state.counters["step_size"] = (end_time - start_time) / steps;
  state.counters["newton_steps"] = static_cast<double>(result.newton_steps);
  state.counters["linear_iterations"] = static_cast<double>(result.linear_iterations);
  state.counters["gmres_per_newton"] =
      static_cast<double>(result.linear_iterations) / std::max<std::int64_t>(1, result.newton_steps);
  state.counters["passes"] = static_cast<double>(result.passes) / std::max<std::int64_t>(1, result.steps);
  state.counters["preconditioner_setups"] = static_cast<double>(result.preconditioner_setups);
  state.counters["wall_seconds"] = wall;
  state.counters["cpu_seconds"] = cpu;
  state.counters["final_error"] = result.reached ? final_error(n, result.state) : -1.0;
  state.counters["reached"] = result.reached ? 1.0 : 0.0;
}

std::vector<int> parse_list(const char* text) {
  std::vector<int> values;
  std::stringstream stream(text);
  std::string item;
  while (std::getline(stream, item, ',')) values.push_back(std::atoi(item.c_str()));
  return values;
}

}  // namespace

int main(int argc, char** argv) {
  MPI_Init(&argc, &argv);
  int kept = 1;
  for (int k = 1; k < argc; ++k) {
    if (std::strncmp(argv[k], "--nkit_sizes=", 13) == 0) {
      sizes = parse_list(argv[k] + 13);
    } else if (std::strncmp(argv[k], "--nkit_start_time=", 18) == 0) {
      start_time = std::atof(argv[k] + 18);
    } else if (std::strncmp(argv[k], "--nkit_end_time=", 16) == 0) {
      end_time = std::atof(argv[k] + 16);
    } else if (std::strncmp(argv[k], "--nkit_reference_steps=", 23) == 0) {
      reference_steps = std::atoi(argv[k] + 23);
    } else if (std::strncmp(argv[k], "--nkit_cpu_cap=", 15) == 0) {
      cpu_cap_seconds = std::atof(argv[k] + 15);
    } else if (std::strncmp(argv[k], "--nkit_reference_folder=", 24) == 0) {
      reference_folder = argv[k] + 24;
    } else {
      argv[kept++] = argv[k];
    }
  }
  argc = kept;
  static const std::vector<radiation_configuration> all = configurations();
  for (const radiation_configuration& configuration : all) {
    for (const int steps : configuration.step_ladder) {
      auto* registered = benchmark::RegisterBenchmark(
          ("radiation_2d/" + configuration.name + "/steps:" + std::to_string(steps)).c_str(),
          [&configuration, steps](benchmark::State& state) { run_configuration(state, configuration, steps); });
      for (const int n : sizes) registered->Arg(n);
      registered->Unit(benchmark::kSecond)->Iterations(1);
    }
  }
  benchmark::Initialize(&argc, argv);
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  MPI_Finalize();
  return 0;
}
