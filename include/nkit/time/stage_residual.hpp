#ifndef NKIT_TIME_STAGE_RESIDUAL_HPP
#define NKIT_TIME_STAGE_RESIDUAL_HPP

/// \file time/stage_residual.hpp
/// The nonlinear equation of one implicit stage, as an nkit residual:
///   G(U) = (M U − b) / (γΔt) − f(t, U) = 0,
/// where b (in the units of M u) collects the known history: M z for a BDF
/// step (z a combination of past states), M u_n + Σ_j a_ij Δt f_j for an
/// ESDIRK stage. Every BDF step and every implicit ESDIRK stage has this form.
/// The stepper then scales the rows, G̃ = S G with S = diag(s_i), so that the
/// Euclidean norm the Newton solver and GMRES measure compares like with
/// like: s_i = γΔt / m_i on rows with mass m_i > 0 (G̃_i is then the state
/// change U_i − z_i − γΔt f_i/m_i, in the units of u) and s_i = 1 on algebraic
/// rows (G̃_i = −f_i, the constraint residual, which stays of order one however
/// short the step; with unit sensitivity ∂f_i/∂u it is also in the units of
/// u). For M = I this is the familiar M(U − z) − γΔt f(U). S is refreshed only
/// together with the preconditioner, so a lagged preconditioner stays
/// consistent with it. The Jacobian S (M/(γΔt) − ∂f/∂u) is offered to
/// preconditioners when the problem can assemble ∂f/∂u (or gives its pattern
/// for colored differences).
///
/// Evaluations of f are counted and timed (median of the last 64) for the
/// work-unit measure. No allocation after the first evaluation.

#include <cstdint>
#include <stdexcept>
#include <string>
#include <type_traits>

#include "../detail/timer.hpp"
#include "../jacobian/sparsity_pattern.hpp"
#include "time_problem.hpp"

namespace nkit::detail {

/// Scratch and counters kept by the stepper, so that a stage residual built
/// for each attempt allocates nothing.
template <class Vector>
struct stage_workspace {
  Vector product;
  std::int64_t rate_evaluations = 0;
  median_window rate_seconds;
};

template <class System, class Space>
class stage_residual {
 public:
  using vector_type = typename Space::vector_type;

  stage_residual(System& system, const Space& space, const mass_matrix<vector_type>& mass,
                 stage_workspace<vector_type>& workspace)
      : m_system(&system), m_space(&space), m_mass(&mass), m_workspace(&workspace) {}

  /// Sets t, γΔt, b and the row scale s for the next solve (b and s must outlive it).
  void prepare(double time, double shift, const vector_type& known, const vector_type& row_scale) {
    m_time = time;
    m_shift = shift;
    m_known = &known;
    m_row_scale = &row_scale;
  }
  double time() const { return m_time; }
  double shift() const { return m_shift; }

  void operator()(const vector_type& u, vector_type& g) {
    evaluate_rate(m_time, u, g);
    const Space& space = *m_space;
    space.scale(-m_shift, g);
    space.add_scaled(-1.0, *m_known, g);
    add_mass_times(u, g);
    space.scale(1.0 / m_shift, g);  // rows in the units of f: algebraic rows stay O(1) as Δt → 0
    space.multiply(*m_row_scale, g);
  }

  /// out += M v.
  void add_mass_times(const vector_type& v, vector_type& out) {
    const Space& space = *m_space;
    switch (m_mass->type()) {
      case mass_matrix<vector_type>::kind::identity:
        space.add_scaled(1.0, v, out);
        break;
      case mass_matrix<vector_type>::kind::diagonal:
        space.add_product(m_mass->diagonal_entries(), v, out);
        break;
      case mass_matrix<vector_type>::kind::linear_operator:
        space.allocate_like(m_workspace->product, v);
        m_mass->apply(v, m_workspace->product);
        space.add_scaled(1.0, m_workspace->product, out);
        break;
    }
  }

  /// f(t, u), counted and timed.
  void evaluate_rate(double time, const vector_type& u, vector_type& f) {
    const auto start = clock_type::now();
    m_system->rate(time, u, f);
    m_workspace->rate_seconds.add(seconds_between(start, clock_type::now()));
    ++m_workspace->rate_evaluations;
    if (f.size() != u.size()) {
      throw std::invalid_argument("nkit: the problem's rate() resized f (from " + std::to_string(u.size()) + " to " +
                                  std::to_string(f.size()) + " entries)");
    }
  }

  template <class S = System, std::enable_if_t<has_rate_jacobian<S, vector_type>::value, int> = 0>
  void assemble_jacobian(const vector_type& u, sparse_matrix& jacobian) {
    m_system->assemble_rate_jacobian(m_time, u, jacobian);
    jacobian *= -1.0;
    m_mass->add_to(jacobian, 1.0 / m_shift);
    const vector_type& scale = *m_row_scale;
    for (Eigen::Index row = 0; row < jacobian.outerSize(); ++row) {
      for (sparse_matrix::InnerIterator entry(jacobian, row); entry; ++entry) entry.valueRef() *= scale(row);
    }
  }

  template <class S = System,
            std::enable_if_t<has_jacobian_pattern_v<S> && !has_rate_jacobian<S, vector_type>::value, int> = 0>
  const sparsity_pattern& jacobian_pattern() const {
    return m_system->jacobian_pattern();
  }

  const mass_matrix<vector_type>& mass() const { return *m_mass; }

 private:
  System* m_system;
  const Space* m_space;
  const mass_matrix<vector_type>* m_mass;
  stage_workspace<vector_type>* m_workspace;
  const vector_type* m_known = nullptr;
  const vector_type* m_row_scale = nullptr;
  double m_time = 0.0;
  double m_shift = 0.0;
};

}  // namespace nkit::detail

#endif  // NKIT_TIME_STAGE_RESIDUAL_HPP
