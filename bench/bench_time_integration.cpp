// Transient 2-D nonlinear conduction, side by side in one run: the model
// problem of the performance suite (−∇·(k∇T) = q, k = 1 + T², q = 10, T = 0 on
// the walls, finite volumes on n×n cells; examples/model_problem) with a time
// derivative: h² dT/dt = −R(T) (cell area h² as a diagonal mass), T(0) = 0,
// over the fixed horizon t ∈ [0, 0.05] (about one diffusion time 1/(2π²)).
// Every configuration aims at the same accuracy of the final field:
// max|T − T_ref| <= 1e-3 · max|T_ref| with T_ref from nkit TR-BDF2 at rtol
// 1e-8 on the same grid; the achieved error is a counter (final_error), so
// the table shows what each one actually reached.
//   * nkit adaptive BDF2 and TR-BDF2, ILU(0) of the stage Jacobian, lagged
//     (rebuilt only when γΔt changes by 3×, on slow Newton convergence or
//     after a failed stage);
//   * backward Euler with a fixed step and a Picard loop per step (frozen
//     k(T), sparse LDLᵀ of the SPD frozen matrix each iteration): the
//     hand-rolled in-house approach, with the step count that reaches the
//     accuracy (calibrated at n = 32 and checked by final_error);
//   * Boost.Odeint runge_kutta_dopri5, adaptive (explicit): stability-bound;
//     capped at 90 s of CPU time and projected (time × horizon / time reached);
//   * Boost.Odeint rosenbrock4 (implicit, dense Jacobian and LU) at n = 32 only.
//   * the nkit steppers also with hypre BoomerAMG (lagged) where MPI and hypre
//     are found (NKIT_BENCH_HAS_HYPRE).
// All times are process CPU time (the machine is shared; one thread): Google
// Benchmark's cpu_time column and the counter cpu_seconds.
// Counters: steps, rejected, newton_steps, linear_iterations,
// preconditioner_setups, setups_per_step, work_units (CPU time / CPU time of
// one residual evaluation at that n), final_error, reached (1 = reached the
// horizon, 0 = capped at 90 s CPU and projected: projected_seconds).
//   bench_time_integration --benchmark_out=time.json --benchmark_out_format=json
//   --nkit_cpu_cap=<seconds>   CPU cap of the capped configurations (default 90)
// Timings on a shared machine are rough; compare ratios within one run.
#include <benchmark/benchmark.h>

#include <Eigen/SparseCholesky>
#include <boost/numeric/odeint.hpp>
#include <boost/numeric/odeint/external/eigen/eigen.hpp>
#include <chrono>
#include <cstdlib>
#include <cstring>
#include <ctime>
#include <map>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/time/implicit_time_stepper.hpp>
#include <vector>

#include "problems/model_problem/model_problem.hpp"
#if NKIT_BENCH_HAS_HYPRE
#include <mpi.h>

#include <nkit/preconditioners/hypre_algebraic_multigrid.hpp>
#endif

namespace {

namespace odeint = boost::numeric::odeint;
using model = nkit_problems::heat_conduction_model_problem;

constexpr double horizon = 0.05;
constexpr double target_error = 1e-3;
double cpu_cap_seconds = 90.0;  // --nkit_cpu_cap=<seconds> changes it

/// Process CPU time: the machine is shared, so every figure here (times, work
/// units, caps) is CPU time of this single-threaded process, not wall time.
double cpu_seconds() { return static_cast<double>(std::clock()) / CLOCKS_PER_SEC; }
double seconds_since(double start) { return cpu_seconds() - start; }

/// CPU time of one residual evaluation at this size (the work unit): the mean
/// over repeated evaluations for at least 0.2 s.
double residual_seconds(const model& problem) {
  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), 0.3), r(problem.unknowns());
  const double start = cpu_seconds();
  int count = 0;
  do {
    problem(t, r);
    ++count;
  } while (seconds_since(start) < 0.2);
  return seconds_since(start) / count;
}

nkit::mass_matrix<Eigen::VectorXd> cell_area_mass(const model& problem) {
  const double h = problem.cell_size();
  return nkit::mass_matrix<Eigen::VectorXd>::diagonal(Eigen::VectorXd::Constant(problem.unknowns(), h * h));
}

using ilu_stepper = nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner>;

