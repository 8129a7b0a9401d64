#ifndef NKIT_PRECONDITIONERS_HYPRE_ALGEBRAIC_MULTIGRID_HPP
#define NKIT_PRECONDITIONERS_HYPRE_ALGEBRAIC_MULTIGRID_HPP

/// \file preconditioners/hypre_algebraic_multigrid.hpp
/// Algebraic multigrid preconditioner: one (or a few) cycles of hypre's
/// BoomerAMG per application, built from the rank-local rows of the
/// assembled Jacobian through hypre's IJ interface (documented public API only).
///
/// Methods: J.W. Ruge & K. Stüben, "Algebraic multigrid", in S.F. McCormick
/// (ed.), Multigrid Methods, SIAM Frontiers in Applied Mathematics 3 (1987)
/// 73–130 (classical coarsening, interpolation, strength of connection);
/// V.E. Henson & U.M. Yang, "BoomerAMG: a parallel algebraic multigrid solver
/// and preconditioner", Appl. Numer. Math. 41 (2002) 155–177 (the parallel
/// coarsenings and smoothers); H. De Sterck, U.M. Yang & J.J. Heys, "Reducing
/// complexity in parallel algebraic multigrid preconditioners", SIAM J.
/// Matrix Anal. Appl. 27 (2006) 1019–1039 (PMIS/HMIS coarsening); H. De
/// Sterck, R.D. Falgout, J.W. Nolting & U.M. Yang, "Distance-two
/// interpolation for parallel algebraic multigrid", Numer. Linear Algebra
/// Appl. 15 (2008) 115–139 (extended+i interpolation). Citations not checked against the papers.
///
/// Layout: the Jacobian comes in the distributed layout of row_partition.hpp
/// (local rows, global columns); hypre's row range on each rank is
/// [first_row, first_row + local_rows − 1], derived by an exclusive prefix sum
/// of the local sizes. With one rank (MPI_COMM_SELF, or a one-rank world) the
/// same adapter is a serial AMG.
///
/// Cost: setup (coarsening, interpolation, Galerkin products) costs several
/// fine-grid matrix-vector products; combine it with the driver's
/// preconditioner_rebuild settings to keep one hierarchy over several Newton
/// steps (request_preconditioner_rebuild() forces a new one). apply()
/// copies r into hypre's vector, runs the cycle(s) and copies the result out;
/// it allocates nothing in nkit (hypre's cycle uses its own workspace).
/// With release_assembled_jacobian_after_copy the driver frees its Jacobian
/// once hypre holds the matrix, before the hierarchy is built.
/// setup() and apply() are collective on the communicator.
///
/// apply_transpose (z = M⁻ᵀ r, adjoint solves) runs hypre's transposed cycle
/// (HYPRE_BoomerAMGSolveT, hypre 2.26) on the same hierarchy: residuals with
/// Aᵀ and with the coarse matrices transposed, restriction by Pᵀ and
/// interpolation by P swapped accordingly, the coarsest system solved exactly
/// with its transpose. With E = I − B A the error propagator of one cycle B,
/// the transposed cycle on Aᵀ has the pre- and post-smoothers swapped and
/// transposed, so it is exactly Bᵀ when each smoother is its own transpose and
/// both legs use the same one. hypre's transposed cycle relaxes with
/// weighted Jacobi only, so nkit allows apply_transpose only with
/// algebraic_multigrid_settings.smoother = jacobi (Jacobi on every level and
/// both legs, natural order, Gaussian elimination on the coarsest level: the
/// transposed cycle is then exactly Bᵀ, and with k cycles per application
/// (I − (I − BA)^k) A⁻¹ transposes likewise); with any other smoother it
/// throws std::invalid_argument naming the setting (hypre would silently
/// relax with Jacobi, which is not the transpose of the forward cycle).
/// Collective, works on any number of ranks, allocates nothing in nkit.
///
/// Not part of nkit.hpp; link the CMake target nkit::hypre. MPI must be
/// initialised before the first object is created.

#include <HYPRE.h>
#include <HYPRE_IJ_mv.h>
#include <HYPRE_parcsr_ls.h>
#include <HYPRE_utilities.h>
#include <mpi.h>

#include <Eigen/Core>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>
#include <vector>

