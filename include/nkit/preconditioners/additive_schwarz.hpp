#ifndef NKIT_PRECONDITIONERS_ADDITIVE_SCHWARZ_HPP
#define NKIT_PRECONDITIONERS_ADDITIVE_SCHWARZ_HPP

/// \file additive_schwarz.hpp
/// Non-overlapping additive Schwarz, i.e. block Jacobi with one block per
/// rank: M⁻¹ = Σ_ranks R_rᵀ A_r⁻¹ R_r, where A_r is the diagonal block of the
/// Jacobian coupling the rank's own unknowns and A_r⁻¹ is replaced by a local
/// incomplete LU factorisation or a local sparse direct solve.
/// Method: B.F. Smith, P.E. Bjørstad & W.D. Gropp, "Domain Decomposition:
/// Parallel Multilevel Methods for Elliptic Partial Differential Equations",
/// Cambridge University Press 1996 (additive Schwarz, chapter 1; zero overlap
/// gives block Jacobi).
///
/// apply() never communicates: each rank solves with its own block. The
/// number of Krylov iterations therefore grows with the number of ranks and
/// with the mesh (no coarse level); algebraic multigrid
/// (hypre_algebraic_multigrid.hpp) removes that growth.
///
/// Setup needs the assembled Jacobian in the distributed layout of
/// row_partition.hpp (local rows, global columns). It has no MPI dependency
/// and works with every vector space; on a serial space it is a global ILU or
/// sparse LU. Setup is collective on a distributed space (partition, status).
///
/// Local solvers: Eigen::IncompleteLUT (dual-threshold ILU, Y. Saad, "ILUT: a
/// dual threshold incomplete LU factorization", Numer. Linear Algebra Appl. 1
/// (1994) 387–402) or Eigen::SparseLU. Allocation: setup allocates the local
/// block and factors; apply() goes through Eigen's solve(), which may use
/// small temporaries for the permutations.
///
/// apply_transpose (z = M⁻ᵀ r = A_r⁻ᵀ r on each rank, adjoint solves): the
/// transposed triangular solves with the same local factors (ILUT as in
/// incomplete_lut.hpp, SparseLU through its transpose().solve()); no
/// communication, so it works on distributed spaces as apply() does.

#include <Eigen/IterativeLinearSolvers>
#include <Eigen/SparseCore>
#include <Eigen/SparseLU>
#include <cstddef>
#include <memory>
#include <stdexcept>
#include <string>
#include <string_view>

#include "../core/preconditioner.hpp"
#include "../core/vector_space.hpp"
#include "../detail/checks.hpp"
#include "../distributed/row_partition.hpp"
#include "incomplete_lut.hpp"

namespace nkit {

/// How each rank solves with its diagonal block.
enum class subdomain_solver {
  incomplete_lut,  ///< Eigen::IncompleteLUT with the drop tolerance and fill factor below
  sparse_direct    ///< Eigen::SparseLU (exact block solve; memory grows faster than the block)
};

struct additive_schwarz_settings {
  subdomain_solver local_solver = subdomain_solver::incomplete_lut;
  /// ILUT: entries smaller than this times the row norm are dropped.
  double drop_tolerance = 1e-4;
  /// ILUT: at most fill_factor × (entries of the row) kept per row of L and of U.
  int fill_factor = 10;

  void validate(std::string_view prefix = "additive_schwarz_settings") const {
    const std::string p(prefix);
    detail::require_non_negative(p + ".drop_tolerance", drop_tolerance);
    detail::require_at_least(p + ".fill_factor", fill_factor, 1);
  }
};

class additive_schwarz_preconditioner {
 public:
  using local_matrix = Eigen::SparseMatrix<double, Eigen::RowMajor, int>;

  explicit additive_schwarz_preconditioner(additive_schwarz_settings settings = {}) : m_settings(settings) {
    m_settings.validate();
  }

  const additive_schwarz_settings& settings() const { return m_settings; }
  /// The partition found at the last setup.
  const row_partition& partition() const { return m_partition; }
  /// The diagonal block factored at the last setup (local numbering).
  const local_matrix& local_block() const { return m_block; }

