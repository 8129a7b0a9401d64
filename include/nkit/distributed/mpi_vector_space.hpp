#ifndef NKIT_DISTRIBUTED_MPI_VECTOR_SPACE_HPP
#define NKIT_DISTRIBUTED_MPI_VECTOR_SPACE_HPP

/// \file distributed/mpi_vector_space.hpp
/// Vector space for MPI-parallel codes with their own domain decomposition:
/// each rank holds its own slice of every vector as a plain local
/// Eigen::VectorXd (so the user's residual code does not change), and every
/// reduction is global, formed by MPI_Allreduce on the communicator the user
/// passes (never MPI_COMM_WORLD implicitly).
///
/// Not part of nkit.hpp: include it explicitly and link the CMake target
/// nkit::mpi (created only when MPI is found).
///
/// Collective members (every rank of the communicator must call them, in the
/// same order, and every rank receives the same value): dot, norm, all_finite,
/// global_size, first_global_index, maximum_step_to_bounds, within_bounds,
/// dot_many, any_of. Element-wise members come from local_vector_operations
/// (shared with the serial space, OpenMP path included): they touch only
/// local data and never communicate.
///
/// Every rank takes the same branch in nkit's solvers because every decision
/// is made from these reductions. That relies on MPI_Allreduce returning the
/// same bits on every rank, which the MPI standard recommends but does not
/// require; Open MPI's reduction algorithms do so (checked by nkit's MPI
/// tests, which compare per-rank reports bitwise).
///
/// The communicator is referenced, not duplicated: it must outlive the space.
/// Collective operations on it do not interfere with the user's own
/// point-to-point messages (MPI standard: collective and point-to-point
/// communication never match each other).
///
/// Allocation: no member allocates, except allocate_like() when the local
/// size changes.

#include <mpi.h>

#include <Eigen/Core>
#include <cmath>
#include <cstdint>
#include <limits>
#include <memory>

#include "../core/local_vector_operations.hpp"

namespace nkit {

class mpi_vector_space : public local_vector_operations<double> {
  using base = local_vector_operations<double>;

 public:
  using base::const_view;
  using base::scalar_type;
  using base::state_view;
  using base::vector_type;

  /// Uses `communicator` for every reduction. MPI must be initialised.
  explicit mpi_vector_space(MPI_Comm communicator)
      : m_communicator(communicator), m_reductions(std::make_shared<std::int64_t>(0)) {
    MPI_Comm_rank(communicator, &m_rank);
    MPI_Comm_size(communicator, &m_size);
  }

  MPI_Comm communicator() const { return m_communicator; }
  int rank() const { return m_rank; }
  int size() const { return m_size; }

  /// Number of MPI_Allreduce/MPI_Exscan calls made through this space and its
  /// copies (the solver keeps copies), for checking communication counts.
  std::int64_t reduction_count() const { return *m_reductions; }

  /// Σ over all ranks of the local x·y. Collective.
  double dot(const_view x, const_view y) const { return sum(x.dot(y)); }
  /// Euclidean norm of the whole distributed vector. Collective: one
  /// reduction, three when Σ x_i² overflows or underflows (then a global
  /// maximum and a sum of scaled squares; every rank takes the same branch).
  double norm(const_view x) const {
    const double squares = sum(local_sum_of_squares(x));
    if (!detail::sum_of_squares_out_of_range(squares)) return std::sqrt(squares);
    const double largest = maximum(local_largest_magnitude(x));
    const double local = largest > 0.0 && largest < std::numeric_limits<double>::infinity()
                             ? local_scaled_sum_of_squares(x, largest)
                             : 0.0;
    return detail::rescaled_norm(largest, local, [this](double value) { return sum(value); });
  }
  /// No NaN or Inf on any rank. Collective.
  bool all_finite(const_view x) const { return all(x.allFinite()); }
  /// Total number of unknowns over all ranks. Collective.
  std::int64_t global_size(const_view x) const {
    std::int64_t local = static_cast<std::int64_t>(x.size());
    std::int64_t global = 0;
    ++*m_reductions;
    MPI_Allreduce(&local, &global, 1, MPI_INT64_T, MPI_SUM, m_communicator);
    return global;
  }
  /// Smallest nonzero and largest |x_i| over all ranks. Collective (one reduction).
  magnitude_range<double> magnitudes(const_view x) const {
    const magnitude_range<double> local = local_magnitudes(x);
    // max of (largest, 1/smallest_nonzero) in one reduction; 1/0 = none on this rank.
    double values[2] = {local.largest, local.smallest_nonzero > 0.0 ? 1.0 / local.smallest_nonzero : 0.0};
    ++*m_reductions;
    MPI_Allreduce(MPI_IN_PLACE, values, 2, MPI_DOUBLE, MPI_MAX, m_communicator);
    return {values[1] > 0.0 ? 1.0 / values[1] : 0.0, values[0]};
  }
  /// max_i |x_i| / (absolute + relative·|reference_i|) over all ranks. Collective.
  double weighted_max_norm(const_view x, const_view reference, double absolute, double relative) const {
    return maximum(local_weighted_max_norm(x, reference, absolute, relative));
  }

