// The far-field vortex correction of the airfoil flow (euler_airfoil.hpp)
// by outer iteration: solve with the uniform far field, then again with the
// far field of a point vortex of the lift just found, until the lift settles.
// The residual of each solve stays a local function of the state, so its
// Jacobian keeps the stencil pattern (colored differences, block ILU(0)).
#ifndef NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_FAR_FIELD_VORTEX_HPP
#define NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_FAR_FIELD_VORTEX_HPP

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <nkit/newton/newton_settings.hpp>
#include <nkit/report/report.hpp>
#include <stdexcept>
#include <string>

#include "problems/flow/airfoil_grid.hpp"
#include "problems/flow/euler_airfoil.hpp"

namespace nkit_problems {

/// Outcome of solve_euler_airfoil_with_far_field_vortex.
struct far_field_vortex_solve {
  nkit::solve_report last_report;        ///< the last solve's report
  int solves = 0;                        ///< nonlinear solves, the first (uniform far field) included
  std::int64_t newton_steps = 0;         ///< over all solves
  std::int64_t linear_iterations = 0;    ///< GMRES iterations over all solves
  int returns_to_pseudo_time = 0;        ///< returns of failed Newton phases to pseudo-time stepping, all solves
  double wall_seconds = 0.0;             ///< over all solves
  double initial_residual_norm = 0.0;    ///< ‖R(u0)‖ of the first solve (uniform far field)
  double lift_coefficient = 0.0;         ///< c_l of the last solve
  double vortex_lift_coefficient = 0.0;  ///< the c_l its far-field vortex was given
  bool converged = false;                ///< every solve converged and the two lift coefficients agree to the tolerance
};

/// The far-field vortex correction by outer iteration: solves with the
/// uniform far field, then again (from the state reached) with the far-field
/// vortex of the lift just found (euler_airfoil_settings::
/// far_field_vortex_lift_coefficient), until the lift changes by at most
/// `lift_tolerance`. Each solve keeps the residual a local function of the
/// state (its Jacobian keeps the stencil pattern); the lift depends on the
/// far field only weakly (O(1/R)), so the outer iteration contracts fast.
/// `solve(flow, u, newton)` solves one flow in place with those Newton
/// settings and returns its report, e.g.
///   [](const euler_airfoil_flow& f, Eigen::VectorXd& u, const nkit::newton_settings& s) {
///     return solve_euler_airfoil(euler_airfoil_with_first_order_jacobian(f), u, s,
///                                nkit::block_ilu_zero_preconditioner(4)); }
/// The first solve uses `newton` as given; the later ones start next to the
/// answer, so a test relative to their own start would ask for round-off:
/// they stop at the first solve's target instead, ‖R‖ <= relative_tolerance ·
/// ‖R(u0)‖ of the first solve, as an absolute tolerance.
template <class Solve>
far_field_vortex_solve solve_euler_airfoil_with_far_field_vortex(const airfoil_o_grid& grid,
                                                                 euler_airfoil_settings settings, Eigen::VectorXd& u,
                                                                 nkit::newton_settings newton, Solve&& solve,
                                                                 double lift_tolerance = 1e-6,
                                                                 int maximum_solves = 20) {
  if (!(lift_tolerance > 0.0)) {
    throw std::invalid_argument("solve_euler_airfoil_with_far_field_vortex: lift_tolerance must be > 0 (got " +
                                std::to_string(lift_tolerance) + ")");
  }
  if (maximum_solves < 2) {
    throw std::invalid_argument("solve_euler_airfoil_with_far_field_vortex: maximum_solves must be >= 2 (got " +
                                std::to_string(maximum_solves) + ")");
  }
  far_field_vortex_solve result;
  settings.far_field_vortex_lift_coefficient = 0.0;
  while (result.solves < maximum_solves) {
    const euler_airfoil_flow flow(grid, settings);
    result.last_report = solve(flow, u, static_cast<const nkit::newton_settings&>(newton));
    ++result.solves;
    result.newton_steps += result.last_report.newton_steps;
    result.linear_iterations += result.last_report.linear_iterations;
    result.returns_to_pseudo_time += result.last_report.returns_to_pseudo_time;
    result.wall_seconds += result.last_report.wall_seconds;
    if (result.solves == 1) result.initial_residual_norm = result.last_report.initial_residual_norm;
    result.vortex_lift_coefficient = settings.far_field_vortex_lift_coefficient;
    result.lift_coefficient = flow.forces(u).lift_coefficient;
    if (!result.last_report.converged()) return result;
    if (result.solves == 1) {
      newton.absolute_tolerance =
          std::max(newton.absolute_tolerance, newton.relative_tolerance * result.last_report.initial_residual_norm);
      newton.relative_tolerance = 0.0;
    } else if (std::abs(result.lift_coefficient - result.vortex_lift_coefficient) <= lift_tolerance) {
      result.converged = true;
      return result;
    }
    settings.far_field_vortex_lift_coefficient = result.lift_coefficient;
  }
  return result;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_FAR_FIELD_VORTEX_HPP
