#ifndef NKIT_GMRES_HPP
#define NKIT_GMRES_HPP

/// \file gmres.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/krylov/gmres.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "krylov/gmres.hpp"

#endif  // NKIT_GMRES_HPP
