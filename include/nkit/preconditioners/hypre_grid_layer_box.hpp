#ifndef NKIT_PRECONDITIONERS_HYPRE_GRID_LAYER_BOX_HPP
#define NKIT_PRECONDITIONERS_HYPRE_GRID_LAYER_BOX_HPP

/// \file preconditioners/hypre_grid_layer_box.hpp
/// A rank's rows of a structured-grid problem as one box of whole layers of
/// the grid's slowest direction: the layout hypre's structured and
/// semi-structured interfaces take from nkit's distributed rows (one box per
/// rank), checked collectively. Used by both structured multigrid
/// preconditioners (hypre_structured_multigrid.hpp and
/// hypre_system_structured_multigrid.hpp).

#include <mpi.h>

#include <array>
#include <cstddef>
#include <cstdint>
#include <stdexcept>
#include <string>

#include "../distributed/mpi_agreement.hpp"
#include "../distributed/row_partition.hpp"
#include "../grids/structured_grid.hpp"
#include "grid_stencil_offsets.hpp"

namespace nkit::detail {

struct grid_layer_box {
  row_partition partition;
  /// Inclusive cell indices of the box per direction (0 beyond the grid's dimension).
  std::array<std::int64_t, 3> lower{}, upper{};
};

/// The box of this rank's `local_rows` rows (rank order, unknowns
/// interleaved per cell). Collective. Throws std::invalid_argument, naming
/// `owner`, when the ranks' rows do not add up to the grid's unknowns or a
/// rank's rows are not whole layers (the unknowns of whole grid rows in 2-D,
/// planes in 3-D).
inline grid_layer_box grid_layer_box_over(MPI_Comm communicator, const structured_grid& grid, std::int64_t local_rows,
                                          const std::string& owner) {
  grid_layer_box box;
  box.partition = row_partition_over(communicator, local_rows);
  const row_partition& rows = box.partition;
  const auto unknowns = static_cast<std::int64_t>(grid.unknowns());
  if (rows.global_rows != unknowns) {
    throw std::invalid_argument("nkit: " + owner + ": the ranks hold " + std::to_string(rows.global_rows) +
                                " unknowns in all, the grid " + grid.description() + " has " +
                                std::to_string(unknowns));
  }
  const int per_cell = grid.unknowns_per_cell();
  const std::int64_t layer = layer_cell_count(grid) * per_cell;
  if (true_on_any_rank(communicator, rows.first_row % layer != 0 || rows.local_rows % layer != 0)) {
    const std::string unit = per_cell == 1 ? " cells" : " unknowns: " + std::to_string(per_cell) + " per cell";
    throw std::invalid_argument("nkit: " + owner +
                                " needs each rank's rows to be whole layers of the slowest grid direction "
                                "(multiples of " +
                                std::to_string(layer) + unit + "); on this rank they are rows " +
                                std::to_string(rows.first_row) + " to " + std::to_string(rows.end_row() - 1));
  }
  const int dimension = grid.dimension();
  for (int a = 0; a < 3; ++a) box.upper[static_cast<std::size_t>(a)] = a < dimension ? grid.cells(a) - 1 : 0;
  const auto slowest = static_cast<std::size_t>(dimension - 1);
  box.lower[slowest] = rows.first_row / layer;
  box.upper[slowest] = rows.end_row() / layer - 1;
  return box;
}

}  // namespace nkit::detail

#endif  // NKIT_PRECONDITIONERS_HYPRE_GRID_LAYER_BOX_HPP
