#ifndef NKIT_GRIDS_CELL_CENTERED_TRANSFER_HPP
#define NKIT_GRIDS_CELL_CENTERED_TRANSFER_HPP

/// \file grids/cell_centered_transfer.hpp
/// Transfer of cell values between a cell-centred structured grid and its
/// refinement by two (grids/structured_grid.hpp): prolongation coarse → fine
/// by linear interpolation per direction (linear in 1-D, bilinear in 2-D,
/// trilinear in 3-D) and restriction fine → coarse by averaging the 2^d
/// fine cells of each coarse cell. Each unknown of a cell (component) is
/// transferred on its own.
///
/// Prolongation, one direction: fine cell I lies inside coarse cell
/// p = ⌊I/2⌋, a quarter of a coarse cell from its centre, towards coarse
/// cell q = p − 1 (I even) or p + 1 (I odd). Linear interpolation between
/// the two centres gives the weights 3/4 (p) and 1/4 (q); in d directions
/// the weights are products (in 2-D 9/16, 3/16, 3/16, 1/16). The operators
/// are the usual cell-centred pair: P. Wesseling, "An Introduction to
/// Multigrid Methods", Wiley 1992, ch. 5 (cell-centred prolongation and
/// restriction; chapter from memory); U. Trottenberg,
/// C.W. Oosterlee & A. Schüller, "Multigrid", Academic Press 2001, the
/// cell-centred discretisations chapter (from memory).
///
/// At the domain boundary q does not exist. prolongation_boundary_rule says
/// what is used instead:
///   linear_extrapolation   (default) the line through p and its inner
///                          neighbour p ∓ 1: weights 5/4 (p) and −1/4. Linear
///                          functions (and in d directions every function
///                          linear in each direction separately: 1, x, xy,
///                          ...) are reproduced exactly in every cell. The
///                          error for smooth u is second order everywhere:
///                          ½(h_c/4)(3h_c/4)|u''| = (3/32) h_c² |u''| per
///                          direction inside, (5/32) h_c² |u''| in boundary
///                          cells (remainder of linear interpolation,
///                          common practice; h_c the coarse cell size). The
///                          negative weight can leave the range of the coarse
///                          values in boundary cells (u ≥ 0 may not hold).
///   constant_extrapolation the boundary fine cell takes the value of its
///                          coarse cell p (weight 1). All weights are then in
///                          [0, 1] and sum to 1: prolonged values stay within
///                          the coarse values' range (bounds such as u ≥ 0
///                          hold), but boundary cells are only first order
///                          accurate: error (h_c/4)|u'| there.
/// A direction with a single coarse cell uses weight 1 (nothing to interpolate).
///
/// Restriction by averaging is exact for cell averages; R·P is not the
/// identity: per direction, (R P u)_i = u_i + (u_{i−1} − 2u_i + u_{i+1})/8 in
/// cells with two neighbours (the average of 3/4 u_i + 1/4 u_{i±1}); in
/// boundary cells R P u = u with linear_extrapolation and
/// (7u_0 + u_1)/8 with constant_extrapolation; in d directions R P is the
/// product of these one-direction operators. So R P u = u for every u linear
/// in each direction (common practice; derivation above, checked in
/// tests/test_grid_sequencing.cpp).
///
/// Cost: prolongation 2^d multiply-adds per fine unknown, restriction one
/// add per fine unknown; neither allocates (the per-direction weights are
/// built by the constructor). Bad input (grids that are not a coarse/fine
/// pair, vectors of the wrong size) throws std::invalid_argument naming the
/// value. Serial Eigen vectors only.

#include <Eigen/Core>
#include <array>
#include <cstddef>
#include <stdexcept>
#include <string>
#include <vector>

#include "structured_grid.hpp"

namespace nkit {

/// What prolongation does in fine cells at the domain boundary (see the file comment).
enum class prolongation_boundary_rule { linear_extrapolation, constant_extrapolation };

class cell_centered_transfer {
 public:
  /// `fine` must be coarse.refined() (same dimension, unknowns per cell and
  /// domain; twice the cells per direction); throws std::invalid_argument otherwise.
  cell_centered_transfer(const structured_grid& coarse, const structured_grid& fine,
                         prolongation_boundary_rule rule = prolongation_boundary_rule::linear_extrapolation)
      : m_coarse(coarse), m_fine(fine), m_rule(rule) {
    if (rule != prolongation_boundary_rule::linear_extrapolation &&
        rule != prolongation_boundary_rule::constant_extrapolation) {
      throw std::invalid_argument(
          "nkit: cell_centered_transfer boundary rule must be linear_extrapolation or "
          "constant_extrapolation (got " +
          std::to_string(static_cast<int>(rule)) + ")");
    }
    if (!(coarse.refined() == fine)) {
      throw std::invalid_argument(
          "nkit: cell_centered_transfer needs the fine grid to be the coarse grid refined by "
          "two over the same domain (coarse " +
          coarse.description() + ", fine " + fine.description() + ")");
    }
    for (int direction = 0; direction < 3; ++direction) build_weights(direction);
  }
  /// The pair (fine.coarsened(), fine); throws when an extent of `fine` is odd.
  explicit cell_centered_transfer(const structured_grid& fine,
                                  prolongation_boundary_rule rule = prolongation_boundary_rule::linear_extrapolation)
      : cell_centered_transfer(fine.coarsened(), fine, rule) {}

