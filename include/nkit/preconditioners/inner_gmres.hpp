#ifndef NKIT_PRECONDITIONERS_INNER_GMRES_HPP
#define NKIT_PRECONDITIONERS_INNER_GMRES_HPP

/// \file inner_gmres.hpp
/// An iterative preconditioner: z ≈ J⁻¹ r by a few inner GMRES iterations
/// on the assembled Jacobian (themselves preconditioned by `Inner`, point
/// Jacobi by default), stopped at inner_relative_tolerance or after
/// inner_iterations. The result depends nonlinearly on r, so M⁻¹ changes
/// from one application to the next: the class declares
/// changes_between_applications, and nkit's GMRES (and the Newton driver)
/// then use the flexible variant (Y. Saad, "A flexible inner-outer
/// preconditioned GMRES algorithm", SIAM J. Sci. Comput. 14 (1993)
/// 461–469), which stays valid for such preconditioners; standard GMRES is
/// not (its final update M⁻¹(V y) is not the combination of the M⁻¹ v_j the
/// Arnoldi process used).
///
/// Setup copies J (nnz doubles + indices) and sets up `Inner`; apply runs
/// the inner GMRES, whose workspace (inner_iterations + 3 vectors) is
/// allocated on the first application and reused. Setup status is that of `Inner`.
///
/// apply_transpose (for adjoint solves; only when `Inner` has apply_transpose):
/// GMRES is nonlinear in r, so M⁻¹ has no transpose to take. nkit gives the
/// same construction for the transposed system instead: z ≈ J⁻ᵀ r by the same
/// number of inner GMRES iterations on Jᵀ (products with the stored J
/// transposed), preconditioned by Inner's apply_transpose, to the same inner
/// tolerance. Like apply() it is a variable preconditioner (the transposed
/// solve then uses flexible GMRES, as the forward one does), and it equals the
/// exact transpose only in the limit of exact inner solves: with inner
/// relative residuals τ, |⟨M⁻¹v, w⟩ − ⟨v, M⁻ᵀw⟩| <= 2τ‖J⁻¹‖₂‖v‖‖w‖. It
/// shares apply()'s GMRES workspace (no extra allocation after the first call).

#include <Eigen/Core>
#include <cstddef>
#include <string>
#include <type_traits>
#include <utility>

#include "../core/linear_operator.hpp"
#include "../core/preconditioner.hpp"
#include "../detail/checks.hpp"
#include "../krylov/gmres.hpp"
#include "jacobi.hpp"

namespace nkit {

struct inner_gmres_settings {
  /// Inner Arnoldi steps per application (also the inner restart length).
  int inner_iterations = 5;
  /// The inner solve stops once ‖r − J z‖ <= inner_relative_tolerance·‖r‖.
  double inner_relative_tolerance = 1e-2;

  void validate(const std::string& prefix = "inner_gmres_settings") const {
    detail::require_at_least(prefix + ".inner_iterations", inner_iterations, 1);
    detail::require_non_negative(prefix + ".inner_relative_tolerance", inner_relative_tolerance);
  }
};

template <class Inner = jacobi_preconditioner>
class inner_gmres_preconditioner {
 public:
  static constexpr bool changes_between_applications = true;

  inner_gmres_preconditioner() : inner_gmres_preconditioner(inner_gmres_settings{}) {}
  explicit inner_gmres_preconditioner(inner_gmres_settings settings, Inner inner = Inner{})
      : m_settings((settings.validate(), settings)),
        m_inner(std::move(inner)),
        m_gmres(inner_gmres_options(settings)) {}

  setup_status build(const sparse_matrix& matrix) {
    m_matrix = matrix;
    return m_inner.build(m_matrix);
  }
  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    return build(context.assembled_jacobian());
  }

  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    if (z.size() != r.size()) z.resize(r.size());
    matrix_operator<sparse_matrix> op(m_matrix);
    m_last = m_gmres.solve(op, m_inner, r, z, m_settings.inner_relative_tolerance, initial_guess::zero);
  }

  /// z ≈ J⁻ᵀ r by inner GMRES on Jᵀ preconditioned by Inner's transpose (see the file comment).
  template <class I = Inner, class = std::enable_if_t<has_apply_transpose_v<I, Eigen::VectorXd>>>
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    if (z.size() != r.size()) z.resize(r.size());
    struct transposed_matrix {
      const sparse_matrix* matrix;
      void apply(const Eigen::VectorXd& in, Eigen::VectorXd& out) const { out.noalias() = matrix->transpose() * in; }
    };
    struct transposed_inner {
      I* inner;
      void apply(const Eigen::VectorXd& in, Eigen::VectorXd& out) { inner->apply_transpose(in, out); }
      bool changes_between_applications() const { return nkit::changes_between_applications(*inner); }
    };
    transposed_matrix op{&m_matrix};
    transposed_inner preconditioner{&m_inner};
    m_last = m_gmres.solve(op, preconditioner, r, z, m_settings.inner_relative_tolerance, initial_guess::zero);
  }

  std::size_t memory_bytes() const {
    return static_cast<std::size_t>(m_matrix.nonZeros()) * (sizeof(double) + sizeof(int)) +
           static_cast<std::size_t>(m_matrix.outerSize() + 1) * sizeof(int) + m_gmres.workspace_bytes() +
           preconditioner_memory_bytes(m_inner);
  }
  /// Result of the most recent inner solve.
  const linear_solve_result& last_inner_solve() const { return m_last; }
  Inner& inner() { return m_inner; }

 private:
  static gmres_settings inner_gmres_options(const inner_gmres_settings& settings) {
    gmres_settings options;
    options.restart_length = settings.inner_iterations;
    options.maximum_iterations = settings.inner_iterations;
    return options;
  }

  inner_gmres_settings m_settings;
  Inner m_inner;
  sparse_matrix m_matrix;
  gmres_solver<eigen_vector_space<double>> m_gmres;
  linear_solve_result m_last;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_INNER_GMRES_HPP
