#ifndef NKIT_PRECONDITIONERS_ILU_ZERO_HPP
#define NKIT_PRECONDITIONERS_ILU_ZERO_HPP

/// \file ilu_zero.hpp
/// ILU(0): incomplete LU factorisation J ≈ L U keeping exactly the pattern
/// of J (plus the diagonal), in natural ordering (no reordering: the
/// unknowns are eliminated in the order the residual numbers them). Method:
/// the IKJ variant of Y. Saad, "Iterative Methods for Sparse Linear
/// Systems", 2nd ed., SIAM 2003, Algorithm 10.4, on compressed rows.
///
/// Setup: a symbolic phase (own copy of the pattern with the diagonal
/// inserted when missing, diagonal positions, value map) runs only when the
/// pattern of J changes; each setup then refreshes values and factorises,
/// O(Σ_rows nnz(row) · nnz(row)) time, no allocation after the first setup
/// of a pattern. Storage: the factor in J's row layout (nnz doubles, kept
/// for refreshes) and again split into L and U rows for apply (nnz − n
/// doubles and ints), plus O(n) ints; the unit diagonal of L is implicit.
/// Apply: one forward and one backward sweep over the factor, 2·nnz
/// multiply-adds; allocates nothing (z must already have r's size, as
/// GMRES guarantees; otherwise it is resized once). apply_transpose
/// (z = (LU)⁻ᵀ r = L⁻ᵀ U⁻ᵀ r, for adjoint solves) runs the same sweeps on the
/// transposed factors, column-oriented over the same rows: same cost.
///
/// Fallback (setup_status::ready_with_fallback): a pivot u_ii that is zero,
/// not finite, or tiny (|u_ii| <= ε·‖J_i,:‖∞) is replaced by ±‖J_i,:‖∞ (sign
/// of u_ii, + when zero; 1 for an empty row): bounded factors, never
/// Inf/NaN, a weaker preconditioner for those rows. The count is in
/// replaced_pivots(). Non-finite values in J give setup_status::failed.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "../core/preconditioner.hpp"
#include "../detail/checks.hpp"
#include "../detail/sparse_helpers.hpp"
#include "jacobi.hpp"

namespace nkit {

struct ilu_zero_settings {
  /// Fraction ω of the fill-in that ILU(0) drops which is added to the
  /// pivot of its row instead: 0 gives ILU(0); 1 gives modified ILU(0)
  /// (MILU), whose factors keep the row sums of J, (LU)·1 = J·1
  /// (I. Gustafsson, "A class of first order factorization methods", BIT 18
  /// (1978) 142–156); in between is relaxed ILU (O. Axelsson & G. Lindskog,
  /// Numer. Math. 48 (1986) 479–498). For diffusion-dominated problems MILU
  /// lowers the growth of GMRES iterations with mesh refinement; it relies on
  /// near-M-matrix structure, so values just below 1 are the safer choice.
  /// Where J·1 ≈ 0 in most rows (conduction with insulated walls almost
  /// everywhere: a nearly pure-Neumann problem), ω = 1 makes LU nearly
  /// singular; measured on examples/baseplate at 256²: ω = 1 stagnates,
  /// ω = 0.99 converges (12 Newton steps, 637 GMRES iterations).
  double row_sum_compensation = 0.0;

  void validate(const std::string& prefix = "ilu_zero_settings") const {
    detail::require_closed_interval(prefix + ".row_sum_compensation", row_sum_compensation, 0.0, 1.0);
  }
};

class ilu_zero_preconditioner {
 public:
  ilu_zero_preconditioner() = default;
  explicit ilu_zero_preconditioner(ilu_zero_settings settings) : m_settings(settings) { m_settings.validate(); }
  const ilu_zero_settings& settings() const { return m_settings; }