  /// Extracts the rank's diagonal block from the assembled Jacobian and
  /// factors it. Collective on a distributed space: every rank returns the
  /// same status (failed when any rank's factorisation failed).
  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    const sparse_matrix& jacobian = context.assembled_jacobian();
    m_partition = row_partition_of(context.space, context.state);
    const bool wrong_shape = jacobian.rows() != m_partition.local_rows || jacobian.cols() != m_partition.global_rows;
    if (any_of(context.space, wrong_shape)) {
      throw std::invalid_argument(
          "nkit: additive_schwarz_preconditioner needs the Jacobian's local rows with global columns "
          "(row_partition.hpp); on some rank it was " +
          std::to_string(jacobian.rows()) + " x " + std::to_string(jacobian.cols()) + " on this rank, expected " +
          std::to_string(m_partition.local_rows) + " x " + std::to_string(m_partition.global_rows));
    }
    extract_diagonal_block(jacobian);
    bool failed = false;
    if (m_settings.local_solver == subdomain_solver::incomplete_lut) {
      if (!m_incomplete) m_incomplete = std::make_unique<incomplete_factor>();
      m_incomplete->setDroptol(m_settings.drop_tolerance);
      m_incomplete->setFillfactor(m_settings.fill_factor);
      m_incomplete->compute(m_block);
      failed = m_incomplete->info() != Eigen::Success;
    } else {
      if (!m_direct) m_direct = std::make_unique<direct_factor>();
      m_column_block = m_block;
      m_direct->compute(m_column_block);
      failed = m_direct->info() != Eigen::Success;
    }
    m_ready = !any_of(context.space, failed);
    return m_ready ? setup_status::ready : setup_status::failed;
  }

  /// z = A_r⁻¹ r on this rank's entries. No communication.
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if (!m_ready)
      throw std::logic_error("nkit: additive_schwarz_preconditioner::apply called before a successful setup");
    if (m_settings.local_solver == subdomain_solver::incomplete_lut) {
      z = m_incomplete->solve(r);
    } else {
      z = m_direct->solve(r);
    }
  }

  /// z = A_r⁻ᵀ r on this rank's entries. No communication.
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if (!m_ready) {
      throw std::logic_error("nkit: additive_schwarz_preconditioner::apply_transpose called before a successful setup");
    }
    if (m_settings.local_solver == subdomain_solver::incomplete_lut) {
      m_incomplete->solve_transposed(r, z);
    } else {
      z = m_direct->transpose().solve(r);
    }
  }

  /// Bytes of the extracted local block(s); Eigen does not report the size of its factors.
  std::size_t memory_bytes() const {
    const auto bytes = [](const auto& matrix) {
      return static_cast<std::size_t>(matrix.nonZeros()) * (sizeof(double) + sizeof(int)) +
             static_cast<std::size_t>(matrix.outerSize() + 1) * sizeof(int);
    };
    return bytes(m_block) + bytes(m_column_block);
  }

 private:
  /// Keeps the entries whose global column this rank owns, renumbered locally.
  void extract_diagonal_block(const sparse_matrix& jacobian) {
    const Eigen::Index rows = jacobian.rows();
    const std::int64_t first = m_partition.first_row;
    m_block.resize(rows, rows);
    Eigen::Index kept = 0;
    for (Eigen::Index row = 0; row < rows; ++row) {
      for (sparse_matrix::InnerIterator entry(jacobian, row); entry; ++entry) {
        if (m_partition.owns(entry.col())) ++kept;
      }
    }
    m_block.resizeNonZeros(kept);
    int* offsets = m_block.outerIndexPtr();
    int* columns = m_block.innerIndexPtr();
    double* values = m_block.valuePtr();
    int position = 0;
    for (Eigen::Index row = 0; row < rows; ++row) {
      offsets[row] = position;
      for (sparse_matrix::InnerIterator entry(jacobian, row); entry; ++entry) {
        if (!m_partition.owns(entry.col())) continue;
        columns[position] = static_cast<int>(entry.col() - first);
        values[position] = entry.value();
        ++position;
      }
    }
    offsets[rows] = position;
  }

  additive_schwarz_settings m_settings;
  row_partition m_partition;
  local_matrix m_block;
  Eigen::SparseMatrix<double, Eigen::ColMajor, int> m_column_block;
  // Eigen's factorisations cannot be moved; held by pointer so the preconditioner can be.
  using incomplete_factor = detail::readable_incomplete_lut;
  using direct_factor = Eigen::SparseLU<Eigen::SparseMatrix<double, Eigen::ColMajor, int>>;
  std::unique_ptr<incomplete_factor> m_incomplete;
  std::unique_ptr<direct_factor> m_direct;
  bool m_ready = false;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_ADDITIVE_SCHWARZ_HPP
