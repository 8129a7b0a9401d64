#ifndef NKIT_KRYLOV_HARMONIC_RITZ_VECTORS_HPP
#define NKIT_KRYLOV_HARMONIC_RITZ_VECTORS_HPP

/// \file krylov/harmonic_ritz_vectors.hpp
/// Harmonic Ritz vectors of a restart cycle: the small dense eigenproblem that
/// chooses the subspace a recycling GMRES keeps (internal to
/// krylov/recycling_gmres.hpp).
///
/// A cycle of recycling GMRES builds bases V̂ (n columns, the search space)
/// and Ŵ (n + 1 orthonormal columns) with A V̂ = Ŵ Ḡ, Ḡ of size (n + 1) × n.
/// The harmonic Ritz pairs (θ, V̂ z) with respect to range(A V̂) satisfy
/// A V̂ z − θ V̂ z ⟂ range(A V̂), i.e. the generalized eigenproblem
///     Ḡᵀ Ḡ z = θ Ḡᵀ (Ŵᵀ V̂) z
/// (M.L. Parks, E. de Sturler, G. Mackey, D.D. Johnson & S. Maiti, "Recycling
/// Krylov subspaces for sequences of linear systems", SIAM J. Sci. Comput. 28
/// (2006) 1651–1674, Algorithm 2.1 step 30, step numbering from memory; in the
/// first plain GMRES cycle Ŵᵀ V̂ = [I; 0] and the problem reduces to
/// (H_m + h²_{m+1,m} H_m⁻ᵀ e_m e_mᵀ) z = θ z, their step 14, R.B. Morgan,
/// "GMRES with deflated restarting", SIAM J. Sci. Comput. 24 (2002) 20–37).
/// The vectors kept are those of the k harmonic Ritz values of smallest
/// magnitude: they approximate the eigenvectors that slow restarted GMRES down.
///
/// Solved here through the triangular factor R of the QR of Ḡ (the caller's
/// Givens rotations), Ḡᵀ Ḡ = Rᵀ R, so Ḡᵀ Ḡ is never formed and the condition
/// number is not squared. R is nonsingular while Arnoldi has not broken down;
/// a pivot |r_jj| <= 10³ ε ‖Ḡ e_j‖ (each compared with its own column, common
/// practice) counts as singular and the step reports failure. With L = Rᵀ,
/// μ = 1/θ and z = L⁻ᵀ w,
///     L⁻¹ Ḡᵀ (Ŵᵀ V̂) L⁻ᵀ w = μ w,
/// a standard real eigenproblem whose largest |μ| are the smallest |θ|; an
/// infinite θ (singular right-hand side matrix) becomes μ = 0 and is never
/// chosen (common practice for pencils with a definite side). A complex pair
/// contributes the real and imaginary parts of its eigenvector, a real basis
/// of the same invariant plane (common practice in real arithmetic).
///
/// Memory: all dense workspace is sized once by allocate(maximum_columns); the
/// eigenproblem is always solved at that size (the n × n matrix padded with a
/// zero block, whose eigenvalues μ = 0 are never chosen), so cycles of
/// different lengths allocate nothing.

#include <Eigen/Core>
#include <Eigen/Eigenvalues>
#include <algorithm>
#include <cmath>
#include <complex>
#include <limits>

namespace nkit::detail {

class harmonic_ritz_vectors {
 public:
  /// Sizes the workspace for search spaces of up to `maximum_columns` vectors
  /// keeping up to `maximum_kept` of them. Allocates only when the sizes change.
  void allocate(int maximum_columns, int maximum_kept) {
    const Eigen::Index n = maximum_columns;
    if (m_gram.rows() != n) {
      m_gram.resize(n, n);
      m_pencil.resize(n, n);
      m_padded.resize(n, n);
      m_eigen = Eigen::EigenSolver<Eigen::MatrixXd>(n);
      m_chosen.resize(n);
    }
    if (m_vectors.rows() != n || m_vectors.cols() != maximum_kept) m_vectors.resize(n, maximum_kept);
  }

