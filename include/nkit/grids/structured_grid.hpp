#ifndef NKIT_GRIDS_STRUCTURED_GRID_HPP
#define NKIT_GRIDS_STRUCTURED_GRID_HPP

/// \file grids/structured_grid.hpp
/// The declaration of a logically rectangular, cell-centred grid: 1, 2 or 3
/// directions with n_d cells each, b unknowns per cell, and the domain length
/// along each direction (so the cell size h_d = length_d / n_d).
///
/// Numbering (the one of jacobian/sparsity_pattern.hpp's grid helpers): cell
/// (i, j, k) is c = i + nx·(j + ny·k), i fastest; unknown `component` of cell
/// c has index b·c + component, so the unknowns of a cell are interleaved
/// (contiguous per cell). Cell (i, j, k) has its centre at ((i + ½) h_x,
/// (j + ½) h_y, (k + ½) h_z) from the domain's lower corner. Directions a
/// grid does not have count as one cell of length 1.
///
/// Coarsening by two halves every extent (each coarse cell is the union of
/// 2^d fine cells: cells 2i and 2i + 1 of a direction make coarse cell i) and
/// keeps the domain lengths; it needs every extent even. Refining doubles the
/// extents. Bad input throws std::invalid_argument naming the value. A grid
/// is a small value type (no allocation beyond its own few numbers).

#include <Eigen/Core>
#include <array>
#include <cmath>
#include <cstddef>
#include <stdexcept>
#include <string>
#include <vector>

#include "../detail/checks.hpp"

namespace nkit {

class structured_grid {
 public:
  /// `cells_per_direction`: 1 to 3 extents, each >= 1. `domain_lengths`:
  /// empty (every cell has size 1 in every direction: lengths = extents) or
  /// one finite length > 0 per direction. Throws std::invalid_argument for
  /// anything else, and for more unknowns than a 32-bit sparse-matrix index
  /// holds.
  explicit structured_grid(const std::vector<int>& cells_per_direction, int unknowns_per_cell = 1,
                           const std::vector<double>& domain_lengths = {}) {
    const std::size_t d = cells_per_direction.size();
    if (d < 1 || d > 3) {
      throw std::invalid_argument("nkit: structured_grid needs 1, 2 or 3 entries in cells_per_direction (got " +
                                  std::to_string(d) + ")");
    }
    if (!domain_lengths.empty() && domain_lengths.size() != d) {
      throw std::invalid_argument("nkit: structured_grid domain_lengths has " + std::to_string(domain_lengths.size()) +
                                  " entries, cells_per_direction " + std::to_string(d) + " (give one per direction)");
    }
    detail::require_at_least("structured_grid unknowns_per_cell", unknowns_per_cell, 1);
    m_dimension = static_cast<int>(d);
    m_unknowns_per_cell = unknowns_per_cell;
    double total = unknowns_per_cell;
    for (std::size_t a = 0; a < d; ++a) {
      const std::string entry = "[" + std::to_string(a) + "]";
      detail::require_at_least("structured_grid cells_per_direction" + entry, cells_per_direction[a], 1);
      m_cells[a] = cells_per_direction[a];
      total *= cells_per_direction[a];
      if (domain_lengths.empty()) {
        m_lengths[a] = cells_per_direction[a];
      } else {
        detail::require_positive("structured_grid domain_lengths" + entry, domain_lengths[a]);
        m_lengths[a] = domain_lengths[a];
      }
    }
    if (total > 2147483647.0) {
      throw std::invalid_argument("nkit: structured_grid has " + detail::number_text(total) +
                                  " unknowns, more than the sparse-matrix index type holds");
    }
  }

  /// Number of directions: 1, 2 or 3.
  int dimension() const { return m_dimension; }
  /// Cells along `direction` (0 = i, 1 = j, 2 = k); 1 for a direction the grid does not have.
  int cells(int direction) const { return m_cells[checked(direction)]; }
  /// Cells in the whole grid.
  Eigen::Index cell_count() const {
    return static_cast<Eigen::Index>(m_cells[0]) * m_cells[1] * static_cast<Eigen::Index>(m_cells[2]);
  }
  int unknowns_per_cell() const { return m_unknowns_per_cell; }
  /// Length of the state vector: cells × unknowns per cell.
  Eigen::Index unknowns() const { return cell_count() * m_unknowns_per_cell; }
  /// Domain length along `direction` (1 for a direction the grid does not have).
  double domain_length(int direction) const { return m_lengths[checked(direction)]; }
  /// Cell size h along `direction`.
  double cell_size(int direction) const { return m_lengths[checked(direction)] / m_cells[checked(direction)]; }
  /// Coordinate of the centre of cell `index` along `direction`: (index + ½) h.
  double cell_center(int direction, int index) const { return (index + 0.5) * cell_size(direction); }

