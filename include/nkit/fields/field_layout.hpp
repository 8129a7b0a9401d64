#ifndef NKIT_FIELDS_FIELD_LAYOUT_HPP
#define NKIT_FIELDS_FIELD_LAYOUT_HPP

/// \file fields/field_layout.hpp
/// The field layout of a coupled problem: named fields (each with a number of
/// unknowns per cell) over a common number of cells, and where each
/// (field, cell, component) sits in the global unknown vector.
///
/// Two orderings:
///   contiguous_by_field   all unknowns of field 0, then field 1, ...; within
///                         a field cell by cell, components of a cell together:
///                         global = offset(f) + cell·b_f + component
///   interleaved_by_cell   cell by cell, and within a cell field by field:
///                         global = cell·B + offset_in_cell(f) + component
/// (b_f unknowns per cell of field f, B = Σ_f b_f). In both orderings a
/// field's own numbering ("local index") is cell·b_f + component, and local
/// order follows global order, so gathering a field keeps index order.
///
/// The layout works on the serial Eigen vector space (Eigen::VectorXd);
/// gather() and scatter() allocate nothing once the target has its size.
/// Bad input throws std::invalid_argument naming the setting and value.

#include <Eigen/Core>
#include <cstddef>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace nkit {

/// How the unknowns of the fields are ordered in the global vector.
enum class field_ordering {
  contiguous_by_field,  ///< field after field: [u of every cell, v of every cell, ...]
  interleaved_by_cell   ///< cell after cell: [u, v of cell 0, u, v of cell 1, ...]
};

/// One field: its name (unique, not empty) and its unknowns per cell (>= 1).
struct field_description {
  std::string name;
  int unknowns_per_cell = 1;
};

/// Where a global unknown belongs.
struct field_location {
  int field = 0;
  Eigen::Index cell = 0;
  int component = 0;
};

class field_layout {
 public:
  field_layout() = default;
  /// Throws std::invalid_argument for no fields, an empty or repeated name,
  /// unknowns_per_cell < 1, cells < 1, or more unknowns than an int indexes
  /// (the sparse-matrix index type).
  field_layout(std::vector<field_description> fields, Eigen::Index cells,
               field_ordering ordering = field_ordering::contiguous_by_field)
      : m_fields(std::move(fields)), m_cells(cells), m_ordering(ordering) {
    if (m_fields.empty()) throw std::invalid_argument("nkit: field_layout needs at least one field (got none)");
    if (cells < 1) {
      throw std::invalid_argument("nkit: field_layout cells must be >= 1 (got " + std::to_string(cells) + ")");
    }
    int in_cell = 0;
    for (std::size_t f = 0; f < m_fields.size(); ++f) {
      const field_description& field = m_fields[f];
      const std::string setting = "field_layout field " + std::to_string(f);
      if (field.name.empty()) throw std::invalid_argument("nkit: " + setting + " has an empty name");
      for (std::size_t g = 0; g < f; ++g) {
        if (m_fields[g].name == field.name) {
          throw std::invalid_argument("nkit: " + setting + " repeats the name \"" + field.name + "\" of field " +
                                      std::to_string(g));
        }
      }
      if (field.unknowns_per_cell < 1) {
        throw std::invalid_argument("nkit: " + setting + " (\"" + field.name +
                                    "\") unknowns_per_cell must be >= 1 (got " +
                                    std::to_string(field.unknowns_per_cell) + ")");
      }
      in_cell += field.unknowns_per_cell;
    }
    if (static_cast<double>(in_cell) * static_cast<double>(cells) > 2147483647.0) {
      throw std::invalid_argument("nkit: field_layout has " + std::to_string(in_cell) + " unknowns per cell times " +
                                  std::to_string(cells) + " cells, more than the sparse-matrix index type holds");
    }
    m_unknowns_per_cell = in_cell;
    m_offsets.resize(m_fields.size());
    m_offsets_in_cell.resize(m_fields.size());
    Eigen::Index offset = 0;
    int offset_in_cell = 0;
    for (std::size_t f = 0; f < m_fields.size(); ++f) {
      m_offsets[f] = offset;
      m_offsets_in_cell[f] = offset_in_cell;
      offset += cells * m_fields[f].unknowns_per_cell;
      offset_in_cell += m_fields[f].unknowns_per_cell;
    }
    m_indices.resize(m_fields.size());
    for (int f = 0; f < field_count(); ++f) {
      std::vector<int>& indices = m_indices[static_cast<std::size_t>(f)];
      indices.resize(static_cast<std::size_t>(field_size(f)));
      const int b = unknowns_per_cell(f);
      for (Eigen::Index cell = 0; cell < cells; ++cell) {
        for (int c = 0; c < b; ++c) {
          indices[static_cast<std::size_t>(cell * b + c)] = static_cast<int>(unchecked_global_index(f, cell, c));
        }
      }
    }
  }

  int field_count() const { return static_cast<int>(m_fields.size()); }
  Eigen::Index cells() const { return m_cells; }
  field_ordering ordering() const { return m_ordering; }
  /// Unknowns of all fields together (the length of the state vector).
  Eigen::Index size() const { return m_cells * m_unknowns_per_cell; }
  const std::vector<field_description>& fields() const { return m_fields; }
  const std::string& name(int field) const { return m_fields[checked(field)].name; }
  int unknowns_per_cell(int field) const { return m_fields[checked(field)].unknowns_per_cell; }
  /// Unknowns of one field (cells × unknowns per cell).
  Eigen::Index field_size(int field) const { return m_cells * unknowns_per_cell(field); }

