// Small discretisations that defeat plain line-search Newton in documented
// ways; shared by tests/test_globalization.cpp and bench/bench_globalization.cpp.
#ifndef NKIT_PROBLEMS_TEST_SETS_HARD_PROBLEMS_HPP
#define NKIT_PROBLEMS_TEST_SETS_HARD_PROBLEMS_HPP

#include <Eigen/Core>
#include <cmath>

namespace nkit_problems {

/// −D Δu + f(u) + s(x, y) = 0 on the unit square, homogeneous Neumann walls,
/// cell-centred (n×n), f(u) = u³ − 2u + 2, s = −sin πx sin πy.
/// f is the classical cubic on which Newton's iteration cycles 0 → 1 → 0
/// (common textbook example): |f| has a local minimum at u = √(2/3) that is not
/// a root, and any method that descends ‖R‖ from the cold start u = 0 is drawn
/// to it. The time-dependent problem u_t = −R(u) instead flows from u = 0
/// (where R > 0) down to the stable negative branch near u ≈ −1.7.
struct cubic_reaction_diffusion {
  int n;
  double diffusion;
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& u,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    const double h = 1.0 / n;
    const double pi = 3.14159265358979323846;
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const int p = i + n * j;
        Scalar laplacian = Scalar(0.0);
        if (i > 0) laplacian += u(p - 1) - u(p);
        if (i + 1 < n) laplacian += u(p + 1) - u(p);
        if (j > 0) laplacian += u(p - n) - u(p);
        if (j + 1 < n) laplacian += u(p + n) - u(p);
        const double source = -std::sin(pi * (i + 0.5) * h) * std::sin(pi * (j + 0.5) * h);
        r(p) = -diffusion * laplacian / (h * h) + u(p) * u(p) * u(p) - 2.0 * u(p) + 2.0 + source;
      }
    }
  }
};

/// 1D reaction–diffusion −c'' + k √c = 0 on (0, 1), c(0) = c(1) = 1, second-order
/// differences (n interior points). For k = 30 the solution stays positive
/// (min ≈ 0.006) but the first Newton step from c = 1 overshoots to negative
/// concentrations, where √c is undefined. Counts evaluations at c < 0.
struct square_root_reaction {
  int n;
  double rate;
  long negative_evaluations = 0;
  void operator()(const Eigen::VectorXd& c, Eigen::VectorXd& r) {
    if ((c.array() < 0.0).any()) ++negative_evaluations;
    const double h = 1.0 / (n + 1);
    for (int i = 0; i < n; ++i) {
      const double left = i > 0 ? c(i - 1) : 1.0;
      const double right = i + 1 < n ? c(i + 1) : 1.0;
      r(i) = -(left - 2.0 * c(i) + right) / (h * h) + rate * std::sqrt(c(i));
    }
  }
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_TEST_SETS_HARD_PROBLEMS_HPP