  /// c = i + nx (j + ny k); no range check (a hot-loop helper).
  Eigen::Index cell_index(int i, int j = 0, int k = 0) const {
    return i + static_cast<Eigen::Index>(m_cells[0]) * (j + static_cast<Eigen::Index>(m_cells[1]) * k);
  }
  /// b·c + component: where unknown `component` of cell c sits in the state vector.
  Eigen::Index unknown_index(Eigen::Index cell, int component = 0) const {
    return cell * m_unknowns_per_cell + component;
  }

  /// Whether coarsened() succeeds: every extent even.
  bool can_coarsen() const {
    for (int a = 0; a < m_dimension; ++a) {
      if (m_cells[static_cast<std::size_t>(a)] % 2 != 0) return false;
    }
    return true;
  }
  /// The grid with half the cells per direction over the same domain. Throws
  /// std::invalid_argument naming the first odd extent.
  structured_grid coarsened() const {
    structured_grid coarse = *this;
    for (std::size_t a = 0; a < static_cast<std::size_t>(m_dimension); ++a) {
      if (m_cells[a] % 2 != 0) {
        throw std::invalid_argument("nkit: structured_grid cells_per_direction[" + std::to_string(a) +
                                    "] must be even to coarsen by two (got " + std::to_string(m_cells[a]) + ")");
      }
      coarse.m_cells[a] = m_cells[a] / 2;
    }
    return coarse;
  }
  /// The grid with twice the cells per direction over the same domain (throws
  /// like the constructor when it gets too large).
  structured_grid refined() const {
    std::vector<int> extents;
    std::vector<double> lengths;
    for (std::size_t a = 0; a < static_cast<std::size_t>(m_dimension); ++a) {
      if (m_cells[a] > 1073741823) {
        throw std::invalid_argument("nkit: structured_grid cells_per_direction[" + std::to_string(a) +
                                    "] is too large to refine (got " + std::to_string(m_cells[a]) + ")");
      }
      extents.push_back(2 * m_cells[a]);
      lengths.push_back(m_lengths[a]);
    }
    return structured_grid(extents, m_unknowns_per_cell, lengths);
  }

  /// Same dimension, extents, unknowns per cell and domain lengths (lengths
  /// equal to a relative 1e-12: they may come from different arithmetic).
  friend bool operator==(const structured_grid& a, const structured_grid& b) {
    if (a.m_dimension != b.m_dimension || a.m_unknowns_per_cell != b.m_unknowns_per_cell) return false;
    for (std::size_t d = 0; d < 3; ++d) {
      if (a.m_cells[d] != b.m_cells[d]) return false;
      if (std::abs(a.m_lengths[d] - b.m_lengths[d]) > 1e-12 * std::abs(a.m_lengths[d])) return false;
    }
    return true;
  }
  friend bool operator!=(const structured_grid& a, const structured_grid& b) { return !(a == b); }

  /// "64 x 32 cells, 2 unknowns per cell" (for messages).
  std::string description() const {
    std::string text;
    for (int a = 0; a < m_dimension; ++a) {
      if (a > 0) text += " x ";
      text += std::to_string(m_cells[static_cast<std::size_t>(a)]);
    }
    return text + " cells, " + std::to_string(m_unknowns_per_cell) + " unknown" +
           (m_unknowns_per_cell == 1 ? "" : "s") + " per cell";
  }

 private:
  std::size_t checked(int direction) const {
    if (direction < 0 || direction > 2) {
      throw std::invalid_argument("nkit: structured_grid direction must be 0, 1 or 2 (got " +
                                  std::to_string(direction) + ")");
    }
    return static_cast<std::size_t>(direction);
  }

  int m_dimension = 1;
  int m_unknowns_per_cell = 1;
  std::array<int, 3> m_cells{{1, 1, 1}};
  std::array<double, 3> m_lengths{{1.0, 1.0, 1.0}};
};

/// The grids of a sequence coarse → fine: `level_count` grids, the last one
/// `finest`, each the coarsening by two of the next. Throws
/// std::invalid_argument when level_count < 1 or an extent is odd before the
/// coarsest level is reached.
inline std::vector<structured_grid> coarsening_sequence(const structured_grid& finest, int level_count) {
  detail::require_at_least("coarsening_sequence level_count", level_count, 1);
  std::vector<structured_grid> grids(static_cast<std::size_t>(level_count), finest);
  for (int level = level_count - 2; level >= 0; --level) {
    const structured_grid& finer = grids[static_cast<std::size_t>(level) + 1];
    if (!finer.can_coarsen()) {
      throw std::invalid_argument("nkit: coarsening_sequence cannot make " + std::to_string(level_count) +
                                  " levels from " + finest.description() + ": level " + std::to_string(level + 1) +
                                  " (" + finer.description() + ") has an odd extent");
    }
    grids[static_cast<std::size_t>(level)] = finer.coarsened();
  }
  return grids;
}

}  // namespace nkit

#endif  // NKIT_GRIDS_STRUCTURED_GRID_HPP