  /// The number of the field called `name`; throws std::invalid_argument when there is none.
  int field_index(std::string_view field_name) const {
    for (std::size_t f = 0; f < m_fields.size(); ++f) {
      if (m_fields[f].name == field_name) return static_cast<int>(f);
    }
    throw std::invalid_argument("nkit: field_layout has no field named \"" + std::string(field_name) + "\"");
  }

  /// Global index of (field, cell, component); throws std::invalid_argument out of range.
  Eigen::Index global_index(int field, Eigen::Index cell, int component) const {
    const int b = unknowns_per_cell(field);
    if (cell < 0 || cell >= m_cells) {
      throw std::invalid_argument("nkit: field_layout cell must be in [0, " + std::to_string(m_cells - 1) + "] (got " +
                                  std::to_string(cell) + ")");
    }
    if (component < 0 || component >= b) {
      throw std::invalid_argument("nkit: field_layout component of field \"" + name(field) + "\" must be in [0, " +
                                  std::to_string(b - 1) + "] (got " + std::to_string(component) + ")");
    }
    return unchecked_global_index(field, cell, component);
  }

  /// (field, cell, component) of a global index; throws std::invalid_argument out of range.
  field_location locate(Eigen::Index global) const {
    if (global < 0 || global >= size()) {
      throw std::invalid_argument("nkit: field_layout global index must be in [0, " + std::to_string(size() - 1) +
                                  "] (got " + std::to_string(global) + ")");
    }
    field_location where;
    if (m_ordering == field_ordering::contiguous_by_field) {
      int f = field_count() - 1;
      while (m_offsets[static_cast<std::size_t>(f)] > global) --f;
      const Eigen::Index local = global - m_offsets[static_cast<std::size_t>(f)];
      where.field = f;
      where.cell = local / m_fields[static_cast<std::size_t>(f)].unknowns_per_cell;
      where.component = static_cast<int>(local % m_fields[static_cast<std::size_t>(f)].unknowns_per_cell);
    } else {
      where.cell = global / m_unknowns_per_cell;
      const int in_cell = static_cast<int>(global % m_unknowns_per_cell);
      int f = field_count() - 1;
      while (m_offsets_in_cell[static_cast<std::size_t>(f)] > in_cell) --f;
      where.field = f;
      where.component = in_cell - m_offsets_in_cell[static_cast<std::size_t>(f)];
    }
    return where;
  }

  /// Global indices of a field's unknowns, in its local order (increasing).
  const std::vector<int>& indices(int field) const { return m_indices[checked(field)]; }

  /// sub = the entries of `v` that belong to `field` (resized once if needed).
  void gather(int field, const Eigen::VectorXd& v, Eigen::VectorXd& sub) const {
    require_size(v.size(), "gather: the full vector");
    const std::vector<int>& index = indices(field);
    const auto n = static_cast<Eigen::Index>(index.size());
    if (sub.size() != n) sub.resize(n);
    for (Eigen::Index i = 0; i < n; ++i) sub(i) = v(index[static_cast<std::size_t>(i)]);
  }

  /// Writes `sub` into the entries of `v` that belong to `field` (the rest of v is untouched).
  void scatter(int field, const Eigen::VectorXd& sub, Eigen::VectorXd& v) const {
    require_size(v.size(), "scatter: the full vector");
    const std::vector<int>& index = indices(field);
    const auto n = static_cast<Eigen::Index>(index.size());
    if (sub.size() != n) {
      throw std::invalid_argument("nkit: field_layout scatter: the vector of field \"" + name(field) + "\" has " +
                                  std::to_string(sub.size()) + " entries, the field has " + std::to_string(n));
    }
    for (Eigen::Index i = 0; i < n; ++i) v(index[static_cast<std::size_t>(i)]) = sub(i);
  }

  /// Throws std::invalid_argument when `length` is not size(); `what` names the vector or matrix.
  void require_size(Eigen::Index length, std::string_view what) const {
    if (length != size()) {
      throw std::invalid_argument("nkit: field_layout " + std::string(what) + " has " + std::to_string(length) +
                                  " entries, but the layout describes " + std::to_string(size()) + " unknowns");
    }
  }

  /// Offset of a field's first unknown within a cell (interleaved ordering) and
  /// within the whole vector (contiguous ordering).
  int offset_in_cell(int field) const { return m_offsets_in_cell[checked(field)]; }
  Eigen::Index contiguous_offset(int field) const { return m_offsets[checked(field)]; }
  /// Unknowns of all fields in one cell.
  int unknowns_per_cell_of_all_fields() const { return m_unknowns_per_cell; }

 private:
  std::size_t checked(int field) const {
    if (field < 0 || field >= field_count()) {
      throw std::invalid_argument("nkit: field_layout field number must be in [0, " +
                                  std::to_string(field_count() - 1) + "] (got " + std::to_string(field) + ")");
    }
    return static_cast<std::size_t>(field);
  }
  Eigen::Index unchecked_global_index(int field, Eigen::Index cell, int component) const {
    const auto f = static_cast<std::size_t>(field);
    if (m_ordering == field_ordering::contiguous_by_field) {
      return m_offsets[f] + cell * m_fields[f].unknowns_per_cell + component;
    }
    return cell * m_unknowns_per_cell + m_offsets_in_cell[f] + component;
  }

  std::vector<field_description> m_fields;
  Eigen::Index m_cells = 0;
  field_ordering m_ordering = field_ordering::contiguous_by_field;
  int m_unknowns_per_cell = 0;
  std::vector<Eigen::Index> m_offsets;      // contiguous ordering: first global index of each field
  std::vector<int> m_offsets_in_cell;       // interleaved ordering: first position of each field in a cell
  std::vector<std::vector<int>> m_indices;  // per field: global index of each local index
};

}  // namespace nkit

#endif  // NKIT_FIELDS_FIELD_LAYOUT_HPP
