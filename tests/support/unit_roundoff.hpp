// The unit roundoff of IEEE double precision, shared by the tests that derive
// tolerances from it (one definition, so that batched test sources do not clash).
#ifndef NKIT_TESTS_SUPPORT_UNIT_ROUNDOFF_HPP
#define NKIT_TESTS_SUPPORT_UNIT_ROUNDOFF_HPP

#include <limits>

namespace nkit_test {

/// u = ε/2 = 2⁻⁵³ for round-to-nearest (N.J. Higham, "Accuracy and Stability of
/// Numerical Algorithms", 2nd ed. 2002, §2.1).
constexpr double unit_roundoff = std::numeric_limits<double>::epsilon() / 2;

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_UNIT_ROUNDOFF_HPP