nkit::time_stepper_settings nkit_settings(nkit::time_method method, double relative_tolerance) {
  nkit::time_stepper_settings s;
  s.method = method;
  s.relative_tolerance = relative_tolerance;
  s.absolute_tolerance = 1e-3 * relative_tolerance;  // T is O(0.1–0.6)
  s.step_control.initial_step = 1e-5;
  return s;
}

/// T(horizon) by nkit TR-BDF2 at rtol 1e-8 (cached per n).
const Eigen::VectorXd& reference_field(int n) {
  static std::map<int, Eigen::VectorXd> cache;
  auto found = cache.find(n);
  if (found != cache.end()) return found->second;
  model problem(n);
  auto form = nkit::make_residual_form(problem, nkit::no_source{}, cell_area_mass(problem));
  ilu_stepper stepper(nkit_settings(nkit::time_method::esdirk, 1e-8));
  Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
  stepper.integrate(form, t, 0.0, horizon);
  return cache.emplace(n, t).first->second;
}

double final_error(int n, const Eigen::VectorXd& t) {
  const Eigen::VectorXd& reference = reference_field(n);
  return (t - reference).lpNorm<Eigen::Infinity>() / reference.lpNorm<Eigen::Infinity>();
}

template <class Preconditioner, class MakePreconditioner>
void nkit_adaptive_with(benchmark::State& state, nkit::time_method method, double relative_tolerance,
                        MakePreconditioner make_preconditioner) {
  const int n = static_cast<int>(state.range(0));
  model problem(n);
  reference_field(n);
  const double unit = residual_seconds(problem);
  Eigen::VectorXd t;
  nkit::integration_report report;
  double cpu = 0.0;
  for (auto _ : state) {
    auto form = nkit::make_residual_form(problem, nkit::no_source{}, cell_area_mass(problem));
    nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, Preconditioner> stepper(
        nkit_settings(method, relative_tolerance), nkit::eigen_vector_space<double>{}, make_preconditioner());
    t = Eigen::VectorXd::Zero(problem.unknowns());
    const double start = cpu_seconds();
    report = stepper.integrate(form, t, 0.0, horizon);
    cpu = seconds_since(start);
  }
  state.counters["steps"] = static_cast<double>(report.accepted_steps);
  state.counters["rejected"] = static_cast<double>(report.rejected_steps());
  state.counters["newton_steps"] = static_cast<double>(report.newton_steps);
  state.counters["linear_iterations"] = static_cast<double>(report.linear_iterations);
  state.counters["preconditioner_setups"] = static_cast<double>(report.preconditioner_setups);
  state.counters["setups_per_step"] =
      static_cast<double>(report.preconditioner_setups) / std::max<std::int64_t>(1, report.accepted_steps);
  state.counters["cpu_seconds"] = cpu;
  state.counters["work_units"] = cpu / unit;
  state.counters["work_units_per_step"] = cpu / unit / std::max<std::int64_t>(1, report.accepted_steps);
  state.counters["final_error"] = final_error(n, t);
  state.counters["reached"] = report.reached_end() ? 1.0 : 0.0;
}

void nkit_adaptive(benchmark::State& state, nkit::time_method method, double relative_tolerance) {
  nkit_adaptive_with<nkit::ilu_zero_preconditioner>(state, method, relative_tolerance,
                                                    [] { return nkit::ilu_zero_preconditioner{}; });
}

#if NKIT_BENCH_HAS_HYPRE
/// BoomerAMG on one rank (hypre's defaults, one V-cycle per application), lagged like ILU(0).
void nkit_adaptive_multigrid(benchmark::State& state, nkit::time_method method, double relative_tolerance) {
  nkit_adaptive_with<nkit::algebraic_multigrid_preconditioner>(
      state, method, relative_tolerance, [] { return nkit::algebraic_multigrid_preconditioner(MPI_COMM_SELF); });
}
#endif

