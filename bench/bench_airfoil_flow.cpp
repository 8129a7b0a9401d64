// Steady Euler flow around the NACA 0012 at M = 0.5, α = 2°
// (problems/flow/euler_airfoil.hpp, second order: Roe + MUSCL/van Albada) on
// three O-grids, converged from the uniform free stream two ways:
//  * nkit: pseudo-transient Newton–GMRES from CFL 50, ILU(0) of the
//    first-order operator's Jacobian (euler_airfoil_solve.hpp,
//    euler_airfoil_first_order_jacobian.hpp), to ‖R‖ <= 1e-10 ‖R(U0)‖
//    (airfoil_newton_krylov); the same with block ILU(0) of the same matrix,
//    4 × 4 blocks, one per cell (airfoil_newton_krylov_block_ilu, same settings),
//    and that factor lagged: set up again every fifth Newton step only
//    (airfoil_newton_krylov_block_ilu_lagged);
//    the choice of preconditioner matrix measured against the exact one, same
//    settings: block ILU(0) of the second-order residual's own Jacobian (nine
//    cells per row, colored differences; ..._block_ilu_second_order), and
//    sparse LU of either Jacobian (..._sparse_lu, ..._sparse_lu_second_order:
//    what an exact factorisation of each matrix buys);
//  * explicit pseudo-time marching, the way many flow codes converge to a
//    steady state: dU/dτ = −R(U)/Ω with a local time step per cell,
//    Δτ = CFL·Ω / Σ_faces (|q| + c)|S| (common practice; the same spectral
//    radius that weights nkit's pseudo-time term), advanced by Boost.Odeint's
//    classical fourth-order Runge–Kutta method (runge_kutta4). With the local
//    step the system is dU/ds = −R(U)/λ(U) marched with Δs = CFL, λ frozen
//    over each step. CFL 2 by default (--nkit_explicit_cfl; below the stability limit of RK4 on the real
//    axis, about 2.785, and on the imaginary axis, about 2.83, for the
//    conservative four-face spectral-radius sum: common practice). ‖R‖ is
//    checked every 10 steps (those evaluations are counted in the time); the
//    march stops at the same 1e-10 reduction, on divergence, or at a CPU-time
//    cap (--nkit_explicit_cpu_cap=SECONDS, 60 by default), reporting the
//    reduction it reached. Built when Boost (Odeint) is found.
// Counters: newton_steps, gmres_iterations, explicit_steps,
// final_relative_residual (‖R‖/‖R(U0)‖ at the end), work_units (wall time /
// residual_seconds, the median of 21 timed residual evaluations at the free
// stream, measured the same way just before each run), wall_seconds,
// converged (1/0), lift_coefficient (both must agree when both converge);
// for the nkit runs also preconditioner_setup_seconds,
// preconditioner_apply_seconds and jacobian_assembly_seconds (the solve
// report's phase times: the factorisations, the applications inside GMRES,
// the colored-difference assemblies of the Jacobian the preconditioner is
// built from, first or second order).
// --nkit_history_folder=DIR also writes each run's residual history as CSV
// (DIR/<method>_<cells around>.csv: wall seconds, work units, relative
// residual), which bench/plot_airfoil_flow_histories.gp plots.
//   bench_airfoil_flow --benchmark_out=airfoil_flow.json --benchmark_out_format=json [--nkit_history_folder=DIR]
// Timings taken on a shared machine are rough; compare ratios within one run.
#include <benchmark/benchmark.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <string>
#include <utility>
#include <vector>
#if defined(NKIT_BENCH_HAS_ODEINT)
#include <boost/numeric/odeint.hpp>
#include <boost/numeric/odeint/external/eigen/eigen.hpp>
#endif

#include "problems/flow/euler_airfoil_solve.hpp"