  const structured_grid& coarse_grid() const { return m_coarse; }
  const structured_grid& fine_grid() const { return m_fine; }
  prolongation_boundary_rule boundary_rule() const { return m_rule; }

  /// fine = P coarse (every entry of `fine` is written). Sizes must be the
  /// grids' unknowns.
  void prolong(const Eigen::Ref<const Eigen::VectorXd>& coarse, Eigen::Ref<Eigen::VectorXd> fine) const {
    check_size("prolong: the coarse vector", coarse.size(), m_coarse);
    check_size("prolong: the fine vector", fine.size(), m_fine);
    const int b = m_fine.unknowns_per_cell();
    const auto& wx = m_weights[0];
    const auto& wy = m_weights[1];
    const auto& wz = m_weights[2];
    for (int k = 0; k < m_fine.cells(2); ++k) {
      const direction_weights& z = wz[static_cast<std::size_t>(k)];
      for (int j = 0; j < m_fine.cells(1); ++j) {
        const direction_weights& y = wy[static_cast<std::size_t>(j)];
        for (int i = 0; i < m_fine.cells(0); ++i) {
          const direction_weights& x = wx[static_cast<std::size_t>(i)];
          const Eigen::Index target = m_fine.unknown_index(m_fine.cell_index(i, j, k));
          for (int component = 0; component < b; ++component) {
            double value = 0.0;
            for (int c = 0; c < z.count; ++c) {
              for (int bb = 0; bb < y.count; ++bb) {
                const double wzy = z.weight[c] * y.weight[bb];
                for (int a = 0; a < x.count; ++a) {
                  const Eigen::Index source =
                      m_coarse.unknown_index(m_coarse.cell_index(x.index[a], y.index[bb], z.index[c]), component);
                  value += wzy * x.weight[a] * coarse(source);
                }
              }
            }
            fine(target + component) = value;
          }
        }
      }
    }
  }

  /// coarse = R fine: each coarse unknown the mean of the same unknown over
  /// the coarse cell's 2^d fine cells (every entry of `coarse` is written).
  void restrict_by_averaging(const Eigen::Ref<const Eigen::VectorXd>& fine, Eigen::Ref<Eigen::VectorXd> coarse) const {
    check_size("restrict_by_averaging: the fine vector", fine.size(), m_fine);
    check_size("restrict_by_averaging: the coarse vector", coarse.size(), m_coarse);
    const int b = m_fine.unknowns_per_cell();
    const double share = 1.0 / static_cast<double>(m_fine.cell_count() / m_coarse.cell_count());
    coarse.setZero();
    for (int k = 0; k < m_fine.cells(2); ++k) {
      const int kc = m_coarse.cells(2) == m_fine.cells(2) ? k : k / 2;
      for (int j = 0; j < m_fine.cells(1); ++j) {
        const int jc = m_coarse.cells(1) == m_fine.cells(1) ? j : j / 2;
        for (int i = 0; i < m_fine.cells(0); ++i) {
          const Eigen::Index source = m_fine.unknown_index(m_fine.cell_index(i, j, k));
          const Eigen::Index target = m_coarse.unknown_index(m_coarse.cell_index(i / 2, jc, kc));
          for (int component = 0; component < b; ++component) {
            coarse(target + component) += share * fine(source + component);
          }
        }
      }
    }
  }

 private:
  /// The one or two coarse cells (and weights) a fine cell draws on along one direction.
  struct direction_weights {
    int count = 1;
    std::array<int, 2> index{{0, 0}};
    std::array<double, 2> weight{{1.0, 0.0}};
  };

  void build_weights(int direction) {
    const int n = m_coarse.cells(direction);
    const int fine_cells = m_fine.cells(direction);
    std::vector<direction_weights>& list = m_weights[static_cast<std::size_t>(direction)];
    list.assign(static_cast<std::size_t>(fine_cells), direction_weights{});
    if (direction >= m_fine.dimension()) return;  // one cell each: weight 1
    for (int fine_index = 0; fine_index < fine_cells; ++fine_index) {
      direction_weights& w = list[static_cast<std::size_t>(fine_index)];
      const int p = fine_index / 2;
      const int side = fine_index % 2 == 0 ? -1 : 1;
      const int q = p + side;
      w.index = {{p, p}};
      if (q >= 0 && q < n) {
        w.count = 2;
        w.index = {{p, q}};
        w.weight = {{0.75, 0.25}};
      } else if (n >= 2 && m_rule == prolongation_boundary_rule::linear_extrapolation) {
        w.count = 2;
        w.index = {{p, p - side}};
        w.weight = {{1.25, -0.25}};
      } else {
        w.count = 1;
        w.weight = {{1.0, 0.0}};
      }
    }
  }

  static void check_size(const char* what, Eigen::Index size, const structured_grid& grid) {
    if (size != grid.unknowns()) {
      throw std::invalid_argument(std::string("nkit: cell_centered_transfer ") + what + " has " + std::to_string(size) +
                                  " entries, its grid (" + grid.description() + ") " + std::to_string(grid.unknowns()) +
                                  " unknowns");
    }
  }

  structured_grid m_coarse;
  structured_grid m_fine;
  prolongation_boundary_rule m_rule;
  std::array<std::vector<direction_weights>, 3> m_weights;
};

}  // namespace nkit

#endif  // NKIT_GRIDS_CELL_CENTERED_TRANSFER_HPP
