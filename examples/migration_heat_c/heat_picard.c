/* BEFORE: a legacy-style 2-D heat code in C with a hand-rolled Picard loop
 * (the starting point of the C migration in docs/migration.md; its nkit
 * version is heat_nkit.c, a small diff away).
 *
 * Steady nonlinear conduction -div(k(T) grad T) = q on the unit square,
 * k(T) = 1 + T^2, q = 10, T = 0 on the walls: the project's model problem
 * (cell-centred finite volumes on n x n cells, face conductivity the mean of
 * the two cell values, wall faces at distance h/2). Each Picard pass freezes
 * k at the current T and relaxes the linear problem by a fixed number of SOR
 * sweeps; the loop stops when a pass changes T by less than the tolerance.
 *
 *   heat_picard_c [--cells=64] [--help]    (--cells: cells per side) */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define SWEEPS 4
#define MAX_PASSES 5000
static const double q = 10.0, omega = 1.7, tolerance = 1e-10;

static const char usage[] =
    "usage: heat_picard_c [--cells=64] [--help]\n"
    "  --cells=N  cells per side of the unit square (default 64, at least 2)\n"
    "  --help     this text\n";

int main(int argc, char** argv) {
  int n = 64;
  int stride, i, j, pass, sweep;
  double h, change = 0.0, largest = 0.0;
  double *t, *k, *t_old;
  for (i = 1; i < argc; ++i) {
    if (strncmp(argv[i], "--cells=", 8) == 0) {
      n = atoi(argv[i] + 8);
    } else if (strcmp(argv[i], "--help") == 0) {
      fputs(usage, stdout);
      return 0;
    } else {
      fprintf(stderr, "heat_picard_c: unknown option '%s'\n%s", argv[i], usage);
      return 2;
    }
  }
  if (n < 2) {
    fprintf(stderr, "heat_picard_c: --cells must be at least 2 (got %d)\n", n);
    return 2;
  }
  stride = n + 2; /* cells 1..n plus a ghost ring at T = 0 */
  h = 1.0 / n;
  t = calloc((size_t)(stride * stride), sizeof *t);
  k = calloc((size_t)(stride * stride), sizeof *k);
  t_old = calloc((size_t)(stride * stride), sizeof *t_old);
  if (t == NULL || k == NULL || t_old == NULL) return 2;

  for (pass = 1; pass <= MAX_PASSES; ++pass) {
    memcpy(t_old, t, sizeof *t * (size_t)(stride * stride));
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
          relaxed = (east * t[p + 1] + west * t[p - 1] + north * t[p + stride] + south * t[p - stride] + q * h * h) /
                    diagonal;
          t[p] = (1.0 - omega) * t[p] + omega * relaxed;
        }
      }
    }
    /* ---- end of the pass ------------------------------------------------------------ */
    change = 0.0;
    for (i = 0; i < stride * stride; ++i) change = fmax(change, fabs(t[i] - t_old[i]));
    if (change < tolerance) break;
  }

  for (i = 0; i < stride * stride; ++i) largest = fmax(largest, t[i]);
  printf("heat_picard_c: n = %d, passes = %d, last change = %.3e, max T = %.5f\n", n, pass, change, largest);
  free(t);
  free(k);
  free(t_old);
  return change < tolerance ? 0 : 1;
}