namespace {

constexpr double target_reduction = 1e-10;

struct bench_options {
  double explicit_cpu_cap_seconds = 60.0;
  double explicit_cfl = 2.0;
  std::string history_folder;  ///< empty: no history files
};
bench_options& options() {
  static bench_options instance;
  return instance;
}

/// (wall seconds, relative residual) pairs as CSV in the history folder, if one was given.
void write_history(const std::string& name, const std::vector<std::pair<double, double>>& history,
                   double residual_seconds) {
  if (options().history_folder.empty()) return;
  std::filesystem::create_directories(options().history_folder);
  std::ofstream out(std::filesystem::path(options().history_folder) / (name + ".csv"));
  out << "wall_seconds,work_units,relative_residual\n";
  for (const auto& [seconds, relative] : history) {
    out << seconds << ',' << seconds / residual_seconds << ',' << relative << '\n';
  }
}

nkit_problems::euler_airfoil_flow make_flow(int cells_around) {
  nkit_problems::airfoil_grid_settings grid;
  grid.cells_around = cells_around;
  grid.cells_outward = cells_around / 2;
  grid.stretching_ratio = std::pow(1.2, 32.0 / grid.cells_outward);  // the 64 × 32 grid refined alike
  nkit_problems::euler_airfoil_settings settings;
  settings.mach_number = 0.5;
  settings.angle_of_attack_degrees = 2.0;
  return nkit_problems::euler_airfoil_flow(
      nkit_problems::airfoil_o_grid(nkit_problems::naca_four_digit_airfoil("0012"), grid), settings);
}

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

/// Median wall time of one residual evaluation at u (21 evaluations).
double median_residual_seconds(const nkit_problems::euler_airfoil_flow& flow, const Eigen::VectorXd& u) {
  Eigen::VectorXd r(u.size());
  std::vector<double> times;
  for (int k = 0; k < 21; ++k) {
    const auto start = std::chrono::steady_clock::now();
    flow(u, r);
    benchmark::DoNotOptimize(r.data());
    times.push_back(seconds_since(start));
  }
  std::nth_element(times.begin(), times.begin() + 10, times.end());
  return times[10];
}

void publish(benchmark::State& state, double newton_steps, double gmres_iterations, double explicit_steps,
             double relative, double wall, double residual_seconds, bool converged, double lift) {
  state.counters["newton_steps"] = newton_steps;
  state.counters["gmres_iterations"] = gmres_iterations;
  state.counters["explicit_steps"] = explicit_steps;
  state.counters["final_relative_residual"] = relative;
  state.counters["work_units"] = wall / residual_seconds;
  state.counters["wall_seconds"] = wall;
  state.counters["residual_seconds"] = residual_seconds;
  state.counters["converged"] = converged ? 1.0 : 0.0;
  state.counters["lift_coefficient"] = lift;
}

/// The solve of airfoil_newton_krylov_with on `problem` (the flow itself or its first-order wrapper).
template <class Problem, class MakePreconditioner>
void airfoil_newton_krylov_on(benchmark::State& state, const std::string& name,
                              const nkit_problems::euler_airfoil_flow& flow, const Problem& problem,
                              MakePreconditioner make_preconditioner, int rebuild_every_newton_steps) {
  nkit::newton_settings settings = nkit_problems::euler_airfoil_newton_settings(50.0, target_reduction);
  settings.preconditioner_rebuild.rebuild_every_newton_steps = rebuild_every_newton_steps;
  for (auto _ : state) {
    Eigen::VectorXd u = flow.initial_guess();
    const double residual_seconds = median_residual_seconds(flow, u);
    const auto report = nkit_problems::solve_euler_airfoil(problem, u, settings, make_preconditioner());
    state.SetIterationTime(report.wall_seconds);
    std::vector<std::pair<double, double>> history{{0.0, 1.0}};
    for (const auto& h : report.history) history.emplace_back(h.elapsed_seconds, h.relative_residual_norm);
    write_history(name + "_" + std::to_string(state.range(0)), history, residual_seconds);
    publish(state, report.newton_steps, static_cast<double>(report.linear_iterations), 0.0,
            report.final_residual_norm / report.initial_residual_norm, report.wall_seconds, residual_seconds,
            report.converged(), flow.forces(u).lift_coefficient);
    state.counters["preconditioner_setup_seconds"] = report.time.preconditioner_setup;
    state.counters["preconditioner_apply_seconds"] = report.time.preconditioner_apply;
    state.counters["jacobian_assembly_seconds"] = report.time.jacobian_assembly;
  }
}

/// The second-order flow handing nkit its own Jacobian, assembled by colored
/// differences from its nine-cell pattern and colored here, once, outside the
/// timed solve, as euler_airfoil_with_first_order_jacobian colors its
/// five-cell pattern in its constructor (coloring the nine-cell pattern takes
/// 0.02–0.11 s on these grids; nkit would otherwise do it inside the first
/// timed assembly).
class flow_with_own_jacobian {
 public:
  explicit flow_with_own_jacobian(const nkit_problems::euler_airfoil_flow& flow) : m_flow(flow) {
    m_colored.prepare(flow.jacobian_pattern());
  }
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const { m_flow(u, r); }
  void pseudo_time_weights(const Eigen::VectorXd& u, Eigen::VectorXd& weights) const {
    m_flow.pseudo_time_weights(u, weights);
  }
  void assemble_jacobian(const Eigen::VectorXd& u, nkit::sparse_matrix& jacobian) const {
    m_residual.resize(u.size());
    m_flow(u, m_residual);
    m_colored.assemble([this](const Eigen::VectorXd& x, Eigen::VectorXd& r) { m_flow(x, r); }, u, m_residual, jacobian);
  }

