// The transposed application z = M⁻ᵀ r of every built-in serial
// preconditioner (apply_transpose, used by adjoint solves), on nonsymmetric
// matrices: the upwinded convection–diffusion matrices of
// problems/test_sets/convection_diffusion.hpp (Péclet number 5) and the
// Jacobian of the conduction design problem (tests/support/conduction_design.hpp).
// BoomerAMG's transposed cycle is checked with MPI in tests/mpi/test_transposed_multigrid.cpp.
//
// Checks and their sources:
//  - Adjoint identity ⟨M⁻¹v, w⟩ = ⟨v, M⁻ᵀw⟩ for random v, w (fixed seeds).
//    Each application is a chain of triangular solves and sparse products,
//    each backward stable (N.J. Higham, "Accuracy and Stability of Numerical
//    Algorithms", 2nd ed., SIAM 2002, Theorem 8.5 for triangular systems,
//    §3.5 for products), so the computed M⁻¹v is M⁻¹v plus an error of at
//    most about n ε κ(M) ‖M⁻¹‖ ‖v‖ per piece, and likewise for M⁻ᵀw. The
//    check allows 8 n ε κ∞(M) ‖M⁻¹‖_F ‖v‖ ‖w‖ per piece (inner applications
//    plus coupling products of a composite preconditioner), κ∞ and ‖M⁻¹‖_F
//    from the dense M⁻¹ built column by column (‖·‖_F >= ‖·‖₂: conservative).
//    A second check makes every case able to fail: with M⁻¹ in place of M⁻ᵀ
//    the identity must miss by more than 100 times that bound.
//  - Exact factorisations (sparse LU, UMFPACK, KLU, block Jacobi, additive
//    Schwarz with a direct local solve, field split with exact inner solves)
//    against Eigen's dense LU with partial pivoting of the matrix they factor
//    (a reference library), forward and transposed: both are backward stable,
//    so each result is within about n ε κ∞ of the exact one (Higham 2002,
//    ch. 9 with the perturbation bound of ch. 7; the constant is common
//    practice): ‖z − z_ref‖∞ <= 16 n ε κ∞(P) ‖z_ref‖∞.
//  - Inner GMRES: no linear M⁻¹ to transpose (inner_gmres.hpp). Its inner
//    solves stop at relative residual τ, so each result is within
//    τ ‖J⁻¹‖₂ ‖r‖ of J⁻¹r (resp. J⁻ᵀr): the identity holds to
//    2τ ‖J⁻¹‖₂ ‖v‖ ‖w‖ plus rounding, and the transposed result is within
//    τ ‖J⁻¹‖₂ ‖w‖ of the dense LU's J⁻ᵀw.
#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/preconditioners/additive_schwarz.hpp>
#include <nkit/preconditioners/block_jacobi.hpp>
#include <nkit/preconditioners/field_split.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/incomplete_lut.hpp>
#include <nkit/preconditioners/inner_gmres.hpp>
#include <nkit/preconditioners/jacobi.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#if NKIT_HAS_SUITESPARSE
#include <nkit/preconditioners/suitesparse_direct.hpp>
#endif
#include <string>
#include <utility>

#include "problems/test_sets/convection_diffusion.hpp"
#include "support/conduction_design.hpp"
#include "support/fixed_jacobian.hpp"

using Catch::Matchers::Message;
using Catch::Matchers::WithinAbs;
using nkit_test::epsilon;
using nkit_test::random_vector;

