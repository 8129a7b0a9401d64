#ifndef NKIT_KRYLOV_RECYCLED_SUBSPACE_REFRESH_HPP
#define NKIT_KRYLOV_RECYCLED_SUBSPACE_REFRESH_HPP

/// \file krylov/recycled_subspace_refresh.hpp
/// Re-establishes the pair (U, C) of recycling GMRES (krylov/recycling_gmres.hpp)
/// for a changed operator: C = A M⁻¹ Ũ, a QR factorisation C = Q R by modified
/// Gram–Schmidt applied twice (numerically dependent columns are dropped),
/// U = Ũ R⁻¹, then unit columns again with their scaling D. Steps 3–5 of
/// Parks, de Sturler, Mackey, Johnson & Maiti, SIAM J. Sci. Comput. 28 (2006)
/// 1651–1674, Algorithm 2.1 (step numbers from memory). Allocates nothing.

#include <Eigen/Core>
#include <cmath>
#include <cstddef>
#include <utility>
#include <vector>

#include "../core/vector_space.hpp"

namespace nkit::detail {

/// On entry recycled[0..count) holds Ũ. `apply(in, out)` computes out = A M⁻¹ in.
/// On return recycled[0..kept) holds U (unit columns), images[0..kept) holds C
/// (orthonormal) with A M⁻¹ U = C diag(1/scaling), and the result is kept (0
/// when a product is not finite or nothing independent remains). `scratch`
/// must hold count vectors of the same size; `factor` and `inverse_factor` at
/// least count × count; `sources` and `targets` at least count pointers.
template <class Space, class Apply>
int refresh_recycled_subspace(const Space& space, Apply&& apply, int count,
                              std::vector<typename Space::vector_type>& recycled,
                              std::vector<typename Space::vector_type>& images,
                              std::vector<typename Space::vector_type>& scratch, Eigen::MatrixXd& factor,
                              Eigen::MatrixXd& inverse_factor, Eigen::VectorXd& scaling,
                              std::vector<const typename Space::vector_type*>& sources,
                              std::vector<typename Space::vector_type*>& targets) {
  const auto at = [](int i) { return static_cast<std::size_t>(i); };
  int kept = 0;
  factor.setZero();
  for (int c = 0; c < count; ++c) {
    auto& image = images[at(kept)];
    if (kept != c) std::swap(recycled[at(kept)], recycled[at(c)]);
    apply(recycled[at(kept)], image);
    const double original = space.norm(image);
    if (!std::isfinite(original)) return 0;
    for (int pass = 0; pass < 2; ++pass) {
      for (int q = 0; q < kept; ++q) {
        const double projection = space.dot(images[at(q)], image);
        factor(q, kept) += projection;
        space.add_scaled(-projection, images[at(q)], image);
      }
    }
    const double norm = space.norm(image);
    if (!(norm > 1e-10 * original)) {
      for (int q = 0; q < kept; ++q) factor(q, kept) = 0.0;
      continue;
    }
    space.scale(1 / norm, image);
    factor(kept, kept) = norm;
    ++kept;
  }
  // U = Ũ R⁻¹ in one pass over memory: R⁻¹ (upper triangular) by back
  // substitution, column by column.
  inverse_factor.topLeftCorner(kept, kept).setZero();
  for (int c = 0; c < kept; ++c) {
    for (int r = c; r >= 0; --r) {
      double value = r == c ? 1.0 : 0.0;
      for (int l = r + 1; l <= c; ++l) value -= factor(r, l) * inverse_factor(l, c);
      inverse_factor(r, c) = value / factor(r, r);
    }
  }
  for (int i = 0; i < kept; ++i) {
    sources[at(i)] = &recycled[at(i)];
    targets[at(i)] = &scratch[at(i)];
  }
  linear_combinations(space, sources.data(), kept, inverse_factor.data(), static_cast<int>(inverse_factor.rows()),
                      targets.data(), kept);
  for (int c = 0; c < kept; ++c) {
    std::swap(recycled[at(c)], scratch[at(c)]);
    const double norm = space.norm(recycled[at(c)]);
    space.scale(1 / norm, recycled[at(c)]);
    scaling(c) = 1 / norm;
  }
  return kept;
}

}  // namespace nkit::detail

#endif  // NKIT_KRYLOV_RECYCLED_SUBSPACE_REFRESH_HPP
