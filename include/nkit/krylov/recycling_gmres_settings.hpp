#ifndef NKIT_KRYLOV_RECYCLING_GMRES_SETTINGS_HPP
#define NKIT_KRYLOV_RECYCLING_GMRES_SETTINGS_HPP

/// \file krylov/recycling_gmres_settings.hpp
/// Settings of the recycling GMRES solver (GCRO-DR(m, k), krylov/recycling_gmres.hpp):
/// cycle length m, recycle dimension k, iteration cap, tolerance, whether the
/// recycled subspace is kept between solves and which cycles update it.

#include <string>
#include <string_view>

#include "../detail/checks.hpp"
#include "gmres.hpp"

namespace nkit {

struct recycling_gmres_settings {
  /// m: vectors of one restart cycle, recycled ones included (each cycle after
  /// the first runs restart_length − recycle_dimension Arnoldi steps).
  int restart_length = 30;
  /// k: harmonic Ritz vectors kept between cycles and between solves; 0 gives
  /// GMRES(m). Must be below restart_length.
  int recycle_dimension = 10;
  /// Arnoldi steps allowed per linear solve, summed over cycles.
  int maximum_iterations = 300;
  /// Stop when ‖b − A x‖ <= relative_tolerance · ‖b‖ (the solve() overload
  /// without a tolerance uses it).
  double relative_tolerance = 1e-8;
  /// true: the recycled subspace survives a solve and seeds the next one;
  /// false: every solve starts from plain GMRES cycles (recycling then acts
  /// only across the restarts of one solve, i.e. deflated restarting).
  bool keep_recycled_subspace = true;
  /// A cycle of fewer Arnoldi steps than this leaves a held recycled subspace
  /// as it is instead of replacing it by the cycle's harmonic Ritz vectors
  /// (the replacement costs about 3k(k + steps) vector operations, dot
  /// products and multiply-adds, more than the cycle itself when it is short,
  /// and a short cycle adds little to the subspace). 0 (default): every cycle
  /// updates the subspace, as Parks et al. (2006) do. A cycle with no subspace
  /// held always updates, so a value above restart_length − recycle_dimension
  /// freezes the subspace of the first cycle for the rest of the sequence.
  /// Skipped updates are not counted in linear_solve_result::recycle_updates_skipped.
  int minimum_cycle_steps_for_update = 0;
  /// Re-orthogonalisation of the modified Gram–Schmidt passes (as gmres_settings).
  reorthogonalization_policy reorthogonalization = reorthogonalization_policy::when_needed;

  void validate(std::string_view prefix = "recycling_gmres_settings") const {
    const std::string p(prefix);
    detail::require_at_least(p + ".restart_length", restart_length, 1);
    detail::require_at_least(p + ".recycle_dimension", recycle_dimension, 0);
    if (recycle_dimension >= restart_length) {
      detail::throw_invalid_setting(p + ".recycle_dimension",
                                    "< restart_length (" + std::to_string(restart_length) + ")", recycle_dimension);
    }
    detail::require_at_least(p + ".maximum_iterations", maximum_iterations, 1);
    detail::require_non_negative(p + ".relative_tolerance", relative_tolerance);
    detail::require_at_least(p + ".minimum_cycle_steps_for_update", minimum_cycle_steps_for_update, 0);
    detail::require_enumerator(p + ".reorthogonalization", reorthogonalization, reorthogonalization_policy::always,
                               "never, when_needed, always");
  }
};

}  // namespace nkit

#endif  // NKIT_KRYLOV_RECYCLING_GMRES_SETTINGS_HPP
