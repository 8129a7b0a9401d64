// Cell-centred structured grids and their transfers (include/nkit/grids/):
// the grid's index map and coarsening; prolongation exact for linear
// functions and second order for smooth ones (first order at the boundary
// with constant extrapolation); the identity R·P obeys; bad input.
#include <Eigen/Core>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/grids/cell_centered_transfer.hpp>
#include <nkit/grids/structured_grid.hpp>
#include <nkit/grids/structured_grid_hierarchy.hpp>
#include <random>
#include <stdexcept>
#include <string>
#include <vector>

#include "support/matchers.hpp"

namespace {

using nkit::prolongation_boundary_rule;
using nkit::structured_grid;

/// Grids of 1, 2 and 3 directions with non-unit domain lengths (invented for the tests).
structured_grid coarse_grid_of_dimension(int dimension, int unknowns_per_cell) {
  if (dimension == 1) return structured_grid({8}, unknowns_per_cell, {2.0});
  if (dimension == 2) return structured_grid({6, 4}, unknowns_per_cell, {1.5, 0.5});
  return structured_grid({4, 2, 6}, unknowns_per_cell, {1.0, 0.25, 3.0});
}

/// Fills v with f(x, y, z, component) at every cell centre of `grid`.
template <class Function>
Eigen::VectorXd sampled(const structured_grid& grid, Function f) {
  Eigen::VectorXd v(grid.unknowns());
  for (int k = 0; k < grid.cells(2); ++k) {
    for (int j = 0; j < grid.cells(1); ++j) {
      for (int i = 0; i < grid.cells(0); ++i) {
        const double x = grid.cell_center(0, i), y = grid.cell_center(1, j), z = grid.cell_center(2, k);
        for (int c = 0; c < grid.unknowns_per_cell(); ++c) {
          v(grid.unknown_index(grid.cell_index(i, j, k), c)) = f(x, y, z, c);
        }
      }
    }
  }
  return v;
}

/// Whether fine cell (i, j, k) lies next to the domain boundary in a direction the grid has.
bool next_to_boundary(const structured_grid& grid, int i, int j, int k) {
  const int index[3] = {i, j, k};
  for (int d = 0; d < grid.dimension(); ++d) {
    if (index[d] == 0 || index[d] == grid.cells(d) - 1) return true;
  }
  return false;
}

/// Largest |P u_c − u| over the fine cells, u = exp(0.7x + 1.3y − 0.4z) (invented smooth function).
double prolongation_error(int dimension, int coarse_cells, prolongation_boundary_rule rule) {
  const std::vector<int> extents(static_cast<std::size_t>(dimension), coarse_cells);
  const structured_grid unit_coarse(extents, 1, std::vector<double>(static_cast<std::size_t>(dimension), 1.0));
  const nkit::cell_centered_transfer transfer(unit_coarse, unit_coarse.refined(), rule);
  const auto u = [](double x, double y, double z, int) { return std::exp(0.7 * x + 1.3 * y - 0.4 * z); };
  const Eigen::VectorXd coarse_values = sampled(unit_coarse, u);
  Eigen::VectorXd fine(transfer.fine_grid().unknowns());
  transfer.prolong(coarse_values, fine);
  return (fine - sampled(transfer.fine_grid(), u)).cwiseAbs().maxCoeff();
}

/// (R P v) by the formula of cell_centered_transfer.hpp: per direction
/// v_i + (v_{i−1} − 2v_i + v_{i+1})/8 with two neighbours, v_0 at a boundary
/// cell (linear extrapolation) or (7v_0 + v_1)/8 (constant extrapolation).
Eigen::VectorXd restricted_prolongation_by_formula(const structured_grid& grid, Eigen::VectorXd v,
                                                   prolongation_boundary_rule rule) {
  for (int d = 0; d < grid.dimension(); ++d) {
    Eigen::VectorXd out = v;
    const int n = grid.cells(d);
    for (int k = 0; k < grid.cells(2); ++k) {
      for (int j = 0; j < grid.cells(1); ++j) {
        for (int i = 0; i < grid.cells(0); ++i) {
          int index[3] = {i, j, k};
          const int m = index[d];
          const auto at = [&](int shifted, int c) {
            index[d] = shifted;
            const double value = v(grid.unknown_index(grid.cell_index(index[0], index[1], index[2]), c));
            index[d] = m;
            return value;
          };
          for (int c = 0; c < grid.unknowns_per_cell(); ++c) {
            double value = at(m, c);
            if (n >= 2 && m > 0 && m < n - 1) {
              value += (at(m - 1, c) - 2.0 * at(m, c) + at(m + 1, c)) / 8.0;
            } else if (n >= 2 && rule == prolongation_boundary_rule::constant_extrapolation) {
              value = (7.0 * at(m, c) + at(m == 0 ? 1 : n - 2, c)) / 8.0;
            }
            out(grid.unknown_index(grid.cell_index(i, j, k), c)) = value;
          }
        }
      }
    }
    v = out;
  }
  return v;
}

}  // namespace

