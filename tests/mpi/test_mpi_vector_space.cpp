// The MPI vector space: global reductions on the user's communicator, the
// fused dot_many, the collective any_of, and the communication counts that
// docs/scaling_model.md relies on. Runs on any number of ranks.
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <nkit/core/eigen_vector_space.hpp>
#include <nkit/distributed/mpi_vector_space.hpp>
#include <nkit/distributed/row_partition.hpp>
#include <nkit/jacobian/finite_difference_jacobian.hpp>
#include <nkit/krylov/gmres.hpp>
#include <vector>

#include "mpi/mpi_support.hpp"
#include "support/matchers.hpp"

using nkit_test::gather_all;
using nkit_test::local_slice;

static_assert(nkit::is_vector_space_v<nkit::mpi_vector_space>);
static_assert(nkit::detail::has_dot_many<nkit::mpi_vector_space>::value);
static_assert(nkit::detail::has_any_of<nkit::mpi_vector_space>::value);

namespace {
Eigen::VectorXd global_test_vector(int n, double shift) {
  Eigen::VectorXd v(n);
  for (int i = 0; i < n; ++i) v(i) = std::sin(0.37 * i + shift) + 0.1 * shift;
  return v;
}
}  // namespace

TEST_CASE("MPI space reductions equal the serial reductions of the whole vector", "[mpi][space]") {
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const nkit::eigen_vector_space<double> serial;
  const int n = GENERATE(1, 7, 1000);
  if (n < nkit_test::world_size()) return;  // every rank needs an entry for the NaN check below
  const Eigen::VectorXd x_global = global_test_vector(n, 0.0), y_global = global_test_vector(n, 1.0);
  const Eigen::VectorXd x = local_slice(MPI_COMM_WORLD, x_global), y = local_slice(MPI_COMM_WORLD, y_global);

  // Reference: Eigen's serial reductions of the gathered vector. Only the
  // summation order differs, so the relative difference is a few n·ε
  // (standard floating-point summation bound, Higham 2002, §4.2).
  const double order_bound = 4.0 * n * std::numeric_limits<double>::epsilon();
  CHECK_THAT(space.dot(x, y), Catch::Matchers::WithinAbs(serial.dot(x_global, y_global),
                                                         order_bound * x_global.norm() * y_global.norm()));
  CHECK_THAT(space.norm(x), Catch::Matchers::WithinRel(serial.norm(x_global), order_bound));
  CHECK(space.global_size(x) == n);
  CHECK(gather_all(MPI_COMM_WORLD, x) == x_global);

  const nkit::row_partition partition = nkit::row_partition_of(space, x);
  CHECK(partition.global_rows == n);
  CHECK(partition.local_rows == x.size());
  CHECK(x_global.segment(partition.first_row, partition.local_rows) == x);

  // A NaN on the last rank only is seen by every rank.
  Eigen::VectorXd z = x;
  if (nkit_test::world_rank() == nkit_test::world_size() - 1) z(z.size() - 1) = std::nan("");
  CHECK_FALSE(space.all_finite(z));
  CHECK(space.all_finite(x));
}

TEST_CASE("bound ratio tests and bound checks are global", "[mpi][space]") {
  // Reference: the serial space on the whole vectors (the definition of the
  // ratio test: the smallest distance to the bound each d_i points at, over
  // |d_i|). Exact: a minimum of the same quotients, no rounding differs.
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const nkit::eigen_vector_space<double> serial;
  const int n = 50;
  const Eigen::VectorXd x_global = 0.5 * global_test_vector(n, 0.0);
  const Eigen::VectorXd d_global = global_test_vector(n, 1.0);
  const Eigen::VectorXd lower_global = Eigen::VectorXd::Constant(n, -1.0);
  Eigen::VectorXd upper_global = Eigen::VectorXd::Constant(n, 1.0);
  upper_global(n - 1) = x_global(n - 1) + 1e-3 * std::abs(d_global(n - 1));  // the binding bound is on the last rank
  const auto slice = [](const Eigen::VectorXd& v) { return local_slice(MPI_COMM_WORLD, v); };
  CHECK(space.maximum_step_to_bounds(slice(x_global), slice(d_global), slice(lower_global), slice(upper_global)) ==
        serial.maximum_step_to_bounds(x_global, d_global, lower_global, upper_global));
  CHECK(space.within_bounds(slice(x_global), slice(lower_global), slice(upper_global)));
  Eigen::VectorXd outside = x_global;
  outside(n - 1) = 2.0;  // above its upper bound, on the last rank only
  CHECK_FALSE(space.within_bounds(slice(outside), slice(lower_global), slice(upper_global)));
}