 private:
  const nkit_problems::euler_airfoil_flow& m_flow;
  mutable nkit::colored_difference_jacobian m_colored;
  mutable Eigen::VectorXd m_residual;
};

/// Which operator's Jacobian the preconditioner is built from.
enum class preconditioner_matrix { first_order_jacobian, second_order_jacobian };

/// nkit's solve with the preconditioner `make_preconditioner()` returns, set
/// up from the first-order operator's Jacobian (five cells per row) or from
/// the second-order residual's own Jacobian (nine cells per row: the Jacobian
/// of the equations Newton solves, up to the colored differences' error);
/// `name` prefixes the history file. The preconditioner is set up again
/// every `rebuild_every_newton_steps` Newton steps (1: every step; more: the
/// Jacobian and its factor lagged, nkit's preconditioner_rebuild settings).
template <class MakePreconditioner>
void airfoil_newton_krylov_with(benchmark::State& state, const std::string& name, preconditioner_matrix matrix,
                                MakePreconditioner make_preconditioner, int rebuild_every_newton_steps = 1) {
  const auto flow = make_flow(static_cast<int>(state.range(0)));
  if (matrix == preconditioner_matrix::first_order_jacobian) {
    airfoil_newton_krylov_on(state, name, flow, nkit_problems::euler_airfoil_with_first_order_jacobian(flow),
                             make_preconditioner, rebuild_every_newton_steps);
  } else {
    airfoil_newton_krylov_on(state, name, flow, flow_with_own_jacobian(flow), make_preconditioner,
                             rebuild_every_newton_steps);
  }
}

/// Point ILU(0) of the first-order Jacobian.
void airfoil_newton_krylov(benchmark::State& state) {
  airfoil_newton_krylov_with(state, "newton_krylov", preconditioner_matrix::first_order_jacobian,
                             [] { return nkit::ilu_zero_preconditioner{}; });
}

/// Block ILU(0) of the same matrix, one 4 × 4 block per cell (ρ, ρu, ρv, ρE).
void airfoil_newton_krylov_block_ilu(benchmark::State& state) {
  airfoil_newton_krylov_with(state, "newton_krylov_block_ilu", preconditioner_matrix::first_order_jacobian,
                             [] { return nkit::block_ilu_zero_preconditioner(4); });
}

/// Block ILU(0) of the first-order Jacobian, set up again every fifth Newton
/// step only (and after a linear solve that failed): the assembly and the
/// factorisation, about half the time, are paid a fifth as often.
void airfoil_newton_krylov_block_ilu_lagged(benchmark::State& state) {
  airfoil_newton_krylov_with(
      state, "newton_krylov_block_ilu_lagged", preconditioner_matrix::first_order_jacobian,
      [] { return nkit::block_ilu_zero_preconditioner(4); }, 5);
}

/// Block ILU(0) of the second-order residual's Jacobian (the exact one, up to
/// the colored differences' error).
void airfoil_newton_krylov_block_ilu_second_order(benchmark::State& state) {
  airfoil_newton_krylov_with(state, "newton_krylov_block_ilu_second_order",
                             preconditioner_matrix::second_order_jacobian,
                             [] { return nkit::block_ilu_zero_preconditioner(4); });
}

/// Sparse LU of the first-order Jacobian: the best any preconditioner of that matrix can do.
void airfoil_newton_krylov_sparse_lu(benchmark::State& state) {
  airfoil_newton_krylov_with(state, "newton_krylov_sparse_lu", preconditioner_matrix::first_order_jacobian,
                             [] { return nkit::sparse_direct_preconditioner{}; });
}

/// Sparse LU of the second-order Jacobian: Newton's linear systems solved
/// (almost) exactly, GMRES only removing the colored differences' error.
void airfoil_newton_krylov_sparse_lu_second_order(benchmark::State& state) {
  airfoil_newton_krylov_with(state, "newton_krylov_sparse_lu_second_order",
                             preconditioner_matrix::second_order_jacobian,
                             [] { return nkit::sparse_direct_preconditioner{}; });
}

#if defined(NKIT_BENCH_HAS_ODEINT)
constexpr int residual_check_every = 10;
double cpu_seconds() { return static_cast<double>(std::clock()) / CLOCKS_PER_SEC; }

/// dU/ds = −R(U)/λ with λ (the local spectral-radius sum) frozen over a step.
struct local_time_step_system {
  const nkit_problems::euler_airfoil_flow* flow;
  const Eigen::VectorXd* spectral_radius;
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& rate, double /*s*/) const {
    rate.resize(u.size());
    (*flow)(u, rate);
    rate = -rate.cwiseQuotient(*spectral_radius);
  }
};

