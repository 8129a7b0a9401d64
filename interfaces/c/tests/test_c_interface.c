/* Tests of the C interface (nkit_c.h), written in C99 as a user would.
 *
 * Checks against closed forms and exact relations:
 *  - the cubic system u_i³ + u_i = a_i³ + a_i (invented for the test) has the
 *    unique real solution u = a (x³ + x is strictly increasing);
 *  - the discretised Chandrasekhar H-equation satisfies (c/2N) Σ H_i =
 *    1 − √(1 − c) exactly (derived in tests/support/chandrasekhar_h_equation.hpp;
 *    S. Chandrasekhar, Radiative Transfer, 1950, the moment relation — from memory);
 * and the error contract: every misuse returns a status with a message,
 * a failing callback ends the solve with NKIT_STATUS_CALLBACK_FAILED and the
 * state at the last accepted iterate. Exits 1 on the first failed check. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "c_test_checks.h"
#include "nkit_c.h"

int failures = 0;

enum { cubic_size = 50, h_size = 100 };

/* ---- the cubic system ---------------------------------------------------------- */

typedef struct {
  double a[cubic_size];
  int calls;
  int fail_at_call; /* 0 = never */
} cubic_problem;

static int cubic_residual(const double* u, double* r, int64_t n, void* user) {
  cubic_problem* p = (cubic_problem*)user;
  int64_t i;
  ++p->calls;
  if (p->fail_at_call > 0 && p->calls == p->fail_at_call) return 7;
  for (i = 0; i < n; ++i) r[i] = u[i] * u[i] * u[i] + u[i] - (p->a[i] * p->a[i] * p->a[i] + p->a[i]);
  return 0;
}

typedef struct {
  double diagonal[cubic_size];
  int setups, applications;
} jacobi_data;

static int jacobi_setup(const double* u, const double* r, int64_t n, void* user) {
  jacobi_data* d = (jacobi_data*)user;
  int64_t i;
  (void)r;
  ++d->setups;
  for (i = 0; i < n; ++i) d->diagonal[i] = 3.0 * u[i] * u[i] + 1.0; /* R'(u) is diagonal here */
  return 0;
}

static int jacobi_apply(const double* r, double* z, int64_t n, void* user) {
  jacobi_data* d = (jacobi_data*)user;
  int64_t i;
  ++d->applications;
  for (i = 0; i < n; ++i) z[i] = r[i] / d->diagonal[i];
  return 0;
}

typedef struct {
  int calls;
  int stop_at;
  double last_residual_norm;
  cubic_problem* arm_failure; /* when set: after step 1 the residual fails at its second call from then */
} monitor_data;

static int counting_monitor(const nkit_iteration_summary* s, void* user) {
  monitor_data* m = (monitor_data*)user;
  ++m->calls;
  CHECK(s->iteration == m->calls);
  m->last_residual_norm = s->residual_norm;
  if (m->arm_failure != NULL && m->calls == 1) m->arm_failure->fail_at_call = m->arm_failure->calls + 2;
  return m->stop_at > 0 && s->iteration >= m->stop_at;
}

static void make_cubic(cubic_problem* p, double* u) {
  int i;
  memset(p, 0, sizeof *p);
  for (i = 0; i < cubic_size; ++i) {
    p->a[i] = 0.1 * (i + 1);
    u[i] = 0.0;
  }
}

static double max_difference(const double* x, const double* y, int n) {
  double worst = 0.0;
  int i;
  for (i = 0; i < n; ++i) worst = fmax(worst, fabs(x[i] - y[i]));
  return worst;
}

/* ---- the H-equation as a fixed-point map ------------------------------------------- */

typedef struct {
  double c;
  double mu[h_size];
  int calls;
} h_problem;

static int h_map(const double* h, double* g, int64_t n, void* user) {
  h_problem* p = (h_problem*)user;
  int64_t i, j;
  ++p->calls;
  for (i = 0; i < n; ++i) {
    double sum = 0.0;
    for (j = 0; j < n; ++j) sum += h[j] / (p->mu[i] + p->mu[j]);
    g[i] = 1.0 / (1.0 - p->c / (2.0 * (double)n) * p->mu[i] * sum);
  }
  return 0;
}

static void make_h(h_problem* p, double c, double* h) {
  int i;
  p->c = c;
  p->calls = 0;
  for (i = 0; i < h_size; ++i) {
    p->mu[i] = (i + 0.5) / h_size;
    h[i] = 1.0;
  }
}

