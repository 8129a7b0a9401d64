// A fixed tridiagonal preconditioner for tests of 1D second-difference
// problems: z = T⁻¹ r for the constant-coefficient matrix
// T = tridiag(sub, diagonal, super), by the Thomas algorithm (Gaussian
// elimination without pivoting on a tridiagonal matrix; stable for the
// diagonally dominant and symmetric positive (or negative) definite matrices
// it is used with here: common practice). The elimination factors are formed
// once in the constructor; apply() allocates nothing.
#ifndef NKIT_TESTS_SUPPORT_TRIDIAGONAL_PRECONDITIONER_HPP
#define NKIT_TESTS_SUPPORT_TRIDIAGONAL_PRECONDITIONER_HPP

#include <Eigen/Core>
#include <stdexcept>

namespace nkit_test {

class constant_tridiagonal_preconditioner {
 public:
  constant_tridiagonal_preconditioner(Eigen::Index size, double sub, double diagonal, double super)
      : m_sub(sub), m_upper_ratio(size), m_pivot_inverse(size) {
    if (size < 1) throw std::invalid_argument("constant_tridiagonal_preconditioner: size must be >= 1");
    double pivot = diagonal;
    for (Eigen::Index i = 0; i < size; ++i) {
      if (i > 0) pivot = diagonal - sub * m_upper_ratio(i - 1);
      if (pivot == 0.0) throw std::invalid_argument("constant_tridiagonal_preconditioner: zero pivot");
      m_pivot_inverse(i) = 1.0 / pivot;
      m_upper_ratio(i) = super / pivot;
    }
  }

  /// z = T⁻¹ r (forward elimination, then back substitution in place in z).
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const {
    const Eigen::Index n = m_pivot_inverse.size();
    z(0) = r(0) * m_pivot_inverse(0);
    for (Eigen::Index i = 1; i < n; ++i) z(i) = (r(i) - m_sub * z(i - 1)) * m_pivot_inverse(i);
    for (Eigen::Index i = n - 2; i >= 0; --i) z(i) -= m_upper_ratio(i) * z(i + 1);
  }

 private:
  double m_sub;
  Eigen::VectorXd m_upper_ratio;    // c'_i = super / pivot_i
  Eigen::VectorXd m_pivot_inverse;  // 1 / pivot_i
};

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_TRIDIAGONAL_PRECONDITIONER_HPP
