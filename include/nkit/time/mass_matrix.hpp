#ifndef NKIT_TIME_MASS_MATRIX_HPP
#define NKIT_TIME_MASS_MATRIX_HPP

/// \file time/mass_matrix.hpp
/// The matrix M of M du/dt = f(t, u): the identity, a diagonal (lumped mass,
/// cell volumes; zero entries mark algebraic rows of an index-1 DAE), or a
/// user operator v ↦ M v (optionally also assembled, for preconditioners).

#include <cmath>
#include <functional>
#include <stdexcept>
#include <string>
#include <utility>

#include "../core/preconditioner.hpp"
#include "../detail/checks.hpp"

namespace nkit {

template <class Vector>
class mass_matrix {
 public:
  enum class kind { identity, diagonal, linear_operator };

  /// M = I (the default).
  mass_matrix() = default;

  /// M = diag(entries). Entries must be finite and >= 0; a zero entry makes
  /// its row algebraic (0 = f_i(t, u)). Throws std::invalid_argument otherwise.
  static mass_matrix diagonal(Vector entries) {
    for (Eigen::Index i = 0; i < entries.size(); ++i) {
      if (!(std::isfinite(entries(i)) && entries(i) >= 0.0)) {
        throw std::invalid_argument("nkit: mass_matrix::diagonal entry " + std::to_string(i) +
                                    " must be finite and >= 0 (got " + detail::number_text(entries(i)) + ")");
      }
    }
    mass_matrix m;
    m.m_kind = kind::diagonal;
    m.m_diagonal = std::move(entries);
    return m;
  }

  /// M given by apply(v, out): out = M v (out arrives sized like v; no
  /// allocation expected). `assembled`, when non-empty, is M as a sparse
  /// matrix; it is added to the stage Jacobian handed to preconditioners.
  static mass_matrix from_operator(std::function<void(const Vector&, Vector&)> apply, sparse_matrix assembled = {}) {
    if (!apply) throw std::invalid_argument("nkit: mass_matrix::from_operator needs a callable (got an empty one)");
    mass_matrix m;
    m.m_kind = kind::linear_operator;
    m.m_apply = std::move(apply);
    m.m_assembled = std::move(assembled);
    return m;
  }

  kind type() const { return m_kind; }
  const Vector& diagonal_entries() const { return m_diagonal; }
  const sparse_matrix& assembled() const { return m_assembled; }
  /// True when M is the identity or a diagonal without zero entries: then
  /// du/dt = M⁻¹ f is available without a solve.
  bool invertible_diagonal() const {
    if (m_kind == kind::identity) return true;
    if (m_kind != kind::diagonal) return false;
    for (Eigen::Index i = 0; i < m_diagonal.size(); ++i) {
      if (m_diagonal(i) == 0.0) return false;
    }
    return true;
  }

  /// out = M v.
  void apply(const Vector& v, Vector& out) const {
    switch (m_kind) {
      case kind::identity:
        out = v;
        break;
      case kind::diagonal:
        out = m_diagonal.cwiseProduct(v);
        break;
      case kind::linear_operator:
        m_apply(v, out);
        break;
    }
  }

  /// Adds factor · M to an assembled matrix (for the identity and diagonal
  /// kinds the diagonal entries should already be stored; otherwise they are inserted).
  void add_to(sparse_matrix& matrix, double factor = 1.0) const {
    switch (m_kind) {
      case kind::identity:
        for (Eigen::Index i = 0; i < matrix.rows(); ++i) matrix.coeffRef(i, i) += factor;
        break;
      case kind::diagonal:
        for (Eigen::Index i = 0; i < matrix.rows(); ++i) matrix.coeffRef(i, i) += factor * m_diagonal(i);
        break;
      case kind::linear_operator:
        if (m_assembled.rows() == 0) {
          throw std::logic_error(
              "nkit: a preconditioner asked for the assembled stage Jacobian, but the mass operator was given "
              "without its assembled matrix (mass_matrix::from_operator(apply, assembled))");
        }
        matrix += factor * m_assembled;
        break;
    }
  }

  /// Throws std::invalid_argument when a diagonal does not match the state length.
  void check_size(Eigen::Index size) const {
    if (m_kind == kind::diagonal && m_diagonal.size() != size) {
      throw std::invalid_argument("nkit: mass_matrix diagonal has " + std::to_string(m_diagonal.size()) +
                                  " entries but the state has " + std::to_string(size));
    }
  }

 private:
  kind m_kind = kind::identity;
  Vector m_diagonal;
  std::function<void(const Vector&, Vector&)> m_apply;
  sparse_matrix m_assembled;
};

}  // namespace nkit

#endif  // NKIT_TIME_MASS_MATRIX_HPP
