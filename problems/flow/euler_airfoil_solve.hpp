// Converging the airfoil flow of euler_airfoil.hpp from the uniform free
// stream with nkit's pseudo-transient continuation
// (globalization_strategy::pseudo_transient; pseudo_transient.hpp: Kelley &
// Keyes 1998 iteration, Mulder & van Leer 1985 step growth), as
// nozzle_solve.hpp does for the nozzle: the problem's spectral-radius weights
// make the pseudo-time step a CFL number with local time steps. The
// preconditioner (a template argument; by default nkit's
// sparse_direct_preconditioner, an exact sparse LU) is set up from
// R'(U) + W/δ, R'(U) assembled by colored finite differences from the
// problem's jacobian_pattern() (at second order the wide MUSCL stencil, 9
// cells of 4 unknowns per row), or from the first-order operator's Jacobian
// with euler_airfoil_first_order_jacobian.hpp (five cells per row). Measured
// on the 64 × 32 grid: ILU(0) of the first-order Jacobian is the fastest of
// the combinations tried, and its block form (block_ilu_zero_preconditioner(4),
// one 4 × 4 block per cell, passed as the last argument) is faster still with
// the same iterations (figures in that header).
#ifndef NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_SOLVE_HPP
#define NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_SOLVE_HPP

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <nkit/nkit.hpp>
#include <nkit/preconditioners/block_ilu_zero.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <stdexcept>
#include <string>
#include <utility>

#include "problems/flow/euler_airfoil.hpp"
#include "problems/flow/euler_airfoil_first_order_jacobian.hpp"
#include "problems/flow/steady_flow_settings.hpp"

namespace nkit_problems {

/// Settings of the airfoil solve (steady_flow_settings.hpp): from CFL `initial_cfl`, at most 200 Newton steps.
inline nkit::newton_settings euler_airfoil_newton_settings(double initial_cfl = 50.0,
                                                           double relative_tolerance = 1e-10) {
  return steady_flow_newton_settings(initial_cfl, relative_tolerance, 200);
}

/// Solves with the preconditioner type given (any of nkit's that set up from
/// the assembled Jacobian: sparse_direct_preconditioner, ilu_zero_preconditioner, ...),
/// default-constructed, or with the `preconditioner` object passed (for one
/// that needs a constructor argument: block_ilu_zero_preconditioner(4), one
/// block per cell).
/// `Problem`: euler_airfoil_flow (preconditioner from its own Jacobian) or
/// euler_airfoil_with_first_order_jacobian (from the first-order operator's).
template <class Preconditioner = nkit::sparse_direct_preconditioner, class Problem>
nkit::solve_report solve_euler_airfoil(const Problem& problem, Eigen::VectorXd& u,
                                       const nkit::newton_settings& settings = euler_airfoil_newton_settings(),
                                       Preconditioner preconditioner = Preconditioner{}) {
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, Preconditioner> solver(settings, {},
                                                                                      std::move(preconditioner));
  return solver.solve(problem, u);
}

/// Outcome of solve_euler_airfoil_with_far_field_vortex.
struct far_field_vortex_solve {
  nkit::solve_report last_report;        ///< the last solve's report
  int solves = 0;                        ///< nonlinear solves, the first (uniform far field) included
  std::int64_t newton_steps = 0;         ///< over all solves
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

#endif  // NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_SOLVE_HPP
