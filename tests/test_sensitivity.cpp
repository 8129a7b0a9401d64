// Direct and adjoint sensitivities (sensitivity/), the linearized solves of
// the Newton driver they use, and the transposed preconditioners.
//
// Problem: the conduction design problem of tests/support/conduction_design.hpp
// (k = k0(1 + βT), parameters p = (k0, β, S, T_west)).
//
// Reference values and their sources:
//  - 1-D wall, S = 0 (Kirchhoff transform U = T + βT²/2, which makes the
//    equation linear in U; transform as presented in F.P. Incropera &
//    D.P. DeWitt, "Fundamentals of Heat and Mass Transfer", as in
//    problems/heat/nonlinear_conduction.hpp): U is linear in x, so
//      T(x) = (√s − 1)/β,  s = a + (b − a)ξ,  a = (1 + βT1)², b = (1 + βT2)², ξ = x/L,
//      q = k0 [(T1 − T2) + β(T1² − T2²)/2] / L.
//    Differentiated by hand:
//      dq/dk0 = q/k0,  dq/dβ = k0 (T1² − T2²)/(2L),  dq/dT1 = k0 (1 + βT1)/L,
//      dT/dk0 = 0,  dT/dT1 = (1 − ξ)(1 + βT1)/√s,
//      dT/dβ = [T1(1 + βT1)(1 − ξ) + T2(1 + βT2)ξ]/(β√s) − (√s − 1)/β².
//    With the arithmetic face mean, k_f (T_P − T_Q) = k0 (U(T_P) − U(T_Q))
//    exactly for this linear k, so the discrete U is linear too and the
//    discrete solution equals the exact one at the cell centres (and the
//    discrete wall flux equals q): nkit's sensitivities must then match the
//    formulas to the linear-solve tolerance. With the harmonic mean the scheme
//    is second order (common practice), so the error of each sensitivity
//    must fall like h².
//  - Adjoint identity ⟨J v, w⟩ = ⟨v, Jᵀ w⟩: both sides are sums of the same
//    products a_ij v_j w_i in different orders, so they differ by at most
//    about 2 n ε |w|ᵀ|J||v| (the inner-product error bound γ_n of
//    N.J. Higham, "Accuracy and Stability of Numerical Algorithms", 2nd ed.,
//    SIAM 2002, §3.1, applied to each side).
//  - Preconditioner transposes: tests/test_transposed_preconditioners.cpp.
#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <atomic>
#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <limits>
#include <nkit/newton/newton_krylov_solver.hpp>
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
#include <nkit/sensitivity/adjoint_sensitivity.hpp>
#include <nkit/sensitivity/direct_sensitivity.hpp>
#include <random>
#include <string>
#include <vector>

#include "problems/heat/harmonic_face.hpp"
#include "problems/heat/region_conductivity.hpp"
#include "support/conduction_design.hpp"
#include "support/matchers.hpp"

using Catch::Matchers::Message;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;
using nkit_test::cell_temperature;
using nkit_test::check_adjoint_equals_direct;
using nkit_test::conduction_design;
using nkit_test::conduction_with_pattern_only;
using nkit_test::design_parameters;
using nkit_test::epsilon;
using nkit_test::face_mean;
using nkit_test::random_vector;
using nkit_test::solve_from_zero;
using nkit_test::square_design;
using nkit_test::tight_settings;
using nkit_test::west_heat_flux;

namespace {

/// |a − b| bound of the adjoint identity (file comment): 2 n ε |w|ᵀ|J||v|.
double identity_bound(const nkit::sparse_matrix& jacobian, const Eigen::VectorXd& v, const Eigen::VectorXd& w) {
  const Eigen::VectorXd magnitudes = jacobian.cwiseAbs() * v.cwiseAbs();
  return 2.0 * static_cast<double>(v.size()) * epsilon * w.cwiseAbs().dot(magnitudes);
}

}  // namespace

