#ifndef NKIT_CORE_BLOCK_VECTOR_SPACE_HPP
#define NKIT_CORE_BLOCK_VECTOR_SPACE_HPP

/// \file core/block_vector_space.hpp
/// A vector space that splits every vector into contiguous blocks and forms
/// each reduction as a sum of per-block partial results, in block order.
/// It stands in for a distributed space (each block playing one rank) in
/// tests that must run without MPI. Iterates agree with eigen_vector_space
/// to rounding, not bitwise: the summation order differs.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>

#include "../detail/checks.hpp"
#include "eigen_vector_space.hpp"

namespace nkit {

class block_vector_space {
 public:
  using scalar_type = double;
  using vector_type = Eigen::VectorXd;
  using state_view = Eigen::Ref<vector_type>;
  using const_view = Eigen::Ref<const vector_type>;

  /// `block_count` >= 1 blocks of (nearly) equal length.
  explicit block_vector_space(int block_count = 2) : m_block_count(block_count) {
    detail::require_at_least("block_vector_space::block_count", block_count, 1);
  }
  int block_count() const { return m_block_count; }

  void allocate_like(vector_type& target, const_view prototype) const {
    if (target.size() != prototype.size()) target.resize(prototype.size());
  }

  double dot(const_view x, const_view y) const {
    double sum = 0.0;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      sum += x.segment(start, length).dot(y.segment(start, length));
    }
    return sum;
  }
  double norm(const_view x) const {
    double sum = 0.0;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      sum += x.segment(start, length).squaredNorm();
    }
    return std::sqrt(sum);
  }
  bool all_finite(const_view x) const {
    bool finite = true;
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      finite = finite && x.segment(start, length).allFinite();
    }
    return finite;
  }
  std::int64_t global_size(const_view x) const { return static_cast<std::int64_t>(x.size()); }

  void add_scaled(double alpha, const_view x, state_view y) const { y.noalias() += alpha * x; }
  void combine(double a, const_view x, double b, const_view y, state_view out) const { out.noalias() = a * x + b * y; }
  void scale(double alpha, state_view x) const { x *= alpha; }
  void copy(const_view from, state_view to) const { to = from; }
  void fill(double value, state_view x) const { x.setConstant(value); }
  void multiply(const_view weights, state_view x) const { x.array() *= weights.array(); }
  void divide(const_view weights, state_view x) const { x.array() /= weights.array(); }
  void add_product(const_view weights, const_view x, state_view y) const { y.array() += weights.array() * x.array(); }
  /// Per-block ratio tests combined with a min, as a distributed space would.
  double max_step_to_bounds(const_view x, const_view d, const_view lower, const_view upper) const {
    double step = std::numeric_limits<double>::infinity();
    for (int b = 0; b < m_block_count; ++b) {
      const auto [start, length] = block(b, x.size());
      const double local = detail::local_max_step_to_bounds(x.segment(start, length), d.segment(start, length),
                                                            lower.segment(start, length), upper.segment(start, length));
      step = std::min(step, local);
    }
    return step;
  }
  bool within_bounds(const_view x, const_view lower, const_view upper) const {
    return (x.array() >= lower.array()).all() && (x.array() <= upper.array()).all();
  }

 private:
  struct range {
    Eigen::Index start;
    Eigen::Index length;
  };
  range block(int b, Eigen::Index size) const {
    const Eigen::Index base = size / m_block_count;
    const Eigen::Index extra = size % m_block_count;
    const Eigen::Index start = b * base + (b < extra ? b : extra);
    return {start, base + (b < extra ? 1 : 0)};
  }
  int m_block_count;
};

}  // namespace nkit

#endif  // NKIT_CORE_BLOCK_VECTOR_SPACE_HPP
