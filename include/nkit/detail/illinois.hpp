#ifndef NKIT_DETAIL_ILLINOIS_HPP
#define NKIT_DETAIL_ILLINOIS_HPP

/// \file illinois.hpp
/// Bracketing root search by the Illinois variant of regula falsi
/// (M. Dowell & P. Jarratt, "A modified regula falsi method for computing the
/// root of an equation", BIT 11 (1971) 168–174; citation not checked against the paper): the secant
/// through the bracket ends, and when the same end is kept twice in a row,
/// the other end's function value is halved, which restores superlinear
/// convergence where plain regula falsi stalls on one side.

namespace nkit::detail {

/// A bracket [lower, upper] of a sign change of f, with the true values of f at its ends.
struct sign_change_bracket {
  double lower = 0.0, upper = 0.0;
  double f_lower = 0.0, f_upper = 0.0;
};

/// Shrinks `bracket` (f_lower, f_upper of opposite signs) until stop(bracket)
/// holds, `maximum_evaluations` are spent, or evaluate(x, f) returns false (f
/// could not be computed at x). Trial points outside the open bracket (from
/// rounding) are replaced by its midpoint. Returns the evaluations made.
template <class Evaluate, class Stop>
int illinois_search(sign_change_bracket& bracket, int maximum_evaluations, Evaluate&& evaluate, Stop&& stop) {
  double weighted_lower = bracket.f_lower, weighted_upper = bracket.f_upper;
  int kept = 0;  // +1: the lower end was kept last time, −1: the upper end
  int evaluations = 0;
  while (!stop(static_cast<const sign_change_bracket&>(bracket)) && evaluations < maximum_evaluations) {
    double x = bracket.upper - weighted_upper * (bracket.upper - bracket.lower) / (weighted_upper - weighted_lower);
    if (!(x > bracket.lower && x < bracket.upper)) x = 0.5 * (bracket.lower + bracket.upper);
    double f = 0.0;
    ++evaluations;
    if (!evaluate(x, f)) break;
    if ((f > 0) == (bracket.f_upper > 0)) {
      bracket.upper = x;
      bracket.f_upper = weighted_upper = f;
      if (kept == 1) weighted_lower /= 2;
      kept = 1;
    } else {
      bracket.lower = x;
      bracket.f_lower = weighted_lower = f;
      if (kept == -1) weighted_upper /= 2;
      kept = -1;
    }
  }
  return evaluations;
}

}  // namespace nkit::detail

#endif  // NKIT_DETAIL_ILLINOIS_HPP
