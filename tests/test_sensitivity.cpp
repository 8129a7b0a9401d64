// Direct and adjoint sensitivities (sensitivity/), the linearized solves of
// the Newton driver they use, and the transposed preconditioners.
//
// Problem: steady conduction −∇·(k(T)∇T) = S, k = k0(1 + βT), on the unit
// square (or a 1-D wall when ny = 1) by cell-centred finite volumes, with
// parameters p = (k0, β, S, T_west): T = T_west (+ a fixed variation in y)
// on the west wall, T = 0 on the east wall, insulated south and north walls.
// Face conductivity: the harmonic mean of the two cells (the face formula of
// problems/heat/harmonic_face.hpp) or their arithmetic mean.
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
//  - Preconditioner transposes: triangular solves are backward stable
//    (Higham 2002, Theorem 8.5), so ⟨M⁻¹v, w⟩ and ⟨v, M⁻ᵀw⟩ agree to a
//    small multiple of n ε κ(M) ‖M⁻¹‖ ‖v‖ ‖w‖.
#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/incomplete_lut.hpp>
#include <nkit/preconditioners/jacobi.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/sensitivity/adjoint_sensitivity.hpp>
#include <nkit/sensitivity/direct_sensitivity.hpp>
#include <random>
#include <string>
#include <vector>

#include "problems/heat/harmonic_face.hpp"
#include "support/matchers.hpp"

using Catch::Matchers::Message;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

constexpr double pi = 3.14159265358979323846;
constexpr double epsilon = std::numeric_limits<double>::epsilon();

enum class face_mean { arithmetic, harmonic };

/// The conduction design problem of the file comment; p = (k0, β, S, T_west).
struct conduction_design {
  int nx = 8, ny = 1;
  double length = 1.0;
  double east_temperature = 0.0;
  double west_variation = 0.0;  ///< T_west(y) = p3 + west_variation · sin(πy)
  face_mean mean = face_mean::harmonic;

  Eigen::Index parameter_count() const { return 4; }
  Eigen::Index unknowns() const { return static_cast<Eigen::Index>(nx) * ny; }
  double dx() const { return length / nx; }
  double dy() const { return 1.0 / ny; }
  double y(int j) const { return (j + 0.5) * dy(); }
  Eigen::Index index(int i, int j) const { return i + static_cast<Eigen::Index>(nx) * j; }

  template <class Scalar>
  Scalar face(double g, const Scalar& tp, const Scalar& tq, const Scalar& kp, const Scalar& kq) const {
    const Scalar kf = mean == face_mean::arithmetic ? Scalar(0.5 * (kp + kq)) : Scalar(2.0 * kp * kq / (kp + kq));
    return Scalar(g * kf * (tp - tq));
  }

  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& t, const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& p,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    const auto k = [&p](const Scalar& temperature) { return Scalar(p(0) * (1.0 + p(1) * temperature)); };
    const double gx = dy() / dx(), gy = dx() / dy();
    for (Eigen::Index c = 0; c < unknowns(); ++c) r(c) = Scalar(-p(2) * dx() * dy());
    for (int j = 0; j < ny; ++j) {
      for (int i = 0; i < nx; ++i) {
        const Eigen::Index c = index(i, j);
        const Scalar kc = k(t(c));
        if (i + 1 < nx) {
          const Scalar f = face(gx, t(c), t(c + 1), kc, k(t(c + 1)));
          r(c) += f;
          r(c + 1) -= f;
        }
        if (j + 1 < ny) {
          const Scalar f = face(gy, t(c), t(c + nx), kc, k(t(c + nx)));
          r(c) += f;
          r(c + nx) -= f;
        }
        if (i == 0) {
          const Scalar wall = Scalar(p(3) + west_variation * std::sin(pi * y(j)));
          r(c) += face(2.0 * gx, t(c), wall, kc, k(wall));
        }
        if (i + 1 == nx) {
          const Scalar wall = Scalar(east_temperature);
          r(c) += face(2.0 * gx, t(c), wall, kc, k(wall));
        }
      }
    }
  }

  /// Analytic ∂R/∂u (face derivatives as in problems/heat/harmonic_face.hpp).
  template <class Matrix>
  void assemble_jacobian(const Eigen::VectorXd& t, const Eigen::VectorXd& p, Matrix& jacobian) const {
    using index_type = typename Matrix::StorageIndex;
    std::vector<Eigen::Triplet<double, index_type>> entries;
    const double dk = p(0) * p(1);
    const auto k = [&p](double temperature) { return p(0) * (1.0 + p(1) * temperature); };
    const auto derivatives = [&](double g, double tp, double tq, double dkq) {
      const double kp = k(tp), kq = k(tq);
      if (mean == face_mean::harmonic) {
        const nkit_problems::face_flux f = nkit_problems::harmonic_face(g, tp, tq, kp, kq, dk, dkq);
        return std::pair{f.derivative_p, f.derivative_q};
      }
      const double kf = 0.5 * (kp + kq);
      return std::pair{g * (0.5 * dk * (tp - tq) + kf), g * (0.5 * dkq * (tp - tq) - kf)};
    };
    const auto add = [&](Eigen::Index a, Eigen::Index b, double value) {
      entries.emplace_back(static_cast<index_type>(a), static_cast<index_type>(b), value);
    };
    const auto interior = [&](Eigen::Index c, Eigen::Index q, double g) {
      const auto [dp, dq] = derivatives(g, t(c), t(q), dk);
      add(c, c, dp), add(c, q, dq), add(q, c, -dp), add(q, q, -dq);
    };
    const double gx = dy() / dx(), gy = dx() / dy();
    for (int j = 0; j < ny; ++j) {
      for (int i = 0; i < nx; ++i) {
        const Eigen::Index c = index(i, j);
        if (i + 1 < nx) interior(c, c + 1, gx);
        if (j + 1 < ny) interior(c, c + nx, gy);
        if (i == 0) add(c, c, derivatives(2.0 * gx, t(c), p(3) + west_variation * std::sin(pi * y(j)), 0.0).first);
        if (i + 1 == nx) add(c, c, derivatives(2.0 * gx, t(c), east_temperature, 0.0).first);
      }
    }
    jacobian.resize(unknowns(), unknowns());
    jacobian.setFromTriplets(entries.begin(), entries.end());
  }
};

