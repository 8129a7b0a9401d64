// The loops users replace with nkit, written as they usually are, on the
// heat-conduction model problem (problems/model_problem/model_problem.hpp): exact Newton with
// an assembled Jacobian and a sparse direct solver, the frozen-coefficient
// (Picard) iteration with a direct solve (problems/baselines/picard_iteration.hpp),
// and explicit pseudo-time marching to steady state with Boost.Odeint. Each
// stops at ‖R‖ <= 1e-8 ‖R(T0)‖ (the model problem's criterion) or at a wall-time cap, and reports how
// far it got.
#ifndef NKIT_BENCH_MODEL_PROBLEM_BASELINES_HPP
#define NKIT_BENCH_MODEL_PROBLEM_BASELINES_HPP

#include <Eigen/SparseCore>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <string>
#include <vector>

#include "problems/baselines/picard_iteration.hpp"
#include "problems/model_problem/model_problem.hpp"

namespace nkit_bench {

using model = nkit_problems::heat_conduction_model_problem;
using column_matrix = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;

/// The model problem's convergence criterion: ‖R‖₂ <= 1e-8 ‖R(T0)‖₂.
inline constexpr double target_reduction = 1e-8;

struct baseline_result {
  bool reached = false;            ///< the convergence criterion was met
  double relative_residual = 1.0;  ///< ‖R‖ / ‖R(T0)‖ at the end
  std::int64_t iterations = 0;     ///< Newton/Picard iterations or time steps
  std::int64_t residual_evaluations = 0;
  std::int64_t factorizations = 0;
  double projected_seconds = 0.0;  ///< explicit marching cut off by the cap: projected time to the criterion
  std::string failure;             ///< why it stopped short ("" when reached)
};

class wall_clock {
 public:
  double seconds() const { return std::chrono::duration<double>(std::chrono::steady_clock::now() - m_start).count(); }

 private:
  std::chrono::steady_clock::time_point m_start = std::chrono::steady_clock::now();
};

/// Exact Newton: J(T) s = −R(T), T += λ s with λ halved while ‖R‖ does not
/// decrease (common practice). `DirectSolver` is an Eigen sparse direct
/// solver (SparseLU, UmfPackLU); the symbolic analysis is done once.
template <class DirectSolver>
baseline_result exact_newton(const model& problem, Eigen::VectorXd& t, double time_cap) {
  wall_clock clock;
  baseline_result result;
  Eigen::VectorXd r(t.size()), trial(t.size()), trial_r(t.size()), step(t.size());
  problem(t, r);
  ++result.residual_evaluations;
  const double initial = r.norm();
  double norm = initial;
  column_matrix jacobian;
  DirectSolver solver;
  while (norm > target_reduction * initial) {
    if (clock.seconds() > time_cap) {
      result.failure = "time cap";
      break;
    }
    problem.assemble_jacobian(t, jacobian);
    if (result.iterations == 0) solver.analyzePattern(jacobian);
    solver.factorize(jacobian);
    ++result.factorizations;
    if (solver.info() != Eigen::Success) {
      result.failure = "factorization failed";
      break;
    }
    r = -r;  // −R(T) as a plain vector (UMFPACK's solve takes no expressions); r is replaced below
    step = solver.solve(r);
    double length = 1.0, trial_norm = 0.0;
    for (int halving = 0; halving < 30; ++halving, length *= 0.5) {
      trial = t + length * step;
      problem(trial, trial_r);
      ++result.residual_evaluations;
      trial_norm = trial_r.norm();
      if (trial_norm < norm) break;
    }
    t.swap(trial);
    r.swap(trial_r);
    norm = trial_norm;
    ++result.iterations;
  }
  result.relative_residual = norm / initial;
  result.reached = norm <= target_reduction * initial;
  return result;
}

/// Picard: T_{k+1} = A(T_k)⁻¹ q h², the loop users replace (the shared loop of
/// problems/baselines/picard_iteration.hpp). `DirectSolver` is SparseLU or
/// SimplicialLDLT (A is SPD: the strongest hand-rolled loop).
template <class DirectSolver>
baseline_result picard(const model& problem, Eigen::VectorXd& t, double time_cap) {
  const double h = problem.cell_size();
  const Eigen::VectorXd load = Eigen::VectorXd::Constant(t.size(), problem.source() * h * h);
  std::vector<Eigen::Triplet<double>> entries;
  entries.reserve(static_cast<std::size_t>(5 * t.size()));
  const auto assemble = [&](const Eigen::VectorXd& state, column_matrix& a) -> const Eigen::VectorXd& {
    problem.assemble_frozen_conduction(state, a, entries);
    return load;
  };
  nkit_problems::picard_settings settings;
  settings.relative_tolerance = target_reduction;
  settings.time_limit_seconds = time_cap;
  nkit_problems::picard_iteration<DirectSolver> loop;
  const nkit_problems::picard_report report = loop.solve_for_iterate(problem, assemble, t, settings);
  baseline_result result;
  result.reached = report.converged;
  result.relative_residual = report.final_residual_norm / report.initial_residual_norm;
  result.iterations = report.iterations;
  result.residual_evaluations = report.residual_evaluations;
  result.factorizations = report.factorizations;
  if (!report.converged) result.failure = nkit_problems::describe(report.stop_reason);
  return result;
}

/// Gershgorin bound on the spectral radius of R'(T): max over rows of
/// Σ_j |J_ij|. Every eigenvalue lies in a Gershgorin disc (common practice).
inline double gershgorin_bound(const model& problem, const Eigen::VectorXd& t) {
  Eigen::SparseMatrix<double, Eigen::RowMajor, int> jacobian;
  problem.assemble_jacobian(t, jacobian);
  double bound = 0.0;
  for (Eigen::Index row = 0; row < jacobian.outerSize(); ++row) {
    double sum = 0.0;
    for (decltype(jacobian)::InnerIterator entry(jacobian, row); entry; ++entry) sum += std::abs(entry.value());
    bound = std::max(bound, sum);
  }
  return bound;
}

/// Records (time, ln ‖R‖) while marching, to project the time still needed
/// when the cap stops it: the slowest mode decays exponentially, so ln ‖R‖
/// falls linearly late in the march (common practice for stiff decay).
struct decay_tracker {
  std::vector<std::pair<double, double>> samples;
  void add(double seconds, double relative_residual) { samples.emplace_back(seconds, std::log(relative_residual)); }
  /// Seconds to reach target_reduction, extrapolating the rate of the last half.
  double projected_seconds() const {
    if (samples.size() < 4) return 0.0;
    const auto& last = samples.back();
    const auto& middle = samples[samples.size() / 2];
    const double rate = (last.second - middle.second) / (last.first - middle.first);  // d ln‖R‖ / dt < 0
    if (!(rate < 0.0)) return std::numeric_limits<double>::infinity();
    return last.first + (std::log(target_reduction) - last.second) / rate;
  }
};

}  // namespace nkit_bench

#endif  // NKIT_BENCH_MODEL_PROBLEM_BASELINES_HPP
