#ifndef NKIT_NEWTON_STEP_CONTROL_HPP
#define NKIT_NEWTON_STEP_CONTROL_HPP

/// \file newton/step_control.hpp
/// How a Newton direction becomes an accepted step: the glue between the
/// Newton driver and the globalisation kernels (globalization/): line search
/// or full step (backtracking_line_search), trust region (dogleg_search) and
/// pseudo-transient continuation (pseudo_time_step_search), together with
/// the state they carry from step to step (trust radius, pseudo-time step)
/// and their work vectors. Each call leaves the accepted trial state, its
/// residual and norm in trial_state(), trial_residual(), trial_norm(), which
/// the driver then swaps in.
///
/// Booked phase: globalization (its time minus the residual evaluations and
/// J·v products inside it). Nothing allocates after start().

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>

#include "../globalization/line_search.hpp"
#include "../globalization/pseudo_transient.hpp"
#include "../globalization/trust_region.hpp"
#include "../report/outcome.hpp"
#include "../report/phase_ledger.hpp"
#include "../report/report.hpp"
#include "newton_settings.hpp"
#include "preconditioner_schedule.hpp"
#include "problem_access.hpp"

namespace nkit::detail {

/// What the driver hands the step control for one Newton step.
template <class Space>
struct step_inputs {
  using vector_type = typename Space::vector_type;
  problem_access<Space>& access;
  phase_ledger& ledger;
  const vector_type& state;      ///< u
  const vector_type& residual;   ///< R(u)
  const vector_type& direction;  ///< x with R'(u) x ≈ R(u); the step is s = −x
  double residual_norm;          ///< ‖R(u)‖
  newton_step_record& record;
};

template <class Space>
class newton_step_control {
 public:
  using vector_type = typename Space::vector_type;

  newton_step_control(const newton_settings& settings, const Space& space) : m_space(space) { configure(settings); }

  void configure(const newton_settings& settings) {
    m_line_search = settings.line_search;
    m_trust_region = settings.trust_region;
    m_pseudo_transient_settings = settings.pseudo_transient;
    m_globalization = settings.globalization;
  }

  /// Sizes the work vectors like `prototype` for a new solve and resets the
  /// carried state; in pseudo-transient mode the access gets the shift W/δ.
  void start(const vector_type& prototype, problem_access<Space>& access) {
    for (vector_type* v : {&m_trial_state, &m_trial_residual, &m_product}) m_space.allocate_like(*v, prototype);
    if (m_globalization == globalization_strategy::trust_region) {
      m_space.allocate_like(m_cauchy, prototype);
      m_space.allocate_like(m_cauchy_product, prototype);
    }
    m_pseudo_transient = m_globalization == globalization_strategy::pseudo_transient;
    if (m_pseudo_transient) {
      m_space.allocate_like(m_weights, prototype);
      m_space.allocate_like(m_shift, prototype);
      m_space.fill(1, m_weights);
      m_pseudo_time_step = m_pseudo_transient_settings.initial_step;
      m_last_used_pseudo_time_step = m_pseudo_time_step;
      m_returns_to_pseudo_time = 0;
      m_phase_start_norm = -1.0;  // the first phase starts at ‖R(u0)‖
      access.set_diagonal_shift(&m_shift);
    }
    m_trust_radius = m_trust_region.initial_radius;
  }

  /// Still in the pseudo-transient phase (then the next step is a pseudo-time step).
  bool pseudo_transient() const { return m_pseudo_transient; }
  /// The diagonal shift W/δ of the pseudo-transient term, or nullptr outside that phase.
  const vector_type* shift() const { return m_pseudo_transient ? &m_shift : nullptr; }
  /// Where GMRES should leave its Cauchy point (trust region only), else nullptr.
  vector_type* cauchy_target() {
    return m_globalization == globalization_strategy::trust_region && !m_pseudo_transient ? &m_cauchy : nullptr;
  }
  /// Scratch vector, free between steps (the driver uses it for Δu and diagnostics).
  vector_type& scratch() { return m_product; }

  vector_type& trial_state() { return m_trial_state; }
  vector_type& trial_residual() { return m_trial_residual; }
  double trial_norm() const { return m_trial_norm; }

