#ifndef NKIT_PRECONDITIONERS_HYPRE_STRUCTURED_MULTIGRID_HPP
#define NKIT_PRECONDITIONERS_HYPRE_STRUCTURED_MULTIGRID_HPP

/// \file preconditioners/hypre_structured_multigrid.hpp
/// Geometric multigrid preconditioner on a logically rectangular grid: one
/// (or a few) cycles of hypre's semicoarsening multigrid for stencil matrices
/// (PFMG, through hypre's structured-grid interface, documented public API
/// only) per application, with the stencil matrix filled from the assembled
/// Jacobian (or, through setup_from_matrix(), from an operator the user
/// supplies: frozen coefficients, a simplified physics).
///
/// Method: S.F. Ashby & R.D. Falgout, "A parallel multigrid preconditioned
/// conjugate gradient algorithm for groundwater flow simulations", Nucl. Sci.
/// Eng. 124 (1996) 145–159 (semicoarsening in one direction at a time, the
/// direction of strongest coupling first, with operator-based interpolation
/// and Galerkin coarse operators); P.N. Brown, R.D. Falgout & J.E. Jones,
/// "Semicoarsening multigrid on distributed memory machines", SIAM J. Sci.
/// Comput. 21 (2000) 1823–1834 (the parallel form). Both citations from
/// memory (not checked against the papers).
///
/// Why beside algebraic_multigrid_preconditioner: on a structured grid the
/// hierarchy is known from the geometry, so the setup does no coarsening
/// search and stores stencils instead of general sparse rows; the cycle is a
/// stencil sweep. Both cost a few fine-grid matrix-vector products per cycle.
///
/// The grid: the user declares the global grid as a structured_grid
/// (grids/structured_grid.hpp: 1, 2 or 3 directions, one unknown per cell,
/// cell c = i + nx·(j + ny·k)). The Jacobian must couple each cell only with
/// cells at most one step away in every direction (5/9-point in 2-D, 7- to
/// 27-point in 3-D); the stencil is the union, over all ranks, of the offsets
/// found in the Jacobian's pattern, centre always included, widened to the
/// smallest of the stencils hypre's Galerkin products are written for (5 or
/// 9 points in 2-D; 7, 19 or 27 in 3-D; a 1-D grid is passed to hypre as
/// n × 1 with a 5-point stencil). An entry that couples cells further apart
/// (a periodic wrap, a far coupling) throws std::invalid_argument naming the
/// row and column. Entries the pattern does not hold are zero in the stencil
/// matrix. Non-Galerkin coarse operators (and with them the red/black
/// smoothers, structured_multigrid_settings.hpp) need the star stencil (5 or 7
/// points): with diagonal couplings, setup() throws std::invalid_argument
/// naming the setting (hypre forms them for the star only, and its red/black
/// sweep reads only the star's coefficients).
///
/// Distribution: like algebraic_multigrid_preconditioner, in the layout of
/// distributed/row_partition.hpp (local rows, global columns; the local rows
/// of the ranks in rank order). Each rank's rows must be whole layers of the
/// slowest direction (grid rows in 2-D, planes in 3-D): the rank then owns one
/// box of the grid. Any other split throws std::invalid_argument. One rank
/// (MPI_COMM_SELF) is a serial structured multigrid.
///
/// Cost: setup() fills the stencil values from the Jacobian (two passes over
/// its entries, the second a slab of whole layers at a time: 65,536 cells or
/// fewer, or one layer where a layer is larger; nkit's buffers hold one byte
/// per Jacobian entry plus one slab, reused once the sizes are known) and
/// rebuilds the stencil matrix and the hierarchy in hypre (interpolation and
/// coarse stencils, allocated by hypre at every setup); apply() copies r
/// into hypre's vector, runs the cycle(s) and copies the result out, and
/// allocates nothing in nkit. With release_assembled_jacobian_after_copy the
/// driver frees its Jacobian once the values are in hypre, before the
/// hierarchy is built (less peak memory, a new allocation at each assembly;
/// structured_multigrid_settings.hpp). setup() and apply() are collective. There is
/// no apply_transpose (hypre's semicoarsening multigrid has no transposed
/// cycle); adjoint solves need another preconditioner.
///
/// Not part of nkit.hpp; link the CMake target nkit::hypre. MPI must be
/// initialised before the first object is created. The grid's
/// unknowns_per_cell must be 1; for several unknowns per cell use
/// system_structured_multigrid_preconditioner
/// (hypre_system_structured_multigrid.hpp).

