#ifndef NKIT_HYPRE_ALGEBRAIC_MULTIGRID_HPP
#define NKIT_HYPRE_ALGEBRAIC_MULTIGRID_HPP

/// \file hypre_algebraic_multigrid.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/preconditioners/hypre_algebraic_multigrid.hpp>. Include that path instead; this file will be removed in nkit
/// 0.3.

#include "preconditioners/hypre_algebraic_multigrid.hpp"

#endif  // NKIT_HYPRE_ALGEBRAIC_MULTIGRID_HPP
