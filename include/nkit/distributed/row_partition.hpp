#ifndef NKIT_DISTRIBUTED_ROW_PARTITION_HPP
#define NKIT_DISTRIBUTED_ROW_PARTITION_HPP

/// \file distributed/row_partition.hpp
/// Which global rows (unknowns) a rank owns, and how a distributed problem
/// hands its assembled Jacobian to a preconditioner.
///
/// Ownership: ranks own consecutive ranges of the global numbering, in rank
/// order. Rank r owns the rows [first_row, first_row + local_rows), where
/// first_row is the exclusive prefix sum of the local sizes of ranks 0..r−1
/// (one MPI_Exscan). So the global index of local entry i is first_row + i,
/// and the user's global numbering must be rank-contiguous (true for strips,
/// slabs and any numbering that counts rank 0's cells first, then rank 1's, …).
/// A serial space is the one-rank case: first_row = 0.
///
/// Distributed Jacobian: the problem's optional member
///   void assemble_jacobian(const Eigen::VectorXd& u_local, nkit::sparse_matrix& jacobian)
/// keeps its serial signature. On a distributed space it writes only the
/// rank's own rows: `jacobian` has local_rows rows and global_rows columns;
/// row i is global row first_row + i, and column indices are global. Entries
/// in columns the rank does not own couple to neighbouring ranks (the halo).
/// Column indices are `int` (nkit::sparse_matrix's StorageIndex), which
/// limits a problem to 2^31 − 1 global unknowns.
///
/// Preconditioners use this partition: block Jacobi keeps the columns in the
/// owned range (the diagonal block), hypre's IJ interface is created with
/// ilower = first_row, iupper = first_row + local_rows − 1.

#include <cstdint>
#include <type_traits>
#include <utility>

namespace nkit {

struct row_partition {
  std::int64_t first_row = 0;    ///< global index of local row 0
  std::int64_t local_rows = 0;   ///< rows owned by this rank
  std::int64_t global_rows = 0;  ///< rows over all ranks

  /// One past the last owned global row.
  std::int64_t end_row() const { return first_row + local_rows; }
  /// True when global row/column `index` is owned by this rank.
  bool owns(std::int64_t index) const { return index >= first_row && index < end_row(); }
};

namespace detail {
template <class Space, class = void>
struct has_first_global_index : std::false_type {};
template <class Space>
struct has_first_global_index<Space, std::void_t<decltype(std::declval<const Space&>().first_global_index(
                                         std::declval<const typename Space::vector_type&>()))>> : std::true_type {};
}  // namespace detail

/// Global index of local entry 0 of vectors laid out like `prototype`.
/// Collective on a distributed space (one exclusive prefix sum); 0 on a serial one.
template <class Space>
std::int64_t first_global_row(const Space& space, const typename Space::vector_type& prototype) {
  if constexpr (detail::has_first_global_index<Space>::value) {
    return space.first_global_index(prototype);
  } else {
    static_cast<void>(space);
    static_cast<void>(prototype);
    return 0;
  }
}

/// The partition of vectors laid out like `prototype`. Collective on a
/// distributed space (two reductions); a serial space gives first_row = 0.
template <class Space>
row_partition row_partition_of(const Space& space, const typename Space::vector_type& prototype) {
  row_partition partition;
  partition.local_rows = static_cast<std::int64_t>(prototype.size());
  partition.global_rows = space.global_size(prototype);
  partition.first_row = first_global_row(space, prototype);
  return partition;
}

}  // namespace nkit

#endif  // NKIT_DISTRIBUTED_ROW_PARTITION_HPP
