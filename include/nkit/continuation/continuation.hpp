#ifndef NKIT_CONTINUATION_CONTINUATION_HPP
#define NKIT_CONTINUATION_CONTINUATION_HPP

/// \file continuation/continuation.hpp
/// Parameter continuation of R(u, λ) = 0 (parametrized_residual.hpp):
/// natural-parameter and pseudo-arclength, with step control, fold detection
/// and fold location.
///
/// Pseudo-arclength: H.B. Keller, "Numerical solution of bifurcation and
/// nonlinear eigenvalue problems", in Applications of Bifurcation Theory,
/// P. Rabinowitz ed., Academic Press 1977, 359–384. From a point x_0 = (u_0, λ_0)
/// with unit tangent t_0 the predictor is x_0 + Δs t_0; the corrector solves
/// the bordered system [R(u, λ); θ⟨t_u, u − u_0⟩ + t_λ(λ − λ_0) − Δs] = 0,
/// which stays nonsingular at a simple fold, where R_u is singular; so the
/// branch is followed around it. Natural-parameter steps, the start point and
/// the end point on a bound use the same corrector with the constraint λ = λ_fixed
/// (Euler predictor u_0 + Δλ t_u/t_λ).
///
/// Every solve is nkit's newton_krylov_solver on the bordered system in n + 1
/// unknowns (bordered_vector_space.hpp, bordered_system.hpp): matrix-free
/// J·v (the problem's parametrized jacobian_product when present, else
/// finite differences of the bordered residual) and GMRES, preconditioned,
/// when the user gives a preconditioner of the state block, by Keller's
/// bordering of it (bordered_preconditioner). Tangents: continuation_tangent.hpp.
///
/// Folds: t_λ changes sign between consecutive points. Location: the Illinois
/// variant of regula falsi (M. Dowell & P. Jarratt, BIT 11 (1971) 168–174;
/// citation not checked against the paper) on f(σ) = t_λ at the corrected point x_0 + σ t_0, σ ∈ (0, Δs),
/// which keeps the bracket and converges superlinearly. Why not a quadratic
/// fit of λ(s) through three points: free, but only O(Δs³) accurate, whereas
/// λ is quadratic in s at the fold, so an error δσ costs only O(δσ²) in λ and
/// a few extra corrector solves give λ_fold to about the solver tolerance.
///
/// Allocation: vectors are allocated at the start of a run and reused by the
/// next run of the same size. A run allocates its report (points reserved up
/// to 1024, folds up to 8) and validates settings (message strings); points
/// themselves allocate nothing (checked in tests/allocation).

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <stdexcept>
#include <type_traits>
#include <utility>

#include "../core/preconditioner.hpp"
#include "../detail/illinois.hpp"
#include "../detail/timer.hpp"
#include "../newton/newton_krylov_solver.hpp"
#include "../report/monitor.hpp"
#include "bordered_system.hpp"
#include "bordered_vector_space.hpp"
#include "continuation_settings.hpp"
#include "continuation_tangent.hpp"
#include "parametrized_residual.hpp"

namespace nkit {

template <class Space = eigen_vector_space<double>, class Preconditioner = identity_preconditioner>
class continuation_solver {
 public:
  using space_type = Space;
  using vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;
  using state_view = typename Space::state_view;
  using bordered_space_type = bordered_vector_space<Space>;
  using bordered_type = typename bordered_space_type::vector_type;

 private:
  static constexpr bool unpreconditioned = std::is_same_v<Preconditioner, identity_preconditioner>;
  using corrector_preconditioner =
      std::conditional_t<unpreconditioned, identity_preconditioner, bordered_preconditioner<Preconditioner, Space>>;
  using corrector_type = newton_krylov_solver<bordered_space_type, corrector_preconditioner>;

 public:
  explicit continuation_solver(continuation_settings settings = {}, Space space = Space(),
                               Preconditioner preconditioner = Preconditioner())
      : m_settings(validated(settings)),
        m_space(std::move(space)),
        m_corrector(m_settings.corrector, m_space, wrap(std::move(preconditioner))),
        m_tangent_solver(m_settings.corrector.linear, m_settings.corrector.jacobian, m_space) {}

