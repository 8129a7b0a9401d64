#ifndef NKIT_FIELDS_FIELD_BLOCKS_HPP
#define NKIT_FIELDS_FIELD_BLOCKS_HPP

/// \file fields/field_blocks.hpp
/// Sub-blocks of an assembled Jacobian by field: J_fg, the rows of field f and
/// the columns of field g, in the fields' local numbering (field_layout.hpp).
///
/// Cost: one pass over the stored entries of field f's rows, twice (count,
/// then copy), O(F) per entry to place its column (F fields). Explicitly
/// stored zeros are kept. The block reuses its storage when it is large
/// enough (a later extraction of the same pattern allocates nothing).

#include <Eigen/SparseCore>
#include <cstddef>
#include <string>

#include "../core/preconditioner.hpp"
#include "field_layout.hpp"

namespace nkit {

/// block = J restricted to the rows of `row_field` and the columns of
/// `column_field`, compressed rows, columns increasing within each row.
/// Throws std::invalid_argument when J is not size() × size() or a field
/// number is out of range.
inline void extract_field_block(const field_layout& layout, const sparse_matrix& matrix, int row_field,
                                int column_field, sparse_matrix& block) {
  layout.require_size(matrix.rows(), "extract_field_block: the matrix's row count");
  layout.require_size(matrix.cols(), "extract_field_block: the matrix's column count");
  const std::vector<int>& rows = layout.indices(row_field);
  const auto block_rows = static_cast<Eigen::Index>(rows.size());
  const Eigen::Index block_columns = layout.field_size(column_field);
  const int b = layout.unknowns_per_cell(column_field);
  const auto local_column = [&](Eigen::Index global, Eigen::Index& local) {
    const field_location where = layout.locate(global);
    local = where.cell * b + where.component;
    return where.field == column_field;
  };
  Eigen::Index count = 0;
  for (Eigen::Index i = 0; i < block_rows; ++i) {
    for (sparse_matrix::InnerIterator entry(matrix, rows[static_cast<std::size_t>(i)]); entry; ++entry) {
      Eigen::Index local = 0;
      if (local_column(entry.col(), local)) ++count;
    }
  }
  if (block.rows() != block_rows || block.cols() != block_columns || !block.isCompressed()) {
    block.resize(block_rows, block_columns);
  }
  block.resizeNonZeros(count);
  int* outer = block.outerIndexPtr();
  int* inner = block.innerIndexPtr();
  double* values = block.valuePtr();
  int position = 0;
  outer[0] = 0;
  for (Eigen::Index i = 0; i < block_rows; ++i) {
    for (sparse_matrix::InnerIterator entry(matrix, rows[static_cast<std::size_t>(i)]); entry; ++entry) {
      Eigen::Index local = 0;
      if (local_column(entry.col(), local)) {
        inner[position] = static_cast<int>(local);
        values[position] = entry.value();
        ++position;
      }
    }
    outer[i + 1] = position;
  }
}

/// As above, returning a new matrix.
inline sparse_matrix field_block(const field_layout& layout, const sparse_matrix& matrix, int row_field,
                                 int column_field) {
  sparse_matrix block;
  extract_field_block(layout, matrix, row_field, column_field, block);
  return block;
}

}  // namespace nkit

#endif  // NKIT_FIELDS_FIELD_BLOCKS_HPP
