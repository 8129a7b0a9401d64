#ifndef NKIT_PSEUDO_TRANSIENT_HPP
#define NKIT_PSEUDO_TRANSIENT_HPP

/// \file pseudo_transient.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/globalization/pseudo_transient.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "globalization/pseudo_transient.hpp"

#endif  // NKIT_PSEUDO_TRANSIENT_HPP
