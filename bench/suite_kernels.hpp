// In-process kernels of the performance suite: the work unit (with its
// fractions of the arithmetic peak and of the triad), the cost of
// the unwritten-entry check, the bandwidth limit, the arithmetic peak, GMRES orthogonalisation bandwidth, Newton–GMRES
// time per unknown on Broyden's tridiagonal system, and the cost of tracing.
#ifndef NKIT_BENCH_SUITE_KERNELS_HPP
#define NKIT_BENCH_SUITE_KERNELS_HPP

#include <benchmark/benchmark.h>

#include <algorithm>
#include <chrono>
#include <map>
#include <nkit/nkit.hpp>
#include <string>
#include <vector>

#include <sys/resource.h>

#if defined(NKIT_USE_OPENMP)
#include <omp.h>
#endif

#include "problems/model_problem/model_problem.hpp"

namespace nkit_bench {

inline void use_threads(int threads) {
#if defined(NKIT_USE_OPENMP)
  omp_set_num_threads(threads);
#else
  static_cast<void>(threads);
#endif
}

/// Bytes per second of the DRAM-sized triad, by thread count (filled by
/// stream_triad at its largest size; read by orthogonalization).
inline std::map<int, double>& triad_bandwidth() {
  static std::map<int, double> value;
  return value;
}
inline constexpr Eigen::Index dram_triad_length = Eigen::Index(1) << 24;  // 3 arrays of 128 MiB: 12× the L3

/// Floating-point operations per second one core reaches on independent
/// multiply–add chains as this build compiles them (filled by
/// arithmetic_peak; read by residual_evaluation).
inline double& arithmetic_peak_flops() {
  static double value = 0.0;
  return value;
}

/// The arithmetic peak as built: 32 independent chains a ← a·m + c (a multiply
/// and an add, 2 flops each) over registers, so neither memory nor latency
/// limits it; the compiler vectorises them with whatever instruction set the
/// build targets (no -march by default: SSE2, two doubles per instruction, no
/// fused multiply–add). One core.
inline void arithmetic_peak(benchmark::State& state) {
  constexpr int chains = 32;
  constexpr long long rounds = 1 << 20;
  alignas(64) double a[chains];
  for (int k = 0; k < chains; ++k) a[k] = 1.0 + 1e-3 * k;
  double m = 0.999999, c = 1e-7;
  benchmark::DoNotOptimize(m);
  benchmark::DoNotOptimize(c);
  double seconds = 0.0;
  for (auto _ : state) {
    const auto start = std::chrono::steady_clock::now();
    for (long long round = 0; round < rounds; ++round) {
      for (int k = 0; k < chains; ++k) a[k] = a[k] * m + c;
    }
    benchmark::DoNotOptimize(a);
    seconds += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  }
  const double flops = 2.0 * chains * static_cast<double>(rounds) * static_cast<double>(state.iterations());
  arithmetic_peak_flops() = flops / seconds;
  state.counters["flops_per_second"] = flops / seconds;
}

/// One residual evaluation of the model problem at n × n (the work unit), with
/// its arithmetic rate (heat_conduction_model_problem::residual_flops) as a
/// fraction of the arithmetic peak, and its least memory traffic (t read and r
/// written once: 16 bytes per cell, counted as the triad counts) as a fraction
/// of the one-thread triad from memory, when those ran earlier in the same run.
inline void residual_evaluation(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  const nkit_problems::heat_conduction_model_problem problem(n);
  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), 0.3), r(problem.unknowns());
  double seconds = 0.0;
  for (auto _ : state) {
    const auto start = std::chrono::steady_clock::now();
    problem(t, r);
    benchmark::DoNotOptimize(r.data());
    seconds += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  }
  const auto cells = static_cast<double>(problem.unknowns());
  const double per_evaluation = seconds / static_cast<double>(state.iterations());
  const double flop_rate = problem.residual_flops() / per_evaluation;
  const double byte_rate = 16.0 * cells / per_evaluation;
  state.counters["unknowns"] = cells;
  state.counters["nanoseconds_per_cell"] = 1e9 * per_evaluation / cells;
  state.counters["flops_per_cell"] = problem.residual_flops() / cells;
  state.counters["flops_per_second"] = flop_rate;
  state.counters["least_bytes_per_second"] = byte_rate;
  if (arithmetic_peak_flops() > 0.0)
    state.counters["fraction_of_arithmetic_peak"] = flop_rate / arithmetic_peak_flops();
  if (triad_bandwidth().count(1) != 0) state.counters["least_fraction_of_triad"] = byte_rate / triad_bandwidth()[1];
}

