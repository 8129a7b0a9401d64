// Transposed products R'(u)ᵀ w by reverse-mode AD with ADOL-C
// (sensitivity/reverse_mode_product.hpp), on the conduction design problem of
// tests/support/conduction_design.hpp at fixed parameters (nonsymmetric R').
// Built only when ADOL-C is found (NKIT_WITH_ADOLC).
//
// Checks and their sources:
//  - Adjoint identity ⟨J v, w⟩ = ⟨v, Jᵀ w⟩ with J v from nkit's forward-mode
//    AD: both products are exact to rounding, each entry a sum of at most 5
//    products per row (column), so the two sides differ by at most about
//    2 n ε |w|ᵀ|J||v| per product (the inner-product bound γ_n of N.J. Higham,
//    "Accuracy and Stability of Numerical Algorithms", 2nd ed., SIAM 2002,
//    §3.1); allowed: 4 times that.
//  - Jᵀ w entry by entry against the analytic Jacobian's transpose:
//    within 20 ε (|J|ᵀ|w|)_i (the same bound for 5 terms, doubled).
//  - Retape policy: after record(u2) the product is R'(u2)ᵀ w, not R'(u1)ᵀ w.
#include <Eigen/SparseCore>
#include <algorithm>
#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <nkit/sensitivity/reverse_mode_product.hpp>
#include <vector>

#include "support/conduction_design.hpp"
#include "support/matchers.hpp"

using Catch::Matchers::Message;
using Catch::Matchers::WithinAbs;
using nkit_test::epsilon;
using nkit_test::random_vector;

namespace {

/// The design problem's residual at fixed parameters, templated on the scalar.
struct design_at_fixed_parameters {
  const nkit_test::conduction_design* design;
  Eigen::Vector4d parameters;
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    Eigen::Matrix<Scalar, Eigen::Dynamic, 1> p(4);
    for (Eigen::Index j = 0; j < 4; ++j) p(j) = Scalar(parameters(j));
    (*design)(u, p, r);
  }
};

/// A state with large gradients (β = 0.5 then makes R' clearly nonsymmetric).
Eigen::VectorXd varied_state(Eigen::Index n, double phase) {
  Eigen::VectorXd state(n);
  for (Eigen::Index i = 0; i < n; ++i) state(i) = 1.0 + 2.0 * std::sin(0.7 * static_cast<double>(i) + phase);
  return state;
}

}  // namespace

TEST_CASE("reverse-mode transposed products satisfy the adjoint identity", "[sensitivity][reverse_mode]") {
  const nkit_test::conduction_design design = nkit_test::square_design(12, 0.3);
  const Eigen::Index n = design.unknowns();
  const design_at_fixed_parameters residual{&design, nkit_test::design_parameters};
  auto product = nkit::make_reverse_mode_transposed_product(residual);
  auto forward = nkit::with_parameter_automatic_differentiation(design);
  const Eigen::VectorXd p = nkit_test::design_parameters;

  for (double phase : {0.0, 1.0}) {  // two states: the second one needs a new tape
    INFO("phase " << phase);
    const Eigen::VectorXd u = varied_state(n, phase);
    product.record(u);
    Eigen::VectorXd r(n);
    design(u, p, r);
    CHECK_THAT(product.residual(), nkit_test::is_close_to(r, 0.0, 0.0));  // the same operations on doubles
    nkit::sparse_matrix jacobian;
    design.assemble_jacobian(u, p, jacobian);
    REQUIRE((Eigen::MatrixXd(jacobian) - Eigen::MatrixXd(jacobian).transpose()).norm() > 1e-2);
    for (unsigned seed = 50; seed < 53; ++seed) {
      const Eigen::VectorXd v = random_vector(n, seed), w = random_vector(n, seed + 100);
      Eigen::VectorXd jv(n), jtw;
      forward.jacobian_product(u, p, v, jv);
      product.apply(w, jtw);
      const double bound =
          4.0 * 2.0 * static_cast<double>(n) * epsilon * w.cwiseAbs().dot(jacobian.cwiseAbs() * v.cwiseAbs());
      CHECK_THAT(w.dot(jv), WithinAbs(v.dot(jtw), bound));
      const Eigen::VectorXd magnitudes = jacobian.transpose().cwiseAbs() * w.cwiseAbs();
      const Eigen::VectorXd reference = jacobian.transpose() * w;
      for (Eigen::Index i = 0; i < n; ++i) CHECK_THAT(jtw(i), WithinAbs(reference(i), 20.0 * epsilon * magnitudes(i)));
      // The product is not J w: the identity with Jᵀ replaced by J misses by far more.
      CHECK(std::abs(w.dot(jv) - v.dot(jacobian * w)) > 100.0 * bound);
    }
  }
}

