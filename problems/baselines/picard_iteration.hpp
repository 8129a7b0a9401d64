// The frozen-coefficient (Picard) fixed-point loop: the hand-written solver
// that Newton–Krylov replaces, written once for every problem in this
// library that offers a frozen-coefficient matrix A(x̂) (the residual with its
// coefficients evaluated at x̂, linear in x). Each iteration assembles A at
// the current iterate, factorises it with an Eigen sparse direct solver (the
// symbolic analysis once, a numerical factorisation every iteration) and
// takes one of the two equivalent steps (common practice; fixed-point
// iteration as in C.T. Kelley, "Iterative Methods for Linear and Nonlinear
// Equations", SIAM 1995, ch. 4 — chapter from memory):
//   solve_for_iterate:    x ← A(x)⁻¹ b(x)        when R(x) = A(x) x − b(x)
//   subtract_correction:  x ← x − A(x)⁻¹ R(x)    the same step as a correction
// until ‖R(x)‖₂ <= max(absolute_tolerance, relative_tolerance · ‖R(x0)‖₂),
// the iteration budget or the time limit runs out, a factorisation fails or
// the residual is no longer finite. Users: the baseplate demo
// (heat/baseplate_solvers.hpp), the lid-driven cavity (flow/cavity_solve.hpp)
// and the model-problem baselines of bench/. Not part of the nkit library.
#ifndef NKIT_PROBLEMS_BASELINES_PICARD_ITERATION_HPP
#define NKIT_PROBLEMS_BASELINES_PICARD_ITERATION_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <memory>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

namespace nkit_problems {

/// Why the loop stopped.
enum class picard_stop_reason {
  converged,
  maximum_iterations_reached,
  time_limit,
  factorization_failed,
  non_finite_residual
};

/// Short text for a stop reason ("time cap", "factorization failed", ...).
inline const char* describe(picard_stop_reason reason) {
  switch (reason) {
    case picard_stop_reason::converged:
      return "converged";
    case picard_stop_reason::maximum_iterations_reached:
      return "iteration limit";
    case picard_stop_reason::time_limit:
      return "time cap";
    case picard_stop_reason::factorization_failed:
      return "factorization failed";
    case picard_stop_reason::non_finite_residual:
      return "diverged";
  }
  return "unknown";
}

struct picard_settings {
  double relative_tolerance = 1e-8;  ///< converged at ‖R‖₂ <= max(absolute, relative · ‖R(x0)‖₂)
  double absolute_tolerance = 0.0;
  long long maximum_iterations = std::numeric_limits<long long>::max();
  double time_limit_seconds = std::numeric_limits<double>::infinity();  ///< checked before each iteration

  void validate() const {
    if (!(relative_tolerance >= 0.0))
      throw std::invalid_argument("picard_settings.relative_tolerance must be >= 0 (got " +
                                  std::to_string(relative_tolerance) + ")");
    if (!(absolute_tolerance >= 0.0))
      throw std::invalid_argument("picard_settings.absolute_tolerance must be >= 0 (got " +
                                  std::to_string(absolute_tolerance) + ")");
    if (maximum_iterations < 0)
      throw std::invalid_argument("picard_settings.maximum_iterations must be >= 0 (got " +
                                  std::to_string(maximum_iterations) + ")");
    if (!(time_limit_seconds >= 0.0))
      throw std::invalid_argument("picard_settings.time_limit_seconds must be >= 0 (got " +
                                  std::to_string(time_limit_seconds) + ")");
  }
};

/// One iteration's record.
struct picard_step_record {
  long long iteration = 0;
  double residual_norm = 0.0;
  double relative_residual_norm = 0.0;  ///< ‖R‖ / ‖R(x0)‖
  double elapsed_seconds = 0.0;         ///< since the loop started
  long long residual_evaluations = 0;   ///< so far, the initial one included
};

struct picard_report {
  bool converged = false;
  picard_stop_reason stop_reason = picard_stop_reason::maximum_iterations_reached;
  long long iterations = 0;
  long long residual_evaluations = 0;
  long long factorizations = 0;
  double initial_residual_norm = 0.0;
  double final_residual_norm = 0.0;
  double wall_seconds = 0.0;
  double median_residual_seconds = 0.0;  ///< median time of one residual evaluation in this run
  std::vector<picard_step_record> history;
  /// Wall time in residual evaluations (0 when no evaluation was timed).
  double work_units() const { return median_residual_seconds > 0.0 ? wall_seconds / median_residual_seconds : 0.0; }
};

/// A sparse direct factorisation that analyses the sparsity pattern once and
/// refactorises on every call: the solve step of a Picard pass, shared by the
/// Picard loop below and by the fixed-point maps built from its loop body
/// (problems/heat/baseplate_picard_map.hpp, bench/fixed_point_configurations.hpp).
/// Held through a pointer because Eigen's factorisations cannot be moved.
template <class DirectSolver>
class reusing_factorization {
 public:
  using matrix_type = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;

