#ifndef NKIT_PRECONDITIONERS_OPERATOR_SPLIT_PASS_HPP
#define NKIT_PRECONDITIONERS_OPERATOR_SPLIT_PASS_HPP

/// \file preconditioners/operator_split_pass.hpp
/// Physics-based preconditioning: one pass of the user's own operator-split
/// loop, linearised at the current Newton state, used as the preconditioner
/// of the coupled Newton–Krylov solve (D.A. Knoll & D.E. Keyes,
/// "Jacobian-free Newton–Krylov methods: a survey of approaches and
/// applications", J. Comput. Phys. 193 (2004) 357–397, §3.3; V.A. Mousseau,
/// D.A. Knoll & W.J. Rider, "Physics-based preconditioning and the
/// Newton–Krylov method for non-equilibrium radiation diffusion",
/// J. Comput. Phys. 160 (2000) 743–765).
///
/// The user gives two callables:
///   set_up_pass(context)   at the state context.state (and, when the problem
///                          can assemble it, context.assembled_jacobian()):
///                          builds the split operators — freezes coefficients,
///                          factors the per-field matrices. Returns
///                          setup_status or void (void counts as ready).
///   apply_pass(r, z)       z ≈ J⁻¹ r by one linearised split pass: solve
///                          field 1 for its correction with field 2 frozen,
///                          then field 2 with field 1's correction inserted
///                          (any order and number of fields). z arrives sized
///                          like r and must stay that size.
/// With exact sub-solves and the exact Jacobian blocks, a pass in field order
/// is forward block Gauss–Seidel, i.e. field_split_form::block_lower_triangular
/// of field_split.hpp; the adapter is for the case where the old loop's own
/// solvers, frozen coefficients or eliminations are the better (or the only
/// available) approximation.
///
/// The adapter adds to make_preconditioner(apply, setup) of
/// core/preconditioner.hpp what a pass needs: both callables are required,
/// apply() before a successful setup() is refused, r must have the size of
/// the state at setup, z is sized for the pass and its size is checked after,
/// and the number of passes is counted. A pass whose sub-solves are inner
/// iterations to a tolerance is not a fixed linear map: construct with
/// split_pass_linearity::varies_between_applications so that GMRES uses its
/// flexible variant. Serial Eigen vectors. No allocation in apply() after the
/// first call (the user's pass aside).

#include <Eigen/Core>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>

#include "../core/eigen_vector_space.hpp"
#include "../core/preconditioner.hpp"

namespace nkit {

/// Whether one pass is the same linear map of r every time (exact or
/// fixed-iteration-count sub-solves) or not (sub-solves to a tolerance).
enum class split_pass_linearity { fixed_linear_map, varies_between_applications };

class operator_split_pass_preconditioner {
 public:
  using context_type = preconditioner_context<eigen_vector_space<double>>;
  using setup_function = std::function<setup_status(const context_type& context)>;
  using pass_function = std::function<void(const Eigen::VectorXd& r, Eigen::VectorXd& z)>;

  /// Throws std::invalid_argument naming the missing callable when either is
  /// empty (a null std::function, a null function pointer or nullptr).
  template <class SetUpPass, class ApplyPass>
  operator_split_pass_preconditioner(SetUpPass&& set_up_pass, ApplyPass&& apply_pass,
                                     split_pass_linearity linearity = split_pass_linearity::fixed_linear_map)
      : m_set_up(adapt_setup(std::forward<SetUpPass>(set_up_pass))),
        m_apply(adapt_pass(std::forward<ApplyPass>(apply_pass))),
        m_linearity(linearity) {
    if (!m_set_up) {
      throw std::invalid_argument(
          "nkit: operator_split_pass_preconditioner needs a set_up_pass callable (got an empty one)");
    }
    if (!m_apply) {
      throw std::invalid_argument(
          "nkit: operator_split_pass_preconditioner needs an apply_pass callable (got an empty one)");
    }
  }

  /// Calls set_up_pass at the context's state; remembers the state's size.
  setup_status setup(const context_type& context) {
    m_ready = false;
    m_size = context.state.size();
    const setup_status status = m_set_up(context);
    m_ready = status != setup_status::failed;
    return status;
  }

  /// z = one pass applied to r. Throws std::logic_error before a successful
  /// setup() and std::invalid_argument when r does not have the state's size
  /// or the pass left z with another size.
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    if (!m_ready) {
      throw std::logic_error("nkit: operator_split_pass_preconditioner: apply() needs a successful setup() first");
    }
    if (r.size() != m_size) {
      throw std::invalid_argument("nkit: operator_split_pass_preconditioner: r has " + std::to_string(r.size()) +
                                  " entries, the state at setup had " + std::to_string(m_size));
    }
    if (z.size() != r.size()) z.resize(r.size());
    m_apply(r, z);
    ++m_passes;
    if (z.size() != r.size()) {
      throw std::invalid_argument("nkit: operator_split_pass_preconditioner: apply_pass left z with " +
                                  std::to_string(z.size()) + " entries; it must keep r's " + std::to_string(r.size()));
    }
  }

  bool changes_between_applications() const { return m_linearity == split_pass_linearity::varies_between_applications; }
  /// Passes applied since construction.
  std::int64_t passes() const { return m_passes; }

 private:
  template <class Callable>
  static bool is_empty(const Callable& callable) {
    if constexpr (std::is_same_v<Callable, std::nullptr_t>) {
      return true;
    } else if constexpr (std::is_pointer_v<Callable> || std::is_constructible_v<bool, const Callable&>) {
      return !static_cast<bool>(callable);
    } else {
      static_cast<void>(callable);
      return false;
    }
  }

  template <class SetUpPass>
  static setup_function adapt_setup(SetUpPass&& set_up_pass) {
    using callable = std::decay_t<SetUpPass>;
    if constexpr (std::is_same_v<callable, std::nullptr_t>) {
      return {};
    } else {
      static_assert(std::is_invocable_v<callable&, const context_type&>,
                    "nkit: set_up_pass must be callable as set_up_pass(const preconditioner_context<>&)");
      if (is_empty(set_up_pass)) return {};
      if constexpr (std::is_same_v<std::invoke_result_t<callable&, const context_type&>, setup_status>) {
        return setup_function(std::forward<SetUpPass>(set_up_pass));
      } else {
        return [function = callable(std::forward<SetUpPass>(set_up_pass))](const context_type& context) mutable {
          function(context);
          return setup_status::ready;
        };
      }
    }
  }

  template <class ApplyPass>
  static pass_function adapt_pass(ApplyPass&& apply_pass) {
    using callable = std::decay_t<ApplyPass>;
    if constexpr (std::is_same_v<callable, std::nullptr_t>) {
      return {};
    } else {
      static_assert(std::is_invocable_v<callable&, const Eigen::VectorXd&, Eigen::VectorXd&>,
                    "nkit: apply_pass must be callable as apply_pass(const Eigen::VectorXd& r, Eigen::VectorXd& z)");
      if (is_empty(apply_pass)) return {};
      return pass_function(std::forward<ApplyPass>(apply_pass));
    }
  }

  setup_function m_set_up;
  pass_function m_apply;
  split_pass_linearity m_linearity;
  Eigen::Index m_size = 0;
  bool m_ready = false;
  std::int64_t m_passes = 0;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_OPERATOR_SPLIT_PASS_HPP
