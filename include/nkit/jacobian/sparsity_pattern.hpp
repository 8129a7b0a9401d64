#ifndef NKIT_JACOBIAN_SPARSITY_PATTERN_HPP
#define NKIT_JACOBIAN_SPARSITY_PATTERN_HPP

/// \file jacobian/sparsity_pattern.hpp
/// Where a sparse Jacobian may have nonzeros, in compressed rows, and
/// helpers that build the patterns of structured-grid stencils.
///
/// Grid numbering (all helpers): cell (i, j, k) of an nx × ny × nz grid is
/// c = i + nx·(j + ny·k) (natural ordering, i fastest); with b unknowns per
/// cell, unknown `component` of cell c has index b·c + component, so the b
/// unknowns of a cell are contiguous (the layout block_jacobi expects). Each
/// stencil neighbour couples every unknown of the cell with every unknown of
/// the neighbour (full b × b blocks, the usual case for coupled systems).
///
/// Allocation: building a pattern allocates; a pattern is built once and
/// reused by colored finite differences and by preconditioner setups.

#include <algorithm>
#include <cstddef>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "../core/preconditioner.hpp"

namespace nkit {

/// Structure of a sparse matrix in compressed rows: the columns of row i are
/// column_indices[row_starts[i] .. row_starts[i+1]), strictly increasing.
struct sparsity_pattern {
  int rows = 0;
  int columns = 0;
  std::vector<int> row_starts{0};
  std::vector<int> column_indices;
  /// Order in which greedy coloring (column_coloring.hpp) visits the
  /// columns; empty = natural order. The grid helpers set an order that
  /// reaches the optimal number of colors for their stencil.
  std::vector<int> coloring_order;

  std::size_t nonzeros() const { return column_indices.size(); }
  /// Largest number of entries in one row (a lower bound on the number of
  /// colors any column grouping needs: Coleman & Moré 1983).
  int maximum_row_nonzeros() const {
    int widest = 0;
    for (int i = 0; i < rows; ++i) widest = std::max(widest, row_starts[i + 1] - row_starts[i]);
    return widest;
  }
  bool contains(int row, int column) const {
    const auto first = column_indices.begin() + row_starts[static_cast<std::size_t>(row)];
    const auto last = column_indices.begin() + row_starts[static_cast<std::size_t>(row) + 1];
    return std::binary_search(first, last, column);
  }
  friend bool operator==(const sparsity_pattern& a, const sparsity_pattern& b) {
    return a.rows == b.rows && a.columns == b.columns && a.row_starts == b.row_starts &&
           a.column_indices == b.column_indices && a.coloring_order == b.coloring_order;
  }
  friend bool operator!=(const sparsity_pattern& a, const sparsity_pattern& b) { return !(a == b); }

