#ifndef NKIT_PRECONDITIONERS_FIELD_SPLIT_HPP
#define NKIT_PRECONDITIONERS_FIELD_SPLIT_HPP

/// \file preconditioners/field_split.hpp
/// Field-split (block) preconditioners for coupled problems: the assembled
/// Jacobian is cut into blocks J_fg by field (fields/field_layout.hpp,
/// fields/field_blocks.hpp), and each field's diagonal block J_ff gets its own
/// inner preconditioner M_f ≈ J_ff (any preconditioner of the serial Eigen
/// space: Jacobi, block Jacobi, ILU(0), ILUT, sparse direct, inner GMRES, the
/// user's; held type-erased).
///
/// Forms (field_split_form):
///   block_diagonal          P = diag(M_0, ..., M_{F−1})            (block Jacobi by field)
///   block_lower_triangular  P = lower block triangle of J, M_f on the diagonal: forward block
///                           Gauss–Seidel, z_f = M_f⁻¹ (r_f − Σ_{g<f} J_fg z_g)
///   block_upper_triangular  backward block Gauss–Seidel, z_f = M_f⁻¹ (r_f − Σ_{g>f} J_fg z_g), f = F−1 .. 0
///   schur_complement_factorization   two fields, J = [A B; C D]:
///                           P = [A 0; C S] [I A⁻¹B; 0 I], applied as
///                           w = A⁻¹ r_1, z_2 = S⁻¹ (r_2 − C w), z_1 = w − A⁻¹ B z_2
///                           (two applications of M_0 ≈ A⁻¹, one of M_1 ≈ S⁻¹)
/// With two fields, second_field_uses_schur_complement makes the diagonal and
/// triangular forms use S instead of D for the second field, as in the block
/// preconditioners of saddle-point theory: with exact A⁻¹ and S⁻¹, the
/// right-preconditioned operator of diag(A, S) has at most 3 distinct
/// eigenvalues when D = 0, and of the block triangular forms at most 2, so
/// GMRES ends in at most 3 (2) iterations in exact arithmetic
/// (M.F. Murphy, G.H. Golub & A.J. Wathen, "A note on preconditioning for
/// indefinite linear systems", SIAM J. Sci. Comput. 21 (2000) 1969–1972;
/// M. Benzi, G.H. Golub & J. Liesen, "Numerical solution of saddle point
/// problems", Acta Numerica 14 (2005) 1–137, §10.1; H.C. Elman,
/// D.J. Silvester & A.J. Wathen, "Finite Elements and Fast Iterative Solvers",
/// 2nd ed., Oxford University Press 2014, ch. 9). With the exact S the Schur
/// factorisation is J itself.
///
/// S by default is D − C diag(A)⁻¹ B (the approximation of the SIMPLE method,
/// S.V. Patankar & D.B. Spalding, Int. J. Heat Mass Transfer 15 (1972)
/// 1787–1806; zero or tiny diagonal entries of A handled as in jacobi.hpp), or
/// what the user's schur_complement_builder writes.
///
/// Setup: extracts the blocks the form needs (one pass over J per field), the
/// sparse product C diag(A)⁻¹ B when S is needed, and sets up every inner
/// preconditioner with a context whose assembled_jacobian() is its block and
/// whose state and residual are the field's parts (zero vectors when built
/// with build()). Allocates. Apply: gathers r by field, the inner
/// applications and one sparse product per coupling block used, scatters z;
/// no allocation in nkit's own code (inner preconditioners may allocate, as
/// Eigen's direct solves do). Serial Eigen vectors only. When any inner
/// preconditioner changes between applications (inner GMRES), so does this one
/// and the Newton driver switches to flexible GMRES.
///
/// apply_transpose (z = P⁻ᵀ r, adjoint solves) applies the transpose of the
/// same P with the inner preconditioners' apply_transpose (std::invalid_argument
/// from any_preconditioner when one has none): block diagonal → diag(M_f⁻ᵀ);
/// lower triangular → Pᵀ is block upper triangular with the blocks J_gfᵀ,
/// z_f = M_f⁻ᵀ (r_f − Σ_{g>f} J_gfᵀ z_g), f = F−1 .. 0; upper triangular the
/// mirror image (f = 0 .. F−1, g < f); Schur factorisation
/// P⁻¹ = [I −M_0⁻¹B; 0 I] [M_0⁻¹ 0; −M_1⁻¹C M_0⁻¹ M_1⁻¹], so
/// t = M_0⁻ᵀ r_1, z_2 = M_1⁻ᵀ (r_2 − Bᵀ t), z_1 = M_0⁻ᵀ (r_1 − Cᵀ z_2).
/// The blocks it needs are the ones apply() uses; no allocation in nkit's code.

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <utility>
#include <vector>

