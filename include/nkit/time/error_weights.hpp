#ifndef NKIT_TIME_ERROR_WEIGHTS_HPP
#define NKIT_TIME_ERROR_WEIGHTS_HPP

/// \file time/error_weights.hpp
/// The weighted root-mean-square norm of local errors and Newton updates:
/// ‖e‖ = sqrt(Σ_i (e_i / w_i)² / N), w_i = atol_i + rtol_i · |reference_i|,
/// with scalar or per-entry tolerances (Hairer & Wanner II, §IV.8; common
/// practice). The reduction goes through the vector space (collective on a
/// distributed space); the element-wise part needs an Eigen vector type.

#include <cmath>

namespace nkit::detail {

template <class Space>
class error_weights {
 public:
  using vector_type = typename Space::vector_type;

  /// Per-entry tolerances (empty vectors mean: use the scalars).
  void set_tolerances(const vector_type& absolute, const vector_type& relative) {
    m_absolute = absolute;
    m_relative = relative;
  }
  bool has_vector_absolute() const { return m_absolute.size() > 0; }
  bool has_vector_relative() const { return m_relative.size() > 0; }
  const vector_type& vector_absolute() const { return m_absolute; }
  const vector_type& vector_relative() const { return m_relative; }

  /// weights = atol + rtol · max(|a|, |b|) (pass the same vector twice for one reference).
  void compute(const Space& space, double absolute, double relative, const vector_type& a, const vector_type& b,
               vector_type& weights) const {
    space.allocate_like(weights, a);
    auto w = weights.array();
    const auto magnitude = a.array().abs().max(b.array().abs());
    if (has_vector_relative()) {
      w = m_relative.array() * magnitude;
    } else {
      w = relative * magnitude;
    }
    if (has_vector_absolute()) {
      w += m_absolute.array();
    } else {
      w += absolute;
    }
  }

  /// ‖x‖ in the weighted RMS norm; `scratch` is overwritten.
  static double norm(const Space& space, const vector_type& x, const vector_type& weights, vector_type& scratch) {
    space.allocate_like(scratch, x);
    space.copy(x, scratch);
    space.divide(weights, scratch);
    const double size = static_cast<double>(space.global_size(x));
    return space.norm(scratch) / std::sqrt(size);
  }

 private:
  vector_type m_absolute, m_relative;
};

}  // namespace nkit::detail

#endif  // NKIT_TIME_ERROR_WEIGHTS_HPP
