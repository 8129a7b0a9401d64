// Systems of nonlinear equations F(x) = 0 from the standard test set of
//   J.J. Moré, B.S. Garbow & K.E. Hillstrom, "Testing unconstrained optimization
//   software", ACM Trans. Math. Softw. 7(1) (1981) 17–41,
// (definitions checked against published transcriptions of the paper; problem
// numbers are the paper's). Throughout h = 1/(n+1), t_i = i h (1-based i) and x_0 = x_{n+1} = 0.
//
// Every residual is a template on its scalar type so that nkit's automatic
// differentiation (nkit::with_automatic_differentiation) can run it on dual
// numbers: math functions are called unqualified after `using std::cos;` etc.
// Each problem type also states its dimension, the standard starting point of
// the paper and the known solution where one is known in closed form.
//
// The registry at the end (problem_entry, more_garbow_hillstrom_problems) holds
// type-erased double-precision residuals plus exact Jacobian-vector products by
// automatic differentiation, for harnesses that loop over all problems.
#ifndef NKIT_PROBLEMS_TEST_SETS_MORE_GARBOW_HILLSTROM_HPP
#define NKIT_PROBLEMS_TEST_SETS_MORE_GARBOW_HILLSTROM_HPP

#include <Eigen/Core>
#include <cmath>
#include <functional>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <optional>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

namespace nkit_problems::more_garbow_hillstrom {

template <class Scalar>
using vector_of = Eigen::Matrix<Scalar, Eigen::Dynamic, 1>;

/// arctan(q) for doubles and for Eigen's AutoDiffScalar, which has atan2 but no
/// atan: atan2(q, 1) = arctan(q) with derivative q'/(1 + q²).
inline double arctangent(double q) { return std::atan(q); }
template <class Scalar>
Scalar arctangent(const Scalar& q) {
  using std::atan2;
  return atan2(q, Scalar(1.0));
}

/// Problem 1, Rosenbrock (n = 2): f1 = 10(x2 − x1²), f2 = 1 − x1.
struct rosenbrock {
  static constexpr bool variable_dimension = false;
  static constexpr const char* name = "Rosenbrock";
  static constexpr int number = 1;
  Eigen::Index dimension() const { return 2; }
  template <class Scalar>
  void operator()(const vector_of<Scalar>& x, vector_of<Scalar>& f) const {
    f(0) = 10.0 * (x(1) - x(0) * x(0));
    f(1) = 1.0 - x(0);
  }
  Eigen::VectorXd standard_start() const { return (Eigen::VectorXd(2) << -1.2, 1.0).finished(); }
  std::optional<Eigen::VectorXd> known_solution() const { return Eigen::VectorXd::Ones(2); }
};

/// Problem 7, helical valley (n = 3): f1 = 10[x3 − 10θ(x1, x2)],
/// f2 = 10(√(x1² + x2²) − 1), f3 = x3, with
/// θ = (1/2π) arctan(x2/x1) for x1 > 0, (1/2π) arctan(x2/x1) + 0.5 for x1 < 0.
struct helical_valley {
  static constexpr bool variable_dimension = false;
  static constexpr const char* name = "Helical valley";
  static constexpr int number = 7;
  Eigen::Index dimension() const { return 3; }

