/* nkit_c.h: the C interface to nkit (compiled library target nkit::c).
 *
 * One opaque solver handle per problem size and method; user code supplies
 * callbacks that read and write plain double arrays and receive a user
 * pointer. Every function returns an nkit_status: NKIT_STATUS_SUCCESS (0) or
 * an error, whose message nkit_last_error_message() returns. The library
 * never prints, exits or aborts on its own; errors inside a solve (bad input,
 * a callback reporting failure, out of memory) come back as statuses and the
 * state array then holds the last accepted iterate.
 *
 * Expected numerical endings (converged, budget spent, stagnated, ...) are
 * not errors: nkit_solve() returns NKIT_STATUS_SUCCESS and the report says
 * how the solve ended (nkit_report_converged, nkit_report_stop_reason, nkit_report_status).
 * A converged residual is not a validated model.
 *
 * Methods (setting "method"):
 *   "newton_krylov"                      R(u) = 0, residual callback
 *   "newton_krylov_on_fixed_point_map"   u − G(u) = 0, fixed-point-map callback
 *                                        (G is one pass of an existing fixed-point
 *                                        loop; each J·v costs one G)
 *   "anderson"                           u = G(u) by Anderson acceleration
 *
 * Minimal use:
 *   nkit_solver* solver = NULL;
 *   nkit_solver_create(&solver);
 *   nkit_set_text(solver, "method", "anderson");
 *   nkit_set_fixed_point_map(solver, my_map, &my_data);
 *   if (nkit_solve(solver, u, n) != NKIT_STATUS_SUCCESS) puts(nkit_last_error_message());
 *   nkit_solver_destroy(solver);
 *
 * Threads: a handle may be used by one thread at a time; different handles
 * are independent. Callbacks must not throw C++ exceptions or longjmp out,
 * and must not call nkit functions on the handle that is solving.
 */
#ifndef NKIT_C_H
#define NKIT_C_H

#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

typedef struct nkit_solver nkit_solver;

/* Return value of every function. */
typedef enum nkit_status {
  NKIT_STATUS_SUCCESS = 0,
  NKIT_STATUS_INVALID_ARGUMENT = 1, /* null pointer, wrong size, unknown setting, value out of range, NaN in u0 */
  NKIT_STATUS_MISSING_CALLBACK = 2, /* the method needs a callback that was not given */
  NKIT_STATUS_CALLBACK_FAILED = 3,  /* a callback returned nonzero; u holds the last accepted iterate */
  NKIT_STATUS_OUT_OF_MEMORY = 4,
  NKIT_STATUS_NO_REPORT = 5, /* a report accessor before any solve, or an index past the history */
  NKIT_STATUS_INTERNAL_ERROR = 6
} nkit_status;

/* Residual R(u) or fixed-point map G(u): write size entries of output from
 * input. Return 0 on success, nonzero to report failure (the solve then
 * returns NKIT_STATUS_CALLBACK_FAILED). `input` and `output` point into
 * nkit's work vectors: do not keep them. */
typedef int (*nkit_vector_function)(const double* input, double* output, int64_t size, void* user_data);

/* Preconditioner: setup at the Newton iterate (state, residual; may be
 * NULL when nothing needs rebuilding), apply z = M⁻¹ r once per GMRES
 * iteration. Return 0 on success, nonzero on failure. */
typedef int (*nkit_preconditioner_setup_function)(const double* state, const double* residual, int64_t size,
                                                  void* user_data);
typedef int (*nkit_preconditioner_apply_function)(const double* r, double* z, int64_t size, void* user_data);

/* One completed iteration (Newton step or Anderson iteration). */
typedef struct nkit_iteration_summary {
  int32_t iteration;             /* 1-based */
  int32_t linear_iterations;     /* GMRES iterations of this Newton step (0 for Anderson) */
  int32_t depth_used;            /* Anderson: differences combined (0 for Newton) */
  int32_t restarted;             /* Anderson: 1 when the history was cleared in this iteration */
  double residual_norm;          /* ‖R(u_k)‖, ‖u_k − G(u_k)‖ or ‖G(u_k) − u_k‖ */
  double relative_residual_norm; /* residual_norm / initial residual norm */
  double step_norm;              /* ‖u_k − u_{k−1}‖ */
  double elapsed_seconds;        /* since the solve began */
  int64_t residual_evaluations;  /* calls of the residual or map so far */
} nkit_iteration_summary;

