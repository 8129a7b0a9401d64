#ifndef NKIT_CONTINUATION_BORDERED_SYSTEM_HPP
#define NKIT_CONTINUATION_BORDERED_SYSTEM_HPP

/// \file continuation/bordered_system.hpp
/// The bordered (augmented) system that continuation hands to the Newton–Krylov
/// corrector, and its preconditioner.
///
/// Unknowns x = (u, λ) in bordered_vector_space<Space>; residual
///
///   [ R(u, λ) ]
///   [ N(u, λ) ]   with one of two scalar constraints N (times a scale σ > 0):
///
///   pseudo-arclength (H.B. Keller, "Numerical solution of bifurcation and
///   nonlinear eigenvalue problems", in Applications of Bifurcation Theory,
///   P. Rabinowitz ed., Academic Press 1977, 359–384):
///       N = θ ⟨t_u, u − u_0⟩ + t_λ (λ − λ_0) − Δs,
///   where (u_0, λ_0) is the last point on the branch, (t_u, t_λ) its unit
///   tangent and θ the weight of the state part of the arclength metric;
///
///   fixed parameter (natural-parameter continuation, start and end points):
///       N = λ − λ_fixed.
///
/// J·v of the bordered residual: the derivative of N is exact and cheap
/// (σ(θ⟨t_u, v⟩ + t_λ μ), one reduction); R's part uses the problem's
/// parametrized jacobian_product when it has one, so the Newton driver sees a
/// jacobian_product() member and skips finite differences; otherwise the
/// driver differences the whole bordered residual (R along (v, μ)).

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <type_traits>

#include "../core/preconditioner.hpp"
#include "../detail/checks.hpp"
#include "../jacobian/sparse_jacobian.hpp"
#include "bordered_vector_space.hpp"
#include "parametrized_residual.hpp"

namespace nkit {

/// What the bordered preconditioner reads from the bordered residual: R_λ
/// and the constraint's gradient. Type-erased so the preconditioner's type
/// does not depend on the problem's.
template <class Space>
class bordering_source {
 public:
  using vector_type = typename bordered_vector_space<Space>::vector_type;
  using inner_vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;
  virtual ~bordering_source() = default;
  /// out = R_λ(u, λ) at x, given residual_at_x = R(u, λ). Collective.
  virtual void parameter_derivative(const vector_type& x, const inner_vector_type& residual_at_x,
                                    inner_vector_type& out) = 0;
  /// N'(v, μ) = ⟨c_u, v⟩ + c_λ μ. Collective.
  virtual scalar_type constraint_derivative(const vector_type& v) const = 0;
  /// c_λ.
  virtual scalar_type constraint_parameter_coefficient() const = 0;
  /// Whether assembled_state_jacobian() can deliver R_u.
  virtual bool can_assemble_state_jacobian() const = 0;
  /// R_u(u, λ) at x (λ fixed), given residual_at_x = R(u, λ): assembled by the
  /// problem, or by colored differences from its jacobian_pattern(). Allocates on the first call only.
  virtual const sparse_matrix& assembled_state_jacobian(const vector_type& x,
                                                        const inner_vector_type& residual_at_x) = 0;
};

/// The residual [R(u, λ); σN(u, λ)] of a parametrized problem. Holds pointers
/// to the problem and to the reference point and tangent, which must stay
/// unchanged while a solve uses it. Allocates only in parameter_derivative()
/// with an exact jacobian_product (one zero vector, on first use).
template <class Problem, class Space>
class bordered_residual final : public bordering_source<Space> {
 public:
  using space_type = bordered_vector_space<Space>;
  using vector_type = typename space_type::vector_type;
  using inner_vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;
  static constexpr bool exact_product = has_parametrized_jacobian_product_v<Problem, inner_vector_type, scalar_type>;

  bordered_residual(Problem& problem, const space_type& space) : m_problem(&problem), m_space(&space) {}

  /// N = θ⟨t_u, u − u_0⟩ + t_λ(λ − λ_0) − Δs. Collective (one reduction).
  void constrain_arclength(const vector_type& reference, const vector_type& tangent, scalar_type state_weight,
                           scalar_type step) {
    m_fixed = false;
    m_reference = &reference;
    m_tangent = &tangent;
    m_state_weight = state_weight;
    m_step = step;
    m_tangent_dot_reference = m_space->inner().dot(tangent.state, reference.state);
  }
  /// N = λ − value.
  void fix_parameter(scalar_type value) {
    m_fixed = true;
    m_fixed_value = value;
  }
  /// Multiplies N by `scale` > 0 (default 1), to weigh the constraint row like
  /// the rows of R in the Euclidean norms of the Newton and GMRES solves.
  void scale_constraint(scalar_type scale) { m_constraint_scale = scale; }

