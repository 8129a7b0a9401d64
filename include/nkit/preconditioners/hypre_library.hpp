#ifndef NKIT_PRECONDITIONERS_HYPRE_LIBRARY_HPP
#define NKIT_PRECONDITIONERS_HYPRE_LIBRARY_HPP

/// \file preconditioners/hypre_library.hpp
/// hypre's library-wide initialisation, done once per process by whichever of
/// nkit's hypre adapters (hypre_algebraic_multigrid.hpp,
/// hypre_structured_multigrid.hpp) is created first. MPI must already be
/// initialised.

#include <HYPRE_utilities.h>

#include <mutex>

namespace nkit::detail {

inline void initialise_hypre_once() {
  static std::once_flag initialised;
  std::call_once(initialised, [] { HYPRE_Init(); });
}

}  // namespace nkit::detail

#endif  // NKIT_PRECONDITIONERS_HYPRE_LIBRARY_HPP
