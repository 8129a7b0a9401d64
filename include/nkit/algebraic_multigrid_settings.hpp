#ifndef NKIT_ALGEBRAIC_MULTIGRID_SETTINGS_HPP
#define NKIT_ALGEBRAIC_MULTIGRID_SETTINGS_HPP

/// \file algebraic_multigrid_settings.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/preconditioners/algebraic_multigrid_settings.hpp>. Include that path instead; this file will be removed in
/// nkit 0.3.

#include "preconditioners/algebraic_multigrid_settings.hpp"

#endif  // NKIT_ALGEBRAIC_MULTIGRID_SETTINGS_HPP
