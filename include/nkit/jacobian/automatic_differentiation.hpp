#ifndef NKIT_JACOBIAN_AUTOMATIC_DIFFERENTIATION_HPP
#define NKIT_JACOBIAN_AUTOMATIC_DIFFERENTIATION_HPP

/// \file jacobian/automatic_differentiation.hpp
/// Exact Jacobian-vector products by forward-mode automatic differentiation.
///
/// The residual must be a template on its scalar type, e.g.
///
///   struct my_residual {
///     template <class Scalar>
///     void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
///                     Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
///       using std::exp;              // call math functions unqualified, so
///       r(0) = exp(u(0)) - 2.0;      // Eigen's overloads for the dual type are found
///     }
///   };
///
/// Choice of number type: Eigen::AutoDiffScalar (unsupported/Eigen/AutoDiff)
/// with a fixed 1×1 derivative. It already supplies every elementary function
/// and mixes with Eigen matrices, which a hand-written dual type would have to
/// duplicate; with a fixed-size derivative it carries two doubles and
/// allocates nothing per scalar. One residual sweep on dual numbers gives
/// R'(u) v exactly (to rounding).

#include <Eigen/Core>
#include <type_traits>
#include <unsupported/Eigen/AutoDiff>
#include <utility>

namespace nkit {

/// Value plus one directional derivative.
using dual_number = Eigen::AutoDiffScalar<Eigen::Matrix<double, 1, 1>>;

/// Vector of dual numbers, the type the residual is called with for J·v.
using dual_vector = Eigen::Matrix<dual_number, Eigen::Dynamic, 1>;

namespace detail {
/// The forward-mode sweep every AD wrapper shares: seeds dual_state = u + εv,
/// runs `sweep(dual_state, dual_residual)` (the residual on dual numbers) and
/// reads jv = the ε parts, R'(u) v exactly to rounding. The two dual vectors
/// are the caller's workspace, resized only when the size changes.
template <class Sweep>
void forward_mode_product(const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& jv,
                          dual_vector& dual_state, dual_vector& dual_residual, Sweep&& sweep) {
  const Eigen::Index n = u.size();
  if (dual_state.size() != n) {
    dual_state.resize(n);
    dual_residual.resize(n);
  }
  for (Eigen::Index i = 0; i < n; ++i) {
    dual_state(i).value() = u(i);
    dual_state(i).derivatives()(0) = v(i);
  }
  sweep(static_cast<const dual_vector&>(dual_state), dual_residual);
  for (Eigen::Index i = 0; i < n; ++i) jv(i) = dual_residual(i).derivatives()(0);
}
}  // namespace detail

/// A scalar-templated residual with jacobian_product() by forward-mode AD.
/// Keeps two dual vectors as workspace; they are allocated on the first
/// product and reused while the size stays the same.
template <class Residual>
class residual_with_automatic_differentiation {
 public:
  explicit residual_with_automatic_differentiation(Residual residual) : m_residual(std::move(residual)) {}

  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) { m_residual(u, r); }

  /// jv = R'(u) v, exact to rounding; one residual sweep on dual numbers.
  void jacobian_product(const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
    detail::forward_mode_product(u, v, jv, m_dual_state, m_dual_residual,
                                 [this](const dual_vector& x, dual_vector& r) { m_residual(x, r); });
  }

  Residual& residual() { return m_residual; }

 private:
  Residual m_residual;
  dual_vector m_dual_state;
  dual_vector m_dual_residual;
};

/// with_automatic_differentiation(residual): J·v by forward-mode AD.
template <class Residual>
residual_with_automatic_differentiation<std::decay_t<Residual>> with_automatic_differentiation(Residual&& residual) {
  return residual_with_automatic_differentiation<std::decay_t<Residual>>(std::forward<Residual>(residual));
}

}  // namespace nkit

#endif  // NKIT_JACOBIAN_AUTOMATIC_DIFFERENTIATION_HPP
