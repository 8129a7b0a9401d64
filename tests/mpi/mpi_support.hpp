// Helpers shared by the MPI tests: gathering a distributed vector and
// checking that every rank holds the same bits.
#ifndef NKIT_TESTS_MPI_SUPPORT_HPP
#define NKIT_TESTS_MPI_SUPPORT_HPP

#include <mpi.h>

#include <Eigen/Core>
#include <cstdint>
#include <cstring>
#include <nkit/report/report.hpp>
#include <vector>

namespace nkit_test {

inline int world_rank() {
  int rank = 0;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank);
  return rank;
}
inline int world_size() {
  int size = 1;
  MPI_Comm_size(MPI_COMM_WORLD, &size);
  return size;
}

/// The whole vector on every rank, local parts concatenated in rank order.
inline Eigen::VectorXd gather_all(MPI_Comm communicator, const Eigen::VectorXd& local) {
  int size = 1;
  MPI_Comm_size(communicator, &size);
  int count = static_cast<int>(local.size());
  std::vector<int> counts(static_cast<std::size_t>(size)), offsets(static_cast<std::size_t>(size), 0);
  MPI_Allgather(&count, 1, MPI_INT, counts.data(), 1, MPI_INT, communicator);
  for (int r = 1; r < size; ++r) offsets[r] = offsets[r - 1] + counts[r - 1];
  Eigen::VectorXd global(offsets.back() + counts.back());
  MPI_Allgatherv(local.data(), count, MPI_DOUBLE, global.data(), counts.data(), offsets.data(), MPI_DOUBLE,
                 communicator);
  return global;
}

/// Balanced split of `global` into consecutive slices; this rank's slice.
inline Eigen::VectorXd local_slice(MPI_Comm communicator, const Eigen::VectorXd& global) {
  int rank = 0, size = 1;
  MPI_Comm_rank(communicator, &rank);
  MPI_Comm_size(communicator, &size);
  const Eigen::Index base = global.size() / size, extra = global.size() % size;
  const Eigen::Index start = rank * base + (rank < extra ? rank : extra);
  return global.segment(start, base + (rank < extra ? 1 : 0));
}

/// 64-bit FNV-1a hash of raw bytes (common practice).
class bit_hash {
 public:
  template <class Value>
  void add(const Value& value) {
    unsigned char bytes[sizeof(Value)];
    std::memcpy(bytes, &value, sizeof(Value));
    for (unsigned char byte : bytes) m_value = (m_value ^ byte) * 1099511628211ULL;
  }
  std::uint64_t value() const { return m_value; }

 private:
  std::uint64_t m_value = 14695981039346656037ULL;
};

/// Hash of everything in a report that decides branches: outcome, counts,
/// and per step every norm, forcing term, step length and iteration count
/// (timings are rank-local and left out).
inline std::uint64_t decision_hash(const nkit::solve_report& report) {
  bit_hash hash;
  hash.add(report.reason ? static_cast<int>(*report.reason) : -1);
  hash.add(report.newton_steps);
  hash.add(report.linear_iterations);
  hash.add(report.residual_evaluations);
  hash.add(report.preconditioner_setups);
  hash.add(report.rejected_trials);
  hash.add(report.initial_residual_norm);
  hash.add(report.final_residual_norm);
  for (const auto& step : report.history) {
    hash.add(step.residual_norm);
    hash.add(step.forcing_term);
    hash.add(step.linear_iterations);
    hash.add(step.relative_linear_residual);
    hash.add(step.linear_status);
    hash.add(step.step_fraction);
    hash.add(step.step_norm);
    hash.add(step.rejected_trials);
    hash.add(step.preconditioner_set_up);
  }
  return hash.value();
}

/// True when `value` is the same on every rank.
inline bool same_on_every_rank(MPI_Comm communicator, std::uint64_t value) {
  int size = 1;
  MPI_Comm_size(communicator, &size);
  std::vector<std::uint64_t> all(static_cast<std::size_t>(size));
  MPI_Allgather(&value, 1, MPI_UINT64_T, all.data(), 1, MPI_UINT64_T, communicator);
  for (std::uint64_t other : all) {
    if (other != value) return false;
  }
  return true;
}

}  // namespace nkit_test

#endif  // NKIT_TESTS_MPI_SUPPORT_HPP