  /// Validates and stores the settings; throws std::invalid_argument naming the first bad field.
  void configure(const continuation_settings& settings) {
    settings.validate();
    m_settings = settings;
    m_corrector.configure(settings.corrector);
    m_tangent_solver.configure(settings.corrector.linear, settings.corrector.jacobian);
  }
  const continuation_settings& settings() const { return m_settings; }

  /// The user's preconditioner of the state block.
  Preconditioner& preconditioner() {
    if constexpr (unpreconditioned) {
      return m_identity;
    } else {
      return m_corrector.preconditioner().state_preconditioner();
    }
  }

  /// Follows the branch of R(u, λ) = 0 through (u, start_parameter).
  /// `u` is the initial guess at λ = start_parameter; afterwards it holds the
  /// state of the last accepted point (unchanged if the start solve failed).
  /// `monitor(point, state)` runs after every point and located fold and
  /// may return monitor_decision::stop_now. Exceptions from user code
  /// propagate; u then holds the last accepted point.
  template <class Problem, class PointMonitor = null_point_monitor>
  continuation_report follow_branch(Problem&& problem, state_view u, scalar_type start_parameter,
                                    PointMonitor&& monitor = {}) {
    using problem_type = std::remove_reference_t<Problem>;
    static_assert(is_parametrized_residual_v<problem_type, vector_type, scalar_type>,
                  "nkit: the parametrized residual must be callable as problem(const vector_type& u, "
                  "scalar_type parameter, vector_type& r)");
    const continuation_settings& s = m_settings;
    if (!(start_parameter >= s.parameter_lower_bound && start_parameter <= s.parameter_upper_bound)) {
      detail::throw_invalid_setting("continuation start_parameter", "within the parameter bounds", start_parameter);
    }
    const detail::stopwatch clock;
    m_report = continuation_report{};
    m_report.points.reserve(static_cast<std::size_t>(std::min(s.point_budget, 1024)));
    m_report.folds.reserve(8);
    for (bordered_type* v : {&m_point, &m_tangent, &m_candidate, &m_candidate_tangent, &m_fold_trial,
                             &m_fold_trial_tangent, &m_fold_point, &m_prediction}) {
      m_space.allocate_like_state(*v, u);
    }
    m_tangent_solver.allocate_like(u);
    m_state_weight = s.state_weight / static_cast<scalar_type>(m_space.inner().global_size(u));
    const bool arclength = s.method == continuation_method::pseudo_arclength;
    const scalar_type direction = s.initial_direction == parameter_direction::increasing ? 1 : -1;
    bordered_residual<problem_type, Space> residual(problem, m_space);
    attachment attached(*this, &residual);
    m_preconditioner_ready = false;

    // Start point: λ fixed.
    m_corrector.configure(s.corrector);
    m_space.inner().copy(u, m_point.state);
    m_point.parameter = start_parameter;
    residual.fix_parameter(start_parameter);
    effort start;
    if (!correct(residual, m_point, start))
      return finish(clock, failure_reason(continuation_stop_reason::start_point_not_converged));
    // Later solves stop at one absolute target, so their Newton step counts measure the predictor's error.
    const double target =
        std::max(s.corrector.absolute_tolerance, s.corrector.relative_tolerance * m_last_initial_residual_norm);
    if (target > 0) {
      newton_settings fixed_target = s.corrector;
      fixed_target.absolute_tolerance = target;
      fixed_target.relative_tolerance = 0;
      m_corrector.configure(fixed_target);
    }
    m_report.corrector_tolerance = target;
    m_space.inner().copy(m_point.state, u);
    if (!compute_tangent(residual, m_point, m_tangent, tangent_guess::zero, direction, start)) {
      return finish(clock, continuation_stop_reason::tangent_not_solved);
    }
    continuation_point record = make_point(point_kind::start, m_point, m_tangent, 0.0, 0.0, start);
    m_report.points.push_back(record);
    if (detail::notify_point(monitor, record, m_point.state) == monitor_decision::stop_now) {
      return finish(clock, continuation_stop_reason::monitor_requested_stop);
    }

    scalar_type step = s.initial_step;
    scalar_type arclength_so_far = 0;
    effort here;
    continuation_stop_reason failure = continuation_stop_reason::step_below_minimum;
    while (true) {
      if (static_cast<int>(m_report.points.size()) >= s.point_budget) {
        return finish(clock, continuation_stop_reason::point_budget_spent);
      }
      // Predictor and corrector.
      if (arclength) {
        m_space.combine(1, m_point, step, m_tangent, m_candidate);
        residual.constrain_arclength(m_point, m_tangent, m_state_weight, step);
      } else {
        const scalar_type increment = direction * step;
        m_space.combine(1, m_point, increment / m_tangent.parameter, m_tangent, m_candidate);
        m_candidate.parameter = m_point.parameter + increment;
        residual.fix_parameter(m_candidate.parameter);
      }
      m_space.copy(m_candidate, m_prediction);
      bool accepted = correct(residual, m_candidate, here) && close_to_prediction(m_candidate, step, here);
      if (!accepted && m_report.last_corrector_reason == stop_reason::cancellation_flag_raised) {
        return finish(clock, continuation_stop_reason::cancellation_flag_raised);
      }
      failure = continuation_stop_reason::step_below_minimum;

      // A point beyond a bound is replaced by the solve with λ on the bound.
      if (accepted && outside_bounds(m_candidate.parameter)) {
        const scalar_type bound =
            m_candidate.parameter > s.parameter_upper_bound ? s.parameter_upper_bound : s.parameter_lower_bound;
        const scalar_type weight = (bound - m_point.parameter) / (m_candidate.parameter - m_point.parameter);
        m_space.combine(1 - weight, m_point, weight, m_candidate, m_candidate);
        m_candidate.parameter = bound;
        residual.fix_parameter(bound);
        m_space.copy(m_candidate, m_prediction);
        const bool solved = correct(residual, m_candidate, here) && close_to_prediction(m_candidate, step, here);
        if (solved && arclength) {  // tangent bordered by the previous one: keeps the branch's orientation
          residual.constrain_arclength(m_point, m_tangent, m_state_weight, step);
          m_space.copy(m_tangent, m_candidate_tangent);
        }
        if (solved && compute_tangent(residual, m_candidate, m_candidate_tangent,
                                      arclength ? tangent_guess::given : tangent_guess::scaled_previous,
                                      arclength ? 0 : direction, here)) {
          m_space.inner().copy(m_candidate.state, u);
          record = make_point(point_kind::parameter_bound, m_candidate, m_candidate_tangent, step,
                              arclength_so_far + step, here);
          m_report.points.push_back(record);
          detail::notify_point(monitor, record, m_candidate.state);
          return finish(clock, continuation_stop_reason::parameter_bound_reached);
        }
        accepted = false;
      }

      // Tangent at the new point (bordered by the previous tangent in arclength mode).
      if (accepted) {
        if (arclength) m_space.copy(m_tangent, m_candidate_tangent);
        if (!compute_tangent(residual, m_candidate, m_candidate_tangent,
                             arclength ? tangent_guess::given : tangent_guess::scaled_previous,
                             arclength ? 0 : direction, here)) {
          accepted = false;
          // In natural mode a failing tangent solve has the corrector's cause: R_u turning singular.
          if (arclength) failure = continuation_stop_reason::tangent_not_solved;
        } else {
          const scalar_type cosine = alignment(m_tangent, m_candidate_tangent);
          here.tangent_angle = std::acos(std::clamp<scalar_type>(cosine, -1, 1));
          if (arclength && cosine < s.minimum_tangent_alignment) accepted = false;
        }
      }
      if (!accepted) {
        ++here.rejected_steps;
        ++m_report.rejected_steps;
        step *= s.shrink_factor;
        if (step < s.minimum_step) return finish(clock, failure);
        continue;
      }

      // Accept; detect and locate a fold between the previous point and this one.
      const bool fold =
          arclength && m_tangent.parameter != 0 && (m_candidate_tangent.parameter > 0) != (m_tangent.parameter > 0);
      const int index = static_cast<int>(m_report.points.size());
      if (fold && s.locate_folds) {
        const fold_record located = locate_fold(residual, step, arclength_so_far, index);
        m_report.folds.push_back(located);
        if (detail::notify_point(monitor, located.point, m_fold_point.state) == monitor_decision::stop_now) {
          return finish(clock, continuation_stop_reason::monitor_requested_stop);
        }
      }
      std::swap(m_point, m_candidate);
      std::swap(m_tangent, m_candidate_tangent);
      m_space.inner().copy(m_point.state, u);
      arclength_so_far += step;
      record = make_point(point_kind::step, m_point, m_tangent, step, arclength_so_far, here);
      record.fold_detected = fold;
      m_report.points.push_back(record);
      if (detail::notify_point(monitor, record, m_point.state) == monitor_decision::stop_now) {
        return finish(clock, continuation_stop_reason::monitor_requested_stop);
      }
      step *= step_factor(s, here, step);
      step = std::clamp(step, s.minimum_step, s.maximum_step);
      here = effort{};
    }
  }

