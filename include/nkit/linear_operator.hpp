#ifndef NKIT_LINEAR_OPERATOR_HPP
#define NKIT_LINEAR_OPERATOR_HPP

/// \file linear_operator.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/core/linear_operator.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "core/linear_operator.hpp"

#endif  // NKIT_LINEAR_OPERATOR_HPP
