#ifndef NKIT_PRECONDITIONERS_HYPRE_SYSTEM_STRUCTURED_MULTIGRID_HPP
#define NKIT_PRECONDITIONERS_HYPRE_SYSTEM_STRUCTURED_MULTIGRID_HPP

/// \file preconditioners/hypre_system_structured_multigrid.hpp
/// Geometric multigrid preconditioner for several unknowns per cell on a
/// logically rectangular grid: one (or a few) cycles of hypre's
/// semicoarsening multigrid for systems (SysPFMG, through hypre's
/// semi-structured interface, documented public API only) per application,
/// with the stencils filled from the assembled Jacobian (or, through
/// setup_from_matrix(), from an operator the user supplies).
///
/// Method: the semicoarsening multigrid of structured_multigrid_preconditioner
/// (hypre_structured_multigrid.hpp: S.F. Ashby & R.D. Falgout 1996; P.N.
/// Brown, R.D. Falgout & J.E. Jones 2000; from memory) applied to the system
/// as a whole: every unknown of a cell is interpolated from its own diagonal
/// block, the coarse operators are Galerkin products of the whole system, and
/// the relaxation solves the small system of each cell's unknowns together
/// (block, or "nodal", relaxation: the within-cell couplings are solved
/// exactly in every sweep). Why beside a field split with the scalar
/// multigrid per field: couplings between the fields (an exchange term, a
/// source depending on another field) reach every level.
///
/// The grid: a structured_grid (grids/structured_grid.hpp: 2 or 3
/// directions; hypre's system cycle passed a line as an n × 1 grid converged
/// at a factor near 0.9 in our measurement, so 1-D grids are rejected) with
/// b >= 2 unknowns per cell, interleaved: unknown b·c + v is
/// variable v of cell c = i + nx·(j + ny·k). Each variable is cell-centred;
/// variable v's stencil holds one entry per (offset, variable w) pair found in
/// the Jacobian's pattern (union over all ranks): the couplings within the
/// cell (offset 0, w ≠ v) and with the neighbouring cells' variables. Offsets
/// are at most one cell per direction (as for the scalar preconditioner,
/// detail::grid_neighbour_codes); an entry further away throws
/// std::invalid_argument naming the row and column. The diagonal blocks
/// (w = v) always hold the centre and are widened, like the scalar stencil,
/// to the smallest stencil hypre's Galerkin products are written for (5 or 9
/// points in 2-D; 7, 19 or 27 in 3-D); the couplings between different
/// variables keep exactly the offsets found. Entries the pattern does not
/// hold are zero.
///
/// Distribution: local rows, global columns (distributed/row_partition.hpp);
/// each rank's rows must be whole layers of the slowest direction (b times
/// the cells of a layer), one box per rank. Any other split throws
/// std::invalid_argument. One rank (MPI_COMM_SELF) is a serial multigrid.
///
/// Cost: setup() makes two passes over the Jacobian's entries, the second a
/// slab of whole layers at a time (65,536 cells or fewer, or one layer where
/// a layer is larger; nkit's buffers hold one byte per Jacobian entry plus
/// one slab of one variable's stencil values, reused once the sizes are
/// known), and rebuilds the matrix and the hierarchy in hypre. apply()
/// copies r into hypre's vector one variable at a time through a buffer of
/// one value per local cell, runs the cycle(s) and copies the result out; it
/// allocates nothing in nkit. setup() and apply() are collective. There is no
/// apply_transpose.
///
/// Not part of nkit.hpp; link the CMake target nkit::hypre. MPI must be
/// initialised before the first object is created.

#include <HYPRE.h>
#include <HYPRE_sstruct_ls.h>
#include <HYPRE_sstruct_mv.h>
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
#include "system_structured_multigrid_settings.hpp"

