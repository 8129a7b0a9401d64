// Side-by-side cost of the example solvers, one run per configuration:
//  * baseplate flagship (problems/heat/baseplate.hpp, invented data) at 256² and 512²
//    cells: Newton–GMRES with the user-supplied frozen-conduction LDLᵀ
//    preconditioner, the Picard loop it replaces, and exact Newton (nkit's
//    sparse_direct, SparseLU of the Jacobian every step). nkit's ILU(0) and
//    MILU are left out: with the demo's settings they do not converge on this
//    problem (see the comment at the default in examples/baseplate/main.cpp);
//    the demo runs them with --preconditioner=ilu_zero / milu;
//  * lid-driven cavity at Re = 1000 (continuation in Re) on 65² and 129²
//    nodes: Newton–GMRES with nkit's incomplete_lut and sparse_direct
//    preconditioners on the assembled Jacobian, and the Picard (Oseen) loop,
//    capped at cavity_picard_cap iterations.
// Counters: outer iterations, GMRES iterations, residual evaluations,
// factorizations, converged (1/0) and peak resident-memory growth (MiB).
//   bench_examples --benchmark_out=examples.json --benchmark_out_format=json
// Timings taken on a shared machine are rough; compare ratios within one run.
#include <benchmark/benchmark.h>

#include <nkit/preconditioners/incomplete_lut.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <string>

#include "problems/baselines/process_resources.hpp"
#include "problems/flow/cavity_solve.hpp"
#include "problems/heat/baseplate.hpp"
#include "problems/heat/baseplate_solvers.hpp"

namespace {

constexpr int cavity_picard_cap = 60;

struct measured {
  double outer = 0, linear = 0, evaluations = 0, factorizations = 0, converged = 0, peak_mib = 0;
};

void publish(benchmark::State& state, const measured& m) {
  state.counters["outer_iterations"] = m.outer;
  state.counters["linear_iterations"] = m.linear;
  state.counters["residual_evaluations"] = m.evaluations;
  state.counters["factorizations"] = m.factorizations;
  state.counters["converged"] = m.converged;
  state.counters["peak_memory_mib"] = m.peak_mib;
}

template <class Run>
measured with_memory(Run&& run) {
  nkit_problems::reset_peak_memory();
  const double before = nkit_problems::resident_memory_bytes();
  measured m = run();
  m.peak_mib = nkit_problems::mebibytes(nkit_problems::peak_memory_bytes() - before);
  return m;
}

nkit::newton_settings baseplate_settings() {
  nkit::newton_settings settings;  // as the demo's defaults
  settings.linear.restart_length = 40;
  settings.linear.maximum_iterations = 2000;
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 100;
  settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 15;
  return settings;
}

/// Newton–GMRES on the baseplate with the demo's --preconditioner choice;
/// exact Newton (sparse_direct) refactorises every step.
void baseplate_newton(benchmark::State& state, const std::string& preconditioner) {
  nkit_problems::baseplate_conduction problem(static_cast<int>(state.range(0)), static_cast<int>(state.range(0)));
  nkit::newton_settings settings = baseplate_settings();
  if (preconditioner == "sparse_direct") settings.preconditioner_rebuild.rebuild_every_newton_steps = 1;
  measured m;
  for (auto _ : state) {
    m = with_memory([&] {
      Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), problem.design().coolant_temperature);
      const auto report = nkit_problems::solve_by_newton_gmres(problem, t, preconditioner, settings);
      return measured{double(report.newton_steps),         double(report.linear_iterations),
                      double(report.residual_evaluations), double(report.preconditioner_setups),
                      report.converged() ? 1.0 : 0.0,      0.0};
    });
  }
  publish(state, m);
}

void baseplate_picard(benchmark::State& state) {
  nkit_problems::baseplate_conduction problem(static_cast<int>(state.range(0)), static_cast<int>(state.range(0)));
  measured m;
  for (auto _ : state) {
    m = with_memory([&] {
      Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), problem.design().coolant_temperature);
      const auto report = nkit_problems::solve_by_picard_iteration(problem, t, 1e-8, 200);
      return measured{double(report.iterations),           0.0,
                      double(report.residual_evaluations), double(report.factorizations),
                      report.converged ? 1.0 : 0.0,        0.0};
    });
  }
  publish(state, m);
}

template <class Preconditioner>
void cavity_newton(benchmark::State& state) {
  const int intervals = static_cast<int>(state.range(0));
  measured m;
  for (auto _ : state) {
    m = with_memory([&] {
      const auto solution = nkit_problems::solve_cavity<Preconditioner>(intervals, 1000.0);
      return measured{double(solution.newton_steps),         double(solution.linear_iterations),
                      double(solution.residual_evaluations), double(solution.preconditioner_setups),
                      solution.converged ? 1.0 : 0.0,        0.0};
    });
  }
  publish(state, m);
}

void cavity_picard(benchmark::State& state) {
  const int intervals = static_cast<int>(state.range(0));
  measured m;
  for (auto _ : state) {
    m = with_memory([&] {
      const auto result = nkit_problems::solve_cavity_by_picard(intervals, 1000.0, 1e-10, cavity_picard_cap);
      return measured{double(result.iterations),           0.0,
                      double(result.residual_evaluations), double(result.factorizations),
                      result.converged ? 1.0 : 0.0,        0.0};
    });
  }
  publish(state, m);
}

}  // namespace

BENCHMARK_CAPTURE(baseplate_newton, frozen_ldlt, std::string("frozen_ldlt"))
    ->Arg(256)
    ->Arg(512)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
BENCHMARK(baseplate_picard)->Arg(256)->Arg(512)->Unit(benchmark::kSecond)->Iterations(1);
BENCHMARK_CAPTURE(baseplate_newton, exact_newton_sparse_direct, std::string("sparse_direct"))
    ->Arg(256)
    ->Arg(512)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
BENCHMARK_TEMPLATE(cavity_newton, nkit::incomplete_lut_preconditioner)
    ->Arg(64)
    ->Arg(128)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
BENCHMARK_TEMPLATE(cavity_newton, nkit::sparse_direct_preconditioner)
    ->Arg(64)
    ->Arg(128)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
BENCHMARK(cavity_picard)->Arg(64)->Arg(128)->Unit(benchmark::kSecond)->Iterations(1);

BENCHMARK_MAIN();