/// The cost of the unwritten-entry check (newton_settings::
/// check_unwritten_residual_entries): fill r with the marker before a
/// residual call and scan it afterwards. Both are timed in the same loop as
/// the residual itself, so `check_work_units` (check time / residual time)
/// compares like for like in one run.
inline void unwritten_entry_check(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  const nkit_problems::heat_conduction_model_problem problem(n);
  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), 0.3), r(problem.unknowns());
  const nkit::eigen_vector_space<double> space;
  double residual_seconds = 0.0, check_seconds = 0.0;
  std::int64_t unwritten = 0;
  for (auto _ : state) {
    const auto start = std::chrono::steady_clock::now();
    space.fill(nkit::unwritten_entry_marker(), r);
    const auto filled = std::chrono::steady_clock::now();
    problem(t, r);
    benchmark::DoNotOptimize(r.data());
    const auto evaluated = std::chrono::steady_clock::now();
    unwritten += nkit::find_unwritten_entries(r).count;
    const auto scanned = std::chrono::steady_clock::now();
    check_seconds += std::chrono::duration<double>(filled - start).count() +
                     std::chrono::duration<double>(scanned - evaluated).count();
    residual_seconds += std::chrono::duration<double>(evaluated - filled).count();
  }
  if (unwritten != 0) state.SkipWithError("the model residual left entries unwritten");
  state.counters["unknowns"] = static_cast<double>(problem.unknowns());
  state.counters["check_work_units"] = residual_seconds > 0.0 ? check_seconds / residual_seconds : 0.0;
}

/// STREAM-style triad a = b + s c (McCalpin's STREAM benchmark counts 24
/// bytes per entry: two loads and a store; with write-allocate the memory
/// traffic is 32, so the true bandwidth is up to 4/3 of the reported rate,
/// and fractions of the triad read up to 4/3 high), plain loop, OpenMP
/// static schedule in OpenMP builds. Rates use wall time (as the orthogonalisation
/// rate does), so the two compare like for like.
inline void stream_triad(benchmark::State& state) {
  const Eigen::Index length = state.range(0);
  const int threads = static_cast<int>(state.range(1));
  use_threads(threads);
  Eigen::VectorXd a = Eigen::VectorXd::Zero(length), b = Eigen::VectorXd::Constant(length, 1.0),
                  c = Eigen::VectorXd::Constant(length, 2.0);
  const double scalar = 3.0;
  double* pa = a.data();
  const double* pb = b.data();
  const double* pc = c.data();
  double seconds = 0.0;
  for (auto _ : state) {
    const auto start = std::chrono::steady_clock::now();
#if defined(NKIT_USE_OPENMP)
#pragma omp parallel for schedule(static)
#endif
    for (Eigen::Index i = 0; i < length; ++i) pa[i] = pb[i] + scalar * pc[i];
    benchmark::ClobberMemory();
    seconds += std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  }
  const double bytes = 24.0 * static_cast<double>(length);
  state.counters["bytes_per_second"] = benchmark::Counter(bytes, benchmark::Counter::kIsIterationInvariantRate);
  if (length == dram_triad_length && seconds > 0.0) {
    triad_bandwidth()[threads] = bytes * static_cast<double>(state.iterations()) / seconds;
  }
}

/// y = A x for the 2D 5-point Laplacian (Dirichlet), n × n.
struct five_point_operator {
  int n;
  void apply(const Eigen::VectorXd& x, Eigen::VectorXd& y) const {
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const Eigen::Index p = i + static_cast<Eigen::Index>(n) * j;
        double value = 4.0 * x(p);
        if (i > 0) value -= x(p - 1);
        if (i + 1 < n) value -= x(p + 1);
        if (j > 0) value -= x(p - n);
        if (j + 1 < n) value -= x(p + n);
        y(p) = value;
      }
    }
  }
};