/// Backward Euler, fixed step, Picard per step:
/// (h²/Δt I + A(T^k)) T^(k+1) = h²/Δt T_n + q h², until ‖T^(k+1) − T^k‖∞ <= 1e-8.
void backward_euler_picard(benchmark::State& state, int steps) {
  const int n = static_cast<int>(state.range(0));
  model problem(n);
  reference_field(n);
  const double unit = residual_seconds(problem);
  const double h = problem.cell_size(), dt = horizon / steps, weight = h * h / dt;
  Eigen::VectorXd t, previous, next, right;
  std::int64_t picard = 0, factorizations = 0, taken = 0;
  double cpu = 0.0;
  bool reached = true;
  for (auto _ : state) {
    t = Eigen::VectorXd::Zero(problem.unknowns());
    Eigen::SparseMatrix<double> matrix;
    std::vector<Eigen::Triplet<double, int>> entries;
    Eigen::SimplicialLDLT<Eigen::SparseMatrix<double>> solver;
    bool analysed = false;
    const double start = cpu_seconds();
    for (taken = 0; taken < steps; ++taken) {
      if (seconds_since(start) > cpu_cap_seconds) {
        reached = false;
        break;
      }
      previous = t;
      for (int k = 0; k < 50; ++k) {
        problem.assemble_frozen_conduction(t, matrix, entries);
        for (int p = 0; p < matrix.rows(); ++p) matrix.coeffRef(p, p) += weight;
        if (!analysed) {
          solver.analyzePattern(matrix);
          analysed = true;
        }
        solver.factorize(matrix);
        ++factorizations;
        right = weight * previous + Eigen::VectorXd::Constant(t.size(), problem.source() * h * h);
        next = solver.solve(right);
        ++picard;
        const double change = (next - t).lpNorm<Eigen::Infinity>();
        t.swap(next);
        if (change <= 1e-8) break;
      }
    }
    cpu = seconds_since(start);
  }
  state.counters["steps"] = static_cast<double>(taken);
  state.counters["picard_iterations"] = static_cast<double>(picard);
  state.counters["cpu_seconds"] = cpu;
  state.counters["factorizations"] = static_cast<double>(factorizations);
  state.counters["work_units"] = cpu / unit;
  state.counters["work_units_per_step"] = cpu / unit / std::max<std::int64_t>(1, taken);
  state.counters["final_error"] = reached ? final_error(n, t) : -1.0;
  state.counters["reached"] = reached ? 1.0 : 0.0;
  state.counters["projected_seconds"] = reached ? cpu : cpu * steps / std::max<std::int64_t>(1, taken);
}

/// dT/dt = −R(T)/h² for odeint.
struct conduction_rate {
  const model* problem;
  std::int64_t* evaluations;
  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& dtdt, double /*time*/) const {
    (*problem)(t, dtdt);
    const double h = problem->cell_size();
    dtdt *= -1.0 / (h * h);
    ++*evaluations;
  }
};

struct cap_reached {
  double time;
};

void explicit_dormand_prince(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  model problem(n);
  reference_field(n);
  const double unit = residual_seconds(problem);
  using dopri5 =
      odeint::runge_kutta_dopri5<Eigen::VectorXd, double, Eigen::VectorXd, double, odeint::vector_space_algebra>;
  Eigen::VectorXd t;
  std::int64_t evaluations = 0;
  std::size_t steps = 0;
  double cpu = 0.0, reached_time = horizon;
  for (auto _ : state) {
    t = Eigen::VectorXd::Zero(problem.unknowns());
    evaluations = 0;
    steps = 0;
    reached_time = horizon;
    const double start = cpu_seconds();
    try {
      // Tolerances 1e-5 meet the accuracy target easily: the steps are bound by stability.
      odeint::integrate_adaptive(odeint::make_controlled(1e-6, 1e-5, dopri5()), conduction_rate{&problem, &evaluations},
                                 t, 0.0, horizon, 1e-7, [&](const Eigen::VectorXd&, double time) {
                                   ++steps;
                                   if (seconds_since(start) > cpu_cap_seconds) throw cap_reached{time};
                                 });
    } catch (const cap_reached& cap) {
      reached_time = cap.time;
    }
    cpu = seconds_since(start);
  }
  const bool reached = reached_time >= horizon;
  state.counters["steps"] = static_cast<double>(steps);
  state.counters["residual_evaluations"] = static_cast<double>(evaluations);
  state.counters["cpu_seconds"] = cpu;
  state.counters["work_units"] = cpu / unit;
  state.counters["final_error"] = reached ? final_error(n, t) : -1.0;
  state.counters["reached"] = reached ? 1.0 : 0.0;
  state.counters["projected_seconds"] = reached ? cpu : cpu * horizon / std::max(reached_time, 1e-300);
}