  setup_status build(const sparse_matrix& matrix) {
    detail::require_square(matrix, "ilu_zero_preconditioner");
    if (!matrix.isCompressed()) {  // the value map needs compressed storage
      m_compressed = matrix;
      m_compressed.makeCompressed();
      return build(m_compressed);
    }
    if (!detail::stored_values_finite(matrix)) return setup_status::failed;
    if (!m_structure.matches(matrix)) analyze(matrix);
    const int n = static_cast<int>(matrix.rows());
    // Values: zero (for an inserted diagonal), then scatter J's values.
    std::fill(m_values.begin(), m_values.end(), 0.0);
    const double* source = matrix.valuePtr();
    for (std::size_t p = 0; p < m_value_map.size(); ++p)
      m_values[static_cast<std::size_t>(m_value_map[p])] += source[p];
    m_replaced = 0;
    for (int i = 0; i < n; ++i) {
      const int first = m_row_starts[static_cast<std::size_t>(i)];
      const int last = m_row_starts[static_cast<std::size_t>(i) + 1];
      double row_max = 0.0;
      for (int p = first; p < last; ++p) {
        row_max = std::max(row_max, std::abs(m_values[static_cast<std::size_t>(p)]));
        m_position_in_row[static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)])] = p;
      }
      const int diagonal = m_diagonal[static_cast<std::size_t>(i)];
      double dropped = 0.0;                     // fill-in outside the pattern (row-sum compensation)
      for (int p = first; p < diagonal; ++p) {  // k = column < i, increasing
        const int k = m_columns[static_cast<std::size_t>(p)];
        double& multiplier = m_values[static_cast<std::size_t>(p)];
        multiplier *= m_inverse_pivot[static_cast<std::size_t>(k)];
        for (int q = m_diagonal[static_cast<std::size_t>(k)] + 1; q < m_row_starts[static_cast<std::size_t>(k) + 1];
             ++q) {
          const int at = m_position_in_row[static_cast<std::size_t>(m_columns[static_cast<std::size_t>(q)])];
          const double update = multiplier * m_values[static_cast<std::size_t>(q)];
          if (at >= 0) {
            m_values[static_cast<std::size_t>(at)] -= update;
          } else {
            dropped -= update;
          }
        }
      }
      for (int p = first; p < last; ++p) {
        m_position_in_row[static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)])] = -1;
      }
      double& pivot = m_values[static_cast<std::size_t>(diagonal)];
      pivot += m_settings.row_sum_compensation * dropped;
      if (!std::isfinite(pivot)) pivot = 0.0;
      pivot = jacobi_preconditioner::safe_pivot(pivot, row_max, m_replaced);
      m_inverse_pivot[static_cast<std::size_t>(i)] = 1.0 / pivot;
    }
    split_factors();
    return m_replaced == 0 ? setup_status::ready : setup_status::ready_with_fallback;
  }

  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    return build(context.assembled_jacobian());
  }

  /// z = U⁻¹ L⁻¹ r.
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    const int n = static_cast<int>(m_inverse_pivot.size());
    if (z.size() != r.size()) z.resize(r.size());
    double* x = z.data();
    const double* rhs = r.data();
    const int* lower_starts = m_lower_starts.data();
    const int* lower_columns = m_lower_columns.data();
    const double* lower_values = m_lower_values.data();
    for (int i = 0; i < n; ++i) {  // L y = r, unit diagonal
      double sum = rhs[i];
      for (int p = lower_starts[i]; p < lower_starts[i + 1]; ++p) sum -= lower_values[p] * x[lower_columns[p]];
      x[i] = sum;
    }
    const int* upper_starts = m_upper_starts.data();
    const int* upper_columns = m_upper_columns.data();
    const double* upper_values = m_upper_values.data();
    const double* inverse_pivot = m_inverse_pivot.data();
    for (int i = n - 1; i >= 0; --i) {  // U z = y
      double sum = x[i];
      for (int p = upper_starts[i]; p < upper_starts[i + 1]; ++p) sum -= upper_values[p] * x[upper_columns[p]];
      x[i] = sum * inverse_pivot[i];
    }
  }

  /// z = (LU)⁻ᵀ r: Uᵀ y = r (forward), then Lᵀ z = y (backward, unit
  /// diagonal). Uᵀ and Lᵀ are read from the row-stored U and L, so each
  /// sweep scatters a finished entry into the later ones (column-oriented
  /// triangular solve, common practice).
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    const int n = static_cast<int>(m_inverse_pivot.size());
    z = r;
    double* x = z.data();
    const int* upper_starts = m_upper_starts.data();
    const int* upper_columns = m_upper_columns.data();
    const double* upper_values = m_upper_values.data();
    const double* inverse_pivot = m_inverse_pivot.data();
    for (int i = 0; i < n; ++i) {  // Uᵀ y = r: row i of U is column i of Uᵀ
      const double value = x[i] * inverse_pivot[i];
      x[i] = value;
      for (int p = upper_starts[i]; p < upper_starts[i + 1]; ++p) x[upper_columns[p]] -= upper_values[p] * value;
    }
    const int* lower_starts = m_lower_starts.data();
    const int* lower_columns = m_lower_columns.data();
    const double* lower_values = m_lower_values.data();
    for (int i = n - 1; i >= 0; --i) {  // Lᵀ z = y, unit diagonal
      const double value = x[i];
      for (int p = lower_starts[i]; p < lower_starts[i + 1]; ++p) x[lower_columns[p]] -= lower_values[p] * value;
    }
  }

  /// Bytes held: the factor in J's row layout, its split copy, indices and
  /// the structure fingerprint.
  std::size_t memory_bytes() const {
    return sizeof(double) * (m_values.size() + m_inverse_pivot.size() + m_lower_values.size() + m_upper_values.size()) +
           sizeof(int) * (m_row_starts.size() + m_columns.size() + m_diagonal.size() + m_position_in_row.size() +
                          m_value_map.size() + m_lower_starts.size() + m_lower_columns.size() + m_upper_starts.size() +
                          m_upper_columns.size()) +
           m_structure.bytes() + static_cast<std::size_t>(m_compressed.nonZeros()) * (sizeof(double) + sizeof(int));
  }

  /// The factors for inspection, L (strictly lower, unit diagonal implied)
  /// and U (upper, with the pivots used) in one matrix; allocates.
  sparse_matrix factors() const {
    const int n = static_cast<int>(m_inverse_pivot.size());
    std::vector<Eigen::Triplet<double, int>> entries;
    entries.reserve(m_values.size());
    for (int i = 0; i < n; ++i) {
      for (int p = m_row_starts[static_cast<std::size_t>(i)]; p < m_row_starts[static_cast<std::size_t>(i) + 1]; ++p) {
        entries.emplace_back(i, m_columns[static_cast<std::size_t>(p)], m_values[static_cast<std::size_t>(p)]);
      }
    }
    sparse_matrix result(n, n);
    result.setFromTriplets(entries.begin(), entries.end());
    return result;
  }
  /// Pivots replaced by the fallback in the last setup.
  std::int64_t replaced_pivots() const { return m_replaced; }
  /// How often the symbolic phase ran (once per distinct pattern).
  std::int64_t symbolic_analyses() const { return m_analyses; }

 private:
  /// Copies the strictly lower and strictly upper parts into separate
  /// compressed rows, so each sweep of apply() streams only what it uses
  /// (the sweeps are memory bound). Allocates only when the pattern changed.
  void split_factors() {
    const int n = static_cast<int>(m_inverse_pivot.size());
    m_lower_starts.resize(static_cast<std::size_t>(n) + 1);
    m_upper_starts.resize(static_cast<std::size_t>(n) + 1);
    const std::size_t lower_count = m_values.size() - static_cast<std::size_t>(n) - upper_entries();
    m_lower_columns.resize(lower_count);
    m_lower_values.resize(lower_count);
    m_upper_columns.resize(m_values.size() - static_cast<std::size_t>(n) - lower_count);
    m_upper_values.resize(m_upper_columns.size());
    int lower = 0, upper = 0;
    for (int i = 0; i < n; ++i) {
      m_lower_starts[static_cast<std::size_t>(i)] = lower;
      m_upper_starts[static_cast<std::size_t>(i)] = upper;
      const int diagonal = m_diagonal[static_cast<std::size_t>(i)];
      for (int p = m_row_starts[static_cast<std::size_t>(i)]; p < m_row_starts[static_cast<std::size_t>(i) + 1]; ++p) {
        const auto from = static_cast<std::size_t>(p);
        if (p < diagonal) {
          m_lower_columns[static_cast<std::size_t>(lower)] = m_columns[from];
          m_lower_values[static_cast<std::size_t>(lower++)] = m_values[from];
        } else if (p > diagonal) {
          m_upper_columns[static_cast<std::size_t>(upper)] = m_columns[from];
          m_upper_values[static_cast<std::size_t>(upper++)] = m_values[from];
        }
      }
    }
    m_lower_starts[static_cast<std::size_t>(n)] = lower;
    m_upper_starts[static_cast<std::size_t>(n)] = upper;
  }
  std::size_t upper_entries() const {
    std::size_t count = 0;
    for (std::size_t i = 0; i < m_diagonal.size(); ++i) {
      count += static_cast<std::size_t>(m_row_starts[i + 1] - m_diagonal[i] - 1);
    }
    return count;
  }

  /// Pattern of J plus the diagonal, diagonal positions and the value map.
  void analyze(const sparse_matrix& matrix) {
    const int n = static_cast<int>(matrix.rows());
    m_row_starts.assign(static_cast<std::size_t>(n) + 1, 0);
    m_columns.clear();
    m_columns.reserve(static_cast<std::size_t>(matrix.nonZeros() + n));
    m_diagonal.assign(static_cast<std::size_t>(n), -1);
    m_value_map.assign(static_cast<std::size_t>(matrix.nonZeros()), 0);
    for (int i = 0; i < n; ++i) {
      const int row_first = static_cast<int>(m_columns.size());
      for (sparse_matrix::InnerIterator entry(matrix, i); entry; ++entry)
        m_columns.push_back(static_cast<int>(entry.col()));
      bool has_diagonal = false;
      for (std::size_t p = static_cast<std::size_t>(row_first); p < m_columns.size(); ++p)
        has_diagonal |= m_columns[p] == i;
      if (!has_diagonal) m_columns.push_back(i);
      std::sort(m_columns.begin() + row_first, m_columns.end());
      m_columns.erase(std::unique(m_columns.begin() + row_first, m_columns.end()), m_columns.end());
      m_row_starts[static_cast<std::size_t>(i) + 1] = static_cast<int>(m_columns.size());
      for (int p = row_first; p < static_cast<int>(m_columns.size()); ++p) {
        if (m_columns[static_cast<std::size_t>(p)] == i) m_diagonal[static_cast<std::size_t>(i)] = p;
      }
      // Map each stored entry of J's row i to its slot (rows are sorted here).
      const int* outer = matrix.outerIndexPtr();
      const int* inner = matrix.innerIndexPtr();
      for (int p = outer[i]; p < outer[i + 1]; ++p) {
        const auto slot = std::lower_bound(m_columns.begin() + row_first, m_columns.end(), inner[p]);
        m_value_map[static_cast<std::size_t>(p)] = static_cast<int>(slot - m_columns.begin());
      }
    }
    m_values.assign(m_columns.size(), 0.0);
    m_inverse_pivot.assign(static_cast<std::size_t>(n), 0.0);
    m_position_in_row.assign(static_cast<std::size_t>(n), -1);
    m_structure.remember(matrix);
    ++m_analyses;
  }

  ilu_zero_settings m_settings;
  detail::structure_fingerprint m_structure;
  sparse_matrix m_compressed;
  std::vector<int> m_row_starts, m_columns, m_diagonal, m_position_in_row, m_value_map;
  std::vector<double> m_values, m_inverse_pivot;
  // The factors split for apply(): strictly lower (L) and strictly upper (U) rows.
  std::vector<int> m_lower_starts, m_lower_columns, m_upper_starts, m_upper_columns;
  std::vector<double> m_lower_values, m_upper_values;
  std::int64_t m_replaced = 0;
  std::int64_t m_analyses = 0;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_ILU_ZERO_HPP
