/* Tests of the distributed handles of the C interface (nkit_c_distributed.h),
 * written in C99 with MPI as a user would; run by ctest on 1 and 2 ranks.
 *
 * The problem is Broyden's tridiagonal system (J.J. Moré, B.S. Garbow,
 * K.E. Hillstrom, "Testing unconstrained optimization software", ACM TOMS 7
 * (1981) 17-41, problem 30): f_i = (3 - 2x_i)x_i - x_(i-1) - 2x_(i+1) + 1,
 * x_0 = x_(n+1) = 0, from x = -1. Each rank owns a contiguous slice and its
 * residual callback exchanges the two neighbour values with MPI_Sendrecv.
 *
 * Checks:
 *  - the split solve reaches the tolerance on the whole system (the global
 *    residual norm is recomputed here, independently of nkit's report);
 *  - it matches the serial solve of the same system (a serial handle on every
 *    rank) to 1e-9 and takes the same number of Newton steps: the two differ
 *    only in the order of the reduction sums (rounding), and both stop at
 *    ||R|| <= 1e-12 ||R(x0)||, where the Jacobian (diagonally dominant with
 *    margin >= 1 near the solution) keeps the distance to the root below
 *    about that residual;
 *  - every rank reads the same report (Newton steps, residual evaluations);
 *  - Anderson acceleration on a distributed contraction map agrees likewise;
 *  - a Fortran communicator handle (MPI_Comm_c2f) gives the same solve;
 *  - MPI_COMM_NULL is refused with a message.
 * Exits 1 on a failed check (on any rank). */
#include <math.h>
#include <mpi.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "c_test_checks.h"
#include "nkit_c_distributed.h"

int failures = 0;

enum { global_size = 200 };

/* One rank's part of the system: rows [first, first + count) of global_size. */
typedef struct {
  MPI_Comm communicator;
  int rank, ranks;
  int64_t first, count, total;
} slice;

/* x_(first-1) and x_(first+count) from the neighbours (0 at the walls). */
static void neighbour_values(const slice* s, const double* x, int64_t n, double* left, double* right) {
  const int lower = s->rank > 0 ? s->rank - 1 : MPI_PROC_NULL;
  const int upper = s->rank + 1 < s->ranks ? s->rank + 1 : MPI_PROC_NULL;
  *left = 0.0;
  *right = 0.0;
  if (s->communicator == MPI_COMM_NULL) return; /* the serial handle: the whole system here */
  MPI_Sendrecv(&x[n - 1], 1, MPI_DOUBLE, upper, 1, left, 1, MPI_DOUBLE, lower, 1, s->communicator, MPI_STATUS_IGNORE);
  MPI_Sendrecv(&x[0], 1, MPI_DOUBLE, lower, 2, right, 1, MPI_DOUBLE, upper, 2, s->communicator, MPI_STATUS_IGNORE);
}

static int broyden_tridiagonal(const double* x, double* f, int64_t n, void* user) {
  const slice* s = (const slice*)user;
  double left, right;
  int64_t i;
  if (n != s->count) return 1;
  neighbour_values(s, x, n, &left, &right);
  for (i = 0; i < n; ++i) {
    const double before = i > 0 ? x[i - 1] : left;
    const double after = i + 1 < n ? x[i + 1] : right;
    f[i] = (3.0 - 2.0 * x[i]) * x[i] - before - 2.0 * after + 1.0;
  }
  return 0;
}

/* A contraction (Lipschitz constant <= 0.5 + 0.1 = 0.6 in the max norm):
 * g_i = 0.25 (x_(i-1) + x_(i+1)) + 0.1 sin(x_i) + 1 (invented for the test). */
static int contraction_map(const double* x, double* g, int64_t n, void* user) {
  const slice* s = (const slice*)user;
  double left, right;
  int64_t i;
  if (n != s->count) return 1;
  neighbour_values(s, x, n, &left, &right);
  for (i = 0; i < n; ++i) {
    const double before = i > 0 ? x[i - 1] : left;
    const double after = i + 1 < n ? x[i + 1] : right;
    g[i] = 0.25 * (before + after) + 0.1 * sin(x[i]) + 1.0;
  }
  return 0;
}

typedef struct {
  int64_t steps, evaluations;
  int converged;
} outcome;

static outcome solve(nkit_solver* solver, const char* method, slice* s, double* x) {
  outcome result = {0, 0, 0};
  int32_t converged = 0;
  int64_t i;
  for (i = 0; i < s->count; ++i) x[i] = strcmp(method, "anderson") == 0 ? 0.0 : -1.0;
  CHECK_STATUS(nkit_set_text(solver, "method", method), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_set_real(solver, "relative_tolerance", 1e-12), NKIT_STATUS_SUCCESS);
  if (strcmp(method, "anderson") == 0) {
    CHECK_STATUS(nkit_set_fixed_point_map(solver, contraction_map, s), NKIT_STATUS_SUCCESS);
  } else {
    CHECK_STATUS(nkit_set_residual(solver, broyden_tridiagonal, s), NKIT_STATUS_SUCCESS);
  }
  CHECK_STATUS(nkit_solve(solver, x, s->count), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_converged(solver, &converged), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_integer(solver, "iterations", &result.steps), NKIT_STATUS_SUCCESS);
  CHECK_STATUS(nkit_report_integer(solver, "residual_evaluations", &result.evaluations), NKIT_STATUS_SUCCESS);
  result.converged = converged;
  return result;
}