  /// Line search (require_decrease) or full step along s = −x.
  template <class Problem>
  std::optional<stop_reason> line_search(Problem& problem, const step_inputs<Space>& in, double achieved_eta,
                                         bool require_decrease) {
    phase_scope scope(in.ledger, trace_phase::globalization, in.record.step);
    const double limit = in.access.bound_limit(in.state, in.direction);
    in.record.step_shortened_by_bounds = limit < 1.0;
    // Shortening the direction to t·s raises the linear-model residual to (1 − t(1 − η))‖R‖.
    const double eta = 1.0 - limit * (1.0 - achieved_eta);
    const line_search_result search = backtracking_line_search(
        m_line_search, in.residual_norm, eta, require_decrease,
        [&](double lambda) { return trial(problem, in, lambda * limit); },
        [&]() {
          in.access.apply_jacobian(problem, in.direction, m_product);  // φ'(0) = Rᵀ R'(u) s with s = −limit·x
          return -limit * m_space.dot(in.residual, m_product);
        });
    scope.close();
    solve_report& report = in.ledger.report();
    in.record.rejected_trials = search.trials - 1;
    report.rejected_trials += search.trials - 1;
    report.non_finite_trials += search.non_finite_trials;
    if (!search.accepted) return stop_reason::no_acceptable_step;
    // The last trial evaluated is the accepted one: m_trial_* hold it.
    m_trial_norm = search.residual_norm;
    in.record.step_fraction = search.step_fraction * limit;
    in.record.step_norm = in.record.step_fraction * m_space.norm(in.direction);
    return std::nullopt;
  }

  /// Dogleg between the Krylov-subspace Cauchy point and the Newton step
  /// (globalization/trust_region.hpp). The full Newton step is priced by the
  /// linear residual GMRES reached, ‖R + J s_N‖, at no cost; the two J·v
  /// products of the dogleg model are taken only when a shorter point is needed.
  template <class Problem>
  std::optional<stop_reason> trust_region(Problem& problem, const step_inputs<Space>& in, double linear_residual_norm,
                                          bool cauchy_available) {
    phase_scope scope(in.ledger, trace_phase::globalization, in.record.step);
    solve_report& report = in.ledger.report();
    const double norm = in.residual_norm;
    dogleg_model model;
    bool model_ready = false;
    const auto build_model = [&] {
      if (model_ready) return;
      // Newton point x_N = direction, Cauchy point x_C = m_cauchy (both for R'(u) x = R(u); s = −x).
      if (!cauchy_available) m_space.fill(0, m_cauchy);
      in.access.apply_jacobian(problem, in.direction, m_product);
      in.access.apply_jacobian(problem, m_cauchy, m_cauchy_product);
      model.residual_squared = norm * norm;
      model.residual_dot_cauchy = -m_space.dot(in.residual, m_cauchy_product);  // R·J s_C with s_C = −x_C
      model.residual_dot_newton = -m_space.dot(in.residual, m_product);
      model.cauchy_squared = m_space.dot(m_cauchy_product, m_cauchy_product);
      model.newton_squared = m_space.dot(m_product, m_product);
      model.cauchy_dot_newton = m_space.dot(m_cauchy_product, m_product);
      model_ready = true;
    };
    const double newton_norm = m_space.norm(in.direction);
    double limit = 1.0;
    const auto geometry = [&] {
      build_model();
      return dogleg_geometry{m_space.norm(m_cauchy), m_space.dot(m_cauchy, in.direction)};
    };
    const auto trial_point = [&](const dogleg_point& point) {
      // x = a x_C + b x_N (held in m_trial_residual until the trial is evaluated).
      m_space.combine(point.cauchy_weight, m_cauchy, point.newton_weight, in.direction, m_trial_residual);
      limit = in.access.bound_limit(in.state, m_trial_residual);
      trust_region_trial tried;
      tried.step_norm = limit * m_space.norm(m_trial_residual);
      if (point.cauchy_weight == 0.0 && point.newton_weight == 1.0 && limit == 1.0 && !model_ready) {
        tried.predicted_reduction = 0.5 * (norm * norm - linear_residual_norm * linear_residual_norm);
      } else {
        build_model();
        tried.predicted_reduction = model.predicted_reduction(point.cauchy_weight * limit, point.newton_weight * limit);
      }
      m_space.scale(limit, m_trial_residual);
      m_space.combine(1, in.state, -1, m_trial_residual, m_trial_state);
      const std::int64_t inadmissible_before = report.inadmissible_trials;
      tried.residual_norm = in.access.evaluate_trial(problem, m_trial_state, m_trial_residual);
      if (!std::isfinite(tried.residual_norm) && report.inadmissible_trials == inadmissible_before) {
        ++report.non_finite_trials;
      }
      return tried;
    };
    const trust_region_result result =
        dogleg_search(m_trust_region, m_trust_radius, norm, newton_norm, geometry, trial_point);
    scope.close();
    if (!result.accepted) return stop_reason::no_acceptable_step;
    m_trial_norm = result.residual_norm;
    in.record.step_fraction = 1.0;
    in.record.step_norm = result.step_norm;
    in.record.trust_radius = m_trust_radius;
    in.record.step_shortened_by_bounds = limit < 1.0;
    in.record.rejected_trials = result.rejected_trials;
    report.rejected_trials += result.rejected_trials;
    return std::nullopt;
  }

