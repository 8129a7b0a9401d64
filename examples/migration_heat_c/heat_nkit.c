/* AFTER: the legacy heat code of heat_picard.c handed to nkit. The body of
 * the Picard loop moved, unchanged, into one_pass() (the fixed-point map G,
 * with the arrays in a struct passed as the user pointer); the loop itself
 * became a call to nkit_solve(). See docs/migration.md for the diff.
 *
 *   heat_nkit_c [--cells=64] [--method=anderson] [--help]
 *   (--method: anderson or newton_krylov_on_fixed_point_map) */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "conduction_check.h"
#include "nkit_c.h"

#define SWEEPS 4
static const double q = 10.0, omega = 1.7, tolerance = 1e-10;

struct heat_model {
  int n, stride;
  double h;
  double *t, *k;
};

/* G(T): one pass of the old loop. nkit hands the interior cells as a vector. */
static int one_pass(const double* input, double* output, int64_t size, void* user) {
  struct heat_model* m = user;
  const int n = m->n, stride = m->stride;
  const double h = m->h;
  double *t = m->t, *k = m->k;
  int i, j, sweep;
  if (size != (int64_t)n * n) return 1;
  for (j = 1; j <= n; ++j)
    for (i = 1; i <= n; ++i) t[i + stride * j] = input[(i - 1) + n * (j - 1)];
  /* ---- one Picard pass: freeze k, relax the linear problem ---------------- */
  for (i = 0; i < stride * stride; ++i) k[i] = 1.0 + t[i] * t[i];
  for (sweep = 0; sweep < SWEEPS; ++sweep) {
    for (j = 1; j <= n; ++j) {
      for (i = 1; i <= n; ++i) {
        const int p = i + stride * j;
        double east = 0.5 * (k[p] + k[p + 1]), west = 0.5 * (k[p] + k[p - 1]);
        double north = 0.5 * (k[p] + k[p + stride]), south = 0.5 * (k[p] + k[p - stride]);
        double diagonal, relaxed;
        if (i == n) east *= 2.0;
        if (i == 1) west *= 2.0;
        if (j == n) north *= 2.0;
        if (j == 1) south *= 2.0;
        diagonal = east + west + north + south;
        relaxed =
            (east * t[p + 1] + west * t[p - 1] + north * t[p + stride] + south * t[p - stride] + q * h * h) / diagonal;
        t[p] = (1.0 - omega) * t[p] + omega * relaxed;
      }
    }
  }
  /* ---- end of the pass ------------------------------------------------------------ */
  for (j = 1; j <= n; ++j)
    for (i = 1; i <= n; ++i) output[(i - 1) + n * (j - 1)] = t[i + stride * j];
  return 0;
}

static const char usage[] =
    "usage: heat_nkit_c [--cells=64] [--method=anderson] [--help]\n"
    "  --cells=N       cells per side of the unit square (default 64, at least 2)\n"
    "  --method=NAME   anderson or newton_krylov_on_fixed_point_map (default anderson)\n"
    "  --help          this text\n";

int main(int argc, char** argv) {
  struct heat_model m;
  const char* method = "anderson";
  nkit_solver* solver = NULL;
  double *state, largest = 0.0, relative;
  int64_t passes = 0;
  int i;
  m.n = 64;
  for (i = 1; i < argc; ++i) {
    if (strncmp(argv[i], "--cells=", 8) == 0) {
      m.n = atoi(argv[i] + 8);
    } else if (strncmp(argv[i], "--method=", 9) == 0) {
      method = argv[i] + 9;
    } else if (strcmp(argv[i], "--help") == 0) {
      fputs(usage, stdout);
      return 0;
    } else {
      fprintf(stderr, "heat_nkit_c: unknown option '%s'\n%s", argv[i], usage);
      return 2;
    }
  }
  if (m.n < 2) {
    fprintf(stderr, "heat_nkit_c: --cells must be at least 2 (got %d)\n", m.n);
    return 2;
  }
  m.stride = m.n + 2; /* cells 1..n plus a ghost ring at T = 0 */
  m.h = 1.0 / m.n;
  m.t = calloc((size_t)(m.stride * m.stride), sizeof *m.t);
  m.k = calloc((size_t)(m.stride * m.stride), sizeof *m.k);
  state = calloc((size_t)(m.n * m.n), sizeof *state);
  if (m.t == NULL || m.k == NULL || state == NULL) return 2;

  if (nkit_solver_create(&solver) != NKIT_STATUS_SUCCESS || nkit_set_text(solver, "method", method) ||
      nkit_set_fixed_point_map(solver, one_pass, &m) || nkit_set_real(solver, "absolute_tolerance", tolerance) ||
      nkit_set_real(solver, "relative_tolerance", 1e-14) || nkit_set_integer(solver, "iteration_budget", 2000) ||
      nkit_solve(solver, state, (int64_t)m.n * m.n) != NKIT_STATUS_SUCCESS) {
    fprintf(stderr, "heat_nkit_c: %s\n", nkit_last_error_message());
    return 2;
  }
  nkit_report_integer(solver, "residual_evaluations", &passes);
  for (i = 0; i < m.n * m.n; ++i) {
    m.t[(i % m.n + 1) + m.stride * (i / m.n + 1)] = state[i]; /* the solution into the grid */
    largest = fmax(largest, state[i]);
  }
  relative = relative_conduction_residual(m.t, m.n, q);
  printf("heat_nkit_c: %s: %s, n = %d, passes = %lld, |R|/|R0| = %.3e, max T = %.5f\n", method,
         nkit_report_stop_reason(solver), m.n, (long long)passes, relative, largest);
  nkit_solver_destroy(solver);
  free(m.t);
  free(m.k);
  free(state);
  /* The conduction residual must be small too (see heat_nkit.f90 for the margin). */
  return relative < 1e-6 ? 0 : 1;
}