void airfoil_explicit_runge_kutta(benchmark::State& state) {
  namespace odeint = boost::numeric::odeint;
  const auto flow = make_flow(static_cast<int>(state.range(0)));
  for (auto _ : state) {
    Eigen::VectorXd u = flow.initial_guess(), r(u.size()), radius(u.size());
    const double residual_seconds = median_residual_seconds(flow, u);
    odeint::runge_kutta4<Eigen::VectorXd, double, Eigen::VectorXd, double, odeint::vector_space_algebra> stepper;
    const auto start = std::chrono::steady_clock::now();
    const double cpu_start = cpu_seconds();
    flow(u, r);
    const double initial = r.norm();
    double relative = 1.0;
    std::vector<std::pair<double, double>> history{{0.0, 1.0}};
    long steps = 0;
    bool converged = false;
    while (true) {
      flow.pseudo_time_weights(u, radius);
      stepper.do_step(local_time_step_system{&flow, &radius}, u, 0.0, options().explicit_cfl);
      ++steps;
      if (steps % residual_check_every != 0) continue;
      flow(u, r);
      relative = r.norm() / initial;
      history.emplace_back(seconds_since(start), relative);
      if (relative <= target_reduction) {
        converged = true;
        break;
      }
      if (!std::isfinite(relative) || relative > 1e6) break;  // diverged
      if (cpu_seconds() - cpu_start > options().explicit_cpu_cap_seconds) break;
    }
    const double wall = seconds_since(start);
    state.SetIterationTime(wall);
    write_history("explicit_runge_kutta_" + std::to_string(state.range(0)), history, residual_seconds);
    publish(state, 0.0, 0.0, static_cast<double>(steps), relative, wall, residual_seconds, converged,
            std::isfinite(relative) ? flow.forces(u).lift_coefficient : 0.0);
  }
}

#endif  // NKIT_BENCH_HAS_ODEINT

}  // namespace

int main(int argc, char** argv) {
  // Our options, removed before Google Benchmark parses the rest.
  int kept = 1;
  for (int k = 1; k < argc; ++k) {
    if (std::strncmp(argv[k], "--nkit_explicit_cpu_cap=", 24) == 0) {
      options().explicit_cpu_cap_seconds = std::atof(argv[k] + 24);
    } else if (std::strncmp(argv[k], "--nkit_explicit_cfl=", 20) == 0) {
      options().explicit_cfl = std::atof(argv[k] + 20);
    } else if (std::strncmp(argv[k], "--nkit_history_folder=", 22) == 0) {
      options().history_folder = argv[k] + 22;
    } else {
      argv[kept++] = argv[k];
    }
  }
  argc = kept;
  // The three grids (cells around the airfoil; half as many outward), one timed run each.
  const auto on_three_grids = [](benchmark::internal::Benchmark* b) {
    b->Arg(48)->Arg(64)->Arg(96)->UseManualTime()->Unit(benchmark::kSecond)->Iterations(1);
  };
  on_three_grids(benchmark::RegisterBenchmark("airfoil_newton_krylov", airfoil_newton_krylov));
  on_three_grids(benchmark::RegisterBenchmark("airfoil_newton_krylov_block_ilu", airfoil_newton_krylov_block_ilu));
  on_three_grids(
      benchmark::RegisterBenchmark("airfoil_newton_krylov_block_ilu_lagged", airfoil_newton_krylov_block_ilu_lagged));
  on_three_grids(benchmark::RegisterBenchmark("airfoil_newton_krylov_block_ilu_second_order",
                                              airfoil_newton_krylov_block_ilu_second_order));
  on_three_grids(benchmark::RegisterBenchmark("airfoil_newton_krylov_sparse_lu", airfoil_newton_krylov_sparse_lu));
  on_three_grids(benchmark::RegisterBenchmark("airfoil_newton_krylov_sparse_lu_second_order",
                                              airfoil_newton_krylov_sparse_lu_second_order));
#if defined(NKIT_BENCH_HAS_ODEINT)
  on_three_grids(benchmark::RegisterBenchmark("airfoil_explicit_runge_kutta", airfoil_explicit_runge_kutta));
#endif
  benchmark::Initialize(&argc, argv);
  if (benchmark::ReportUnrecognizedArguments(argc, argv)) return 1;
  if (!(options().explicit_cfl > 0.0 && options().explicit_cfl < 3.0)) {
    std::fprintf(stderr, "bench_airfoil_flow: --nkit_explicit_cfl must be in (0, 3) (got %g)\n",
                 options().explicit_cfl);
    return 1;
  }
  benchmark::AddCustomContext("nkit_explicit_cpu_cap_seconds", std::to_string(options().explicit_cpu_cap_seconds));
  benchmark::AddCustomContext("nkit_explicit_cfl", std::to_string(options().explicit_cfl));
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  return 0;
}
