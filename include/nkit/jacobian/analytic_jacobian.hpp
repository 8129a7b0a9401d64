#ifndef NKIT_JACOBIAN_ANALYTIC_JACOBIAN_HPP
#define NKIT_JACOBIAN_ANALYTIC_JACOBIAN_HPP

/// \file jacobian/analytic_jacobian.hpp
/// Attach a user-supplied Jacobian-vector product to a residual.

#include <type_traits>
#include <utility>

namespace nkit {

/// A residual together with the user's exact product jv = R'(u) v.
/// Calls forward to the wrapped objects; no copies of vectors are made.
template <class Residual, class JacobianProduct>
class residual_with_jacobian_product {
 public:
  residual_with_jacobian_product(Residual residual, JacobianProduct product)
      : m_residual(std::move(residual)), m_product(std::move(product)) {}

  template <class Vector>
  void operator()(const Vector& u, Vector& r) {
    m_residual(u, r);
  }
  template <class Vector>
  void jacobian_product(const Vector& u, const Vector& v, Vector& jv) {
    m_product(u, v, jv);
  }
  Residual& residual() { return m_residual; }

 private:
  Residual m_residual;
  JacobianProduct m_product;
};

/// with_jacobian_product(residual, product): `product(u, v, jv)` must write
/// jv = R'(u) v. Pass std::ref(x) to avoid copying a large functor.
template <class Residual, class JacobianProduct>
residual_with_jacobian_product<std::decay_t<Residual>, std::decay_t<JacobianProduct>> with_jacobian_product(
    Residual&& residual, JacobianProduct&& product) {
  return {std::forward<Residual>(residual), std::forward<JacobianProduct>(product)};
}

}  // namespace nkit

#endif  // NKIT_JACOBIAN_ANALYTIC_JACOBIAN_HPP
