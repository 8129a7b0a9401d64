#ifndef NKIT_BLOCK_VECTOR_SPACE_HPP
#define NKIT_BLOCK_VECTOR_SPACE_HPP

/// \file block_vector_space.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/core/block_vector_space.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "core/block_vector_space.hpp"

#endif  // NKIT_BLOCK_VECTOR_SPACE_HPP
