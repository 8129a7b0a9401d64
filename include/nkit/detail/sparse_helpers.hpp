#ifndef NKIT_DETAIL_SPARSE_HELPERS_HPP
#define NKIT_DETAIL_SPARSE_HELPERS_HPP

/// \file sparse_helpers.hpp
/// Small checks shared by the built-in preconditioners.

#include <Eigen/SparseCore>
#include <cmath>
#include <cstddef>
#include <cstring>
#include <stdexcept>
#include <string>
#include <vector>

namespace nkit::detail {

/// True when every stored value of `matrix` is finite.
template <class Matrix>
bool stored_values_finite(const Matrix& matrix) {
  const double* values = matrix.valuePtr();
  const auto count = static_cast<std::size_t>(matrix.nonZeros());
  for (std::size_t p = 0; p < count; ++p) {
    if (!std::isfinite(values[p])) return false;
  }
  return true;
}

/// Throws std::invalid_argument when `matrix` is not square.
template <class Matrix>
void require_square(const Matrix& matrix, const char* who) {
  if (matrix.rows() != matrix.cols()) {
    throw std::invalid_argument(std::string("nkit: ") + who + " needs a square matrix (got " +
                                std::to_string(matrix.rows()) + " x " + std::to_string(matrix.cols()) + ")");
  }
}

/// Remembers the structure (outer and inner index arrays) of a compressed
/// sparse matrix, to tell whether a new matrix has the same pattern.
class structure_fingerprint {
 public:
  template <class Matrix>
  bool matches(const Matrix& matrix) const {
    if (!m_valid || !matrix.isCompressed() || matrix.rows() != m_rows || matrix.cols() != m_columns ||
        static_cast<std::size_t>(matrix.nonZeros()) != m_inner.size()) {
      return false;
    }
    return std::memcmp(matrix.outerIndexPtr(), m_outer.data(), sizeof(int) * m_outer.size()) == 0 &&
           (m_inner.empty() || std::memcmp(matrix.innerIndexPtr(), m_inner.data(), sizeof(int) * m_inner.size()) == 0);
  }
  template <class Matrix>
  void remember(const Matrix& matrix) {
    m_rows = matrix.rows();
    m_columns = matrix.cols();
    m_outer.assign(matrix.outerIndexPtr(), matrix.outerIndexPtr() + matrix.outerSize() + 1);
    m_inner.assign(matrix.innerIndexPtr(), matrix.innerIndexPtr() + matrix.nonZeros());
    m_valid = matrix.isCompressed();
  }
  void forget() { m_valid = false; }
  std::size_t bytes() const { return sizeof(int) * (m_outer.size() + m_inner.size()); }

 private:
  bool m_valid = false;
  Eigen::Index m_rows = 0, m_columns = 0;
  std::vector<int> m_outer, m_inner;
};

}  // namespace nkit::detail

#endif  // NKIT_DETAIL_SPARSE_HELPERS_HPP