namespace {

using nkit_test::fixed_jacobian;  // hands a fixed matrix to a preconditioner's setup (those without build())

template <class Preconditioner>
nkit::setup_status set_up(Preconditioner& preconditioner, const nkit::sparse_matrix& matrix) {
  const nkit::eigen_vector_space<double> space;
  const Eigen::VectorXd zero = Eigen::VectorXd::Zero(matrix.rows());
  fixed_jacobian source(matrix);
  const nkit::preconditioner_context<> context{space, zero, zero, 0, nullptr, &source};
  return nkit::setup_preconditioner(preconditioner, context);
}

/// The dense operator r ↦ apply(r), column by column.
template <class Apply>
Eigen::MatrixXd dense_operator(Eigen::Index n, Apply&& apply) {
  Eigen::MatrixXd dense(n, n);
  Eigen::VectorXd column(n), unit = Eigen::VectorXd::Zero(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    unit(i) = 1.0;
    apply(unit, column);
    dense.col(i) = column;
    unit(i) = 0.0;
  }
  return dense;
}

double condition_infinity(const Eigen::MatrixXd& matrix) {
  return matrix.lpNorm<Eigen::Infinity>() * matrix.inverse().lpNorm<Eigen::Infinity>();
}

/// ⟨M⁻¹v, w⟩ = ⟨v, M⁻ᵀw⟩ within `pieces` times the bound of the file comment.
template <class Preconditioner>
void check_adjoint_identity(Preconditioner& preconditioner, Eigen::Index n, double pieces = 1.0) {
  const Eigen::MatrixXd inverse =
      dense_operator(n, [&](const Eigen::VectorXd& r, Eigen::VectorXd& z) { preconditioner.apply(r, z); });
  const double condition = condition_infinity(inverse);
  for (unsigned seed = 10; seed < 13; ++seed) {
    const Eigen::VectorXd v = random_vector(n, seed), w = random_vector(n, seed + 100);
    Eigen::VectorXd forward(n), transposed(n);
    preconditioner.apply(v, forward);
    preconditioner.apply_transpose(w, transposed);
    const double bound =
        pieces * 8.0 * static_cast<double>(n) * epsilon * condition * inverse.norm() * v.norm() * w.norm();
    CHECK_THAT(w.dot(forward), WithinAbs(v.dot(transposed), bound));
    // A transpose that were only the forward apply would fail here: M is not symmetric.
    CHECK(std::abs(w.dot(forward) - v.dot(inverse * w)) > 100.0 * bound);
  }
}

/// apply and apply_transpose against Eigen's dense LU of `factored` (file comment).
template <class Preconditioner>
void check_against_dense_lu(Preconditioner& preconditioner, const Eigen::MatrixXd& factored) {
  const Eigen::Index n = factored.rows();
  const Eigen::PartialPivLU<Eigen::MatrixXd> lu(factored);
  const double condition = condition_infinity(factored);
  for (unsigned seed = 20; seed < 22; ++seed) {
    const Eigen::VectorXd r = random_vector(n, seed);
    Eigen::VectorXd z(n);
    const Eigen::VectorXd forward_reference = lu.solve(r);
    preconditioner.apply(r, z);
    const double scale = 16.0 * static_cast<double>(n) * epsilon * condition;
    CHECK((z - forward_reference).lpNorm<Eigen::Infinity>() <= scale * forward_reference.lpNorm<Eigen::Infinity>());
    const Eigen::VectorXd transposed_reference = lu.transpose().solve(r);
    preconditioner.apply_transpose(r, z);
    CHECK((z - transposed_reference).lpNorm<Eigen::Infinity>() <=
          scale * transposed_reference.lpNorm<Eigen::Infinity>());
  }
}

/// The Jacobian of the conduction design problem at a state with large
/// gradients: β = 0.5 makes it nonsymmetric.
nkit::sparse_matrix conduction_jacobian() {
  const nkit_test::conduction_design design = nkit_test::square_design(6, 0.3);
  Eigen::VectorXd state(design.unknowns());
  for (Eigen::Index i = 0; i < state.size(); ++i) state(i) = 1.0 + 2.0 * std::sin(0.7 * static_cast<double>(i));
  nkit::sparse_matrix matrix;
  design.assemble_jacobian(state, nkit_test::design_parameters, matrix);
  return matrix;
}

double asymmetry(const nkit::sparse_matrix& matrix) {
  return (Eigen::MatrixXd(matrix) - Eigen::MatrixXd(matrix).transpose()).norm() / Eigen::MatrixXd(matrix).norm();
}

}  // namespace