#include "../core/eigen_vector_space.hpp"
#include "../core/preconditioner.hpp"
#include "../detail/checks.hpp"
#include "../detail/sparse_helpers.hpp"
#include "../fields/field_blocks.hpp"
#include "../fields/field_layout.hpp"
#include "jacobi.hpp"

namespace nkit {

enum class field_split_form {
  block_diagonal,                 ///< block Jacobi by field
  block_lower_triangular,         ///< forward block Gauss–Seidel
  block_upper_triangular,         ///< backward block Gauss–Seidel
  schur_complement_factorization  ///< two fields: [A 0; C S][I A⁻¹B; 0 I]
};

/// How S ≈ D − C A⁻¹ B is formed (two fields).
enum class schur_complement_approximation {
  inverse_diagonal_of_first_block,  ///< S = D − C diag(A)⁻¹ B
  user_supplied                     ///< the schur_complement_builder given to the constructor
};

/// The four blocks of a two-field Jacobian [A B; C D], field-local numbering.
struct two_field_blocks {
  const sparse_matrix& first_diagonal;   ///< A = J_00
  const sparse_matrix& first_to_second;  ///< B = J_01 (rows of field 0, columns of field 1)
  const sparse_matrix& second_to_first;  ///< C = J_10
  const sparse_matrix& second_diagonal;  ///< D = J_11
};

/// Writes S (field 1 × field 1) from the blocks; called at every setup.
using schur_complement_builder = std::function<void(const two_field_blocks& blocks, sparse_matrix& schur_complement)>;

struct field_split_settings {
  field_split_form form = field_split_form::block_diagonal;
  /// Two fields only: the diagonal and triangular forms use S for the second
  /// field instead of D (the Schur factorisation always does).
  bool second_field_uses_schur_complement = false;
  schur_complement_approximation schur_complement = schur_complement_approximation::inverse_diagonal_of_first_block;

