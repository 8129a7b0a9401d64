#ifndef NKIT_GRIDS_STRUCTURED_GRID_HIERARCHY_HPP
#define NKIT_GRIDS_STRUCTURED_GRID_HIERARCHY_HPP

/// \file grids/structured_grid_hierarchy.hpp
/// A hierarchy of cell-centred structured grids, level 0 the coarsest, each
/// level the refinement by two of the one before, with the cell-centred
/// transfers between neighbouring levels (cell_centered_transfer.hpp).
///
/// It is nkit's level transfer for structured grids: the grid-sequencing
/// driver (multilevel/grid_sequencing_solver.hpp) moves states between
/// levels through these members, which any other level transfer (an
/// unstructured hierarchy, a different interpolation) provides as well:
///   int level_count() const
///   Eigen::Index unknowns(int level) const
///   void prolong_to_finer(int coarse_level, const Eigen::Ref<const Eigen::VectorXd>& coarse,
///                         Eigen::Ref<Eigen::VectorXd> finer) const        // level → level + 1
///   void restrict_to_coarser(int fine_level, const Eigen::Ref<const Eigen::VectorXd>& fine,
///                            Eigen::Ref<Eigen::VectorXd> coarser) const  // level → level − 1
/// Allocation: the constructor builds the grids and the per-direction
/// weights; the transfers allocate nothing.

#include <Eigen/Core>
#include <cstddef>
#include <stdexcept>
#include <string>
#include <vector>

#include "cell_centered_transfer.hpp"
#include "structured_grid.hpp"

namespace nkit {

class structured_grid_hierarchy {
 public:
  /// `level_count` levels ending with `finest` (coarsening_sequence); throws
  /// std::invalid_argument when level_count < 1 or an extent turns odd too soon.
  structured_grid_hierarchy(const structured_grid& finest, int level_count,
                            prolongation_boundary_rule rule = prolongation_boundary_rule::linear_extrapolation)
      : m_grids(coarsening_sequence(finest, level_count)) {
    m_transfers.reserve(m_grids.size() - 1);
    for (std::size_t level = 0; level + 1 < m_grids.size(); ++level) {
      m_transfers.emplace_back(m_grids[level], m_grids[level + 1], rule);
    }
  }

  int level_count() const { return static_cast<int>(m_grids.size()); }
  int finest_level() const { return level_count() - 1; }
  const structured_grid& grid(int level) const { return m_grids[checked(level, "grid")]; }
  Eigen::Index unknowns(int level) const { return grid(level).unknowns(); }
  /// The transfer between `coarse_level` and coarse_level + 1.
  const cell_centered_transfer& transfer(int coarse_level) const {
    if (coarse_level < 0 || coarse_level + 1 >= level_count()) {
      throw std::invalid_argument("nkit: structured_grid_hierarchy transfer level must be in [0, " +
                                  std::to_string(level_count() - 2) + "] (got " + std::to_string(coarse_level) + ")");
    }
    return m_transfers[static_cast<std::size_t>(coarse_level)];
  }

  /// finer = P coarse, from level `coarse_level` to coarse_level + 1.
  void prolong_to_finer(int coarse_level, const Eigen::Ref<const Eigen::VectorXd>& coarse,
                        Eigen::Ref<Eigen::VectorXd> finer) const {
    transfer(coarse_level).prolong(coarse, finer);
  }
  /// coarser = R fine (averaging), from level `fine_level` to fine_level − 1.
  void restrict_to_coarser(int fine_level, const Eigen::Ref<const Eigen::VectorXd>& fine,
                           Eigen::Ref<Eigen::VectorXd> coarser) const {
    if (fine_level < 1) {
      throw std::invalid_argument("nkit: structured_grid_hierarchy restrict_to_coarser fine_level must be >= 1 (got " +
                                  std::to_string(fine_level) + ")");
    }
    transfer(fine_level - 1).restrict_by_averaging(fine, coarser);
  }

 private:
  std::size_t checked(int level, const char* what) const {
    if (level < 0 || level >= level_count()) {
      throw std::invalid_argument(std::string("nkit: structured_grid_hierarchy ") + what + " level must be in [0, " +
                                  std::to_string(level_count() - 1) + "] (got " + std::to_string(level) + ")");
    }
    return static_cast<std::size_t>(level);
  }

  std::vector<structured_grid> m_grids;
  std::vector<cell_centered_transfer> m_transfers;
};

}  // namespace nkit

#endif  // NKIT_GRIDS_STRUCTURED_GRID_HIERARCHY_HPP