TEST_CASE("structured_grid numbers cells i + nx (j + ny k) with the unknowns of a cell together", "[grids]") {
  // The numbering of jacobian/sparsity_pattern.hpp's grid helpers (common practice).
  const structured_grid grid({4, 6, 2}, 3, {2.0, 3.0, 0.5});
  CHECK(grid.dimension() == 3);
  CHECK(grid.cell_count() == 48);
  CHECK(grid.unknowns() == 144);
  CHECK(grid.cell_index(1, 2, 1) == 1 + 4 * (2 + 6 * 1));
  CHECK(grid.unknown_index(grid.cell_index(1, 2, 1), 2) == 3 * 33 + 2);
  CHECK_THAT(grid.cell_size(1), Catch::Matchers::WithinRel(0.5, 1e-15));
  CHECK_THAT(grid.cell_center(0, 3), Catch::Matchers::WithinRel(1.75, 1e-15));  // (3 + ½)·0.5
  const structured_grid coarse = grid.coarsened();
  CHECK(coarse.cells(0) == 2);
  CHECK(coarse.cells(1) == 3);
  CHECK(coarse.cells(2) == 1);
  CHECK_THAT(coarse.cell_size(0), Catch::Matchers::WithinRel(1.0, 1e-15));
  CHECK(coarse.refined() == grid);
  CHECK_FALSE(coarse.can_coarsen());  // 3 cells along j
  // Unit cell size when no lengths are given; directions the grid lacks have one cell.
  const structured_grid line({5});
  CHECK_THAT(line.cell_size(0), Catch::Matchers::WithinRel(1.0, 1e-15));
  CHECK(line.cells(1) == 1);
  CHECK(line.cells(2) == 1);
  const std::vector<structured_grid> levels = nkit::coarsening_sequence(structured_grid({32, 16}), 4);
  REQUIRE(levels.size() == 4);
  CHECK(levels[0].cells(0) == 4);
  CHECK(levels[0].cells(1) == 2);
  CHECK(levels[3].cells(0) == 32);
}

TEST_CASE("Prolongation reproduces linear functions exactly, in 1-D, 2-D and 3-D", "[grids]") {
  // Linear interpolation is exact for linear functions (common practice); with
  // linear extrapolation at the boundary in every cell, and for every function
  // linear in each direction separately (x·y·z too), as the tensor-product
  // weights are (cell_centered_transfer.hpp). With constant extrapolation only
  // cells away from the boundary are exact.
  const int dimension = GENERATE(1, 2, 3);
  const structured_grid coarse = coarse_grid_of_dimension(dimension, 2);
  const auto linear = [](double x, double y, double z, int c) {
    return c == 0 ? 1.5 - 2.0 * x + 0.75 * y + 3.0 * z : -0.5 + x - 4.0 * y + 0.125 * z + 2.0 * x * y * z;
  };
  const Eigen::VectorXd coarse_values = sampled(coarse, linear);
  const Eigen::VectorXd expected = sampled(coarse.refined(), linear);
  // Rounding: a few multiply-adds of values below 40 in magnitude.
  const double rounding = 1e-12;
  SECTION("linear extrapolation: every fine cell") {
    const nkit::cell_centered_transfer transfer(coarse, coarse.refined());
    Eigen::VectorXd fine(expected.size());
    transfer.prolong(coarse_values, fine);
    CHECK_THAT(fine, nkit_test::is_close_to(expected, rounding, 0.0));
  }
  SECTION("constant extrapolation: cells away from the boundary") {
    const nkit::cell_centered_transfer transfer(coarse, coarse.refined(),
                                                prolongation_boundary_rule::constant_extrapolation);
    Eigen::VectorXd fine(expected.size());
    transfer.prolong(coarse_values, fine);
    const structured_grid& grid = transfer.fine_grid();
    int interior = 0;
    for (int k = 0; k < grid.cells(2); ++k) {
      for (int j = 0; j < grid.cells(1); ++j) {
        for (int i = 0; i < grid.cells(0); ++i) {
          if (next_to_boundary(grid, i, j, k)) continue;
          ++interior;
          for (int c = 0; c < 2; ++c) {
            const Eigen::Index p = grid.unknown_index(grid.cell_index(i, j, k), c);
            CHECK_THAT(fine(p), Catch::Matchers::WithinAbs(expected(p), rounding));
          }
        }
      }
    }
    CHECK(interior > 0);
  }
}

