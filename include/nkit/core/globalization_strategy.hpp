#ifndef NKIT_CORE_GLOBALIZATION_STRATEGY_HPP
#define NKIT_CORE_GLOBALIZATION_STRATEGY_HPP

/// \file core/globalization_strategy.hpp
/// The step controls a Newton solve can use to turn a direction into a step:
/// chosen in newton_settings::globalization, named in the report when one of
/// them gives up (solve_report::globalization_at_stop). The step controls
/// themselves live in globalization/.

#include <string_view>

namespace nkit {

/// How a Newton direction becomes a step.
enum class globalization_strategy {
  line_search,      ///< backtracking with sufficient decrease (line_search.hpp); the robust default
  full_step,        ///< take λ = 1 unless the residual there is not finite (or the state inadmissible)
  trust_region,     ///< dogleg between the Krylov-subspace Cauchy point and the Newton step (trust_region.hpp)
  pseudo_transient  ///< pseudo-transient continuation (pseudo_transient.hpp), then full Newton steps
};

constexpr std::string_view name(globalization_strategy value) {
  switch (value) {
    case globalization_strategy::line_search:
      return "line_search";
    case globalization_strategy::full_step:
      return "full_step";
    case globalization_strategy::trust_region:
      return "trust_region";
    case globalization_strategy::pseudo_transient:
      return "pseudo_transient";
  }
  return "unknown";
}

}  // namespace nkit

#endif  // NKIT_CORE_GLOBALIZATION_STRATEGY_HPP
