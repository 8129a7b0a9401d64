#ifndef NKIT_CONTINUATION_TANGENT_HPP
#define NKIT_CONTINUATION_TANGENT_HPP

/// \file continuation_tangent.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/continuation/continuation_tangent.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "continuation/continuation_tangent.hpp"

#endif  // NKIT_CONTINUATION_TANGENT_HPP
