// Anderson acceleration on a linear fixed-point map against GMRES: the
// published equivalence and the published inequality.
//
// Map: g(x) = (I − A) x + b, so the fixed-point residual f(x) = g(x) − x =
// b − A x is the residual of A x = b, and GMRES (nkit's gmres_solver,
// unrestarted, no preconditioner, x0 = 0) solves the same system.
//
// (1) Equivalence. H.F. Walker & P. Ni, "Anderson acceleration for
//     fixed-point iterations", SIAM J. Numer. Anal. 49 (2011) 1715–1735,
//     show that Anderson acceleration without truncation (depth >= number of
//     iterations) and without damping (mixing 1), applied to a linear map,
//     is essentially GMRES: while GMRES does not stagnate,
//         x_{k+1}^{AA} = g(x_k^{GMRES})
//     (their linear-case theorem; its section and number are from memory).
//     Two consequences are checked iterate by iterate: the vector relation
//     itself, and that the least-squares residual ‖f_k − ΔF_k γ_k‖ of
//     Anderson's iteration k+1 — the residual of the affine combination
//     Σ α_i x_i, which is x_k^{GMRES} — equals GMRES's residual norm after k
//     iterations.
// (2) Inequality. H. De Sterck, Y. He & O.A. Krzysik, "Anderson acceleration
//     as a Krylov method with application to asymptotic convergence
//     analysis", arXiv:2109.14181 (2021): k iterations of AA(m) with finite
//     depth m cannot produce a smaller residual than k iterations of
//     unrestarted GMRES (x_k^{AA(m)} lies in x0 + K_k(A, r0), over which GMRES
//     minimises ‖b − A x‖).
//
// Tolerances: both sides are computed in double precision from orthogonal
// factorisations of the same Krylov space; A below (a random perturbation
// of I, invented test data) has singular values in about [0.4, 1.6], since
// ‖Z/√n‖₂ ≈ 2 for a square standard-normal Z (common practice), so κ(A) ≈ 4
// and their differences stay near k·κ(A)·ε·‖r0‖ ≈ 1e-14 ‖r0‖ for k <= 30
// (round-off). We allow 1e-12 ‖r0‖ absolute and, for the vector relation,
// 1e-12 ‖x*‖.
#include <Eigen/Dense>
#include <catch2/catch.hpp>
#include <limits>
#include <nkit/fixed_point/anderson_solver.hpp>
#include <nkit/krylov/gmres.hpp>
#include <random>
#include <vector>

#include "support/matchers.hpp"

namespace {

constexpr int size = 200;

struct linear_problem {
  Eigen::MatrixXd a;
  Eigen::VectorXd b;
};

/// A = I + 0.3 Z/√n, Z standard normal (invented test data): nonsymmetric,
/// eigenvalues in a disc of radius about 0.3 around 1 (circular law), far
/// from 0, so GMRES does not stagnate (the theorem's assumption).
linear_problem make_problem(unsigned seed) {
  std::mt19937 engine(seed);
  std::normal_distribution<double> normal(0.0, 1.0);
  linear_problem p{Eigen::MatrixXd::Identity(size, size), Eigen::VectorXd(size)};
  for (int i = 0; i < size; ++i) {
    for (int j = 0; j < size; ++j) p.a(i, j) += 0.3 * normal(engine) / std::sqrt(double(size));
    p.b(i) = normal(engine);
  }
  return p;
}

struct dense_operator {
  const Eigen::MatrixXd* a;
  void apply(const Eigen::VectorXd& v, Eigen::VectorXd& out) const { out.noalias() = (*a) * v; }
};

/// GMRES residual norms ‖b − A x_k‖ for k = 0 ... iterations (unrestarted, x0 = 0).
std::vector<double> gmres_residual_norms(const linear_problem& p, int iterations) {
  nkit::gmres_settings settings;
  settings.restart_length = iterations;
  settings.maximum_iterations = iterations;
  nkit::gmres_solver<> gmres(settings);
  dense_operator op{&p.a};
  nkit::identity_preconditioner none;
  Eigen::VectorXd x = Eigen::VectorXd::Zero(size);
  std::vector<double> norms{p.b.norm()};
  gmres.solve(op, none, p.b, x, 0.0, nkit::initial_guess::zero, [&](int, double relative) {
    norms.push_back(relative * p.b.norm());
    return true;
  });
  return norms;
}

/// The k-th unrestarted GMRES iterate from x0 = 0.
Eigen::VectorXd gmres_iterate(const linear_problem& p, int k) {
  if (k == 0) return Eigen::VectorXd::Zero(size);  // x0
  nkit::gmres_settings settings;
  settings.restart_length = k;
  settings.maximum_iterations = k;
  nkit::gmres_solver<> gmres(settings);
  dense_operator op{&p.a};
  nkit::identity_preconditioner none;
  Eigen::VectorXd x = Eigen::VectorXd::Zero(size);
  gmres.solve(op, none, p.b, x, 0.0, nkit::initial_guess::zero);
  return x;
}

/// g(x) = (I − A) x + b, recording every state it is evaluated at.
struct recording_linear_map {
  const linear_problem* p;
  std::vector<Eigen::VectorXd> states;
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& g) {
    states.push_back(x);
    g.noalias() = x - p->a * x + p->b;
  }
};

