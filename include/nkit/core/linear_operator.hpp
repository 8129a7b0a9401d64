#ifndef NKIT_CORE_LINEAR_OPERATOR_HPP
#define NKIT_CORE_LINEAR_OPERATOR_HPP

/// \file core/linear_operator.hpp
/// The linear-operator concept used by GMRES, and the result of a linear solve.
///
/// A linear operator is any object with `apply(const vector_type& in,
/// vector_type& out)` writing out = A in into a vector already sized like
/// `in`. nkit's Jacobian-vector products are linear operators; so is a
/// wrapper around an assembled matrix (matrix_operator below).

#include <Eigen/Core>
#include <string_view>
#include <type_traits>
#include <utility>

namespace nkit {

namespace detail {
template <class Operator, class Vector, class = void>
struct is_linear_operator_impl : std::false_type {};
template <class Operator, class Vector>
struct is_linear_operator_impl<
    Operator, Vector,
    std::void_t<decltype(std::declval<Operator&>().apply(std::declval<const Vector&>(), std::declval<Vector&>()))>>
    : std::true_type {};
}  // namespace detail

/// True when `Operator` has apply(const Vector& in, Vector& out).
template <class Operator, class Vector>
inline constexpr bool is_linear_operator_v = detail::is_linear_operator_impl<Operator, Vector>::value;

/// How a linear solve ended.
enum class linear_solve_status {
  converged,  ///< ‖b − A x‖ <= relative_tolerance · ‖b‖ (includes an exact "happy" breakdown)
  maximum_iterations_reached,  ///< maximum_iterations spent
  stagnated,                   ///< a whole restart cycle gave no reduction of the residual
  non_finite,                  ///< the operator or preconditioner produced NaN/Inf; x holds the last finite iterate
  monitor_requested_stop       ///< the per-iteration monitor asked to stop
};

constexpr std::string_view name(linear_solve_status status) {
  switch (status) {
    case linear_solve_status::converged:
      return "converged";
    case linear_solve_status::maximum_iterations_reached:
      return "maximum_iterations_reached";
    case linear_solve_status::stagnated:
      return "stagnated";
    case linear_solve_status::non_finite:
      return "non_finite";
    case linear_solve_status::monitor_requested_stop:
      return "monitor_requested_stop";
  }
  return "unknown";
}

/// Result of one linear solve. Norms are Euclidean norms of the
/// unpreconditioned residual b − A x (right preconditioning makes the
/// monitored GMRES residual equal to it, up to rounding).
struct linear_solve_result {
  linear_solve_status status = linear_solve_status::converged;
  int iterations = 0;              ///< Arnoldi steps (one operator + one preconditioner application each)
  int restarts = 0;                ///< completed restart cycles after the first
  long operator_applications = 0;  ///< includes the residual recomputed at each restart
  long preconditioner_applications = 0;
  double right_hand_side_norm = 0.0;   ///< ‖b‖
  double initial_residual_norm = 0.0;  ///< ‖b − A x0‖
  /// ‖b − A x‖: the Givens recurrence's estimate (recycling GMRES: the true residual when converged).
  double final_residual_norm = 0.0;
  double orthogonalization_seconds = 0.0;  ///< wall time spent in Gram–Schmidt
  /// Recycling GMRES only: cycles whose harmonic Ritz step found no usable
  /// vectors (Ḡ numerically rank deficient, the eigenvalue iteration failed, or
  /// Ḡ P rank deficient), so the previous recycled subspace was kept (cycles
  /// left out by minimum_cycle_steps_for_update are not counted).
  int recycle_updates_skipped = 0;
  /// Recycling GMRES only: recomputations of C = A M⁻¹ Ũ in this solve (k
  /// operator and preconditioner applications each): at the start for a
  /// changed operator, and after each true-residual mismatch.
  int recycled_space_refreshes = 0;
  /// Recycling GMRES only: times the Givens estimate met the target but the
  /// true residual b − A x did not.
  int true_residual_mismatches = 0;
  bool converged() const { return status == linear_solve_status::converged; }
  /// final_residual_norm / ‖b‖ (0 when b = 0).
  double relative_residual() const {
    return right_hand_side_norm > 0.0 ? final_residual_norm / right_hand_side_norm : 0.0;
  }
};

/// Wraps any Eigen matrix expression with operator* as a linear operator.
template <class Matrix>
class matrix_operator {
 public:
  explicit matrix_operator(const Matrix& matrix) : m_matrix(&matrix) {}
  template <class Vector>
  void apply(const Vector& in, Vector& out) const {
    out.noalias() = (*m_matrix) * in;
  }

 private:
  const Matrix* m_matrix;
};

}  // namespace nkit

#endif  // NKIT_CORE_LINEAR_OPERATOR_HPP