TEST_CASE("reverse-mode transposed products reject misuse with a clear message", "[sensitivity][bad_input]") {
  const nkit_test::conduction_design design = nkit_test::square_design(3, 0.0);
  auto product =
      nkit::make_reverse_mode_transposed_product(design_at_fixed_parameters{&design, nkit_test::design_parameters}, 2);
  Eigen::VectorXd out;
  CHECK_THROWS_MATCHES(product.apply(Eigen::VectorXd::Ones(9), out), std::logic_error,
                       Message("nkit: reverse_mode_transposed_product::apply called before record()"));
  product.record(Eigen::VectorXd::Ones(9));
  CHECK_THROWS_MATCHES(product.apply(Eigen::VectorXd::Ones(4), out), std::invalid_argument,
                       Message("nkit: reverse_mode_transposed_product::apply got a vector of 4 entries; the "
                               "residual has 9"));
  CHECK_THROWS_MATCHES(product.record(Eigen::VectorXd()), std::invalid_argument,
                       Message("nkit: reverse_mode_transposed_product::record got an empty state"));
  CHECK_THROWS_MATCHES(
      nkit::make_reverse_mode_transposed_product(design_at_fixed_parameters{&design, nkit_test::design_parameters}, -1),
      std::invalid_argument, Message("nkit: reverse_mode_transposed_product tape_tag must be >= 0 (got -1)"));
}

// Cost figures quoted in docs/sensitivities.md (hidden: run by hand,
// `nkit_sensitivity_tests "[.reverse_mode_cost]"`). Work unit: the median
// of 51 timed residual evaluations on doubles in the same run.
TEST_CASE("cost of reverse-mode transposed products in work units", "[.reverse_mode_cost]") {
  const int cells = 128;
  const nkit_test::conduction_design design = nkit_test::square_design(cells, 0.3);
  const Eigen::Index n = design.unknowns();
  const Eigen::VectorXd p = nkit_test::design_parameters;
  const Eigen::VectorXd u = varied_state(n, 0.0), w = random_vector(n, 7);
  const auto seconds_of = [](auto&& call) {
    const auto start = std::chrono::steady_clock::now();
    call();
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  };
  const auto median_of = [&](int calls, auto&& call) {
    std::vector<double> times;
    for (int c = 0; c < calls; ++c) times.push_back(seconds_of(call));
    std::nth_element(times.begin(), times.begin() + calls / 2, times.end());
    return times[static_cast<std::size_t>(calls / 2)];
  };
  Eigen::VectorXd r(n), out(n);
  const double unit = median_of(51, [&] { design(u, p, r); });
  // Buffers of 2^22 entries: more than this tape's operation, location, value and Taylor
  // counts, so ADOL-C keeps it in memory from the first recording (no files).
  auto product = nkit::make_reverse_mode_transposed_product(design_at_fixed_parameters{&design, p}, 1, 1u << 22);
  const double first_record = seconds_of([&] { product.record(u); });
  const double record = median_of(11, [&] { product.record(u); });
  const double reverse = median_of(51, [&] { product.apply(w, out); });
  auto forward = nkit::with_parameter_automatic_differentiation(design);
  const double forward_product = median_of(51, [&] { forward.jacobian_product(u, p, w, out); });
  nkit::sparse_matrix jacobian;
  const double assembly = median_of(11, [&] { design.assemble_jacobian(u, p, jacobian); });
  const double assembled_transposed = median_of(51, [&] { out.noalias() = jacobian.transpose() * w; });
  std::printf(
      "conduction design problem, %d x %d cells (%ld unknowns); work unit = one residual evaluation on "
      "doubles = %.3e s; taped operations %zu\n",
      cells, cells, static_cast<long>(n), unit, product.taped_operations());
  const auto print = [unit](const char* what, double seconds) {
    std::printf("%-62s %10.3e s %8.2f work units\n", what, seconds, seconds / unit);
  };
  print("record the tape at u (first recording)", first_record);
  print("record the tape at u (median of later recordings)", record);
  print("J^T.w by one reverse sweep (ADOL-C)", reverse);
  print("J.v by forward-mode AD (nkit, for comparison)", forward_product);
  print("analytic Jacobian assembly (for comparison)", assembly);
  print("J^T.w with the assembled Jacobian (after assembly)", assembled_transposed);
  CHECK(std::isfinite(out.norm()));
}
