// The conduction design problem shared by the sensitivity tests
// (tests/test_sensitivity.cpp, tests/test_transposed_preconditioners.cpp and
// the MPI tests of the transposed multigrid cycle), its outputs, and the check
// that adjoint and direct gradients agree to the linear tolerance.
//
// Problem: steady conduction −∇·(k(T)∇T) = S, k = k0(1 + βT), on the unit
// square (or a 1-D wall when ny = 1) by cell-centred finite volumes, with
// parameters p = (k0, β, S, T_west): T = T_west (+ a fixed variation in y)
// on the west wall, T = 0 on the east wall, insulated south and north walls.
// Face conductivity: the harmonic mean of the two cells (the face formula of
// problems/heat/harmonic_face.hpp) or their arithmetic mean. With β ≠ 0 its
// Jacobian is nonsymmetric.
#ifndef NKIT_TESTS_SUPPORT_CONDUCTION_DESIGN_HPP
#define NKIT_TESTS_SUPPORT_CONDUCTION_DESIGN_HPP

#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/sensitivity/adjoint_sensitivity.hpp>
#include <nkit/sensitivity/direct_sensitivity.hpp>
#include <random>
#include <utility>
#include <vector>

#include "problems/heat/harmonic_face.hpp"

namespace nkit_test {

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

inline Eigen::VectorXd random_vector(Eigen::Index n, unsigned seed) {
  std::mt19937 generator(seed);
  std::uniform_real_distribution<double> uniform(-1.0, 1.0);
  Eigen::VectorXd v(n);
  for (Eigen::Index i = 0; i < n; ++i) v(i) = uniform(generator);
  return v;
}

inline nkit::newton_settings tight_settings() {
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-13;
  settings.absolute_tolerance = 1e-14;
  settings.linear.maximum_iterations = 1000;
  return settings;
}

inline const Eigen::Vector4d design_parameters(2.0, 0.5, 1.0, 1.0);  // k0, β, S, T_west: our own test values

/// A square design of cells × cells with the given west-wall variation.
inline conduction_design square_design(int cells, double west_variation) {
  conduction_design design;
  design.nx = design.ny = cells;
  design.west_variation = west_variation;
  return design;
}

/// Solves `fixed` (R(·, p) = 0 at fixed p) from u = 0; requires convergence; returns u*.
template <class Solver, class Fixed>
Eigen::VectorXd solve_from_zero(Solver& solver, Fixed& fixed, Eigen::Index unknowns) {
  Eigen::VectorXd u = Eigen::VectorXd::Zero(unknowns);
  REQUIRE(solver.solve(fixed, u).converged());
  return u;
}

/// ‖J⁻¹‖₂ of the Jacobian at u (dense SVD: the test grids are small).
inline double inverse_norm(const nkit::sparse_matrix& jacobian) {
  const Eigen::MatrixXd dense(jacobian);
  Eigen::JacobiSVD<Eigen::MatrixXd> svd(dense);
  return 1.0 / svd.singularValues().tail(1)(0);
}

/// Direct and adjoint gradients of one output with one preconditioner; they
/// agree to the linear tolerance η: each side's error is at most
/// ‖J⁻¹‖₂ η ‖b‖ in the solution (relative GMRES residual η), so
/// |dJ/dp_j(adjoint) − dJ/dp_j(direct)| <= ‖J⁻¹‖₂ η (‖∂J/∂u‖ ‖R_p e_j‖ + ‖R_p e_j‖ ‖∂J/∂u‖).
template <class Preconditioner, class Problem, class Functional>
void check_adjoint_equals_direct(Problem& problem, const conduction_design& design, Functional functional,
                                 Preconditioner preconditioner = {}) {
  const Eigen::VectorXd p = design_parameters;
  auto fixed = nkit::at_parameters(problem, p);
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, Preconditioner> solver(tight_settings(), {},
                                                                                      std::move(preconditioner));
  const Eigen::VectorXd u = solve_from_zero(solver, fixed, design.unknowns());
  nkit::sensitivity_settings settings;
  settings.linear_relative_tolerance = 1e-8;
  const nkit::direct_sensitivity_result direct = nkit::direct_sensitivities(solver, problem, p, functional, settings);
  const nkit::adjoint_sensitivity_result adjoint =
      nkit::adjoint_sensitivities(solver, problem, p, functional, settings);
  REQUIRE(direct.report.linear_solves_converged);
  REQUIRE(adjoint.report.linear_solves_converged);
  CHECK(direct.report.linear_solves == 4);
  CHECK(adjoint.report.linear_solves == 1);
  CHECK(direct.report.parameter_products == 4);
  CHECK(adjoint.report.parameter_products == 4);
  CHECK(adjoint.report.transposed_products >= 1);
  CHECK(direct.report.transposed_products == 0);

  nkit::sparse_matrix jacobian;
  design.assemble_jacobian(u, p, jacobian);
  const double inverse = inverse_norm(jacobian);
  Eigen::VectorXd state_gradient = Eigen::VectorXd::Zero(u.size());
  for (Eigen::Index i = 0; i < u.size(); ++i) {  // ∂J/∂u by central differences, only for the bound
    Eigen::VectorXd plus = u, minus = u;
    plus(i) += 1e-6, minus(i) -= 1e-6;
    state_gradient(i) = (functional(plus, p) - functional(minus, p)) / 2e-6;
  }
  auto exact = nkit::with_parameter_automatic_differentiation(design);
  for (Eigen::Index j = 0; j < 4; ++j) {
    Eigen::VectorXd column(u.size());
    exact.parameter_product(u, p, Eigen::VectorXd::Unit(4, j), column);
    const double bound = 2.0 * inverse * settings.linear_relative_tolerance * state_gradient.norm() * column.norm();
    CHECK_THAT(adjoint.gradient(j),
               Catch::Matchers::WithinAbs(direct.gradient(j), bound + 1e-12 * std::abs(direct.gradient(j))));
  }
}

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_CONDUCTION_DESIGN_HPP