/// 30 Arnoldi steps of GMRES(30) on the 5-point operator; the bandwidth of
/// its Gram–Schmidt passes. Byte count (reorthogonalisation off, so exact):
/// step j (0-based) does j+1 dots (2 loads per entry) and j+1 updates
/// w += a v (2 loads, 1 store) and one norm (1 load): (40 (j+1) + 8) N bytes;
/// 30 steps: (40·465 + 240) N = 18840 N bytes. With reorthogonalisation when
/// needed (the default) the work is at least that; its rate is reported
/// against the same nominal count, so it reads as a lower bound.
/// The nominal count assumes every operand comes from memory. While the
/// working vector w (8 N bytes) fits in the last-level cache (32 MiB here:
/// N ≤ 4.2M, i.e. n < 2048) only the basis must stream from DRAM: each
/// v_i is read twice per step (dot, update), 16 (j+1) N bytes, 16·465 N =
/// 7440 N per 30 steps. "basis_fraction_of_triad" uses that smaller count: the
/// fraction of the triad reached by the traffic that cannot stay in cache.
inline void orthogonalization(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  const int threads = static_cast<int>(state.range(1));
  const bool default_policy = state.range(2) != 0;
  use_threads(threads);
  const Eigen::Index length = static_cast<Eigen::Index>(n) * n;
  nkit::gmres_settings settings;
  settings.restart_length = 30;
  settings.maximum_iterations = 30;
  settings.reorthogonalization =
      default_policy ? nkit::reorthogonalization_policy::when_needed : nkit::reorthogonalization_policy::never;
  nkit::gmres_solver<> gmres(settings);
  five_point_operator op{n};
  nkit::identity_preconditioner identity;
  const Eigen::VectorXd b = Eigen::VectorXd::Random(length);
  Eigen::VectorXd x = Eigen::VectorXd::Zero(length);
  double seconds = 0.0;
  std::int64_t steps = 0;
  gmres.solve(op, identity, b, x, 0.0, nkit::initial_guess::zero);  // allocate and touch the workspace
  for (auto _ : state) {
    const nkit::linear_solve_result result = gmres.solve(op, identity, b, x, 0.0, nkit::initial_guess::zero);
    seconds += result.orthogonalization_seconds;
    steps += result.iterations;
  }
  const double bytes_per_solve = 18840.0 * static_cast<double>(length);
  const double solves = static_cast<double>(state.iterations());
  const double rate = bytes_per_solve * solves / seconds;
  state.counters["orthogonalization_bytes_per_second"] = rate;
  const double basis_rate = 7440.0 * static_cast<double>(length) * solves / seconds;
  state.counters["basis_bytes_per_second"] = basis_rate;
  state.counters["seconds_per_arnoldi_step"] = seconds / static_cast<double>(steps);
  state.counters["unknowns"] = static_cast<double>(length);
  if (const auto triad = triad_bandwidth().find(threads); triad != triad_bandwidth().end()) {
    state.counters["fraction_of_triad"] = rate / triad->second;
    state.counters["basis_fraction_of_triad"] = basis_rate / triad->second;
  }
}

/// Broyden's tridiagonal function (J.J. Moré, B.S. Garbow & K.E. Hillstrom,
/// "Testing unconstrained optimization software", ACM TOMS 7 (1981) 17–41,
/// problem 30): f_i = (3 − 2x_i) x_i − x_{i−1} − 2 x_{i+1} + 1, x_0 = x_{n+1}
/// = 0, standard start x = −1.
struct broyden_tridiagonal {
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& f) const {
    const Eigen::Index n = x.size();
    for (Eigen::Index i = 0; i < n; ++i) {
      const double left = i > 0 ? x(i - 1) : 0.0;
      const double right = i + 1 < n ? x(i + 1) : 0.0;
      f(i) = (3.0 - 2.0 * x(i)) * x(i) - left - 2.0 * right + 1.0;
    }
  }
};

/// Minor page faults of this process so far (getrusage).
inline long minor_page_faults() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return usage.ru_minflt;
}

/// Newton–GMRES (no preconditioner: the Jacobian is diagonally dominant near
/// the root, so the iteration counts do not grow with N) at N unknowns.
inline void broyden_tridiagonal_solve(benchmark::State& state) {
  const Eigen::Index length = state.range(0);
  nkit::newton_krylov_solver<> solver;
  Eigen::VectorXd x(length);
  nkit::solve_report report;
  // One untimed solve first: it allocates and first-touches the workspace
  // (page faults cost about as much as the solve at 4M unknowns, and the
  // benchmark restarts with a fresh solver for each repetition count). The
  // timed solves are the repeat solves of a time-stepping or continuation
  // code, which allocate nothing.
  x.setConstant(-1.0);
  solver.solve(broyden_tridiagonal{}, x);
  const long faults_before = minor_page_faults();
  for (auto _ : state) {
    x.setConstant(-1.0);
    report = solver.solve(broyden_tridiagonal{}, x);
    if (!report.converged()) state.SkipWithError("Broyden tridiagonal did not converge");
  }
  // Page faults inside the timed solves (0 expected: the workspace is reused).
  state.counters["page_faults_per_solve"] =
      static_cast<double>(minor_page_faults() - faults_before) / static_cast<double>(state.iterations());
  state.SetComplexityN(length);
  state.counters["seconds_per_unknown"] = benchmark::Counter(
      static_cast<double>(length), benchmark::Counter::kIsIterationInvariantRate | benchmark::Counter::kInvert);
  state.counters["newton_steps"] = report.newton_steps;
  state.counters["linear_iterations"] = static_cast<double>(report.linear_iterations);
  state.counters["workspace_bytes"] = static_cast<double>(report.workspace_bytes);
}

