#ifndef NKIT_NEWTON_KRYLOV_SOLVER_HPP
#define NKIT_NEWTON_KRYLOV_SOLVER_HPP

/// \file newton_krylov_solver.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/newton/newton_krylov_solver.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "newton/newton_krylov_solver.hpp"

#endif  // NKIT_NEWTON_KRYLOV_SOLVER_HPP
