// Test preconditioner: an exact sparse LU factorisation (Eigen's SparseLU) of
// the assembled Jacobian the driver hands over. With it, GMRES on the state
// block converges in one iteration, which isolates the continuation logic
// from linear-solver behaviour. Eigen is a dependency and a general-purpose
// reference library.
#ifndef NKIT_TESTS_SUPPORT_SPARSE_LU_PRECONDITIONER_HPP
#define NKIT_TESTS_SUPPORT_SPARSE_LU_PRECONDITIONER_HPP

#include <Eigen/SparseCore>
#include <Eigen/SparseLU>
#include <memory>
#include <nkit/preconditioner.hpp>

namespace nkit_test {

class sparse_lu_preconditioner {
 public:
  template <class Space>
  nkit::setup_status setup(const nkit::preconditioner_context<Space>& context) {
    m_matrix = context.assembled_jacobian();  // column-major copy for SparseLU
    if (!m_factor) {
      m_factor = std::make_unique<factor_type>();
      m_factor->analyzePattern(m_matrix);
    }
    m_factor->factorize(m_matrix);
    ++m_setups;
    return m_factor->info() == Eigen::Success ? nkit::setup_status::ready : nkit::setup_status::failed;
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = m_factor->solve(r); }
  int setups() const { return m_setups; }

 private:
  using factor_type = Eigen::SparseLU<Eigen::SparseMatrix<double>>;  // neither copyable nor movable
  Eigen::SparseMatrix<double> m_matrix;
  std::unique_ptr<factor_type> m_factor;
  int m_setups = 0;
};

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_SPARSE_LU_PRECONDITIONER_HPP
