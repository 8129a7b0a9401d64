#ifndef NKIT_SENSITIVITY_PARAMETER_RESIDUAL_HPP
#define NKIT_SENSITIVITY_PARAMETER_RESIDUAL_HPP

/// \file sensitivity/parameter_residual.hpp
/// The residual R(u, p) of a design study, with a small vector p of
/// parameters (material data, boundary values, ...): the concept, the
/// optional members nkit detects, the plain residual R(·, p) at fixed p that
/// the Newton driver solves (residual_at_parameters), forward-mode automatic
/// differentiation for scalar-templated residuals, and the product
/// ∂R/∂p · dp by the problem's own member or by finite differences.
///
/// Required: `problem(const Eigen::VectorXd& u, const Eigen::VectorXd& p, Eigen::VectorXd& r)`
/// writes R(u, p) into r (already sized like u; must not be resized).
///
/// Optional members, detected at compile time:
///   void parameter_product(u, p, dp, out)   out = ∂R/∂p(u, p) dp exactly
///   void jacobian_product(u, p, v, jv)      jv = ∂R/∂u(u, p) v exactly
///   void assemble_jacobian(u, p, J)         J = ∂R/∂u(u, p), sparse (row- or column-major)
///   const sparsity_pattern& jacobian_pattern() const   where ∂R/∂u may be nonzero (any p)
///   Eigen::Index parameter_count() const    the size p must have (checked)
/// Serial Eigen vectors only.

#include <Eigen/Core>
#include <cmath>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>

#include "../jacobian/automatic_differentiation.hpp"
#include "../jacobian/finite_difference_jacobian.hpp"

namespace nkit {

namespace detail {
template <class Problem, class = void>
struct has_parameter_product : std::false_type {};
template <class Problem>
struct has_parameter_product<Problem,
                             std::void_t<decltype(std::declval<Problem&>().parameter_product(
                                 std::declval<const Eigen::VectorXd&>(), std::declval<const Eigen::VectorXd&>(),
                                 std::declval<const Eigen::VectorXd&>(), std::declval<Eigen::VectorXd&>()))>>
    : std::true_type {};

template <class Problem, class = void>
struct has_parameter_count : std::false_type {};
template <class Problem>
struct has_parameter_count<Problem,
                           std::void_t<decltype(Eigen::Index(std::declval<const Problem&>().parameter_count()))>>
    : std::true_type {};
}  // namespace detail

/// True when `Problem` can be called as problem(u, p, r) with Eigen vectors.
template <class Problem>
inline constexpr bool is_parameter_residual_v =
    std::is_invocable_v<std::remove_reference_t<Problem>&, const Eigen::VectorXd&, const Eigen::VectorXd&,
                        Eigen::VectorXd&>;

/// True when `Problem` has parameter_product(u, p, dp, out).
template <class Problem>
inline constexpr bool has_parameter_product_v = detail::has_parameter_product<std::remove_reference_t<Problem>>::value;

/// The plain residual R(·, p) at fixed parameters, as the Newton driver
/// wants it: references the problem (which must outlive it), copies p.
/// jacobian_product, assemble_jacobian and jacobian_pattern are forwarded
/// when the problem has them.
template <class Problem>
class residual_at_parameters {
 public:
  residual_at_parameters(Problem& problem, Eigen::VectorXd parameters)
      : m_problem(&problem), m_parameters(std::move(parameters)) {}

  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) { (*m_problem)(u, m_parameters, r); }

  template <class P = Problem>
  auto jacobian_product(const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& jv)
      -> decltype(std::declval<P&>().jacobian_product(u, std::declval<const Eigen::VectorXd&>(), v, jv)) {
    return m_problem->jacobian_product(u, m_parameters, v, jv);
  }
  template <class Matrix, class P = Problem>
  auto assemble_jacobian(const Eigen::VectorXd& u, Matrix& jacobian)
      -> decltype(std::declval<P&>().assemble_jacobian(u, std::declval<const Eigen::VectorXd&>(), jacobian)) {
    return m_problem->assemble_jacobian(u, m_parameters, jacobian);
  }
  template <class P = Problem>
  auto jacobian_pattern() const -> decltype(std::declval<const P&>().jacobian_pattern()) {
    return m_problem->jacobian_pattern();
  }

  const Eigen::VectorXd& parameters() const { return m_parameters; }
  Problem& problem() { return *m_problem; }

