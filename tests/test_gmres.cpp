// GMRES against outside references: Eigen's sparse LU on random nonsymmetric
// systems, the finite-termination property, and the variants' agreement.
#include <Eigen/SparseCore>
#include <Eigen/SparseLU>
#include <catch2/catch.hpp>
#include <map>
#include <nkit/core/block_vector_space.hpp>
#include <nkit/krylov/gmres.hpp>
#include <random>
#include <utility>

#include "support/matchers.hpp"
#include "support/random_sparse_matrix.hpp"

using nkit_test::is_close_to;

namespace {

using sparse = Eigen::SparseMatrix<double>;

using nkit_test::random_sparse;  // support/random_sparse_matrix.hpp (invented test data)

/// Jacobi scaling that alternates between two factors on successive
/// applications: a preconditioner that changes between applications.
struct alternating_jacobi {
  static constexpr bool changes_between_applications = true;
  const Eigen::VectorXd* diagonal;
  int calls = 0;
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    const double factor = (calls++ % 2 == 0) ? 1.0 : 0.3;
    z = factor * r.cwiseQuotient(*diagonal);
  }
};

Eigen::VectorXd sparse_lu_solution(const sparse& a, const Eigen::VectorXd& b) {
  Eigen::SparseLU<sparse> lu(a);
  REQUIRE(lu.info() == Eigen::Success);
  return lu.solve(b);
}

}  // namespace

TEST_CASE("restarted GMRES matches Eigen's SparseLU on random nonsymmetric systems", "[gmres][slow_unoptimized]") {
  const int n = GENERATE(50, 400, 2000);
  const unsigned seed = GENERATE(1u, 2u);
  const auto variant = GENERATE(nkit::gmres_variant::standard, nkit::gmres_variant::flexible);
  const auto method = GENERATE(nkit::orthogonalization_method::modified_gram_schmidt,
                               nkit::orthogonalization_method::classical_gram_schmidt_twice);
  const sparse a = random_sparse(n, 5, 6.0, seed);
  const Eigen::VectorXd b = Eigen::VectorXd::LinSpaced(n, 1.0, 2.0);
  // One factorisation per system, shared by the four solver variants: a random
  // pattern fills in almost completely, so at n = 2000 each LU is the test's main cost.
  static std::map<std::pair<int, unsigned>, Eigen::VectorXd> references;
  auto known = references.find({n, seed});
  if (known == references.end()) known = references.emplace(std::make_pair(n, seed), sparse_lu_solution(a, b)).first;
  const Eigen::VectorXd& reference = known->second;

  nkit::gmres_settings settings;
  settings.restart_length = 20;
  settings.maximum_iterations = 2000;
  settings.variant = variant;
  settings.orthogonalization = method;
  nkit::gmres_solver<> gmres(settings);
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  Eigen::VectorXd x = Eigen::VectorXd::Zero(n);
  const double tolerance = 1e-10;
  const auto result = gmres.solve(op, none, b, x, tolerance, nkit::initial_guess::zero);
  INFO("iterations " << result.iterations << ", restarts " << result.restarts);
  REQUIRE(result.status == nkit::linear_solve_status::converged);
  // The tracked residual equals the true one (right preconditioning) up to rounding.
  const double true_residual = (b - a * x).norm();
  CHECK(true_residual <= 1.01 * tolerance * b.norm() + 1e-14 * b.norm());
  CHECK_THAT(result.final_residual_norm, Catch::Matchers::WithinRel(true_residual, 1e-4) ||
                                             Catch::Matchers::WithinAbs(true_residual, 1e-13 * b.norm()));
  // Forward error <= cond(A) · relative residual; A is diagonally dominant-ish with
  // cond ~ 10, so 1e-8 relative leaves a wide margin.
  CHECK_THAT(x, is_close_to(reference, 1e-8 * reference.lpNorm<Eigen::Infinity>(), 0.0));
}

