// Catch2 matchers and printers shared by nkit's tests.
#ifndef NKIT_TESTS_SUPPORT_MATCHERS_HPP
#define NKIT_TESTS_SUPPORT_MATCHERS_HPP

#include <Eigen/Core>
#include <catch2/catch.hpp>
#include <cmath>
#include <nkit/core/linear_operator.hpp>
#include <nkit/report/outcome.hpp>
#include <optional>
#include <sstream>
#include <string>

namespace nkit_test {

/// |actual_i − expected_i| <= absolute + relative·|expected_i| for every i;
/// describe() names the worst index and its difference.
class close_to_matcher : public Catch::MatcherBase<Eigen::VectorXd> {
 public:
  close_to_matcher(Eigen::VectorXd expected, double absolute, double relative)
      : m_expected(std::move(expected)), m_absolute(absolute), m_relative(relative) {}

  bool match(const Eigen::VectorXd& actual) const override {
    m_detail.clear();
    if (actual.size() != m_expected.size()) {
      m_detail = "sizes differ: " + std::to_string(actual.size()) + " vs " + std::to_string(m_expected.size());
      return false;
    }
    double worst_excess = -1.0;
    Eigen::Index worst = -1;
    for (Eigen::Index i = 0; i < actual.size(); ++i) {
      const double allowed = m_absolute + m_relative * std::abs(m_expected(i));
      const double difference = std::abs(actual(i) - m_expected(i));
      const double excess = std::isnan(difference) ? HUGE_VAL : difference - allowed;
      if (excess > worst_excess) {
        worst_excess = excess;
        worst = i;
      }
    }
    if (worst >= 0 && worst_excess > 0.0) {
      std::ostringstream text;
      text.precision(17);
      text << "worst index " << worst << ": actual " << actual(worst) << ", expected " << m_expected(worst)
           << ", difference " << std::abs(actual(worst) - m_expected(worst));
      m_detail = text.str();
      return false;
    }
    return true;
  }
  std::string describe() const override {
    std::ostringstream text;
    text << "is within abs " << m_absolute << " + rel " << m_relative << " of the expected vector";
    if (!m_detail.empty()) text << " (" << m_detail << ")";
    return text.str();
  }

 private:
  Eigen::VectorXd m_expected;
  double m_absolute;
  double m_relative;
  mutable std::string m_detail;
};

inline close_to_matcher is_close_to(const Eigen::VectorXd& expected, double absolute, double relative = 0.0) {
  return close_to_matcher(expected, absolute, relative);
}

}  // namespace nkit_test

namespace Catch {
template <>
struct StringMaker<nkit::stop_reason> {
  static std::string convert(nkit::stop_reason value) { return std::string(nkit::name(value)); }
};
template <>
struct StringMaker<nkit::stop_reason_if_stopped> {
  static std::string convert(nkit::stop_reason_if_stopped value) { return std::string(nkit::name(value)); }
};
template <>
struct StringMaker<nkit::linear_solve_status> {
  static std::string convert(nkit::linear_solve_status value) { return std::string(nkit::name(value)); }
};
}  // namespace Catch

#endif  // NKIT_TESTS_SUPPORT_MATCHERS_HPP
