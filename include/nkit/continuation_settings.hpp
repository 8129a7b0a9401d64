#ifndef NKIT_CONTINUATION_SETTINGS_HPP
#define NKIT_CONTINUATION_SETTINGS_HPP

/// \file continuation_settings.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/continuation/continuation_settings.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "continuation/continuation_settings.hpp"

#endif  // NKIT_CONTINUATION_SETTINGS_HPP
