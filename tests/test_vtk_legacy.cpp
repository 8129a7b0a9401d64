// The legacy VTK writers of the examples (examples/common/vtk_legacy.hpp):
// a 2 × 3-cell grid with a scalar and a vector cell field written to a
// temporary file and read back line by line, and the bad input the writers
// refuse. Tests may include examples/common (problems/README.md draws the
// lines only for the library, problems/, bench/ and examples/).
//
// The expected layout is that of the legacy format, version 3.0 (Kitware,
// "VTK File Formats", The VTK User's Guide, 11th ed. 2010, chapter 19, "Simple
// Legacy Formats"; section from memory): a header line
// "# vtk DataFile Version 3.0", a title line, "ASCII", "DATASET <type>"; for
// STRUCTURED_GRID "DIMENSIONS nx ny nz" counted in points and "POINTS n
// <type>" followed by the n points, x (i) varying fastest, then y (j); for
// RECTILINEAR_GRID the three coordinate lists "X_COORDINATES n <type>" etc.;
// then "CELL_DATA n" with each field as "SCALARS <name> <type> 1" +
// "LOOKUP_TABLE default" + n values, or "VECTORS <name> <type>" + n triples,
// cells in the same i-fastest order as the points.
#include <unistd.h>

#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <stdexcept>
#include <string>
#include <vector>

#include "examples/common/vtk_legacy.hpp"

namespace {

// The lines of a file written by `write` into a temporary file of its own
// (named after the process, so concurrent test runs do not collide), which is
// removed again.
template <class Writer>
std::vector<std::string> vtk_legacy_written_lines(const std::string& name, const Writer& write) {
  const std::filesystem::path path =
      std::filesystem::temp_directory_path() / ("nkit_test_vtk_legacy_" + std::to_string(::getpid()) + "_" + name);
  write(path);
  std::vector<std::string> lines;
  {
    std::ifstream in(path);
    for (std::string line; std::getline(in, line);) lines.push_back(line);
  }
  std::filesystem::remove(path);
  return lines;
}

// Invented cell fields of the 2 × 3-cell grid, cell (i, j) at index i + 2j:
// density 10 j + i + 0.5, velocity (i + 0.25, −j − 0.5). Binary fractions, so
// the "%.9g" text is the shortest decimal form.
Eigen::VectorXd vtk_legacy_test_density() {
  Eigen::VectorXd density(6);
  for (int j = 0; j < 3; ++j) {
    for (int i = 0; i < 2; ++i) density(i + 2 * j) = 10.0 * j + i + 0.5;
  }
  return density;
}
Eigen::VectorXd vtk_legacy_test_velocity(bool x_component) {
  Eigen::VectorXd velocity(6);
  for (int j = 0; j < 3; ++j) {
    for (int i = 0; i < 2; ++i) velocity(i + 2 * j) = x_component ? i + 0.25 : -j - 0.5;
  }
  return velocity;
}

// The CELL_DATA section both grids share, written out by hand, cell (0, 0),
// (1, 0), (0, 1), ... (i fastest).
const std::vector<std::string> vtk_legacy_expected_cell_data = {
    "CELL_DATA 6",
    "SCALARS density double 1",
    "LOOKUP_TABLE default",
    "0.5",
    "1.5",
    "10.5",
    "11.5",
    "20.5",
    "21.5",
    "VECTORS velocity double",
    "0.25 -0.5 0",
    "1.25 -0.5 0",
    "0.25 -1.5 0",
    "1.25 -1.5 0",
    "0.25 -2.5 0",
    "1.25 -2.5 0",
};

}  // namespace

TEST_CASE("VTK structured grid file: header, points and cell data of a 2 x 3-cell grid, i fastest", "[vtk_legacy]") {
  // Nodes (i, j), i = 0..2, j = 0..3, at x = 0.5 i + 0.125 j, y = 0.25 j +
  // 0.0625 i: a sheared grid, so that swapping i and j or x and y shows.
  std::vector<double> node_x, node_y;
  for (int j = 0; j <= 3; ++j) {
    for (int i = 0; i <= 2; ++i) {
      node_x.push_back(0.5 * i + 0.125 * j);
      node_y.push_back(0.25 * j + 0.0625 * i);
    }
  }
  nkit_examples::vtk_structured_grid_file file(2, 3, node_x, node_y);
  file.add_scalar("density", vtk_legacy_test_density());
  file.add_vector("velocity", vtk_legacy_test_velocity(true), vtk_legacy_test_velocity(false));
  const std::vector<std::string> lines = vtk_legacy_written_lines(
      "structured.vtk", [&](const std::filesystem::path& path) { file.write(path, "two by three cells"); });

  std::vector<std::string> expected = {
      "# vtk DataFile Version 3.0",
      "two by three cells",
      "ASCII",
      "DATASET STRUCTURED_GRID",
      "DIMENSIONS 3 4 1",  // nodes = cells + 1 in x and y, one plane in z
      "POINTS 12 double",
      "0 0 0",  // (i, j) = (0, 0)
      "0.5 0.0625 0",
      "1 0.125 0",
      "0.125 0.25 0",  // (0, 1)
      "0.625 0.3125 0",
      "1.125 0.375 0",
      "0.25 0.5 0",  // (0, 2)
      "0.75 0.5625 0",
      "1.25 0.625 0",
      "0.375 0.75 0",  // (0, 3)
      "0.875 0.8125 0",
      "1.375 0.875 0",
  };
  expected.insert(expected.end(), vtk_legacy_expected_cell_data.begin(), vtk_legacy_expected_cell_data.end());
  CHECK(lines == expected);
}