TEST_CASE("linearized transposed products satisfy the adjoint identity", "[sensitivity]") {
  const conduction_design design = square_design(6, 0.3);
  const Eigen::VectorXd p = design_parameters;
  const Eigen::Index n = design.unknowns();
  const Eigen::VectorXd v = random_vector(n, 1), w = random_vector(n, 2);

  SECTION("assembled by the problem; J·v by forward-mode AD") {
    auto problem = nkit::with_parameter_automatic_differentiation(design);
    auto fixed = nkit::at_parameters(problem, p);
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(
        tight_settings());
    const Eigen::VectorXd u = solve_from_zero(solver, fixed, n);
    Eigen::VectorXd jv, jtw;
    solver.linearized_product(fixed, v, jv);
    solver.linearized_transpose_product(fixed, w, jtw);
    const nkit::sparse_matrix& jacobian = solver.linearized_jacobian(fixed);
    // The nonsymmetry is real (β ≠ 0), so the identity is not trivially ⟨Jv, w⟩ = ⟨Jw, v⟩.
    REQUIRE((Eigen::MatrixXd(jacobian) - Eigen::MatrixXd(jacobian).transpose()).norm() > 1e-3);
    CHECK_THAT(w.dot(jv), WithinAbs(v.dot(jtw), identity_bound(jacobian, v, w)));
    // The AD product and the analytic matrix are the same operator (both exact to rounding).
    CHECK_THAT(jv, nkit_test::is_close_to(jacobian * v,
                                          4.0 * 5 * epsilon * (jacobian.cwiseAbs() * v.cwiseAbs()).maxCoeff(), 0.0));
    CHECK(solver.linearized_transposed_products() == 1);
  }

  SECTION("assembled by colored differences of jacobian_pattern(); J·v by differences") {
    conduction_with_pattern_only problem(design);
    auto fixed = nkit::at_parameters(problem, p);
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(
        tight_settings());
    const Eigen::VectorXd u = solve_from_zero(solver, fixed, n);
    Eigen::VectorXd jtw;
    solver.linearized_transpose_product(fixed, w, jtw);
    const nkit::sparse_matrix& colored = solver.linearized_jacobian(fixed);
    const Eigen::VectorXd jv = colored * v;
    CHECK_THAT(w.dot(jv), WithinAbs(v.dot(jtw), identity_bound(colored, v, w)));
    // The colored matrix is R'(u*) to forward-difference accuracy: error about
    // √ε (1 + ‖u‖) |R''| per entry (finite_difference_jacobian.hpp); 1e-6 relative to max |J| is ample.
    nkit::sparse_matrix exact;
    design.assemble_jacobian(u, p, exact);
    const double largest = Eigen::MatrixXd(exact).cwiseAbs().maxCoeff();
    CHECK((Eigen::MatrixXd(colored) - Eigen::MatrixXd(exact)).cwiseAbs().maxCoeff() <= 1e-6 * largest);
  }
}

TEST_CASE("adjoint gradients equal direct gradients to the linear tolerance", "[sensitivity]") {
  const conduction_design design = square_design(12, 0.3);
  const west_heat_flux flux{&design};
  auto problem = nkit::with_parameter_automatic_differentiation(design);

  SECTION("AD products, ILU(0)") { check_adjoint_equals_direct<nkit::ilu_zero_preconditioner>(problem, design, flux); }
  SECTION("AD products, ILUT") {
    check_adjoint_equals_direct<nkit::incomplete_lut_preconditioner>(problem, design, flux);
  }
  SECTION("AD products, Jacobi, cell temperature") {
    check_adjoint_equals_direct<nkit::jacobi_preconditioner>(problem, design, cell_temperature{design.index(6, 6)});
  }
  SECTION("difference products in p and J·v, colored-difference Jacobian, ILU(0)") {
    conduction_with_pattern_only differences(design);
    check_adjoint_equals_direct<nkit::ilu_zero_preconditioner>(differences, design, flux);
  }
  // Every other built-in preconditioner through the same check (AD products).
  SECTION("block Jacobi, blocks of 3 cells") {
    check_adjoint_equals_direct(problem, design, flux, nkit::block_jacobi_preconditioner(3));
  }
  SECTION("sparse direct (Eigen SparseLU)") {
    check_adjoint_equals_direct<nkit::sparse_direct_preconditioner>(problem, design, flux);
  }
  SECTION("additive Schwarz, ILUT and sparse direct local solves (one subdomain: serial)") {
    check_adjoint_equals_direct(problem, design, flux, nkit::additive_schwarz_preconditioner());
    check_adjoint_equals_direct(problem, design, flux,
                                nkit::additive_schwarz_preconditioner({nkit::subdomain_solver::sparse_direct}));
  }
  SECTION("inner GMRES (flexible outer GMRES, both ways)") {
    check_adjoint_equals_direct<nkit::inner_gmres_preconditioner<>>(problem, design, flux);
  }
  SECTION("field split by halves of the grid, every form, ILU(0) inside") {
    // Two invented "fields" (the west and east halves of the cells, contiguous): only the algebra is tested.
    const nkit::field_layout halves({{"west", 1}, {"east", 1}}, design.unknowns() / 2);
    for (const nkit::field_split_form form :
         {nkit::field_split_form::block_diagonal, nkit::field_split_form::block_lower_triangular,
          nkit::field_split_form::block_upper_triangular, nkit::field_split_form::schur_complement_factorization}) {
      INFO("form " << static_cast<int>(form));
      nkit::field_split_settings settings;
      settings.form = form;
      check_adjoint_equals_direct(
          problem, design, flux,
          nkit::field_split_preconditioner(
              halves, settings,
              nkit::make_inner_preconditioners(nkit::ilu_zero_preconditioner{}, nkit::ilu_zero_preconditioner{})));
    }
  }
#if NKIT_HAS_SUITESPARSE
  SECTION("UMFPACK and KLU") {
    check_adjoint_equals_direct<nkit::umfpack_direct_preconditioner>(problem, design, flux);
    check_adjoint_equals_direct<nkit::klu_direct_preconditioner>(problem, design, flux);
  }
#endif
  // BoomerAMG (hypre, MPI): tests/mpi/test_transposed_multigrid.cpp.
}

