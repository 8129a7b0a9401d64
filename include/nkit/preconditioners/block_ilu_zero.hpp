#ifndef NKIT_PRECONDITIONERS_BLOCK_ILU_ZERO_HPP
#define NKIT_PRECONDITIONERS_BLOCK_ILU_ZERO_HPP

/// \file block_ilu_zero.hpp
/// Block ILU(0) for b unknowns per cell: incomplete LU factorisation
/// J ≈ L U on b × b blocks (unknowns b·c .. b·c + b − 1 belong to cell c, the
/// layout of sparsity_pattern.hpp's grid helpers and of block_jacobi.hpp).
/// The block pattern is the set of b × b blocks of J holding at least one
/// stored entry, plus the diagonal blocks; every block of it is stored dense
/// (block compressed rows), and no fill is kept outside it. Method: the IKJ
/// variant of ILU(0) (Y. Saad, "Iterative Methods for Sparse Linear
/// Systems", 2nd ed., SIAM 2003, Algorithm 10.4) on blocks, the division by
/// the pivot a_kk replaced by the product with the inverse of the updated
/// diagonal block: L_IK = A_IK D_K⁻¹, then A_IJ −= L_IK U_KJ for the blocks
/// (I, J) of the pattern; block ILU as in Saad 2003, §10.7 (block
/// preconditioners; section number from memory). Natural block ordering.
///
/// When the pattern of J is a union of full blocks and point ILU(0)
/// (ilu_zero.hpp) meets no zero pivot, both build the same M = L U in exact
/// arithmetic. Block ILU(0) also works when a diagonal block needs row
/// interchanges (a zero a_kk in a nonsingular block), where point ILU(0) has
/// to replace the pivot.
///
/// Diagonal blocks: each updated D_I is factored by dense LU with partial
/// pivoting and kept as its explicit inverse D_I⁻¹ (built from the LU column
/// by column). With it a multiplier block is one dense b × b product and
/// apply() does one b × b matrix–vector product per block row instead of two
/// triangular solves with row interchanges: the same b² multiply-adds,
/// without divisions, interchanges and the dependency chain of a
/// substitution, so the short fixed-length loops vectorise. An explicit
/// inverse is less accurate than solving with the LU factors by up to a
/// factor of about κ(D_I) (N.J. Higham, "Accuracy and Stability of Numerical
/// Algorithms", 2nd ed., SIAM 2002, ch. 14, from memory), far below the
/// error ILU(0) makes on purpose by dropping fill.
///
/// Setup: a symbolic phase (block pattern, diagonal positions, value map)
/// runs only when the pattern of J changes; each setup then refreshes values
/// and factorises: per block row I, one b × b product (b³ multiply-adds) for
/// each lower block L_IK and one for each block U_KJ of row K landing in
/// row I's pattern, plus about (8/3)·b³ flops for the LU (2b³/3) and the
/// inverse (b pairs of triangular solves, 2b³) of D_I.
/// No allocation after the first setup of a pattern. Storage: B·b² doubles
/// for the factor (B stored blocks: the multipliers L_IK, the blocks U_IJ
/// and the updated D_I in the diagonal slots), (n/b)·b² doubles for the
/// D_I⁻¹, ints for the block pattern (n/b + 1 row starts, B columns, n/b
/// diagonal positions and markers) and one per stored entry of J (value
/// map), the structure fingerprint, and b² + b scratch values. Apply: one
/// forward and one backward sweep, B·b² multiply-adds (every stored block
/// once, the diagonal ones as D_I⁻¹), no allocation (z must already have r's
/// size, as GMRES guarantees; otherwise it is resized once). apply_transpose
/// (z = (LU)⁻ᵀ r = L⁻ᵀ U⁻ᵀ r, for adjoint solves) runs the same sweeps on the
/// transposed blocks, column-oriented: same cost.
///
/// Fallback (setup_status::ready_with_fallback): an updated diagonal block
/// whose LU meets a pivot |u_kk| <= ε·b·max(‖D_I‖∞, ‖J_II‖∞) (singular to
/// working precision, measured against the block and against J's own
/// diagonal block, so that a block reduced to rounding noise counts too) is
/// replaced by its diagonal, each entry handled like point Jacobi
/// (jacobi.hpp) against the largest magnitude of its row of J (a non-finite
/// entry counts as zero): the block becomes a point-Jacobi block, as in
/// block_jacobi.hpp. The count is in singular_blocks(). Non-finite values
/// in J, or factors that overflow despite the fallback, give
/// setup_status::failed.