TEST_CASE("transposed preconditioners satisfy the adjoint identity", "[sensitivity][preconditioner]") {
  const nkit::sparse_matrix matrix = conduction_jacobian();
  REQUIRE(asymmetry(matrix) > 0.01);
  const Eigen::Index n = matrix.rows();

  SECTION("Jacobi") {
    nkit::jacobi_preconditioner preconditioner;
    REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
    const Eigen::VectorXd v = random_vector(n, 3), w = random_vector(n, 4);
    Eigen::VectorXd forward, transposed;
    preconditioner.apply(v, forward);
    preconditioner.apply_transpose(w, transposed);
    CHECK_THAT(w.dot(forward), WithinAbs(v.dot(transposed), 2.0 * static_cast<double>(v.size()) * epsilon *
                                                                w.cwiseAbs().dot(forward.cwiseAbs())));
  }
  SECTION("ILU(0)") {
    nkit::ilu_zero_preconditioner preconditioner;
    REQUIRE(preconditioner.build(matrix) != nkit::setup_status::failed);
    check_adjoint_identity(preconditioner, n);
  }
  SECTION("relaxed ILU(0), row-sum compensation 0.5") {
    nkit::ilu_zero_preconditioner preconditioner(nkit::ilu_zero_settings{0.5});
    REQUIRE(preconditioner.build(matrix) != nkit::setup_status::failed);
    check_adjoint_identity(preconditioner, n);
  }
  SECTION("ILUT") {
    nkit::incomplete_lut_preconditioner preconditioner(nkit::incomplete_lut_settings{1e-2, 2});
    REQUIRE(preconditioner.build(matrix) != nkit::setup_status::failed);
    check_adjoint_identity(preconditioner, n);
  }
  SECTION("sparse direct (Eigen SparseLU)") {
    nkit::sparse_direct_preconditioner preconditioner;
    REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
    check_adjoint_identity(preconditioner, n);
    check_against_dense_lu(preconditioner, Eigen::MatrixXd(matrix));
  }
#if NKIT_HAS_SUITESPARSE
  SECTION("UMFPACK (transposed system UMFPACK_At)") {
    nkit::umfpack_direct_preconditioner preconditioner;
    REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
    check_adjoint_identity(preconditioner, n);
    check_against_dense_lu(preconditioner, Eigen::MatrixXd(matrix));
  }
  SECTION("KLU (klu_tsolve)") {
    nkit::klu_direct_preconditioner preconditioner;
    REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
    check_adjoint_identity(preconditioner, n);
    check_against_dense_lu(preconditioner, Eigen::MatrixXd(matrix));
  }
#endif
  SECTION("detection, and any_preconditioner without a transpose") {
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::ilu_zero_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::sparse_direct_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::identity_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::block_jacobi_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::additive_schwarz_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::field_split_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::inner_gmres_preconditioner<>, Eigen::VectorXd>);
#if NKIT_HAS_SUITESPARSE
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::umfpack_direct_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::klu_direct_preconditioner, Eigen::VectorXd>);
#endif
    auto lambda = nkit::make_preconditioner([](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = 2.0 * r; });
    STATIC_REQUIRE_FALSE(nkit::has_apply_transpose_v<decltype(lambda), Eigen::VectorXd>);
    // Inner GMRES has a transpose only when its inner preconditioner has one.
    STATIC_REQUIRE_FALSE(
        nkit::has_apply_transpose_v<nkit::inner_gmres_preconditioner<decltype(lambda)>, Eigen::VectorXd>);
    nkit::any_preconditioner<> erased(lambda);
    Eigen::VectorXd r = Eigen::VectorXd::Ones(3), z(3);
    CHECK_THROWS_MATCHES(erased.apply_transpose(r, z), std::invalid_argument,
                         Message("nkit: the preconditioner held by any_preconditioner has no apply_transpose(r, z), "
                                 "which solves with the transposed Jacobian need"));
  }
}

TEST_CASE("block Jacobi's transpose is the transposed block LU", "[sensitivity][preconditioner]") {
  // The convection–diffusion matrix cut into blocks of 2 or 3 consecutive
  // unknowns (the east and west couplings inside a block differ: nonsymmetric
  // blocks). For blocks of 3 the rows are also shifted cyclically inside each
  // block, which puts an off-diagonal entry on the diagonal: partial pivoting
  // then interchanges rows, so the interchanges' transpose is exercised too.
  const int block_size = GENERATE(2, 3);
  const nkit::sparse_matrix plain = nkit_problems::convection_diffusion_matrix(6, 5.0);
  Eigen::MatrixXd shifted(plain);
  if (block_size == 3) {
    const Eigen::MatrixXd original(plain);
    for (Eigen::Index row = 0; row < original.rows(); ++row) {
      const Eigen::Index first = row - row % 3;
      shifted.row(row) = original.row(first + (row - first + 1) % 3);
    }
  }
  const nkit::sparse_matrix matrix = shifted.sparseView();
  INFO("block size " << block_size);
  REQUIRE(asymmetry(matrix) > 0.01);
  nkit::block_jacobi_preconditioner preconditioner(block_size);
  REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
  check_adjoint_identity(preconditioner, matrix.rows());
  Eigen::MatrixXd block_diagonal = Eigen::MatrixXd::Zero(matrix.rows(), matrix.cols());
  const Eigen::MatrixXd dense(matrix);
  for (Eigen::Index first = 0; first < matrix.rows(); first += block_size) {
    block_diagonal.block(first, first, block_size, block_size) = dense.block(first, first, block_size, block_size);
  }
  check_against_dense_lu(preconditioner, block_diagonal);
}

