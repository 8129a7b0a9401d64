#ifndef NKIT_PRECONDITIONERS_INCOMPLETE_LUT_HPP
#define NKIT_PRECONDITIONERS_INCOMPLETE_LUT_HPP

/// \file incomplete_lut.hpp
/// ILUT (dual-threshold incomplete LU: Y. Saad, "ILUT: a dual threshold
/// incomplete LU factorization", Numer. Linear Algebra Appl. 1 (1994)
/// 387–402) through Eigen's IncompleteLUT, which orders the unknowns with
/// approximate minimum degree on the symmetrised pattern. Entries smaller
/// than drop_tolerance × (row norm) are dropped, and at most
/// fill_factor × nnz(J)/n entries are kept per row in each of L and U.
///
/// Setup: the ordering (Eigen's analyzePattern) runs only when the pattern
/// of J changes; each setup refactorises (factorize). Apply allocates
/// (Eigen permutes through temporaries). memory_bytes() is an upper bound
/// from the fill limit: Eigen does not expose the factor's size.
///
/// apply_transpose (z = M⁻ᵀ r, for adjoint solves): Eigen applies
/// M⁻¹ = P U⁻¹ L⁻¹ P⁻¹ (P the fill-reducing permutation), so
/// M⁻ᵀ = P L⁻ᵀ U⁻ᵀ P⁻¹; nkit reads the factor and permutations through a
/// subclass of Eigen::IncompleteLUT (they are protected members there) and
/// solves with the transposed triangular views. Allocates like apply.
///
/// Fallback (setup_status::ready_with_fallback): Eigen replaces zero pivots
/// itself (by √drop_tolerance × row norm); when it reports a failure (an
/// empty row) nkit builds point Jacobi (jacobi.hpp) instead and
/// uses_jacobi_fallback() is true. Non-finite values give setup_status::failed.

#include <Eigen/IterativeLinearSolvers>
#include <Eigen/SparseCore>
#include <cstddef>
#include <memory>
#include <string>

#include "../core/preconditioner.hpp"
#include "../detail/checks.hpp"
#include "../detail/sparse_helpers.hpp"
#include "jacobi.hpp"

namespace nkit {

struct incomplete_lut_settings {
  /// Relative drop tolerance (entries below drop_tolerance·‖row‖ are dropped).
  double drop_tolerance = 1e-4;
  /// Fill allowed per row of L and of U, as a multiple of the average row length of J.
  int fill_factor = 10;

  void validate(const std::string& prefix = "incomplete_lut_settings") const {
    detail::require_non_negative(prefix + ".drop_tolerance", drop_tolerance);
    detail::require_at_least(prefix + ".fill_factor", fill_factor, 1);
  }
};

namespace detail {
/// Eigen::IncompleteLUT with read access to its factor and permutations.
class readable_incomplete_lut : public Eigen::IncompleteLUT<double, int> {
 public:
  /// z = M⁻ᵀ r for M⁻¹ r = P U⁻¹ L⁻¹ P⁻¹ r (Eigen's solve).
  void solve_transposed(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    z = m_P.transpose() * r;  // P⁻ᵀ = P, Pᵀ = P⁻¹
    z = m_lu.template triangularView<Eigen::Upper>().transpose().solve(z);
    z = m_lu.template triangularView<Eigen::UnitLower>().transpose().solve(z);
    z = m_Pinv.transpose() * z;
  }
};
}  // namespace detail

class incomplete_lut_preconditioner {
 public:
  incomplete_lut_preconditioner() : incomplete_lut_preconditioner(incomplete_lut_settings{}) {}
  explicit incomplete_lut_preconditioner(incomplete_lut_settings settings) : m_settings(settings) {
    m_settings.validate();
  }

  setup_status build(const sparse_matrix& matrix) {
    detail::require_square(matrix, "incomplete_lut_preconditioner");
    if (!detail::stored_values_finite(matrix)) return setup_status::failed;
    if (!m_factor) {
      m_factor = std::make_unique<detail::readable_incomplete_lut>();
      m_factor->setDroptol(m_settings.drop_tolerance);
      m_factor->setFillfactor(m_settings.fill_factor);
    }
    if (!m_structure.matches(matrix)) {
      m_factor->analyzePattern(matrix);
      m_structure.remember(matrix);
      ++m_analyses;
    }
    m_factor->factorize(matrix);
    m_nonzeros = static_cast<std::size_t>(matrix.nonZeros());
    m_jacobi_fallback = m_factor->info() != Eigen::Success;
    if (!m_jacobi_fallback) return setup_status::ready;
    m_structure.forget();
    return m_jacobi.build(matrix) == setup_status::failed ? setup_status::failed : setup_status::ready_with_fallback;
  }

  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    return build(context.assembled_jacobian());
  }

  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if (m_jacobi_fallback) {
      m_jacobi.apply(r, z);
    } else {
      z = m_factor->solve(r);
    }
  }

  /// z = M⁻ᵀ r (see the file comment).
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if (m_jacobi_fallback) {
      m_jacobi.apply_transpose(r, z);
    } else {
      m_factor->solve_transposed(r, z);
    }
  }

  /// Upper bound: (2·fill_factor + 1)·nnz(J) entries of 12 bytes, plus the structure copy.
  std::size_t memory_bytes() const {
    return (2 * static_cast<std::size_t>(m_settings.fill_factor) + 1) * m_nonzeros * (sizeof(double) + sizeof(int)) +
           m_structure.bytes() + m_jacobi.memory_bytes();
  }
  bool uses_jacobi_fallback() const { return m_jacobi_fallback; }
  std::int64_t symbolic_analyses() const { return m_analyses; }

 private:
  incomplete_lut_settings m_settings;
  std::unique_ptr<detail::readable_incomplete_lut> m_factor;  // Eigen's class is not movable; this keeps us movable
  detail::structure_fingerprint m_structure;
  jacobi_preconditioner m_jacobi;
  std::size_t m_nonzeros = 0;
  bool m_jacobi_fallback = false;
  std::int64_t m_analyses = 0;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_INCOMPLETE_LUT_HPP