static double h_moment_error(const h_problem* p, const double* h) {
  double sum = 0.0;
  int i;
  for (i = 0; i < h_size; ++i) sum += h[i];
  return fabs(p->c / (2.0 * h_size) * sum - (1.0 - sqrt(1.0 - p->c)));
}

/* ---- tests ---------------------------------------------------------------------------------- */

static void newton_krylov_on_a_residual(void) {
  nkit_solver* solver = NULL;
  cubic_problem p;
  double u[cubic_size];
  int32_t converged = 0;
  int64_t steps = 0, evaluations = 0, history = 0;
  double final_norm = 0.0;
  monitor_data monitor = {0, 0, 0.0, NULL};
  make_cubic(&p, u);
  CHECK_STATUS(nkit_solver_create(&solver), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_set_residual(solver, cubic_residual, &p), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_set_monitor(solver, counting_monitor, &monitor), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_set_real(solver, "relative_tolerance", 1e-12), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_converged(solver, &converged), NKIT_STATUS_SUCCESS);
  CHECK(converged == 1);
  CHECK(strcmp(nkit_report_stop_reason(solver), "relative_tolerance_met") == 0);
  CHECK(strcmp(nkit_report_status(solver), "converged") == 0);
  /* ‖R‖ <= 1e-12 ‖R(0)‖ ≈ 3e-11 and R'(u) >= 1: |u − a| <= 1e-10. */
  CHECK(max_difference(u, p.a, cubic_size) <= 1e-10);
  CHECK_STATUS(nkit_report_integer(solver, "iterations", &steps), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_integer(solver, "residual_evaluations", &evaluations), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_integer(solver, "history_length", &history), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_real(solver, "final_residual_norm", &final_norm), NKIT_STATUS_SUCCESS);
  CHECK(steps >= 1 && history == steps && monitor.calls == steps);
  CHECK(evaluations == p.calls);
  CHECK(final_norm == monitor.last_residual_norm);
  {
    nkit_iteration_summary last;
    CHECK_STATUS(nkit_report_iteration(solver, steps - 1, &last), NKIT_STATUS_SUCCESS);
    CHECK(last.residual_norm == final_norm && last.iteration == steps && last.linear_iterations >= 1);
    CHECK_STATUS(nkit_report_iteration(solver, steps, &last), NKIT_STATUS_NO_REPORT);
    CHECK_MESSAGE("outside the history");
  }
  /* The monitor stops the solve: not an error, a stop reason. */
  make_cubic(&p, u);
  monitor.calls = 0;
  monitor.stop_at = 2;
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_SUCCESS);
  CHECK(strcmp(nkit_report_stop_reason(solver), "monitor_requested_stop") == 0);
  CHECK(monitor.calls == 2);
  CHECK(strlen(nkit_report_message(solver)) > 10);
  nkit_solver_destroy(solver);
}

static void preconditioner_callbacks(void) {
  nkit_solver* solver = NULL;
  cubic_problem p;
  jacobi_data jacobi = {{0.0}, 0, 0};
  double u[cubic_size];
  int32_t converged = 0;
  int64_t linear = 0;
  make_cubic(&p, u);
  CHECK_STATUS(nkit_solver_create(&solver), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_set_residual(solver, cubic_residual, &p), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_set_preconditioner(solver, jacobi_setup, jacobi_apply, &jacobi), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_converged(solver, &converged), NKIT_STATUS_SUCCESS);
  CHECK(converged == 1);
  CHECK(jacobi.setups >= 1 && jacobi.applications >= 1);
  /* The exact inverse of the (diagonal) Jacobian: one GMRES iteration per Newton step. */
  CHECK_STATUS(nkit_report_integer(solver, "linear_iterations", &linear), NKIT_STATUS_SUCCESS);
  {
    int64_t steps = 0;
    CHECK_STATUS(nkit_report_integer(solver, "iterations", &steps), NKIT_STATUS_SUCCESS);
    CHECK(linear == steps);
  }
  CHECK(max_difference(u, p.a, cubic_size) <= 1e-7);
  nkit_solver_destroy(solver);
}