TEST_CASE("sensitivities equal central differences of nonlinear solves", "[sensitivity]") {
  conduction_design design;
  design.nx = design.ny = 10;
  design.west_variation = 0.3;
  auto problem = nkit::with_parameter_automatic_differentiation(design);
  const Eigen::VectorXd p = design_parameters;
  const west_heat_flux flux{&design};

  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(tight_settings());
  const auto solve_at = [&](const Eigen::VectorXd& parameters) {
    auto fixed = nkit::at_parameters(problem, parameters);
    Eigen::VectorXd u = Eigen::VectorXd::Zero(design.unknowns());
    REQUIRE(solver.solve(fixed, u).converged());
    return u;
  };
  // Central differences with h_j = 1e-3·|p_j|: truncation error h²|J'''|/6, about
  // 1e-6 relative for this smooth problem (third derivatives of the order of J
  // over p_j³), plus the nonlinear-solve error ‖J⁻¹‖‖R‖/h <= ~1e2 · 1e-13 / 1e-3
  // = 1e-8: a relative tolerance of 1e-5 leaves a margin of 10.
  Eigen::VectorXd differences(4);
  Eigen::MatrixXd state_differences(design.unknowns(), 4);
  for (Eigen::Index j = 0; j < 4; ++j) {
    const double h = 1e-3 * std::abs(p(j));
    Eigen::VectorXd plus = p, minus = p;
    plus(j) += h, minus(j) -= h;
    const Eigen::VectorXd u_plus = solve_at(plus), u_minus = solve_at(minus);
    differences(j) = (flux(u_plus, plus) - flux(u_minus, minus)) / (2.0 * h);
    state_differences.col(j) = (u_plus - u_minus) / (2.0 * h);
  }
  Eigen::VectorXd u = solve_at(p);
  const nkit::direct_sensitivity_result direct = nkit::direct_sensitivities(solver, problem, p, flux);
  const nkit::adjoint_sensitivity_result adjoint = nkit::adjoint_sensitivities(solver, problem, p, flux);
  CHECK_THAT(direct.gradient, nkit_test::is_close_to(differences, 1e-9, 1e-5));
  CHECK_THAT(adjoint.gradient, nkit_test::is_close_to(differences, 1e-9, 1e-5));
  // du/dp from the direct method against the same differences of the states (same
  // error budget, relative to the largest entry of each column).
  REQUIRE(direct.state_sensitivities.rows() == u.size());
  REQUIRE(direct.state_sensitivities.cols() == 4);
  for (Eigen::Index j = 0; j < 4; ++j) {
    const double scale = state_differences.col(j).cwiseAbs().maxCoeff();
    CHECK_THAT(Eigen::VectorXd(direct.state_sensitivities.col(j)),
               nkit_test::is_close_to(Eigen::VectorXd(state_differences.col(j)), 1e-5 * scale, 0.0));
  }
}

