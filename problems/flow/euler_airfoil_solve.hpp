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
// on 48 × 24 to 96 × 48 (bench_airfoil_flow): ILU(0) of the first-order
// Jacobian is the fastest of the combinations tried, and its block form
// (block_ilu_zero_preconditioner(4), one 4 × 4 block per cell, passed as the
// last argument) is faster still with the same iterations (figures in that
// header and in docs/performance/README.md); set up every fifth Newton step
// (newton_settings::preconditioner_rebuild) it takes half the time again.
#ifndef NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_SOLVE_HPP
#define NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_SOLVE_HPP

#include <nkit/nkit.hpp>
#include <nkit/preconditioners/block_ilu_zero.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
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

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_EULER_AIRFOIL_SOLVE_HPP
