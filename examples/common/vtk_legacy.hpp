// Writers for VTK legacy ASCII files (format version 3.0, readable by any VTK
// viewer): a rectilinear grid, or a curvilinear structured grid given by its
// node coordinates (body-fitted grids), whose cells carry scalar and vector
// fields.
// Shared example plumbing (not part of the nkit library).
#ifndef NKIT_EXAMPLES_COMMON_VTK_LEGACY_HPP
#define NKIT_EXAMPLES_COMMON_VTK_LEGACY_HPP

#include <Eigen/Core>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

namespace nkit_examples {

/// The cell fields of a legacy VTK file (scalars and 2-D vectors), each checked
/// against the cell count, and their CELL_DATA section. `owner` names the file
/// type in error messages.
class vtk_cell_fields {
 public:
  vtk_cell_fields(const char* owner, Eigen::Index cells) : m_owner(owner), m_cells(cells) {}

  Eigen::Index cells() const { return m_cells; }

  void add_scalar(const std::string& name, const Eigen::VectorXd& values) {
    check(name, values.size());
    m_scalars.emplace_back(name, values);
  }
  void add_vector(const std::string& name, const Eigen::VectorXd& x_component, const Eigen::VectorXd& y_component) {
    check(name, x_component.size());
    check(name, y_component.size());
    m_vectors.push_back({name, x_component, y_component});
  }

  void write_cell_data(std::ofstream& out) const {
    out << "CELL_DATA " << m_cells << '\n';
    char buffer[96];
    for (const auto& [name, values] : m_scalars) {
      out << "SCALARS " << name << " double 1\nLOOKUP_TABLE default\n";
      for (Eigen::Index p = 0; p < values.size(); ++p) {
        std::snprintf(buffer, sizeof buffer, "%.9g\n", values(p));
        out << buffer;
      }
    }
    for (const auto& v : m_vectors) {
      out << "VECTORS " << v.name << " double\n";
      for (Eigen::Index p = 0; p < v.x.size(); ++p) {
        std::snprintf(buffer, sizeof buffer, "%.9g %.9g 0\n", v.x(p), v.y(p));
        out << buffer;
      }
    }
  }

 private:
  struct vector_field {
    std::string name;
    Eigen::VectorXd x, y;
  };
  void check(const std::string& name, Eigen::Index size) const {
    if (name.empty() || name.find(' ') != std::string::npos) {
      throw std::invalid_argument(std::string(m_owner) + ": field names must be non-empty and without spaces (got \"" +
                                  name + "\")");
    }
    if (size != m_cells) {
      throw std::invalid_argument(std::string(m_owner) + ": field " + name + " has " + std::to_string(size) +
                                  " values for " + std::to_string(m_cells) + " cells");
    }
  }

  const char* m_owner;
  Eigen::Index m_cells;
  std::vector<std::pair<std::string, Eigen::VectorXd>> m_scalars;
  std::vector<vector_field> m_vectors;
};

/// Cell data on a rectilinear grid given by its node coordinates (x, y;
/// z is a single plane). Fields are stored cell by cell, x fastest
/// (index i + nx·j), which is the natural ordering of the examples.
class vtk_rectilinear_file : public vtk_cell_fields {
 public:
  vtk_rectilinear_file(std::vector<double> x_nodes, std::vector<double> y_nodes)
      : vtk_cell_fields("vtk_rectilinear_file",
                        x_nodes.size() < 2 || y_nodes.size() < 2
                            ? 0
                            : static_cast<Eigen::Index>((x_nodes.size() - 1) * (y_nodes.size() - 1))),
        m_x(std::move(x_nodes)),
        m_y(std::move(y_nodes)) {
    if (m_x.size() < 2 || m_y.size() < 2) {
      throw std::invalid_argument("vtk_rectilinear_file: need at least 2 x nodes and 2 y nodes (got " +
                                  std::to_string(m_x.size()) + " x and " + std::to_string(m_y.size()) + " y)");
    }
  }