namespace {
struct kirchhoff_wall {  // the closed form of the file comment
  double k0, beta, t1, t2, length;
  double s(double xi) const {
    const double a = (1 + beta * t1) * (1 + beta * t1), b = (1 + beta * t2) * (1 + beta * t2);
    return a + (b - a) * xi;
  }
  double temperature(double xi) const { return (std::sqrt(s(xi)) - 1.0) / beta; }
  double heat_flux() const { return k0 * ((t1 - t2) + 0.5 * beta * (t1 * t1 - t2 * t2)) / length; }
  /// d/d(k0, β, S, T1) of q; the S entry is not part of the closed form (NaN: not checked).
  Eigen::Vector4d heat_flux_gradient() const {
    return {heat_flux() / k0, k0 * (t1 * t1 - t2 * t2) / (2.0 * length), std::nan(""), k0 * (1.0 + beta * t1) / length};
  }
  Eigen::Vector4d temperature_gradient(double xi) const {
    const double root = std::sqrt(s(xi));
    const double d_beta =
        (t1 * (1 + beta * t1) * (1 - xi) + t2 * (1 + beta * t2) * xi) / (beta * root) - (root - 1.0) / (beta * beta);
    return {0.0, d_beta, std::nan(""), (1 - xi) * (1 + beta * t1) / root};
  }
};

struct wall_sensitivities {
  Eigen::VectorXd flux, temperature;  ///< adjoint gradients of q and of T at mid-wall
};

wall_sensitivities wall_case(int cells, face_mean mean) {
  conduction_design design;
  design.nx = cells;
  design.ny = 1;
  design.mean = mean;
  const Eigen::Vector4d p(2.0, 0.5, 0.0, 1.0);  // k0, β, S = 0, T1; T2 = 0: our own test values
  auto problem = nkit::with_parameter_automatic_differentiation(design);
  auto fixed = nkit::at_parameters(problem, Eigen::VectorXd(p));
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> solver(
      tight_settings());
  Eigen::VectorXd u = Eigen::VectorXd::Zero(cells);
  REQUIRE(solver.solve(fixed, u).converged());
  nkit::sensitivity_settings settings;
  settings.linear_relative_tolerance = 1e-12;
  wall_sensitivities result;
  result.flux =
      nkit::adjoint_sensitivities(solver, problem, Eigen::VectorXd(p), west_heat_flux{&design}, settings).gradient;
  const cell_temperature middle{cells / 2};  // odd cell count: its centre is at x = L/2
  result.temperature = nkit::direct_sensitivities(solver, problem, Eigen::VectorXd(p), middle, settings).gradient;
  return result;
}

double largest_error(const Eigen::VectorXd& computed, const Eigen::Vector4d& exact) {
  double worst = 0.0;
  for (Eigen::Index j = 0; j < 4; ++j) {
    if (!std::isnan(exact(j))) worst = std::max(worst, std::abs(computed(j) - exact(j)));
  }
  return worst;
}
}  // namespace

TEST_CASE("sensitivities of the Kirchhoff plane wall match the closed form", "[sensitivity]") {
  const kirchhoff_wall exact{2.0, 0.5, 1.0, 0.0, 1.0};

  SECTION("arithmetic face mean: the discrete solution is exact, so are the sensitivities") {
    const wall_sensitivities computed = wall_case(9, face_mean::arithmetic);
    // Errors: the linear tolerance 1e-12 times ‖J⁻¹‖ (about (9/π)²/k0 here) and the
    // gradient norms, about 1e-11; plus, for the flux, its ∂J/∂u by central
    // differences (output_functional.hpp): rounding ε/h·|q| with h ≈ 6e-6,
    // about 2e-10 (measured 1e-10). Hence 1e-9.
    CHECK(largest_error(computed.flux, exact.heat_flux_gradient()) <= 1e-9);
    CHECK(largest_error(computed.temperature, exact.temperature_gradient(0.5)) <= 1e-9);
  }
  SECTION("harmonic face mean: second order, the error falls 9-fold from 33 to 99 cells") {
    const wall_sensitivities coarse = wall_case(33, face_mean::harmonic);
    const wall_sensitivities fine = wall_case(99, face_mean::harmonic);
    const double flux_ratio =
        largest_error(coarse.flux, exact.heat_flux_gradient()) / largest_error(fine.flux, exact.heat_flux_gradient());
    const double temperature_ratio = largest_error(coarse.temperature, exact.temperature_gradient(0.5)) /
                                     largest_error(fine.temperature, exact.temperature_gradient(0.5));
    INFO("error ratios: flux " << flux_ratio << ", temperature " << temperature_ratio);
    // Second order: ratio (99/33)² = 9, less an O(h) correction to the error
    // constant (an h³ term). Measured ratios of the largest error, flux and
    // mid-wall temperature: 8.35 and 8.01 from 11 to 33 cells, 8.78 and 8.65
    // from 33 to 99, 8.93 and 8.88 from 99 to 297: they approach 9. First
    // order would give 3, third order 27.
    CHECK_THAT(flux_ratio, WithinAbs(9.0, 0.6));
    CHECK_THAT(temperature_ratio, WithinAbs(9.0, 0.6));
    CHECK(largest_error(fine.flux, exact.heat_flux_gradient()) > 0.0);
  }
}

