#ifndef NKIT_EIGEN_VECTOR_SPACE_HPP
#define NKIT_EIGEN_VECTOR_SPACE_HPP

/// \file eigen_vector_space.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/core/eigen_vector_space.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "core/eigen_vector_space.hpp"

#endif  // NKIT_EIGEN_VECTOR_SPACE_HPP
