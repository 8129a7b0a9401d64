#ifndef NKIT_SENSITIVITY_REVERSE_MODE_PRODUCT_HPP
#define NKIT_SENSITIVITY_REVERSE_MODE_PRODUCT_HPP

/// \file sensitivity/reverse_mode_product.hpp
/// Matrix-free transposed products R'(u)ᵀ w by reverse-mode automatic
/// differentiation with ADOL-C (libadolc-dev): the residual, templated on its
/// scalar type as for nkit's forward-mode AD (jacobian/automatic_differentiation.hpp;
/// call math functions unqualified), is evaluated once on ADOL-C's adouble
/// and recorded on a tape; each product is then one reverse sweep over the
/// tape (ADOL-C's fos_reverse), exact to rounding, with no assembled Jacobian.
///
/// Retape policy: the tape holds the operations of one evaluation at one
/// state u (and the branches taken there), so record(u) must be called at
/// every new state: apply() always uses the tape of the last record().
/// Reverse sweeps reuse the values kept from the recording (trace_on with
/// kept Taylor values), so a product costs one reverse sweep and no forward
/// sweep. Tapes live in memory: a recording longer than the buffers (ADOL-C's
/// default is 524 288 entries each, or `buffer_entries` given to the
/// constructor) makes ADOL-C write the tape to files in the working directory
/// (ADOLC-*_<tag>.tap); record() then removes that tape (ADOL-C's removeTape;
/// ADOL-C 2.7.2 leaves its location and Taylor files behind) and records again
/// in memory with buffers sized from the tape's statistics, kept for later
/// recordings. Give `buffer_entries` at least the tape's operation, location,
/// value and Taylor counts (taped_operations() after a recording is one of
/// them) to avoid that first spill.
///
/// Cost (docs/sensitivities.md): recording several residual evaluations' worth
/// of time (the adouble sweep writes every operation to the tape), then a few
/// work units per product. Allocation: record() allocates (adouble vectors,
/// ADOL-C's buffers); apply() allocates nothing in nkit once `out` has the
/// right size (ADOL-C's sweep uses its own work arrays).
///
/// Optional and not part of nkit.hpp: include it where ADOL-C is available
/// and link ADOL-C (-ladolc; nkit's own tests use the CMake target nkit_adolc,
/// option NKIT_WITH_ADOLC, on when ADOL-C is found). Each object
/// uses its own ADOL-C tape number (tape_tag, default 1): two objects alive
/// together need different tags. Serial: the tape records this process's
/// residual only. Not thread-safe (ADOL-C's taping state is global).
///
/// The header specialises Eigen::NumTraits for adouble (Eigen's documentation,
/// "Using custom scalar types"), unless NKIT_ADOLC_EIGEN_TRAITS_DEFINED is
/// defined by a program that specialises it itself.

#include <adolc/adolc.h>
#include <adolc/taping.h>

#include <Eigen/Core>
#include <cstddef>
#include <stdexcept>
#include <string>
#include <utility>

#ifndef NKIT_ADOLC_EIGEN_TRAITS_DEFINED
#define NKIT_ADOLC_EIGEN_TRAITS_DEFINED 1
namespace Eigen {
template <>
struct NumTraits<adouble> : NumTraits<double> {
  using Real = adouble;
  using NonInteger = adouble;
  using Nested = adouble;
  using Literal = adouble;
  enum {
    IsComplex = 0,
    IsInteger = 0,
    IsSigned = 1,
    RequireInitialization = 1,
    ReadCost = 1,
    AddCost = 3,
    MulCost = 3
  };
};
}  // namespace Eigen
inline const adouble& conj(const adouble& x) { return x; }
inline const adouble& real(const adouble& x) { return x; }
inline adouble imag(const adouble&) { return 0.0; }
inline adouble abs2(const adouble& x) { return x * x; }
#endif

namespace nkit {

/// Vector of ADOL-C active scalars, the type the residual is recorded with.
using adolc_vector = Eigen::Matrix<adouble, Eigen::Dynamic, 1>;

template <class Residual>
class reverse_mode_transposed_product {
 public:
  /// `tape_tag`: the ADOL-C tape number this object records on (>= 0);
  /// `buffer_entries`: entries per ADOL-C buffer (0: ADOL-C's defaults; see the file comment).
  explicit reverse_mode_transposed_product(Residual residual, short tape_tag = 1, unsigned buffer_entries = 0)
      : m_residual(std::move(residual)), m_tag(tape_tag), m_buffer(buffer_entries) {
    if (tape_tag < 0) {
      throw std::invalid_argument("nkit: reverse_mode_transposed_product tape_tag must be >= 0 (got " +
                                  std::to_string(tape_tag) + ")");
    }
  }