TEST_CASE("sensitivities reject bad input with a clear message", "[sensitivity][bad_input]") {
  const conduction_design design = square_design(4, 0.0);
  auto problem = nkit::with_parameter_automatic_differentiation(design);
  const Eigen::VectorXd p = design_parameters;
  auto fixed = nkit::at_parameters(problem, p);
  const west_heat_flux flux{&design};

  SECTION("no solve yet") {
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver;
    CHECK_THROWS_MATCHES(nkit::direct_sensitivities(solver, problem, p, flux), std::invalid_argument,
                         Message("nkit: direct_sensitivities needs the state of a converged Newton solve, but the "
                                 "last solve has not finished"));
  }
  SECTION("unconverged state") {
    nkit::newton_settings settings = tight_settings();
    settings.newton_step_budget = 1;
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
    Eigen::VectorXd u = Eigen::VectorXd::Zero(design.unknowns());
    REQUIRE_FALSE(solver.solve(fixed, u).converged());
    CHECK_THROWS_MATCHES(nkit::adjoint_sensitivities(solver, problem, p, flux), std::invalid_argument,
                         Message("nkit: adjoint_sensitivities needs the state of a converged Newton solve, but the "
                                 "last solve stopped with newton_step_budget_spent"));
    Eigen::VectorXd x;
    CHECK_THROWS_MATCHES(solver.linearized_solve(fixed, u, x, 1e-8), std::invalid_argument,
                         Message("nkit: linearized_solve needs a converged Newton solve, but the last one stopped "
                                 "with newton_step_budget_spent"));
  }

  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(tight_settings());
  solve_from_zero(solver, fixed, design.unknowns());

  SECTION("parameter vector of the wrong size") {
    const Eigen::VectorXd short_p = p.head(3);
    CHECK_THROWS_MATCHES(nkit::direct_sensitivities(solver, problem, short_p, flux), std::invalid_argument,
                         Message("nkit: direct_sensitivities: the parameter vector p has 3 entries but the "
                                 "problem's parameter_count() is 4"));
    CHECK_THROWS_MATCHES(nkit::adjoint_sensitivities(solver, problem, Eigen::VectorXd(), flux), std::invalid_argument,
                         Message("nkit: adjoint_sensitivities: the parameter vector p is empty"));
  }
  SECTION("linear tolerance out of range") {
    nkit::sensitivity_settings settings;
    settings.linear_relative_tolerance = 0.0;
    CHECK_THROWS_MATCHES(nkit::direct_sensitivities(solver, problem, p, flux, settings), std::invalid_argument,
                         Message("nkit: sensitivity_settings.linear_relative_tolerance must be in (0, 1) (got 0)"));
  }
  SECTION("vector of the wrong size for a linearized solve") {
    Eigen::VectorXd x, rhs = Eigen::VectorXd::Ones(3);
    CHECK_THROWS_MATCHES(solver.linearized_solve(fixed, rhs, x, 1e-8), std::invalid_argument,
                         Message("nkit: linearized_solve got a vector of 3 entries but the state has 16"));
  }
}