#include <HYPRE.h>
#include <HYPRE_struct_ls.h>
#include <HYPRE_struct_mv.h>
#include <HYPRE_utilities.h>
#include <mpi.h>

#include <Eigen/Core>
#include <algorithm>
#include <array>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <vector>

#include "../core/preconditioner.hpp"
#include "../distributed/mpi_agreement.hpp"
#include "../distributed/row_partition.hpp"
#include "../grids/structured_grid.hpp"
#include "grid_stencil_offsets.hpp"
#include "hypre_grid_layer_box.hpp"
#include "hypre_library.hpp"
#include "structured_multigrid_settings.hpp"

namespace nkit {

namespace detail {

/// nkit's structured multigrid choices as hypre's documented codes
/// (HYPRE_struct_ls.h, hypre 2.26: HYPRE_StructPFMGSetRelaxType, SetRAPType).
inline HYPRE_Int hypre_code(structured_multigrid_smoother value) {
  switch (value) {
    case structured_multigrid_smoother::jacobi:
      return 0;
    case structured_multigrid_smoother::weighted_jacobi:
      return 1;
    case structured_multigrid_smoother::red_black_gauss_seidel_symmetric:
      return 2;
    case structured_multigrid_smoother::red_black_gauss_seidel:
      return 3;
  }
  return 2;
}
inline HYPRE_Int hypre_code(structured_coarse_operator value) {
  return value == structured_coarse_operator::non_galerkin ? 1 : 0;
}

inline bool red_black(structured_multigrid_smoother smoother) {
  return smoother == structured_multigrid_smoother::red_black_gauss_seidel ||
         smoother == structured_multigrid_smoother::red_black_gauss_seidel_symmetric;
}

}  // namespace detail

class structured_multigrid_preconditioner {
 public:
  /// All ranks of `communicator` must construct it with the same global grid
  /// and call setup()/apply() together. Throws std::invalid_argument when the
  /// grid has more than one unknown per cell or the settings are invalid.
  structured_multigrid_preconditioner(MPI_Comm communicator, const structured_grid& grid,
                                      structured_multigrid_settings settings = {})
      : m_communicator(communicator), m_grid(grid), m_settings(settings) {
    m_settings.validate();
    if (grid.unknowns_per_cell() != 1) {
      throw std::invalid_argument(
          "nkit: structured_multigrid_preconditioner needs one unknown per cell (the structured_grid has "
          "unknowns_per_cell = " +
          std::to_string(grid.unknowns_per_cell()) +
          "); use system_structured_multigrid_preconditioner (hypre_system_structured_multigrid.hpp) for several "
          "unknowns per cell");
    }
    detail::initialise_hypre_once();
  }
  ~structured_multigrid_preconditioner() { release(); }
  structured_multigrid_preconditioner(const structured_multigrid_preconditioner&) = delete;
  structured_multigrid_preconditioner& operator=(const structured_multigrid_preconditioner&) = delete;
  structured_multigrid_preconditioner(structured_multigrid_preconditioner&& other) noexcept : m_grid(other.m_grid) {
    take(other);
  }
  structured_multigrid_preconditioner& operator=(structured_multigrid_preconditioner&& other) noexcept {
    if (this != &other) {
      release();
      take(other);
    }
    return *this;
  }

  const structured_multigrid_settings& settings() const { return m_settings; }
  /// Takes effect at the next setup().
  void configure(const structured_multigrid_settings& settings) {
    settings.validate();
    m_settings = settings;
  }
  const structured_grid& grid() const { return m_grid; }
  const row_partition& partition() const { return m_partition; }
  /// Stencil points of the last setup (5 for the 2-D five-point Jacobian).
  int stencil_size() const { return static_cast<int>(m_stencil_codes.size()); }
  /// This rank's box: lower and upper cell indices per direction (inclusive).
  const std::array<HYPRE_Int, 3>& box_lower() const { return m_lower; }
  const std::array<HYPRE_Int, 3>& box_upper() const { return m_upper; }

