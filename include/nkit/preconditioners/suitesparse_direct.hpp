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

#include <Eigen/KLUSupport>
#include <Eigen/UmfPackSupport>

#include "sparse_direct.hpp"

namespace nkit {

/// SuiteSparse UMFPACK (multifrontal LU) as the preconditioner.
using umfpack_direct_preconditioner =
    direct_factorization_preconditioner<Eigen::UmfPackLU<Eigen::SparseMatrix<double, Eigen::ColMajor, int>>>;

/// SuiteSparse KLU (LU for circuit-like matrices, BTF + AMD ordering) as the preconditioner.
using klu_direct_preconditioner =
    direct_factorization_preconditioner<Eigen::KLU<Eigen::SparseMatrix<double, Eigen::ColMajor, int>>>;

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_SUITESPARSE_DIRECT_HPP
