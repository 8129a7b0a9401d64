// A preconditioner written on the user side: factor the problem's assembled
// Jacobian (from its assemble_jacobian member, through the driver's
// preconditioner context) with an Eigen sparse decomposition and apply the
// factors. It shows how an in-house code plugs its own preconditioner into
// nkit; the examples also use it as "exact Newton" (SparseLU) in comparisons.
// Shared example plumbing (not part of the nkit library).
#ifndef NKIT_EXAMPLES_COMMON_FACTORIZATION_PRECONDITIONER_HPP
#define NKIT_EXAMPLES_COMMON_FACTORIZATION_PRECONDITIONER_HPP

#include <Eigen/SparseCore>
#include <cstddef>
#include <memory>
#include <nkit/preconditioner.hpp>

namespace nkit_examples {

/// M = the Decomposition's factors of R'(u). Decomposition is an Eigen sparse
/// solver taking a column-major matrix (SparseLU, IncompleteLUT, ...).
/// Allocation: setup() converts and factors (allocates); apply() writes into
/// z without allocating for SparseLU.
template <class Decomposition>
class factorization_preconditioner {
 public:
  using column_matrix = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;

  template <class Space>
  nkit::setup_status setup(const nkit::preconditioner_context<Space>& context) {
    m_matrix = context.assembled_jacobian();  // row-major → column-major copy
    m_matrix.makeCompressed();
    if (!m_pattern_known || m_matrix.nonZeros() != m_pattern_nonzeros) {
      m_decomposition->analyzePattern(m_matrix);
      m_pattern_known = true;
      m_pattern_nonzeros = m_matrix.nonZeros();
    }
    m_decomposition->factorize(m_matrix);
    return m_decomposition->info() == Eigen::Success ? nkit::setup_status::ready : nkit::setup_status::failed;
  }

  template <class Vector>
  void apply(const Vector& r, Vector& z) const {
    z = m_decomposition->solve(r);
  }

  std::size_t memory_bytes() const {
    return static_cast<std::size_t>(m_matrix.nonZeros()) * (sizeof(double) + sizeof(int));
  }

  Decomposition& decomposition() { return *m_decomposition; }

 private:
  column_matrix m_matrix;
  // Eigen decompositions cannot be copied or moved; the pointer makes this movable.
  std::unique_ptr<Decomposition> m_decomposition = std::make_unique<Decomposition>();
  bool m_pattern_known = false;
  Eigen::Index m_pattern_nonzeros = 0;
};

}  // namespace nkit_examples

#endif  // NKIT_EXAMPLES_COMMON_FACTORIZATION_PRECONDITIONER_HPP
