#ifndef NKIT_GLOBALIZATION_FORCING_TERM_HPP
#define NKIT_GLOBALIZATION_FORCING_TERM_HPP

/// \file globalization/forcing_term.hpp
/// Inexact-Newton forcing terms: the relative tolerance η_k handed to the
/// linear solver, ‖R(u_k) + R'(u_k) s_k‖ <= η_k ‖R(u_k)‖.
///
/// Source: S.C. Eisenstat & H.F. Walker, "Choosing the forcing terms in an
/// inexact Newton method", SIAM J. Sci. Comput. 17(1) (1996) 16–32. The
/// formulas, safeguards and defaults below follow that paper but have not
/// been checked against its text; the end-game safeguard against
/// oversolving is the one in C.T. Kelley, "Iterative Methods for Linear and
/// Nonlinear Equations", SIAM (1995), §6.3 (section not checked).
///
///   Choice 1:  η_k = | ‖R_k‖ − ‖R_{k−1} + J_{k−1} s_{k−1}‖ | / ‖R_{k−1}‖
///              safeguard: if η_{k−1}^φ > 0.1, η_k = max(η_k, η_{k−1}^φ), φ = (1+√5)/2
///   Choice 2:  η_k = γ (‖R_k‖ / ‖R_{k−1}‖)^α
///              safeguard: if γ η_{k−1}^α > 0.1, η_k = max(η_k, γ η_{k−1}^α)
///   both:      η_k = min(η_k, η_max); then, against oversolving near the
///              end, η_k = min(η_max, max(η_k, 0.5 τ / ‖R_k‖)) with τ the
///              residual norm that counts as converged.
///
/// For Choice 1 the linear residual of the full Newton step reported by GMRES
/// stands for ‖R_{k−1} + J_{k−1} s_{k−1}‖ even when the line search shortened
/// the step (common practice).

#include <algorithm>
#include <cmath>
#include <string>
#include <string_view>

#include "../detail/checks.hpp"

namespace nkit {

enum class forcing_term_formula { constant, eisenstat_walker_choice_1, eisenstat_walker_choice_2 };

struct forcing_term_settings {
  forcing_term_formula formula = forcing_term_formula::eisenstat_walker_choice_2;
  /// η for formula == constant. Small values give (near) exact Newton steps.
  double constant_value = 1e-4;
  /// η_0 for the Eisenstat–Walker choices.
  double initial_value = 0.5;
  /// η_max, the cap for the Eisenstat–Walker choices.
  double maximum_value = 0.9;
  /// γ and α of Choice 2 (the paper's experiments used (0.9, 2) and (1, (1+√5)/2)).
  double choice_2_gamma = 0.9;
  double choice_2_alpha = 2.0;
  /// Apply the end-game safeguard (Eisenstat–Walker choices only).
  bool avoid_oversolving = true;

  void validate(std::string_view prefix = "forcing_term_settings") const {
    const std::string p(prefix);
    detail::require_enumerator(p + ".formula", formula, forcing_term_formula::eisenstat_walker_choice_2,
                               "constant, eisenstat_walker_choice_1, eisenstat_walker_choice_2");
    detail::require_open_interval(p + ".constant_value", constant_value, 0.0, 1.0);
    detail::require_open_interval(p + ".initial_value", initial_value, 0.0, 1.0);
    detail::require_open_interval(p + ".maximum_value", maximum_value, 0.0, 1.0);
    detail::require_closed_interval(p + ".choice_2_gamma", choice_2_gamma, 0.0, 1.0);
    if (!(choice_2_alpha > 1.0 && choice_2_alpha <= 2.0)) {
      detail::throw_invalid_setting(p + ".choice_2_alpha", "in (1, 2]", choice_2_alpha);
    }
  }
};

/// The sequence η_0, η_1, ... for one solve. No allocation.
class forcing_term_sequence {
 public:
  explicit forcing_term_sequence(forcing_term_settings settings = {}) : m_settings(settings) {}

  void reset() {
    m_previous_eta = -1.0;
    m_previous_norm = -1.0;
    m_previous_linear_residual = -1.0;
  }

  /// η for the step from a point with ‖R‖ = residual_norm. `converged_norm`
  /// is τ, the norm that stops the solve (for the oversolving safeguard).
  double next(double residual_norm, double converged_norm) const {
    const forcing_term_settings& s = m_settings;
    if (s.formula == forcing_term_formula::constant) return s.constant_value;
    double eta = s.initial_value;
    if (m_previous_eta > 0.0 && m_previous_norm > 0.0) {
      if (s.formula == forcing_term_formula::eisenstat_walker_choice_1) {
        const double golden = 0.5 * (1.0 + std::sqrt(5.0));
        eta = std::abs(residual_norm - m_previous_linear_residual) / m_previous_norm;
        const double safeguard = std::pow(m_previous_eta, golden);
        if (safeguard > 0.1) eta = std::max(eta, safeguard);
      } else {
        eta = s.choice_2_gamma * std::pow(residual_norm / m_previous_norm, s.choice_2_alpha);
        const double safeguard = s.choice_2_gamma * std::pow(m_previous_eta, s.choice_2_alpha);
        if (safeguard > 0.1) eta = std::max(eta, safeguard);
      }
      eta = std::min(eta, s.maximum_value);
    }
    if (s.avoid_oversolving && residual_norm > 0.0) {
      eta = std::min(s.maximum_value, std::max(eta, 0.5 * converged_norm / residual_norm));
    }
    // A zero forcing term would ask GMRES for an exact solve; keep a floor at rounding level.
    return std::max(eta, 1e-15);
  }

  /// Records the step just taken: the η used, ‖R‖ where it started and the
  /// linear residual ‖R + J s‖ GMRES reached.
  void record(double eta_used, double residual_norm, double linear_residual_norm) {
    m_previous_eta = eta_used;
    m_previous_norm = residual_norm;
    m_previous_linear_residual = linear_residual_norm;
  }

 private:
  forcing_term_settings m_settings;
  double m_previous_eta = -1.0;
  double m_previous_norm = -1.0;
  double m_previous_linear_residual = -1.0;
};

}  // namespace nkit

#endif  // NKIT_GLOBALIZATION_FORCING_TERM_HPP