/// The same problem with only a sparsity pattern: the Jacobian comes from colored differences.
struct conduction_with_pattern_only {
  conduction_design problem;
  nkit::sparsity_pattern pattern;
  explicit conduction_with_pattern_only(const conduction_design& design) : problem(design) {
    nkit::sparse_matrix jacobian;
    problem.assemble_jacobian(Eigen::VectorXd::Zero(design.unknowns()), Eigen::Vector4d(1.0, 0.5, 0.0, 1.0), jacobian);
    pattern = nkit::pattern_of(jacobian);
  }
  void operator()(const Eigen::VectorXd& t, const Eigen::VectorXd& p, Eigen::VectorXd& r) const { problem(t, p, r); }
  const nkit::sparsity_pattern& jacobian_pattern() const { return pattern; }
  Eigen::Index parameter_count() const { return 4; }
};

/// Heat entering through the west wall per unit height (its gradients by differences).
struct west_heat_flux {
  const conduction_design* design;
  double operator()(const Eigen::VectorXd& t, const Eigen::VectorXd& p) const {
    const conduction_design& d = *design;
    double total = 0.0;
    for (int j = 0; j < d.ny; ++j) {
      const double wall = p(3) + d.west_variation * std::sin(pi * d.y(j));
      const Eigen::Index c = d.index(0, j);
      const auto k = [&p](double temperature) { return p(0) * (1.0 + p(1) * temperature); };
      total += d.face(2.0 * d.dy() / d.dx(), wall, t(c), k(wall), k(t(c)));
    }
    return total;
  }
};

/// The temperature of one cell, with its exact gradients.
struct cell_temperature {
  Eigen::Index cell;
  double operator()(const Eigen::VectorXd& t, const Eigen::VectorXd&) const { return t(cell); }
  void state_gradient(const Eigen::VectorXd& t, const Eigen::VectorXd&, Eigen::VectorXd& g) const {
    g = Eigen::VectorXd::Zero(t.size());
    g(cell) = 1.0;
  }
  void parameter_gradient(const Eigen::VectorXd&, const Eigen::VectorXd& p, Eigen::VectorXd& g) const {
    g = Eigen::VectorXd::Zero(p.size());
  }
};

Eigen::VectorXd random_vector(Eigen::Index n, unsigned seed) {
  std::mt19937 generator(seed);
  std::uniform_real_distribution<double> uniform(-1.0, 1.0);
  Eigen::VectorXd v(n);
  for (Eigen::Index i = 0; i < n; ++i) v(i) = uniform(generator);
  return v;
}

nkit::newton_settings tight_settings() {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-13;
  settings.absolute_tolerance = 1e-14;
  settings.linear.maximum_iterations = 1000;
  return settings;
}

/// |a − b| bound of the adjoint identity (file comment): 2 n ε |w|ᵀ|J||v|.
double identity_bound(const nkit::sparse_matrix& jacobian, const Eigen::VectorXd& v, const Eigen::VectorXd& w) {
  const Eigen::VectorXd magnitudes = jacobian.cwiseAbs() * v.cwiseAbs();
  return 2.0 * static_cast<double>(v.size()) * epsilon * w.cwiseAbs().dot(magnitudes);
}

const Eigen::Vector4d design_parameters(2.0, 0.5, 1.0, 1.0);  // k0, β, S, T_west: our own test values

}  // namespace

