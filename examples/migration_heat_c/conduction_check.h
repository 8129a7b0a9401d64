/* The check the migrated heat program runs after the solve: the residual of
 * the conduction equations themselves (not of the fixed-point map),
 *   R_P = sum over faces of k_f (T_P - T_Q) - q h^2,   ||R(0)|| = q/n,
 * with the discretisation of heat_picard.c (k = 1 + T^2, face k the mean,
 * wall faces at distance h/2, ghost cells at T = 0). */
#ifndef NKIT_EXAMPLES_CONDUCTION_CHECK_H
#define NKIT_EXAMPLES_CONDUCTION_CHECK_H

#include <math.h>

/* ||R(T)|| / ||R(0)|| for t on (n+2)^2 points (cells 1..n and a ghost ring at 0). */
static double relative_conduction_residual(const double* t, int n, double q) {
  const int s = n + 2;
  const double h = 1.0 / n;
  double squared = 0.0;
  int i, j, f;
  for (j = 1; j <= n; ++j) {
    for (i = 1; i <= n; ++i) {
      const int p = i + s * j;
      const int neighbour[4] = {p + 1, p - 1, p + s, p - s};
      const int wall[4] = {i == n, i == 1, j == n, j == 1};
      double r = -q * h * h;
      for (f = 0; f < 4; ++f) {
        const int o = neighbour[f];
        const double flux = 0.5 * ((1.0 + t[p] * t[p]) + (1.0 + t[o] * t[o])) * (t[p] - t[o]);
        r += wall[f] ? 2.0 * flux : flux;
      }
      squared += r * r;
    }
  }
  return sqrt(squared) / (q / n);
}

#endif
