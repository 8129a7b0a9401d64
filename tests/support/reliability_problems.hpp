// Small systems and helpers shared by the reliability tests (bad input,
// budgets, determinism). The systems are invented; their roots are known in
// closed form.
#ifndef NKIT_TESTS_SUPPORT_RELIABILITY_PROBLEMS_HPP
#define NKIT_TESTS_SUPPORT_RELIABILITY_PROBLEMS_HPP

#include <Eigen/Core>
#include <array>
#include <cmath>
#include <limits>
#include <nkit/nkit.hpp>
#include <stdexcept>
#include <string>

#include "output_capture.hpp"

namespace nkit_test {

/// The four globalisations, for loops and GENERATE.
inline constexpr std::array<nkit::globalization_strategy, 4> all_globalizations = {
    nkit::globalization_strategy::line_search, nkit::globalization_strategy::full_step,
    nkit::globalization_strategy::trust_region, nkit::globalization_strategy::pseudo_transient};

/// r_i = u_i³ − (i + 1): root u_i = cbrt(i + 1); R'(u) = diag(3u²).
/// Counts its calls and the calls made at a non-finite state.
struct counted_cubic {
  long calls = 0;
  long non_finite_inputs = 0;
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) {
    ++calls;
    if (!u.allFinite()) ++non_finite_inputs;
    for (Eigen::Index i = 0; i < u.size(); ++i) r(i) = u(i) * u(i) * u(i) - static_cast<double>(i + 1);
  }
  static Eigen::VectorXd root(Eigen::Index n) {
    Eigen::VectorXd x(n);
    for (Eigen::Index i = 0; i < n; ++i) x(i) = std::cbrt(static_cast<double>(i + 1));
    return x;
  }
};

/// ‖R(u)‖₂ recomputed from the returned u.
template <class Residual>
double residual_norm_at(Residual& residual, const Eigen::VectorXd& u) {
  Eigen::VectorXd r(u.size());
  residual(u, r);
  return r.norm();
}

/// Settings for a problem with one globalisation; the pseudo-time start is
/// large enough (δ0 = 1e3) that the first steps are close to Newton steps.
inline nkit::newton_settings settings_for(nkit::globalization_strategy strategy) {
  nkit::newton_settings settings;
  settings.globalization = strategy;
  settings.pseudo_transient.initial_step = 1e3;
  return settings;
}

/// A Jacobi preconditioner for counted_cubic (M = diag(3u²) from the state)
/// whose setup and apply misbehave on request.
struct scripted_preconditioner {
  /// Status returned by the setup at each Newton step index (ready beyond the list).
  std::array<nkit::setup_status, 8> statuses{
      nkit::setup_status::ready, nkit::setup_status::ready, nkit::setup_status::ready, nkit::setup_status::ready,
      nkit::setup_status::ready, nkit::setup_status::ready, nkit::setup_status::ready, nkit::setup_status::ready};
  int throw_at_setup_step = -1;      ///< setup throws std::runtime_error at this Newton step index
  int nan_apply_from_step = -1;      ///< apply writes NaN from this Newton step index on
  bool nan_on_combinations = false;  ///< apply writes NaN when ‖r‖ != 1 (GMRES's final M⁻¹ V y)
  int resize_output_by = 0;          ///< apply resizes z by this many entries
  int setups = 0;
  int fallbacks_built = 0;
  int current_step = -1;
  Eigen::VectorXd inverse_diagonal;

  nkit::setup_status setup(const nkit::preconditioner_context<>& context) {
    ++setups;
    current_step = context.newton_step;
    if (context.newton_step == throw_at_setup_step) throw std::runtime_error("factorization exploded");
    const auto index = static_cast<std::size_t>(context.newton_step);
    const nkit::setup_status status = index < statuses.size() ? statuses[index] : nkit::setup_status::ready;
    if (status == nkit::setup_status::ready_with_fallback) {
      inverse_diagonal = Eigen::VectorXd::Ones(context.state.size());  // documented fallback: identity
      ++fallbacks_built;
    } else {
      inverse_diagonal = (3.0 * context.state.array().square()).inverse().matrix();
    }
    return status;
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    if (resize_output_by != 0) {
      z = Eigen::VectorXd::Ones(r.size() + resize_output_by);
      return;
    }
    z = inverse_diagonal.cwiseProduct(r);
    const bool basis_vector = std::abs(r.norm() - 1.0) <= 1e-12;  // Arnoldi vectors have unit norm
    if ((nan_apply_from_step >= 0 && current_step >= nan_apply_from_step) || (nan_on_combinations && !basis_vector)) {
      z(0) = std::numeric_limits<double>::quiet_NaN();
    }
  }
};

using scripted_solver = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, scripted_preconditioner>;

/// What a call did: the std::invalid_argument message (empty if none), any
/// other exception's text, and everything printed to stdout/stderr meanwhile.
struct call_result {
  std::string invalid_argument;
  std::string other_exception;
  std::string printed;
};

/// Runs `call` with output captured and exceptions caught.
template <class Call>
call_result run_captured(Call&& call) {
  call_result result;
  output_capture capture;
  try {
    call();
  } catch (const std::invalid_argument& error) {
    result.invalid_argument = error.what();
  } catch (const std::exception& error) {
    result.other_exception = error.what();
  } catch (...) {
    result.other_exception = "(not a std::exception)";
  }
  result.printed = capture.text();
  return result;
}

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_RELIABILITY_PROBLEMS_HPP
