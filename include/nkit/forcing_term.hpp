#ifndef NKIT_FORCING_TERM_HPP
#define NKIT_FORCING_TERM_HPP

/// \file forcing_term.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/globalization/forcing_term.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "globalization/forcing_term.hpp"

#endif  // NKIT_FORCING_TERM_HPP