 private:
  Problem* m_problem;
  Eigen::VectorXd m_parameters;
};

/// at_parameters(problem, p): R(·, p) for newton_krylov_solver::solve.
template <class Problem>
residual_at_parameters<Problem> at_parameters(Problem& problem, Eigen::VectorXd parameters) {
  static_assert(is_parameter_residual_v<Problem>,
                "nkit: the parameter residual must be callable as problem(const Eigen::VectorXd& u, const "
                "Eigen::VectorXd& p, Eigen::VectorXd& r)");
  return residual_at_parameters<Problem>(problem, std::move(parameters));
}

/// A scalar-templated parameter residual
///
///   template <class Scalar>
///   void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
///                   const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& p,
///                   Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const;
///
/// given exact jacobian_product(u, p, v, jv) and parameter_product(u, p, dp, out)
/// by forward-mode AD (detail::forward_mode_product of
/// jacobian/automatic_differentiation.hpp): one residual sweep on dual
/// numbers each, seeded with (v, 0) and (0, dp). Workspace: the dual vectors
/// and a zero direction, allocated on the first product and reused while
/// sizes stay the same. assemble_jacobian and jacobian_pattern are forwarded.
template <class Residual>
class parameter_residual_with_automatic_differentiation {
 public:
  explicit parameter_residual_with_automatic_differentiation(Residual residual) : m_residual(std::move(residual)) {}

  void operator()(const Eigen::VectorXd& u, const Eigen::VectorXd& p, Eigen::VectorXd& r) { m_residual(u, p, r); }

  /// jv = ∂R/∂u(u, p) v, exact to rounding.
  void jacobian_product(const Eigen::VectorXd& u, const Eigen::VectorXd& p, const Eigen::VectorXd& v,
                        Eigen::VectorXd& jv) {
    seed_parameters(p, nullptr);
    sweep(u, v, jv);
  }
  /// out = ∂R/∂p(u, p) dp, exact to rounding.
  void parameter_product(const Eigen::VectorXd& u, const Eigen::VectorXd& p, const Eigen::VectorXd& dp,
                         Eigen::VectorXd& out) {
    seed_parameters(p, &dp);
    if (m_zero.size() != u.size()) m_zero = Eigen::VectorXd::Zero(u.size());
    sweep(u, m_zero, out);
  }

  template <class Matrix, class Wrapped = Residual>
  auto assemble_jacobian(const Eigen::VectorXd& u, const Eigen::VectorXd& p, Matrix& jacobian)
      -> decltype(std::declval<Wrapped&>().assemble_jacobian(u, p, jacobian)) {
    return m_residual.assemble_jacobian(u, p, jacobian);
  }
  template <class Wrapped = Residual>
  auto jacobian_pattern() const -> decltype(std::declval<const Wrapped&>().jacobian_pattern()) {
    return m_residual.jacobian_pattern();
  }
  template <class Wrapped = Residual>
  auto parameter_count() const -> decltype(std::declval<const Wrapped&>().parameter_count()) {
    return m_residual.parameter_count();
  }

  Residual& residual() { return m_residual; }

 private:
  void seed_parameters(const Eigen::VectorXd& p, const Eigen::VectorXd* dp) {
    if (m_dual_parameters.size() != p.size()) m_dual_parameters.resize(p.size());
    for (Eigen::Index j = 0; j < p.size(); ++j) {
      m_dual_parameters(j).value() = p(j);
      m_dual_parameters(j).derivatives()(0) = dp != nullptr ? (*dp)(j) : 0.0;
    }
  }
  void sweep(const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& out) {
    if (out.size() != u.size()) out.resize(u.size());  // callers outside nkit may pass an empty vector
    detail::forward_mode_product(u, v, out, m_dual_state, m_dual_residual,
                                 [this](const dual_vector& x, dual_vector& r) {
                                   m_residual(x, static_cast<const dual_vector&>(m_dual_parameters), r);
                                 });
  }

  Residual m_residual;
  dual_vector m_dual_state, m_dual_residual, m_dual_parameters;
  Eigen::VectorXd m_zero;
};

/// with_parameter_automatic_differentiation(residual): both products by forward-mode AD.
template <class Residual>
parameter_residual_with_automatic_differentiation<std::decay_t<Residual>> with_parameter_automatic_differentiation(
    Residual&& residual) {
  return parameter_residual_with_automatic_differentiation<std::decay_t<Residual>>(std::forward<Residual>(residual));
}

