#ifndef NKIT_MPI_VECTOR_SPACE_HPP
#define NKIT_MPI_VECTOR_SPACE_HPP

/// \file mpi_vector_space.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/distributed/mpi_vector_space.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "distributed/mpi_vector_space.hpp"

#endif  // NKIT_MPI_VECTOR_SPACE_HPP