TEST_CASE("sensitivities with variable and residual scaling equal those without", "[sensitivity]") {
  conduction_design design;
  design.nx = design.ny = 8;
  design.west_variation = 0.3;
  auto problem = nkit::with_parameter_automatic_differentiation(design);
  const Eigen::VectorXd p = design_parameters;
  auto fixed = nkit::at_parameters(problem, p);
  const west_heat_flux flux{&design};
  const Eigen::Index n = design.unknowns();
  Eigen::VectorXd variable_scale(n), residual_scale(n);
  for (Eigen::Index i = 0; i < n; ++i) {  // our own values, spread over two decades each
    variable_scale(i) = std::pow(10.0, static_cast<double>(i % 3) - 1.0);
    residual_scale(i) = std::pow(10.0, 1.0 - static_cast<double>(i % 5) / 2.0);
  }
  using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner>;
  solver_type plain(tight_settings()), scaled(tight_settings());
  scaled.set_scaling(variable_scale, residual_scale);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n), u_scaled = Eigen::VectorXd::Zero(n);
  REQUIRE(plain.solve(fixed, u).converged());
  REQUIRE(scaled.solve(fixed, u_scaled).converged());
  // converged_state() is physical: both states solve R = 0 to ~1e-13, so they
  // agree to ‖J⁻¹‖·1e-13 (‖J⁻¹‖ ≈ 10² here).
  CHECK_THAT(scaled.converged_state(), nkit_test::is_close_to(u, 1e-10, 0.0));
  CHECK_THAT(scaled.converged_state(), nkit_test::is_close_to(u_scaled, 0.0, 0.0));

  nkit::sparse_matrix jacobian;
  design.assemble_jacobian(u, p, jacobian);
  const Eigen::VectorXd v = random_vector(n, 7), w = random_vector(n, 8);
  Eigen::VectorXd jv, jtw;
  scaled.linearized_product(fixed, v, jv);
  scaled.linearized_transpose_product(fixed, w, jtw);
  // Physical products: the same operator as the unscaled Jacobian, to rounding
  // (scaling adds one multiplication and one division per entry: factor 4 on the bound).
  CHECK_THAT(jv, nkit_test::is_close_to(jacobian * v,
                                        4.0 * 5 * epsilon * (jacobian.cwiseAbs() * v.cwiseAbs()).maxCoeff(), 0.0));
  CHECK_THAT(w.dot(jv), WithinAbs(v.dot(jtw), 4.0 * identity_bound(jacobian, v, w)));

  nkit::sensitivity_settings settings;
  settings.linear_relative_tolerance = 1e-12;
  const auto plain_direct = nkit::direct_sensitivities(plain, problem, p, flux, settings);
  const auto plain_adjoint = nkit::adjoint_sensitivities(plain, problem, p, flux, settings);
  const auto scaled_direct = nkit::direct_sensitivities(scaled, problem, p, flux, settings);
  const auto scaled_adjoint = nkit::adjoint_sensitivities(scaled, problem, p, flux, settings);
  // Each gradient is within ‖J̃⁻¹‖₂ η ‖D_u ∂J/∂u‖ ‖D_r⁻¹ R_p e_j‖ of the exact one
  // (J̃ = D_r⁻¹ J D_u, η the linear tolerance; D = I unscaled); the two states add
  // about 1e-11 (above) times |∂²J| = O(1).
  const Eigen::MatrixXd dense(jacobian);
  const Eigen::MatrixXd scaled_dense = residual_scale.cwiseInverse().asDiagonal() * dense * variable_scale.asDiagonal();
  const double inverse = 1.0 / Eigen::JacobiSVD<Eigen::MatrixXd>(dense).singularValues().tail(1)(0);
  const double scaled_inverse = 1.0 / Eigen::JacobiSVD<Eigen::MatrixXd>(scaled_dense).singularValues().tail(1)(0);
  Eigen::VectorXd state_gradient(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    Eigen::VectorXd plus = u, minus = u;
    plus(i) += 1e-6, minus(i) -= 1e-6;
    state_gradient(i) = (flux(plus, p) - flux(minus, p)) / 2e-6;
  }
  for (Eigen::Index j = 0; j < 4; ++j) {
    Eigen::VectorXd column(n);
    problem.parameter_product(u, p, Eigen::VectorXd::Unit(4, j), column);
    const double bound = inverse * settings.linear_relative_tolerance * state_gradient.norm() * column.norm() +
                         scaled_inverse * settings.linear_relative_tolerance *
                             variable_scale.cwiseProduct(state_gradient).norm() *
                             residual_scale.cwiseInverse().cwiseProduct(column).norm() +
                         1e-10;
    CHECK_THAT(scaled_direct.gradient(j), WithinAbs(plain_direct.gradient(j), bound));
    CHECK_THAT(scaled_adjoint.gradient(j), WithinAbs(plain_adjoint.gradient(j), bound));
  }
}