/* Called after each iteration: return 0 to continue, nonzero to stop the
 * solve (stop reason "monitor_requested_stop"; not an error). */
typedef int (*nkit_monitor_function)(const nkit_iteration_summary* summary, void* user_data);

/* Settings by field: the common ones, in one struct. Fill it with
 * nkit_settings_defaults() (or nkit_get_settings()), change fields, pass it
 * to nkit_configure(). Every field has a by-name twin (in brackets). */
typedef struct nkit_settings {
  int32_t method;                     /* [method] 0 newton_krylov, 1 newton_krylov_on_fixed_point_map, 2 anderson */
  double relative_tolerance;          /* [relative_tolerance] converged when ‖R‖ <= this · ‖R(u0)‖ */
  double absolute_tolerance;          /* [absolute_tolerance] converged when ‖R‖ <= this (0 = off) */
  int32_t iteration_budget;           /* [iteration_budget] Newton steps or Anderson iterations */
  int64_t residual_evaluation_budget; /* [residual_evaluation_budget] calls of the residual or map */
  double wall_time_budget_seconds;    /* [wall_time_budget_seconds] (+inf = none) */
  int32_t globalization;  /* [globalization] 0 line_search, 1 full_step, 2 trust_region, 3 pseudo_transient */
  int32_t restart_length; /* [linear.restart_length] GMRES vectors kept before a restart */
  int32_t maximum_linear_iterations; /* [linear.maximum_iterations] GMRES iterations per Newton step */
  double residual_relative_noise;    /* [jacobian.residual_relative_noise] 0 = machine epsilon */
  int32_t anderson_depth;            /* [anderson.depth] differences kept (0 = plain fixed-point iteration) */
  double anderson_mixing;            /* [anderson.mixing] in (0, 1] */
  double
      anderson_maximum_condition_number; /* [anderson.maximum_condition_number] safeguard on the least-squares factor */
  int32_t anderson_restart_window;       /* [anderson.restart_window] iterations without progress before a restart */
} nkit_settings;

/* ---- handle ------------------------------------------------------------------ */

nkit_status nkit_solver_create(nkit_solver** solver);
/* NULL is accepted (nothing happens). */
nkit_status nkit_solver_destroy(nkit_solver* solver);

/* Distributed solves (MPI). A handle made by nkit_solver_create_distributed
 * (declared in nkit_c_distributed.h, which includes mpi.h) solves a system
 * whose vectors are split over the ranks of a communicator: every rank calls
 * every nkit function on its own handle in the same order, nkit_solve with
 * its own slice of the state (its local size, at least 1), and the callbacks
 * receive and fill that rank's slice (a residual that needs neighbours'
 * values exchanges them itself). Norms and dot products are reduced over the
 * communicator, so every rank takes the same steps and reads the same report.
 * nkit_has_distributed() returns 1 when this library was built with MPI.
 * From Fortran, pass the integer handle of the communicator (MPI_COMM_WORLD
 * from `use mpi`, or comm%MPI_VAL from `use mpi_f08`): it is converted with
 * MPI_Comm_f2c. Without MPI support the function fails with
 * NKIT_STATUS_INVALID_ARGUMENT and says so. */
int32_t nkit_has_distributed(void);
nkit_status nkit_solver_create_distributed_fortran(nkit_solver** solver, int32_t fortran_communicator);

/* The message of the last failing call in this thread ("" after a success).
 * Valid until the next nkit call in this thread. Never NULL. */
const char* nkit_last_error_message(void);
/* "major.minor.patch" */
const char* nkit_version_text(void);

/* ---- callbacks (NULL function clears) ------------------------------------------ */

