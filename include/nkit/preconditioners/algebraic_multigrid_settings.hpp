#ifndef NKIT_PRECONDITIONERS_ALGEBRAIC_MULTIGRID_SETTINGS_HPP
#define NKIT_PRECONDITIONERS_ALGEBRAIC_MULTIGRID_SETTINGS_HPP

/// \file preconditioners/algebraic_multigrid_settings.hpp
/// The usual algebraic multigrid choices under nkit's own names, for
/// algebraic_multigrid_preconditioner (hypre_algebraic_multigrid.hpp, where
/// they are mapped to hypre's option codes in one place). This header has no
/// hypre or MPI dependency. Defaults follow hypre 2.26's own defaults, which
/// suit 2D scalar diffusion (strength threshold 0.25 per hypre's documentation).

#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

/// How the C/F splitting is chosen (Ruge & Stüben 1987; Henson & Yang 2002).
enum class multigrid_coarsening {
  ruge_stueben_per_rank,              ///< classical coarsening on each rank plus a boundary pass
  falgout,                            ///< classical per rank, then CLJP from its interior C-points
  cleary_luby_jones_plassmann,        ///< parallel independent-set coarsening
  parallel_modified_independent_set,  ///< PMIS: lower complexity, weaker convergence
  hybrid_modified_independent_set     ///< HMIS: one classical pass per rank, then PMIS (default)
};

/// How coarse-grid corrections are interpolated to the fine grid.
enum class multigrid_interpolation {
  classical_modified,  ///< Ruge–Stüben interpolation, modified for parallel use
  direct,
  standard,
  multipass,
  extended,
  extended_plus_i  ///< distance-two extended+i (default; suits PMIS/HMIS)
};

/// Relaxation used before and after each coarse-grid correction.
enum class multigrid_smoother {
  jacobi,
  l1_jacobi,
  hybrid_gauss_seidel,            ///< Gauss–Seidel within a rank, Jacobi across ranks; forward down, backward up
  hybrid_symmetric_gauss_seidel,  ///< symmetric sweep of the above on both legs
  l1_gauss_seidel,                ///< ℓ1-scaled hybrid Gauss–Seidel, forward down, backward up (default)
  chebyshev
};

enum class multigrid_cycle { v_cycle, w_cycle };

struct algebraic_multigrid_settings {
  multigrid_coarsening coarsening = multigrid_coarsening::hybrid_modified_independent_set;
  multigrid_interpolation interpolation = multigrid_interpolation::extended_plus_i;
  multigrid_smoother smoother = multigrid_smoother::l1_gauss_seidel;
  multigrid_cycle cycle = multigrid_cycle::v_cycle;
  /// Cycles per preconditioner application (1 is usual inside GMRES).
  int cycles_per_application = 1;
  /// Relaxation sweeps on each leg of the cycle.
  int smoothing_sweeps = 1;
  /// Connection i→j is strong when −a_ij ≥ θ max_k(−a_ik); θ in [0, 1).
  double strength_threshold = 0.25;
  /// Levels in the hierarchy, the finest included (≥ 2 for any coarsening).
  int maximum_levels = 25;
  /// Interpolation truncated to this many entries per row (0 = no truncation).
  int maximum_interpolation_entries_per_row = 4;
  /// Levels coarsened aggressively (fewer coarse points, cheaper setup).
  int aggressive_coarsening_levels = 0;
  /// Once the matrix is in hypre, let the Newton driver free its assembled
  /// Jacobian (preconditioner_context::release_assembled_jacobian) instead of
  /// keeping it until the next setup: less memory for the rest of the solve,
  /// at the price of an allocation at every assembly (assemble_jacobian then
  /// receives an empty matrix, see jacobian/sparse_jacobian.hpp). Off by
  /// default, so that setups after the first allocate nothing in nkit.
  bool release_assembled_jacobian_after_copy = false;

  void validate(std::string_view prefix = "algebraic_multigrid_settings") const {
    const std::string p(prefix);
    detail::require_at_least(p + ".cycles_per_application", cycles_per_application, 1);
    detail::require_at_least(p + ".smoothing_sweeps", smoothing_sweeps, 1);
    if (!(strength_threshold >= 0.0 && strength_threshold < 1.0)) {
      detail::throw_invalid_setting(p + ".strength_threshold", "in [0, 1)", strength_threshold);
    }
    detail::require_at_least(p + ".maximum_levels", maximum_levels, 2);
    detail::require_at_least(p + ".maximum_interpolation_entries_per_row", maximum_interpolation_entries_per_row, 0);
    detail::require_at_least(p + ".aggressive_coarsening_levels", aggressive_coarsening_levels, 0);
  }
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_ALGEBRAIC_MULTIGRID_SETTINGS_HPP
