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

 private:
  nkit::sparse_matrix m_matrix;
};

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_FIXED_JACOBIAN_HPP
