#ifndef NKIT_JACOBIAN_SPARSE_JACOBIAN_HPP
#define NKIT_JACOBIAN_SPARSE_JACOBIAN_HPP

/// \file jacobian/sparse_jacobian.hpp
/// Assembled sparse Jacobians for preconditioners. A problem offers one in
/// exactly one of two ways, detected at compile time by the Newton driver:
///
///  1. the user's callback, a member
///       void assemble_jacobian(const vector_type& u, nkit::sparse_matrix& jacobian)
///     (compressed rows), or the same with
///     Eigen::SparseMatrix<double, Eigen::ColMajor, int>, which the driver
///     converts to compressed rows after each call. The matrix handed in is
///     the one of the previous call (so values can be rewritten in place),
///     or an empty one: on the first call, and after a preconditioner let
///     the driver free it (preconditioner_context::release_assembled_jacobian).
///     Check its size and pattern; never assume it is still allocated;
///  2. a sparsity pattern, a member
///       const nkit::sparsity_pattern& jacobian_pattern() const
///     (with_jacobian_pattern() adds it to any residual): the driver then
///     assembles R'(u) by colored forward differences, one residual
///     evaluation per color, through its own counted residual evaluations.
///     These evaluations count against the residual-evaluation budget and
///     their time is reported as jacobian_assembly.
/// When a problem has both, the user's callback wins.
///
/// Colored forward differences (Curtis, Powell & Reid 1974; Coleman & Moré
/// 1983; see column_coloring.hpp): for color c with columns C,
///   d = Σ_{j∈C} h_j e_j,  J(i, j) = (R(u + d)_i − R(u)_i) / h_j  for j ∈ C,
/// exact in the sense of forward differences because no two columns of C
/// share a row. Step per column: h_j = √η · max(|u_j|, 1) · sign(u_j)
/// (J.E. Dennis & R.B. Schnabel, Numerical Methods for Unconstrained
/// Optimization and Nonlinear Equations, SIAM 1996, §5.4 — section not checked; the
/// typical size of u_j is taken as 1), η the residual's relative noise
/// (jacobian_settings::residual_relative_noise, machine epsilon when 0); the
/// step actually used is (u_j + h_j) − u_j, which removes the representation
/// error of u_j + h_j (common practice). Entry error: truncation ≤
/// ½ h_j |∂²R_i/∂u_j²|, rounding ≈ 2 η |R_i| / h_j, both O(√η).

#include <Eigen/SparseCore>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>
#include <vector>

#include "../core/preconditioner.hpp"
#include "column_coloring.hpp"
#include "finite_difference_jacobian.hpp"
#include "sparsity_pattern.hpp"

namespace nkit {

/// Column-major sparse matrix type accepted from assemble_jacobian (converted).
using column_major_sparse_matrix = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;

namespace detail {
template <class Problem, class = void>
struct has_jacobian_pattern : std::false_type {};
template <class Problem>
struct has_jacobian_pattern<Problem, std::void_t<decltype(static_cast<const sparsity_pattern&>(
                                         std::declval<const Problem&>().jacobian_pattern()))>> : std::true_type {};

template <class Problem, class Matrix, class Vector, class = void>
struct assembles_into : std::false_type {};
template <class Problem, class Matrix, class Vector>
struct assembles_into<Problem, Matrix, Vector,
                      std::void_t<decltype(std::declval<Problem&>().assemble_jacobian(
                          std::declval<const Vector&>(), std::declval<Matrix&>()))>> : std::true_type {};
}  // namespace detail

/// True when the problem assembles into nkit::sparse_matrix (compressed rows).
template <class Problem, class Vector>
inline constexpr bool assembles_row_major_jacobian_v =
    detail::assembles_into<std::remove_reference_t<Problem>, sparse_matrix, Vector>::value;
/// True when the problem assembles only into a column-major matrix (converted by nkit).
template <class Problem, class Vector>
inline constexpr bool assembles_column_major_jacobian_v =
    !assembles_row_major_jacobian_v<Problem, Vector> &&
    detail::assembles_into<std::remove_reference_t<Problem>, column_major_sparse_matrix, Vector>::value;
/// True when the problem offers jacobian_pattern().
template <class Problem>
inline constexpr bool has_jacobian_pattern_v = detail::has_jacobian_pattern<std::remove_reference_t<Problem>>::value;
/// True when nkit can give this problem's preconditioners an assembled Jacobian.
template <class Problem, class Vector>
inline constexpr bool can_assemble_jacobian_v =
    assembles_row_major_jacobian_v<Problem, Vector> || assembles_column_major_jacobian_v<Problem, Vector> ||
    has_jacobian_pattern_v<Problem>;

/// Sparse Jacobian by colored forward differences. The coloring and the
/// symbolic structure (which stored entry each difference fills) are computed
/// by prepare() and kept while the pattern stays equal; assemble() refreshes
/// the values only. Workspace: two vectors of length n and the steps,
/// allocated on the first assembly; later assemblies of the same pattern
/// allocate nothing.
/// Default vetting of perturbed states: every state is acceptable.
struct accept_every_state {
  bool operator()(const Eigen::VectorXd& /*state*/) const { return true; }
};

class colored_difference_jacobian {
 public:
  explicit colored_difference_jacobian(jacobian_settings settings = {}) { configure(settings); }