 private:
  /// Work spent on one point.
  struct effort {
    int newton_steps = 0;
    int rejected_steps = 0;
    double corrector_contraction = 0;  ///< of the latest corrector solve
    double corrector_distance = 0;     ///< of the latest close_to_prediction test
    double tangent_angle = 0;          ///< of the latest tangent
    std::int64_t linear_iterations = 0;
    std::int64_t residual_evaluations = 0;
    stop_reason_if_stopped corrector_reason;
  };

  /// Connects the bordered preconditioner to the run's residual for the run's duration.
  struct attachment {
    attachment(continuation_solver& solver, bordering_source<Space>* source) : m_solver(solver) {
      if constexpr (!unpreconditioned) m_solver.m_corrector.preconditioner().attach(source);
      static_cast<void>(source);
    }
    ~attachment() {
      if constexpr (!unpreconditioned) m_solver.m_corrector.preconditioner().attach(nullptr);
    }
    attachment(const attachment&) = delete;
    attachment& operator=(const attachment&) = delete;
    continuation_solver& m_solver;
  };

  static const continuation_settings& validated(const continuation_settings& settings) {
    settings.validate();
    return settings;
  }
  static corrector_preconditioner wrap(Preconditioner preconditioner) {
    if constexpr (unpreconditioned) {
      return identity_preconditioner{};
    } else {
      return corrector_preconditioner(std::move(preconditioner));
    }
  }