nkit::anderson_settings untruncated(int iterations) {
  nkit::anderson_settings settings;
  settings.depth = iterations;  // no truncation
  settings.mixing = 1.0;        // no damping
  settings.maximum_condition_number = std::numeric_limits<double>::infinity();
  settings.restart_window = 0;
  settings.relative_tolerance = 1e-15;
  settings.iteration_budget = iterations;
  return settings;
}

}  // namespace

TEST_CASE("untruncated Anderson on a linear map: least-squares residuals equal GMRES residuals iterate by iterate",
          "[anderson][gmres]") {
  const unsigned seed = GENERATE(1u, 7u);
  const int iterations = 25;
  const linear_problem p = make_problem(seed);
  recording_linear_map map{&p, {}};
  nkit::anderson_solver<> solver(untruncated(iterations));
  Eigen::VectorXd x = Eigen::VectorXd::Zero(size);
  const nkit::anderson_report report = solver.solve(map, x);
  REQUIRE(report.iterations == iterations);
  const std::vector<double> gmres = gmres_residual_norms(p, iterations);
  const double r0 = p.b.norm();
  for (int k = 0; k < iterations; ++k) {
    // Anderson iteration k+1 combines f_0 ... f_k: its least-squares residual
    // is GMRES's after k iterations (Walker & Ni 2011).
    INFO("Anderson iteration " << k + 1 << ", GMRES iteration " << k);
    CHECK_THAT(report.history[static_cast<std::size_t>(k)].least_squares_residual_norm,
               Catch::Matchers::WithinAbs(gmres[static_cast<std::size_t>(k)], 1e-12 * r0));
    CHECK(report.history[static_cast<std::size_t>(k)].depth_used == k);
  }
  // The solve itself made the linear residual small (a meaningful comparison).
  CHECK(report.final_residual_norm < 1e-8 * r0);
}

TEST_CASE("untruncated Anderson on a linear map: x_{k+1} = g(x_k of GMRES)", "[anderson][gmres]") {
  const int iterations = 20;
  const linear_problem p = make_problem(3u);
  recording_linear_map map{&p, {}};
  nkit::anderson_solver<> solver(untruncated(iterations));
  Eigen::VectorXd x = Eigen::VectorXd::Zero(size);
  solver.solve(map, x);
  // states[j] is the iterate x_j at which g was evaluated (x_0 first).
  REQUIRE(map.states.size() == static_cast<std::size_t>(iterations) + 1);
  const Eigen::VectorXd solution = p.a.partialPivLu().solve(p.b);  // Eigen's dense LU as the scale reference
  for (int k : {0, 1, 2, 5, 10, 19}) {
    const Eigen::VectorXd gmres_x = gmres_iterate(p, k);
    const Eigen::VectorXd expected = gmres_x - p.a * gmres_x + p.b;
    INFO("k = " << k);
    CHECK_THAT(map.states[static_cast<std::size_t>(k) + 1], nkit_test::is_close_to(expected, 1e-12 * solution.norm()));
  }
}

TEST_CASE("Anderson with finite depth never beats unrestarted GMRES on a linear map", "[anderson][gmres]") {
  // De Sterck, He & Krzysik (arXiv:2109.14181): ‖f(x_k^{AA(m)})‖ >= ‖r_k^{GMRES}‖.
  const int depth = GENERATE(1, 2, 3, 5);
  const int iterations = 30;
  const linear_problem p = make_problem(11u);
  recording_linear_map map{&p, {}};
  nkit::anderson_settings settings = untruncated(iterations);
  settings.depth = depth;
  nkit::anderson_solver<> solver(settings);
  Eigen::VectorXd x = Eigen::VectorXd::Zero(size);
  const nkit::anderson_report report = solver.solve(map, x);
  const std::vector<double> gmres = gmres_residual_norms(p, iterations);
  const double r0 = p.b.norm();
  int strictly_larger = 0;
  for (int k = 1; k <= report.iterations; ++k) {
    const double anderson = report.history[static_cast<std::size_t>(k) - 1].residual_norm;
    INFO("depth " << depth << ", iteration " << k);
    CHECK(anderson >= gmres[static_cast<std::size_t>(k)] - 1e-12 * r0);
    if (anderson > 1.01 * gmres[static_cast<std::size_t>(k)]) ++strictly_larger;
  }
  // Truncation loses information, so the bound is not attained everywhere.
  CHECK(strictly_larger > 0);
}