  /// Throws std::invalid_argument when the arrays do not describe a valid
  /// pattern (sizes, monotone row starts, sorted in-range unique columns).
  void validate() const {
    const auto fail = [](const std::string& what) { throw std::invalid_argument("nkit: sparsity_pattern." + what); };
    if (rows < 0 || columns < 0) fail("rows and columns must be >= 0");
    if (row_starts.size() != static_cast<std::size_t>(rows) + 1 || row_starts.front() != 0) {
      fail("row_starts must have rows + 1 entries starting at 0 (got " + std::to_string(row_starts.size()) + ")");
    }
    if (static_cast<std::size_t>(row_starts.back()) != column_indices.size()) {
      fail("row_starts.back() must equal column_indices.size()");
    }
    for (int i = 0; i < rows; ++i) {
      if (row_starts[i + 1] < row_starts[i]) fail("row_starts must not decrease (row " + std::to_string(i) + ")");
      for (int p = row_starts[i]; p < row_starts[i + 1]; ++p) {
        const int column = column_indices[static_cast<std::size_t>(p)];
        if (column < 0 || column >= columns) {
          fail("column_indices out of range in row " + std::to_string(i) + " (got " + std::to_string(column) + ")");
        }
        if (p > row_starts[i] && column <= column_indices[static_cast<std::size_t>(p) - 1]) {
          fail("column_indices must increase strictly within row " + std::to_string(i));
        }
      }
    }
    if (!coloring_order.empty()) {
      std::vector<bool> visited(static_cast<std::size_t>(columns), false);
      bool permutation = coloring_order.size() == static_cast<std::size_t>(columns);
      for (std::size_t q = 0; permutation && q < coloring_order.size(); ++q) {
        const int column = coloring_order[q];
        permutation = column >= 0 && column < columns && !visited[static_cast<std::size_t>(column)];
        if (permutation) visited[static_cast<std::size_t>(column)] = true;
      }
      if (!permutation) fail("coloring_order must be empty or a permutation of 0 .. columns-1");
    }
  }
};

/// The structure of `matrix` (stored entries, explicit zeros included).
inline sparsity_pattern pattern_of(const sparse_matrix& matrix) {
  sparsity_pattern pattern;
  pattern.rows = static_cast<int>(matrix.rows());
  pattern.columns = static_cast<int>(matrix.cols());
  pattern.row_starts.assign(static_cast<std::size_t>(pattern.rows) + 1, 0);
  pattern.column_indices.reserve(static_cast<std::size_t>(matrix.nonZeros()));
  for (int i = 0; i < pattern.rows; ++i) {
    for (sparse_matrix::InnerIterator entry(matrix, i); entry; ++entry) {
      pattern.column_indices.push_back(static_cast<int>(entry.col()));
    }
    std::sort(pattern.column_indices.begin() + pattern.row_starts[static_cast<std::size_t>(i)],
              pattern.column_indices.end());
    pattern.row_starts[static_cast<std::size_t>(i) + 1] = static_cast<int>(pattern.column_indices.size());
  }
  return pattern;
}

/// A compressed-row matrix with exactly this structure and all values zero.
inline sparse_matrix zero_matrix_with_pattern(const sparsity_pattern& pattern) {
  sparse_matrix matrix(pattern.rows, pattern.columns);
  Eigen::VectorXi row_sizes(pattern.rows);
  for (int i = 0; i < pattern.rows; ++i) row_sizes(i) = pattern.row_starts[i + 1] - pattern.row_starts[i];
  matrix.reserve(row_sizes);
  for (int i = 0; i < pattern.rows; ++i) {
    for (int p = pattern.row_starts[i]; p < pattern.row_starts[i + 1]; ++p) {
      matrix.insert(i, pattern.column_indices[static_cast<std::size_t>(p)]) = 0.0;
    }
  }
  matrix.makeCompressed();
  return matrix;
}

namespace detail {

struct cell_offset {
  int di, dj, dk;
};

/// Pattern of a stencil on an nx × ny × nz grid with b unknowns per cell.
inline sparsity_pattern grid_stencil_pattern(int nx, int ny, int nz, int unknowns_per_cell,
                                             const std::vector<cell_offset>& stencil, const char* helper) {
  if (nx < 1 || ny < 1 || nz < 1) {
    throw std::invalid_argument(std::string("nkit: ") + helper + " grid sizes must be >= 1 (got " + std::to_string(nx) +
                                " x " + std::to_string(ny) + " x " + std::to_string(nz) + ")");
  }
  if (unknowns_per_cell < 1) {
    throw std::invalid_argument(std::string("nkit: ") + helper + " unknowns_per_cell must be >= 1 (got " +
                                std::to_string(unknowns_per_cell) + ")");
  }
  const int b = unknowns_per_cell;
  const long long cells = static_cast<long long>(nx) * ny * nz;
  if (cells * b * static_cast<long long>(stencil.size()) * b > 2147483647LL) {
    throw std::invalid_argument(std::string("nkit: ") + helper + " pattern too large for 32-bit indices");
  }
  sparsity_pattern pattern;
  pattern.rows = pattern.columns = static_cast<int>(cells * b);
  pattern.row_starts.assign(static_cast<std::size_t>(pattern.rows) + 1, 0);
  pattern.column_indices.reserve(static_cast<std::size_t>(cells) * stencil.size() * static_cast<std::size_t>(b * b));
  std::vector<int> neighbour_cells;
  neighbour_cells.reserve(stencil.size());
  int row = 0;
  for (int k = 0; k < nz; ++k) {
    for (int j = 0; j < ny; ++j) {
      for (int i = 0; i < nx; ++i) {
        neighbour_cells.clear();
        for (const cell_offset& offset : stencil) {
          const int ni = i + offset.di, nj = j + offset.dj, nk = k + offset.dk;
          if (ni < 0 || ni >= nx || nj < 0 || nj >= ny || nk < 0 || nk >= nz) continue;
          neighbour_cells.push_back(ni + nx * (nj + ny * nk));
        }
        std::sort(neighbour_cells.begin(), neighbour_cells.end());
        for (int component = 0; component < b; ++component, ++row) {
          for (const int cell : neighbour_cells) {
            for (int other = 0; other < b; ++other) pattern.column_indices.push_back(b * cell + other);
          }
          pattern.row_starts[static_cast<std::size_t>(row) + 1] = static_cast<int>(pattern.column_indices.size());
        }
      }
    }
  }
  return pattern;
}

/// Greedy column order for the face-neighbour stencils: cells sorted by
/// class (i + 2j + 3k) mod m, m = 5 in 2D (nz = 1) and 7 in 3D, then by
/// index; the b columns of a cell stay together. Each class is a set of
/// pairwise structurally orthogonal cells: no two are within distance two in
/// the stencil graph, because every offset (di, dj, dk) with |di| + |dj| + |dk|
/// <= 2 gives di + 2dj + 3dk in ±{1, ..., 4} (2D) or ±{1, ..., 6} (3D), never
/// 0 mod m (the colouring tests check it too). So greedy in this order needs at most m·b colors: the
/// optimum, since rows have m·b entries (lower bound of T.F. Coleman &
/// J.J. Moré, SIAM J. Numer. Anal. 20 (1983) 187–209). Natural order
/// needs 7 colors for the 2D five-point stencil (measured).
inline std::vector<int> face_stencil_coloring_order(int nx, int ny, int nz, int unknowns_per_cell) {
  const int modulus = nz == 1 ? 5 : 7;
  std::vector<int> order;
  order.reserve(static_cast<std::size_t>(nx) * static_cast<std::size_t>(ny) * static_cast<std::size_t>(nz) *
                static_cast<std::size_t>(unknowns_per_cell));
  for (int cls = 0; cls < modulus; ++cls) {
    for (int k = 0; k < nz; ++k) {
      for (int j = 0; j < ny; ++j) {
        for (int i = 0; i < nx; ++i) {
          if ((i + 2 * j + 3 * k) % modulus != cls) continue;
          const int cell = i + nx * (j + ny * k);
          for (int component = 0; component < unknowns_per_cell; ++component) {
            order.push_back(unknowns_per_cell * cell + component);
          }
        }
      }
    }
  }
  return order;
}

}  // namespace detail

/// 1D three-point stencil (cell and its two neighbours) on n cells.
inline sparsity_pattern three_point_line_pattern(int cells, int unknowns_per_cell = 1) {
  return detail::grid_stencil_pattern(cells, 1, 1, unknowns_per_cell, {{-1, 0, 0}, {0, 0, 0}, {1, 0, 0}},
                                      "three_point_line_pattern");
}

/// 2D five-point stencil (cell plus its four face neighbours) on nx × ny
/// cells; carries a coloring order that reaches 5·b colors.
inline sparsity_pattern five_point_grid_pattern(int nx, int ny, int unknowns_per_cell = 1) {
  sparsity_pattern pattern = detail::grid_stencil_pattern(nx, ny, 1, unknowns_per_cell,
                                                          {{0, -1, 0}, {-1, 0, 0}, {0, 0, 0}, {1, 0, 0}, {0, 1, 0}},
                                                          "five_point_grid_pattern");
  pattern.coloring_order = detail::face_stencil_coloring_order(nx, ny, 1, unknowns_per_cell);
  return pattern;
}

/// 2D nine-point stencil (cell plus its eight face and corner neighbours).
inline sparsity_pattern nine_point_grid_pattern(int nx, int ny, int unknowns_per_cell = 1) {
  std::vector<detail::cell_offset> stencil;
  for (int dj = -1; dj <= 1; ++dj)
    for (int di = -1; di <= 1; ++di) stencil.push_back({di, dj, 0});
  return detail::grid_stencil_pattern(nx, ny, 1, unknowns_per_cell, stencil, "nine_point_grid_pattern");
}

/// 3D seven-point stencil (cell plus its six face neighbours) on
/// nx × ny × nz cells; carries a coloring order that reaches 7·b colors
/// (5·b when nz = 1, where it is the five-point stencil).
inline sparsity_pattern seven_point_grid_pattern(int nx, int ny, int nz, int unknowns_per_cell = 1) {
  sparsity_pattern pattern = detail::grid_stencil_pattern(
      nx, ny, nz, unknowns_per_cell, {{0, 0, -1}, {0, -1, 0}, {-1, 0, 0}, {0, 0, 0}, {1, 0, 0}, {0, 1, 0}, {0, 0, 1}},
      "seven_point_grid_pattern");
  pattern.coloring_order = detail::face_stencil_coloring_order(nx, ny, nz, unknowns_per_cell);
  return pattern;
}

}  // namespace nkit

#endif  // NKIT_JACOBIAN_SPARSITY_PATTERN_HPP