  bool outside_bounds(scalar_type parameter) const {
    return parameter < m_settings.parameter_lower_bound || parameter > m_settings.parameter_upper_bound;
  }
  continuation_stop_reason failure_reason(continuation_stop_reason otherwise) const {
    return m_report.last_corrector_reason == stop_reason::cancellation_flag_raised
               ? continuation_stop_reason::cancellation_flag_raised
               : otherwise;
  }

  /// Whether x lies within maximum_corrector_distance·step of m_prediction
  /// (arclength metric); the distance goes to spent.corrector_distance. Collective.
  bool close_to_prediction(const bordered_type& x, scalar_type step, effort& spent) {
    m_space.combine(1, x, -1, m_prediction, m_prediction);
    const scalar_type state = m_space.inner().norm(m_prediction.state);
    const scalar_type distance =
        std::sqrt(m_state_weight * state * state + m_prediction.parameter * m_prediction.parameter);
    spent.corrector_distance = distance;
    return distance <= m_settings.maximum_corrector_distance * step;
  }

  /// new step / old step after an accepted point (continuation_settings::adaptation):
  /// 1/f clamped to [1/maximum_step_shrink, maximum_step_growth], with
  ///   corrector_convergence:  f = max(√(κ/κ̃), (δ/Δs)/ρ̃, α/α̃)   (Allgower & Georg 2003, §6.1)
  ///   newton_step_count:      f = k / target_corrector_steps;
  /// at most 1 when the point needed rejected attempts.
  static scalar_type step_factor(const continuation_settings& s, const effort& spent, scalar_type step) {
    scalar_type slowdown = 0;
    if (s.adaptation == step_adaptation::newton_step_count) {
      slowdown = static_cast<scalar_type>(std::max(1, spent.newton_steps)) / s.target_corrector_steps;
    } else {
      slowdown = std::max({std::sqrt(spent.corrector_contraction / s.target_contraction),
                           spent.corrector_distance / step / s.target_distance_ratio,
                           spent.tangent_angle / s.target_tangent_angle});
    }
    // No growth right after a rejection: the step that just failed would be tried again (common
    // practice in step-size controllers, e.g. E. Hairer, S.P. Nørsett & G. Wanner, Solving Ordinary
    // Differential Equations I, 2nd ed., Springer 1993, §II.4; from memory).
    const scalar_type growth = spent.rejected_steps > 0 ? 1 : s.maximum_step_growth;
    if (!(slowdown > 0)) return growth;  // nothing observed (exact predictor), or NaN
    return std::clamp(1 / slowdown, 1 / s.maximum_step_shrink, growth);
  }