  /// θ(x1, x2). On x1 = 0 the paper's limit values ±0.25 apply,
  /// +0.25 for x2 > 0 and −0.25 for x2 < 0 (the limits from x1 > 0). They are
  /// evaluated as ±0.25 − (1/2π) arctan(x1/x2): exactly ±0.25 in value, since
  /// arctan(0) = 0, and with the correct first derivatives of θ there, so a
  /// dual-number sweep at x1 = 0 gives the true J·v instead of a zero
  /// derivative. At x1 = x2 = 0 θ is undefined; we return +0.25 (the sign
  /// convention of Fortran's SIGN(0.25, 0), as in the test set's code
  /// companion, ACM TOMS Algorithm 566; from memory) with zero derivative.
  template <class Scalar>
  static Scalar theta(const Scalar& x1, const Scalar& x2) {
    const double two_pi = 8.0 * std::atan(1.0);
    if (x1 > 0.0) return Scalar(arctangent(Scalar(x2 / x1)) / two_pi);
    if (x1 < 0.0) return Scalar(arctangent(Scalar(x2 / x1)) / two_pi + 0.5);
    if (x2 > 0.0) return Scalar(0.25 - arctangent(Scalar(x1 / x2)) / two_pi);
    if (x2 < 0.0) return Scalar(-0.25 - arctangent(Scalar(x1 / x2)) / two_pi);
    return Scalar(0.25);
  }
  template <class Scalar>
  void operator()(const vector_of<Scalar>& x, vector_of<Scalar>& f) const {
    using std::sqrt;
    f(0) = 10.0 * (x(2) - 10.0 * theta(x(0), x(1)));
    f(1) = 10.0 * (sqrt(x(0) * x(0) + x(1) * x(1)) - 1.0);
    f(2) = x(2);
  }
  Eigen::VectorXd standard_start() const { return (Eigen::VectorXd(3) << -1.0, 0.0, 0.0).finished(); }
  std::optional<Eigen::VectorXd> known_solution() const { return (Eigen::VectorXd(3) << 1.0, 0.0, 0.0).finished(); }
};

/// Problem 13, Powell singular (n = 4): f1 = x1 + 10x2, f2 = √5(x3 − x4),
/// f3 = (x2 − 2x3)², f4 = √10(x1 − x4)². The factor in f4 is √10 as published
/// (at least one public transcription has √2 instead). The Jacobian is
/// singular at the solution x* = 0.
struct powell_singular {
  static constexpr bool variable_dimension = false;
  static constexpr const char* name = "Powell singular";
  static constexpr int number = 13;
  Eigen::Index dimension() const { return 4; }
  template <class Scalar>
  void operator()(const vector_of<Scalar>& x, vector_of<Scalar>& f) const {
    const Scalar a = x(1) - 2.0 * x(2);
    const Scalar b = x(0) - x(3);
    f(0) = x(0) + 10.0 * x(1);
    f(1) = std::sqrt(5.0) * (x(2) - x(3));
    f(2) = a * a;
    f(3) = std::sqrt(10.0) * (b * b);
  }
  Eigen::VectorXd standard_start() const { return (Eigen::VectorXd(4) << 3.0, -1.0, 0.0, 1.0).finished(); }
  std::optional<Eigen::VectorXd> known_solution() const { return Eigen::VectorXd::Zero(4); }
};

/// Problem 30, Broyden tridiagonal (variable n):
/// f_i = (3 − 2x_i) x_i − x_{i−1} − 2x_{i+1} + 1.
struct broyden_tridiagonal {
  static constexpr bool variable_dimension = true;
  static constexpr const char* name = "Broyden tridiagonal";
  static constexpr int number = 30;
  Eigen::Index n = 10;
  Eigen::Index dimension() const { return n; }
  template <class Scalar>
  void operator()(const vector_of<Scalar>& x, vector_of<Scalar>& f) const {
    for (Eigen::Index i = 0; i < n; ++i) {
      Scalar value = (3.0 - 2.0 * x(i)) * x(i) + 1.0;
      if (i > 0) value -= x(i - 1);
      if (i + 1 < n) value -= 2.0 * x(i + 1);
      f(i) = value;
    }
  }
  Eigen::VectorXd standard_start() const { return Eigen::VectorXd::Constant(n, -1.0); }
  std::optional<Eigen::VectorXd> known_solution() const { return std::nullopt; }
};

/// Problem 31, Broyden banded (variable n): f_i = x_i(2 + 5x_i²) + 1 −
/// Σ_{j∈J_i} x_j(1 + x_j), J_i = {j ≠ i : max(1, i−5) <= j <= min(n, i+1)}.
struct broyden_banded {
  static constexpr bool variable_dimension = true;
  static constexpr const char* name = "Broyden banded";
  static constexpr int number = 31;
  Eigen::Index n = 10;
  Eigen::Index dimension() const { return n; }
  template <class Scalar>
  void operator()(const vector_of<Scalar>& x, vector_of<Scalar>& f) const {
    constexpr Eigen::Index lower_band = 5;
    constexpr Eigen::Index upper_band = 1;
    for (Eigen::Index i = 0; i < n; ++i) {
      Scalar value = x(i) * (2.0 + 5.0 * x(i) * x(i)) + 1.0;
      const Eigen::Index first = i >= lower_band ? i - lower_band : 0;
      const Eigen::Index last = i + upper_band < n ? i + upper_band : n - 1;
      for (Eigen::Index j = first; j <= last; ++j) {
        if (j != i) value -= x(j) * (1.0 + x(j));
      }
      f(i) = value;
    }
  }
  Eigen::VectorXd standard_start() const { return Eigen::VectorXd::Constant(n, -1.0); }
  std::optional<Eigen::VectorXd> known_solution() const { return std::nullopt; }
};

/// Problem 28, discrete boundary value (variable n):
/// f_i = 2x_i − x_{i−1} − x_{i+1} + h²(x_i + t_i + 1)³/2, start ξ_i = t_i(t_i − 1).
struct discrete_boundary_value {
  static constexpr bool variable_dimension = true;
  static constexpr const char* name = "Discrete boundary value";
  static constexpr int number = 28;
  Eigen::Index n = 10;
  Eigen::Index dimension() const { return n; }
  template <class Scalar>
  void operator()(const vector_of<Scalar>& x, vector_of<Scalar>& f) const {
    const double h = 1.0 / static_cast<double>(n + 1);
    for (Eigen::Index i = 0; i < n; ++i) {
      const double t = static_cast<double>(i + 1) * h;
      const Scalar c = x(i) + (t + 1.0);
      Scalar value = 2.0 * x(i) + 0.5 * h * h * (c * c * c);
      if (i > 0) value -= x(i - 1);
      if (i + 1 < n) value -= x(i + 1);
      f(i) = value;
    }
  }
  Eigen::VectorXd standard_start() const { return parabola_start(n); }
  std::optional<Eigen::VectorXd> known_solution() const { return std::nullopt; }

