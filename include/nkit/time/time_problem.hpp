#ifndef NKIT_TIME_TIME_PROBLEM_HPP
#define NKIT_TIME_TIME_PROBLEM_HPP

/// \file time/time_problem.hpp
/// The time-dependent problem concept, M du/dt = f(t, u), and the adapter for
/// the in-house form du/dt = −R(u) + S(t) built from a steady nkit residual.
///
/// A time-dependent problem is any object with
///   void rate(double t, const vector_type& u, vector_type& f)   f = f(t, u), f arrives sized like u
/// and, optionally (detected at compile time):
///   const mass_matrix<vector_type>& mass() const               M (identity when absent)
///   void assemble_rate_jacobian(double t, const vector_type& u, sparse_matrix& jacobian)
///                                                              ∂f/∂u assembled, for preconditioners
///   const sparsity_pattern& jacobian_pattern() const           pattern of ∂f/∂u (must hold the
///                                                              diagonal): colored differences
/// The stage equations of the steppers are built from these; J·v products
/// are finite differences of the stage residual unless told otherwise.

#include <type_traits>
#include <utility>

#include "../core/preconditioner.hpp"
#include "../jacobian/sparse_jacobian.hpp"
#include "mass_matrix.hpp"

namespace nkit {

namespace detail {
template <class System, class Vector, class = void>
struct has_rate : std::false_type {};
template <class System, class Vector>
struct has_rate<
    System, Vector,
    std::void_t<decltype(std::declval<System&>().rate(0.0, std::declval<const Vector&>(), std::declval<Vector&>()))>>
    : std::true_type {};

template <class System, class = void>
struct has_mass : std::false_type {};
template <class System>
struct has_mass<System, std::void_t<decltype(std::declval<const System&>().mass())>> : std::true_type {};

template <class System, class Vector, class = void>
struct has_rate_jacobian : std::false_type {};
template <class System, class Vector>
struct has_rate_jacobian<System, Vector,
                         std::void_t<decltype(std::declval<System&>().assemble_rate_jacobian(
                             0.0, std::declval<const Vector&>(), std::declval<sparse_matrix&>()))>> : std::true_type {};

template <class Source, class Vector, class = void>
struct is_source_function : std::false_type {};
template <class Source, class Vector>
struct is_source_function<Source, Vector, std::void_t<decltype(std::declval<Source&>()(0.0, std::declval<Vector&>()))>>
    : std::true_type {};
}  // namespace detail

/// True when System provides rate(t, u, f).
template <class System, class Vector>
inline constexpr bool is_time_problem_v = detail::has_rate<std::remove_reference_t<System>, Vector>::value;

/// No source term: S(t) = 0.
struct no_source {};

/// du/dt = −R(u) + S(t) with M du/dt on the left when a mass is given: the
/// form most in-house codes march ("relaxation" of a steady residual). R is an
/// nkit residual (operator()(u, r); its assemble_jacobian and jacobian_pattern
/// are forwarded, so preconditioners see the stage Jacobian M + γΔt R'(u)).
/// S is a callable source(t, s) writing S(t) into s (sized like u), or no_source.
/// Holds references: the residual and source must outlive it.
template <class Residual, class Source = no_source, class Vector = Eigen::VectorXd>
class residual_form {
 public:
  explicit residual_form(Residual& residual, Source source = {}, mass_matrix<Vector> mass = {})
      : m_residual(residual), m_source(std::move(source)), m_mass(std::move(mass)) {}

  void rate(double t, const Vector& u, Vector& f) {
    m_residual(u, f);
    f = -f;
    if constexpr (!std::is_same_v<Source, no_source>) {
      if (m_source_values.size() != u.size()) m_source_values.resize(u.size());  // first call only
      m_source(t, m_source_values);
      f += m_source_values;
    } else {
      static_cast<void>(t);
    }
  }

  const mass_matrix<Vector>& mass() const { return m_mass; }

  template <class R = Residual,
            std::enable_if_t<assembles_row_major_jacobian_v<R, Vector> || assembles_column_major_jacobian_v<R, Vector>,
                             int> = 0>
  void assemble_rate_jacobian(double /*t*/, const Vector& u, sparse_matrix& jacobian) {
    if constexpr (assembles_row_major_jacobian_v<R, Vector>) {
      m_residual.assemble_jacobian(u, jacobian);
    } else {
      column_major_sparse_matrix column_major;
      m_residual.assemble_jacobian(u, column_major);
      jacobian = column_major;
    }
    jacobian *= -1.0;
  }

  template <class R = Residual, std::enable_if_t<has_jacobian_pattern_v<R>, int> = 0>
  const sparsity_pattern& jacobian_pattern() const {
    return m_residual.jacobian_pattern();
  }

  Residual& residual() { return m_residual; }

 private:
  Residual& m_residual;
  Source m_source;
  mass_matrix<Vector> m_mass;
  Vector m_source_values;
};

/// Builds residual_form from a residual (and optionally a source and a mass).
template <class Residual, class Source = no_source>
residual_form<Residual, Source> make_residual_form(Residual& residual, Source source = {},
                                                   mass_matrix<Eigen::VectorXd> mass = {}) {
  return residual_form<Residual, Source>(residual, std::move(source), std::move(mass));
}

}  // namespace nkit

#endif  // NKIT_TIME_TIME_PROBLEM_HPP