  /// Uniform grid of nx × ny cells on [x0, x1] × [y0, y1] (ny = 1 for a line).
  static vtk_rectilinear_file uniform(int nx, int ny, double x0, double x1, double y0, double y1) {
    if (nx < 1 || ny < 1) {
      throw std::invalid_argument("vtk_rectilinear_file::uniform: need nx >= 1 and ny >= 1 cells (got nx = " +
                                  std::to_string(nx) + ", ny = " + std::to_string(ny) + ")");
    }
    std::vector<double> x(static_cast<std::size_t>(nx) + 1), y(static_cast<std::size_t>(ny) + 1);
    for (int i = 0; i <= nx; ++i) x[static_cast<std::size_t>(i)] = x0 + (x1 - x0) * i / nx;
    for (int j = 0; j <= ny; ++j) y[static_cast<std::size_t>(j)] = y0 + (y1 - y0) * j / ny;
    return vtk_rectilinear_file(std::move(x), std::move(y));
  }

  void write(const std::filesystem::path& path, const std::string& title) const {
    std::ofstream out(path);
    if (!out) throw std::runtime_error("cannot write " + path.string());
    out << "# vtk DataFile Version 3.0\n" << title.substr(0, 255) << "\nASCII\nDATASET RECTILINEAR_GRID\n";
    out << "DIMENSIONS " << m_x.size() << ' ' << m_y.size() << " 1\n";
    write_coordinates(out, "X_COORDINATES", m_x);
    write_coordinates(out, "Y_COORDINATES", m_y);
    write_coordinates(out, "Z_COORDINATES", {0.0});
    write_cell_data(out);
    if (!out) throw std::runtime_error("error while writing " + path.string());
  }

 private:
  static void write_coordinates(std::ofstream& out, const char* label, const std::vector<double>& values) {
    out << label << ' ' << values.size() << " double\n";
    char buffer[32];
    for (std::size_t i = 0; i < values.size(); ++i) {
      std::snprintf(buffer, sizeof buffer, "%.9g%c", values[i],
                    (i + 1) % 8 == 0 || i + 1 == values.size() ? '\n' : ' ');
      out << buffer;
    }
  }

  std::vector<double> m_x, m_y;
};

/// Cell data on a curvilinear structured grid of nx × ny cells given by its
/// (nx + 1) × (ny + 1) nodes, i fastest (z is a single plane). Cells and fields
/// are ordered i + nx·j like the nodes. A periodic direction (an O-grid) is
/// written with its seam node repeated, so node nx is a copy of node 0.
class vtk_structured_grid_file : public vtk_cell_fields {
 public:
  /// `nodes_x`, `nodes_y`: (nx + 1)(ny + 1) node coordinates, index i + (nx + 1) j.
  vtk_structured_grid_file(int nx, int ny, std::vector<double> nodes_x, std::vector<double> nodes_y)
      : vtk_cell_fields("vtk_structured_grid_file", static_cast<Eigen::Index>(nx) * static_cast<Eigen::Index>(ny)),
        m_nx(nx),
        m_ny(ny),
        m_x(std::move(nodes_x)),
        m_y(std::move(nodes_y)) {
    if (nx < 1 || ny < 1) {
      throw std::invalid_argument("vtk_structured_grid_file: need nx >= 1 and ny >= 1 cells (got nx = " +
                                  std::to_string(nx) + ", ny = " + std::to_string(ny) + ")");
    }
    const std::size_t nodes = static_cast<std::size_t>(nx + 1) * static_cast<std::size_t>(ny + 1);
    if (m_x.size() != nodes || m_y.size() != nodes) {
      throw std::invalid_argument("vtk_structured_grid_file: need " + std::to_string(nodes) +
                                  " node coordinates (got " + std::to_string(m_x.size()) + " x and " +
                                  std::to_string(m_y.size()) + " y)");
    }
  }

  void write(const std::filesystem::path& path, const std::string& title) const {
    std::ofstream out(path);
    if (!out) throw std::runtime_error("cannot write " + path.string());
    out << "# vtk DataFile Version 3.0\n" << title.substr(0, 255) << "\nASCII\nDATASET STRUCTURED_GRID\n";
    out << "DIMENSIONS " << m_nx + 1 << ' ' << m_ny + 1 << " 1\n";
    out << "POINTS " << m_x.size() << " double\n";
    char buffer[96];
    for (std::size_t p = 0; p < m_x.size(); ++p) {
      std::snprintf(buffer, sizeof buffer, "%.9g %.9g 0\n", m_x[p], m_y[p]);
      out << buffer;
    }
    write_cell_data(out);
    if (!out) throw std::runtime_error("error while writing " + path.string());
  }

 private:
  int m_nx, m_ny;
  std::vector<double> m_x, m_y;
};

}  // namespace nkit_examples

#endif  // NKIT_EXAMPLES_COMMON_VTK_LEGACY_HPP