  /// Fills the stencil matrix from the assembled Jacobian and builds the
  /// hierarchy. Collective.
  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    fill_matrix_from(context.assembled_jacobian(), static_cast<std::int64_t>(context.state.size()));
    if (m_settings.release_assembled_jacobian_after_copy) context.release_assembled_jacobian();
    return build_hierarchy();
  }

  /// The same from a matrix you supply instead of the Jacobian (a frozen or
  /// simplified operator with the same layout: this rank's rows, global
  /// columns, compressed). Use it from the setup of your own preconditioner
  /// object or of make_preconditioner. Collective.
  setup_status setup_from_matrix(const sparse_matrix& local_rows) {
    fill_matrix_from(local_rows, static_cast<std::int64_t>(local_rows.rows()));
    return build_hierarchy();
  }

  /// z = one application of the multigrid cycle(s) to r. Collective.
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    if (m_solver == nullptr) {
      throw std::logic_error("nkit: structured_multigrid_preconditioner::apply called before a successful setup");
    }
    if (r.size() != m_partition.local_rows) {
      throw std::invalid_argument("nkit: structured_multigrid_preconditioner::apply got a vector of " +
                                  std::to_string(r.size()) +
                                  " entries; this rank's rows at setup: " + std::to_string(m_partition.local_rows));
    }
    if (m_partition.local_rows > 0) {
      // hypre's interface takes a non-const pointer but only reads the values.
      HYPRE_StructVectorSetBoxValues(m_right_hand_side, m_lower.data(), m_upper.data(), const_cast<double*>(r.data()));
    }
    HYPRE_StructVectorSetConstantValues(m_solution, 0.0);
    HYPRE_StructPFMGSolve(m_solver, m_matrix, m_right_hand_side, m_solution);
    if (z.size() != r.size()) z.resize(r.size());
    if (m_partition.local_rows > 0) {
      HYPRE_StructVectorGetBoxValues(m_solution, m_lower.data(), m_upper.data(), z.data());
    }
  }

 private:
  /// Checks the layout, classifies the entries and fills hypre's stencil
  /// matrix; after it the Jacobian is no longer needed.
  void fill_matrix_from(const sparse_matrix& jacobian, std::int64_t local_rows) {
    destroy_matrix_and_solver();  // a setup that throws leaves no stale hierarchy behind
    set_partition(local_rows);
    const bool wrong_shape = jacobian.rows() != m_partition.local_rows || jacobian.cols() != m_partition.global_rows ||
                             !jacobian.isCompressed();
    if (collective_or(wrong_shape)) {
      throw std::invalid_argument(
          "nkit: structured_multigrid_preconditioner needs the Jacobian's local rows with global columns in "
          "compressed storage (row_partition.hpp); on this rank it is " +
          std::to_string(jacobian.rows()) + " x " + std::to_string(jacobian.cols()) + ", expected " +
          std::to_string(m_partition.local_rows) + " x " + std::to_string(m_partition.global_rows));
    }
    classify_entries(jacobian);
    HYPRE_ClearAllErrors();
    HYPRE_StructMatrixCreate(m_communicator, m_grid_handle, m_stencil, &m_matrix);
    HYPRE_StructMatrixInitialize(m_matrix);
    copy_values_into_matrix(jacobian);
    HYPRE_StructMatrixAssemble(m_matrix);
  }

  /// The grid's dimension in hypre: a 1-D grid is passed as n × 1 (hypre's
  /// semicoarsening multigrid has no 1-D Galerkin product).
  int hypre_dimension() const { return m_grid.dimension() < 2 ? 2 : m_grid.dimension(); }

  /// Cells in one layer of the slowest direction.
  std::int64_t layer_cells() const { return detail::layer_cell_count(m_grid); }

  void set_partition(std::int64_t local_rows) {
    const detail::grid_layer_box box =
        detail::grid_layer_box_over(m_communicator, m_grid, local_rows, "structured_multigrid_preconditioner");
    // Collective: hypre's grid assembly must be called by every rank together.
    const bool changed = collective_or(box.partition.first_row != m_partition.first_row ||
                                       box.partition.local_rows != m_partition.local_rows || m_grid_handle == nullptr);
    m_partition = box.partition;
    for (std::size_t a = 0; a < 3; ++a) {
      m_lower[a] = static_cast<HYPRE_Int>(box.lower[a]);
      m_upper[a] = static_cast<HYPRE_Int>(box.upper[a]);
    }
    if (changed) create_grid_and_vectors();
  }

  bool collective_or(bool local) const { return detail::true_on_any_rank(m_communicator, local); }

  void create_grid_and_vectors() {
    destroy_matrix_and_solver();
    destroy_grid_and_vectors();
    HYPRE_StructGridCreate(m_communicator, hypre_dimension(), &m_grid_handle);
    if (m_partition.local_rows > 0) HYPRE_StructGridSetExtents(m_grid_handle, m_lower.data(), m_upper.data());
    HYPRE_StructGridAssemble(m_grid_handle);
    for (HYPRE_StructVector* vector : {&m_right_hand_side, &m_solution}) {
      HYPRE_StructVectorCreate(m_communicator, m_grid_handle, vector);
      HYPRE_StructVectorInitialize(*vector);
      HYPRE_StructVectorAssemble(*vector);
    }
    m_stencil_mask = 0;  // the stencil went with the grid
  }

  /// The stencil point of every Jacobian entry (m_entry_codes), and the
  /// stencil itself from the pattern (union over ranks).
  void classify_entries(const sparse_matrix& jacobian) {
    const detail::grid_neighbour_codes neighbours(m_grid);
    const int* offsets = jacobian.outerIndexPtr();
    const int* columns = jacobian.innerIndexPtr();
    const auto rows = static_cast<std::int64_t>(jacobian.rows());
    // Pass 1: the code of every entry (reused in pass 2), the local mask, the first bad entry.
    m_entry_codes.resize(static_cast<std::size_t>(jacobian.nonZeros()));
    std::uint32_t mask = 1u << detail::stencil_centre_code;
    std::int64_t bad_row = -1, bad_column = -1;
    for (std::int64_t row = 0; row < rows && bad_row < 0; ++row) {
      const std::int64_t cell = m_partition.first_row + row;
      const std::array<std::int64_t, 3> at = neighbours.coordinates(cell);
      for (int k = offsets[row]; k < offsets[row + 1]; ++k) {
        const int code = neighbours.code(at, cell, columns[k]);
        if (code < 0) {
          bad_row = cell;
          bad_column = columns[k];
          break;
        }
        m_entry_codes[static_cast<std::size_t>(k)] = static_cast<unsigned char>(code);
        mask |= 1u << code;
      }
    }
    if (collective_or(bad_row >= 0)) {
      throw std::invalid_argument(
          bad_row >= 0
              ? "nkit: structured_multigrid_preconditioner: the Jacobian couples cell " + std::to_string(bad_row) +
                    " with cell " + std::to_string(bad_column) + ", which is not a neighbour on the grid " +
                    m_grid.description() + " (only offsets of at most one cell per direction fit the stencil)"
              : std::string("nkit: structured_multigrid_preconditioner: another rank's Jacobian couples "
                            "cells that are not grid neighbours"));
    }
    std::uint32_t global_mask = 0;
    MPI_Allreduce(&mask, &global_mask, 1, MPI_UINT32_T, MPI_BOR, m_communicator);
    global_mask = detail::supported_stencil_mask(global_mask, hypre_dimension());
    if (m_settings.coarse_operator == structured_coarse_operator::non_galerkin &&
        global_mask != detail::star_stencil_mask(hypre_dimension())) {
      throw std::invalid_argument(
          "nkit: structured_multigrid_settings.coarse_operator = non_galerkin (which the red/black smoothers also "
          "need) needs a star stencil (each cell coupled only with its neighbours along the grid directions: 5 "
          "points in 2-D, 7 in 3-D); this Jacobian also couples diagonal neighbours: choose galerkin with "
          "weighted_jacobi or jacobi");
    }
    if (global_mask != m_stencil_mask) create_stencil(global_mask);
  }

  /// Copies the Jacobian's values into hypre's stencil matrix, a slab of
  /// whole layers of the slowest direction at a time (hypre's box order: for
  /// each cell, one value per stencil point), so that the staging buffer
  /// holds at most staging_cells cells, or one layer where a layer is
  /// larger, not the whole box.
  void copy_values_into_matrix(const sparse_matrix& jacobian) {
    if (m_partition.local_rows == 0) return;
    constexpr std::int64_t staging_cells = std::int64_t{1} << 16;
    const int* offsets = jacobian.outerIndexPtr();
    const double* values = jacobian.valuePtr();
    const auto stencil = static_cast<std::size_t>(m_stencil_codes.size());
    const std::int64_t layer = layer_cells();
    const std::int64_t layers_per_slab = std::max<std::int64_t>(1, staging_cells / layer);
    const auto slowest = static_cast<std::size_t>(m_grid.dimension() - 1);
    std::array<HYPRE_Int, 3> lower = m_lower, upper = m_upper;
    for (std::int64_t first_layer = m_lower[slowest]; first_layer <= m_upper[slowest]; first_layer += layers_per_slab) {
      const std::int64_t last_layer = std::min<std::int64_t>(first_layer + layers_per_slab - 1, m_upper[slowest]);
      const std::int64_t first_row = (first_layer - m_lower[slowest]) * layer;
      const std::int64_t slab_rows = (last_layer - first_layer + 1) * layer;
      m_values.assign(static_cast<std::size_t>(slab_rows) * stencil, 0.0);
      for (std::int64_t cell = 0; cell < slab_rows; ++cell) {
        double* cell_values = m_values.data() + static_cast<std::size_t>(cell) * stencil;
        const std::int64_t row = first_row + cell;
        for (int k = offsets[row]; k < offsets[row + 1]; ++k) {
          cell_values[m_slot_of_code[m_entry_codes[static_cast<std::size_t>(k)]]] += values[k];
        }
      }
      lower[slowest] = static_cast<HYPRE_Int>(first_layer);
      upper[slowest] = static_cast<HYPRE_Int>(last_layer);
      HYPRE_StructMatrixSetBoxValues(m_matrix, lower.data(), upper.data(), static_cast<HYPRE_Int>(m_entries.size()),
                                     m_entries.data(), m_values.data());
    }
  }

  /// The stencil of `mask`: codes in increasing order; m_slot_of_code maps each code to its place.
  void create_stencil(std::uint32_t mask) {
    destroy_matrix_and_solver();
    if (m_stencil != nullptr) HYPRE_StructStencilDestroy(m_stencil);
    m_stencil_mask = mask;
    m_stencil_codes.clear();
    for (int code = 0; code < 27; ++code) {
      if (mask & (1u << code)) m_stencil_codes.push_back(code);
    }
    const std::vector<int>& codes = m_stencil_codes;
    m_slot_of_code.fill(0);
    m_entries.resize(codes.size());
    HYPRE_StructStencilCreate(hypre_dimension(), static_cast<HYPRE_Int>(codes.size()), &m_stencil);
    for (std::size_t slot = 0; slot < codes.size(); ++slot) {
      const std::array<int, 3> offset = detail::stencil_offset(codes[slot]);
      std::array<HYPRE_Int, 3> element = {offset[0], offset[1], offset[2]};
      HYPRE_StructStencilSetElement(m_stencil, static_cast<HYPRE_Int>(slot), element.data());
      m_slot_of_code[static_cast<std::size_t>(codes[slot])] = static_cast<int>(slot);
      m_entries[slot] = static_cast<HYPRE_Int>(slot);
    }
  }

  /// The multigrid hierarchy of the filled stencil matrix.
  setup_status build_hierarchy() {
    HYPRE_StructPFMGCreate(m_communicator, &m_solver);
    HYPRE_StructPFMGSetPrintLevel(m_solver, 0);
    HYPRE_StructPFMGSetLogging(m_solver, 0);
    HYPRE_StructPFMGSetTol(m_solver, 0.0);  // a fixed number of cycles, no convergence test
    HYPRE_StructPFMGSetMaxIter(m_solver, m_settings.cycles_per_application);
    HYPRE_StructPFMGSetZeroGuess(m_solver);
    HYPRE_StructPFMGSetRelaxType(m_solver, detail::hypre_code(m_settings.smoother));
    HYPRE_StructPFMGSetRAPType(m_solver, detail::hypre_code(m_settings.coarse_operator));
    HYPRE_StructPFMGSetNumPreRelax(m_solver, m_settings.smoothing_sweeps_before);
    HYPRE_StructPFMGSetNumPostRelax(m_solver, m_settings.smoothing_sweeps_after);
    HYPRE_StructPFMGSetSkipRelax(m_solver, m_settings.skip_relaxation_where_isotropic ? 1 : 0);
    if (m_settings.maximum_levels > 0) HYPRE_StructPFMGSetMaxLevels(m_solver, m_settings.maximum_levels);
    const HYPRE_Int code = HYPRE_StructPFMGSetup(m_solver, m_matrix, m_right_hand_side, m_solution);
    if (collective_or(code != 0 && !HYPRE_CheckError(code, HYPRE_ERROR_CONV))) {
      destroy_matrix_and_solver();
      HYPRE_ClearAllErrors();
      return setup_status::failed;
    }
    HYPRE_ClearAllErrors();
    return setup_status::ready;
  }

  void destroy_matrix_and_solver() {
    if (m_solver != nullptr) HYPRE_StructPFMGDestroy(m_solver);
    if (m_matrix != nullptr) HYPRE_StructMatrixDestroy(m_matrix);
    m_solver = nullptr;
    m_matrix = nullptr;
  }
  void destroy_grid_and_vectors() {
    if (m_right_hand_side != nullptr) HYPRE_StructVectorDestroy(m_right_hand_side);
    if (m_solution != nullptr) HYPRE_StructVectorDestroy(m_solution);
    if (m_stencil != nullptr) HYPRE_StructStencilDestroy(m_stencil);
    if (m_grid_handle != nullptr) HYPRE_StructGridDestroy(m_grid_handle);
    m_right_hand_side = m_solution = nullptr;
    m_stencil = nullptr;
    m_grid_handle = nullptr;
  }
  void release() {
    destroy_matrix_and_solver();
    destroy_grid_and_vectors();
  }
  void take(structured_multigrid_preconditioner& other) {
    m_communicator = other.m_communicator;
    m_grid = other.m_grid;
    m_settings = other.m_settings;
    m_partition = other.m_partition;
    m_lower = other.m_lower;
    m_upper = other.m_upper;
    m_grid_handle = other.m_grid_handle;
    m_stencil = other.m_stencil;
    m_matrix = other.m_matrix;
    m_right_hand_side = other.m_right_hand_side;
    m_solution = other.m_solution;
    m_solver = other.m_solver;
    m_stencil_codes = std::move(other.m_stencil_codes);
    m_stencil_mask = other.m_stencil_mask;
    m_slot_of_code = other.m_slot_of_code;
    m_entries = std::move(other.m_entries);
    m_entry_codes = std::move(other.m_entry_codes);
    m_values = std::move(other.m_values);
    other.m_grid_handle = nullptr;
    other.m_stencil = nullptr;
    other.m_matrix = nullptr;
    other.m_right_hand_side = other.m_solution = nullptr;
    other.m_solver = nullptr;
  }

  MPI_Comm m_communicator = MPI_COMM_NULL;
  structured_grid m_grid;
  structured_multigrid_settings m_settings;
  row_partition m_partition;
  std::array<HYPRE_Int, 3> m_lower{};
  std::array<HYPRE_Int, 3> m_upper{};
  HYPRE_StructGrid m_grid_handle = nullptr;
  HYPRE_StructStencil m_stencil = nullptr;
  HYPRE_StructMatrix m_matrix = nullptr;
  HYPRE_StructVector m_right_hand_side = nullptr;
  HYPRE_StructVector m_solution = nullptr;
  HYPRE_StructSolver m_solver = nullptr;
  std::uint32_t m_stencil_mask = 0;          ///< codes of the stencil points as bits (0: none yet)
  std::vector<int> m_stencil_codes;          ///< neighbour codes of the stencil points, increasing
  std::array<int, 27> m_slot_of_code{};      ///< stencil point of each code
  std::vector<HYPRE_Int> m_entries;          ///< 0 … stencil size − 1, for SetBoxValues
  std::vector<unsigned char> m_entry_codes;  ///< code of each Jacobian entry (setup workspace)
  std::vector<double> m_values;              ///< one slab's stencil values in hypre's box order
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_HYPRE_STRUCTURED_MULTIGRID_HPP
