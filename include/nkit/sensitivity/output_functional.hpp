#ifndef NKIT_SENSITIVITY_OUTPUT_FUNCTIONAL_HPP
#define NKIT_SENSITIVITY_OUTPUT_FUNCTIONAL_HPP

/// \file sensitivity/output_functional.hpp
/// The output J(u, p) whose derivative dJ/dp a sensitivity computes (a peak
/// temperature, a wall heat flux, ...), and its partial gradients.
///
/// Required: `double functional(const Eigen::VectorXd& u, const Eigen::VectorXd& p)`.
/// Optional members, detected at compile time:
///   void state_gradient(u, p, g)       g = (∂J/∂u)ᵀ, n entries
///   void parameter_gradient(u, p, g)   g = (∂J/∂p)ᵀ, m entries
/// Without them nkit takes central differences per component with the step
/// h_i = ε^(1/3) (1 + |x_i|) (common practice: balances the O(h²) truncation
/// against the O(ε/h) rounding error), 2 evaluations of J per component:
/// cheap for the usual outputs (a few entries of u), 2n evaluations for ∂J/∂u.

#include <Eigen/Core>
#include <cmath>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>

namespace nkit {

namespace detail {
template <class Functional, class = void>
struct has_state_gradient : std::false_type {};
template <class Functional>
struct has_state_gradient<Functional, std::void_t<decltype(std::declval<Functional&>().state_gradient(
                                          std::declval<const Eigen::VectorXd&>(),
                                          std::declval<const Eigen::VectorXd&>(), std::declval<Eigen::VectorXd&>()))>>
    : std::true_type {};
template <class Functional, class = void>
struct has_parameter_gradient : std::false_type {};
template <class Functional>
struct has_parameter_gradient<Functional,
                              std::void_t<decltype(std::declval<Functional&>().parameter_gradient(
                                  std::declval<const Eigen::VectorXd&>(), std::declval<const Eigen::VectorXd&>(),
                                  std::declval<Eigen::VectorXd&>()))>> : std::true_type {};
}  // namespace detail

/// True when `Functional` can be called as double(functional(u, p)).
template <class Functional>
inline constexpr bool is_output_functional_v = std::is_convertible_v<
    std::invoke_result_t<std::remove_reference_t<Functional>&, const Eigen::VectorXd&, const Eigen::VectorXd&>, double>;

namespace detail {

/// The two partial gradients of J at (u, p); counts J evaluations.
template <class Functional>
class functional_gradients {
 public:
  /// g = (∂J/∂u)ᵀ: the functional's state_gradient or central differences.
  void state(Functional& functional, const Eigen::VectorXd& u, const Eigen::VectorXd& p, Eigen::VectorXd& g) {
    g.resize(u.size());
    if constexpr (has_state_gradient<Functional>::value) {
      functional.state_gradient(u, p, g);
      check_size(g, u.size(), "state_gradient");
    } else {
      m_work = u;
      differences(g, [&](const Eigen::VectorXd& x) { return value(functional, x, p); });
    }
  }
  /// g = (∂J/∂p)ᵀ: the functional's parameter_gradient or central differences.
  void parameters(Functional& functional, const Eigen::VectorXd& u, const Eigen::VectorXd& p, Eigen::VectorXd& g) {
    g.resize(p.size());
    if constexpr (has_parameter_gradient<Functional>::value) {
      functional.parameter_gradient(u, p, g);
      check_size(g, p.size(), "parameter_gradient");
    } else {
      m_work = p;
      differences(g, [&](const Eigen::VectorXd& q) { return value(functional, u, q); });
    }
  }
  std::int64_t evaluations() const { return m_evaluations; }

 private:
  double value(Functional& functional, const Eigen::VectorXd& u, const Eigen::VectorXd& p) {
    ++m_evaluations;
    return static_cast<double>(functional(u, p));
  }
  /// Central differences of f over the entries of m_work (restored after each).
  template <class F>
  void differences(Eigen::VectorXd& g, F&& f) {
    const double root = std::cbrt(std::numeric_limits<double>::epsilon());
    for (Eigen::Index i = 0; i < m_work.size(); ++i) {
      const double x = m_work(i);
      const double h = root * (1.0 + std::abs(x));
      m_work(i) = x + h;
      const double forward = f(m_work);
      m_work(i) = x - h;
      const double backward = f(m_work);
      m_work(i) = x;
      g(i) = (forward - backward) / (2.0 * h);
    }
  }
  static void check_size(const Eigen::VectorXd& g, Eigen::Index expected, const char* member) {
    if (g.size() != expected) {
      throw std::invalid_argument(std::string("nkit: the output functional's ") + member + " wrote " +
                                  std::to_string(g.size()) + " entries, expected " + std::to_string(expected));
    }
  }

  Eigen::VectorXd m_work;
  std::int64_t m_evaluations = 0;
};

}  // namespace detail

}  // namespace nkit

#endif  // NKIT_SENSITIVITY_OUTPUT_FUNCTIONAL_HPP