TEST_CASE("unrestarted GMRES on an n-by-n system converges in at most n iterations", "[gmres]") {
  // Saad & Schultz (1986): GMRES without restarts terminates in at most n steps
  // in exact arithmetic. A weak diagonal makes it need (nearly) all of them.
  const int n = GENERATE(5, 12, 30);
  const sparse a = random_sparse(n, 3, 0.5, 7u);
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(n);
  nkit::gmres_settings settings;
  settings.restart_length = n;
  settings.maximum_iterations = n;
  settings.reorthogonalization = nkit::reorthogonalization_policy::always;
  nkit::gmres_solver<> gmres(settings);
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  Eigen::VectorXd x(n);
  const auto result = gmres.solve(op, none, b, x, 1e-10, nkit::initial_guess::zero);
  CHECK(result.converged());
  CHECK(result.iterations <= n);
  CHECK_THAT(x, is_close_to(sparse_lu_solution(a, b), 1e-8, 1e-8));
}

TEST_CASE("right preconditioning with the exact inverse converges in one iteration", "[gmres]") {
  const int n = 300;
  const sparse a = random_sparse(n, 4, 3.0, 11u);
  Eigen::SparseLU<sparse> lu(a);
  REQUIRE(lu.info() == Eigen::Success);
  auto exact = nkit::make_preconditioner([&](const Eigen::VectorXd& r, Eigen::VectorXd& z) { z = lu.solve(r); });
  nkit::gmres_solver<> gmres;
  nkit::matrix_operator<sparse> op(a);
  const Eigen::VectorXd b = Eigen::VectorXd::LinSpaced(n, -1.0, 1.0);
  Eigen::VectorXd x(n);
  const auto result = gmres.solve(op, exact, b, x, 1e-12, nkit::initial_guess::zero);
  CHECK(result.converged());
  CHECK(result.iterations == 1);
  CHECK((b - a * x).norm() <= 1e-11 * b.norm());
}

TEST_CASE("GMRES uses a given initial guess and reports the true initial residual", "[gmres]") {
  const sparse a = random_sparse(100, 4, 5.0, 3u);
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(100);
  const Eigen::VectorXd solution = sparse_lu_solution(a, b);
  nkit::gmres_solver<> gmres;
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  Eigen::VectorXd x = solution;  // already solved: zero iterations
  auto result = gmres.solve(op, none, b, x, 1e-8, nkit::initial_guess::given);
  CHECK(result.converged());
  CHECK(result.iterations == 0);
  CHECK(result.initial_residual_norm <= 1e-12);

  x = solution + Eigen::VectorXd::Constant(100, 1e-3);
  result = gmres.solve(op, none, b, x, 1e-12, nkit::initial_guess::given);
  CHECK_THAT(result.initial_residual_norm,
             Catch::Matchers::WithinRel((b - a * (solution + Eigen::VectorXd::Constant(100, 1e-3))).norm(), 1e-12));
  CHECK(result.converged());
}

TEST_CASE("flexible GMRES converges with a preconditioner that changes between applications", "[gmres]") {
  // The preconditioner alternates between two different Jacobi scalings; the
  // standard variant assumes a fixed M, the flexible one stores each M⁻¹v
  // (Saad 1993), so its iterate stays consistent with its residual estimate.
  const int n = 400;
  const sparse a = random_sparse(n, 4, 4.0, 5u);
  const Eigen::VectorXd diagonal = a.diagonal();
  alternating_jacobi changing{&diagonal};
  nkit::gmres_settings settings;
  settings.restart_length = 40;
  nkit::gmres_solver<> gmres(settings);
  nkit::matrix_operator<sparse> op(a);
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(n);
  Eigen::VectorXd x(n);
  const auto result = gmres.solve(op, changing, b, x, 1e-10, nkit::initial_guess::zero);
  REQUIRE(result.converged());
  CHECK((b - a * x).norm() <= 1.01e-10 * b.norm());

  // Without the trait the solver keeps the standard variant, which assumes a
  // fixed M: its final M⁻¹(V y) uses whichever scaling comes next, so the
  // true residual misses the tolerance it reported reaching.
  struct undeclared {
    alternating_jacobi inner;
    void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) { inner.apply(r, z); }
  } hidden{alternating_jacobi{&diagonal}};
  Eigen::VectorXd y(n);
  const auto standard = gmres.solve(op, hidden, b, y, 1e-10, nkit::initial_guess::zero);
  CHECK(standard.converged());  // by its own (invalid) recurrence
  CHECK((b - a * y).norm() > 1e-6 * b.norm());
}