static void fixed_point_map_methods(void) {
  const char* methods[] = {"newton_krylov_on_fixed_point_map", "anderson"};
  int k;
  for (k = 0; k < 2; ++k) {
    nkit_solver* solver = NULL;
    h_problem p;
    double h[h_size];
    int32_t converged = 0;
    int64_t evaluations = 0;
    make_h(&p, 0.9, h);
    CHECK_STATUS(nkit_solver_create(&solver), NKIT_STATUS_SUCCESS);
    CHECK_STATUS(nkit_set_text(solver, "method", methods[k]), NKIT_STATUS_SUCCESS);
    CHECK_STATUS(nkit_set_fixed_point_map(solver, h_map, &p), NKIT_STATUS_SUCCESS);
    CHECK_STATUS(nkit_set_real(solver, "relative_tolerance", 1e-10), NKIT_STATUS_SUCCESS);
    CHECK_STATUS(nkit_solve(solver, h, h_size), NKIT_STATUS_SUCCESS);
    CHECK_STATUS(nkit_report_converged(solver, &converged), NKIT_STATUS_SUCCESS);
    CHECK(converged == 1);
    /* ‖f‖ <= 1e-10 ‖f0‖ bounds the error of H near 1e-9: the moment to 1e-8. */
    CHECK(h_moment_error(&p, h) <= 1e-8);
    CHECK_STATUS(nkit_report_integer(solver, "residual_evaluations", &evaluations), NKIT_STATUS_SUCCESS);
    CHECK(evaluations == p.calls);
    nkit_solver_destroy(solver);
  }
}