/* max_i |split_i - serial_(first+i)| over all ranks. */
static double largest_difference(const slice* s, const double* split, const double* serial) {
  double local = 0.0, global = 0.0;
  int64_t i;
  for (i = 0; i < s->count; ++i) {
    const double d = fabs(split[i] - serial[s->first + i]);
    if (d > local) local = d;
  }
  MPI_Allreduce(&local, &global, 1, MPI_DOUBLE, MPI_MAX, s->communicator);
  return global;
}

/* The same integer on every rank? */
static int same_on_every_rank(MPI_Comm communicator, int64_t value) {
  long long local = (long long)value, smallest = 0, largest = 0;
  MPI_Allreduce(&local, &smallest, 1, MPI_LONG_LONG, MPI_MIN, communicator);
  MPI_Allreduce(&local, &largest, 1, MPI_LONG_LONG, MPI_MAX, communicator);
  return smallest == largest;
}

static void compare_with_serial(const char* method, int use_fortran_handle, slice* split) {
  slice whole = {MPI_COMM_NULL, 0, 1, 0, global_size, global_size};
  double serial_x[global_size], split_x[global_size], f[global_size];
  nkit_solver* serial = NULL;
  nkit_solver* distributed = NULL;
  outcome serial_outcome, split_outcome;
  double local_square = 0.0, global_square = 0.0;
  int64_t i;

  CHECK_STATUS(nkit_solver_create(&serial), NKIT_STATUS_SUCCESS);
  serial_outcome = solve(serial, method, &whole, serial_x);
  CHECK(serial_outcome.converged == 1);

  if (use_fortran_handle) {
    CHECK_STATUS(nkit_solver_create_distributed_fortran(&distributed, (int32_t)MPI_Comm_c2f(split->communicator)),
                 NKIT_STATUS_SUCCESS);
  } else {
    CHECK_STATUS(nkit_solver_create_distributed(&distributed, split->communicator), NKIT_STATUS_SUCCESS);
  }
  split_outcome = solve(distributed, method, split, split_x);
  CHECK(split_outcome.converged == 1);
  CHECK(split_outcome.steps == serial_outcome.steps);
  CHECK(same_on_every_rank(split->communicator, split_outcome.steps));
  CHECK(same_on_every_rank(split->communicator, split_outcome.evaluations));
  CHECK(largest_difference(split, split_x, serial_x) <= 1e-9);

  /* The whole system's residual at the split solution, recomputed here. */
  if (strcmp(method, "anderson") == 0) {
    contraction_map(split_x, f, split->count, split);
    for (i = 0; i < split->count; ++i) f[i] -= split_x[i];
  } else {
    broyden_tridiagonal(split_x, f, split->count, split);
  }
  for (i = 0; i < split->count; ++i) local_square += f[i] * f[i];
  MPI_Allreduce(&local_square, &global_square, 1, MPI_DOUBLE, MPI_SUM, split->communicator);
  CHECK(sqrt(global_square) <= 1e-10);

  if (split->rank == 0) {
    printf("%-14s %s handle: %lld steps (serial %lld), %lld evaluations, max |split - serial| = %.2e\n", method,
           use_fortran_handle ? "Fortran" : "C", (long long)split_outcome.steps, (long long)serial_outcome.steps,
           (long long)split_outcome.evaluations, largest_difference(split, split_x, serial_x));
  } else {
    largest_difference(split, split_x, serial_x); /* collective: every rank takes part */
  }
  nkit_solver_destroy(serial);
  nkit_solver_destroy(distributed);
}

int main(int argc, char** argv) {
  slice split;
  nkit_solver* solver = NULL;
  int any_failures = 0;
  MPI_Init(&argc, &argv);
  split.communicator = MPI_COMM_WORLD;
  MPI_Comm_rank(MPI_COMM_WORLD, &split.rank);
  MPI_Comm_size(MPI_COMM_WORLD, &split.ranks);
  split.total = global_size;
  split.first = global_size * split.rank / split.ranks;
  split.count = global_size * (split.rank + 1) / split.ranks - split.first;

  CHECK(nkit_has_distributed() == 1);
  compare_with_serial("newton_krylov", 0, &split);
  compare_with_serial("newton_krylov", 1, &split);
  compare_with_serial("anderson", 0, &split);

  CHECK_STATUS(nkit_solver_create_distributed(&solver, MPI_COMM_NULL), NKIT_STATUS_INVALID_ARGUMENT);
  CHECK(strstr(nkit_last_error_message(), "MPI_COMM_NULL") != NULL);
  CHECK(solver == NULL);

  MPI_Allreduce(&failures, &any_failures, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
  MPI_Finalize();
  if (any_failures != 0) {
    fprintf(stderr, "distributed C interface: %d failed checks on this rank\n", failures);
    return 1;
  }
  return 0;
}
