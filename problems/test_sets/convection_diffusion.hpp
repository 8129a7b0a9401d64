// Upwinded 2D convection–diffusion test matrices for the preconditioner tests.
//   −ε Δu + b·∇u = f on the unit square, u = 0 on the boundary,
// n × n interior nodes, h = 1/(n+1), five-point central differences for
// diffusion and first-order upwind differences for convection (the standard
// model problem of H.C. Elman, D.J. Silvester & A.J. Wathen, "Finite Elements
// and Fast Iterative Solvers", Oxford 2005, ch. 3, here in finite-difference
// form: common practice). Péclet number Pe = |b|·L/ε with L = 1; the wind is
// b = (cos 30°, sin 30°). Rows are multiplied by h².
#ifndef NKIT_PROBLEMS_TEST_SETS_CONVECTION_DIFFUSION_HPP
#define NKIT_PROBLEMS_TEST_SETS_CONVECTION_DIFFUSION_HPP

#include <Eigen/SparseCore>
#include <cmath>
#include <nkit/core/preconditioner.hpp>
#include <vector>

namespace nkit_problems {

/// One-unknown-per-node matrix for Péclet number `peclet`.
inline nkit::sparse_matrix convection_diffusion_matrix(int n, double peclet) {
  const double h = 1.0 / (n + 1);
  const double pi = 3.14159265358979323846;
  const double wind_x = std::cos(pi / 6), wind_y = std::sin(pi / 6);
  const double epsilon = (peclet > 0 ? h / (2 * peclet) : 1.0);
  std::vector<Eigen::Triplet<double, int>> entries;
  entries.reserve(static_cast<std::size_t>(5 * n * n));
  for (int j = 0; j < n; ++j) {
    for (int i = 0; i < n; ++i) {
      const int p = i + n * j;
      // Upwind (wind components are positive): west and south carry the inflow.
      const double west = -epsilon - wind_x * h, east = -epsilon;
      const double south = -epsilon - wind_y * h, north = -epsilon;
      entries.emplace_back(p, p, 4 * epsilon + (wind_x + wind_y) * h);
      if (i > 0) entries.emplace_back(p, p - 1, west);
      if (i + 1 < n) entries.emplace_back(p, p + 1, east);
      if (j > 0) entries.emplace_back(p, p - n, south);
      if (j + 1 < n) entries.emplace_back(p, p + n, north);
    }
  }
  nkit::sparse_matrix matrix(n * n, n * n);
  matrix.setFromTriplets(entries.begin(), entries.end());
  return matrix;
}

/// Two unknowns per node (u, v), each convected and diffused as above and
/// coupled inside the node by a stiff linear reaction
///   κ·[1 −0.9; −0.9 1] (times h², like every row),
/// whose off-diagonal coupling point Jacobi ignores and block Jacobi keeps.
/// Invented coefficients (demo data, not from a source). Unknown 2p + c.
inline nkit::sparse_matrix coupled_convection_diffusion_matrix(int n, double peclet, double reaction) {
  const nkit::sparse_matrix single = convection_diffusion_matrix(n, peclet);
  const double h = 1.0 / (n + 1);
  std::vector<Eigen::Triplet<double, int>> entries;
  entries.reserve(static_cast<std::size_t>(2 * single.nonZeros() + 4 * n * n));
  for (int p = 0; p < n * n; ++p) {
    for (nkit::sparse_matrix::InnerIterator entry(single, p); entry; ++entry) {
      for (int c = 0; c < 2; ++c) entries.emplace_back(2 * p + c, 2 * static_cast<int>(entry.col()) + c, entry.value());
    }
    const double k = reaction * h * h;
    entries.emplace_back(2 * p, 2 * p, k);
    entries.emplace_back(2 * p, 2 * p + 1, -0.9 * k);
    entries.emplace_back(2 * p + 1, 2 * p, -0.9 * k);
    entries.emplace_back(2 * p + 1, 2 * p + 1, k);
  }
  nkit::sparse_matrix matrix(2 * n * n, 2 * n * n);
  matrix.setFromTriplets(entries.begin(), entries.end());
  return matrix;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_TEST_SETS_CONVECTION_DIFFUSION_HPP