static void settings_by_name_and_by_field(void) {
  nkit_solver* solver = NULL;
  nkit_settings settings;
  double real = 0.0;
  int64_t integer = 0;
  CHECK_STATUS(nkit_solver_create(&solver), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_settings_defaults(&settings), NKIT_STATUS_SUCCESS);
  /* nkit's own defaults (include/nkit/settings.hpp, fixed_point/anderson_settings.hpp). */
  CHECK(settings.relative_tolerance == 1e-8 && settings.restart_length == 30 && settings.anderson_depth == 5);
  settings.method = 2;
  settings.anderson_depth = 12;
  settings.anderson_mixing = 0.5;
  settings.iteration_budget = 77;
  CHECK_STATUS(nkit_configure(solver, &settings), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_get_integer(solver, "anderson.depth", &integer), NKIT_STATUS_SUCCESS);
  CHECK(integer == 12);
  CHECK_STATUS(nkit_get_real(solver, "anderson.mixing", &real), NKIT_STATUS_SUCCESS);
  CHECK(real == 0.5);
  CHECK_STATUS(nkit_get_integer(solver, "iteration_budget", &integer), NKIT_STATUS_SUCCESS);
  CHECK(integer == 77);
  CHECK_STATUS(nkit_set_integer(solver, "linear.restart_length", 45), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_get_settings(solver, &settings), NKIT_STATUS_SUCCESS);
  CHECK(settings.restart_length == 45 && settings.method == 2);
  CHECK_STATUS(nkit_set_text(solver, "globalization", "trust_region"), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_get_settings(solver, &settings), NKIT_STATUS_SUCCESS);
  CHECK(settings.globalization == 2);

  /* Every misuse: a status and a message naming the setting and value; settings unchanged. */
  CHECK_STATUS(nkit_set_real(solver, "relative_tolerance", -1.0), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit: newton_settings.relative_tolerance must be finite and >= 0 (got -1)");
  CHECK_STATUS(nkit_set_integer(solver, "linear.restart_length", 0), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit: newton_settings.linear.restart_length must be >= 1 (got 0)");
  CHECK_STATUS(nkit_get_integer(solver, "linear.restart_length", &integer), NKIT_STATUS_SUCCESS);
  CHECK(integer == 45);
  CHECK_STATUS(nkit_set_real(solver, "anderson.mixing", 2.0), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit: anderson_settings.mixing must be in (0, 1] (got 2)");
  CHECK_STATUS(nkit_set_integer(solver, "iteration_budget", 5000000000LL), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("must fit in a 32-bit integer");
  CHECK_STATUS(nkit_set_real(solver, "no_such_setting", 1.0), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit: unknown setting 'no_such_setting'");
  CHECK_STATUS(nkit_set_real(solver, "anderson.depth", 3.0), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit: setting 'anderson.depth' is an integer (use nkit_set_integer)");
  CHECK_STATUS(nkit_set_text(solver, "method", "bisection"), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit: setting 'method' has no value 'bisection'");
  settings.globalization = 9;
  CHECK_STATUS(nkit_configure(solver, &settings), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("newton_settings.globalization must be one of");
  settings.globalization = 0;
  settings.method = -1;
  CHECK_STATUS(nkit_configure(solver, &settings), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit: method must be one of");
  CHECK_STATUS(nkit_set_real(NULL, "relative_tolerance", 1e-6), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit_set_real: solver is NULL");
  CHECK_STATUS(nkit_set_real(solver, NULL, 1e-6), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_STATUS(nkit_set_text(solver, "method", NULL), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_STATUS(nkit_configure(solver, NULL), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_STATUS(nkit_settings_defaults(NULL), NKIT_STATUS_INVALID_ARGUMENT);
  /* A success clears the message. */
  CHECK_STATUS(nkit_set_real(solver, "relative_tolerance", 1e-6), NKIT_STATUS_SUCCESS);
  CHECK(strcmp(nkit_last_error_message(), "") == 0);
  nkit_solver_destroy(solver);
}

static void bad_input_and_failing_callbacks(void) {
  nkit_solver* solver = NULL;
  cubic_problem p;
  double u[cubic_size], lower[cubic_size], upper[cubic_size];
  int32_t converged = 0;
  int i;
  monitor_data monitor = {0, 0, 0.0, NULL};
  make_cubic(&p, u);
  CHECK_STATUS(nkit_solver_create(NULL), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_STATUS(nkit_solver_destroy(NULL), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_solver_create(&solver), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_converged(solver, &converged), NKIT_STATUS_NO_REPORT);
  CHECK(strcmp(nkit_report_stop_reason(solver), "") == 0);
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_MISSING_CALLBACK);
  CHECK_MESSAGE("needs a residual callback");
  CHECK_STATUS(nkit_set_text(solver, "method", "anderson"), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_MISSING_CALLBACK);
  CHECK_MESSAGE("needs a fixed-point map callback");
  CHECK_STATUS(nkit_set_text(solver, "method", "newton_krylov"), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_set_residual(solver, cubic_residual, &p), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_solve(NULL, u, cubic_size), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_STATUS(nkit_solve(solver, NULL, cubic_size), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit_solve: state is NULL");
  CHECK_STATUS(nkit_solve(solver, u, 0), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit_solve: size must be >= 1 (got 0)");
  u[3] = NAN;
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("nkit: the initial guess u0 contains NaN or Inf entries");
  u[3] = 0.0;
  for (i = 0; i < cubic_size; ++i) {
    lower[i] = -1.0;
    upper[i] = 10.0;
  }
  CHECK_STATUS(nkit_set_bounds(solver, lower, upper, cubic_size - 1), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("the bounds have 49 entries but the state has 50");
  CHECK_STATUS(nkit_set_bounds(solver, lower, NULL, cubic_size), NKIT_STATUS_INVALID_ARGUMENT);
  upper[4] = -2.0;
  CHECK_STATUS(nkit_set_bounds(solver, lower, upper, cubic_size), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK_MESSAGE("contradictory bounds at index 4");
  upper[4] = 10.0;
  CHECK_STATUS(nkit_set_bounds(solver, lower, upper, cubic_size), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_set_preconditioner(solver, jacobi_setup, NULL, NULL), NKIT_STATUS_INVALID_ARGUMENT);

  /* A residual that reports failure in the second Newton step: an error
   * status naming the callback and code; u holds the last accepted iterate,
   * whose residual norm the monitor saw last. */
  monitor.arm_failure = &p;
  CHECK_STATUS(nkit_set_monitor(solver, counting_monitor, &monitor), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_CALLBACK_FAILED);
  CHECK_MESSAGE("nkit: the residual callback returned 7 (failure) at call");
  CHECK(monitor.calls == 1);
  CHECK_STATUS(nkit_report_converged(solver, &converged), NKIT_STATUS_NO_REPORT);
  {
    double r[cubic_size], norm = 0.0;
    p.fail_at_call = 0;
    cubic_residual(u, r, cubic_size, &p);
    for (i = 0; i < cubic_size; ++i) norm += r[i] * r[i];
    CHECK(monitor.calls >= 1);
    CHECK(fabs(sqrt(norm) - monitor.last_residual_norm) <= 1e-14 * monitor.last_residual_norm);
  }
  /* The handle stays usable after an error. */
  monitor.arm_failure = NULL;
  monitor.calls = 0;
  make_cubic(&p, u);
  CHECK_STATUS(nkit_solve(solver, u, cubic_size), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_converged(solver, &converged), NKIT_STATUS_SUCCESS);
  CHECK(converged == 1);
  nkit_solver_destroy(solver);
}

int main(void) {
  CHECK(strcmp(nkit_version_text(), "") != 0);
  newton_krylov_on_a_residual();
  preconditioner_callbacks();
  fixed_point_map_methods();
  settings_by_name_and_by_field();
  bad_input_and_failing_callbacks();
  if (failures > 0) {
    fprintf(stderr, "%d check(s) failed\n", failures);
    return 1;
  }
  printf("all C interface checks passed\n");
  return 0;
}
