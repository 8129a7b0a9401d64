// The fixed-point adapter: Newton–Krylov on R(u) = u − G(u) with the user's
// map G, against an exact check of the H-equation, Eigen's dense LU on a
// linear map, and closed-form fixed points; bounds, admissibility, budgets
// and monitors work as for a residual, and each J·v costs one G.
#include <Eigen/Dense>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/fixed_point/fixed_point_residual.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <random>
#include <stdexcept>
#include <vector>

#include "support/chandrasekhar_h_equation.hpp"
#include "support/matchers.hpp"

namespace {

using nkit_test::chandrasekhar_h_map;

/// G(u)_i = c_i − √u_i (invented for the test). Fixed point: u + √u = c, so
/// √u* = (−1 + √(1 + 4c))/2: c = 2, 6, 12 give u* = 1, 4, 9 exactly. From
/// u0 = 25 the first Newton step on R = u − G(u) lands at u ≈ −0.45, where
/// √u is undefined: the map records the smallest state it was given.
struct square_root_map {
  Eigen::VectorXd c = (Eigen::VectorXd(3) << 2.0, 6.0, 12.0).finished();
  double smallest_state = HUGE_VAL;
  long long calls = 0;
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& g) {
    ++calls;
    smallest_state = std::min(smallest_state, u.minCoeff());
    g = c - u.cwiseSqrt();
  }
};

struct admissible_square_root_map : square_root_map {
  bool is_admissible(const Eigen::VectorXd& u) const { return u.minCoeff() >= 0.0; }
};

const Eigen::VectorXd square_root_solution = (Eigen::VectorXd(3) << 1.0, 4.0, 9.0).finished();

}  // namespace

TEST_CASE("Newton-Krylov on u - G(u) solves the H-equation; each J*v and each trial costs one G", "[fixed_point]") {
  const double c = GENERATE(0.9, 0.99);
  chandrasekhar_h_map map(200, c);
  Eigen::VectorXd h = Eigen::VectorXd::Ones(200);
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-10;
  nkit::newton_krylov_solver<> solver(settings);
  auto residual = nkit::fixed_point_residual(map);  // holds `map` by reference
  const nkit::solve_report report = solver.solve(residual, h);
  INFO("c = " << c << ": " << report.message());
  REQUIRE(report.converged());
  // Exact moment relation of the discrete system (support/chandrasekhar_h_equation.hpp);
  // ‖u − G(u)‖ <= 1e-10 ‖u0 − G(u0)‖ bounds the error of H well below 1e-8.
  CHECK_THAT(map.moment(h), Catch::Matchers::WithinAbs(map.exact_moment(), 1e-8));
  // One G per residual evaluation: R(u0), one per forward-difference J·v
  // (line-search slopes included) and one per line-search trial.
  CHECK(map.calls == report.residual_evaluations);
  CHECK(residual.map_evaluations() == map.calls);
  CHECK(report.residual_evaluations ==
        1 + report.jacobian_vector_products + report.newton_steps + report.rejected_trials);
}

TEST_CASE("Newton-Krylov on a linear map u - G(u) matches Eigen's dense LU", "[fixed_point]") {
  // G(u) = (I − A) u + b: the fixed point solves A u = b (A invented, well conditioned).
  const int n = 80;
  std::mt19937 engine(5);
  std::normal_distribution<double> normal(0.0, 1.0);
  Eigen::MatrixXd a = Eigen::MatrixXd::Identity(n, n);
  Eigen::VectorXd b(n);
  for (int i = 0; i < n; ++i) {
    for (int j = 0; j < n; ++j) a(i, j) += 0.3 * normal(engine) / std::sqrt(double(n));
    b(i) = normal(engine);
  }
  auto map = [&](const Eigen::VectorXd& u, Eigen::VectorXd& g) { g.noalias() = u - a * u + b; };
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-12;
  settings.forcing.formula = nkit::forcing_term_formula::constant;
  settings.forcing.constant_value = 1e-13;
  nkit::newton_krylov_solver<> solver(settings);
  Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
  const auto report = solver.solve(nkit::fixed_point_residual(map), u);
  REQUIRE(report.converged());
  // A linear R is solved by one Newton step when GMRES meets η; the finite-difference
  // J·v of an affine map is exact up to rounding of order √ε ‖u‖ relative, so allow two.
  CHECK(report.newton_steps <= 2);
  const Eigen::VectorXd reference = a.partialPivLu().solve(b);
  // ‖A(u − u*)‖ <= 1e-12 ‖b‖ and κ(A) ≈ 4: |u − u*| <= 4e-12 ‖b‖ (‖b‖ ≈ 9).
  CHECK_THAT(u, nkit_test::is_close_to(reference, 1e-10));
}

