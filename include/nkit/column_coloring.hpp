#ifndef NKIT_COLUMN_COLORING_HPP
#define NKIT_COLUMN_COLORING_HPP

/// \file column_coloring.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/jacobian/column_coloring.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "jacobian/column_coloring.hpp"

#endif  // NKIT_COLUMN_COLORING_HPP
