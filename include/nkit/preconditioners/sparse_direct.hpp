#ifndef NKIT_PRECONDITIONERS_SPARSE_DIRECT_HPP
#define NKIT_PRECONDITIONERS_SPARSE_DIRECT_HPP

/// \file sparse_direct.hpp
/// A sparse direct factorisation used as the preconditioner: M = J, so
/// with the exact Jacobian and exact J·v products right-preconditioned GMRES
/// converges in one iteration and the solver performs exact Newton (set the
/// forcing term as you like: the linear solve is exact after one step).
///
/// direct_factorization_preconditioner<Factorization> accepts any Eigen
/// sparse factorisation with analyzePattern / factorize / info / solve on a
/// column-major matrix; sparse_direct_preconditioner is Eigen::SparseLU with
/// COLAMD ordering. suitesparse_direct.hpp adds UMFPACK and KLU.
///
/// Setup: J is copied to column-major storage; the symbolic analysis
/// (ordering, elimination structure) runs only when the pattern of J
/// changes, every setup refactorises numerically. Apply: two triangular
/// solves with the factors (allocates temporaries inside Eigen).
///
/// apply_transpose (z = M⁻ᵀ r, for adjoint solves) exists when the
/// factorisation offers transpose().solve() (Eigen::SparseLU does) or a
/// member solve_transposed(r, z) (the SuiteSparse factorisations of
/// suitesparse_direct.hpp): two triangular solves with the same factors, no
/// refactorisation.
///
/// Fallback (setup_status::ready_with_fallback): when the factorisation
/// reports failure (J singular to working precision), nkit factorises
/// J + δI with δ = √ε·‖J‖∞ instead (shifted_by() returns δ); when that also
/// fails, or J has non-finite values, setup returns setup_status::failed.

#include <Eigen/SparseCore>
#include <Eigen/SparseLU>
#include <cmath>
#include <cstddef>
#include <limits>
#include <memory>
#include <type_traits>
#include <utility>

#include "../core/preconditioner.hpp"
#include "../detail/sparse_helpers.hpp"

namespace nkit {

namespace detail {
template <class F, class = void>
struct has_factor_nonzeros : std::false_type {};
template <class F>
struct has_factor_nonzeros<F, std::void_t<decltype(std::declval<const F&>().nnzL() + std::declval<const F&>().nnzU())>>
    : std::true_type {};

/// Whether a factorisation solves with its transpose: transpose().solve(r)
/// (Eigen::SparseLU) or solve_transposed(r, z) (suitesparse_direct.hpp).
template <class F, class = void>
struct has_transpose_view_solve : std::false_type {};
template <class F>
struct has_transpose_view_solve<
    F, std::void_t<decltype(std::declval<F&>().transpose().solve(std::declval<const Eigen::VectorXd&>()))>>
    : std::true_type {};
template <class F, class = void>
struct has_solve_transposed : std::false_type {};
template <class F>
struct has_solve_transposed<F, std::void_t<decltype(std::declval<const F&>().solve_transposed(
                                   std::declval<const Eigen::VectorXd&>(), std::declval<Eigen::VectorXd&>()))>>
    : std::true_type {};
template <class F>
inline constexpr bool can_solve_transposed_v = has_transpose_view_solve<F>::value || has_solve_transposed<F>::value;
}  // namespace detail

template <class Factorization>
class direct_factorization_preconditioner {
 public:
  using matrix_type = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;

  setup_status build(const sparse_matrix& matrix) {
    detail::require_square(matrix, "direct_factorization_preconditioner");
    if (!detail::stored_values_finite(matrix)) return setup_status::failed;
    if (!m_factor) m_factor = std::make_unique<Factorization>();
    m_matrix = matrix;  // compressed rows → compressed columns
    m_matrix.makeCompressed();
    m_shift = 0.0;
    if (!m_structure.matches(m_matrix)) {
      m_factor->analyzePattern(m_matrix);
      m_structure.remember(m_matrix);
      ++m_analyses;
    }
    m_factor->factorize(m_matrix);
    if (m_factor->info() == Eigen::Success) return setup_status::ready;

    // Fallback: J + δ I (a new pattern when the diagonal was incomplete).
    double norm = 0.0;
    for (Eigen::Index i = 0; i < matrix.rows(); ++i) {
      double row = 0.0;
      for (sparse_matrix::InnerIterator entry(matrix, i); entry; ++entry) row += std::abs(entry.value());
      norm = std::max(norm, row);
    }
    m_shift = std::sqrt(std::numeric_limits<double>::epsilon()) * (norm > 0.0 ? norm : 1.0);
    matrix_type identity(matrix.rows(), matrix.cols());
    identity.setIdentity();
    m_matrix = m_matrix + m_shift * identity;
    m_matrix.makeCompressed();
    m_structure.forget();
    m_factor->analyzePattern(m_matrix);
    ++m_analyses;
    m_factor->factorize(m_matrix);
    return m_factor->info() == Eigen::Success ? setup_status::ready_with_fallback : setup_status::failed;
  }

  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    return build(context.assembled_jacobian());
  }

  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { z = m_factor->solve(r); }

  /// z = M⁻ᵀ r with the same factors; only when Factorization has
  /// transpose().solve() or solve_transposed(r, z).
  template <class F = Factorization, std::enable_if_t<detail::can_solve_transposed_v<F>, int> = 0>
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if constexpr (detail::has_solve_transposed<F>::value) {
      m_factor->solve_transposed(r, z);
    } else {
      z = m_factor->transpose().solve(r);
    }
  }

  /// Factor storage (L and U nonzeros, 12 bytes each, when the factorisation
  /// reports them) plus the column-major copy of J.
  std::size_t memory_bytes() const {
    std::size_t bytes = static_cast<std::size_t>(m_matrix.nonZeros()) * (sizeof(double) + sizeof(int)) +
                        static_cast<std::size_t>(m_matrix.outerSize() + 1) * sizeof(int) + m_structure.bytes();
    if constexpr (detail::has_factor_nonzeros<Factorization>::value) {
      if (m_factor) {
        bytes += static_cast<std::size_t>(m_factor->nnzL() + m_factor->nnzU()) * (sizeof(double) + sizeof(int));
      }
    }
    return bytes;
  }
  /// δ of the fallback J + δI in the last setup (0 when none was needed).
  double shifted_by() const { return m_shift; }
  /// How often the symbolic analysis ran.
  std::int64_t symbolic_analyses() const { return m_analyses; }
  /// The Eigen factorisation object (null before the first setup).
  const Factorization* factorization() const { return m_factor.get(); }

 private:
  std::unique_ptr<Factorization> m_factor;  // Eigen's factorisations are not copyable; this keeps us movable
  matrix_type m_matrix;
  detail::structure_fingerprint m_structure;
  double m_shift = 0.0;
  std::int64_t m_analyses = 0;
};

/// Exact Newton through the Newton–Krylov driver: Eigen::SparseLU, COLAMD ordering.
using sparse_direct_preconditioner = direct_factorization_preconditioner<
    Eigen::SparseLU<Eigen::SparseMatrix<double, Eigen::ColMajor, int>, Eigen::COLAMDOrdering<int>>>;

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_SPARSE_DIRECT_HPP