  /// Factorises `matrix` (analysing its pattern on the first call); false on failure.
  bool factorize(const matrix_type& matrix) {
    if (!m_analysed) {
      m_factor->analyzePattern(matrix);
      m_analysed = true;
    }
    m_factor->factorize(matrix);
    ++m_factorizations;
    return m_factor->info() == Eigen::Success;
  }
  template <class Rhs>
  auto solve(const Rhs& right_hand_side) const {
    return m_factor->solve(right_hand_side);
  }
  const DirectSolver& factor() const { return *m_factor; }
  long long factorizations() const { return m_factorizations; }

 private:
  std::unique_ptr<DirectSolver> m_factor = std::make_unique<DirectSolver>();
  bool m_analysed = false;
  long long m_factorizations = 0;
};

/// The loop, with the factorisation kept between runs: a continuation that
/// calls run after run on matrices of one sparsity pattern analyses it once.
/// `DirectSolver`: an Eigen sparse direct solver (SparseLU, SimplicialLDLT,
/// UmfPackLU, ...) on a column-major matrix with int indices.
template <class DirectSolver>
class picard_iteration {
 public:
  using matrix_type = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;

  /// x ← A(x)⁻¹ b(x). `assemble(x, A)` fills A(x) and returns b(x) by
  /// reference (valid until the next call). `x` is the initial guess on entry
  /// and the last iterate on exit.
  template <class Residual, class Assemble>
  picard_report solve_for_iterate(Residual& residual, Assemble&& assemble, Eigen::VectorXd& x,
                                  const picard_settings& settings) {
    const Eigen::VectorXd* right_hand_side = nullptr;
    return run(
        residual, x, settings, [&] { right_hand_side = &assemble(std::as_const(x), m_matrix); },
        [&](const Eigen::VectorXd&) { x = m_factorization.solve(*right_hand_side); });
  }

  /// x ← x − A(x)⁻¹ R(x). `assemble(x, A)` fills A(x).
  template <class Residual, class Assemble>
  picard_report subtract_correction(Residual& residual, Assemble&& assemble, Eigen::VectorXd& x,
                                    const picard_settings& settings) {
    return run(
        residual, x, settings, [&] { assemble(std::as_const(x), m_matrix); },
        [&](const Eigen::VectorXd& r) { x -= m_factorization.solve(r); });
  }

  /// The factorisation of the last iteration (for its memory, say).
  const DirectSolver& factorization() const { return m_factorization.factor(); }

 private:
  template <class Residual, class Assemble, class Update>
  picard_report run(Residual& residual, Eigen::VectorXd& x, const picard_settings& settings, Assemble&& assemble,
                    Update&& update) {
    settings.validate();
    using clock = std::chrono::steady_clock;
    const auto seconds_since = [](clock::time_point start) {
      return std::chrono::duration<double>(clock::now() - start).count();
    };
    const auto start = clock::now();
    picard_report report;
    std::vector<double> residual_times;
    Eigen::VectorXd r(x.size());
    const auto evaluate = [&] {
      const auto begin = clock::now();
      residual(std::as_const(x), r);
      residual_times.push_back(seconds_since(begin));
      ++report.residual_evaluations;
      return r.norm();
    };
    report.initial_residual_norm = report.final_residual_norm = evaluate();
    const double target =
        std::max(settings.absolute_tolerance, settings.relative_tolerance * report.initial_residual_norm);
    picard_stop_reason stop = std::isfinite(report.initial_residual_norm)
                                  ? picard_stop_reason::maximum_iterations_reached
                                  : picard_stop_reason::non_finite_residual;
    while (stop != picard_stop_reason::non_finite_residual && report.final_residual_norm > target &&
           report.iterations < settings.maximum_iterations) {
      if (seconds_since(start) > settings.time_limit_seconds) {
        stop = picard_stop_reason::time_limit;
        break;
      }
      assemble();
      ++report.factorizations;
      if (!m_factorization.factorize(m_matrix)) {
        stop = picard_stop_reason::factorization_failed;
        break;
      }
      update(std::as_const(r));
      ++report.iterations;
      report.final_residual_norm = evaluate();
      report.history.push_back({report.iterations, report.final_residual_norm,
                                report.final_residual_norm / report.initial_residual_norm, seconds_since(start),
                                report.residual_evaluations});
      if (!std::isfinite(report.final_residual_norm)) stop = picard_stop_reason::non_finite_residual;
    }
    report.converged = report.final_residual_norm <= target;
    report.stop_reason = report.converged ? picard_stop_reason::converged : stop;
    report.wall_seconds = seconds_since(start);
    std::sort(residual_times.begin(), residual_times.end());
    if (!residual_times.empty()) report.median_residual_seconds = residual_times[residual_times.size() / 2];
    return report;
  }

  reusing_factorization<DirectSolver> m_factorization;
  matrix_type m_matrix;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_BASELINES_PICARD_ITERATION_HPP
