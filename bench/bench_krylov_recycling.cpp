// Krylov subspace recycling (krylov/recycling_gmres.hpp, GCRO-DR) against
// plain restarted GMRES (krylov/gmres.hpp) over two sequences of linear systems
// from the benchmark model problem (problems/model_problem/linear_system_sequences.hpp):
//   newton/<n>   the Newton steps J(T_i) δ = −R(T_i) from T = 0 until ‖R‖ <= 1e-8 ‖R(0)‖
//                (at most 12 systems);
//   time/<n>     20 linearly implicit Euler steps, Δt = 0.01, (h²/Δt I + J(T_i)) δ = −R(T_i).
// and, through the drivers (newton_settings.recycling, recycle_dimension 10,
// C refreshed only after a preconditioner setup — the default; the
// recycling_long_cycles cases also set minimum_cycle_steps_for_update = 10, so
// that a cycle of fewer than 10 Arnoldi steps keeps the subspace as it is; the
// time stepper's recycling_refresh_each_jacobian case sets
// refresh_for_each_jacobian = true):
//   newton_driver/<n>  newton_krylov_solver on the model problem from T = 0 to
//                      ‖R‖ <= 1e-8 ‖R(0)‖, ILU(0) of the assembled Jacobian on
//                      the default rebuild schedule, Eisenstat–Walker forcing;
//   time_stepper/<n>   implicit_time_stepper, adaptive BDF2 at rtol 1e-3 on
//                      h² dT/dt = −R(T), T(0) = 0, t ∈ [0, 0.05] (the set-up of
//                      bench_time_integration), ILU(0) lagged.
// In the standalone sequences each linear system is solved from x = 0 to ‖b − A x‖ <= 1e-8 ‖b‖ with ILU(0)
// right preconditioning (include/nkit/preconditioners/ilu_zero.hpp), rebuilt
// for every matrix; both solvers use restart_length 30, recycling keeps
// recycle_dimension 10 vectors and refreshes C = A M⁻¹ Ũ for each new matrix.
//
//   bench_krylov_recycling --benchmark_out=recycling.json --benchmark_out_format=json
//
// Counters: systems, linear_iterations (Arnoldi steps), operator_applications
// (all products with A, including restart residuals and the refresh of C),
// preconditioner_applications, and for the recycling cases
// iterations_vs_gmres / operator_applications_vs_gmres (ratios to the plain
// case of the same sequence and size, measured earlier in the same run; the
// registration order runs the plain case first). The driver cases count
// newton_steps, linear_iterations, residual_evaluations (every J·v is one),
// preconditioner_setups, recycled_space_refreshes and true_residual_mismatches
// (solve_report), the same ratios (residual_evaluations_vs_gmres) and,
// for the time stepper, steps and field_difference = max|T − T_gmres| / max|T_gmres|
// at the end. Wall time covers the whole
// sequence (assembly, ILU(0) setups, solves); compare it between the two cases
// of one run.
#include <benchmark/benchmark.h>

#include <map>
#include <nkit/krylov/gmres.hpp>
#include <nkit/krylov/recycling_gmres.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/time/implicit_time_stepper.hpp>
#include <stdexcept>
#include <string>
#include <utility>

#include "problems/model_problem/linear_system_sequences.hpp"