TEST_CASE("additive Schwarz's transpose uses the transposed local factors", "[sensitivity][preconditioner]") {
  // One subdomain (serial): the local block is the whole matrix.
  const nkit::sparse_matrix matrix = nkit_problems::convection_diffusion_matrix(6, 5.0);
  SECTION("ILUT local solve") {
    nkit::additive_schwarz_preconditioner preconditioner({nkit::subdomain_solver::incomplete_lut, 1e-2, 2});
    REQUIRE(set_up(preconditioner, matrix) == nkit::setup_status::ready);
    check_adjoint_identity(preconditioner, matrix.rows());
  }
  SECTION("sparse direct local solve") {
    nkit::additive_schwarz_preconditioner preconditioner({nkit::subdomain_solver::sparse_direct});
    REQUIRE(set_up(preconditioner, matrix) == nkit::setup_status::ready);
    check_adjoint_identity(preconditioner, matrix.rows());
    check_against_dense_lu(preconditioner, Eigen::MatrixXd(matrix));
  }
  SECTION("before a setup") {
    const nkit::additive_schwarz_preconditioner preconditioner;
    Eigen::VectorXd r = Eigen::VectorXd::Ones(3), z(3);
    CHECK_THROWS_MATCHES(
        preconditioner.apply_transpose(r, z), std::logic_error,
        Message("nkit: additive_schwarz_preconditioner::apply_transpose called before a successful setup"));
  }
}

namespace {

/// The operator P of a field split with exact inner solves, in the contiguous
/// field order of two fields of sizes h and n − h (field_split.hpp's forms).
Eigen::MatrixXd field_split_operator(const Eigen::MatrixXd& j, Eigen::Index h, const nkit::field_split_settings& s) {
  const Eigen::Index m = j.rows() - h;
  const Eigen::MatrixXd a = j.topLeftCorner(h, h), b = j.topRightCorner(h, m);
  const Eigen::MatrixXd c = j.bottomLeftCorner(m, h), d = j.bottomRightCorner(m, m);
  const Eigen::MatrixXd schur = d - c * a.diagonal().cwiseInverse().asDiagonal() * b;  // D − C diag(A)⁻¹ B
  const Eigen::MatrixXd second = s.needs_schur_complement() ? schur : d;
  Eigen::MatrixXd p = Eigen::MatrixXd::Zero(j.rows(), j.cols());
  p.topLeftCorner(h, h) = a;
  p.bottomRightCorner(m, m) = second;
  switch (s.form) {
    case nkit::field_split_form::block_diagonal:
      break;
    case nkit::field_split_form::block_lower_triangular:
      p.bottomLeftCorner(m, h) = c;
      break;
    case nkit::field_split_form::block_upper_triangular:
      p.topRightCorner(h, m) = b;
      break;
    case nkit::field_split_form::schur_complement_factorization:  // [A 0; C S][I A⁻¹B; 0 I]
      p.topRightCorner(h, m) = b;
      p.bottomLeftCorner(m, h) = c;
      p.bottomRightCorner(m, m) = schur + c * a.partialPivLu().solve(b);
      break;
  }
  return p;
}

}  // namespace

TEST_CASE("field split's transpose, every form", "[sensitivity][preconditioner][field_split]") {
  // Two unknowns per node (problems/test_sets/convection_diffusion.hpp), split
  // into two invented "fields": the first and second halves of the unknowns.
  const nkit::sparse_matrix matrix = nkit_problems::coupled_convection_diffusion_matrix(6, 5.0, 50.0);
  const Eigen::Index n = matrix.rows(), half = n / 2;
  const nkit::field_layout halves({{"first", 1}, {"second", 1}}, half);
  nkit::field_split_settings settings;
  settings.form =
      GENERATE(nkit::field_split_form::block_diagonal, nkit::field_split_form::block_lower_triangular,
               nkit::field_split_form::block_upper_triangular, nkit::field_split_form::schur_complement_factorization);
  settings.second_field_uses_schur_complement = GENERATE(false, true);
  INFO("form " << static_cast<int>(settings.form)
               << ", second field uses S: " << settings.second_field_uses_schur_complement);
  // Pieces of the error bound: inner applications plus coupling products.
  const double pieces = settings.form == nkit::field_split_form::block_diagonal                   ? 2.0
                        : settings.form == nkit::field_split_form::schur_complement_factorization ? 5.0
                                                                                                  : 3.0;

  SECTION("exact inner solves (sparse LU): the transposed operator of the form") {
    nkit::field_split_preconditioner preconditioner(
        halves, settings,
        nkit::make_inner_preconditioners(nkit::sparse_direct_preconditioner{}, nkit::sparse_direct_preconditioner{}));
    REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
    check_adjoint_identity(preconditioner, n, pieces);
    check_against_dense_lu(preconditioner, field_split_operator(Eigen::MatrixXd(matrix), half, settings));
  }
  SECTION("ILU(0) inside") {
    nkit::field_split_preconditioner preconditioner(
        halves, settings,
        nkit::make_inner_preconditioners(nkit::ilu_zero_preconditioner{}, nkit::ilu_zero_preconditioner{}));
    REQUIRE(preconditioner.build(matrix) != nkit::setup_status::failed);
    check_adjoint_identity(preconditioner, n, pieces);
  }
}