  /// ξ_i = t_i(t_i − 1), the start of problems 28 and 29.
  static Eigen::VectorXd parabola_start(Eigen::Index n) {
    const double h = 1.0 / static_cast<double>(n + 1);
    Eigen::VectorXd start(n);
    for (Eigen::Index i = 0; i < n; ++i) {
      const double t = static_cast<double>(i + 1) * h;
      start(i) = t * (t - 1.0);
    }
    return start;
  }
};

/// Problem 29, discrete integral equation (variable n):
/// f_i = x_i + h[(1 − t_i) Σ_{j<=i} t_j c_j + t_i Σ_{j>i} (1 − t_j) c_j]/2,
/// c_j = (x_j + t_j + 1)³. The two sums are formed as running sums (O(n) per
/// evaluation instead of O(n²)); mathematically the same.
struct discrete_integral_equation {
  static constexpr bool variable_dimension = true;
  static constexpr const char* name = "Discrete integral equation";
  static constexpr int number = 29;
  Eigen::Index n = 10;
  Eigen::Index dimension() const { return n; }
  template <class Scalar>
  void operator()(const vector_of<Scalar>& x, vector_of<Scalar>& f) const {
    const double h = 1.0 / static_cast<double>(n + 1);
    // First pass: f_i holds the backward sum Σ_{j>i} (1 − t_j) c_j.
    Scalar backward(0.0);
    for (Eigen::Index i = n - 1; i >= 0; --i) {
      f(i) = backward;
      const double t = static_cast<double>(i + 1) * h;
      const Scalar c = x(i) + (t + 1.0);
      backward += (1.0 - t) * (c * c * c);
    }
    // Second pass: forward sum Σ_{j<=i} t_j c_j and the final value.
    Scalar forward(0.0);
    for (Eigen::Index i = 0; i < n; ++i) {
      const double t = static_cast<double>(i + 1) * h;
      const Scalar c = x(i) + (t + 1.0);
      forward += t * (c * c * c);
      f(i) = x(i) + 0.5 * h * ((1.0 - t) * forward + t * f(i));
    }
  }
  Eigen::VectorXd standard_start() const { return discrete_boundary_value::parabola_start(n); }
  std::optional<Eigen::VectorXd> known_solution() const { return std::nullopt; }
};

/// Problem 26, trigonometric (variable n):
/// f_i = n − Σ_j cos x_j + i(1 − cos x_i) − sin x_i, start x_j = 1/n.
struct trigonometric {
  static constexpr bool variable_dimension = true;
  static constexpr const char* name = "Trigonometric";
  static constexpr int number = 26;
  Eigen::Index n = 10;
  Eigen::Index dimension() const { return n; }
  template <class Scalar>
  void operator()(const vector_of<Scalar>& x, vector_of<Scalar>& f) const {
    using std::cos;
    using std::sin;
    Scalar cosine_sum(0.0);
    for (Eigen::Index j = 0; j < n; ++j) cosine_sum += cos(x(j));
    for (Eigen::Index i = 0; i < n; ++i) {
      f(i) = static_cast<double>(n) - cosine_sum + static_cast<double>(i + 1) * (1.0 - cos(x(i))) - sin(x(i));
    }
  }
  Eigen::VectorXd standard_start() const { return Eigen::VectorXd::Constant(n, 1.0 / static_cast<double>(n)); }
  std::optional<Eigen::VectorXd> known_solution() const { return std::nullopt; }
};

// ---- registry -------------------------------------------------------------------

/// One problem at one size, type-erased for loops over the whole set.
struct problem_entry {
  std::string name;
  int number = 0;  ///< problem number in Moré, Garbow & Hillstrom (1981)
  Eigen::Index dimension = 0;
  bool variable_dimension = false;
  Eigen::VectorXd standard_start;
  std::optional<Eigen::VectorXd> known_solution;
  /// f = F(x) in double precision.
  std::function<void(const Eigen::VectorXd& x, Eigen::VectorXd& f)> residual;
  /// jv = F'(x) v, exact to rounding (forward-mode automatic differentiation).
  std::function<void(const Eigen::VectorXd& x, const Eigen::VectorXd& v, Eigen::VectorXd& jv)> jacobian_product;
};

/// Builds the entry of one problem object (any of the types above).
template <class Problem>
problem_entry make_problem_entry(const Problem& problem) {
  problem_entry entry;
  entry.name = Problem::name;
  entry.number = Problem::number;
  entry.dimension = problem.dimension();
  entry.variable_dimension = Problem::variable_dimension;
  entry.standard_start = problem.standard_start();
  entry.known_solution = problem.known_solution();
  entry.residual = [problem](const Eigen::VectorXd& x, Eigen::VectorXd& f) { problem(x, f); };
  entry.jacobian_product = [differentiated = nkit::with_automatic_differentiation(problem)](
                               const Eigen::VectorXd& x, const Eigen::VectorXd& v, Eigen::VectorXd& jv) mutable {
    differentiated.jacobian_product(x, v, jv);
  };
  return entry;
}

/// The problem as nkit sees it: residual only, so nkit uses finite-difference J·v.
struct residual_only {
  const problem_entry* entry;
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& f) const { entry->residual(x, f); }
};

