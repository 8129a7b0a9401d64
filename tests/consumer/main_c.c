/* Solves u^3 = 8 through the installed (or embedded) C interface and checks u = 2. */
#include <math.h>
#include <stdio.h>

#include "nkit_c.h"

static int cube_minus_eight(const double* u, double* r, int64_t n, void* user) {
  (void)n;
  (void)user;
  r[0] = u[0] * u[0] * u[0] - 8.0;
  return 0;
}

int main(void) {
  nkit_solver* solver = NULL;
  double u[1] = {1.0};
  int32_t converged = 0;
  if (nkit_solver_create(&solver) != NKIT_STATUS_SUCCESS) return 1;
  nkit_set_residual(solver, cube_minus_eight, NULL);
  nkit_set_real(solver, "relative_tolerance", 1e-12);
  if (nkit_solve(solver, u, 1) != NKIT_STATUS_SUCCESS) {
    puts(nkit_last_error_message());
    return 1;
  }
  nkit_report_converged(solver, &converged);
  printf("C consumer: %s, u = %.15f\n", nkit_report_stop_reason(solver), u[0]);
  nkit_solver_destroy(solver);
  return converged && fabs(u[0] - 2.0) < 1e-10 ? 0 : 1;
}