  /// Uses residual_relative_noise; the formula is always forward (one
  /// evaluation per color).
  void configure(const jacobian_settings& settings) {
    settings.validate();
    m_noise = settings.residual_relative_noise > 0.0 ? settings.residual_relative_noise
                                                     : std::numeric_limits<double>::epsilon();
  }

  /// Colors the columns and builds the entry map unless `pattern` equals
  /// the one already prepared. Returns true when it (re)built them.
  bool prepare(const sparsity_pattern& pattern) {
    if (m_prepared && pattern == m_pattern) return false;
    pattern.validate();
    if (pattern.rows != pattern.columns) {
      throw std::invalid_argument("nkit: jacobian_pattern() must be square (got " + std::to_string(pattern.rows) +
                                  " x " + std::to_string(pattern.columns) + ")");
    }
    m_pattern = pattern;
    m_coloring = color_columns(m_pattern);
    // Entries bucketed by the color of their column (counting sort).
    const std::size_t nonzeros = m_pattern.nonzeros();
    m_entry_starts.assign(static_cast<std::size_t>(m_coloring.colors) + 1, 0);
    for (const int column : m_pattern.column_indices) {
      ++m_entry_starts[static_cast<std::size_t>(m_coloring.color_of_column[static_cast<std::size_t>(column)]) + 1];
    }
    for (int c = 0; c < m_coloring.colors; ++c) {
      m_entry_starts[static_cast<std::size_t>(c) + 1] += m_entry_starts[static_cast<std::size_t>(c)];
    }
    m_entry_rows.resize(nonzeros);
    m_entry_columns.resize(nonzeros);
    m_entry_positions.resize(nonzeros);
    std::vector<int> next(m_entry_starts.begin(), m_entry_starts.end() - 1);
    for (int i = 0; i < m_pattern.rows; ++i) {
      for (int p = m_pattern.row_starts[static_cast<std::size_t>(i)];
           p < m_pattern.row_starts[static_cast<std::size_t>(i) + 1]; ++p) {
        const int column = m_pattern.column_indices[static_cast<std::size_t>(p)];
        const auto slot = static_cast<std::size_t>(
            next[static_cast<std::size_t>(m_coloring.color_of_column[static_cast<std::size_t>(column)])]++);
        m_entry_rows[slot] = i;
        m_entry_columns[slot] = column;
        m_entry_positions[slot] = p;
      }
    }
    m_prepared = true;
    ++m_symbolic_builds;
    return true;
  }

  int colors() const { return m_coloring.colors; }
  const column_coloring& coloring() const { return m_coloring; }
  const sparsity_pattern& pattern() const { return m_pattern; }
  /// How often prepare() computed a coloring (for checking reuse).
  std::int64_t symbolic_builds() const { return m_symbolic_builds; }
  /// Residual evaluations one assembly costs (= colors()).
  int evaluations_per_assembly() const { return m_coloring.colors; }

  /// Writes R'(u) into `jacobian` with the prepared pattern, calling
  /// evaluate(x, r) (r = R(x)) once per color. `residual_at_u` must be R(u).
  /// `jacobian` gets the pattern's structure when it does not have it yet.
  /// `admissible(x)` (optional) vets every perturbed state before it is
  /// evaluated: when it refuses, the color's steps change sign, then halve,
  /// until it accepts (bounds and admissibility predicates of the driver).
  template <class Evaluate, class Admissible = accept_every_state>
  void assemble(Evaluate&& evaluate, const Eigen::VectorXd& u, const Eigen::VectorXd& residual_at_u,
                sparse_matrix& jacobian, Admissible&& admissible = {}) {
    if (!m_prepared) throw std::logic_error("nkit: colored_difference_jacobian::prepare() must precede assemble()");
    const Eigen::Index n = m_pattern.columns;
    if (u.size() != n || residual_at_u.size() != n) {
      throw std::invalid_argument("nkit: the state has " + std::to_string(u.size()) +
                                  " entries but jacobian_pattern() has " + std::to_string(n) + " columns");
    }
    if (!has_pattern_structure(jacobian)) jacobian = zero_matrix_with_pattern(m_pattern);
    if (m_shifted.size() != n) {
      m_shifted.resize(n);
      m_shifted_residual.resize(n);
      m_steps.resize(n);
    }
    const double root_noise = std::sqrt(m_noise);
    for (Eigen::Index j = 0; j < n; ++j) {
      const double magnitude = root_noise * std::max(std::abs(u(j)), 1.0);
      const double signed_step = u(j) < 0.0 ? -magnitude : magnitude;
      m_steps(j) = (u(j) + signed_step) - u(j);
    }
    m_shifted = u;
    double* values = jacobian.valuePtr();
    for (int c = 0; c < m_coloring.colors; ++c) {
      const int first = m_coloring.color_starts[static_cast<std::size_t>(c)];
      const int last = m_coloring.color_starts[static_cast<std::size_t>(c) + 1];
      for (int attempt = 0;; ++attempt) {
        for (int q = first; q < last; ++q) {
          const int j = m_coloring.columns_by_color[static_cast<std::size_t>(q)];
          m_shifted(j) = u(j) + m_steps(j);
        }
        if (admissible(static_cast<const Eigen::VectorXd&>(m_shifted))) break;
        if (attempt == 60) {
          throw std::runtime_error("nkit: colored differences found no admissible perturbation of the state");
        }
        for (int q = first; q < last; ++q) {  // other side first, then a shorter step
          const int j = m_coloring.columns_by_color[static_cast<std::size_t>(q)];
          const double flipped = attempt % 2 == 0 ? -m_steps(j) : -0.5 * m_steps(j);
          m_steps(j) = (u(j) + flipped) - u(j);
        }
      }
      evaluate(static_cast<const Eigen::VectorXd&>(m_shifted), m_shifted_residual);
      for (int e = m_entry_starts[static_cast<std::size_t>(c)]; e < m_entry_starts[static_cast<std::size_t>(c) + 1];
           ++e) {
        const auto entry = static_cast<std::size_t>(e);
        const int row = m_entry_rows[entry];
        values[m_entry_positions[entry]] =
            (m_shifted_residual(row) - residual_at_u(row)) / m_steps(m_entry_columns[entry]);
      }
      for (int q = first; q < last; ++q) {
        const int j = m_coloring.columns_by_color[static_cast<std::size_t>(q)];
        m_shifted(j) = u(j);
      }
    }
  }

