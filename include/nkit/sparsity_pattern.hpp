#ifndef NKIT_SPARSITY_PATTERN_HPP
#define NKIT_SPARSITY_PATTERN_HPP

/// \file sparsity_pattern.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/jacobian/sparsity_pattern.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "jacobian/sparsity_pattern.hpp"

#endif  // NKIT_SPARSITY_PATTERN_HPP
