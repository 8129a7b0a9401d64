// Bitwise equality of two doubles, for the tests that check results are
// reproduced exactly (one definition, so that batched test sources do not clash).
#ifndef NKIT_TESTS_SUPPORT_SAME_BITS_HPP
#define NKIT_TESTS_SUPPORT_SAME_BITS_HPP

#include <cstring>

namespace nkit_test {

/// True when a and b have the same bit pattern (unlike ==, +0 and −0 differ
/// and a NaN equals itself).
inline bool same_bits(double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; }

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_SAME_BITS_HPP
