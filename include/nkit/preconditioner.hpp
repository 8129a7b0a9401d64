#ifndef NKIT_PRECONDITIONER_HPP
#define NKIT_PRECONDITIONER_HPP

/// \file preconditioner.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/core/preconditioner.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "core/preconditioner.hpp"

#endif  // NKIT_PRECONDITIONER_HPP
