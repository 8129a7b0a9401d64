#ifndef NKIT_PRECONDITIONERS_SYSTEM_STRUCTURED_MULTIGRID_SETTINGS_HPP
#define NKIT_PRECONDITIONERS_SYSTEM_STRUCTURED_MULTIGRID_SETTINGS_HPP

/// \file preconditioners/system_structured_multigrid_settings.hpp
/// The choices of the geometric (stencil-based) multigrid for several
/// unknowns per cell on a logically rectangular grid, under nkit's own names,
/// for system_structured_multigrid_preconditioner
/// (hypre_system_structured_multigrid.hpp, where they are mapped to hypre's
/// option codes in one place). Only what hypre 2.26's semicoarsening system
/// multigrid honours through its documented interface is here (it has, for
/// instance, no choice of coarse operator and no level limit there). This
/// header has no hypre or MPI dependency. Defaults follow hypre 2.26's own.

#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

/// Relaxation on every level before and after the coarse-grid correction.
/// Every sweep solves, cell by cell, the small system of all unknowns of the
/// cell together (a block, or "nodal", relaxation).
enum class system_multigrid_smoother {
  jacobi,          ///< block Jacobi, undamped
  weighted_jacobi  ///< block Jacobi damped by a weight hypre chooses from the dimension
};
// hypre 2.26 also documents a red/black code for this solver; its colour sets
// are written with three-dimensional indices, which on a 2-D grid make both
// "colours" the whole grid (two undamped Jacobi sweeps; measured: 60 cycles
// leave a relative error of 4·10⁻² where weighted Jacobi reaches 10⁻¹⁴), so
// nkit does not offer it.

struct system_structured_multigrid_settings {
  system_multigrid_smoother smoother = system_multigrid_smoother::weighted_jacobi;
  /// Cycles per preconditioner application (1 is usual inside GMRES).
  int cycles_per_application = 1;
  /// Relaxation sweeps before and after each coarse-grid correction.
  int smoothing_sweeps_before = 1;
  int smoothing_sweeps_after = 1;
  /// Skip relaxation on the levels where, for an isotropic operator, the
  /// semicoarsening makes it redundant (hypre's default); turn off for
  /// strongly anisotropic problems if the iteration counts grow.
  bool skip_relaxation_where_isotropic = true;
  /// Once the stencil values are in hypre's matrix, let the Newton driver
  /// free its assembled Jacobian (preconditioner_context::
  /// release_assembled_jacobian) instead of keeping it until the next setup:
  /// less memory for the rest of the solve, at the price of an allocation at
  /// every assembly (assemble_jacobian then receives an empty matrix, see
  /// jacobian/sparse_jacobian.hpp). Off by default, so that setups after the
  /// first allocate nothing in nkit.
  bool release_assembled_jacobian_after_copy = false;

  void validate(std::string_view prefix = "system_structured_multigrid_settings") const {
    const std::string p(prefix);
    detail::require_enumerator(p + ".smoother", smoother, system_multigrid_smoother::weighted_jacobi,
                               "jacobi, weighted_jacobi");
    detail::require_at_least(p + ".cycles_per_application", cycles_per_application, 1);
    detail::require_at_least(p + ".smoothing_sweeps_before", smoothing_sweeps_before, 0);
    detail::require_at_least(p + ".smoothing_sweeps_after", smoothing_sweeps_after, 0);
    if (smoothing_sweeps_before + smoothing_sweeps_after < 1) {
      detail::throw_invalid_setting(p + ".smoothing_sweeps_before + smoothing_sweeps_after", ">= 1",
                                    smoothing_sweeps_before + smoothing_sweeps_after);
    }
  }
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_SYSTEM_STRUCTURED_MULTIGRID_SETTINGS_HPP