TEST_CASE("VTK rectilinear file: header, coordinate lists and cell data of a 2 x 3-cell grid", "[vtk_legacy]") {
  // Uniform on [0, 1] × [0, 3]: x nodes 0, 0.5, 1; y nodes 0, 1, 2, 3.
  auto file = nkit_examples::vtk_rectilinear_file::uniform(2, 3, 0.0, 1.0, 0.0, 3.0);
  REQUIRE(file.cells() == 6);
  file.add_scalar("density", vtk_legacy_test_density());
  file.add_vector("velocity", vtk_legacy_test_velocity(true), vtk_legacy_test_velocity(false));
  const std::vector<std::string> lines = vtk_legacy_written_lines(
      "rectilinear.vtk", [&](const std::filesystem::path& path) { file.write(path, "two by three cells"); });

  std::vector<std::string> expected = {"# vtk DataFile Version 3.0",
                                       "two by three cells",
                                       "ASCII",
                                       "DATASET RECTILINEAR_GRID",
                                       "DIMENSIONS 3 4 1",
                                       "X_COORDINATES 3 double",
                                       "0 0.5 1",
                                       "Y_COORDINATES 4 double",
                                       "0 1 2 3",
                                       "Z_COORDINATES 1 double",
                                       "0"};
  expected.insert(expected.end(), vtk_legacy_expected_cell_data.begin(), vtk_legacy_expected_cell_data.end());
  CHECK(lines == expected);
}

TEST_CASE("VTK writers: wrong node counts, empty grids and fields of the wrong length are refused", "[vtk_legacy]") {
  const std::vector<double> twelve(12, 0.0), eleven(11, 0.0);
  CHECK_THROWS_WITH(nkit_examples::vtk_structured_grid_file(2, 3, eleven, twelve),
                    "vtk_structured_grid_file: need 12 node coordinates (got 11 x and 12 y)");
  CHECK_THROWS_WITH(nkit_examples::vtk_structured_grid_file(2, 3, twelve, eleven),
                    "vtk_structured_grid_file: need 12 node coordinates (got 12 x and 11 y)");
  CHECK_THROWS_WITH(nkit_examples::vtk_structured_grid_file(0, 3, twelve, twelve),
                    "vtk_structured_grid_file: need nx >= 1 and ny >= 1 cells (got nx = 0, ny = 3)");
  CHECK_THROWS_WITH(nkit_examples::vtk_rectilinear_file({0.0, 1.0}, {0.0}),
                    "vtk_rectilinear_file: need at least 2 x nodes and 2 y nodes (got 2 x and 1 y)");
  CHECK_THROWS_WITH(nkit_examples::vtk_rectilinear_file({0.0}, {0.0, 1.0}),
                    "vtk_rectilinear_file: need at least 2 x nodes and 2 y nodes (got 1 x and 2 y)");
  CHECK_THROWS_WITH(nkit_examples::vtk_rectilinear_file::uniform(2, -1, 0.0, 1.0, 0.0, 1.0),
                    "vtk_rectilinear_file::uniform: need nx >= 1 and ny >= 1 cells (got nx = 2, ny = -1)");

  nkit_examples::vtk_structured_grid_file file(2, 3, twelve, twelve);
  CHECK_THROWS_WITH(file.add_scalar("density", Eigen::VectorXd::Zero(5)),
                    "vtk_structured_grid_file: field density has 5 values for 6 cells");
  CHECK_THROWS_WITH(file.add_vector("velocity", Eigen::VectorXd::Zero(6), Eigen::VectorXd::Zero(7)),
                    "vtk_structured_grid_file: field velocity has 7 values for 6 cells");
  CHECK_THROWS_WITH(file.add_scalar("mach number", Eigen::VectorXd::Zero(6)),
                    "vtk_structured_grid_file: field names must be non-empty and without spaces (got \"mach number\")");
  auto rectilinear = nkit_examples::vtk_rectilinear_file::uniform(2, 3, 0.0, 1.0, 0.0, 3.0);
  CHECK_THROWS_WITH(rectilinear.add_scalar("density", Eigen::VectorXd::Zero(12)),
                    "vtk_rectilinear_file: field density has 12 values for 6 cells");
}
