#ifndef NKIT_SENSITIVITY_SENSITIVITY_BOOKKEEPING_HPP
#define NKIT_SENSITIVITY_SENSITIVITY_BOOKKEEPING_HPP

/// \file sensitivity/sensitivity_bookkeeping.hpp
/// What the direct and the adjoint method share: the checks on their input
/// (a converged Newton run, the parameter vector, the settings) and the cost
/// report built from the solver's linearized_report() before and after.

#include <Eigen/Core>
#include <algorithm>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <type_traits>

#include "../core/linear_operator.hpp"
#include "../detail/timer.hpp"
#include "../report/outcome.hpp"
#include "../report/report.hpp"
#include "output_functional.hpp"
#include "parameter_residual.hpp"
#include "sensitivity_report.hpp"

namespace nkit::detail {

/// Checks the input of a sensitivity computation; throws std::invalid_argument naming what is wrong.
template <class Solver, class Problem, class Functional>
void check_sensitivity_input(const Solver& solver, const Problem& problem, const Eigen::VectorXd& parameters,
                             const sensitivity_settings& settings, const char* caller) {
  static_assert(std::is_same_v<typename Solver::vector_type, Eigen::VectorXd>,
                "nkit: sensitivities need the serial Eigen vector space");
  static_assert(is_parameter_residual_v<Problem>,
                "nkit: the parameter residual must be callable as problem(const Eigen::VectorXd& u, const "
                "Eigen::VectorXd& p, Eigen::VectorXd& r)");
  static_assert(is_output_functional_v<Functional>,
                "nkit: the output functional must be callable as double functional(const Eigen::VectorXd& u, const "
                "Eigen::VectorXd& p)");
  settings.validate();
  const solve_report& run = solver.last_report();
  if (!run.converged()) {
    throw std::invalid_argument(std::string("nkit: ") + caller +
                                " needs the state of a converged Newton solve, but the last solve " +
                                (run.reason ? "stopped with " + std::string(name(run.reason)) : "has not finished"));
  }
  check_parameters(problem, parameters, caller);
}

/// Fills the report's counts from the solver's linearized costs since `before`.
template <class Solver>
class sensitivity_ledger {
 public:
  explicit sensitivity_ledger(const Solver& solver)
      : m_solver(solver),
        m_before(solver.linearized_report()),
        m_transposed_before(solver.linearized_transposed_products()) {}

  void record(const linear_solve_result& result) {
    ++m_solves;
    m_converged = m_converged && result.converged();
    m_largest = std::max(m_largest, result.relative_residual());
  }

  template <class ParameterDerivative, class Gradients>
  sensitivity_report finish(sensitivity_method method, Eigen::Index parameters, const ParameterDerivative& derivative,
                            const Gradients& gradients) const {
    const solve_report& after = m_solver.linearized_report();
    sensitivity_report report;
    report.method = method;
    report.parameters = static_cast<int>(parameters);
    report.linear_solves = m_solves;
    report.linear_solves_converged = m_converged;
    report.stopped_by = m_solver.linearized_stop_reason();
    report.largest_relative_linear_residual = m_largest;
    report.linear_iterations = after.linear_iterations - m_before.linear_iterations;
    report.jacobian_vector_products = after.jacobian_vector_products - m_before.jacobian_vector_products;
    report.transposed_products = m_solver.linearized_transposed_products() - m_transposed_before;
    report.parameter_products = derivative.products();
    report.residual_evaluations =
        after.residual_evaluations - m_before.residual_evaluations + derivative.residual_evaluations();
    report.functional_evaluations = gradients.evaluations();
    report.preconditioner_applications = after.preconditioner_applications - m_before.preconditioner_applications;
    report.jacobian_assemblies = after.jacobian_assemblies - m_before.jacobian_assemblies;
    report.wall_seconds = m_clock.seconds();
    report.median_residual_seconds = m_solver.last_report().median_residual_seconds;
    return report;
  }

 private:
  const Solver& m_solver;
  solve_report m_before;
  std::int64_t m_transposed_before;
  stopwatch m_clock;
  int m_solves = 0;
  bool m_converged = true;
  double m_largest = 0.0;
};

}  // namespace nkit::detail

#endif  // NKIT_SENSITIVITY_SENSITIVITY_BOOKKEEPING_HPP