TEST_CASE("a budget of the Newton solver stops sensitivities without an exception", "[sensitivity][budgets]") {
  // The cancellation flag, raised after the converged solve: every linearized
  // call stops at its first check; products give NaN, solves report it.
  const conduction_design design = square_design(4, 0.0);
  conduction_with_pattern_only problem(design);  // differences: every J·v evaluates the residual
  const Eigen::VectorXd p = design_parameters;
  auto fixed = nkit::at_parameters(problem, p);
  const west_heat_flux flux{&design};
  std::atomic<bool> cancel{false};
  nkit::newton_settings settings = tight_settings();
  settings.cancellation_flag = &cancel;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
  Eigen::VectorXd u = solve_from_zero(solver, fixed, design.unknowns());
  cancel = true;
  const nkit::direct_sensitivity_result direct = nkit::direct_sensitivities(solver, problem, p, flux);
  CHECK_FALSE(direct.report.linear_solves_converged);
  CHECK(direct.report.stopped_by == nkit::stop_reason::cancellation_flag_raised);
  CHECK(direct.gradient.hasNaN());
  const nkit::adjoint_sensitivity_result adjoint = nkit::adjoint_sensitivities(solver, problem, p, flux);
  CHECK_FALSE(adjoint.report.linear_solves_converged);
  CHECK(adjoint.report.stopped_by == nkit::stop_reason::cancellation_flag_raised);
  Eigen::VectorXd out;
  solver.linearized_product(fixed, u, out);
  CHECK(out.hasNaN());
  CHECK(solver.linearized_stop_reason() == nkit::stop_reason::cancellation_flag_raised);
  // A new run starts afresh.
  cancel = false;
  u.setZero();
  REQUIRE(solver.solve(fixed, u).converged());
  CHECK_FALSE(solver.linearized_stop_reason().has_value());
  CHECK(nkit::direct_sensitivities(solver, problem, p, flux).report.linear_solves_converged);
}

TEST_CASE("adjoint sensitivities need a transposable preconditioner", "[sensitivity][bad_input]") {
  const conduction_design design = square_design(4, 0.0);
  auto problem = nkit::with_parameter_automatic_differentiation(design);
  const Eigen::VectorXd p = design_parameters;
  auto fixed = nkit::at_parameters(problem, p);
  const west_heat_flux flux{&design};
  auto plain = nkit::make_preconditioner([](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = r; });
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, decltype(plain)> solver(tight_settings(), {}, plain);
  solve_from_zero(solver, fixed, design.unknowns());
  // Direct sensitivities need no transpose.
  CHECK(nkit::direct_sensitivities(solver, problem, p, flux).report.linear_solves_converged);
  CHECK_THROWS_MATCHES(
      nkit::adjoint_sensitivities(solver, problem, p, flux), std::invalid_argument,
      Message("nkit: the Newton solver's preconditioner has no apply_transpose(r, z), which the transposed (adjoint) "
              "solve needs; give it one, or use one of nkit's preconditioners (all have it)"));
}

// Cost figures quoted in docs/sensitivities.md (hidden: run by hand,
// `nkit_sensitivity_tests "[.sensitivity_cost]"`). Work unit: the median time
// of one residual evaluation in the Newton solve of the same run.
TEST_CASE("cost of sensitivities in work units", "[.sensitivity_cost]") {
  conduction_design design;
  design.nx = design.ny = 128;
  design.west_variation = 0.3;
  const Eigen::VectorXd p = design_parameters;
  const Eigen::Index n = design.unknowns();
  auto ad_problem = nkit::with_parameter_automatic_differentiation(design);
  conduction_with_pattern_only difference_problem(design);
  const west_heat_flux flux{&design};
  const auto per_call = [](int calls, auto&& call) {
    const auto start = std::chrono::steady_clock::now();
    for (int c = 0; c < calls; ++c) call();
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count() / calls;
  };
  const auto print = [](const char* what, double seconds, double unit) {
    std::printf("%-58s %10.3e s %8.2f work units\n", what, seconds, seconds / unit);
  };

  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  settings.linear.restart_length = 50;  // the sensitivity solves reach 1e-10: more room than the defaults
  settings.linear.maximum_iterations = 3000;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
  auto fixed = nkit::at_parameters(ad_problem, p);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
  const nkit::solve_report newton = solver.solve(fixed, u);
  REQUIRE(newton.converged());
  const double unit = newton.median_residual_seconds;
  std::printf("conduction design problem, %d x %d cells (%ld unknowns), ILU(0), p = (k0, beta, S, T_west)\n", design.nx,
              design.ny, static_cast<long>(n));
  print("one residual evaluation (the work unit)", unit, unit);
  print("Newton solve to 1e-10 relative (AD J.v)", newton.wall_seconds, unit);
  std::printf("Newton solve: %d steps, %lld linear iterations\n", newton.newton_steps,
              static_cast<long long>(newton.linear_iterations));

  const nkit::direct_sensitivity_result direct = nkit::direct_sensitivities(solver, ad_problem, p, flux);
  const nkit::adjoint_sensitivity_result adjoint = nkit::adjoint_sensitivities(solver, ad_problem, p, flux);
  for (const nkit::sensitivity_report* report : {&direct.report, &adjoint.report}) {
    std::printf(
        "%s sensitivities, 4 parameters: %.3e s = %.1f work units; linear solves %d, linear iterations %lld, "
        "J.v %lld, J^T.w %lld, dR/dp.dp %lld, residual evaluations %lld, assemblies %lld\n",
        report->method == nkit::sensitivity_method::direct ? "direct" : "adjoint", report->wall_seconds,
        report->work_units(), report->linear_solves, static_cast<long long>(report->linear_iterations),
        static_cast<long long>(report->jacobian_vector_products), static_cast<long long>(report->transposed_products),
        static_cast<long long>(report->parameter_products), static_cast<long long>(report->residual_evaluations),
        static_cast<long long>(report->jacobian_assemblies));
  }
  const Eigen::VectorXd v = random_vector(n, 5);
  Eigen::VectorXd out(n);
  print("J.v by forward-mode AD", per_call(50, [&] { solver.linearized_product(fixed, v, out); }), unit);
  print("J^T.w, assembled Jacobian (after assembly)",
        per_call(50, [&] { solver.linearized_transpose_product(fixed, v, out); }), unit);
  Eigen::VectorXd dp = Eigen::VectorXd::Unit(4, 1);
  print("dR/dp.dp by forward-mode AD", per_call(50, [&] { ad_problem.parameter_product(u, p, dp, out); }), unit);
  Eigen::VectorXd r0(n);
  design(u, p, r0);
  nkit::detail::parameter_derivative<conduction_with_pattern_only> difference(nkit::jacobian_settings{});
  print("dR/dp.dp by forward differences",
        per_call(50, [&] { difference.apply(difference_problem, u, p, r0, dp, out); }), unit);
  nkit::ilu_zero_preconditioner& ilu = solver.preconditioner();
  print("ILU(0) apply", per_call(50, [&] { ilu.apply(v, out); }), unit);
  print("ILU(0) apply_transpose", per_call(50, [&] { ilu.apply_transpose(v, out); }), unit);

  CHECK(direct.report.linear_solves_converged);
  CHECK(adjoint.report.linear_solves_converged);
}

