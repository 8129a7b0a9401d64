// A jacobian_source that hands a fixed matrix to a preconditioner's setup,
// shared by the tests that set preconditioners up outside a Newton solve.
#ifndef NKIT_TESTS_SUPPORT_FIXED_JACOBIAN_HPP
#define NKIT_TESTS_SUPPORT_FIXED_JACOBIAN_HPP

#include <nkit/core/preconditioner.hpp>
#include <utility>

namespace nkit_test {

class fixed_jacobian final : public nkit::jacobian_source {
 public:
  fixed_jacobian() = default;
  explicit fixed_jacobian(nkit::sparse_matrix matrix) : m_matrix(std::move(matrix)) {}
  const nkit::sparse_matrix& assembled_jacobian() override { return m_matrix; }
  /// Frees the matrix, as the Newton driver does, and counts the calls.
  void release_assembled_jacobian() override {
    nkit::sparse_matrix().swap(m_matrix);
    ++m_releases;
  }
  int releases() const { return m_releases; }

 private:
  nkit::sparse_matrix m_matrix;
  int m_releases = 0;
};

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_FIXED_JACOBIAN_HPP