TEST_CASE(
    "Prolongation error falls at second order under refinement (first at the boundary with constant extrapolation)",
    "[grids]") {
  // Linear interpolation error ½(h/4)(3h/4)|u''| inside, ½(h/4)(5h/4)|u''| with
  // linear extrapolation at the boundary (remainder of linear interpolation,
  // common practice; P. Wesseling 1992, ch. 5, from memory): measured order 2.
  // Constant extrapolation misses by (h/4)|u'| in boundary cells: order 1 in
  // the largest error. The order is log2(e(h)/e(h/2)). The largest error sits
  // in a corner cell, whose distance from the walls shrinks with h, so the
  // derivative in the leading term is taken O(h) away from the wall: the
  // measured order is p − O(h), about p − 0.05 on the finest pair here
  // (|∇ log u| <= 0.7 + 1.3 + 0.4 = 2.4, h_c = 1/32 or 1/64); we allow 0.1.
  const int dimension = GENERATE(1, 2, 3);
  const int base = dimension == 3 ? 8 : 16;
  SECTION("linear extrapolation: second order") {
    const double e1 = prolongation_error(dimension, base, prolongation_boundary_rule::linear_extrapolation);
    const double e2 = prolongation_error(dimension, 2 * base, prolongation_boundary_rule::linear_extrapolation);
    const double e3 = prolongation_error(dimension, 4 * base, prolongation_boundary_rule::linear_extrapolation);
    INFO("dimension " << dimension << ": errors " << e1 << ", " << e2 << ", " << e3);
    CHECK(std::log2(e1 / e2) < std::log2(e2 / e3));  // approaching 2 from below as the O(h) term fades
    CHECK_THAT(std::log2(e2 / e3), Catch::Matchers::WithinAbs(2.0, 0.1));
    if (dimension == 1) {
      // The bound (5/32) h_c² max|u''|: in 1-D y = z = ½ (one cell of length 1),
      // u'' = 0.49 e^{0.7x + 0.45} <= 0.49 e^{1.15} on [0, 1].
      const double h = 1.0 / (4 * base);
      CHECK(e3 <= 5.0 / 32.0 * h * h * 0.49 * std::exp(1.15));
    }
  }
  SECTION("constant extrapolation: first order at the boundary") {
    const double e1 = prolongation_error(dimension, 2 * base, prolongation_boundary_rule::constant_extrapolation);
    const double e2 = prolongation_error(dimension, 4 * base, prolongation_boundary_rule::constant_extrapolation);
    INFO("dimension " << dimension << ": errors " << e1 << ", " << e2);
    CHECK_THAT(std::log2(e1 / e2), Catch::Matchers::WithinAbs(1.0, 0.1));
  }
}

TEST_CASE(
    "Restriction of a prolonged vector: R P = I + (second difference)/8 per direction, so R P u = u for "
    "functions linear in each direction",
    "[grids]") {
  // R·P is not the identity for bilinear prolongation with averaging; the exact
  // identity is derived in cell_centered_transfer.hpp (common practice: the
  // average of 3/4 v_i + 1/4 v_{i±1}).
  const int dimension = GENERATE(1, 2, 3);
  const auto rule =
      GENERATE(prolongation_boundary_rule::linear_extrapolation, prolongation_boundary_rule::constant_extrapolation);
  const structured_grid coarse = coarse_grid_of_dimension(dimension, 2);
  const nkit::cell_centered_transfer transfer(coarse, coarse.refined(), rule);
  std::mt19937 generator(20261203);
  std::uniform_real_distribution<double> uniform(-1.0, 1.0);
  Eigen::VectorXd v(coarse.unknowns());
  for (Eigen::Index i = 0; i < v.size(); ++i) v(i) = uniform(generator);
  Eigen::VectorXd fine(transfer.fine_grid().unknowns()), back(coarse.unknowns());
  transfer.prolong(v, fine);
  transfer.restrict_by_averaging(fine, back);
  CHECK_THAT(back, nkit_test::is_close_to(restricted_prolongation_by_formula(coarse, v, rule), 1e-14, 0.0));
  // The second difference of a function linear in each direction vanishes: R P u = u
  // in every cell with linear extrapolation.
  if (rule == prolongation_boundary_rule::linear_extrapolation) {
    const Eigen::VectorXd u =
        sampled(coarse, [](double x, double y, double z, int c) { return 1.0 + x * (c + 1.0) - 2.0 * y * x + z; });
    transfer.prolong(u, fine);
    transfer.restrict_by_averaging(fine, back);
    CHECK_THAT(back, nkit_test::is_close_to(u, 1e-12, 0.0));
  }
  // Averaging is exact on constants: R 1 = 1.
  transfer.restrict_by_averaging(Eigen::VectorXd::Ones(fine.size()), back);
  CHECK_THAT(back, nkit_test::is_close_to(Eigen::VectorXd::Ones(back.size()), 1e-15, 0.0));
}