namespace {

using sequence_kind = nkit_problems::model_problem_sequence_kind;

constexpr double linear_tolerance = 1e-8;
constexpr int restart_length = 30;
constexpr int recycle_dimension = 10;
constexpr int time_steps = 20;
constexpr double time_step = 0.01;
constexpr int maximum_newton_systems = 12;

struct sequence_totals {
  long iterations = 0;
  long operator_applications = 0;
  long preconditioner_applications = 0;
  int systems = 0;
};

/// Runs the whole sequence with `solve(matrix, preconditioner, b, x)`.
template <class Solve>
sequence_totals run_sequence(sequence_kind kind, int cells, Solve&& solve) {
  nkit_problems::model_problem_system_sequence sequence(cells, kind, time_step);
  nkit::sparse_matrix matrix;
  Eigen::VectorXd right_hand_side;
  Eigen::VectorXd increment;
  nkit::ilu_zero_preconditioner factorization;
  sequence_totals totals;
  const double initial_residual = sequence.residual_norm();
  const int systems = kind == sequence_kind::time_steps ? time_steps : maximum_newton_systems;
  for (int i = 0; i < systems; ++i) {
    if (kind == sequence_kind::newton_steps && sequence.residual_norm() <= 1e-8 * initial_residual) break;
    sequence.assemble(matrix, right_hand_side);
    if (factorization.build(matrix) == nkit::setup_status::failed) throw std::runtime_error("ILU(0) failed");
    increment.setZero(right_hand_side.size());
    nkit::matrix_operator<nkit::sparse_matrix> op(matrix);
    const nkit::linear_solve_result result = solve(op, factorization, right_hand_side, increment);
    if (!result.converged()) throw std::runtime_error("a linear solve did not converge");
    totals.iterations += result.iterations;
    totals.operator_applications += result.operator_applications;
    totals.preconditioner_applications += result.preconditioner_applications;
    ++totals.systems;
    sequence.advance(increment);
  }
  return totals;
}

std::map<std::pair<int, int>, sequence_totals>& plain_results() {
  static std::map<std::pair<int, int>, sequence_totals> results;
  return results;
}

void report(benchmark::State& state, const sequence_totals& totals) {
  state.counters["systems"] = totals.systems;
  state.counters["linear_iterations"] = static_cast<double>(totals.iterations);
  state.counters["operator_applications"] = static_cast<double>(totals.operator_applications);
  state.counters["preconditioner_applications"] = static_cast<double>(totals.preconditioner_applications);
}

void plain_gmres(benchmark::State& state, sequence_kind kind) {
  const int cells = static_cast<int>(state.range(0));
  nkit::gmres_settings settings;
  settings.restart_length = restart_length;
  settings.maximum_iterations = 10000;
  nkit::gmres_solver<> solver(settings);
  sequence_totals totals;
  for (auto _ : state) {
    totals = run_sequence(kind, cells, [&](auto& op, auto& preconditioner, const auto& b, auto& x) {
      return solver.solve(op, preconditioner, b, x, linear_tolerance, nkit::initial_guess::zero);
    });
  }
  report(state, totals);
  plain_results()[{static_cast<int>(kind), cells}] = totals;
}

void recycling_gmres(benchmark::State& state, sequence_kind kind) {
  const int cells = static_cast<int>(state.range(0));
  nkit::recycling_gmres_settings settings;
  settings.restart_length = restart_length;
  settings.recycle_dimension = recycle_dimension;
  settings.maximum_iterations = 10000;
  sequence_totals totals;
  for (auto _ : state) {
    nkit::recycling_gmres_solver<> solver(settings);  // a fresh recycled subspace per run of the sequence
    totals = run_sequence(kind, cells, [&](auto& op, auto& preconditioner, const auto& b, auto& x) {
      return solver.solve(op, preconditioner, b, x, linear_tolerance, nkit::initial_guess::zero);
    });
  }
  report(state, totals);
  const auto plain = plain_results().find({static_cast<int>(kind), cells});
  if (plain != plain_results().end()) {
    state.counters["iterations_vs_gmres"] =
        static_cast<double>(totals.iterations) / static_cast<double>(plain->second.iterations);
    state.counters["operator_applications_vs_gmres"] =
        static_cast<double>(totals.operator_applications) / static_cast<double>(plain->second.operator_applications);
  }
}

/// Totals of one driver run, for the side-by-side ratios.
struct driver_totals {
  long newton_steps = 0;
  long iterations = 0;
  long residual_evaluations = 0;
  Eigen::VectorXd field;
};

std::map<std::pair<int, int>, driver_totals>& plain_driver_results() {
  static std::map<std::pair<int, int>, driver_totals> results;
  return results;
}

void report_driver(benchmark::State& state, int kind, int cells, const driver_totals& totals, int recycled) {
  state.counters["newton_steps"] = static_cast<double>(totals.newton_steps);
  state.counters["linear_iterations"] = static_cast<double>(totals.iterations);
  state.counters["residual_evaluations"] = static_cast<double>(totals.residual_evaluations);
  if (recycled == 0) {
    plain_driver_results()[{kind, cells}] = totals;
    return;
  }
  const auto plain = plain_driver_results().find({kind, cells});
  if (plain == plain_driver_results().end()) return;
  state.counters["iterations_vs_gmres"] =
      static_cast<double>(totals.iterations) / static_cast<double>(plain->second.iterations);
  state.counters["residual_evaluations_vs_gmres"] =
      static_cast<double>(totals.residual_evaluations) / static_cast<double>(plain->second.residual_evaluations);
  state.counters["field_difference"] =
      (totals.field - plain->second.field).lpNorm<Eigen::Infinity>() / plain->second.field.lpNorm<Eigen::Infinity>();
}

/// The Newton driver on the model problem with ILU(0), recycling `recycled` vectors (0: GMRES).
void newton_driver(benchmark::State& state, int recycled, int minimum_cycle_steps = 0) {
  const int cells = static_cast<int>(state.range(0));
  const nkit_problems::heat_conduction_model_problem problem(cells);
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-8;
  settings.linear.restart_length = restart_length;
  settings.linear.maximum_iterations = 10000;
  settings.recycling.recycle_dimension = recycled;
  settings.recycling.minimum_cycle_steps_for_update = minimum_cycle_steps;
  driver_totals totals;
  for (auto _ : state) {
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
    totals.field = Eigen::VectorXd::Zero(problem.unknowns());
    const nkit::solve_report report = solver.solve(problem, totals.field);
    if (!report.converged()) throw std::runtime_error("the Newton solve did not converge");
    totals.newton_steps = report.newton_steps;
    totals.iterations = report.linear_iterations;
    totals.residual_evaluations = report.residual_evaluations;
    state.counters["preconditioner_setups"] = static_cast<double>(report.preconditioner_setups);
    state.counters["recycled_space_refreshes"] = static_cast<double>(report.recycled_space_refreshes);
    state.counters["true_residual_mismatches"] = static_cast<double>(report.true_residual_mismatches);
  }
  report_driver(state, 0, cells, totals, recycled);
}

/// The implicit time stepper (adaptive BDF2, ILU(0) lagged) on h² dT/dt = −R(T).
void time_stepper(benchmark::State& state, int recycled, int minimum_cycle_steps = 0,
                  bool refresh_for_each_jacobian = false) {
  const int cells = static_cast<int>(state.range(0));
  const nkit_problems::heat_conduction_model_problem problem(cells);
  nkit::time_stepper_settings settings;
  settings.method = nkit::time_method::bdf;
  settings.relative_tolerance = 1e-3;
  settings.absolute_tolerance = 1e-6;
  settings.step_control.initial_step = 1e-5;
  settings.stage.newton.linear.restart_length = restart_length;
  settings.stage.newton.recycling.recycle_dimension = recycled;
  settings.stage.newton.recycling.minimum_cycle_steps_for_update = minimum_cycle_steps;
  settings.stage.newton.recycling.refresh_for_each_jacobian = refresh_for_each_jacobian;
  const double h = problem.cell_size();
  driver_totals totals;
  for (auto _ : state) {
    auto form = nkit::make_residual_form(
        problem, nkit::no_source{},
        nkit::mass_matrix<Eigen::VectorXd>::diagonal(Eigen::VectorXd::Constant(problem.unknowns(), h * h)));
    nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> stepper(settings);
    totals.field = Eigen::VectorXd::Zero(problem.unknowns());
    const nkit::integration_report& report = stepper.integrate(form, totals.field, 0.0, 0.05);
    if (!report.reached_end()) throw std::runtime_error("the integration stopped early");
    totals.newton_steps = report.newton_steps;
    totals.iterations = report.linear_iterations;
    totals.residual_evaluations = report.rate_evaluations;
    state.counters["steps"] = static_cast<double>(report.accepted_steps);
    state.counters["preconditioner_setups"] = static_cast<double>(report.preconditioner_setups);
    state.counters["recycled_space_refreshes"] = static_cast<double>(report.recycled_space_refreshes);
    state.counters["true_residual_mismatches"] = static_cast<double>(report.true_residual_mismatches);
  }
  report_driver(state, 1, cells, totals, recycled);
}

void newton_plain(benchmark::State& state) { plain_gmres(state, sequence_kind::newton_steps); }
void newton_recycling(benchmark::State& state) { recycling_gmres(state, sequence_kind::newton_steps); }
void time_plain(benchmark::State& state) { plain_gmres(state, sequence_kind::time_steps); }
void time_recycling(benchmark::State& state) { recycling_gmres(state, sequence_kind::time_steps); }

}  // namespace