  /// Bytes held: coloring, entry map and the difference vectors.
  std::size_t workspace_bytes() const {
    return sizeof(int) * (m_pattern.row_starts.size() + m_pattern.column_indices.size() +
                          m_pattern.coloring_order.size() + m_coloring.color_of_column.size() +
                          m_coloring.columns_by_color.size() + m_entry_starts.size() + 3 * m_entry_rows.size()) +
           sizeof(double) * static_cast<std::size_t>(m_shifted.size() + m_shifted_residual.size() + m_steps.size());
  }

 private:
  bool has_pattern_structure(const sparse_matrix& jacobian) const {
    if (jacobian.rows() != m_pattern.rows || jacobian.cols() != m_pattern.columns || !jacobian.isCompressed() ||
        static_cast<std::size_t>(jacobian.nonZeros()) != m_pattern.nonzeros()) {
      return false;
    }
    const std::size_t outer_bytes = sizeof(int) * m_pattern.row_starts.size();
    const std::size_t inner_bytes = sizeof(int) * m_pattern.column_indices.size();
    return std::memcmp(jacobian.outerIndexPtr(), m_pattern.row_starts.data(), outer_bytes) == 0 &&
           (inner_bytes == 0 ||
            std::memcmp(jacobian.innerIndexPtr(), m_pattern.column_indices.data(), inner_bytes) == 0);
  }

  double m_noise = std::numeric_limits<double>::epsilon();
  bool m_prepared = false;
  std::int64_t m_symbolic_builds = 0;
  sparsity_pattern m_pattern;
  column_coloring m_coloring;
  std::vector<int> m_entry_starts, m_entry_rows, m_entry_columns, m_entry_positions;
  Eigen::VectorXd m_shifted, m_shifted_residual, m_steps;
};

/// A residual together with the sparsity pattern of its Jacobian: the
/// Newton driver then builds the assembled Jacobian by colored finite
/// differences. Forwards jacobian_product() when the wrapped residual has one.
template <class Residual>
class residual_with_jacobian_pattern {
 public:
  residual_with_jacobian_pattern(Residual residual, sparsity_pattern pattern)
      : m_residual(std::move(residual)), m_pattern(std::move(pattern)) {
    m_pattern.validate();
  }

  template <class Vector>
  void operator()(const Vector& u, Vector& r) {
    m_residual(u, r);
  }
  template <class Vector, class Inner = Residual>
  auto jacobian_product(const Vector& u, const Vector& v, Vector& jv)
      -> decltype(std::declval<Inner&>().jacobian_product(u, v, jv)) {
    return m_residual.jacobian_product(u, v, jv);
  }
  const sparsity_pattern& jacobian_pattern() const { return m_pattern; }
  Residual& residual() { return m_residual; }

 private:
  Residual m_residual;
  sparsity_pattern m_pattern;
};

/// with_jacobian_pattern(residual, pattern). Pass std::ref(x) to avoid
/// copying a large functor.
template <class Residual>
residual_with_jacobian_pattern<std::decay_t<Residual>> with_jacobian_pattern(Residual&& residual,
                                                                             sparsity_pattern pattern) {
  return {std::forward<Residual>(residual), std::move(pattern)};
}

}  // namespace nkit

#endif  // NKIT_JACOBIAN_SPARSE_JACOBIAN_HPP