namespace nkit {

namespace detail {

/// nkit's smoother choice as hypre's documented code (HYPRE_sstruct_ls.h,
/// hypre 2.26: HYPRE_SStructSysPFMGSetRelaxType: 0 Jacobi, 1 weighted Jacobi,
/// 2 red/black Gauss–Seidel, red/black before and black/red after).
inline HYPRE_Int hypre_code(system_multigrid_smoother value) {
  switch (value) {
    case system_multigrid_smoother::jacobi:
      return 0;
    case system_multigrid_smoother::weighted_jacobi:
      return 1;
  }
  return 1;
}

}  // namespace detail

class system_structured_multigrid_preconditioner {
 public:
  /// All ranks of `communicator` must construct it with the same global grid
  /// and call setup()/apply() together. Throws std::invalid_argument when the
  /// grid has fewer than two unknowns per cell or the settings are invalid.
  system_structured_multigrid_preconditioner(MPI_Comm communicator, const structured_grid& grid,
                                             system_structured_multigrid_settings settings = {})
      : m_communicator(communicator), m_grid(grid), m_settings(settings) {
    m_settings.validate();
    if (grid.dimension() < 2) {
      throw std::invalid_argument(
          "nkit: system_structured_multigrid_preconditioner needs a 2-D or 3-D structured_grid (got " +
          std::to_string(grid.dimension()) +
          " direction); on a line, block_jacobi or sparse_direct solve the coupled tridiagonal system cheaply");
    }
    if (grid.unknowns_per_cell() < 2) {
      throw std::invalid_argument(
          "nkit: system_structured_multigrid_preconditioner needs at least two unknowns per cell (the "
          "structured_grid has unknowns_per_cell = " +
          std::to_string(grid.unknowns_per_cell()) + "); use structured_multigrid_preconditioner for one");
    }
    detail::initialise_hypre_once();
  }
  ~system_structured_multigrid_preconditioner() { release(); }
  system_structured_multigrid_preconditioner(const system_structured_multigrid_preconditioner&) = delete;
  system_structured_multigrid_preconditioner& operator=(const system_structured_multigrid_preconditioner&) = delete;
  system_structured_multigrid_preconditioner(system_structured_multigrid_preconditioner&& other) noexcept
      : m_grid(other.m_grid) {
    take(other);
  }
  system_structured_multigrid_preconditioner& operator=(system_structured_multigrid_preconditioner&& other) noexcept {
    if (this != &other) {
      release();
      take(other);
    }
    return *this;
  }

  const system_structured_multigrid_settings& settings() const { return m_settings; }
  /// Takes effect at the next setup().
  void configure(const system_structured_multigrid_settings& settings) {
    settings.validate();
    m_settings = settings;
  }
  const structured_grid& grid() const { return m_grid; }
  /// The rows (unknowns) of each rank.
  const row_partition& partition() const { return m_partition; }
  /// Entries of variable `variable`'s stencil at the last setup (all its
  /// couplings, to every variable; 6 for the diffusion of one variable on a
  /// 2-D five-point stencil coupled with one other variable in the cell).
  int stencil_size(int variable) const {
    if (variable < 0 || variable >= m_grid.unknowns_per_cell()) {
      throw std::invalid_argument("nkit: system_structured_multigrid_preconditioner::stencil_size: variable " +
                                  std::to_string(variable) + " is not one of the grid's " +
                                  std::to_string(m_grid.unknowns_per_cell()) + " unknowns per cell");
    }
    return m_stencil_sizes.empty() ? 0 : m_stencil_sizes[static_cast<std::size_t>(variable)];
  }
  /// This rank's box: lower and upper cell indices per direction (inclusive).
  const std::array<HYPRE_Int, 3>& box_lower() const { return m_lower; }
  const std::array<HYPRE_Int, 3>& box_upper() const { return m_upper; }

  /// Fills the stencils from the assembled Jacobian and builds the
  /// hierarchy. Collective.
  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    fill_matrix_from(context.assembled_jacobian(), static_cast<std::int64_t>(context.state.size()));
    if (m_settings.release_assembled_jacobian_after_copy) context.release_assembled_jacobian();
    return build_hierarchy();
  }