  /// Records the residual at `u` on the tape (retape at every new state).
  /// Also keeps R(u), returned by residual().
  void record(const Eigen::VectorXd& u) {
    if (u.size() == 0) throw std::invalid_argument("nkit: reverse_mode_transposed_product::record got an empty state");
    if (!record_once(u)) {
      if (!record_once(u)) {
        throw std::runtime_error("nkit: ADOL-C kept the tape in files after enlarging its buffers");
      }
    }
    m_recorded = true;
  }

  /// out = R'(u)ᵀ w, u of the last record(): one reverse sweep.
  void apply(const Eigen::VectorXd& w, Eigen::VectorXd& out) {
    if (!m_recorded) {
      throw std::logic_error("nkit: reverse_mode_transposed_product::apply called before record()");
    }
    if (w.size() != m_value.size()) {
      throw std::invalid_argument("nkit: reverse_mode_transposed_product::apply got a vector of " +
                                  std::to_string(w.size()) + " entries; the residual has " +
                                  std::to_string(m_value.size()));
    }
    if (out.size() != m_inputs) out.resize(m_inputs);
    m_weights = w;  // ADOL-C's driver takes a non-const pointer
    const int status =
        fos_reverse(m_tag, static_cast<int>(m_value.size()), static_cast<int>(m_inputs), m_weights.data(), out.data());
    if (status < 0) {
      throw std::runtime_error("nkit: ADOL-C's reverse sweep failed with status " + std::to_string(status));
    }
  }

  /// R(u) at the last recorded state.
  const Eigen::VectorXd& residual() const { return m_value; }
  short tape_tag() const { return m_tag; }
  /// Operations on the last tape (ADOL-C's statistics).
  std::size_t taped_operations() const { return m_operations; }

 private:
  /// One recording; false when the tape went to files (buffers then enlarged).
  bool record_once(const Eigen::VectorXd& u) {
    const Eigen::Index n = u.size();
    m_inputs = n;
    if (m_buffer > 0) {
      trace_on(m_tag, 1, m_buffer, m_buffer, m_buffer, m_buffer);
    } else {
      trace_on(m_tag, 1);
    }
    {
      adolc_vector state(n), result(n);
      for (Eigen::Index i = 0; i < n; ++i) state(i) <<= u(i);
      m_residual(static_cast<const adolc_vector&>(state), result);
      m_value.resize(result.size());
      for (Eigen::Index i = 0; i < result.size(); ++i) result(i) >>= m_value(i);
    }
    trace_off();
    std::size_t statistics[STAT_SIZE];
    tapestats(m_tag, statistics);
    m_operations = statistics[NUM_OPERATIONS];
    const std::size_t taylor_buffer = m_buffer > 0 ? m_buffer : static_cast<std::size_t>(TBUFSIZE);
    const bool in_files = statistics[OP_FILE_ACCESS] != 0 || statistics[LOC_FILE_ACCESS] != 0 ||
                          statistics[VAL_FILE_ACCESS] != 0 || statistics[TAY_STACK_SIZE] > taylor_buffer;
    if (!in_files) return true;
    removeTape(m_tag, ADOLC_REMOVE_COMPLETELY);
    std::size_t largest = statistics[NUM_OPERATIONS];
    for (std::size_t count : {statistics[NUM_LOCATIONS], statistics[NUM_VALUES], statistics[TAY_STACK_SIZE]}) {
      largest = count > largest ? count : largest;
    }
    m_buffer = static_cast<unsigned>(largest + largest / 4 + 1024);
    return false;
  }

  Residual m_residual;
  short m_tag;
  unsigned m_buffer;  ///< buffer entries for trace_on (0: ADOL-C's defaults)
  Eigen::Index m_inputs = 0;
  Eigen::VectorXd m_value;    ///< R(u) of the last recording
  Eigen::VectorXd m_weights;  ///< copy of w for ADOL-C
  std::size_t m_operations = 0;
  bool m_recorded = false;
};

/// Deduces the residual type: reverse_mode_transposed_product<Residual>.
template <class Residual>
reverse_mode_transposed_product<Residual> make_reverse_mode_transposed_product(Residual residual, short tape_tag = 1,
                                                                               unsigned buffer_entries = 0) {
  return reverse_mode_transposed_product<Residual>(std::move(residual), tape_tag, buffer_entries);
}

}  // namespace nkit

#endif  // NKIT_SENSITIVITY_REVERSE_MODE_PRODUCT_HPP
