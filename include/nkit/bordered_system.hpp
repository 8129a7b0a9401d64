#ifndef NKIT_BORDERED_SYSTEM_HPP
#define NKIT_BORDERED_SYSTEM_HPP

/// \file bordered_system.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/continuation/bordered_system.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "continuation/bordered_system.hpp"

#endif  // NKIT_BORDERED_SYSTEM_HPP