  /// Global index of this rank's first entry when ranks own consecutive
  /// ranges in rank order (exclusive prefix sum of the local sizes). Collective.
  std::int64_t first_global_index(const_view x) const {
    std::int64_t local = static_cast<std::int64_t>(x.size());
    std::int64_t offset = 0;
    ++*m_reductions;
    MPI_Exscan(&local, &offset, 1, MPI_INT64_T, MPI_SUM, m_communicator);
    return m_rank == 0 ? 0 : offset;  // MPI_Exscan leaves rank 0's result undefined
  }

  /// out[i] = dot(basis[i], w) for i < count with one MPI_Allreduce for all
  /// `count` sums (used by classical Gram–Schmidt). Collective.
  void dot_many(const vector_type* basis, int count, const_view w, double* out) const {
    for (int i = 0; i < count; ++i) out[i] = basis[i].dot(w);
    ++*m_reductions;
    MPI_Allreduce(MPI_IN_PLACE, out, count, MPI_DOUBLE, MPI_SUM, m_communicator);
  }
  /// True on every rank when `local` is true on at least one. Collective.
  bool any_of(bool local) const {
    int flag = local ? 1 : 0;
    int result = 0;
    ++*m_reductions;
    MPI_Allreduce(&flag, &result, 1, MPI_INT, MPI_LOR, m_communicator);
    return result != 0;
  }

  /// Largest t >= 0 with lower <= x + t d <= upper on every rank: the local
  /// ratio test, then a global minimum. Collective.
  double maximum_step_to_bounds(const_view x, const_view d, const_view lower, const_view upper) const {
    double local = detail::local_maximum_step_to_bounds(x, d, lower, upper);
    double global = 0.0;
    ++*m_reductions;
    MPI_Allreduce(&local, &global, 1, MPI_DOUBLE, MPI_MIN, m_communicator);
    return global;
  }
  /// lower_i <= x_i <= upper_i for every entry on every rank. Collective.
  bool within_bounds(const_view x, const_view lower, const_view upper) const {
    return all((x.array() >= lower.array()).all() && (x.array() <= upper.array()).all());
  }

 private:
  double sum(double local) const {
    double global = 0.0;
    ++*m_reductions;
    MPI_Allreduce(&local, &global, 1, MPI_DOUBLE, MPI_SUM, m_communicator);
    return global;
  }
  double maximum(double local) const {
    double global = 0.0;
    ++*m_reductions;
    MPI_Allreduce(&local, &global, 1, MPI_DOUBLE, MPI_MAX, m_communicator);
    return global;
  }
  bool all(bool local) const {
    int flag = local ? 1 : 0;
    int result = 0;
    ++*m_reductions;
    MPI_Allreduce(&flag, &result, 1, MPI_INT, MPI_LAND, m_communicator);
    return result != 0;
  }

  MPI_Comm m_communicator;
  int m_rank = 0;
  int m_size = 1;
  std::shared_ptr<std::int64_t> m_reductions;
};

}  // namespace nkit

#endif  // NKIT_DISTRIBUTED_MPI_VECTOR_SPACE_HPP