  /// r = [R(x.state, x.parameter); σN(x)]. Collective when N needs a reduction.
  void operator()(const vector_type& x, vector_type& r) {
    (*m_problem)(static_cast<const inner_vector_type&>(x.state), x.parameter, r.state);
    r.parameter = constraint(x);
  }

  /// jv = [R_u v + R_λ μ; σN'(v, μ)], exact; present only when the problem has
  /// a parametrized jacobian_product.
  template <class P = Problem,
            std::enable_if_t<has_parametrized_jacobian_product_v<P, inner_vector_type, scalar_type>, int> = 0>
  void jacobian_product(const vector_type& x, const vector_type& v, vector_type& jv) {
    m_problem->jacobian_product(static_cast<const inner_vector_type&>(x.state), x.parameter,
                                static_cast<const inner_vector_type&>(v.state), v.parameter, jv.state);
    jv.parameter = constraint_derivative(v);
  }

  static constexpr bool assembles =
      has_parametrized_assemble_jacobian_v<Problem, inner_vector_type, scalar_type, sparse_matrix>;
  /// Colored differences need the pattern and serial Eigen vectors (jacobian/sparse_jacobian.hpp).
  static constexpr bool colors_pattern =
      !assembles && has_jacobian_pattern_v<Problem> && std::is_same_v<inner_vector_type, Eigen::VectorXd>;
  bool can_assemble_state_jacobian() const override { return assembles || colors_pattern; }
  /// R_u only, for preconditioners of the state block. (No assemble_jacobian()
  /// member on purpose: the Newton driver's assembled Jacobian would be that
  /// of the whole bordered system.) The problem's assemble_jacobian(u, λ, J)
  /// when it has one; else, with a jacobian_pattern(), colored forward
  /// differences of u ↦ R(u, λ) by the Newton driver's class
  /// (colored_difference_jacobian, jacobian/sparse_jacobian.hpp): one
  /// evaluation of R per color, counted in extra_evaluations(); the coloring
  /// is computed once per pattern.
  const sparse_matrix& assembled_state_jacobian(const vector_type& x, const inner_vector_type& residual_at_x) override {
    if constexpr (assembles) {
      static_cast<void>(residual_at_x);
      m_problem->assemble_jacobian(static_cast<const inner_vector_type&>(x.state), x.parameter, m_jacobian);
    } else if constexpr (colors_pattern) {
      m_colored.prepare(m_problem->jacobian_pattern());
      const scalar_type parameter = x.parameter;
      m_colored.assemble(
          [this, parameter](const Eigen::VectorXd& u, Eigen::VectorXd& r) {
            (*m_problem)(u, parameter, r);
            ++m_extra_evaluations;
          },
          static_cast<const inner_vector_type&>(x.state), residual_at_x, m_jacobian);
    } else {
      static_cast<void>(x);
      static_cast<void>(residual_at_x);
      throw std::logic_error(
          "nkit: the state preconditioner needs an assembled Jacobian, but the parametrized problem has neither "
          "assemble_jacobian(u, parameter, matrix) nor jacobian_pattern()");
    }
    return m_jacobian;
  }
  /// The colored-difference assembler (its coloring, for inspection).
  const colored_difference_jacobian& colored_differences() const { return m_colored; }

  /// σN(x) alone. Collective in arclength mode.
  scalar_type constraint(const vector_type& x) const {
    if (m_fixed) return m_constraint_scale * (x.parameter - m_fixed_value);
    const scalar_type along = m_space->inner().dot(m_tangent->state, x.state) - m_tangent_dot_reference;
    return m_constraint_scale *
           (m_state_weight * along + m_tangent->parameter * (x.parameter - m_reference->parameter) - m_step);
  }
  /// σN'(v, μ) (N is affine, so independent of x). Collective in arclength mode.
  scalar_type constraint_derivative(const vector_type& v) const override {
    if (m_fixed) return m_constraint_scale * v.parameter;
    return m_constraint_scale *
           (m_state_weight * m_space->inner().dot(m_tangent->state, v.state) + m_tangent->parameter * v.parameter);
  }
  scalar_type constraint_parameter_coefficient() const override {
    return m_constraint_scale * (m_fixed ? scalar_type(1) : m_tangent->parameter);
  }

