// The Newton settings of a steady flow solve by pseudo-transient continuation,
// shared by the nozzle (nozzle_solve.hpp) and the airfoil
// (euler_airfoil_solve.hpp): nkit's globalization_strategy::pseudo_transient
// (pseudo_transient.hpp: Kelley & Keyes 1998 iteration, Mulder & van Leer 1985
// step growth) from CFL `initial_cfl` — the problems supply spectral-radius
// weights, so the pseudo-time step is a CFL number with local time steps —
// converged when ‖R(U)‖₂ <= relative_tolerance · ‖R(U0)‖₂.
#ifndef NKIT_PROBLEMS_FLOW_STEADY_FLOW_SETTINGS_HPP
#define NKIT_PROBLEMS_FLOW_STEADY_FLOW_SETTINGS_HPP

#include <nkit/newton/newton_settings.hpp>

namespace nkit_problems {

inline nkit::newton_settings steady_flow_newton_settings(double initial_cfl, double relative_tolerance,
                                                         int newton_step_budget) {
  nkit::newton_settings settings;
  settings.globalization = nkit::globalization_strategy::pseudo_transient;
  settings.pseudo_transient.initial_step = initial_cfl;
  settings.relative_tolerance = relative_tolerance;
  settings.newton_step_budget = newton_step_budget;
  // The residual rises while the start-up transient leaves the domain: no
  // stagnation stop during the pseudo-time march.
  settings.stagnation_window = newton_step_budget;
  return settings;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_STEADY_FLOW_SETTINGS_HPP
