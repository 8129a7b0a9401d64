#ifndef NKIT_PRECONDITIONERS_GRID_STENCIL_OFFSETS_HPP
#define NKIT_PRECONDITIONERS_GRID_STENCIL_OFFSETS_HPP

/// \file preconditioners/grid_stencil_offsets.hpp
/// The neighbour offsets of a cell on a structured grid as codes 0 … 26 (the
/// stencil points of the structured-grid multigrid preconditioners,
/// hypre_structured_multigrid.hpp and hypre_system_structured_multigrid.hpp):
/// which offset a Jacobian entry's column lies at, which stencils hypre's
/// semicoarsening Galerkin products are written for, and the cells of one
/// layer of the slowest direction. No hypre or MPI dependency.

#include <array>
#include <cstdint>

#include "../grids/structured_grid.hpp"

namespace nkit {
namespace detail {

/// The 3^d neighbour offsets as codes 0 … 26: code = (di+1) + 3(dj+1) + 9(dk+1),
/// so the centre is 13.
constexpr int stencil_centre_code = 13;
inline std::array<int, 3> stencil_offset(int code) { return {code % 3 - 1, code / 3 % 3 - 1, code / 9 - 1}; }
/// Number of directions in which an offset code moves.
inline int stencil_reach(int code) {
  const std::array<int, 3> offset = stencil_offset(code);
  return (offset[0] != 0) + (offset[1] != 0) + (offset[2] != 0);
}
/// Codes (as a bit mask) of the offsets moving in at most `directions`
/// directions, among the offsets of a `dimension`-D grid.
inline std::uint32_t stencil_mask(int dimension, int directions) {
  std::uint32_t mask = 0;
  for (int code = 0; code < 27; ++code) {
    const bool in_grid = stencil_offset(code)[2] == 0 || dimension == 3;
    if (in_grid && stencil_reach(code) <= directions) mask |= 1u << code;
  }
  return mask;
}
/// The star stencil (centre and the 2·dimension axis neighbours).
inline std::uint32_t star_stencil_mask(int dimension) { return stencil_mask(dimension, 1); }
/// The smallest stencil hypre's semicoarsening multigrid handles that holds
/// `mask` (its Galerkin products are written for 5- and 9-point stencils in
/// 2-D and 7-, 19- and 27-point stencils in 3-D; the extra points are zero).
inline std::uint32_t supported_stencil_mask(std::uint32_t mask, int dimension) {
  for (int directions = 1; directions <= dimension; ++directions) {
    const std::uint32_t candidate = stencil_mask(dimension, directions);
    if ((mask & ~candidate) == 0) return candidate;
  }
  return stencil_mask(dimension, dimension);
}

/// Cells in one layer of the slowest direction of `grid` (a grid row in 2-D,
/// a plane in 3-D, one cell in 1-D).
inline std::int64_t layer_cell_count(const structured_grid& grid) {
  std::int64_t cells = 1;
  for (int a = 0; a + 1 < grid.dimension(); ++a) cells *= grid.cells(a);
  return cells;
}

/// The offset code at which cell `column` lies from cell `cell` on a grid, or
/// −1 when it is no neighbour (a step of more than one cell in a direction, a
/// step in a direction the grid does not have, or a step off the grid: a
/// periodic wrap or an index one past the end of a grid row).
class grid_neighbour_codes {
 public:
  explicit grid_neighbour_codes(const structured_grid& grid)
      : m_dimension(grid.dimension()),
        m_extent{grid.cells(0), grid.cells(1), grid.cells(2)},
        m_plane(m_extent[0] * m_extent[1]),
        // The steps (dx, dy, dz) follow from d = column − cell = dx + nx·dy + plane·dz by comparisons
        // alone when that has one solution with |dx|, |dy|, |dz| <= 1: when nx >= 3 and, in 3-D,
        // ny >= 3 (then |dx + nx·dy| <= nx + 1 < plane/2 and |dx| <= 1 < nx/2). Narrower grids take
        // the coordinates of the column by division.
        m_steps_by_comparison((m_dimension < 2 || m_extent[0] >= 3) && (m_dimension < 3 || m_extent[1] >= 3)) {}

  /// The grid coordinates of `cell`; compute them once per row and pass them to code().
  std::array<std::int64_t, 3> coordinates(std::int64_t cell) const {
    return {cell % m_extent[0], cell / m_extent[0] % m_extent[1], cell / m_plane};
  }

  /// `at` must be coordinates(cell): the divisions stay out of the loop over a row's entries.
  int code(const std::array<std::int64_t, 3>& at, std::int64_t cell, std::int64_t column) const {
    std::array<std::int64_t, 3> step{};
    if (m_steps_by_comparison) {
      std::int64_t d = column - cell;
      step[2] = m_dimension < 3 ? 0 : 2 * d > m_plane ? 1 : 2 * d < -m_plane ? -1 : 0;
      d -= step[2] * m_plane;
      step[1] = m_dimension < 2 ? 0 : 2 * d > m_extent[0] ? 1 : 2 * d < -m_extent[0] ? -1 : 0;
      step[0] = d - step[1] * m_extent[0];
    } else {
      step = {column % m_extent[0] - at[0], column / m_extent[0] % m_extent[1] - at[1], column / m_plane - at[2]};
    }
    // Near when every step is −1, 0 or 1 (0 beyond the grid's dimension) and lands on the grid:
    // then column is the cell at + step, whichever way the steps were found.
    int result = 0, scale = 1;
    for (std::size_t a = 0; a < 3; ++a) {
      const std::int64_t to = at[a] + step[a];
      const bool near = step[a] >= -1 && step[a] <= 1 && (static_cast<int>(a) < m_dimension || step[a] == 0) &&
                        to >= 0 && to < m_extent[a];
      if (!near) return -1;
      result += scale * static_cast<int>(step[a] + 1);
      scale *= 3;
    }
    return result;
  }

 private:
  int m_dimension;
  std::array<std::int64_t, 3> m_extent;
  std::int64_t m_plane;
  bool m_steps_by_comparison;
};

}  // namespace detail
}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_GRID_STENCIL_OFFSETS_HPP