/// The problem with its exact J·v (automatic differentiation).
struct residual_with_exact_jacobian {
  const problem_entry* entry;
  void operator()(const Eigen::VectorXd& x, Eigen::VectorXd& f) const { entry->residual(x, f); }
  void jacobian_product(const Eigen::VectorXd& x, const Eigen::VectorXd& v, Eigen::VectorXd& jv) const {
    entry->jacobian_product(x, v, jv);
  }
};

/// Calls visitor(problem) with each problem object (typed, for direct use
/// with nkit::with_automatic_differentiation); variable-size problems get
/// `variable_dimension` unknowns.
template <class Visitor>
void for_each_problem(Eigen::Index variable_dimension, Visitor&& visitor) {
  if (variable_dimension < 1) throw std::invalid_argument("more_garbow_hillstrom: variable_dimension must be >= 1");
  visitor(rosenbrock{});
  visitor(helical_valley{});
  visitor(powell_singular{});
  visitor(broyden_tridiagonal{variable_dimension});
  visitor(broyden_banded{variable_dimension});
  visitor(discrete_boundary_value{variable_dimension});
  visitor(discrete_integral_equation{variable_dimension});
  visitor(trigonometric{variable_dimension});
}

/// All eight problems; variable-size ones with `variable_dimension` unknowns.
inline std::vector<problem_entry> more_garbow_hillstrom_problems(Eigen::Index variable_dimension = 10) {
  std::vector<problem_entry> entries;
  for_each_problem(variable_dimension,
                   [&entries](const auto& problem) { entries.push_back(make_problem_entry(problem)); });
  return entries;
}

}  // namespace nkit_problems::more_garbow_hillstrom

#endif  // NKIT_PROBLEMS_TEST_SETS_MORE_GARBOW_HILLSTROM_HPP