/// The same model-problem solve (48 × 48, no preconditioner) by three
/// solvers: one that never had a recorder, one recording, one whose recorder
/// was attached and then detached. The three run in turn within each
/// iteration, so that a busy machine slows them alike; the counters are the
/// median seconds per solve of each and the ratios to the first. Tracing off
/// must cost nothing measurable: detached_over_none ≈ 1 within noise.
inline void trace_overhead(benchmark::State& state) {
  const nkit_problems::heat_conduction_model_problem problem(48);
  nkit::newton_krylov_solver<> never, recording, detached;
  nkit::trace_recorder recorder(1u << 20);
  recording.record_trace(&recorder);
  detached.record_trace(&recorder);
  detached.record_trace(nullptr);
  Eigen::VectorXd t(problem.unknowns());
  std::vector<double> seconds[3];
  std::size_t events = 0;
  for (auto _ : state) {
    nkit::newton_krylov_solver<>* solvers[3] = {&never, &recording, &detached};
    for (int mode = 0; mode < 3; ++mode) {
      t.setZero();
      recorder.clear();
      const auto report = solvers[mode]->solve(problem, t);
      seconds[mode].push_back(report.wall_seconds);
      if (mode == 1) events = recorder.events().size();
    }
  }
  const auto median = [](std::vector<double> values) {
    std::nth_element(values.begin(), values.begin() + values.size() / 2, values.end());
    return values[values.size() / 2];
  };
  const double none = median(seconds[0]);
  state.counters["none_seconds"] = none;
  state.counters["recording_seconds"] = median(seconds[1]);
  state.counters["detached_seconds"] = median(seconds[2]);
  state.counters["recording_over_none"] = median(seconds[1]) / none;
  state.counters["detached_over_none"] = median(seconds[2]) / none;
  state.counters["events_per_solve"] = static_cast<double>(events);
}

inline void register_kernel_benchmarks(const std::vector<int>& sizes, const std::vector<int>& threads) {
  // The triad and the arithmetic peak first: the residual evaluation reports fractions of both.
  for (const int t : threads) {
    for (const Eigen::Index length :
         {Eigen::Index(256 * 256), Eigen::Index(512 * 512), Eigen::Index(1024 * 1024), dram_triad_length}) {
      benchmark::RegisterBenchmark("stream_triad", stream_triad)
          ->Args({length, t})
          ->ArgNames({"length", "threads"})
          ->UseRealTime()
          ->Unit(benchmark::kMicrosecond);
    }
  }
  benchmark::RegisterBenchmark("arithmetic_peak", arithmetic_peak)->Unit(benchmark::kMillisecond);
  for (const int n : sizes) {
    benchmark::RegisterBenchmark("residual_evaluation", residual_evaluation)->Arg(n)->Unit(benchmark::kMillisecond);
    benchmark::RegisterBenchmark("unwritten_entry_check", unwritten_entry_check)->Arg(n)->Unit(benchmark::kMillisecond);
  }
  for (const int t : threads) {
    for (const int n : {256, 512, 1024, 2048}) {  // 2048: w (32 MiB) no longer fits in the L3
      for (const int policy : {0, 1}) {
        benchmark::RegisterBenchmark("orthogonalization", orthogonalization)
            ->Args({n, t, policy})
            ->ArgNames({"n", "threads", "default_reorthogonalization"})
            ->Unit(benchmark::kMillisecond);
      }
    }
  }
  // Workspace ≈ 41 vectors × 8 bytes = 328 bytes per unknown: up to ~1e5
  // unknowns it fits in the 32 MiB L3, beyond it lives in DRAM. One
  // complexity fit per side of that line.
  benchmark::RegisterBenchmark("broyden_tridiagonal_in_cache", broyden_tridiagonal_solve)
      ->Arg(10000)
      ->Arg(20000)
      ->Arg(40000)
      ->Arg(80000)
      ->Complexity(benchmark::oN)
      ->Unit(benchmark::kMillisecond);
  benchmark::RegisterBenchmark("broyden_tridiagonal_in_memory", broyden_tridiagonal_solve)
      ->Arg(250000)
      ->Arg(500000)
      ->Arg(1000000)
      ->Arg(2000000)
      ->Arg(4000000)
      ->Complexity(benchmark::oN)
      ->Unit(benchmark::kMillisecond);
  // A doubling series across both: how the time per unknown grows as fewer of
  // the Krylov vectors fit in the L3 (one vector is 8N bytes; docs/performance).
  benchmark::RegisterBenchmark("broyden_tridiagonal_doubling", broyden_tridiagonal_solve)
      ->Arg(100000)
      ->Arg(200000)
      ->Arg(400000)
      ->Arg(800000)
      ->Arg(1600000)
      ->Arg(3200000)
      ->Arg(6400000)
      ->Unit(benchmark::kMillisecond);
  benchmark::RegisterBenchmark("trace_overhead", trace_overhead)->MinTime(3.0)->Unit(benchmark::kMillisecond);
}

}  // namespace nkit_bench

#endif  // NKIT_BENCH_SUITE_KERNELS_HPP