TEST_CASE("linearized transposed products satisfy the adjoint identity", "[sensitivity]") {
  conduction_design design;
  design.nx = design.ny = 6;
  design.west_variation = 0.3;
  const Eigen::VectorXd p = design_parameters;
  const Eigen::Index n = design.unknowns();
  const Eigen::VectorXd v = random_vector(n, 1), w = random_vector(n, 2);

  SECTION("assembled by the problem; J·v by forward-mode AD") {
    auto problem = nkit::with_parameter_automatic_differentiation(design);
    auto fixed = nkit::at_parameters(problem, p);
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(
        tight_settings());
    Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
    REQUIRE(solver.solve(fixed, u).converged());
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
    Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
    REQUIRE(solver.solve(fixed, u).converged());
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

namespace {
template <class Preconditioner>
void check_transposed_preconditioner(Preconditioner& preconditioner, const nkit::sparse_matrix& matrix) {
  REQUIRE(preconditioner.build(matrix) != nkit::setup_status::failed);
  const Eigen::Index n = matrix.rows();
  // Dense M⁻¹ column by column, for κ(M) and ‖M⁻¹‖ in the bound of the file comment.
  Eigen::MatrixXd inverse(n, n);
  Eigen::VectorXd column(n), unit = Eigen::VectorXd::Zero(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    unit(i) = 1.0;
    preconditioner.apply(unit, column);
    inverse.col(i) = column;
    unit(i) = 0.0;
  }
  const Eigen::MatrixXd m = inverse.inverse();
  const double condition = m.lpNorm<Eigen::Infinity>() * inverse.lpNorm<Eigen::Infinity>();
  for (unsigned seed = 10; seed < 13; ++seed) {
    const Eigen::VectorXd v = random_vector(n, seed), w = random_vector(n, seed + 100);
    Eigen::VectorXd forward(n), transposed(n);
    preconditioner.apply(v, forward);
    preconditioner.apply_transpose(w, transposed);
    const double bound = 8.0 * static_cast<double>(n) * epsilon * condition * inverse.norm() * v.norm() * w.norm();
    CHECK_THAT(w.dot(forward), WithinAbs(v.dot(transposed), bound));
    // A transpose that were only the forward apply would fail here: M is not symmetric.
    CHECK(std::abs(w.dot(forward) - v.dot(inverse * w)) > 100.0 * bound);
  }
}
}  // namespace

TEST_CASE("transposed preconditioners satisfy the adjoint identity", "[sensitivity][preconditioner]") {
  conduction_design design;
  design.nx = design.ny = 6;
  design.west_variation = 0.3;
  // A nonsymmetric Jacobian: at a state with large gradients, β = 0.5 makes R' nonsymmetric.
  Eigen::VectorXd state(design.unknowns());
  for (Eigen::Index i = 0; i < state.size(); ++i) state(i) = 1.0 + 2.0 * std::sin(0.7 * static_cast<double>(i));
  nkit::sparse_matrix matrix;
  design.assemble_jacobian(state, design_parameters, matrix);
  REQUIRE((Eigen::MatrixXd(matrix) - Eigen::MatrixXd(matrix).transpose()).norm() > 0.1);

  SECTION("Jacobi") {
    nkit::jacobi_preconditioner preconditioner;
    REQUIRE(preconditioner.build(matrix) == nkit::setup_status::ready);
    const Eigen::VectorXd v = random_vector(matrix.rows(), 3), w = random_vector(matrix.rows(), 4);
    Eigen::VectorXd forward, transposed;
    preconditioner.apply(v, forward);
    preconditioner.apply_transpose(w, transposed);
    CHECK_THAT(w.dot(forward), WithinAbs(v.dot(transposed), 2.0 * static_cast<double>(v.size()) * epsilon *
                                                                w.cwiseAbs().dot(forward.cwiseAbs())));
  }
  SECTION("ILU(0)") {
    nkit::ilu_zero_preconditioner preconditioner;
    check_transposed_preconditioner(preconditioner, matrix);
  }
  SECTION("relaxed ILU(0), row-sum compensation 0.5") {
    nkit::ilu_zero_preconditioner preconditioner(nkit::ilu_zero_settings{0.5});
    check_transposed_preconditioner(preconditioner, matrix);
  }
  SECTION("ILUT") {
    nkit::incomplete_lut_preconditioner preconditioner(nkit::incomplete_lut_settings{1e-2, 2});
    check_transposed_preconditioner(preconditioner, matrix);
  }
  SECTION("sparse direct (Eigen SparseLU)") {
    nkit::sparse_direct_preconditioner preconditioner;
    check_transposed_preconditioner(preconditioner, matrix);
  }
  SECTION("detection, and any_preconditioner without a transpose") {
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::ilu_zero_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::sparse_direct_preconditioner, Eigen::VectorXd>);
    STATIC_REQUIRE(nkit::has_apply_transpose_v<nkit::identity_preconditioner, Eigen::VectorXd>);
    auto lambda = nkit::make_preconditioner([](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = 2.0 * r; });
    STATIC_REQUIRE_FALSE(nkit::has_apply_transpose_v<decltype(lambda), Eigen::VectorXd>);
    nkit::any_preconditioner<> erased(lambda);
    Eigen::VectorXd r = Eigen::VectorXd::Ones(3), z(3);
    CHECK_THROWS_MATCHES(erased.apply_transpose(r, z), std::invalid_argument,
                         Message("nkit: the preconditioner held by any_preconditioner has no apply_transpose(r, z), "
                                 "which solves with the transposed Jacobian need"));
  }
}
