#ifndef NKIT_CONTINUATION_PARAMETRIZED_RESIDUAL_HPP
#define NKIT_CONTINUATION_PARAMETRIZED_RESIDUAL_HPP

/// \file continuation/parametrized_residual.hpp
/// The parametrized residual R(u, λ) followed by continuation
/// (continuation.hpp), the optional capabilities nkit detects on it, and
/// forward-mode automatic differentiation for scalar-templated ones.
///
/// Required: `problem(const vector_type& u, scalar_type parameter, vector_type& r)`
/// writes R(u, λ) into r (already sized like u; must not be resized).
///
/// Optional members, detected at compile time (zero cost when absent):
///   void jacobian_product(const vector_type& u, scalar_type parameter,
///                         const vector_type& v, scalar_type parameter_direction,
///                         vector_type& jv)
///       jv = R_u(u, λ) v + R_λ(u, λ) μ exactly: the derivative of R along the
///       direction (v, μ). When absent, nkit uses finite differences of R in
///       the combined direction.
///   void assemble_jacobian(const vector_type& u, scalar_type parameter, sparse_matrix& jacobian)
///       the assembled R_u(u, λ) (λ fixed), for preconditioners of the state block.
///   const sparsity_pattern& jacobian_pattern() const
///       where R_u may have nonzeros (the same for every λ); without
///       assemble_jacobian, continuation then assembles R_u for the state
///       preconditioner by colored finite differences (bordered_system.hpp),
///       as the Newton driver does for plain residuals. Serial Eigen vectors only.

#include <Eigen/Core>
#include <type_traits>
#include <unsupported/Eigen/AutoDiff>
#include <utility>

#include "../jacobian/automatic_differentiation.hpp"  // dual numbers and the forward-mode sweep

namespace nkit {

namespace detail {

template <class Problem, class Vector, class Scalar, class = void>
struct is_parametrized_residual_impl : std::false_type {};
template <class Problem, class Vector, class Scalar>
struct is_parametrized_residual_impl<
    Problem, Vector, Scalar,
    std::void_t<decltype(std::declval<Problem&>()(std::declval<const Vector&>(), std::declval<Scalar>(),
                                                  std::declval<Vector&>()))>> : std::true_type {};

template <class Problem, class Vector, class Scalar, class = void>
struct has_parametrized_jacobian_product_impl : std::false_type {};
template <class Problem, class Vector, class Scalar>
struct has_parametrized_jacobian_product_impl<
    Problem, Vector, Scalar,
    std::void_t<decltype(std::declval<Problem&>().jacobian_product(
        std::declval<const Vector&>(), std::declval<Scalar>(), std::declval<const Vector&>(), std::declval<Scalar>(),
        std::declval<Vector&>()))>> : std::true_type {};

template <class Problem, class Vector, class Scalar, class Matrix, class = void>
struct has_parametrized_assemble_jacobian_impl : std::false_type {};
template <class Problem, class Vector, class Scalar, class Matrix>
struct has_parametrized_assemble_jacobian_impl<
    Problem, Vector, Scalar, Matrix,
    std::void_t<decltype(std::declval<Problem&>().assemble_jacobian(
        std::declval<const Vector&>(), std::declval<Scalar>(), std::declval<Matrix&>()))>> : std::true_type {};

}  // namespace detail

/// True when `Problem` can be called as problem(const Vector& u, Scalar parameter, Vector& r).
template <class Problem, class Vector, class Scalar = double>
inline constexpr bool is_parametrized_residual_v =
    detail::is_parametrized_residual_impl<std::remove_reference_t<Problem>, Vector, Scalar>::value;

/// True when `Problem` has jacobian_product(u, parameter, v, parameter_direction, jv).
template <class Problem, class Vector, class Scalar = double>
inline constexpr bool has_parametrized_jacobian_product_v =
    detail::has_parametrized_jacobian_product_impl<std::remove_reference_t<Problem>, Vector, Scalar>::value;

/// True when `Problem` has assemble_jacobian(u, parameter, matrix).
template <class Problem, class Vector, class Scalar, class Matrix>
inline constexpr bool has_parametrized_assemble_jacobian_v =
    detail::has_parametrized_assemble_jacobian_impl<std::remove_reference_t<Problem>, Vector, Scalar, Matrix>::value;

/// A scalar-templated parametrized residual
///
///   template <class Scalar>
///   void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u, const Scalar& parameter,
///                   Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const;
///
/// given an exact jacobian_product(u, λ, v, μ, jv) by forward-mode AD: one
/// residual sweep on dual numbers seeded with (v, μ) yields R_u v + R_λ μ.
/// Same number type and workspace policy as
/// residual_with_automatic_differentiation (automatic_differentiation.hpp):
/// two dual vectors, allocated on the first product, reused while the size
/// stays the same. assemble_jacobian(u, λ, J) and jacobian_pattern() are
/// forwarded when the wrapped residual has them.
template <class Residual>
class parametrized_residual_with_automatic_differentiation {
 public:
  explicit parametrized_residual_with_automatic_differentiation(Residual residual) : m_residual(std::move(residual)) {}

  void operator()(const Eigen::VectorXd& u, double parameter, Eigen::VectorXd& r) { m_residual(u, parameter, r); }

  /// jv = R_u(u, λ) v + R_λ(u, λ) μ, exact to rounding.
  void jacobian_product(const Eigen::VectorXd& u, double parameter, const Eigen::VectorXd& v,
                        double parameter_direction, Eigen::VectorXd& jv) {
    dual_number dual_parameter;
    dual_parameter.value() = parameter;
    dual_parameter.derivatives()(0) = parameter_direction;
    detail::forward_mode_product(u, v, jv, m_dual_state, m_dual_residual, [&](const dual_vector& x, dual_vector& r) {
      m_residual(x, static_cast<const dual_number&>(dual_parameter), r);
    });
  }

  template <class Matrix, class Wrapped = Residual>
  auto assemble_jacobian(const Eigen::VectorXd& u, double parameter, Matrix& jacobian)
      -> decltype(std::declval<Wrapped&>().assemble_jacobian(u, parameter, jacobian)) {
    return m_residual.assemble_jacobian(u, parameter, jacobian);
  }

  template <class Wrapped = Residual>
  auto jacobian_pattern() const -> decltype(std::declval<const Wrapped&>().jacobian_pattern()) {
    return m_residual.jacobian_pattern();
  }

  Residual& residual() { return m_residual; }

 private:
  Residual m_residual;
  dual_vector m_dual_state;
  dual_vector m_dual_residual;
};

/// with_parametrized_automatic_differentiation(residual): exact J·v of R(u, λ)
/// in both u and λ by forward-mode AD.
template <class Residual>
parametrized_residual_with_automatic_differentiation<std::decay_t<Residual>>
with_parametrized_automatic_differentiation(Residual&& residual) {
  return parametrized_residual_with_automatic_differentiation<std::decay_t<Residual>>(std::forward<Residual>(residual));
}

}  // namespace nkit

#endif  // NKIT_CONTINUATION_PARAMETRIZED_RESIDUAL_HPP
