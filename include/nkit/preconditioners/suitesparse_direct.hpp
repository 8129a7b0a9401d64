#ifndef NKIT_PRECONDITIONERS_SUITESPARSE_DIRECT_HPP
#define NKIT_PRECONDITIONERS_SUITESPARSE_DIRECT_HPP

/// \file suitesparse_direct.hpp
/// SuiteSparse's UMFPACK and KLU sparse LU factorisations as direct
/// preconditioners, through Eigen's UmfPackLU and KLU wrappers. Optional:
/// needs libsuitesparse-dev. nkit's CMake detects it at configure time and
/// then defines NKIT_HAS_SUITESPARSE=1 and links the SuiteSparse libraries
/// for nkit's own tests and benchmarks (target nkit_suitesparse); users link
/// umfpack, klu, btf, amd, colamd and suitesparseconfig themselves. Same
/// setup, reuse and fallback rules as sparse_direct.hpp. memory_bytes()
/// counts only nkit's column-major copy of J: the wrappers do not expose the
/// factor size.
///
/// apply_transpose (z = M⁻ᵀ r, adjoint solves) solves with the transposed
/// factors of the same factorisation: UMFPACK's umfpack_di_solve with the
/// system UMFPACK_At (Aᵀx = b, with UMFPACK's default iterative refinement
/// against Aᵀ, as the forward solve refines against A), KLU's klu_tsolve.
/// Eigen's wrappers keep their factor handles protected, so nkit uses
/// subclasses that add solve_transposed(r, z); both are used exactly like
/// the wrappers. Each transposed solve fills z (resized when its size is
/// wrong) and throws std::runtime_error naming the library's status when
/// the library reports an error (it does not after a successful setup).

#include <Eigen/KLUSupport>
#include <Eigen/UmfPackSupport>
#include <stdexcept>
#include <string>

#include "sparse_direct.hpp"

namespace nkit {

namespace detail {

using suitesparse_matrix = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;

/// Eigen::UmfPackLU with a solve by the transposed factors.
class transposable_umfpack_lu : public Eigen::UmfPackLU<suitesparse_matrix> {
 public:
  /// z = A⁻ᵀ r (umfpack_di_solve with UMFPACK_At).
  void solve_transposed(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if (z.size() != r.size()) z.resize(r.size());
    const int status =
        umfpack_di_solve(UMFPACK_At, mp_matrix.outerIndexPtr(), mp_matrix.innerIndexPtr(), mp_matrix.valuePtr(),
                         z.data(), r.data(), m_numeric, m_control.data(), m_umfpackInfo.data());
    if (status != UMFPACK_OK) {
      throw std::runtime_error("nkit: UMFPACK's transposed solve failed with status " + std::to_string(status));
    }
  }
};

/// Eigen::KLU with a solve by the transposed factors.
class transposable_klu : public Eigen::KLU<suitesparse_matrix> {
 public:
  /// z = A⁻ᵀ r (klu_tsolve, in place on z).
  void solve_transposed(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    z = r;
    const int solved =
        klu_tsolve(m_symbolic, m_numeric, static_cast<int>(z.size()), 1, z.data(), const_cast<klu_common*>(&m_common));
    if (solved == 0) {
      throw std::runtime_error("nkit: KLU's transposed solve failed with status " + std::to_string(m_common.status));
    }
  }
};

}  // namespace detail

/// SuiteSparse UMFPACK (multifrontal LU) as the preconditioner.
using umfpack_direct_preconditioner = direct_factorization_preconditioner<detail::transposable_umfpack_lu>;

/// SuiteSparse KLU (LU for circuit-like matrices, BTF + AMD ordering) as the preconditioner.
using klu_direct_preconditioner = direct_factorization_preconditioner<detail::transposable_klu>;

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_SUITESPARSE_DIRECT_HPP