  bool needs_schur_complement() const {
    return second_field_uses_schur_complement || form == field_split_form::schur_complement_factorization;
  }
  void validate(const std::string& prefix = "field_split_settings") const {
    detail::require_enumerator(prefix + ".form", form, field_split_form::schur_complement_factorization,
                               "block_diagonal, block_lower_triangular, block_upper_triangular, "
                               "schur_complement_factorization");
    detail::require_enumerator(prefix + ".schur_complement", schur_complement,
                               schur_complement_approximation::user_supplied,
                               "inverse_diagonal_of_first_block, user_supplied");
  }
};

/// A vector of type-erased inner preconditioners, one per argument (field order).
template <class... Preconditioners>
std::vector<any_preconditioner<>> make_inner_preconditioners(Preconditioners&&... preconditioners) {
  std::vector<any_preconditioner<>> inner;
  inner.reserve(sizeof...(Preconditioners));
  (inner.emplace_back(std::forward<Preconditioners>(preconditioners)), ...);
  return inner;
}

class field_split_preconditioner {
 public:
  /// `inner[f]` preconditions field f's diagonal block (for the second field
  /// S when the settings ask for the Schur complement). Throws
  /// std::invalid_argument when the count of inner preconditioners is not the
  /// field count, a Schur option is asked for with other than two fields, or
  /// user_supplied comes without a builder.
  field_split_preconditioner(field_layout layout, field_split_settings settings,
                             std::vector<any_preconditioner<>> inner, schur_complement_builder builder = {})
      : m_layout(std::move(layout)), m_settings(settings), m_inner(std::move(inner)), m_builder(std::move(builder)) {
    m_settings.validate();
    const int fields = m_layout.field_count();
    if (fields < 1) throw std::invalid_argument("nkit: field_split_preconditioner needs a layout with fields");
    if (static_cast<int>(m_inner.size()) != fields) {
      throw std::invalid_argument("nkit: field_split_preconditioner needs one inner preconditioner per field (got " +
                                  std::to_string(m_inner.size()) + " for " + std::to_string(fields) + " fields)");
    }
    if (m_settings.needs_schur_complement() && fields != 2) {
      throw std::invalid_argument(
          "nkit: field_split_settings.form = schur_complement_factorization and "
          "second_field_uses_schur_complement need exactly two fields (the layout has " +
          std::to_string(fields) + ")");
    }
    if (m_settings.needs_schur_complement() &&
        m_settings.schur_complement == schur_complement_approximation::user_supplied && !m_builder) {
      throw std::invalid_argument(
          "nkit: field_split_settings.schur_complement = user_supplied needs a schur_complement_builder (got none)");
    }
    const auto f = static_cast<std::size_t>(fields);
    m_blocks.assign(f * f, sparse_matrix());
    m_field_residual.resize(f);
    m_field_solution.resize(f);
    m_field_state.resize(f);
    m_field_shift.resize(f);
    m_field_work.resize(f);
    for (int g = 0; g < fields; ++g) {
      m_field_residual[static_cast<std::size_t>(g)].resize(m_layout.field_size(g));
      m_field_solution[static_cast<std::size_t>(g)].resize(m_layout.field_size(g));
      m_field_work[static_cast<std::size_t>(g)].resize(m_layout.field_size(g));
    }
  }

  const field_layout& layout() const { return m_layout; }
  const field_split_settings& settings() const { return m_settings; }
  /// The inner preconditioner of field f.
  any_preconditioner<>& inner(int field) { return m_inner.at(static_cast<std::size_t>(field)); }
  /// J_fg from the last setup (empty when the form did not need it).
  const sparse_matrix& block(int row_field, int column_field) const {
    return m_blocks.at(static_cast<std::size_t>(row_field * m_layout.field_count() + column_field));
  }
  /// S from the last setup (empty when the settings do not use it).
  const sparse_matrix& schur_complement() const { return m_schur; }

