#ifndef NKIT_DETAIL_PARALLEL_LOOPS_HPP
#define NKIT_DETAIL_PARALLEL_LOOPS_HPP

/// \file parallel_loops.hpp
/// OpenMP building blocks for eigen_vector_space when NKIT_USE_OPENMP is
/// defined (CMake target nkit::openmp). Each thread of the team takes one
/// contiguous chunk of the vector: chunk t of T covers [t·n/T, (t+1)·n/T).
/// Reductions add the per-chunk partial results in chunk order after the
/// parallel region, so a reduction gives the same bits on every run with the
/// same thread count (not the same bits as the serial code, nor as another
/// thread count: the summation order differs). No heap use: the partial
/// results live in a fixed array on the stack.

#include <Eigen/Core>
#include <algorithm>
#include <array>

#if defined(NKIT_USE_OPENMP)
#include <omp.h>
#endif

namespace nkit::detail {

/// Vectors shorter than this stay serial even with OpenMP: below it, starting
/// a parallel region (a few microseconds) costs more than the work saves
/// (32768 doubles = 256 KiB, one pass ≈ 10–30 µs on one core: common practice
/// for memory-bound loops).
inline constexpr Eigen::Index parallel_length_threshold = 32768;

/// Largest team that the fixed-size partial-result array supports.
inline constexpr int max_reduction_threads = 256;

/// True when `length` entries are worth a parallel region.
inline bool run_in_parallel(Eigen::Index length) {
#if defined(NKIT_USE_OPENMP)
  return length >= parallel_length_threshold && omp_get_max_threads() > 1;
#else
  static_cast<void>(length);
  return false;
#endif
}

/// Number of chunks a long vector is split into: omp_get_max_threads()
/// (capped), fixed before the parallel region, so the split, and with it
/// every reduction's bits, depends only on the requested thread count, not on
/// how many threads the runtime actually gives the team (OMP_DYNAMIC,
/// thread limits).
inline int chunk_count() {
#if defined(NKIT_USE_OPENMP)
  return std::max(1, std::min(omp_get_max_threads(), max_reduction_threads));
#else
  return 1;
#endif
}

/// Calls body(begin, count) once per chunk, on the OpenMP team.
template <class Body>
void for_each_chunk(Eigen::Index length, Body&& body) {
#if defined(NKIT_USE_OPENMP)
  const int chunks = chunk_count();
#pragma omp parallel for schedule(static) num_threads(chunks)
  for (int chunk = 0; chunk < chunks; ++chunk) {
    const Eigen::Index begin = chunk * length / chunks;
    const Eigen::Index end = (chunk + 1) * length / chunks;
    body(begin, end - begin);
  }
#else
  body(Eigen::Index(0), length);
#endif
}

/// Σ over chunks of partial(begin, count), added in chunk order.
template <class Scalar, class Partial>
Scalar sum_over_chunks(Eigen::Index length, Partial&& partial) {
#if defined(NKIT_USE_OPENMP)
  std::array<Scalar, max_reduction_threads> partials{};
  const int team = chunk_count();
#pragma omp parallel for schedule(static) num_threads(team)
  for (int chunk = 0; chunk < team; ++chunk) {
    const Eigen::Index begin = chunk * length / team;
    const Eigen::Index end = (chunk + 1) * length / team;
    partials[static_cast<std::size_t>(chunk)] = partial(begin, end - begin);
  }
  Scalar sum = partials[0];
  for (int thread = 1; thread < team; ++thread) sum += partials[static_cast<std::size_t>(thread)];
  return sum;
#else
  return partial(Eigen::Index(0), length);
#endif
}

/// True when every chunk satisfies predicate(begin, count).
template <class Predicate>
bool all_chunks(Eigen::Index length, Predicate&& predicate) {
  return sum_over_chunks<int>(
             length, [&](Eigen::Index begin, Eigen::Index count) { return predicate(begin, count) ? 0 : 1; }) == 0;
}

}  // namespace nkit::detail

#endif  // NKIT_DETAIL_PARALLEL_LOOPS_HPP
