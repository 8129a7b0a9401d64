// Converging the nozzle from a crude start with nkit's pseudo-transient
// continuation (globalization_strategy::pseudo_transient; pseudo_transient.hpp:
// Kelley & Keyes 1998 iteration, Mulder & van Leer 1985 step growth). The
// problem supplies spectral-radius weights (pseudo_time_weights in
// nozzle.hpp), so the pseudo-time step is a CFL number with local time steps
// Δτ_i = CFL·V_i/λ_i, the usual CFD practice. The preconditioner is nkit's
// sparse_direct_preconditioner, an exact sparse LU of R'(U) + W/δ: the driver
// assembles R'(U) by colored finite differences from the problem's
// jacobian_pattern() and adds the pseudo-time diagonal.
#ifndef NKIT_PROBLEMS_FLOW_NOZZLE_SOLVE_HPP
#define NKIT_PROBLEMS_FLOW_NOZZLE_SOLVE_HPP

#include <nkit/nkit.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>

#include "problems/flow/nozzle.hpp"
#include "problems/flow/steady_flow_settings.hpp"

namespace nkit_problems {

/// Settings of the nozzle solve (steady_flow_settings.hpp): from CFL `initial_cfl`, at most 400 Newton steps.
inline nkit::newton_settings nozzle_newton_settings(double initial_cfl = 50.0, double relative_tolerance = 1e-10) {
  return steady_flow_newton_settings(initial_cfl, relative_tolerance, 400);
}

inline nkit::solve_report solve_nozzle(const quasi_one_dimensional_nozzle& problem, Eigen::VectorXd& u,
                                       const nkit::newton_settings& settings = nozzle_newton_settings()) {
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> solver(settings);
  return solver.solve(problem, u);
}

/// Shock position: the face where the Mach number crosses 1 from above in the
/// diverging part (linear interpolation between cell centres); −1 when none.
inline double captured_shock_position(const quasi_one_dimensional_nozzle& problem, const Eigen::VectorXd& u) {
  for (int i = 0; i + 1 < problem.cells(); ++i) {
    if (problem.x(i) < 1.5) continue;
    const double m0 = quasi_one_dimensional_nozzle::mach(problem.cell(u, i));
    const double m1 = quasi_one_dimensional_nozzle::mach(problem.cell(u, i + 1));
    if (m0 >= 1.0 && m1 < 1.0) return problem.x(i) + (m0 - 1.0) / (m0 - m1) * problem.spacing();
  }
  return -1.0;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_NOZZLE_SOLVE_HPP