  /// After a failed or stagnating Newton step outside the pseudo-transient
  /// phase: goes back to pseudo-time stepping at ‖R(u)‖ = residual_norm when
  /// the solve began with that phase, the failure is one a shifted system can
  /// cure and returns are left (pseudo_transient_settings::
  /// maximum_returns_to_pseudo_time). Returns whether it did; the driver
  /// then resets its forcing term and rebuilds its preconditioner.
  bool return_to_pseudo_time(stop_reason reason, double residual_norm, double initial_residual_norm,
                             problem_access<Space>& access) {
    if (m_globalization != globalization_strategy::pseudo_transient || m_pseudo_transient) return false;
    if (m_returns_to_pseudo_time >= m_pseudo_transient_settings.maximum_returns_to_pseudo_time) return false;
    if (!(reason == stop_reason::residual_stagnated || reason == stop_reason::no_acceptable_step ||
          shifted_system_may_help(reason))) {
      return false;
    }
    ++m_returns_to_pseudo_time;
    m_pseudo_transient = true;
    m_pseudo_time_step = pseudo_time_step_on_return(m_pseudo_transient_settings, m_last_used_pseudo_time_step,
                                                    initial_residual_norm, residual_norm);
    m_phase_start_norm = residual_norm;
    access.set_diagonal_shift(&m_shift);
    return true;
  }

