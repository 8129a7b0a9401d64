// The discretised Chandrasekhar H-equation as a fixed-point map: a standard
// test problem for fixed-point accelerators and Newton–Krylov methods
// (C.T. Kelley, "Solving Nonlinear Equations with Newton's Method", SIAM
// 2003, §1.4 and §2.6 use it; formulation from memory).
//
//   H_i = G(H)_i = 1 / (1 − (c / 2N) Σ_j μ_i H_j / (μ_i + μ_j)),   μ_i = (i − ½)/N,
//
// the composite midpoint rule for H(μ) = 1 / (1 − (c/2) μ ∫₀¹ H(ν)/(μ + ν) dν).
//
// A check that holds EXACTLY for the discrete system (derived here, so it
// does not rest on memory): multiply H_i = 1 + H_i μ_i Σ_j w ψ H_j/(μ_i + μ_j)
// (w = 1/N, ψ = c/2) by w ψ and sum over i; symmetrising the double sum in
// i ↔ j turns μ_i/(μ_i + μ_j) into ½, so α = Σ_i w ψ H_i satisfies
// α = c/2 + α²/2, i.e. α = 1 − √(1 − c) on the physical branch (the
// moment relation of S. Chandrasekhar, "Radiative Transfer", Oxford 1950,
// for isotropic scattering — from memory). Tests compare
// (c / 2N) Σ H_i with 1 − √(1 − c).
#ifndef NKIT_TESTS_SUPPORT_CHANDRASEKHAR_H_EQUATION_HPP
#define NKIT_TESTS_SUPPORT_CHANDRASEKHAR_H_EQUATION_HPP

#include <Eigen/Core>
#include <cmath>

namespace nkit_test {

class chandrasekhar_h_map {
 public:
  chandrasekhar_h_map(int nodes, double c) : m_c(c), m_mu(nodes) {
    for (int i = 0; i < nodes; ++i) m_mu(i) = (i + 0.5) / nodes;
  }
  /// g = G(h); allocates nothing. Counts its calls.
  void operator()(const Eigen::VectorXd& h, Eigen::VectorXd& g) {
    ++calls;
    const Eigen::Index n = m_mu.size();
    const double factor = m_c / (2.0 * static_cast<double>(n));
    for (Eigen::Index i = 0; i < n; ++i) {
      double sum = 0.0;
      for (Eigen::Index j = 0; j < n; ++j) sum += h(j) / (m_mu(i) + m_mu(j));
      g(i) = 1.0 / (1.0 - factor * m_mu(i) * sum);
    }
  }
  /// (c / 2N) Σ H_i, which equals 1 − √(1 − c) at the solution (file comment).
  double moment(const Eigen::VectorXd& h) const { return m_c / (2.0 * static_cast<double>(h.size())) * h.sum(); }
  double exact_moment() const { return 1.0 - std::sqrt(1.0 - m_c); }
  Eigen::Index size() const { return m_mu.size(); }

  long long calls = 0;

 private:
  double m_c;
  Eigen::VectorXd m_mu;
};

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_CHANDRASEKHAR_H_EQUATION_HPP