  /// Builds from `matrix` alone: inner contexts get zero state and residual.
  setup_status build(const sparse_matrix& matrix) {
    extract(matrix);
    for (int f = 0; f < m_layout.field_count(); ++f) {
      Eigen::VectorXd& state = m_field_state[static_cast<std::size_t>(f)];
      state.setZero(m_layout.field_size(f));
    }
    return set_up_inner(nullptr, 0);
  }

  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    static_assert(std::is_same_v<typename Space::vector_type, Eigen::VectorXd>,
                  "nkit: field_split_preconditioner works on the serial Eigen vector space");
    extract(context.assembled_jacobian());
    m_layout.require_size(context.state.size(), "field_split_preconditioner: the state");
    for (int f = 0; f < m_layout.field_count(); ++f) {
      const auto k = static_cast<std::size_t>(f);
      m_layout.gather(f, context.state, m_field_state[k]);
      m_layout.gather(f, context.residual, m_field_residual[k]);
      if (context.diagonal_shift != nullptr) m_layout.gather(f, *context.diagonal_shift, m_field_shift[k]);
    }
    return set_up_inner(context.diagonal_shift, context.newton_step, /*residual_gathered=*/true);
  }

  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    const int fields = m_layout.field_count();
    if (z.size() != r.size()) z.resize(r.size());
    for (int f = 0; f < fields; ++f) m_layout.gather(f, r, m_field_residual[static_cast<std::size_t>(f)]);
    switch (m_settings.form) {
      case field_split_form::block_diagonal:
        for (int f = 0; f < fields; ++f) solve_field(f, m_field_residual[static_cast<std::size_t>(f)]);
        break;
      case field_split_form::block_lower_triangular:
        for (int f = 0; f < fields; ++f) substitute(f, 0, f);
        break;
      case field_split_form::block_upper_triangular:
        for (int f = fields - 1; f >= 0; --f) substitute(f, f + 1, fields);
        break;
      case field_split_form::schur_complement_factorization:
        apply_schur_factorization();
        break;
    }
    for (int f = 0; f < fields; ++f) m_layout.scatter(f, m_field_solution[static_cast<std::size_t>(f)], z);
  }

  /// z = P⁻ᵀ r (see the file comment).
  void apply_transpose(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    const int fields = m_layout.field_count();
    if (z.size() != r.size()) z.resize(r.size());
    for (int f = 0; f < fields; ++f) m_layout.gather(f, r, m_field_residual[static_cast<std::size_t>(f)]);
    switch (m_settings.form) {
      case field_split_form::block_diagonal:
        for (int f = 0; f < fields; ++f) solve_field_transposed(f, m_field_residual[static_cast<std::size_t>(f)]);
        break;
      case field_split_form::block_lower_triangular:
        for (int f = fields - 1; f >= 0; --f) substitute_transposed(f, f + 1, fields);
        break;
      case field_split_form::block_upper_triangular:
        for (int f = 0; f < fields; ++f) substitute_transposed(f, 0, f);
        break;
      case field_split_form::schur_complement_factorization:
        apply_schur_factorization_transposed();
        break;
    }
    for (int f = 0; f < fields; ++f) m_layout.scatter(f, m_field_solution[static_cast<std::size_t>(f)], z);
  }

  /// True when an inner preconditioner changes between applications.
  bool changes_between_applications() const {
    for (const auto& inner : m_inner) {
      if (inner.changes_between_applications()) return true;
    }
    return false;
  }

  /// Blocks, S, the field vectors and the inner preconditioners' own counts.
  std::size_t memory_bytes() const {
    std::size_t bytes = matrix_bytes(m_schur) + matrix_bytes(m_scaled_coupling);
    for (const auto& block : m_blocks) bytes += matrix_bytes(block);
    for (const auto* vectors : {&m_field_residual, &m_field_solution, &m_field_state, &m_field_shift, &m_field_work}) {
      for (const auto& v : *vectors) bytes += sizeof(double) * static_cast<std::size_t>(v.size());
    }
    bytes += sizeof(double) * static_cast<std::size_t>(m_correction.size());
    for (const auto& inner : m_inner) bytes += inner.memory_bytes();
    return bytes;
  }
  /// Zero or tiny diagonal entries of A replaced (jacobi.hpp rule) in the last S.
  std::int64_t replaced_diagonals() const { return m_replaced; }

 private:
  /// The assembled block handed to one inner preconditioner.
  struct block_source final : jacobian_source {
    const sparse_matrix* matrix = nullptr;
    const sparse_matrix& assembled_jacobian() override { return *matrix; }
  };

  static std::size_t matrix_bytes(const sparse_matrix& m) {
    return static_cast<std::size_t>(m.nonZeros()) * (sizeof(double) + sizeof(int)) +
           static_cast<std::size_t>(m.outerSize() + 1) * sizeof(int);
  }
  sparse_matrix& block_storage(int row_field, int column_field) {
    return m_blocks[static_cast<std::size_t>(row_field * m_layout.field_count() + column_field)];
  }
  bool block_needed(int row_field, int column_field) const {
    if (row_field == column_field) return true;
    switch (m_settings.form) {
      case field_split_form::block_diagonal:
        return m_settings.second_field_uses_schur_complement;  // S needs B and C
      case field_split_form::block_lower_triangular:
        return column_field < row_field || m_settings.second_field_uses_schur_complement;
      case field_split_form::block_upper_triangular:
        return column_field > row_field || m_settings.second_field_uses_schur_complement;
      case field_split_form::schur_complement_factorization:
        return true;
    }
    return true;
  }

  void extract(const sparse_matrix& matrix) {
    detail::require_square(matrix, "field_split_preconditioner");
    m_layout.require_size(matrix.rows(), "field_split_preconditioner: the Jacobian's row count");
    const int fields = m_layout.field_count();
    for (int f = 0; f < fields; ++f) {
      for (int g = 0; g < fields; ++g) {
        if (block_needed(f, g)) extract_field_block(m_layout, matrix, f, g, block_storage(f, g));
      }
    }
    if (m_settings.needs_schur_complement()) form_schur_complement();
  }

  void form_schur_complement() {
    const two_field_blocks blocks{block(0, 0), block(0, 1), block(1, 0), block(1, 1)};
    if (m_settings.schur_complement == schur_complement_approximation::user_supplied) {
      m_builder(blocks, m_schur);
      const Eigen::Index n = m_layout.field_size(1);
      if (m_schur.rows() != n || m_schur.cols() != n) {
        throw std::invalid_argument("nkit: the schur_complement_builder wrote a " + std::to_string(m_schur.rows()) +
                                    " x " + std::to_string(m_schur.cols()) + " matrix; the second field needs " +
                                    std::to_string(n) + " x " + std::to_string(n));
      }
      return;
    }
    // S = D − C diag(A)⁻¹ B: scale row i of B by 1 / a_ii.
    m_replaced = 0;
    m_scaled_coupling = blocks.first_to_second;
    const sparse_matrix& a = blocks.first_diagonal;
    for (Eigen::Index i = 0; i < a.rows(); ++i) {
      double diagonal = 0.0;
      double row_max = 0.0;
      for (sparse_matrix::InnerIterator entry(a, i); entry; ++entry) {
        if (entry.col() == i) diagonal += entry.value();
        row_max = std::max(row_max, std::abs(entry.value()));
      }
      const double inverse = 1.0 / jacobi_preconditioner::safe_pivot(diagonal, row_max, m_replaced);
      for (sparse_matrix::InnerIterator entry(m_scaled_coupling, i); entry; ++entry) entry.valueRef() *= inverse;
    }
    m_schur = blocks.second_diagonal - sparse_matrix(blocks.second_to_first * m_scaled_coupling);
    m_schur.makeCompressed();
  }

  setup_status set_up_inner(const Eigen::VectorXd* shift, int newton_step, bool residual_gathered = false) {
    const eigen_vector_space<double> space;
    setup_status overall = setup_status::ready;
    for (int f = 0; f < m_layout.field_count(); ++f) {
      const auto k = static_cast<std::size_t>(f);
      if (!residual_gathered) m_field_residual[k].setZero(m_layout.field_size(f));
      block_source source;
      const bool uses_schur = f == 1 && m_settings.needs_schur_complement();
      source.matrix = uses_schur ? &m_schur : &block(f, f);
      const preconditioner_context<eigen_vector_space<double>> context{
          space,  m_field_state[k], m_field_residual[k], newton_step, shift != nullptr ? &m_field_shift[k] : nullptr,
          &source};
      const setup_status status = m_inner[k].setup(context);
      if (status == setup_status::failed) return setup_status::failed;
      if (status == setup_status::ready_with_fallback) overall = setup_status::ready_with_fallback;
    }
    return overall;
  }

  /// z_f = M_f⁻¹ rhs.
  void solve_field(int field, const Eigen::VectorXd& rhs) {
    m_inner[static_cast<std::size_t>(field)].apply(rhs, m_field_solution[static_cast<std::size_t>(field)]);
  }

  /// z_f = M_f⁻¹ (r_f − Σ_{first <= g < last, g != f} J_fg z_g).
  void substitute(int field, int first, int last) {
    Eigen::VectorXd& work = m_field_work[static_cast<std::size_t>(field)];
    work = m_field_residual[static_cast<std::size_t>(field)];
    for (int g = first; g < last; ++g) {
      if (g == field) continue;
      work.noalias() -= block(field, g) * m_field_solution[static_cast<std::size_t>(g)];
    }
    solve_field(field, work);
  }

  /// w = A⁻¹ r_0, z_1 = S⁻¹ (r_1 − C w), z_0 = w − A⁻¹ B z_1.
  void apply_schur_factorization() {
    Eigen::VectorXd& z0 = m_field_solution[0];
    Eigen::VectorXd& z1 = m_field_solution[1];
    solve_field(0, m_field_residual[0]);  // z0 = w
    Eigen::VectorXd& work1 = m_field_work[1];
    work1 = m_field_residual[1];
    work1.noalias() -= block(1, 0) * z0;
    solve_field(1, work1);
    Eigen::VectorXd& work0 = m_field_work[0];
    work0.noalias() = block(0, 1) * z1;
    m_inner[0].apply(work0, m_correction);
    z0 -= m_correction;
  }

  /// z_f = M_f⁻ᵀ rhs.
  void solve_field_transposed(int field, const Eigen::VectorXd& rhs) {
    m_inner[static_cast<std::size_t>(field)].apply_transpose(rhs, m_field_solution[static_cast<std::size_t>(field)]);
  }

  /// z_f = M_f⁻ᵀ (r_f − Σ_{first <= g < last, g != f} J_gfᵀ z_g).
  void substitute_transposed(int field, int first, int last) {
    Eigen::VectorXd& work = m_field_work[static_cast<std::size_t>(field)];
    work = m_field_residual[static_cast<std::size_t>(field)];
    for (int g = first; g < last; ++g) {
      if (g == field) continue;
      work.noalias() -= block(g, field).transpose() * m_field_solution[static_cast<std::size_t>(g)];
    }
    solve_field_transposed(field, work);
  }

  /// t = M_0⁻ᵀ r_0, z_1 = M_1⁻ᵀ (r_1 − Bᵀ t), z_0 = M_0⁻ᵀ (r_0 − Cᵀ z_1).
  void apply_schur_factorization_transposed() {
    Eigen::VectorXd& z0 = m_field_solution[0];
    Eigen::VectorXd& z1 = m_field_solution[1];
    solve_field_transposed(0, m_field_residual[0]);  // z0 = t
    Eigen::VectorXd& work1 = m_field_work[1];
    work1 = m_field_residual[1];
    work1.noalias() -= block(0, 1).transpose() * z0;
    solve_field_transposed(1, work1);
    Eigen::VectorXd& work0 = m_field_work[0];
    work0 = m_field_residual[0];
    work0.noalias() -= block(1, 0).transpose() * z1;
    solve_field_transposed(0, work0);
  }

  field_layout m_layout;
  field_split_settings m_settings;
  std::vector<any_preconditioner<>> m_inner;
  schur_complement_builder m_builder;
  std::vector<sparse_matrix> m_blocks;  // J_fg at f·F + g
  sparse_matrix m_schur;
  sparse_matrix m_scaled_coupling;  // diag(A)⁻¹ B
  std::vector<Eigen::VectorXd> m_field_residual, m_field_solution, m_field_state, m_field_shift, m_field_work;
  Eigen::VectorXd m_correction;
  std::int64_t m_replaced = 0;
};

}  // namespace nkit

#endif  // NKIT_PRECONDITIONERS_FIELD_SPLIT_HPP