TEST_CASE("GMRES stops cleanly on non-finite operator output and keeps a finite iterate", "[gmres]") {
  const int n = 50;
  const sparse a = random_sparse(n, 3, 4.0, 9u);
  struct poisoned {
    const sparse* a;
    int calls = 0;
    void apply(const Eigen::VectorXd& in, Eigen::VectorXd& out) {
      out = (*a) * in;
      if (++calls == 4) out(3) = std::numeric_limits<double>::quiet_NaN();
    }
  } op{&a};
  nkit::gmres_solver<> gmres;
  nkit::identity_preconditioner none;
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(n);
  Eigen::VectorXd x(n);
  const auto result = gmres.solve(op, none, b, x, 1e-12, nkit::initial_guess::zero);
  CHECK(result.status == nkit::linear_solve_status::non_finite);
  CHECK(result.iterations == 3);  // the fourth column was discarded
  CHECK(x.allFinite());
  CHECK((b - a * x).norm() < b.norm());  // three good columns still reduce the residual
}

TEST_CASE("GMRES reports an exact breakdown as convergence", "[gmres]") {
  // A = I: the Krylov space is spanned by b itself; one step is exact.
  nkit::gmres_solver<> gmres;
  const Eigen::MatrixXd identity = Eigen::MatrixXd::Identity(10, 10);
  nkit::matrix_operator<Eigen::MatrixXd> op(identity);
  nkit::identity_preconditioner none;
  const Eigen::VectorXd b = Eigen::VectorXd::LinSpaced(10, 1.0, 3.0);
  Eigen::VectorXd x(10);
  const auto result = gmres.solve(op, none, b, x, 1e-14, nkit::initial_guess::zero);
  CHECK(result.converged());
  CHECK(result.iterations == 1);
  CHECK_THAT(x, is_close_to(b, 1e-15, 1e-15));
}

TEST_CASE("GMRES detects stagnation on a singular system with b outside the range", "[gmres]") {
  // A = diag(1, 0): b = (1, 1) has no solution; the least-squares residual is 1.
  Eigen::MatrixXd a = Eigen::MatrixXd::Zero(2, 2);
  a(0, 0) = 1.0;
  nkit::gmres_solver<> gmres;
  nkit::matrix_operator<Eigen::MatrixXd> op(a);
  nkit::identity_preconditioner none;
  const Eigen::VectorXd b = Eigen::VectorXd::Ones(2);
  Eigen::VectorXd x(2);
  const auto result = gmres.solve(op, none, b, x, 1e-10, nkit::initial_guess::zero);
  CHECK_FALSE(result.converged());
  CHECK(result.status == nkit::linear_solve_status::stagnated);
  CHECK_THAT(result.final_residual_norm, Catch::Matchers::WithinAbs(1.0, 1e-12));
  CHECK(x.allFinite());
}

TEST_CASE("GMRES through the block space gives the Eigen-space solution to rounding", "[gmres][space]") {
  const int n = 500;
  const sparse a = random_sparse(n, 4, 5.0, 21u);
  const Eigen::VectorXd b = Eigen::VectorXd::LinSpaced(n, 0.5, 1.5);
  nkit::matrix_operator<sparse> op(a);
  nkit::identity_preconditioner none;
  nkit::gmres_solver<> plain;
  nkit::gmres_solver<nkit::block_vector_space> blocked(nkit::gmres_settings{}, nkit::block_vector_space(3));
  Eigen::VectorXd x_plain(n), x_blocked(n);
  const auto r1 = plain.solve(op, none, b, x_plain, 1e-10, nkit::initial_guess::zero);
  const auto r2 = blocked.solve(op, none, b, x_blocked, 1e-10, nkit::initial_guess::zero);
  CHECK(r1.iterations == r2.iterations);
  // Summation order differs, so agreement is to rounding amplified by the
  // iteration count, far below the solve tolerance.
  CHECK_THAT(x_blocked, is_close_to(x_plain, 1e-12 * x_plain.lpNorm<Eigen::Infinity>(), 0.0));
}

TEST_CASE("GMRES settings are validated with the field named", "[gmres][input]") {
  nkit::gmres_settings settings;
  settings.restart_length = 0;
  CHECK_THROWS_WITH(nkit::gmres_solver<>(settings), "nkit: gmres_settings.restart_length must be >= 1 (got 0)");
  settings.restart_length = 10;
  settings.maximum_iterations = -3;
  CHECK_THROWS_WITH(nkit::gmres_solver<>(settings), "nkit: gmres_settings.maximum_iterations must be >= 1 (got -3)");
}