TEST_CASE("the adapter with bounds: G is never evaluated outside them", "[fixed_point][bounds]") {
  square_root_map map;
  nkit::newton_krylov_solver<> solver;
  solver.set_bounds(Eigen::VectorXd::Zero(3), Eigen::VectorXd::Constant(3, HUGE_VAL));
  Eigen::VectorXd u = Eigen::VectorXd::Constant(3, 25.0);
  const auto report = solver.solve(nkit::fixed_point_residual(map), u);
  REQUIRE(report.converged());
  CHECK(map.smallest_state >= 0.0);
  CHECK(report.steps_shortened_by_bounds >= 1);
  // ‖R‖ <= 1e-8 ‖R(u0)‖ ≈ 6e-7 and R'(u*) >= 1: |u − u*| <= 1e-6.
  CHECK_THAT(u, nkit_test::is_close_to(square_root_solution, 1e-6));
}

TEST_CASE("the adapter forwards the map's is_admissible", "[fixed_point]") {
  admissible_square_root_map map;
  nkit::newton_krylov_solver<> solver;
  Eigen::VectorXd u = Eigen::VectorXd::Constant(3, 25.0);
  const auto report = solver.solve(nkit::fixed_point_residual(map), u);
  REQUIRE(report.converged());
  CHECK(map.smallest_state >= 0.0);
  CHECK(report.inadmissible_trials >= 1);
  CHECK_THAT(u, nkit_test::is_close_to(square_root_solution, 1e-6));
}

TEST_CASE("the adapter under budgets and monitors behaves as a residual does", "[fixed_point][budget]") {
  chandrasekhar_h_map map(100, 0.99);
  SECTION("the residual-evaluation budget counts applications of G") {
    nkit::newton_settings settings;
    settings.relative_tolerance = 1e-12;
    settings.residual_evaluation_budget = 7;
    nkit::newton_krylov_solver<> solver(settings);
    Eigen::VectorXd h = Eigen::VectorXd::Ones(100);
    const auto report = solver.solve(nkit::fixed_point_residual(map), h);
    CHECK(report.reason == nkit::stop_reason::residual_evaluation_budget_spent);
    CHECK(map.calls == 7);
    // u holds the best iterate seen: its ‖u − G(u)‖ is the reported final norm.
    Eigen::VectorXd g(100);
    map(h, g);
    CHECK_THAT((h - g).norm(), Catch::Matchers::WithinRel(report.final_residual_norm, 1e-12));
  }
  SECTION("a monitor sees every Newton step and may stop the solve") {
    nkit::newton_krylov_solver<> solver;
    Eigen::VectorXd h = Eigen::VectorXd::Ones(100);
    std::vector<double> norms;
    const auto report = solver.solve(nkit::fixed_point_residual(map), h, [&](const nkit::newton_step_record& record) {
      norms.push_back(record.residual_norm);
      return norms.size() == 2 ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
    });
    CHECK(report.reason == nkit::stop_reason::monitor_requested_stop);
    REQUIRE(norms.size() == 2);
    CHECK(norms[1] < norms[0]);
  }
  SECTION("a map that resizes its output is reported as a residual that does") {
    auto resizing = [](const Eigen::VectorXd& u, Eigen::VectorXd& g) { g = Eigen::VectorXd::Ones(u.size() + 1); };
    nkit::newton_krylov_solver<> solver;
    Eigen::VectorXd u = Eigen::VectorXd::Ones(4);
    CHECK_THROWS_WITH(solver.solve(nkit::fixed_point_residual(resizing), u),
                      "nkit: the residual changed the size of its output vector from 4 to 5; it must write into r "
                      "without resizing it");
  }
}

TEST_CASE("fixed_point_residual_of keeps lvalue maps by reference and moves rvalues", "[fixed_point]") {
  chandrasekhar_h_map map(10, 0.5);
  auto by_reference = nkit::fixed_point_residual_of(map);
  Eigen::VectorXd u = Eigen::VectorXd::Ones(10), r(10);
  by_reference(u, r);
  CHECK(map.calls == 1);
  auto by_value = nkit::fixed_point_residual_of(chandrasekhar_h_map(10, 0.5));
  by_value(u, r);
  CHECK(by_value.map().calls == 1);
  CHECK(map.calls == 1);
  // r = u − G(u) against the map called directly.
  Eigen::VectorXd g(10);
  map(u, g);
  CHECK_THAT(r, nkit_test::is_close_to(Eigen::VectorXd(u - g), 0.0));
}
