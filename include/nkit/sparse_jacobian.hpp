#ifndef NKIT_SPARSE_JACOBIAN_HPP
#define NKIT_SPARSE_JACOBIAN_HPP

/// \file sparse_jacobian.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/jacobian/sparse_jacobian.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "jacobian/sparse_jacobian.hpp"

#endif  // NKIT_SPARSE_JACOBIAN_HPP