TEST_CASE("field split's transpose needs transposable inner preconditioners", "[sensitivity][bad_input]") {
  const nkit::sparse_matrix matrix = nkit_problems::convection_diffusion_matrix(4, 5.0);
  const nkit::field_layout halves({{"first", 1}, {"second", 1}}, 8);
  auto plain = nkit::make_preconditioner([](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = r; });
  nkit::field_split_preconditioner preconditioner(
      halves, {}, nkit::make_inner_preconditioners(nkit::jacobi_preconditioner{}, plain));
  REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
  Eigen::VectorXd r = Eigen::VectorXd::Ones(16), z(16);
  CHECK_THROWS_MATCHES(preconditioner.apply_transpose(r, z), std::invalid_argument,
                       Message("nkit: the preconditioner held by any_preconditioner has no apply_transpose(r, z), "
                               "which solves with the transposed Jacobian need"));
}

TEST_CASE("inner GMRES's transpose is inner GMRES on the transposed matrix", "[sensitivity][preconditioner]") {
  const nkit::sparse_matrix matrix = nkit_problems::convection_diffusion_matrix(6, 5.0);
  const Eigen::Index n = matrix.rows();
  const Eigen::MatrixXd dense(matrix);
  const double inverse_norm = 1.0 / Eigen::JacobiSVD<Eigen::MatrixXd>(dense).singularValues()(n - 1);
  const Eigen::PartialPivLU<Eigen::MatrixXd> lu(dense);
  // Our own settings: τ = 1e-9 and room for n inner iterations, so the inner
  // solves reach τ (GMRES ends in at most n steps in exact arithmetic).
  const double tau = 1e-9;
  nkit::inner_gmres_preconditioner<nkit::ilu_zero_preconditioner> preconditioner(
      nkit::inner_gmres_settings{static_cast<int>(n), tau});
  REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
  for (unsigned seed = 30; seed < 33; ++seed) {
    const Eigen::VectorXd v = random_vector(n, seed), w = random_vector(n, seed + 100);
    Eigen::VectorXd forward(n), transposed(n);
    preconditioner.apply(v, forward);
    REQUIRE(preconditioner.last_inner_solve().converged());
    preconditioner.apply_transpose(w, transposed);
    REQUIRE(preconditioner.last_inner_solve().converged());
    // The inner stopping test, up to the rounding of the residual itself (n ε |Jᵀ||z|, Higham 2002 §3.5).
    const Eigen::VectorXd magnitudes = Eigen::MatrixXd(matrix.transpose()).cwiseAbs() * transposed.cwiseAbs();
    CHECK((matrix.transpose() * transposed - w).norm() <=
          tau * w.norm() + 4.0 * static_cast<double>(n) * epsilon * magnitudes.norm());
    const Eigen::VectorXd reference = lu.transpose().solve(w);
    CHECK((transposed - reference).norm() <= tau * inverse_norm * w.norm() + 1e3 * epsilon * reference.norm());
    CHECK_THAT(w.dot(forward), WithinAbs(v.dot(transposed), 2.0 * tau * inverse_norm * v.norm() * w.norm()));
    // Not the forward solve: J⁻¹w and J⁻ᵀw differ far beyond the tolerance.
    Eigen::VectorXd forward_w(n);
    preconditioner.apply(w, forward_w);
    CHECK((forward_w - transposed).norm() > 1e3 * tau * inverse_norm * w.norm());
  }
}