#include "../core/preconditioner.hpp"
#include "../distributed/mpi_agreement.hpp"
#include "../distributed/row_partition.hpp"
#include "algebraic_multigrid_settings.hpp"
#include "hypre_library.hpp"

namespace nkit {

namespace detail {

/// The one place where nkit's multigrid choices become hypre's documented
/// option codes (HYPRE_parcsr_ls.h, hypre 2.26: HYPRE_BoomerAMGSetCoarsenType,
/// SetInterpType, SetRelaxType / SetCycleRelaxType, SetCycleType).
inline HYPRE_Int hypre_code(multigrid_coarsening value) {
  switch (value) {
    case multigrid_coarsening::cleary_luby_jones_plassmann:
      return 0;
    case multigrid_coarsening::ruge_stueben_per_rank:
      return 3;
    case multigrid_coarsening::falgout:
      return 6;
    case multigrid_coarsening::parallel_modified_independent_set:
      return 8;
    case multigrid_coarsening::hybrid_modified_independent_set:
      return 10;
  }
  return 10;
}
inline HYPRE_Int hypre_code(multigrid_interpolation value) {
  switch (value) {
    case multigrid_interpolation::classical_modified:
      return 0;
    case multigrid_interpolation::direct:
      return 3;
    case multigrid_interpolation::multipass:
      return 4;
    case multigrid_interpolation::extended_plus_i:
      return 6;
    case multigrid_interpolation::standard:
      return 8;
    case multigrid_interpolation::extended:
      return 14;
  }
  return 6;
}
/// Smoother codes for the down cycle and the up cycle.
struct smoother_codes {
  HYPRE_Int down;
  HYPRE_Int up;
};
inline smoother_codes hypre_code(multigrid_smoother value) {
  switch (value) {
    case multigrid_smoother::jacobi:
      return {0, 0};
    case multigrid_smoother::hybrid_gauss_seidel:
      return {3, 4};  // forward down, backward up
    case multigrid_smoother::hybrid_symmetric_gauss_seidel:
      return {6, 6};
    case multigrid_smoother::l1_gauss_seidel:
      return {13, 14};  // forward down, backward up
    case multigrid_smoother::chebyshev:
      return {16, 16};
    case multigrid_smoother::l1_jacobi:
      return {18, 18};
  }
  return {13, 14};
}
inline const char* smoother_name(multigrid_smoother value) {
  switch (value) {
    case multigrid_smoother::jacobi:
      return "jacobi";
    case multigrid_smoother::hybrid_gauss_seidel:
      return "hybrid_gauss_seidel";
    case multigrid_smoother::hybrid_symmetric_gauss_seidel:
      return "hybrid_symmetric_gauss_seidel";
    case multigrid_smoother::l1_gauss_seidel:
      return "l1_gauss_seidel";
    case multigrid_smoother::chebyshev:
      return "chebyshev";
    case multigrid_smoother::l1_jacobi:
      return "l1_jacobi";
  }
  return "unknown";
}
inline HYPRE_Int hypre_code(multigrid_cycle value) { return value == multigrid_cycle::w_cycle ? 2 : 1; }

/// Configures a BoomerAMG object as a preconditioner (fixed number of
/// cycles, no convergence test, no printing).
inline void apply_settings(HYPRE_Solver solver, const algebraic_multigrid_settings& settings) {
  HYPRE_BoomerAMGSetPrintLevel(solver, 0);
  HYPRE_BoomerAMGSetTol(solver, 0.0);
  HYPRE_BoomerAMGSetMaxIter(solver, settings.cycles_per_application);
  HYPRE_BoomerAMGSetCoarsenType(solver, hypre_code(settings.coarsening));
  HYPRE_BoomerAMGSetInterpType(solver, hypre_code(settings.interpolation));
  HYPRE_BoomerAMGSetPMaxElmts(solver, settings.maximum_interpolation_entries_per_row);
  HYPRE_BoomerAMGSetStrongThreshold(solver, settings.strength_threshold);
  HYPRE_BoomerAMGSetMaxLevels(solver, settings.maximum_levels);
  HYPRE_BoomerAMGSetAggNumLevels(solver, settings.aggressive_coarsening_levels);
  HYPRE_BoomerAMGSetCycleType(solver, hypre_code(settings.cycle));
  HYPRE_BoomerAMGSetNumSweeps(solver, settings.smoothing_sweeps);
  const smoother_codes smoother = hypre_code(settings.smoother);
  if (settings.smoother == multigrid_smoother::jacobi) {
    // Jacobi on the finest level and both legs, Gaussian elimination on the coarsest, natural order:
    // the forward cycle whose transpose hypre's transposed cycle is (hypre_algebraic_multigrid.hpp).
    HYPRE_BoomerAMGSetRelaxType(solver, smoother.down);
    HYPRE_BoomerAMGSetRelaxOrder(solver, 0);
  }
  HYPRE_BoomerAMGSetCycleRelaxType(solver, smoother.down, 1);
  HYPRE_BoomerAMGSetCycleRelaxType(solver, smoother.up, 2);
}

}  // namespace detail

class algebraic_multigrid_preconditioner {
 public:
  /// All ranks of `communicator` must construct it and call setup()/apply() together.
  explicit algebraic_multigrid_preconditioner(MPI_Comm communicator, algebraic_multigrid_settings settings = {})
      : m_communicator(communicator), m_settings(settings) {
    m_settings.validate();
    detail::initialise_hypre_once();
  }
  ~algebraic_multigrid_preconditioner() { release(); }
  algebraic_multigrid_preconditioner(const algebraic_multigrid_preconditioner&) = delete;
  algebraic_multigrid_preconditioner& operator=(const algebraic_multigrid_preconditioner&) = delete;
  algebraic_multigrid_preconditioner(algebraic_multigrid_preconditioner&& other) noexcept { take(other); }
  algebraic_multigrid_preconditioner& operator=(algebraic_multigrid_preconditioner&& other) noexcept {
    if (this != &other) {
      release();
      take(other);
    }
    return *this;
  }