/// odeint rosenbrock4 with the dense Jacobian −J_R/h² (ublas types, as odeint requires).
void implicit_rosenbrock4(benchmark::State& state) {
  namespace ublas = boost::numeric::ublas;
  const int n = static_cast<int>(state.range(0));
  model problem(n);
  reference_field(n);
  const double unit = residual_seconds(problem);
  const double h = problem.cell_size();
  const Eigen::Index size = problem.unknowns();
  std::int64_t evaluations = 0;
  Eigen::VectorXd work(size), result(size);
  nkit::sparse_matrix jacobian;
  const auto rate = [&](const ublas::vector<double>& x, ublas::vector<double>& dxdt, double) {
    for (Eigen::Index i = 0; i < size; ++i) work(i) = x(i);
    problem(work, result);
    for (Eigen::Index i = 0; i < size; ++i) dxdt(i) = -result(i) / (h * h);
    ++evaluations;
  };
  const auto jacobian_function = [&](const ublas::vector<double>& x, ublas::matrix<double>& j, double,
                                     ublas::vector<double>& dfdt) {
    for (Eigen::Index i = 0; i < size; ++i) work(i) = x(i);
    problem.assemble_jacobian(work, jacobian);
    j.clear();
    for (int row = 0; row < jacobian.outerSize(); ++row) {
      for (nkit::sparse_matrix::InnerIterator e(jacobian, row); e; ++e) j(row, e.col()) = -e.value() / (h * h);
    }
    dfdt.clear();
  };
  ublas::vector<double> x(size);
  std::size_t steps = 0;
  double cpu = 0.0;
  for (auto _ : state) {
    x.clear();
    steps = 0;
    const double start = cpu_seconds();
    steps = odeint::integrate_adaptive(odeint::make_controlled<odeint::rosenbrock4<double>>(1e-6, 1e-4),
                                       std::make_pair(rate, jacobian_function), x, 0.0, horizon, 1e-5);
    cpu = seconds_since(start);
  }
  Eigen::VectorXd t(size);
  for (Eigen::Index i = 0; i < size; ++i) t(i) = x(i);
  state.counters["steps"] = static_cast<double>(steps);
  state.counters["residual_evaluations"] = static_cast<double>(evaluations);
  state.counters["cpu_seconds"] = cpu;
  state.counters["work_units"] = cpu / unit;
  state.counters["final_error"] = final_error(n, t);
  state.counters["reached"] = 1.0;
}

}  // namespace

BENCHMARK_CAPTURE(nkit_adaptive, bdf2_ilu0_lagged, nkit::time_method::bdf, 1e-3)
    ->Arg(32)
    ->Arg(256)
    ->Arg(512)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
BENCHMARK_CAPTURE(nkit_adaptive, tr_bdf2_ilu0_lagged, nkit::time_method::esdirk, 1e-3)
    ->Arg(32)
    ->Arg(256)
    ->Arg(512)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
BENCHMARK_CAPTURE(backward_euler_picard, fixed_steps, 400)
    ->Arg(32)
    ->Arg(256)
    ->Arg(512)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
BENCHMARK(explicit_dormand_prince)->Arg(32)->Arg(256)->Arg(512)->Unit(benchmark::kSecond)->Iterations(1);
BENCHMARK(implicit_rosenbrock4)->Arg(32)->Unit(benchmark::kSecond)->Iterations(1);
#if NKIT_BENCH_HAS_HYPRE
BENCHMARK_CAPTURE(nkit_adaptive_multigrid, bdf2_amg_lagged, nkit::time_method::bdf, 1e-3)
    ->Arg(32)
    ->Arg(256)
    ->Arg(512)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
BENCHMARK_CAPTURE(nkit_adaptive_multigrid, tr_bdf2_amg_lagged, nkit::time_method::esdirk, 1e-3)
    ->Arg(32)
    ->Arg(256)
    ->Arg(512)
    ->Unit(benchmark::kSecond)
    ->Iterations(1);
#endif

int main(int argc, char** argv) {
#if NKIT_BENCH_HAS_HYPRE
  MPI_Init(&argc, &argv);
#endif
  int kept = 1;
  for (int k = 1; k < argc; ++k) {
    if (std::strncmp(argv[k], "--nkit_cpu_cap=", 15) == 0) {
      cpu_cap_seconds = std::atof(argv[k] + 15);
    } else {
      argv[kept++] = argv[k];
    }
  }
  argc = kept;
  benchmark::Initialize(&argc, argv);
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
#if NKIT_BENCH_HAS_HYPRE
  MPI_Finalize();
#endif
  return 0;
}
