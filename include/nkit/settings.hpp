#ifndef NKIT_SETTINGS_HPP
#define NKIT_SETTINGS_HPP

/// \file settings.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/newton/newton_settings.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "newton/newton_settings.hpp"

#endif  // NKIT_SETTINGS_HPP