TEST_CASE("dot_many does k dots in one reduction and matches dot", "[mpi][space]") {
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const Eigen::VectorXd w = local_slice(MPI_COMM_WORLD, global_test_vector(100, 2.0));
  std::vector<Eigen::VectorXd> basis;
  for (int i = 0; i < 5; ++i) basis.push_back(local_slice(MPI_COMM_WORLD, global_test_vector(100, 0.3 * i)));
  double fused[5];
  const std::int64_t before = space.reduction_count();
  space.dot_many(basis.data(), 5, w, fused);
  CHECK(space.reduction_count() - before == 1);
  for (int i = 0; i < 5; ++i) {
    // Same local partial sums, same MPI sum: equal to the separate dot up to
    // the reduction's association order (identical on 1 or 2 ranks).
    CHECK_THAT(fused[i], Catch::Matchers::WithinRel(space.dot(basis[i], w), 1e-15));
  }
  // Element-wise members never communicate.
  const std::int64_t reductions = space.reduction_count();
  Eigen::VectorXd y = w;
  space.add_scaled(2.0, w, y);
  space.combine(1.0, w, -1.0, y, y);
  space.scale(3.0, y);
  space.copy(w, y);
  space.fill(1.0, y);
  space.multiply(w, y);
  CHECK(space.reduction_count() == reductions);
}

TEST_CASE("any_of is a collective OR of rank-local facts", "[mpi][space]") {
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  CHECK(space.any_of(nkit_test::world_rank() == 0));
  CHECK(space.any_of(nkit_test::world_rank() == nkit_test::world_size() - 1));
  CHECK_FALSE(space.any_of(false));
  CHECK(nkit::any_of(space, nkit_test::world_rank() == 0));  // the driver's entry point uses it
}

TEST_CASE("the finite-difference step uses the global norm of u on every rank", "[mpi][jacobian]") {
  // δ = sqrt((1 + ‖u‖) ε) / ‖v‖ (Pernice & Walker 1998, from memory): with
  // global norms every rank gets the serial δ of the whole vectors; with a
  // rank-local norm the ranks would disagree.
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  const Eigen::VectorXd u_global = global_test_vector(400, 0.5);
  const Eigen::VectorXd u = local_slice(MPI_COMM_WORLD, u_global);
  nkit::finite_difference_jacobian<nkit::mpi_vector_space> distributed({}, space);
  nkit::finite_difference_jacobian<> serial;
  const Eigen::VectorXd r = Eigen::VectorXd::Zero(u.size()), r_global = Eigen::VectorXd::Zero(u_global.size());
  distributed.linearize_at(u, r);
  serial.linearize_at(u_global, r_global);
  const double step = distributed.step_for(1.0);
  CHECK_THAT(step, Catch::Matchers::WithinRel(serial.step_for(1.0), 1e-15));
  nkit_test::bit_hash hash;
  hash.add(step);
  CHECK(nkit_test::same_on_every_rank(MPI_COMM_WORLD, hash.value()));
}

namespace {
/// A = diag(1, 2, ..., N) distributed by rows: distinct eigenvalues, so
/// GMRES makes no early breakdown within k < N steps. No communication.
struct distributed_diagonal {
  Eigen::VectorXd diagonal;
  void apply(const Eigen::VectorXd& in, Eigen::VectorXd& out) const { out = diagonal.cwiseProduct(in); }
};

std::int64_t reductions_for(nkit::orthogonalization_method method, nkit::reorthogonalization_policy policy,
                            int iterations) {
  const nkit::mpi_vector_space space(MPI_COMM_WORLD);
  nkit::gmres_settings settings;
  settings.restart_length = iterations;
  settings.maximum_iterations = iterations;
  settings.orthogonalization = method;
  settings.reorthogonalization = policy;
  nkit::gmres_solver<nkit::mpi_vector_space> gmres(settings, space);
  distributed_diagonal op{local_slice(MPI_COMM_WORLD, Eigen::VectorXd::LinSpaced(200, 1.0, 200.0))};
  const Eigen::VectorXd b = local_slice(MPI_COMM_WORLD, Eigen::VectorXd::Ones(200));
  Eigen::VectorXd x = Eigen::VectorXd::Zero(b.size());
  nkit::identity_preconditioner identity;
  const std::int64_t before = space.reduction_count();
  const auto result = gmres.solve(op, identity, b, x, 0.0, nkit::initial_guess::zero);
  CHECK(result.iterations == iterations);
  return space.reduction_count() - before;
}
}  // namespace

TEST_CASE("GMRES reductions per Arnoldi step: modified vs classical Gram-Schmidt twice", "[mpi][gmres]") {
  // Arnoldi step j (0-based) orthogonalises against j+1 vectors. Modified
  // Gram–Schmidt needs one reduction per projection plus the norm: j + 2;
  // classical Gram–Schmidt applied twice needs two fused reductions plus the
  // norm: 3 (Y. Saad, Iterative Methods for Sparse Linear Systems, 2nd ed.,
  // SIAM 2003, §6.3, Algorithms 6.1–6.2; from memory). GMRES adds one
  // reduction for ‖b‖ at the start.
  const int k = 20;
  CHECK(reductions_for(nkit::orthogonalization_method::classical_gram_schmidt_twice,
                       nkit::reorthogonalization_policy::never, k) == 1 + 3 * k);
  CHECK(reductions_for(nkit::orthogonalization_method::modified_gram_schmidt, nkit::reorthogonalization_policy::never,
                       k) == 1 + k * (k + 1) / 2 + k);
}