  const algebraic_multigrid_settings& settings() const { return m_settings; }
  /// Takes effect at the next setup().
  void configure(const algebraic_multigrid_settings& settings) {
    settings.validate();
    m_settings = settings;
  }
  const row_partition& partition() const { return m_partition; }

  /// Builds the hierarchy from the assembled Jacobian. Collective.
  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    const sparse_matrix& jacobian = context.assembled_jacobian();
    set_partition(static_cast<std::int64_t>(context.state.size()));
    const bool wrong_shape = jacobian.rows() != m_partition.local_rows || jacobian.cols() != m_partition.global_rows ||
                             !jacobian.isCompressed();
    if (collective_or(wrong_shape)) {
      throw std::invalid_argument(
          "nkit: algebraic_multigrid_preconditioner needs the Jacobian's local rows with global columns in "
          "compressed storage (row_partition.hpp); on this rank it is " +
          std::to_string(jacobian.rows()) + " x " + std::to_string(jacobian.cols()) + ", expected " +
          std::to_string(m_partition.local_rows) + " x " + std::to_string(m_partition.global_rows));
    }
    copy_into_hypre(jacobian);
    if (m_settings.release_assembled_jacobian_after_copy) context.release_assembled_jacobian();
    return build_hierarchy();
  }

  /// z = one application of the multigrid cycle(s) to r. Collective.
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    if (m_solver == nullptr) {
      throw std::logic_error("nkit: algebraic_multigrid_preconditioner::apply called before a successful setup");
    }
    const auto count = static_cast<HYPRE_Int>(m_partition.local_rows);
    HYPRE_IJVectorSetValues(m_right_hand_side, count, m_row_indices.data(), r.data());
    HYPRE_ParVectorSetConstantValues(m_parallel_solution, 0.0);
    HYPRE_BoomerAMGSolve(m_solver, m_parallel_matrix, m_parallel_right_hand_side, m_parallel_solution);
    if (z.size() != r.size()) z.resize(r.size());
    HYPRE_IJVectorGetValues(m_solution, count, m_row_indices.data(), z.data());
  }

  /// z = Bᵀ r, the transposed cycle(s) (see the file comment); needs the
  /// smoother jacobi. Collective.
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    if (m_settings.smoother != multigrid_smoother::jacobi) {
      throw std::invalid_argument(
          std::string("nkit: algebraic_multigrid_preconditioner::apply_transpose needs "
                      "algebraic_multigrid_settings.smoother = jacobi (got ") +
          detail::smoother_name(m_settings.smoother) +
          "): hypre's transposed cycle relaxes with Jacobi only, so with another smoother it would not be the "
          "transpose of apply()");
    }
    if (m_solver == nullptr) {
      throw std::logic_error(
          "nkit: algebraic_multigrid_preconditioner::apply_transpose called before a successful setup");
    }
    const auto count = static_cast<HYPRE_Int>(m_partition.local_rows);
    HYPRE_IJVectorSetValues(m_right_hand_side, count, m_row_indices.data(), r.data());
    HYPRE_ParVectorSetConstantValues(m_parallel_solution, 0.0);
    HYPRE_BoomerAMGSolveT(m_solver, m_parallel_matrix, m_parallel_right_hand_side, m_parallel_solution);
    if (z.size() != r.size()) z.resize(r.size());
    HYPRE_IJVectorGetValues(m_solution, count, m_row_indices.data(), z.data());
  }

 private:
  void set_partition(std::int64_t local_rows) {
    const row_partition partition = detail::row_partition_over(m_communicator, local_rows);
    if (partition.global_rows > static_cast<std::int64_t>(std::numeric_limits<HYPRE_BigInt>::max())) {
      throw std::invalid_argument("nkit: the problem has more global rows than hypre's HYPRE_BigInt can index");
    }
    // Collective: creating hypre's vectors must be done by every rank together.
    const bool changed =
        collective_or(partition.first_row != m_partition.first_row || partition.local_rows != m_partition.local_rows ||
                      partition.global_rows != m_partition.global_rows || m_right_hand_side == nullptr);
    m_partition = partition;
    if (changed) create_vectors();
  }

  bool collective_or(bool local) const { return detail::true_on_any_rank(m_communicator, local); }

  void create_vectors() {
    destroy_vectors();
    const auto lower = static_cast<HYPRE_BigInt>(m_partition.first_row);
    const auto upper = static_cast<HYPRE_BigInt>(m_partition.end_row() - 1);
    for (HYPRE_IJVector* vector : {&m_right_hand_side, &m_solution}) {
      HYPRE_IJVectorCreate(m_communicator, lower, upper, vector);
      HYPRE_IJVectorSetObjectType(*vector, HYPRE_PARCSR);
      HYPRE_IJVectorInitialize(*vector);
      HYPRE_IJVectorAssemble(*vector);
    }
    void* object = nullptr;
    HYPRE_IJVectorGetObject(m_right_hand_side, &object);
    m_parallel_right_hand_side = static_cast<HYPRE_ParVector>(object);
    HYPRE_IJVectorGetObject(m_solution, &object);
    m_parallel_solution = static_cast<HYPRE_ParVector>(object);
    m_row_indices.resize(static_cast<std::size_t>(m_partition.local_rows));
    for (std::size_t i = 0; i < m_row_indices.size(); ++i) m_row_indices[i] = lower + static_cast<HYPRE_BigInt>(i);
  }

  /// hypre's parallel matrix from this rank's rows; after it the Jacobian is no longer needed.
  void copy_into_hypre(const sparse_matrix& jacobian) {
    destroy_matrix_and_solver();
    const auto lower = static_cast<HYPRE_BigInt>(m_partition.first_row);
    const auto upper = static_cast<HYPRE_BigInt>(m_partition.end_row() - 1);
    const auto rows = static_cast<std::size_t>(jacobian.rows());
    // Row sizes split into the owned (diagonal) block and the rest, so hypre preallocates exactly.
    m_diagonal_sizes.assign(rows, 0);
    m_off_diagonal_sizes.assign(rows, 0);
    m_row_sizes.resize(rows);
    m_columns.resize(static_cast<std::size_t>(jacobian.nonZeros()));
    const int* offsets = jacobian.outerIndexPtr();
    const int* columns = jacobian.innerIndexPtr();
    for (std::size_t row = 0; row < rows; ++row) {
      m_row_sizes[row] = static_cast<HYPRE_Int>(offsets[row + 1] - offsets[row]);
      for (int k = offsets[row]; k < offsets[row + 1]; ++k) {
        m_columns[static_cast<std::size_t>(k)] = static_cast<HYPRE_BigInt>(columns[k]);
        ++(m_partition.owns(columns[k]) ? m_diagonal_sizes : m_off_diagonal_sizes)[row];
      }
    }
    HYPRE_ClearAllErrors();
    HYPRE_IJMatrixCreate(m_communicator, lower, upper, lower, upper, &m_matrix);
    HYPRE_IJMatrixSetObjectType(m_matrix, HYPRE_PARCSR);
    HYPRE_IJMatrixSetDiagOffdSizes(m_matrix, m_diagonal_sizes.data(), m_off_diagonal_sizes.data());
    HYPRE_IJMatrixInitialize(m_matrix);
    HYPRE_IJMatrixSetValues(m_matrix, static_cast<HYPRE_Int>(rows), m_row_sizes.data(), m_row_indices.data(),
                            m_columns.data(), jacobian.valuePtr());
    HYPRE_IJMatrixAssemble(m_matrix);
    void* object = nullptr;
    HYPRE_IJMatrixGetObject(m_matrix, &object);
    m_parallel_matrix = static_cast<HYPRE_ParCSRMatrix>(object);
  }

  /// The AMG hierarchy of the matrix copied into hypre.
  setup_status build_hierarchy() {
    HYPRE_BoomerAMGCreate(&m_solver);
    detail::apply_settings(m_solver, m_settings);
    const HYPRE_Int code =
        HYPRE_BoomerAMGSetup(m_solver, m_parallel_matrix, m_parallel_right_hand_side, m_parallel_solution);
    if (collective_or(code != 0 && !HYPRE_CheckError(code, HYPRE_ERROR_CONV))) {
      destroy_matrix_and_solver();
      HYPRE_ClearAllErrors();
      return setup_status::failed;
    }
    HYPRE_ClearAllErrors();
    return setup_status::ready;
  }

  void destroy_matrix_and_solver() {
    if (m_solver != nullptr) HYPRE_BoomerAMGDestroy(m_solver);
    if (m_matrix != nullptr) HYPRE_IJMatrixDestroy(m_matrix);
    m_solver = nullptr;
    m_matrix = nullptr;
    m_parallel_matrix = nullptr;
  }
  void destroy_vectors() {
    if (m_right_hand_side != nullptr) HYPRE_IJVectorDestroy(m_right_hand_side);
    if (m_solution != nullptr) HYPRE_IJVectorDestroy(m_solution);
    m_right_hand_side = m_solution = nullptr;
    m_parallel_right_hand_side = m_parallel_solution = nullptr;
  }
  void release() {
    destroy_matrix_and_solver();
    destroy_vectors();
  }
  void take(algebraic_multigrid_preconditioner& other) {
    m_communicator = other.m_communicator;
    m_settings = other.m_settings;
    m_partition = other.m_partition;
    m_matrix = other.m_matrix;
    m_parallel_matrix = other.m_parallel_matrix;
    m_right_hand_side = other.m_right_hand_side;
    m_solution = other.m_solution;
    m_parallel_right_hand_side = other.m_parallel_right_hand_side;
    m_parallel_solution = other.m_parallel_solution;
    m_solver = other.m_solver;
    m_row_indices = std::move(other.m_row_indices);
    other.m_matrix = nullptr;
    other.m_parallel_matrix = nullptr;
    other.m_right_hand_side = other.m_solution = nullptr;
    other.m_parallel_right_hand_side = other.m_parallel_solution = nullptr;
    other.m_solver = nullptr;
  }

  MPI_Comm m_communicator = MPI_COMM_NULL;
  algebraic_multigrid_settings m_settings;
  row_partition m_partition;
  HYPRE_IJMatrix m_matrix = nullptr;
  HYPRE_ParCSRMatrix m_parallel_matrix = nullptr;
  HYPRE_IJVector m_right_hand_side = nullptr;
  HYPRE_IJVector m_solution = nullptr;
  HYPRE_ParVector m_parallel_right_hand_side = nullptr;
  HYPRE_ParVector m_parallel_solution = nullptr;
  HYPRE_Solver m_solver = nullptr;
  std::vector<HYPRE_BigInt> m_row_indices;
  std::vector<HYPRE_BigInt> m_columns;
  std::vector<HYPRE_Int> m_row_sizes;
  std::vector<HYPRE_Int> m_diagonal_sizes;
  std::vector<HYPRE_Int> m_off_diagonal_sizes;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_HYPRE_ALGEBRAIC_MULTIGRID_HPP