namespace detail {

/// Throws std::invalid_argument unless p is non-empty, finite and (when the
/// problem declares parameter_count()) of that size.
template <class Problem>
void check_parameters(const Problem& problem, const Eigen::VectorXd& p, const char* caller) {
  if (p.size() == 0) throw std::invalid_argument(std::string("nkit: ") + caller + ": the parameter vector p is empty");
  if (!p.allFinite()) {
    throw std::invalid_argument(std::string("nkit: ") + caller + ": the parameter vector p contains NaN or Inf");
  }
  if constexpr (has_parameter_count<Problem>::value) {
    const auto expected = static_cast<Eigen::Index>(problem.parameter_count());
    if (p.size() != expected) {
      throw std::invalid_argument(std::string("nkit: ") + caller + ": the parameter vector p has " +
                                  std::to_string(p.size()) + " entries but the problem's parameter_count() is " +
                                  std::to_string(expected));
    }
  } else {
    static_cast<void>(problem);
  }
}

/// ∂R/∂p · dp at (u, p): the problem's parameter_product when it has one,
/// otherwise finite differences in p with the step rule of J·v
/// (finite_difference_jacobian::step_for with ‖p‖ in place of ‖u‖ and the
/// settings' residual noise and formula): forward [R(u, p + δ dp) − R(u, p)]/δ,
/// error O(δ) ≈ √ε relative; central, error O(δ²) ≈ ε^(2/3). `residual_at_p`
/// is R(u, p) (used by the forward formula). Counts residual evaluations.
template <class Problem>
class parameter_derivative {
 public:
  explicit parameter_derivative(const jacobian_settings& settings) : m_difference(settings) {}

  void apply(Problem& problem, const Eigen::VectorXd& u, const Eigen::VectorXd& p, const Eigen::VectorXd& residual_at_p,
             const Eigen::VectorXd& dp, Eigen::VectorXd& out) {
    if (out.size() != u.size()) out.resize(u.size());
    ++m_products;
    if constexpr (has_parameter_product_v<Problem>) {
      static_cast<void>(residual_at_p);
      problem.parameter_product(u, p, dp, out);
      if (out.size() != u.size()) {
        throw std::invalid_argument("nkit: parameter_product wrote a vector of size " + std::to_string(out.size()) +
                                    ", expected " + std::to_string(u.size()));
      }
    } else {
      const double direction_norm = dp.norm();
      if (direction_norm == 0.0) {
        out.setZero();
        return;
      }
      m_difference.linearize_at(p, residual_at_p);  // only ‖p‖ is used for the step
      const double step = m_difference.step_for(direction_norm);
      m_shifted = p + step * dp;
      evaluate(problem, u, out);
      if (m_difference.settings().formula == difference_formula::forward) {
        out = (out - residual_at_p) / step;
        return;
      }
      m_shifted = p - step * dp;
      if (m_backward.size() != u.size()) m_backward.resize(u.size());
      evaluate(problem, u, m_backward);
      out = (out - m_backward) / (2.0 * step);
    }
  }
  /// R(u, p) into r (counted).
  void residual(Problem& problem, const Eigen::VectorXd& u, const Eigen::VectorXd& p, Eigen::VectorXd& r) {
    if (r.size() != u.size()) r.resize(u.size());
    m_shifted = p;
    evaluate(problem, u, r);
  }

  std::int64_t products() const { return m_products; }
  std::int64_t residual_evaluations() const { return m_evaluations; }

 private:
  void evaluate(Problem& problem, const Eigen::VectorXd& u, Eigen::VectorXd& r) {
    const auto expected = u.size();
    problem(u, static_cast<const Eigen::VectorXd&>(m_shifted), r);
    ++m_evaluations;
    if (r.size() != expected) {
      throw std::invalid_argument("nkit: the parameter residual changed the size of its output vector from " +
                                  std::to_string(expected) + " to " + std::to_string(r.size()));
    }
  }

  finite_difference_jacobian<> m_difference;
  Eigen::VectorXd m_shifted, m_backward;
  std::int64_t m_products = 0;
  std::int64_t m_evaluations = 0;
};

}  // namespace detail

}  // namespace nkit

#endif  // NKIT_SENSITIVITY_PARAMETER_RESIDUAL_HPP