TEST_CASE("Constant extrapolation keeps prolonged values within the coarse values' range", "[grids]") {
  // Its weights are in [0, 1] and sum to 1 (cell_centered_transfer.hpp); linear
  // extrapolation's −1/4 leaves the range for this data (a boundary column at 0
  // next to one at 1: 5/4·0 − 1/4·1 < 0).
  const structured_grid coarse({4, 4});
  Eigen::VectorXd v = Eigen::VectorXd::Ones(coarse.unknowns());
  for (int j = 0; j < 4; ++j) v(coarse.cell_index(0, j)) = 0.0;  // 0 along the west wall, 1 elsewhere
  Eigen::VectorXd fine(coarse.refined().unknowns());
  nkit::cell_centered_transfer(coarse, coarse.refined(), prolongation_boundary_rule::constant_extrapolation)
      .prolong(v, fine);
  CHECK(fine.minCoeff() >= 0.0);
  CHECK(fine.maxCoeff() <= 1.0);
  nkit::cell_centered_transfer(coarse, coarse.refined()).prolong(v, fine);
  CHECK(fine.minCoeff() < 0.0);
}

TEST_CASE("Grids and transfers reject bad input, naming the value", "[grids]") {
  using Catch::Matchers::Contains;
  CHECK_THROWS_WITH(structured_grid(std::vector<int>{}),
                    "nkit: structured_grid needs 1, 2 or 3 entries in cells_per_direction (got 0)");
  CHECK_THROWS_WITH(structured_grid({4, 4, 4, 4}),
                    "nkit: structured_grid needs 1, 2 or 3 entries in cells_per_direction (got 4)");
  CHECK_THROWS_WITH(structured_grid({4, 0}), "nkit: structured_grid cells_per_direction[1] must be >= 1 (got 0)");
  CHECK_THROWS_WITH(structured_grid({4}, 0), "nkit: structured_grid unknowns_per_cell must be >= 1 (got 0)");
  CHECK_THROWS_WITH(structured_grid({4, 4}, 1, {1.0}), Contains("domain_lengths has 1 entries"));
  CHECK_THROWS_WITH(structured_grid({4, 4}, 1, {1.0, -2.0}),
                    "nkit: structured_grid domain_lengths[1] must be finite and > 0 (got -2)");
  CHECK_THROWS_WITH(structured_grid({65536, 65536}), Contains("more than the sparse-matrix index type holds"));
  CHECK_THROWS_WITH(structured_grid({8, 33}).coarsened(),
                    "nkit: structured_grid cells_per_direction[1] must be even to coarsen by two (got 33)");
  CHECK_THROWS_WITH(nkit::coarsening_sequence(structured_grid({12}), 4), Contains("has an odd extent"));
  CHECK_THROWS_WITH(nkit::coarsening_sequence(structured_grid({12}), 0),
                    "nkit: coarsening_sequence level_count must be >= 1 (got 0)");

  const structured_grid coarse({4, 4});
  CHECK_THROWS_WITH(nkit::cell_centered_transfer(coarse, structured_grid({8, 6})),
                    Contains("needs the fine grid to be the coarse grid refined by two"));
  CHECK_THROWS_WITH(nkit::cell_centered_transfer(coarse, structured_grid({8, 8}, 2)),
                    Contains("fine 8 x 8 cells, 2 unknowns per cell"));
  CHECK_THROWS_WITH(nkit::cell_centered_transfer(coarse, structured_grid({8, 8}, 1, {8.0, 4.0})),
                    Contains("over the same domain"));
  CHECK_THROWS_WITH(nkit::cell_centered_transfer(coarse, coarse.refined(), static_cast<prolongation_boundary_rule>(7)),
                    Contains("(got 7)"));
  const nkit::cell_centered_transfer transfer(coarse, coarse.refined());
  Eigen::VectorXd fine(64), small(15);
  CHECK_THROWS_WITH(transfer.prolong(small, fine),
                    "nkit: cell_centered_transfer prolong: the coarse vector has 15 entries, its grid (4 x 4 cells, 1 "
                    "unknown per cell) 16 unknowns");
  Eigen::VectorXd coarse_vector(16), wrong_fine(63);
  CHECK_THROWS_WITH(transfer.prolong(coarse_vector, wrong_fine), Contains("the fine vector has 63 entries"));
  CHECK_THROWS_WITH(transfer.restrict_by_averaging(wrong_fine, coarse_vector),
                    Contains("restrict_by_averaging: the fine vector has 63 entries"));

  const nkit::structured_grid_hierarchy hierarchy(structured_grid({8, 8}), 2);
  CHECK_THROWS_WITH(hierarchy.grid(2), "nkit: structured_grid_hierarchy grid level must be in [0, 1] (got 2)");
  CHECK_THROWS_WITH(hierarchy.prolong_to_finer(1, coarse_vector, fine),
                    "nkit: structured_grid_hierarchy transfer level must be in [0, 0] (got 1)");
}