  /// R_λ exactly (jacobian_product along (0, 1)) or by a forward difference
  /// in λ with step δ = √ε·max(1, |λ|) (common practice): one evaluation of R.
  void parameter_derivative(const vector_type& x, const inner_vector_type& residual_at_x,
                            inner_vector_type& out) override {
    const Space& space = m_space->inner();
    if constexpr (exact_product) {
      static_cast<void>(residual_at_x);
      space.allocate_like(m_zero, x.state);
      space.fill(0, m_zero);
      m_problem->jacobian_product(static_cast<const inner_vector_type&>(x.state), x.parameter,
                                  static_cast<const inner_vector_type&>(m_zero), scalar_type(1), out);
    } else {
      const scalar_type step =
          std::sqrt(std::numeric_limits<scalar_type>::epsilon()) * std::max<scalar_type>(1, std::abs(x.parameter));
      const scalar_type shifted = x.parameter + step;
      (*m_problem)(static_cast<const inner_vector_type&>(x.state), shifted, out);
      const scalar_type actual = shifted - x.parameter;  // the step as represented
      space.combine(1 / actual, out, -1 / actual, residual_at_x, out);
      ++m_extra_evaluations;
    }
  }

  /// Calls of R made by parameter_derivative() (not seen by the Newton driver).
  std::int64_t extra_evaluations() const { return m_extra_evaluations; }
  Problem& problem() { return *m_problem; }

 private:
  Problem* m_problem;
  const space_type* m_space;
  bool m_fixed = true;
  scalar_type m_fixed_value = 0;
  const vector_type* m_reference = nullptr;
  const vector_type* m_tangent = nullptr;
  scalar_type m_state_weight = 1;
  scalar_type m_step = 0;
  scalar_type m_tangent_dot_reference = 0;
  scalar_type m_constraint_scale = 1;
  std::int64_t m_extra_evaluations = 0;
  inner_vector_type m_zero;
  sparse_matrix m_jacobian;
  colored_difference_jacobian m_colored;  ///< used only with colors_pattern
};

namespace detail {

template <class P, class Context, class Scalar, class = void>
struct has_parametrized_setup : std::false_type {};
template <class P, class Context, class Scalar>
struct has_parametrized_setup<
    P, Context, Scalar,
    std::void_t<decltype(std::declval<P&>().setup(std::declval<const Context&>(), std::declval<Scalar>()))>>
    : std::true_type {};

}  // namespace detail

/// Preconditioner of the bordered system built from the user's
/// preconditioner P ≈ R_u of the state block, by block elimination
/// (Keller's bordering algorithm, ibid.) applied to
///
///   M = [ P    R_λ ]      z = M⁻¹ y:  a = P⁻¹ y_u,  b = P⁻¹ R_λ (kept from setup),
///       [ c_uᵀ c_λ ]                  μ = (y_λ − c_uᵀ a) / (c_λ − c_uᵀ b),  z = (a − μ b, μ),
///
/// with (c_u, c_λ) the constraint's gradient read at each application (it
/// changes between solves). Why not block-diagonal diag(P, 1): near a fold
/// R_u is nearly singular, so with a good P the columns of the preconditioned
/// operator J·diag(P, 1)⁻¹ in the constraint row grow like ‖c_u‖/|smallest
/// eigenvalue of R_u|; with finite-difference J·v (noise relative to ‖v‖)
/// the correctors then stalled near the fold (measured on 2D Bratu, 64², with an
/// exact LU for P). M stays nonsingular at a simple fold, and when P = R_u,
/// J M⁻¹ = I.
///
/// Setup: the user's setup receives the state part of the context (u,
/// R(u, λ), the assembled R_u when the problem has assemble_jacobian(u, λ, J)
/// or jacobian_pattern() (then by colored differences, see bordered_residual);
/// a pseudo-time shift, if the corrector uses one, on the state block only));
/// a P that builds from the state alone and needs λ may declare
///   setup(const preconditioner_context<Space>& context, scalar_type parameter)
/// which is preferred when present. Then R_λ (one residual evaluation, or
/// exact with a jacobian_product) and b = P⁻¹ R_λ. Cost per application:
/// one application of P and two reductions; no allocation after the first
/// setup. The bordering source must be attached before use.
template <class Preconditioner, class Space>
class bordered_preconditioner {
 public:
  using space_type = bordered_vector_space<Space>;
  using vector_type = typename space_type::vector_type;
  using scalar_type = typename Space::scalar_type;