  /// κ of a solve's first Newton step: max(0, ‖R(x₁)‖/‖R(x₀)‖ − (1 − ω) − ω·ρ), ω
  /// its step fraction, ρ its relative linear residual (continuation_settings::adaptation).
  static double first_step_contraction(const solve_report& solve) {
    if (solve.history.empty() || !(solve.initial_residual_norm > 0)) return 0;
    const newton_step_record& first = solve.history.front();
    if (!first.accepted) return 0;
    const double explained = (1 - first.step_fraction) + first.step_fraction * first.relative_linear_residual;
    return std::max(0.0, first.residual_norm / solve.initial_residual_norm - explained);
  }

  /// Cosine of the angle between two unit tangents in the arclength metric. Collective.
  scalar_type alignment(const bordered_type& a, const bordered_type& b) const {
    return m_state_weight * m_space.inner().dot(a.state, b.state) + a.parameter * b.parameter;
  }

  void account(effort& spent, std::int64_t linear, std::int64_t evaluations) {
    spent.linear_iterations += linear;
    spent.residual_evaluations += evaluations;
    m_report.linear_iterations += linear;
    m_report.residual_evaluations += evaluations;
  }

  /// One Newton–Krylov solve of the bordered system from x (in/out).
  template <class Residual>
  bool correct(Residual& residual, bordered_type& x, effort& spent) {
    const std::int64_t extra_before = residual.extra_evaluations();
    auto run = m_corrector.begin(residual, x);  // the caller-driven loop: no copy of the step history
    while (run.advance() == run_state::running) {
    }
    const solve_report& solve = run.report();
    m_last_initial_residual_norm = solve.initial_residual_norm;
    if (solve.preconditioner_setups > 0) m_preconditioner_ready = true;
    spent.newton_steps = solve.newton_steps;  // of the latest solve: the accepted one when it converged
    spent.corrector_contraction = first_step_contraction(solve);
    spent.corrector_reason = solve.reason;
    m_report.newton_steps += solve.newton_steps;
    m_report.last_corrector_reason = solve.reason;
    account(spent, solve.linear_iterations, solve.residual_evaluations + residual.extra_evaluations() - extra_before);
    return solve.converged();
  }

  enum class tangent_guess {
    zero,            ///< no guess (start point)
    given,           ///< `tangent` holds the guess (the previous tangent, arclength border)
    scaled_previous  ///< m_tangent / t_λ, the solution's shape for the border λ = fixed
  };

  /// The unit tangent at `at` (continuation_tangent.hpp); t_λ gets the sign
  /// of `orientation` when it is ±1.
  template <class Residual>
  bool compute_tangent(Residual& residual, const bordered_type& at, bordered_type& tangent, tangent_guess guess,
                       scalar_type orientation, effort& spent) {
    if (guess == tangent_guess::scaled_previous) {
      m_space.combine(1 / m_tangent.parameter, m_tangent, 0, m_tangent, tangent);
    }
    const bool set_up = !unpreconditioned && !m_preconditioner_ready;  // the start needed no Newton step
    const tangent_solve_result solved = m_tangent_solver.solve(
        residual, at, tangent, guess == tangent_guess::zero, m_corrector.preconditioner(), set_up,
        m_settings.tangent_linear_tolerance, m_settings.maximum_tangent_residual, m_state_weight, orientation);
    if (solved.preconditioner_set_up) m_preconditioner_ready = true;
    account(spent, solved.linear_iterations, solved.residual_evaluations);
    return solved.usable;
  }

