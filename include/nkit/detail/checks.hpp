#ifndef NKIT_DETAIL_CHECKS_HPP
#define NKIT_DETAIL_CHECKS_HPP

/// \file checks.hpp
/// Internal invariants (NKIT_ASSERT) and the helpers that build the
/// std::invalid_argument messages naming a bad setting and its value.

#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <sstream>
#include <stdexcept>
#include <string>
#include <string_view>

/// Internal invariant check. On by default in debug builds (no NDEBUG), like
/// assert(); define NKIT_ASSERT yourself before including nkit to change it.
#ifndef NKIT_ASSERT
#ifdef NDEBUG
#define NKIT_ASSERT(condition, message) static_cast<void>(0)
#else
#define NKIT_ASSERT(condition, message) \
  ((condition) ? static_cast<void>(0) : ::nkit::detail::assertion_failed(#condition, message, __FILE__, __LINE__))
#endif
#endif

namespace nkit::detail {

[[noreturn]] inline void assertion_failed(const char* condition, const char* message, const char* file, int line) {
  std::ostringstream text;
  text << "nkit: internal check failed: " << message << " (" << condition << ") at " << file << ':' << line;
  throw std::logic_error(text.str());
}

/// Shortest text that reads back as the same double (for error messages).
inline std::string number_text(double value) {
  for (int digits = 6; digits <= 17; ++digits) {
    std::ostringstream text;
    text.precision(digits);
    text << value;
    if (digits == 17 || std::isnan(value) || std::strtod(text.str().c_str(), nullptr) == value) return text.str();
  }
  return {};
}

inline std::string number_text(std::int64_t value) { return std::to_string(value); }
inline std::string number_text(int value) { return std::to_string(value); }

/// Throws std::invalid_argument("nkit: <setting> must be <requirement> (got <value>)").
template <class Value>
[[noreturn]] void throw_invalid_setting(std::string_view setting, std::string_view requirement, Value value) {
  std::string text = "nkit: ";
  text.append(setting).append(" must be ").append(requirement).append(" (got ").append(number_text(value)).append(")");
  throw std::invalid_argument(text);
}

/// Requires value >= 0 and finite.
inline void require_non_negative(std::string_view setting, double value) {
  if (!(std::isfinite(value) && value >= 0.0)) throw_invalid_setting(setting, "finite and >= 0", value);
}

/// Requires value > 0 (infinity allowed when allow_infinity).
inline void require_positive(std::string_view setting, double value, bool allow_infinity = false) {
  const bool ok = value > 0.0 && (allow_infinity ? !std::isnan(value) : std::isfinite(value));
  if (!ok) throw_invalid_setting(setting, allow_infinity ? "> 0" : "finite and > 0", value);
}

/// Requires lower < value < upper (open interval).
inline void require_open_interval(std::string_view setting, double value, double lower, double upper) {
  if (!(value > lower && value < upper)) {
    throw_invalid_setting(setting, "in (" + number_text(lower) + ", " + number_text(upper) + ")", value);
  }
}

/// Requires lower <= value <= upper (closed interval).
inline void require_closed_interval(std::string_view setting, double value, double lower, double upper) {
  if (!(value >= lower && value <= upper)) {
    throw_invalid_setting(setting, "in [" + number_text(lower) + ", " + number_text(upper) + "]", value);
  }
}

/// Requires an enumerator of a scoped enum whose values run 0 ... last (a value
/// cast from an integer read from a file, say, may lie outside).
template <class Enum>
void require_enumerator(std::string_view setting, Enum value, Enum last, std::string_view names) {
  const auto number = static_cast<long long>(value);
  if (number < 0 || number > static_cast<long long>(last)) {
    throw std::invalid_argument("nkit: " + std::string(setting) + " must be one of " + std::string(names) + " (got " +
                                std::to_string(number) + ")");
  }
}

/// Requires an integer at least `minimum`.
template <class Integer>
void require_at_least(std::string_view setting, Integer value, Integer minimum) {
  if (value < minimum) throw_invalid_setting(setting, ">= " + std::to_string(minimum), value);
}

}  // namespace nkit::detail

#endif  // NKIT_DETAIL_CHECKS_HPP
