#ifndef NKIT_PRECONDITIONERS_STRUCTURED_MULTIGRID_SETTINGS_HPP
#define NKIT_PRECONDITIONERS_STRUCTURED_MULTIGRID_SETTINGS_HPP

/// \file preconditioners/structured_multigrid_settings.hpp
/// The choices of the geometric (stencil-based) multigrid on a logically
/// rectangular grid, under nkit's own names, for
/// structured_multigrid_preconditioner (hypre_structured_multigrid.hpp, where
/// they are mapped to hypre's option codes in one place). This header has no
/// hypre or MPI dependency. Defaults follow hypre 2.26's own for its
/// semicoarsening multigrid.

#include <stdexcept>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

/// Relaxation on every level before and after the coarse-grid correction.
enum class structured_multigrid_smoother {
  jacobi,
  weighted_jacobi,  ///< Jacobi damped by a weight hypre chooses from the dimension
  /// Red/black Gauss–Seidel, red then black before the correction and black
  /// then red after it: the cycle is symmetric for a symmetric operator.
  red_black_gauss_seidel_symmetric,
  /// Red/black Gauss–Seidel, red then black on both legs.
  red_black_gauss_seidel
};

/// How the operator of each coarser grid is formed.
enum class structured_coarse_operator {
  /// Rᵀ A P: the Galerkin product with the interpolation (the coarse
  /// stencils grow, at most to 9 points in 2-D and 27 in 3-D).
  galerkin,
  /// A 5-point (2-D) or 7-point (3-D) stencil on every coarse grid, formed
  /// from the fine coefficients by averaging: cheaper levels, usually a few
  /// more GMRES iterations.
  non_galerkin
};

struct structured_multigrid_settings {
  /// The red/black smoothers need coarse_operator = non_galerkin (hypre 2.26
  /// forms non-Galerkin coarse operators whenever it relaxes red/black, so
  /// nkit rejects the other combination rather than let it be replaced
  /// silently) and a star stencil (checked at setup).
  structured_multigrid_smoother smoother = structured_multigrid_smoother::weighted_jacobi;
  structured_coarse_operator coarse_operator = structured_coarse_operator::galerkin;
  /// Cycles per preconditioner application (1 is usual inside GMRES).
  int cycles_per_application = 1;
  /// Relaxation sweeps before and after each coarse-grid correction.
  int smoothing_sweeps_before = 1;
  int smoothing_sweeps_after = 1;
  /// Levels in the hierarchy, the finest included; 0 = as many as the grid
  /// allows (coarsening stops at one cell in every direction).
  int maximum_levels = 0;
  /// Skip relaxation on the levels where, for an isotropic operator, the
  /// semicoarsening makes it redundant (hypre's default); turn off for
  /// strongly anisotropic problems if the iteration counts grow.
  bool skip_relaxation_where_isotropic = true;
  /// Once the stencil values are in hypre's matrix, let the Newton driver
  /// free its assembled Jacobian (preconditioner_context::
  /// release_assembled_jacobian) instead of keeping it until the next setup.
  /// Saves that matrix's memory (64 MiB for the 5-point Jacobian at 1024²
  /// cells: values, column indices and row offsets) for the rest of the
  /// solve; the price is that every setup assembles into new storage (an
  /// allocation; assemble_jacobian then receives an empty matrix, see
  /// jacobian/sparse_jacobian.hpp). Off by default, so that setups after the
  /// first allocate nothing in nkit.
  bool release_assembled_jacobian_after_copy = false;

  void validate(std::string_view prefix = "structured_multigrid_settings") const {
    const std::string p(prefix);
    detail::require_enumerator(p + ".smoother", smoother, structured_multigrid_smoother::red_black_gauss_seidel,
                               "jacobi, weighted_jacobi, red_black_gauss_seidel_symmetric, red_black_gauss_seidel");
    detail::require_enumerator(p + ".coarse_operator", coarse_operator, structured_coarse_operator::non_galerkin,
                               "galerkin, non_galerkin");
    detail::require_at_least(p + ".cycles_per_application", cycles_per_application, 1);
    detail::require_at_least(p + ".smoothing_sweeps_before", smoothing_sweeps_before, 0);
    detail::require_at_least(p + ".smoothing_sweeps_after", smoothing_sweeps_after, 0);
    if (smoothing_sweeps_before + smoothing_sweeps_after < 1) {
      detail::throw_invalid_setting(p + ".smoothing_sweeps_before + smoothing_sweeps_after", ">= 1",
                                    smoothing_sweeps_before + smoothing_sweeps_after);
    }
    detail::require_at_least(p + ".maximum_levels", maximum_levels, 0);
    const bool red_black = smoother == structured_multigrid_smoother::red_black_gauss_seidel ||
                           smoother == structured_multigrid_smoother::red_black_gauss_seidel_symmetric;
    if (red_black && coarse_operator != structured_coarse_operator::non_galerkin) {
      throw std::invalid_argument("nkit: " + p + ".smoother = red_black_gauss_seidel(_symmetric) needs " + p +
                                  ".coarse_operator = non_galerkin (the red/black sweeps are written for 5- and "
                                  "7-point stencils, which Galerkin coarse operators do not keep)");
    }
  }
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_STRUCTURED_MULTIGRID_SETTINGS_HPP