  /// Regula falsi (Illinois, detail/illinois.hpp) on f(σ) = t_λ at the
  /// corrected x_0 + σ t_0, σ ∈ (0, step). The reported fold is the iterate
  /// where λ is most extreme (λ is accurate there even where t_λ is noisy).
  template <class Residual>
  fold_record locate_fold(Residual& residual, scalar_type step, scalar_type arclength_so_far, int index) {
    effort spent;
    fold_record fold;
    const scalar_type turning = m_tangent.parameter > 0 ? 1 : -1;  // +1: λ has a maximum at the fold
    detail::sign_change_bracket bracket{0, step, m_tangent.parameter, m_candidate_tangent.parameter};
    const bool take_upper = turning * m_candidate.parameter > turning * m_point.parameter;
    m_space.copy(take_upper ? m_candidate : m_point, m_fold_point);
    scalar_type best_sigma = take_upper ? step : 0;
    scalar_type best_tangent = take_upper ? bracket.f_upper : bracket.f_lower;
    // max|t_λ| over the bracket times its width bounds how much λ varies across it.
    const auto located = [&](const detail::sign_change_bracket& b) {
      const scalar_type uncertainty = std::max(std::abs(b.f_lower), std::abs(b.f_upper)) * (b.upper - b.lower);
      return best_tangent == 0 || uncertainty <= m_settings.fold_parameter_tolerance *
                                                     std::max<scalar_type>(1, std::abs(m_fold_point.parameter));
    };
    const auto evaluate = [&](double sigma, double& f) {
      m_space.combine(1, m_point, sigma, m_tangent, m_fold_trial);
      residual.constrain_arclength(m_point, m_tangent, m_state_weight, sigma);
      m_space.copy(m_tangent, m_fold_trial_tangent);
      if (!correct(residual, m_fold_trial, spent) ||
          !compute_tangent(residual, m_fold_trial, m_fold_trial_tangent, tangent_guess::given, 0, spent)) {
        return false;
      }
      f = m_fold_trial_tangent.parameter;
      if (turning * m_fold_trial.parameter > turning * m_fold_point.parameter) {
        best_tangent = f;
        best_sigma = sigma;
        m_space.copy(m_fold_trial, m_fold_point);
      }
      return true;
    };
    fold.location_iterations =
        detail::illinois_search(bracket, m_settings.maximum_fold_location_iterations, evaluate, located);
    fold.located = located(bracket);
    m_fold_trial_tangent.parameter = best_tangent;
    fold.point = make_point(point_kind::fold, m_fold_point, m_fold_trial_tangent, best_sigma,
                            arclength_so_far + best_sigma, spent);
    fold.point.index = index;
    fold.point.fold_detected = true;
    return fold;
  }

  continuation_point make_point(point_kind kind, const bordered_type& x, const bordered_type& tangent, scalar_type step,
                                scalar_type arclength, const effort& spent) const {
    continuation_point point;
    point.kind = kind;
    point.index = static_cast<int>(m_report.points.size());
    point.parameter = x.parameter;
    point.state_norm = m_space.inner().norm(x.state);
    point.arclength = arclength;
    point.step = step;
    point.tangent_parameter = tangent.parameter;
    point.newton_steps = spent.newton_steps;
    point.corrector_contraction = spent.corrector_contraction;
    point.corrector_distance = spent.corrector_distance;
    point.tangent_angle = spent.tangent_angle;
    point.rejected_steps = spent.rejected_steps;
    point.linear_iterations = spent.linear_iterations;
    point.residual_evaluations = spent.residual_evaluations;
    point.corrector_reason = spent.corrector_reason;
    return point;
  }

  continuation_report finish(const detail::stopwatch& clock, continuation_stop_reason reason) {
    m_report.reason = reason;
    m_report.wall_seconds = clock.seconds();
    return m_report;
  }

  continuation_settings m_settings;
  bordered_space_type m_space;
  corrector_type m_corrector;
  tangent_solver<Space> m_tangent_solver;
  identity_preconditioner m_identity;
  continuation_report m_report;
  scalar_type m_state_weight = 1;
  double m_last_initial_residual_norm = 0;
  bool m_preconditioner_ready = false;
  bordered_type m_point, m_tangent, m_candidate, m_candidate_tangent, m_fold_trial, m_fold_trial_tangent, m_fold_point,
      m_prediction;
};

}  // namespace nkit

#endif  // NKIT_CONTINUATION_CONTINUATION_HPP
