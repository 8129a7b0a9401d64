// eigen_vector_space with OpenMP (NKIT_USE_OPENMP, CMake option of the same
// name): reductions are reproducible for a given thread count and add the
// chunk results in chunk order; element-wise members equal the serial
// expressions (to a rounding of O(1) entries, 4e-15: a chunk boundary can move an entry between
// Eigen's packet and scalar paths, which may differ by fused multiply-adds on
// targets that have them). Compiled to nothing without OpenMP.
#if defined(NKIT_USE_OPENMP)
#include <omp.h>

#include <catch2/catch.hpp>
#include <cstring>
#include <nkit/core/eigen_vector_space.hpp>

#include "support/matchers.hpp"
#include "support/same_bits.hpp"

namespace {
/// Bitwise equality (WithinULP(…, 0) would treat +0 and −0 as equal).
using nkit_test::same_bits;  // support/same_bits.hpp

/// Restores the OpenMP thread count on scope exit.
struct thread_count_guard {
  int saved = omp_get_max_threads();
  ~thread_count_guard() { omp_set_num_threads(saved); }
};
}  // namespace

TEST_CASE("OpenMP reductions are reproducible for a thread count and sum chunks in order", "[space][openmp]") {
  thread_count_guard guard;
  const Eigen::Index n = 4 * nkit::detail::parallel_length_threshold + 7;  // chunks of unequal length
  Eigen::VectorXd x = Eigen::VectorXd::Random(n), y = Eigen::VectorXd::Random(n);
  x *= 1e3;  // spread magnitudes so that the summation order shows in the last bits
  const nkit::eigen_vector_space<double> space;
  const int threads = GENERATE(1, 2, 3);
  omp_set_num_threads(threads);

  const double first = space.dot(x, y);
  for (int repeat = 0; repeat < 5; ++repeat) CHECK(same_bits(space.dot(x, y), first));
  // The definition: chunk t of T is [t n / T, (t + 1) n / T), each summed
  // by Eigen, the partial sums added in chunk order (parallel_loops.hpp).
  double expected = 0.0;
  for (Eigen::Index t = 0; t < threads; ++t) {
    const Eigen::Index begin = t * n / threads, end = (t + 1) * n / threads;
    const double part = x.segment(begin, end - begin).dot(y.segment(begin, end - begin));
    expected = t == 0 ? part : expected + part;
  }
  CHECK(same_bits(first, expected));
  // Against the serial dot: another summation order of the same n terms;
  // the difference is bounded by about n·eps·Σ|x_i y_i| in the worst case,
  // in practice √n·eps (random rounding): 1e-12 of Σ|x_i y_i| holds for both.
  CHECK_THAT(first, Catch::Matchers::WithinAbs(x.dot(y), 1e-12 * (x.cwiseAbs().dot(y.cwiseAbs()))));
  CHECK_THAT(space.norm(x), Catch::Matchers::WithinRel(x.norm(), 1e-13));
  CHECK(space.all_finite(x));
  x(n - 1) = std::numeric_limits<double>::quiet_NaN();
  CHECK_FALSE(space.all_finite(x));
}

TEST_CASE("OpenMP element-wise members equal the serial expressions", "[space][openmp]") {
  thread_count_guard guard;
  omp_set_num_threads(2);
  const Eigen::Index n = 3 * nkit::detail::parallel_length_threshold + 1;
  const Eigen::VectorXd x = Eigen::VectorXd::Random(n), y = Eigen::VectorXd::Random(n);
  const Eigen::VectorXd w = Eigen::VectorXd::Random(n).array().abs() + 0.5;
  const nkit::eigen_vector_space<double> space;
  Eigen::VectorXd out(n);
  space.combine(2.0, x, -3.0, y, out);
  CHECK_THAT(out, nkit_test::is_close_to((2.0 * x - 3.0 * y).eval(), 4e-15));
  out = y;
  space.add_scaled(0.5, x, out);
  CHECK_THAT(out, nkit_test::is_close_to((y + 0.5 * x).eval(), 4e-15));
  space.copy(x, out);
  CHECK_THAT(out, nkit_test::is_close_to(x, 4e-15));
  space.scale(3.0, out);
  CHECK_THAT(out, nkit_test::is_close_to((3.0 * x).eval(), 4e-15));
  space.multiply(w, out);
  CHECK_THAT(out, nkit_test::is_close_to((3.0 * x).cwiseProduct(w).eval(), 4e-15));
  space.divide(w, out);
  CHECK_THAT(out, nkit_test::is_close_to(((3.0 * x).cwiseProduct(w)).cwiseQuotient(w).eval(), 4e-15));
  out = y;
  space.add_product(w, x, out);
  CHECK_THAT(out, nkit_test::is_close_to((y.array() + w.array() * x.array()).matrix().eval(), 4e-15));
  space.fill(7.0, out);
  CHECK_THAT(out, nkit_test::is_close_to(Eigen::VectorXd::Constant(n, 7.0), 4e-15));
}
#endif
