#ifndef NKIT_ANALYTIC_JACOBIAN_HPP
#define NKIT_ANALYTIC_JACOBIAN_HPP

/// \file analytic_jacobian.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/jacobian/analytic_jacobian.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "jacobian/analytic_jacobian.hpp"

#endif  // NKIT_ANALYTIC_JACOBIAN_HPP
