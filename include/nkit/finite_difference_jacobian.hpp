#ifndef NKIT_FINITE_DIFFERENCE_JACOBIAN_HPP
#define NKIT_FINITE_DIFFERENCE_JACOBIAN_HPP

/// \file finite_difference_jacobian.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/jacobian/finite_difference_jacobian.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "jacobian/finite_difference_jacobian.hpp"

#endif  // NKIT_FINITE_DIFFERENCE_JACOBIAN_HPP