BENCHMARK(newton_plain)->Name("newton/gmres")->Arg(64)->Arg(128)->Iterations(1)->Unit(benchmark::kMillisecond);
BENCHMARK(newton_recycling)->Name("newton/recycling")->Arg(64)->Arg(128)->Iterations(1)->Unit(benchmark::kMillisecond);
BENCHMARK(time_plain)->Name("time/gmres")->Arg(64)->Arg(128)->Iterations(1)->Unit(benchmark::kMillisecond);
BENCHMARK(time_recycling)->Name("time/recycling")->Arg(64)->Arg(128)->Iterations(1)->Unit(benchmark::kMillisecond);

BENCHMARK_CAPTURE(newton_driver, gmres, 0)->Arg(64)->Arg(128)->Arg(256)->Iterations(1)->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(newton_driver, recycling, recycle_dimension)
    ->Arg(64)
    ->Arg(128)
    ->Arg(256)
    ->Iterations(1)
    ->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(newton_driver, recycling_long_cycles, recycle_dimension, recycle_dimension)
    ->Arg(64)
    ->Arg(128)
    ->Arg(256)
    ->Iterations(1)
    ->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(time_stepper, gmres, 0)->Arg(64)->Arg(128)->Arg(256)->Iterations(1)->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(time_stepper, recycling, recycle_dimension)
    ->Arg(64)
    ->Arg(128)
    ->Arg(256)
    ->Iterations(1)
    ->Unit(benchmark::kMillisecond);

BENCHMARK_CAPTURE(time_stepper, recycling_long_cycles, recycle_dimension, recycle_dimension)
    ->Arg(64)
    ->Arg(128)
    ->Arg(256)
    ->Iterations(1)
    ->Unit(benchmark::kMillisecond);
// C recomputed before every linear solve: no true-residual mismatches (the
// Jacobian's shift changes with every step while ILU(0) is lagged).
BENCHMARK_CAPTURE(time_stepper, recycling_refresh_each_jacobian, recycle_dimension, 0, true)
    ->Arg(64)
    ->Arg(128)
    ->Arg(256)
    ->Iterations(1)
    ->Unit(benchmark::kMillisecond);

BENCHMARK_MAIN();