TEST_CASE("the region-conductivity benchmark problem: AD and analytic Jacobians agree, gradients match differences",
          "[sensitivity]") {
  // problems/heat/region_conductivity.hpp, small: 12 × 12 cells, 2 × 3 regions (invented data).
  auto problem = nkit::with_parameter_automatic_differentiation(nkit_problems::region_conductivity(12, 2, 3));
  const Eigen::Index n = problem.residual().unknowns();
  REQUIRE(problem.residual().parameter_count() == 6);
  Eigen::VectorXd p(6);
  for (Eigen::Index j = 0; j < 6; ++j) p(j) = 1.0 + 0.5 * std::sin(static_cast<double>(j));
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(tight_settings());
  auto fixed = nkit::at_parameters(problem, p);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
  REQUIRE(solver.solve(fixed, u).converged());

  nkit::sparse_matrix jacobian;
  problem.assemble_jacobian(u, p, jacobian);
  const Eigen::VectorXd v = random_vector(n, 21);
  Eigen::VectorXd jv;
  problem.jacobian_product(u, p, v, jv);
  // Both exact to rounding: a few ε times the magnitudes summed per row (5 entries).
  CHECK_THAT(jv, nkit_test::is_close_to(jacobian * v,
                                        4.0 * 5 * epsilon * (jacobian.cwiseAbs() * v.cwiseAbs()).maxCoeff(), 0.0));

  const nkit_problems::region_conductivity::mean_temperature output;
  const Eigen::VectorXd adjoint = nkit::adjoint_sensitivities(solver, problem, p, output).gradient;
  // Central differences of whole solves, h_j = 1e-3 p_j: error O(h²) ≈ 1e-6
  // relative plus solve error ‖J⁻¹‖‖R‖/h ≈ 1e-8, as in the test above; 1e-5 relative.
  Eigen::VectorXd differences(6);
  for (Eigen::Index j = 0; j < 6; ++j) {
    const double h = 1e-3 * p(j);
    double values[2];
    for (int side = 0; side < 2; ++side) {
      Eigen::VectorXd shifted = p;
      shifted(j) += side == 0 ? h : -h;
      auto at_shifted = nkit::at_parameters(problem, shifted);
      Eigen::VectorXd w = u;
      REQUIRE(solver.solve(at_shifted, w).converged());
      values[side] = output(w, shifted);
    }
    differences(j) = (values[0] - values[1]) / (2.0 * h);
  }
  CHECK_THAT(adjoint, nkit_test::is_close_to(differences, 1e-9, 1e-5));
}