  explicit bordered_preconditioner(Preconditioner state_preconditioner = {})
      : m_state_preconditioner(std::move(state_preconditioner)) {}

  /// The residual whose R_λ and constraint row the preconditioner uses.
  void attach(bordering_source<Space>* source) { m_source = source; }

  setup_status setup(const preconditioner_context<space_type>& context) {
    NKIT_ASSERT(m_source != nullptr, "bordered_preconditioner::attach() must be called before setup()");
    state_jacobian jacobian(*m_source, context.state, context.residual.state);
    const preconditioner_context<Space> state_context{
        context.space.inner(),
        context.state.state,
        context.residual.state,
        context.newton_step,
        context.diagonal_shift != nullptr ? &context.diagonal_shift->state : nullptr,
        m_source->can_assemble_state_jacobian() ? &jacobian : nullptr};
    using state_context_type = preconditioner_context<Space>;
    setup_status status = setup_status::ready;
    if constexpr (detail::has_parametrized_setup<Preconditioner, state_context_type, scalar_type>::value) {
      using result = decltype(m_state_preconditioner.setup(state_context, context.state.parameter));
      if constexpr (std::is_same_v<result, setup_status>) {
        status = m_state_preconditioner.setup(state_context, context.state.parameter);
      } else {
        m_state_preconditioner.setup(state_context, context.state.parameter);
      }
    } else {
      status = setup_preconditioner(m_state_preconditioner, state_context);
    }
    if (status == setup_status::failed) return status;
    m_space = &context.space.inner();
    m_space->allocate_like(m_parameter_derivative, context.state.state);
    m_space->allocate_like(m_correction.state, context.state.state);
    m_source->parameter_derivative(context.state, context.residual.state, m_parameter_derivative);
    m_state_preconditioner.apply(static_cast<const typename Space::vector_type&>(m_parameter_derivative),
                                 m_correction.state);
    m_correction.parameter = 0;
    return status;
  }

  void apply(const vector_type& y, vector_type& z) {
    NKIT_ASSERT(m_space != nullptr, "bordered_preconditioner::setup() must run before apply()");
    m_state_preconditioner.apply(y.state, z.state);
    z.parameter = 0;
    const scalar_type schur =
        m_source->constraint_parameter_coefficient() - m_source->constraint_derivative(m_correction);
    const scalar_type multiplier = (y.parameter - m_source->constraint_derivative(z)) / schur;
    if (!std::isfinite(multiplier)) {  // singular Schur complement: block-diagonal form instead
      z.parameter = y.parameter;
      return;
    }
    m_space->add_scaled(-multiplier, m_correction.state, z.state);
    z.parameter = multiplier;
  }

  std::size_t memory_bytes() const {
    return preconditioner_memory_bytes(m_state_preconditioner) +
           sizeof(scalar_type) * static_cast<std::size_t>(m_parameter_derivative.size() + m_correction.state.size());
  }
  bool changes_between_applications() const { return nkit::changes_between_applications(m_state_preconditioner); }

  Preconditioner& state_preconditioner() { return m_state_preconditioner; }
  const Preconditioner& state_preconditioner() const { return m_state_preconditioner; }

 private:
  /// R_u from the bordered residual, assembled on the first request.
  class state_jacobian final : public jacobian_source {
   public:
    state_jacobian(bordering_source<Space>& source, const vector_type& at,
                   const typename Space::vector_type& residual_at)
        : m_source(source), m_at(at), m_residual_at(residual_at) {}
    const sparse_matrix& assembled_jacobian() override {
      if (m_matrix == nullptr) m_matrix = &m_source.assembled_state_jacobian(m_at, m_residual_at);
      return *m_matrix;
    }

   private:
    bordering_source<Space>& m_source;
    const vector_type& m_at;
    const typename Space::vector_type& m_residual_at;
    const sparse_matrix* m_matrix = nullptr;
  };

  Preconditioner m_state_preconditioner;
  bordering_source<Space>* m_source = nullptr;
  const Space* m_space = nullptr;  ///< the solver's space, from the last setup
  typename Space::vector_type m_parameter_derivative;
  vector_type m_correction;  ///< (P⁻¹ R_λ, 0)
};

}  // namespace nkit

#endif  // NKIT_CONTINUATION_BORDERED_SYSTEM_HPP
