#ifndef NKIT_TRUST_REGION_HPP
#define NKIT_TRUST_REGION_HPP

/// \file trust_region.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/globalization/trust_region.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "globalization/trust_region.hpp"

#endif  // NKIT_TRUST_REGION_HPP