#include <Eigen/Core>
#include <algorithm>
#include <climits>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>
#include <vector>

#include "../core/preconditioner.hpp"
#include "../detail/dense_block_lu.hpp"
#include "../detail/sparse_helpers.hpp"
#include "jacobi.hpp"

namespace nkit {

class block_ilu_zero_preconditioner {
 public:
  /// `block_size` b: unknowns per cell, in [1, maximum_block_size]; it must
  /// divide the number of unknowns of every matrix built from (checked by build()).
  explicit block_ilu_zero_preconditioner(int block_size) : m_block(block_size) {
    if (block_size < 1 || block_size > maximum_block_size) {
      throw std::invalid_argument("nkit: block_ilu_zero_preconditioner block_size must be in [1, 64] (got " +
                                  std::to_string(block_size) + ")");
    }
    const auto b = static_cast<std::size_t>(block_size);
    m_lu_scratch.assign(b * b, 0.0);
    m_pivot_scratch.assign(b, 0);
  }
  int block_size() const { return m_block; }
  /// Largest supported block (apply keeps one block of the vector on the stack).
  static constexpr int maximum_block_size = 64;

  setup_status build(const sparse_matrix& matrix) {
    detail::require_square(matrix, "block_ilu_zero_preconditioner");
    if (matrix.rows() % m_block != 0) {
      throw std::invalid_argument("nkit: block_ilu_zero_preconditioner block_size " + std::to_string(m_block) +
                                  " does not divide the number of unknowns " + std::to_string(matrix.rows()));
    }
    if (!matrix.isCompressed()) {  // the value map needs compressed storage
      m_compressed = matrix;
      m_compressed.makeCompressed();
      return build(m_compressed);
    }
    if (!detail::stored_values_finite(matrix)) return setup_status::failed;
    if (!m_structure.matches(matrix)) analyze(matrix);
    std::fill(m_values.begin(), m_values.end(), 0.0);  // blocks' unstored entries are zero
    const double* source = matrix.valuePtr();
    for (std::size_t p = 0; p < m_value_map.size(); ++p)
      m_values[static_cast<std::size_t>(m_value_map[p])] += source[p];
    m_singular = 0;
    with_fixed_block_size([this](auto fixed) { factorize<decltype(fixed)::value>(); });
    const auto finite = [](const std::vector<double>& values) {
      return std::all_of(values.begin(), values.end(), [](double v) { return std::isfinite(v); });
    };
    if (!finite(m_values) || !finite(m_inverse_diagonal)) return setup_status::failed;
    return m_singular == 0 ? setup_status::ready : setup_status::ready_with_fallback;
  }

  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    return build(context.assembled_jacobian());
  }