  /// Computes up to `wanted` harmonic Ritz vectors of the cycle described by
  /// `extended` = Ḡ ((n + 1) × n, unrotated), `triangular` = R (upper
  /// triangular n × n leading block, Ḡ = Q [R; 0] with Q orthogonal) and
  /// `cross` = Ŵᵀ V̂ ((n + 1) × n); returns how many it found (0 when R is
  /// numerically singular or the eigenvalue iteration failed). Their
  /// coordinates in V̂ are the first returned columns of vectors(),
  /// orthonormalised (the span is what matters).
  template <class Extended, class Triangular, class Cross>
  int compute(const Extended& extended, const Triangular& triangular, const Cross& cross, int n, int wanted) {
    const Eigen::Index size = m_gram.rows();
    if (n < 1 || wanted < 1 || n > size) return 0;
    if (wanted > n) wanted = n;
    // L = Rᵀ (lower triangle of m_gram) and Ḡᵀ (Ŵᵀ V̂), by plain loops (no temporaries).
    for (int j = 0; j < n; ++j) {
      double column_norm_squared = 0.0;
      for (int l = 0; l <= n; ++l) column_norm_squared += extended(l, j) * extended(l, j);
      const double pivot = triangular(j, j);
      if (!(std::abs(pivot) > 1e3 * std::numeric_limits<double>::epsilon() * std::sqrt(column_norm_squared)) ||
          !std::isfinite(pivot)) {
        return 0;
      }
      for (int i = 0; i < n; ++i) {
        double pencil = 0.0;
        for (int l = 0; l <= n; ++l) pencil += extended(l, i) * cross(l, j);
        m_pencil(i, j) = pencil;
        m_gram(i, j) = i >= j ? triangular(j, i) : 0.0;
      }
    }
    // S = L⁻¹ F L⁻ᵀ with F = m_pencil: first X = L⁻¹ F (columns), then S = X L⁻ᵀ (rows).
    for (int c = 0; c < n; ++c) forward_substitute_column(c, n);
    m_padded.setZero();
    for (int r = 0; r < n; ++r) {
      for (int c = 0; c < n; ++c) {
        double value = m_pencil(r, c);
        for (int l = 0; l < c; ++l) value -= m_padded(r, l) * m_gram(c, l);
        m_padded(r, c) = value / m_gram(c, c);
      }
    }
    m_eigen.compute(m_padded, true);
    if (m_eigen.info() != Eigen::Success) return 0;
    const auto& values = m_eigen.eigenvalues();
    // Real pseudo-eigenvectors (no allocation): a pair λ, λ̄ with Im λ > 0 at
    // columns j, j + 1 has eigenvector column j + i · column j + 1.
    const Eigen::MatrixXd& vectors = m_eigen.pseudoEigenvectors();
    m_chosen.setZero();
    double largest = 0.0;
    for (Eigen::Index i = 0; i < size; ++i) largest = std::max(largest, std::abs(values(i)));
    int found = 0;
    while (found < wanted) {
      Eigen::Index best = -1;
      double best_magnitude = 1e3 * std::numeric_limits<double>::epsilon() * largest;
      for (Eigen::Index i = 0; i < size; ++i) {
        if (m_chosen(i) == 0 && std::abs(values(i)) > best_magnitude) {
          best = i;
          best_magnitude = std::abs(values(i));
        }
      }
      if (best < 0) break;
      const bool complex_pair = values(best).imag() != 0.0;
      const Eigen::Index column = complex_pair && values(best).imag() < 0.0 ? best - 1 : best;
      m_chosen(column) = 1;
      if (complex_pair) m_chosen(column + 1) = 1;
      for (int part = 0; part < (complex_pair ? 2 : 1) && found < wanted; ++part) {
        for (int r = 0; r < n; ++r) m_vectors(r, found) = vectors(r, column + part);
        back_substitute_column(found, n);  // z = L⁻ᵀ w
        ++found;
      }
    }
    return orthonormalize_columns(found, n);
  }

  /// Column j of the result: coordinates of a kept vector in V̂ (n entries used).
  const Eigen::MatrixXd& vectors() const { return m_vectors; }

 private:
  void forward_substitute_column(int c, int n) {  // m_pencil(:, c) <- L⁻¹ m_pencil(:, c)
    for (int r = 0; r < n; ++r) {
      double value = m_pencil(r, c);
      for (int l = 0; l < r; ++l) value -= m_gram(r, l) * m_pencil(l, c);
      m_pencil(r, c) = value / m_gram(r, r);
    }
  }
  void back_substitute_column(int c, int n) {  // m_vectors(:, c) <- L⁻ᵀ m_vectors(:, c)
    for (int r = n - 1; r >= 0; --r) {
      double value = m_vectors(r, c);
      for (int l = r + 1; l < n; ++l) value -= m_gram(l, r) * m_vectors(l, c);
      m_vectors(r, c) = value / m_gram(r, r);
    }
  }
  /// Modified Gram–Schmidt applied twice; drops columns that are (numerically)
  /// combinations of earlier ones. Returns how many remain.
  int orthonormalize_columns(int count, int n) {
    int kept = 0;
    for (int c = 0; c < count; ++c) {
      double original = 0.0;
      for (int r = 0; r < n; ++r) original += m_vectors(r, c) * m_vectors(r, c);
      original = std::sqrt(original);
      for (int pass = 0; pass < 2; ++pass) {
        for (int q = 0; q < kept; ++q) {
          double projection = 0.0;
          for (int r = 0; r < n; ++r) projection += m_vectors(r, q) * m_vectors(r, c);
          for (int r = 0; r < n; ++r) m_vectors(r, c) -= projection * m_vectors(r, q);
        }
      }
      double norm = 0.0;
      for (int r = 0; r < n; ++r) norm += m_vectors(r, c) * m_vectors(r, c);
      norm = std::sqrt(norm);
      if (!(norm > 1e-10 * original) || !std::isfinite(norm)) continue;
      for (int r = 0; r < n; ++r) m_vectors(r, kept) = m_vectors(r, c) / norm;
      ++kept;
    }
    return kept;
  }

  Eigen::MatrixXd m_gram;     ///< L = Rᵀ (lower triangle), Ḡᵀ Ḡ = L Lᵀ
  Eigen::MatrixXd m_pencil;   ///< Ḡᵀ Ŵᵀ V̂, then L⁻¹ of it
  Eigen::MatrixXd m_padded;   ///< L⁻¹ Ḡᵀ Ŵᵀ V̂ L⁻ᵀ in the top-left corner, zero elsewhere
  Eigen::MatrixXd m_vectors;  ///< kept coordinates
  Eigen::VectorXi m_chosen;
  Eigen::EigenSolver<Eigen::MatrixXd> m_eigen;
};

}  // namespace nkit::detail

#endif  // NKIT_KRYLOV_HARMONIC_RITZ_VECTORS_HPP