  /// The same from a matrix you supply instead of the Jacobian (this rank's
  /// rows, global columns, compressed). Collective.
  setup_status setup_from_matrix(const sparse_matrix& local_rows) {
    fill_matrix_from(local_rows, static_cast<std::int64_t>(local_rows.rows()));
    return build_hierarchy();
  }

  /// z = one application of the multigrid cycle(s) to r. Collective.
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    if (m_solver == nullptr) {
      throw std::logic_error(
          "nkit: system_structured_multigrid_preconditioner::apply called before a successful setup");
    }
    if (r.size() != m_partition.local_rows) {
      throw std::invalid_argument("nkit: system_structured_multigrid_preconditioner::apply got a vector of " +
                                  std::to_string(r.size()) +
                                  " entries; this rank's rows at setup: " + std::to_string(m_partition.local_rows));
    }
    const int b = m_grid.unknowns_per_cell();
    const Eigen::Index cells = m_partition.local_rows / b;
    if (cells > 0) {
      std::fill(m_component.begin(), m_component.end(), 0.0);
      for (int v = 0; v < b; ++v) {  // a zero start (the cycle is told so too)
        HYPRE_SStructVectorSetBoxValues(m_solution, 0, m_lower.data(), m_upper.data(), v, m_component.data());
      }
      for (int v = 0; v < b; ++v) {
        for (Eigen::Index c = 0; c < cells; ++c) m_component[static_cast<std::size_t>(c)] = r[b * c + v];
        HYPRE_SStructVectorSetBoxValues(m_right_hand_side, 0, m_lower.data(), m_upper.data(), v, m_component.data());
      }
    }
    HYPRE_SStructSysPFMGSolve(m_solver, m_matrix, m_right_hand_side, m_solution);
    HYPRE_SStructVectorGather(m_solution);  // hypre's documented step before reading values back
    if (z.size() != r.size()) z.resize(r.size());
    if (cells > 0) {
      for (int v = 0; v < b; ++v) {
        HYPRE_SStructVectorGetBoxValues(m_solution, 0, m_lower.data(), m_upper.data(), v, m_component.data());
        for (Eigen::Index c = 0; c < cells; ++c) z[b * c + v] = m_component[static_cast<std::size_t>(c)];
      }
    }
  }

 private:
  int unknowns_per_cell() const { return m_grid.unknowns_per_cell(); }

  /// Checks the layout, classifies the entries and fills hypre's matrix;
  /// after it the Jacobian is no longer needed.
  void fill_matrix_from(const sparse_matrix& jacobian, std::int64_t local_rows) {
    destroy_matrix_and_solver();  // a setup that throws leaves no stale hierarchy behind
    set_partition(local_rows);
    const bool wrong_shape = jacobian.rows() != m_partition.local_rows || jacobian.cols() != m_partition.global_rows ||
                             !jacobian.isCompressed();
    if (collective_or(wrong_shape)) {
      throw std::invalid_argument(
          "nkit: system_structured_multigrid_preconditioner needs the Jacobian's local rows with global columns in "
          "compressed storage (row_partition.hpp); on this rank it is " +
          std::to_string(jacobian.rows()) + " x " + std::to_string(jacobian.cols()) + ", expected " +
          std::to_string(m_partition.local_rows) + " x " + std::to_string(m_partition.global_rows));
    }
    classify_entries(jacobian);
    HYPRE_ClearAllErrors();
    HYPRE_SStructMatrixCreate(m_communicator, m_graph, &m_matrix);
    HYPRE_SStructMatrixInitialize(m_matrix);
    copy_values_into_matrix(jacobian);
    HYPRE_SStructMatrixAssemble(m_matrix);
  }

  int hypre_dimension() const { return m_grid.dimension(); }

  void set_partition(std::int64_t local_rows) {
    const detail::grid_layer_box box =
        detail::grid_layer_box_over(m_communicator, m_grid, local_rows, "system_structured_multigrid_preconditioner");
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
    destroy_graph_and_stencils();
    destroy_grid_and_vectors();
    const int b = unknowns_per_cell();
    HYPRE_SStructGridCreate(m_communicator, hypre_dimension(), 1, &m_grid_handle);
    if (m_partition.local_rows > 0) HYPRE_SStructGridSetExtents(m_grid_handle, 0, m_lower.data(), m_upper.data());
    std::vector<HYPRE_SStructVariable> types(static_cast<std::size_t>(b), HYPRE_SSTRUCT_VARIABLE_CELL);
    HYPRE_SStructGridSetVariables(m_grid_handle, 0, b, types.data());
    HYPRE_SStructGridAssemble(m_grid_handle);
    for (HYPRE_SStructVector* vector : {&m_right_hand_side, &m_solution}) {
      HYPRE_SStructVectorCreate(m_communicator, m_grid_handle, vector);
      HYPRE_SStructVectorInitialize(*vector);
      HYPRE_SStructVectorAssemble(*vector);
    }
    m_component.assign(static_cast<std::size_t>(m_partition.local_rows / b), 0.0);
  }

  /// The offset code of every Jacobian entry (m_entry_codes), and the
  /// stencils from the pattern (union over ranks, per pair of variables).
  void classify_entries(const sparse_matrix& jacobian) {
    const detail::grid_neighbour_codes neighbours(m_grid);
    const int b = unknowns_per_cell();
    const int* offsets = jacobian.outerIndexPtr();
    const int* columns = jacobian.innerIndexPtr();
    const auto rows = static_cast<std::int64_t>(jacobian.rows());
    m_entry_codes.resize(static_cast<std::size_t>(jacobian.nonZeros()));
    std::vector<std::uint32_t> masks(static_cast<std::size_t>(b) * static_cast<std::size_t>(b), 0u);
    std::int64_t bad_row = -1, bad_column = -1;
    for (std::int64_t row = 0; row < rows && bad_row < 0; ++row) {
      const std::int64_t unknown = m_partition.first_row + row;
      const std::int64_t cell = unknown / b;
      const std::array<std::int64_t, 3> at = neighbours.coordinates(cell);
      const auto variable = static_cast<std::size_t>(unknown % b);
      for (int k = offsets[row]; k < offsets[row + 1]; ++k) {
        const int code = neighbours.code(at, cell, columns[k] / b);
        if (code < 0) {
          bad_row = unknown;
          bad_column = columns[k];
          break;
        }
        m_entry_codes[static_cast<std::size_t>(k)] = static_cast<unsigned char>(code);
        masks[variable * static_cast<std::size_t>(b) + static_cast<std::size_t>(columns[k] % b)] |= 1u << code;
      }
    }
    if (collective_or(bad_row >= 0)) {
      throw std::invalid_argument(
          bad_row >= 0
              ? "nkit: system_structured_multigrid_preconditioner: the Jacobian couples unknown " +
                    std::to_string(bad_row) + " (variable " + std::to_string(bad_row % b) + " of cell " +
                    std::to_string(bad_row / b) + ") with unknown " + std::to_string(bad_column) + " (cell " +
                    std::to_string(bad_column / b) + "), which is not a neighbour on the grid " + m_grid.description() +
                    " (only offsets of at most one cell per direction fit the stencil)"
              : std::string("nkit: system_structured_multigrid_preconditioner: another rank's Jacobian couples "
                            "cells that are not grid neighbours"));
    }
    MPI_Allreduce(MPI_IN_PLACE, masks.data(), static_cast<int>(masks.size()), MPI_UINT32_T, MPI_BOR, m_communicator);
    for (std::size_t v = 0; v < static_cast<std::size_t>(b); ++v) {
      std::uint32_t& diagonal = masks[v * static_cast<std::size_t>(b) + v];
      diagonal = detail::supported_stencil_mask(diagonal | (1u << detail::stencil_centre_code), hypre_dimension());
    }
    if (masks != m_pair_masks) create_stencils(masks);
  }

  /// Variable v's stencil: for each variable w in turn, the offsets of pair
  /// (v, w) in increasing code order. m_pair_first[v·b + w] is the first
  /// entry of the pair in v's stencil, m_rank_in_pair[(v·b + w)·27 + code]
  /// the place of an offset within the pair.
  void create_stencils(const std::vector<std::uint32_t>& masks) {
    destroy_matrix_and_solver();
    destroy_graph_and_stencils();
    const int b = unknowns_per_cell();
    const auto pairs = masks.size();
    m_pair_masks = masks;
    m_pair_first.assign(pairs, 0);
    m_pair_count.assign(pairs, 0);
    m_rank_in_pair.assign(pairs * 27, 0);
    m_stencil_sizes.assign(static_cast<std::size_t>(b), 0);
    m_stencils.assign(static_cast<std::size_t>(b), nullptr);
    HYPRE_SStructGraphCreate(m_communicator, m_grid_handle, &m_graph);
    std::size_t largest = 0;
    for (int v = 0; v < b; ++v) {
      int size = 0;
      for (std::size_t pair = static_cast<std::size_t>(v) * b; pair < static_cast<std::size_t>(v + 1) * b; ++pair) {
        m_pair_first[pair] = size;
        for (int code = 0; code < 27; ++code) {
          if (masks[pair] & (1u << code))
            m_rank_in_pair[pair * 27 + static_cast<std::size_t>(code)] = m_pair_count[pair]++;
        }
        size += m_pair_count[pair];
      }
      m_stencil_sizes[static_cast<std::size_t>(v)] = size;
      largest = std::max(largest, static_cast<std::size_t>(size));
      HYPRE_SStructStencil& stencil = m_stencils[static_cast<std::size_t>(v)];
      HYPRE_SStructStencilCreate(hypre_dimension(), size, &stencil);
      int entry = 0;
      for (int w = 0; w < b; ++w) {
        const std::uint32_t mask = masks[static_cast<std::size_t>(v) * b + static_cast<std::size_t>(w)];
        for (int code = 0; code < 27; ++code) {
          if (!(mask & (1u << code))) continue;
          const std::array<int, 3> offset = detail::stencil_offset(code);
          std::array<HYPRE_Int, 3> element = {offset[0], offset[1], offset[2]};
          HYPRE_SStructStencilSetEntry(stencil, entry++, element.data(), w);
        }
      }
      HYPRE_SStructGraphSetStencil(m_graph, 0, v, stencil);
    }
    HYPRE_SStructGraphAssemble(m_graph);
    m_entries.resize(largest);
    for (std::size_t e = 0; e < largest; ++e) m_entries[e] = static_cast<HYPRE_Int>(e);
  }

  /// Copies the Jacobian's values into hypre's matrix, a slab of whole layers
  /// at a time and one variable v at a time: the staging buffer holds, for
  /// each variable w in turn, the slab's values of pair (v, w) in hypre's box
  /// order (for each cell, one value per offset of the pair), which hypre
  /// takes in one call per pair.
  void copy_values_into_matrix(const sparse_matrix& jacobian) {
    if (m_partition.local_rows == 0) return;
    constexpr std::int64_t staging_cells = std::int64_t{1} << 16;
    const int b = unknowns_per_cell();
    const int* offsets = jacobian.outerIndexPtr();
    const int* columns = jacobian.innerIndexPtr();
    const double* values = jacobian.valuePtr();
    const std::int64_t layer = detail::layer_cell_count(m_grid);
    const std::int64_t layers_per_slab = std::max<std::int64_t>(1, staging_cells / layer);
    const auto slowest = static_cast<std::size_t>(m_grid.dimension() - 1);
    std::array<HYPRE_Int, 3> lower = m_lower, upper = m_upper;
    for (std::int64_t first_layer = m_lower[slowest]; first_layer <= m_upper[slowest]; first_layer += layers_per_slab) {
      const std::int64_t last_layer = std::min<std::int64_t>(first_layer + layers_per_slab - 1, m_upper[slowest]);
      const std::int64_t first_cell = (first_layer - m_lower[slowest]) * layer;
      const std::int64_t slab_cells = (last_layer - first_layer + 1) * layer;
      lower[slowest] = static_cast<HYPRE_Int>(first_layer);
      upper[slowest] = static_cast<HYPRE_Int>(last_layer);
      for (int v = 0; v < b; ++v) {
        const auto pair_of_v = static_cast<std::size_t>(v) * static_cast<std::size_t>(b);
        m_values.assign(static_cast<std::size_t>(slab_cells) *
                            static_cast<std::size_t>(m_stencil_sizes[static_cast<std::size_t>(v)]),
                        0.0);
        for (std::int64_t cell = 0; cell < slab_cells; ++cell) {
          const std::int64_t row = (first_cell + cell) * b + v;
          for (int k = offsets[row]; k < offsets[row + 1]; ++k) {
            const std::size_t pair = pair_of_v + static_cast<std::size_t>(columns[k] % b);
            const std::size_t code = m_entry_codes[static_cast<std::size_t>(k)];
            const auto at = static_cast<std::size_t>(slab_cells * m_pair_first[pair] + cell * m_pair_count[pair] +
                                                     m_rank_in_pair[pair * 27 + code]);
            m_values[at] += values[k];
          }
        }
        for (int w = 0; w < b; ++w) {
          const std::size_t pair = pair_of_v + static_cast<std::size_t>(w);
          if (m_pair_count[pair] == 0) continue;
          HYPRE_SStructMatrixSetBoxValues(m_matrix, 0, lower.data(), upper.data(), v, m_pair_count[pair],
                                          m_entries.data() + m_pair_first[pair],
                                          m_values.data() + slab_cells * m_pair_first[pair]);
        }
      }
    }
  }

  /// The multigrid hierarchy of the filled matrix.
  setup_status build_hierarchy() {
    HYPRE_SStructSysPFMGCreate(m_communicator, &m_solver);
    HYPRE_SStructSysPFMGSetPrintLevel(m_solver, 0);
    HYPRE_SStructSysPFMGSetLogging(m_solver, 0);
    HYPRE_SStructSysPFMGSetTol(m_solver, 0.0);  // a fixed number of cycles, no convergence test
    HYPRE_SStructSysPFMGSetMaxIter(m_solver, m_settings.cycles_per_application);
    HYPRE_SStructSysPFMGSetZeroGuess(m_solver);
    HYPRE_SStructSysPFMGSetRelaxType(m_solver, detail::hypre_code(m_settings.smoother));
    HYPRE_SStructSysPFMGSetNumPreRelax(m_solver, m_settings.smoothing_sweeps_before);
    HYPRE_SStructSysPFMGSetNumPostRelax(m_solver, m_settings.smoothing_sweeps_after);
    HYPRE_SStructSysPFMGSetSkipRelax(m_solver, m_settings.skip_relaxation_where_isotropic ? 1 : 0);
    const HYPRE_Int code = HYPRE_SStructSysPFMGSetup(m_solver, m_matrix, m_right_hand_side, m_solution);
    if (collective_or(code != 0 && !HYPRE_CheckError(code, HYPRE_ERROR_CONV))) {
      destroy_matrix_and_solver();
      HYPRE_ClearAllErrors();
      return setup_status::failed;
    }
    HYPRE_ClearAllErrors();
    return setup_status::ready;
  }

  void destroy_matrix_and_solver() {
    if (m_solver != nullptr) HYPRE_SStructSysPFMGDestroy(m_solver);
    if (m_matrix != nullptr) HYPRE_SStructMatrixDestroy(m_matrix);
    m_solver = nullptr;
    m_matrix = nullptr;
  }
  void destroy_graph_and_stencils() {
    if (m_graph != nullptr) HYPRE_SStructGraphDestroy(m_graph);
    for (HYPRE_SStructStencil stencil : m_stencils) {
      if (stencil != nullptr) HYPRE_SStructStencilDestroy(stencil);
    }
    m_graph = nullptr;
    m_stencils.clear();
    m_pair_masks.clear();  // the stencils went with the graph
  }
  void destroy_grid_and_vectors() {
    if (m_right_hand_side != nullptr) HYPRE_SStructVectorDestroy(m_right_hand_side);
    if (m_solution != nullptr) HYPRE_SStructVectorDestroy(m_solution);
    if (m_grid_handle != nullptr) HYPRE_SStructGridDestroy(m_grid_handle);
    m_right_hand_side = m_solution = nullptr;
    m_grid_handle = nullptr;
  }
  void release() {
    destroy_matrix_and_solver();
    destroy_graph_and_stencils();
    destroy_grid_and_vectors();
  }
  void take(system_structured_multigrid_preconditioner& other) {
    m_communicator = other.m_communicator;
    m_grid = other.m_grid;
    m_settings = other.m_settings;
    m_partition = other.m_partition;
    m_lower = other.m_lower;
    m_upper = other.m_upper;
    m_grid_handle = other.m_grid_handle;
    m_stencils = std::move(other.m_stencils);
    m_graph = other.m_graph;
    m_matrix = other.m_matrix;
    m_right_hand_side = other.m_right_hand_side;
    m_solution = other.m_solution;
    m_solver = other.m_solver;
    m_pair_masks = std::move(other.m_pair_masks);
    m_pair_first = std::move(other.m_pair_first);
    m_pair_count = std::move(other.m_pair_count);
    m_rank_in_pair = std::move(other.m_rank_in_pair);
    m_stencil_sizes = std::move(other.m_stencil_sizes);
    m_entries = std::move(other.m_entries);
    m_entry_codes = std::move(other.m_entry_codes);
    m_values = std::move(other.m_values);
    m_component = std::move(other.m_component);
    other.m_grid_handle = nullptr;
    other.m_stencils.clear();
    other.m_graph = nullptr;
    other.m_matrix = nullptr;
    other.m_right_hand_side = other.m_solution = nullptr;
    other.m_solver = nullptr;
  }

  MPI_Comm m_communicator = MPI_COMM_NULL;
  structured_grid m_grid;
  system_structured_multigrid_settings m_settings;
  row_partition m_partition;
  std::array<HYPRE_Int, 3> m_lower{};
  std::array<HYPRE_Int, 3> m_upper{};
  HYPRE_SStructGrid m_grid_handle = nullptr;
  std::vector<HYPRE_SStructStencil> m_stencils;  ///< one per variable
  HYPRE_SStructGraph m_graph = nullptr;
  HYPRE_SStructMatrix m_matrix = nullptr;
  HYPRE_SStructVector m_right_hand_side = nullptr;
  HYPRE_SStructVector m_solution = nullptr;
  HYPRE_SStructSolver m_solver = nullptr;
  std::vector<std::uint32_t> m_pair_masks;   ///< offset codes of each pair (v, w) as bits (empty: none yet)
  std::vector<int> m_pair_first;             ///< first entry of pair (v, w) in v's stencil
  std::vector<int> m_pair_count;             ///< offsets of pair (v, w)
  std::vector<int> m_rank_in_pair;           ///< place of each code within its pair
  std::vector<int> m_stencil_sizes;          ///< entries of each variable's stencil
  std::vector<HYPRE_Int> m_entries;          ///< 0 … largest stencil size − 1, for SetBoxValues
  std::vector<unsigned char> m_entry_codes;  ///< offset code of each Jacobian entry (setup workspace)
  std::vector<double> m_values;              ///< one slab's values of one variable's stencil
  std::vector<double> m_component;           ///< one variable's values over this rank's cells (apply)
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_HYPRE_SYSTEM_STRUCTURED_MULTIGRID_HPP
