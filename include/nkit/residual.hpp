#ifndef NKIT_RESIDUAL_HPP
#define NKIT_RESIDUAL_HPP

/// \file residual.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/core/residual.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "core/residual.hpp"

#endif  // NKIT_RESIDUAL_HPP