  /// z = U⁻¹ L⁻¹ r.
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    if (z.size() != r.size()) z.resize(r.size());
    with_fixed_block_size([&](auto fixed) { solve<decltype(fixed)::value>(r.data(), z.data()); });
  }

  /// z = (LU)⁻ᵀ r: Uᵀ y = r (forward), then Lᵀ z = y (backward, unit block
  /// diagonal). Uᵀ and Lᵀ are read from the row-stored blocks, so each sweep
  /// scatters a finished block into the later ones (column-oriented
  /// triangular solve, common practice).
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    z = r;
    with_fixed_block_size([&](auto fixed) { solve_transposed<decltype(fixed)::value>(z.data()); });
  }

  /// Bytes held: factor blocks, inverse diagonal blocks, block pattern, value
  /// map, scratch and the structure fingerprint.
  std::size_t memory_bytes() const {
    return sizeof(double) * (m_values.size() + m_inverse_diagonal.size() + m_lu_scratch.size()) +
           sizeof(int) * (m_row_starts.size() + m_columns.size() + m_diagonal.size() + m_position_in_row.size() +
                          m_value_map.size() + m_pivot_scratch.size()) +
           m_structure.bytes() + static_cast<std::size_t>(m_compressed.nonZeros()) * (sizeof(double) + sizeof(int));
  }
  /// Diagonal blocks replaced by the point-Jacobi fallback in the last setup.
  std::int64_t singular_blocks() const { return m_singular; }
  /// Blocks in the block pattern (diagonal blocks included).
  std::size_t stored_blocks() const { return m_columns.size(); }
  /// How often the symbolic phase ran (once per distinct pattern).
  std::int64_t symbolic_analyses() const { return m_analyses; }

 private:
  /// Calls visit(std::integral_constant<int, b>) for the common cell sizes
  /// 2–5 (compile-time loop bounds: unrolled, vectorised kernels), and
  /// visit(std::integral_constant<int, 0>) (b read at run time) otherwise.
  template <class Visitor>
  void with_fixed_block_size(Visitor&& visit) const {
    switch (m_block) {
      case 2:
        visit(std::integral_constant<int, 2>{});
        break;
      case 3:
        visit(std::integral_constant<int, 3>{});
        break;
      case 4:
        visit(std::integral_constant<int, 4>{});
        break;
      case 5:
        visit(std::integral_constant<int, 5>{});
        break;
      default:
        visit(std::integral_constant<int, 0>{});
        break;
    }
  }
  template <int Fixed>
  std::size_t block() const {
    return Fixed > 0 ? static_cast<std::size_t>(Fixed) : static_cast<std::size_t>(m_block);
  }

  /// The numeric phase: block IKJ elimination on the scattered values.
  template <int Fixed>
  void factorize() {
    const std::size_t b = block<Fixed>(), bb = b * b;
    const std::size_t block_rows = m_diagonal.size();
    double* values = m_values.data();
    double row_max[maximum_block_size];
    for (std::size_t row = 0; row < block_rows; ++row) {
      const int first = m_row_starts[row], last = m_row_starts[row + 1], diagonal = m_diagonal[row];
      // Row maxima of J and ‖J_II‖∞ (row `row` is untouched until now).
      for (std::size_t i = 0; i < b; ++i) row_max[i] = 0.0;
      for (int p = first; p < last; ++p) {
        const double* a = values + static_cast<std::size_t>(p) * bb;
        for (std::size_t i = 0; i < b; ++i) {
          for (std::size_t k = 0; k < b; ++k) row_max[i] = std::max(row_max[i], std::abs(a[i * b + k]));
        }
        m_position_in_row[static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)])] = p;
      }
      const double original_norm = infinity_norm(values + static_cast<std::size_t>(diagonal) * bb, b);
      for (int p = first; p < diagonal; ++p) {  // K = column < I, increasing
        const auto k = static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)]);
        double* multiplier = values + static_cast<std::size_t>(p) * bb;
        multiply_by_inverse(multiplier, m_inverse_diagonal.data() + k * bb, b);  // L_IK = A_IK D_K⁻¹
        for (int q = m_diagonal[k] + 1; q < m_row_starts[k + 1]; ++q) {
          const int at = m_position_in_row[static_cast<std::size_t>(m_columns[static_cast<std::size_t>(q)])];
          if (at >= 0) {  // A_IJ −= L_IK U_KJ inside the pattern; fill outside it is dropped
            subtract_product(values + static_cast<std::size_t>(at) * bb, multiplier,
                             values + static_cast<std::size_t>(q) * bb, b);
          }
        }
      }
      for (int p = first; p < last; ++p) {
        m_position_in_row[static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)])] = -1;
      }
      if (!invert_diagonal(values + static_cast<std::size_t>(diagonal) * bb, m_inverse_diagonal.data() + row * bb,
                           original_norm, row_max, b)) {
        ++m_singular;
      }
    }
  }

  /// D⁻¹ from an LU with partial pivoting of `d` (row-major, b × b); false
  /// and the point-Jacobi fallback of the file comment when a pivot vanishes.
  bool invert_diagonal(const double* d, double* inverse, double original_norm, const double* row_max, std::size_t b) {
    double* a = m_lu_scratch.data();
    int* pivot = m_pivot_scratch.data();
    std::copy(d, d + b * b, a);
    const double tiny =
        std::numeric_limits<double>::epsilon() * static_cast<double>(b) * std::max(infinity_norm(a, b), original_norm);
    const bool singular = !std::isfinite(tiny) || !detail::factor_dense_block(a, pivot, b, tiny);
    if (singular) {
      std::int64_t replaced = 0;
      std::fill(inverse, inverse + b * b, 0.0);
      for (std::size_t i = 0; i < b; ++i) {
        const double entry = std::isfinite(d[i * b + i]) ? d[i * b + i] : 0.0;
        inverse[i * b + i] = 1.0 / jacobi_preconditioner::safe_pivot(entry, row_max[i], replaced);
      }
      return false;
    }
    double x[maximum_block_size];
    for (std::size_t column = 0; column < b; ++column) {  // D x = e_column
      for (std::size_t k = 0; k < b; ++k) x[k] = k == column ? 1.0 : 0.0;
      for (std::size_t k = 0; k < b; ++k) std::swap(x[k], x[pivot[k]]);  // row interchanges, in order
      for (std::size_t i = 1; i < b; ++i) {                              // unit lower
        for (std::size_t k = 0; k < i; ++k) x[i] -= a[i * b + k] * x[k];
      }
      for (std::size_t i = b; i-- > 0;) {  // upper
        for (std::size_t k = i + 1; k < b; ++k) x[i] -= a[i * b + k] * x[k];
        x[i] /= a[i * b + i];
      }
      for (std::size_t i = 0; i < b; ++i) inverse[i * b + column] = x[i];
    }
    return true;
  }

  /// x = U⁻¹ L⁻¹ r, block rows forward then backward.
  template <int Fixed>
  void solve(const double* r, double* x) const {
    const std::size_t b = block<Fixed>(), bb = b * b;
    const std::size_t block_rows = m_diagonal.size();
    const double* values = m_values.data();
    for (std::size_t row = 0; row < block_rows; ++row) {  // L y = r, unit block diagonal
      double* y = x + row * b;
      for (std::size_t i = 0; i < b; ++i) y[i] = r[row * b + i];
      for (int p = m_row_starts[row]; p < m_diagonal[row]; ++p) {
        const auto column = static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)]);
        subtract_matrix_vector(y, values + static_cast<std::size_t>(p) * bb, x + column * b, b);
      }
    }
    double t[maximum_block_size];
    for (std::size_t row = block_rows; row-- > 0;) {  // U z = y
      double* z = x + row * b;
      for (int p = m_diagonal[row] + 1; p < m_row_starts[row + 1]; ++p) {
        const auto column = static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)]);
        subtract_matrix_vector(z, values + static_cast<std::size_t>(p) * bb, x + column * b, b);
      }
      const double* inverse = m_inverse_diagonal.data() + row * bb;
      for (std::size_t i = 0; i < b; ++i) t[i] = z[i];
      for (std::size_t i = 0; i < b; ++i) {
        double sum = 0.0;
        for (std::size_t k = 0; k < b; ++k) sum += inverse[i * b + k] * t[k];
        z[i] = sum;
      }
    }
  }

  /// x ← (LU)⁻ᵀ x in place (see apply_transpose).
  template <int Fixed>
  void solve_transposed(double* x) const {
    const std::size_t b = block<Fixed>(), bb = b * b;
    const std::size_t block_rows = m_diagonal.size();
    const double* values = m_values.data();
    double t[maximum_block_size];
    for (std::size_t row = 0; row < block_rows; ++row) {  // Uᵀ y = r: block row I of U is block column I of Uᵀ
      double* y = x + row * b;
      const double* inverse = m_inverse_diagonal.data() + row * bb;
      for (std::size_t i = 0; i < b; ++i) t[i] = y[i];
      for (std::size_t i = 0; i < b; ++i) {
        double sum = 0.0;
        for (std::size_t k = 0; k < b; ++k) sum += inverse[k * b + i] * t[k];
        y[i] = sum;
      }
      for (int p = m_diagonal[row] + 1; p < m_row_starts[row + 1]; ++p) {
        const auto column = static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)]);
        subtract_transposed_matrix_vector(x + column * b, values + static_cast<std::size_t>(p) * bb, y, b);
      }
    }
    for (std::size_t row = block_rows; row-- > 0;) {  // Lᵀ z = y, unit block diagonal
      const double* z = x + row * b;
      for (int p = m_row_starts[row]; p < m_diagonal[row]; ++p) {
        const auto column = static_cast<std::size_t>(m_columns[static_cast<std::size_t>(p)]);
        subtract_transposed_matrix_vector(x + column * b, values + static_cast<std::size_t>(p) * bb, z, b);
      }
    }
  }

  // Dense b × b kernels on row-major blocks.
  static double infinity_norm(const double* a, std::size_t b) {
    double norm = 0.0;
    for (std::size_t i = 0; i < b; ++i) {
      double row = 0.0;
      for (std::size_t k = 0; k < b; ++k) row += std::abs(a[i * b + k]);
      norm = std::max(norm, row);
    }
    return norm;
  }
  /// a ← a · inverse.
  static void multiply_by_inverse(double* a, const double* inverse, std::size_t b) {
    double row[maximum_block_size];
    for (std::size_t i = 0; i < b; ++i) {
      for (std::size_t j = 0; j < b; ++j) row[j] = 0.0;
      for (std::size_t k = 0; k < b; ++k) {
        const double factor = a[i * b + k];
        for (std::size_t j = 0; j < b; ++j) row[j] += factor * inverse[k * b + j];
      }
      for (std::size_t j = 0; j < b; ++j) a[i * b + j] = row[j];
    }
  }
  /// c −= a · d.
  static void subtract_product(double* c, const double* a, const double* d, std::size_t b) {
    for (std::size_t i = 0; i < b; ++i) {
      for (std::size_t k = 0; k < b; ++k) {
        const double factor = a[i * b + k];
        for (std::size_t j = 0; j < b; ++j) c[i * b + j] -= factor * d[k * b + j];
      }
    }
  }
  /// y −= a · x.
  static void subtract_matrix_vector(double* y, const double* a, const double* x, std::size_t b) {
    for (std::size_t i = 0; i < b; ++i) {
      double sum = 0.0;
      for (std::size_t k = 0; k < b; ++k) sum += a[i * b + k] * x[k];
      y[i] -= sum;
    }
  }
  /// y −= aᵀ · x.
  static void subtract_transposed_matrix_vector(double* y, const double* a, const double* x, std::size_t b) {
    for (std::size_t k = 0; k < b; ++k) {
      const double factor = x[k];
      for (std::size_t i = 0; i < b; ++i) y[i] -= a[k * b + i] * factor;
    }
  }

  /// Block pattern of J plus the diagonal blocks, diagonal positions and the value map.
  void analyze(const sparse_matrix& matrix) {
    const auto b = static_cast<std::size_t>(m_block);
    const std::size_t block_rows = static_cast<std::size_t>(matrix.rows()) / b;
    const int* outer = matrix.outerIndexPtr();
    const int* inner = matrix.innerIndexPtr();
    m_row_starts.assign(block_rows + 1, 0);
    m_columns.clear();
    m_diagonal.assign(block_rows, -1);
    m_value_map.assign(static_cast<std::size_t>(matrix.nonZeros()), 0);
    for (std::size_t row = 0; row < block_rows; ++row) {
      const std::size_t row_first = m_columns.size();
      m_columns.push_back(static_cast<int>(row));
      for (int p = outer[row * b]; p < outer[(row + 1) * b]; ++p) m_columns.push_back(inner[p] / m_block);
      std::sort(m_columns.begin() + static_cast<std::ptrdiff_t>(row_first), m_columns.end());
      m_columns.erase(std::unique(m_columns.begin() + static_cast<std::ptrdiff_t>(row_first), m_columns.end()),
                      m_columns.end());
      if (m_columns.size() * b * b > static_cast<std::size_t>(INT_MAX)) {
        throw std::length_error(
            "nkit: block_ilu_zero_preconditioner: the block pattern holds more than 2^31 − 1 "
            "values (block_size " +
            std::to_string(m_block) + ")");
      }
      m_row_starts[row + 1] = static_cast<int>(m_columns.size());
      const auto begin = m_columns.begin() + static_cast<std::ptrdiff_t>(row_first);
      m_diagonal[row] =
          static_cast<int>(std::lower_bound(begin, m_columns.end(), static_cast<int>(row)) - m_columns.begin());
      // Each stored entry of J's rows in this block row: its slot in the block and in the block's row-major layout.
      for (std::size_t i = 0; i < b; ++i) {
        for (int p = outer[row * b + i]; p < outer[row * b + i + 1]; ++p) {
          const auto slot = static_cast<std::size_t>(std::lower_bound(begin, m_columns.end(), inner[p] / m_block) -
                                                     m_columns.begin());
          const auto column_in_block = static_cast<std::size_t>(inner[p] % m_block);
          m_value_map[static_cast<std::size_t>(p)] = static_cast<int>(slot * b * b + i * b + column_in_block);
        }
      }
    }
    m_values.assign(m_columns.size() * b * b, 0.0);
    m_inverse_diagonal.assign(block_rows * b * b, 0.0);
    m_position_in_row.assign(block_rows, -1);
    m_structure.remember(matrix);
    ++m_analyses;
  }

  int m_block;
  detail::structure_fingerprint m_structure;
  sparse_matrix m_compressed;
  // Block compressed rows: block columns of block row I at m_columns[m_row_starts[I] .. m_row_starts[I+1]).
  std::vector<int> m_row_starts, m_columns, m_diagonal, m_position_in_row, m_value_map;
  std::vector<double> m_values;            // per stored block, row-major: L_IK (I > K), updated D_I, U_IJ (J > I)
  std::vector<double> m_inverse_diagonal;  // per block row, row-major: D_I⁻¹ (or the fallback's diagonal inverse)
  std::vector<double> m_lu_scratch;        // b × b: the LU of the diagonal block being inverted
  std::vector<int> m_pivot_scratch;        // b: its row interchanges
  std::int64_t m_singular = 0;
  std::int64_t m_analyses = 0;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_BLOCK_ILU_ZERO_HPP
