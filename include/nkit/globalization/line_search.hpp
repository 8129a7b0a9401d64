#ifndef NKIT_GLOBALIZATION_LINE_SEARCH_HPP
#define NKIT_GLOBALIZATION_LINE_SEARCH_HPP

/// \file globalization/line_search.hpp
/// Backtracking along an inexact Newton direction s.
///
/// Acceptance (sufficient decrease for inexact Newton steps):
///   ‖R(u + λs)‖ <= (1 − t λ (1 − η)) ‖R(u)‖,  t = sufficient_decrease,
/// where η is the relative linear residual GMRES achieved; S.C. Eisenstat &
/// H.F. Walker, "Globally convergent inexact Newton methods", SIAM J. Optim.
/// 4(2) (1994) 393–422 (condition not checked against the paper).
///
/// Step-length choice: safeguarded quadratic interpolation at the first
/// backtrack and cubic interpolation afterwards on φ(λ) = ½‖R(u + λs)‖²,
/// with the new λ kept in [minimum_shrink_factor·λ, maximum_shrink_factor·λ]; J.E. Dennis
/// & R.B. Schnabel, "Numerical Methods for Unconstrained Optimization and
/// Nonlinear Equations", SIAM Classics (1996), Algorithm A6.3.1. The slope
/// φ'(0) = R(u)ᵀ R'(u) s is needed only once a trial is rejected; the caller
/// computes it lazily (one Jacobian-vector product). If it is not negative
/// (finite-difference noise), the bound −(1 − η)‖R(u)‖² that an inexact
/// Newton direction satisfies is used instead.
///
/// A trial whose residual is NaN or Inf is rejected and the step shrinks by
/// maximum_shrink_factor; the iterate is never moved to such a point.

#include <cmath>
#include <limits>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

struct line_search_settings {
  /// t in the acceptance test (Dennis & Schnabel use 1e-4).
  double sufficient_decrease = 1e-4;
  /// Bounds on the ratio new λ / old λ (Dennis & Schnabel: 0.1 and 0.5).
  double minimum_shrink_factor = 0.1;
  double maximum_shrink_factor = 0.5;
  /// Rejected trials allowed per Newton step before the search fails.
  int maximum_rejected_trials = 20;

  void validate(std::string_view prefix = "line_search_settings") const {
    const std::string p(prefix);
    detail::require_open_interval(p + ".sufficient_decrease", sufficient_decrease, 0.0, 1.0);
    detail::require_open_interval(p + ".minimum_shrink_factor", minimum_shrink_factor, 0.0, 1.0);
    detail::require_open_interval(p + ".maximum_shrink_factor", maximum_shrink_factor, 0.0, 1.0);
    if (minimum_shrink_factor > maximum_shrink_factor) {
      detail::throw_invalid_setting(p + ".minimum_shrink_factor",
                                    "<= maximum_shrink_factor (" + detail::number_text(maximum_shrink_factor) + ")",
                                    minimum_shrink_factor);
    }
    detail::require_at_least(p + ".maximum_rejected_trials", maximum_rejected_trials, 0);
  }
};

struct line_search_result {
  bool accepted = false;
  double step_fraction = 0.0;  ///< λ of the accepted (or last) trial
  double residual_norm = 0.0;  ///< ‖R(u + λs)‖ of the accepted (or last finite) trial
  int trials = 0;              ///< residual evaluations made
  int non_finite_trials = 0;
};

/// Runs the search. `trial(λ)` evaluates and returns ‖R(u + λs)‖ (NaN/Inf
/// allowed); `slope()` returns φ'(0). `eta` is the achieved relative linear
/// residual (in [0, 1)). With `require_decrease == false` (full-step mode)
/// any finite trial is accepted and only non-finite trials shrink the step.
template <class Trial, class Slope>
line_search_result backtracking_line_search(const line_search_settings& settings, double initial_norm, double eta,
                                            bool require_decrease, Trial&& trial, Slope&& slope) {
  line_search_result result;
  const double phi0 = 0.5 * initial_norm * initial_norm;
  double lambda = 1.0;
  double previous_lambda = 0.0;
  double previous_phi = 0.0;
  bool have_previous = false;
  bool have_slope = false;
  double initial_slope = 0.0;
  const double fallback_slope = -(1.0 - eta) * initial_norm * initial_norm;

  for (int backtrack = 0;; ++backtrack) {
    const double norm = trial(lambda);
    ++result.trials;
    result.step_fraction = lambda;
    const bool finite = std::isfinite(norm);
    if (finite) result.residual_norm = norm;
    if (finite &&
        (!require_decrease || norm <= (1.0 - settings.sufficient_decrease * lambda * (1.0 - eta)) * initial_norm)) {
      result.accepted = true;
      return result;
    }
    if (backtrack >= settings.maximum_rejected_trials) return result;

    double next = settings.maximum_shrink_factor * lambda;
    if (!finite) {
      ++result.non_finite_trials;
      have_previous = false;  // nothing to interpolate from
    } else {
      if (!have_slope) {
        initial_slope = slope();
        if (!(initial_slope < 0.0) || !std::isfinite(initial_slope)) initial_slope = fallback_slope;
        have_slope = true;
      }
      const double phi = 0.5 * norm * norm;
      double candidate;
      if (!have_previous) {
        candidate = -initial_slope * lambda * lambda / (2.0 * (phi - phi0 - initial_slope * lambda));
      } else {
        const double r1 = phi - phi0 - initial_slope * lambda;
        const double r2 = previous_phi - phi0 - initial_slope * previous_lambda;
        const double denominator = lambda - previous_lambda;
        const double a = (r1 / (lambda * lambda) - r2 / (previous_lambda * previous_lambda)) / denominator;
        const double b =
            (-previous_lambda * r1 / (lambda * lambda) + lambda * r2 / (previous_lambda * previous_lambda)) /
            denominator;
        if (a == 0.0) {
          candidate = -initial_slope / (2.0 * b);
        } else {
          const double discriminant = b * b - 3.0 * a * initial_slope;
          candidate = discriminant >= 0.0 ? (-b + std::sqrt(discriminant)) / (3.0 * a)
                                          : std::numeric_limits<double>::quiet_NaN();
        }
      }
      if (std::isfinite(candidate)) {
        next = std::fmin(std::fmax(candidate, settings.minimum_shrink_factor * lambda),
                         settings.maximum_shrink_factor * lambda);
      }
      previous_lambda = lambda;
      previous_phi = phi;
      have_previous = true;
    }
    lambda = next;
  }
}

}  // namespace nkit

#endif  // NKIT_GLOBALIZATION_LINE_SEARCH_HPP
