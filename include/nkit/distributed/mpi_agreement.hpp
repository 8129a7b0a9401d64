#ifndef NKIT_DISTRIBUTED_MPI_AGREEMENT_HPP
#define NKIT_DISTRIBUTED_MPI_AGREEMENT_HPP

/// \file distributed/mpi_agreement.hpp
/// What every rank of a communicator must agree on before a collective step:
/// the row partition (distributed/row_partition.hpp) from each rank's local
/// row count, and whether any rank raised a flag (so that all ranks throw, or
/// all rebuild, together). Each call is one collective operation or two; used
/// by the hypre adapters in preconditioners/.

#include <mpi.h>

#include <cstdint>

#include "row_partition.hpp"

namespace nkit::detail {

/// The partition of `local_rows` rows on this rank: first_row is the exclusive
/// prefix sum of the ranks' local rows in rank order. Collective.
inline row_partition row_partition_over(MPI_Comm communicator, std::int64_t local_rows) {
  row_partition partition;
  partition.local_rows = local_rows;
  MPI_Allreduce(&local_rows, &partition.global_rows, 1, MPI_INT64_T, MPI_SUM, communicator);
  std::int64_t offset = 0;
  MPI_Exscan(&local_rows, &offset, 1, MPI_INT64_T, MPI_SUM, communicator);
  int rank = 0;
  MPI_Comm_rank(communicator, &rank);
  partition.first_row = rank == 0 ? 0 : offset;  // MPI_Exscan leaves rank 0's result undefined
  return partition;
}

/// True on every rank when `local` is true on any rank. Collective.
inline bool true_on_any_rank(MPI_Comm communicator, bool local) {
  int flag = local ? 1 : 0;
  int result = 0;
  MPI_Allreduce(&flag, &result, 1, MPI_INT, MPI_LOR, communicator);
  return result != 0;
}

}  // namespace nkit::detail

#endif  // NKIT_DISTRIBUTED_MPI_AGREEMENT_HPP
