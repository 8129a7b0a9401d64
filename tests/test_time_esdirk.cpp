// The TR-BDF2 tableau of include/nkit/time/esdirk_tableau.hpp against the
// Runge–Kutta order conditions (J.C. Butcher, Numerical Methods for Ordinary
// Differential Equations, 2nd ed., Wiley (2008), §31/§32: Σb = 1, Σbc = 1/2,
// Σbc² = 1/3, Σb(Ac) = 1/6) and its stability function at infinity
// (L-stability: R(∞) = 0 for a stiffly accurate method with nonsingular
// implicit part, Hairer & Wanner II, §IV.3 and Prop. IV.3.8; checked here by
// evaluating R(z) = 1 + z bᵀ(I − zA)⁻¹1 directly). Coefficients: Hosea &
// Shampine (1996), Appl. Numer. Math. 20, 21–37.
#include <Eigen/Dense>
#include <catch2/catch.hpp>
#include <cmath>
#include <complex>
#include <nkit/time/esdirk_tableau.hpp>

namespace {

struct tableau_matrices {
  Eigen::MatrixXd a;
  Eigen::VectorXd b, b_hat, c;
};

tableau_matrices matrices(const nkit::esdirk_tableau& t) {
  tableau_matrices m;
  m.a = Eigen::MatrixXd::Zero(t.stages, t.stages);
  m.b.resize(t.stages);
  m.b_hat.resize(t.stages);
  m.c.resize(t.stages);
  for (int i = 0; i < t.stages; ++i) {
    for (int j = 0; j < t.stages; ++j) m.a(i, j) = t.a[i][j];
    m.b(i) = t.b[i];
    m.b_hat(i) = t.b_embedded[i];
    m.c(i) = t.c[i];
  }
  return m;
}

/// R(z) = 1 + z bᵀ (I − zA)⁻¹ 1.
double stability(const tableau_matrices& m, const Eigen::VectorXd& weights, double z) {
  const Eigen::Index s = m.a.rows();
  const Eigen::MatrixXd system = Eigen::MatrixXd::Identity(s, s) - z * m.a;
  return 1.0 + z * weights.dot(system.partialPivLu().solve(Eigen::VectorXd::Ones(s)));
}

}  // namespace

TEST_CASE("TR-BDF2 tableau satisfies the order conditions of its two rows", "[time][esdirk]") {
  const nkit::esdirk_tableau t = nkit::tr_bdf2_tableau();
  const tableau_matrices m = matrices(t);
  const double eps = 1e-15;  // exact rationals of √2: round-off only
  // Row sums equal the nodes (c = A·1): the stage times.
  CHECK_THAT((m.a.rowwise().sum() - m.c).cwiseAbs().maxCoeff(), Catch::Matchers::WithinAbs(0.0, eps));
  const Eigen::VectorXd ac = m.a * m.c;
  // Second order for b.
  CHECK_THAT(m.b.sum(), Catch::Matchers::WithinAbs(1.0, eps));
  CHECK_THAT(m.b.dot(m.c), Catch::Matchers::WithinAbs(0.5, eps));
  // b is not third order (else the estimate would vanish): Σbc² ≠ 1/3.
  CHECK(std::abs(m.b.dot(m.c.cwiseProduct(m.c)) - 1.0 / 3.0) > 1e-3);
  // Third order for b̂.
  CHECK_THAT(m.b_hat.sum(), Catch::Matchers::WithinAbs(1.0, eps));
  CHECK_THAT(m.b_hat.dot(m.c), Catch::Matchers::WithinAbs(0.5, eps));
  CHECK_THAT(m.b_hat.dot(m.c.cwiseProduct(m.c)), Catch::Matchers::WithinAbs(1.0 / 3.0, eps));
  CHECK_THAT(m.b_hat.dot(ac), Catch::Matchers::WithinAbs(1.0 / 6.0, eps));
  // Stiffly accurate: b equals the last row of A, and γ = 2 − √2 on the diagonal.
  for (int j = 0; j < t.stages; ++j) CHECK(m.b(j) == m.a(t.stages - 1, j));
  CHECK_THAT(t.gamma(), Catch::Matchers::WithinAbs((2.0 - std::sqrt(2.0)) / 2.0, eps));
}

TEST_CASE("TR-BDF2 is L-stable: |R(z)| <= 1 on the negative axis and R(-inf) = 0", "[time][esdirk]") {
  const tableau_matrices m = matrices(nkit::tr_bdf2_tableau());
  for (double z = -1e-3; z > -1e8; z *= 1.7) CHECK(std::abs(stability(m, m.b, z)) <= 1.0);
  // R(∞) = 0 (Hosea & Shampine): |R(z)| decays like C/|z| (evaluated where
  // the cancellation in 1 + z·bᵀ(I − zA)⁻¹1 is still far below the values).
  const double r4 = std::abs(stability(m, m.b, -1e4)), r6 = std::abs(stability(m, m.b, -1e6));
  CHECK(r6 < 1e-4);
  CHECK(r6 < 0.02 * r4);
  // Small z: R(z) − e^z = O(z³) for a second-order method.
  const double z = 1e-2;
  CHECK(std::abs(stability(m, m.b, z) - std::exp(z)) < 1e-5);
}
