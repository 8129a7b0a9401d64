#ifndef NKIT_BORDERED_VECTOR_SPACE_HPP
#define NKIT_BORDERED_VECTOR_SPACE_HPP

/// \file bordered_vector_space.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/continuation/bordered_vector_space.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "continuation/bordered_vector_space.hpp"

#endif  // NKIT_BORDERED_VECTOR_SPACE_HPP