  /// One pseudo-time step: (W/δ + R'(u)) x = R(u), u ← u − x; δ by switched
  /// evolution relaxation, retried with a smaller δ when ‖R‖ grows too much
  /// or the linear solve gives no direction (globalization/pseudo_transient.hpp).
  /// `direction()` computes x for the
  /// current shift (the driver's forcing term, preconditioner and GMRES) and
  /// returns nothing or why it could not. `phase_ended` is set
  /// when the pseudo-transient phase is over (the access's shift is then
  /// removed; the driver resets its forcing term and rebuilds its preconditioner).
  template <class Problem, class Direction>
  std::optional<stop_reason> pseudo_time_step(Problem& problem, const step_inputs<Space>& in, Direction&& direction,
                                              preconditioner_schedule& schedule, bool& phase_ended) {
    phase_ended = false;
    if constexpr (detail::has_pseudo_time_weights<Problem, vector_type>::value) {
      problem.pseudo_time_weights(in.access.physical_state(in.state), m_weights);
      // In scaled variables the term is D_r⁻¹ (W/δ) D_u.
      in.access.scale_pseudo_time_weights(m_weights);
    }
    solve_report& report = in.ledger.report();
    std::optional<stop_reason> abandoned;
    double limit = 1.0;
    const pseudo_time_step_result result = pseudo_time_step_search(
        m_pseudo_transient_settings, m_pseudo_time_step, in.residual_norm, [&](double delta, int attempt) {
          m_space.copy(m_weights, m_shift);
          m_space.scale(1 / delta, m_shift);
          if (attempt > 0) schedule.request_rebuild();  // the shift changed
          pseudo_time_trial tried;
          abandoned = direction();
          if (abandoned) {
            // A smaller δ may cure these; budgets, a monitor or the clock cannot be cured.
            if (shifted_system_may_help(*abandoned)) {
              tried.no_direction = true;
            } else {
              tried.abandoned = true;
            }
            return tried;
          }
          phase_scope scope(in.ledger, trace_phase::globalization, in.record.step);
          limit = in.access.bound_limit(in.state, in.direction);
          const std::int64_t inadmissible_before = report.inadmissible_trials;
          tried.residual_norm = trial(problem, in, limit);
          if (!std::isfinite(tried.residual_norm) && report.inadmissible_trials == inadmissible_before) {
            ++report.non_finite_trials;
          }
          return tried;
        });
    in.record.rejected_trials = result.rejected_trials;
    report.rejected_trials += result.rejected_trials;
    if (result.abandoned) return abandoned;
    if (!result.accepted) return result.last_without_direction ? abandoned : stop_reason::no_acceptable_step;
    in.record.pseudo_time_step = result.used_step;
    m_last_used_pseudo_time_step = result.used_step;
    in.record.step_fraction = limit;
    in.record.step_norm = limit * m_space.norm(in.direction);
    in.record.step_shortened_by_bounds = limit < 1.0;
    m_trial_norm = result.residual_norm;
    const double phase_start_norm = m_phase_start_norm >= 0.0 ? m_phase_start_norm : report.initial_residual_norm;
    if (pseudo_transient_phase_ends(m_pseudo_transient_settings, result.residual_norm, phase_start_norm,
                                    m_pseudo_time_step)) {
      m_pseudo_transient = false;  // full Newton steps from here on (globalization/pseudo_transient.hpp)
      in.access.set_diagonal_shift(nullptr);
      phase_ended = true;
    }
    return std::nullopt;
  }

  /// Failures of a linear solve that a pseudo-time shift W/δ can cure: it
  /// makes W/δ + R'(u) better conditioned for GMRES and more diagonally
  /// dominant for the preconditioner's setup (common practice).
  static bool shifted_system_may_help(stop_reason reason) {
    return reason == stop_reason::no_newton_direction || reason == stop_reason::preconditioner_setup_failed ||
           reason == stop_reason::preconditioner_output_not_finite;
  }

  /// Entries of the work vectors held (for workspace_bytes()).
  std::size_t vector_entries() const {
    std::size_t entries = 0;
    for (const vector_type* v :
         {&m_trial_state, &m_trial_residual, &m_product, &m_cauchy, &m_cauchy_product, &m_weights, &m_shift}) {
      entries += static_cast<std::size_t>(v->size());
    }
    return entries;
  }

 private:
  /// Evaluates R at m_trial_state = u − t x; returns ‖R‖ (+inf when inadmissible).
  template <class Problem>
  double trial(Problem& problem, const step_inputs<Space>& in, double t) {
    m_space.combine(1, in.state, -t, in.direction, m_trial_state);
    return in.access.evaluate_trial(problem, m_trial_state, m_trial_residual);
  }

  Space m_space;
  line_search_settings m_line_search;
  trust_region_settings m_trust_region;
  pseudo_transient_settings m_pseudo_transient_settings;
  globalization_strategy m_globalization = globalization_strategy::line_search;

  vector_type m_trial_state, m_trial_residual, m_product;
  vector_type m_cauchy, m_cauchy_product;  // trust region
  vector_type m_weights, m_shift;          // pseudo-transient term W/δ
  double m_trial_norm = 0.0;
  double m_trust_radius = 0.0;      // trust region
  double m_pseudo_time_step = 0.0;  // pseudo-transient continuation
  double m_last_used_pseudo_time_step = 0.0;
  double m_phase_start_norm = -1.0;  // ‖R‖ where the phase resumed (< 0: the first phase, from ‖R(u0)‖)
  int m_returns_to_pseudo_time = 0;
  bool m_pseudo_transient = false;  // still in the pseudo-transient phase
};

}  // namespace nkit::detail

#endif  // NKIT_NEWTON_STEP_CONTROL_HPP
