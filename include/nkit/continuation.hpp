#ifndef NKIT_CONTINUATION_HPP
#define NKIT_CONTINUATION_HPP

/// \file continuation.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/continuation/continuation.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "continuation/continuation.hpp"

#endif  // NKIT_CONTINUATION_HPP
