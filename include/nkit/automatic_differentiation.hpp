#ifndef NKIT_AUTOMATIC_DIFFERENTIATION_HPP
#define NKIT_AUTOMATIC_DIFFERENTIATION_HPP

/// \file automatic_differentiation.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/jacobian/automatic_differentiation.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "jacobian/automatic_differentiation.hpp"

#endif  // NKIT_AUTOMATIC_DIFFERENTIATION_HPP