nkit_status nkit_set_residual(nkit_solver* solver, nkit_vector_function residual, void* user_data);
nkit_status nkit_set_fixed_point_map(nkit_solver* solver, nkit_vector_function map, void* user_data);
/* For the two Newton–Krylov methods (Anderson has no linear solve and ignores it).
 * setup may be NULL (the preconditioner needs no rebuild); apply NULL clears both. */
nkit_status nkit_set_preconditioner(nkit_solver* solver, nkit_preconditioner_setup_function setup,
                                    nkit_preconditioner_apply_function apply, void* user_data);
nkit_status nkit_set_monitor(nkit_solver* solver, nkit_monitor_function monitor, void* user_data);
/* lower <= u <= upper for every later solve (±HUGE_VAL where unbounded); the
 * residual or map is never evaluated outside. lower = upper = NULL clears. */
nkit_status nkit_set_bounds(nkit_solver* solver, const double* lower, const double* upper, int64_t size);

/* ---- settings ---------------------------------------------------------------------- */

nkit_status nkit_settings_defaults(nkit_settings* settings);
nkit_status nkit_get_settings(const nkit_solver* solver, nkit_settings* settings);
nkit_status nkit_configure(nkit_solver* solver, const nkit_settings* settings);

/* By name: the names of nkit_settings (in brackets there) and more:
 *   real:    negligible_step_size, stagnation_factor, forcing.constant_value,
 *            anderson.stagnation_factor, bounds.boundary_fraction
 *   integer: stagnation_window, linear_iteration_budget,
 *            preconditioner_rebuild.rebuild_every_newton_steps, anderson.stagnation_window
 *   text:    method, globalization, forcing.formula (constant, eisenstat_walker_choice_1,
 *            eisenstat_walker_choice_2), jacobian.formula (forward, central)
 * Each call checks the value at once (the whole settings are validated):
 * an unknown name, a value of the wrong kind or out of range is
 * NKIT_STATUS_INVALID_ARGUMENT and leaves the settings unchanged. */
nkit_status nkit_set_real(nkit_solver* solver, const char* name, double value);
nkit_status nkit_set_integer(nkit_solver* solver, const char* name, int64_t value);
nkit_status nkit_set_text(nkit_solver* solver, const char* name, const char* value);
nkit_status nkit_get_real(const nkit_solver* solver, const char* name, double* value);
nkit_status nkit_get_integer(const nkit_solver* solver, const char* name, int64_t* value);

/* ---- solve ---------------------------------------------------------------------------- */

/* Solves from the initial guess in state[0 .. size−1]; on return state holds
 * the solution, or (not converged) the iterate with the smallest residual
 * norm, or (error) the last accepted iterate. Later solves of the same size
 * reuse the workspace. */
nkit_status nkit_solve(nkit_solver* solver, double* state, int64_t size);

/* ---- report of the last solve ------------------------------------------------------------ */

nkit_status nkit_report_converged(const nkit_solver* solver, int32_t* converged);
/* Why the last solve stopped, identifier-style (e.g. "relative_tolerance_met"),
 * its status ("converged", "budget_spent", "cannot_proceed" or "interrupted")
 * and one sentence; "" before the first solve. Valid until the next solve. */
const char* nkit_report_stop_reason(const nkit_solver* solver);
const char* nkit_report_status(const nkit_solver* solver);
const char* nkit_report_message(const nkit_solver* solver);
/* integer: iterations, linear_iterations, residual_evaluations, jacobian_vector_products,
 *          rejected_trials, restarts, dropped_columns, workspace_bytes, history_length
 * real:    initial_residual_norm, final_residual_norm, wall_seconds, median_residual_seconds,
 *          work_units */
nkit_status nkit_report_integer(const nkit_solver* solver, const char* name, int64_t* value);
nkit_status nkit_report_real(const nkit_solver* solver, const char* name, double* value);
/* index 0 .. history_length − 1 */
nkit_status nkit_report_iteration(const nkit_solver* solver, int64_t index, nkit_iteration_summary* summary);

#ifdef __cplusplus
}
#endif

#endif /* NKIT_C_H */
