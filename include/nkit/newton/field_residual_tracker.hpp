#ifndef NKIT_NEWTON_FIELD_RESIDUAL_TRACKER_HPP
#define NKIT_NEWTON_FIELD_RESIDUAL_TRACKER_HPP

/// \file newton/field_residual_tracker.hpp
/// The per-field residual norms of one Newton solve, for problems that
/// declare `field_layout()` (fields/field_residual_norms.hpp): ‖R_f(u0)‖,
/// ‖R_f‖ after every Newton step, and ‖R_f‖ at the returned u, written into
/// solve_report::field_residuals. The driver owns one tracker and calls
/// start / record_initial / record_step / finish; without a field layout
/// every call does nothing. Serial Eigen vectors only.
///
/// Allocation: the records and the scratch norms are sized on the first
/// solve (field count and history capacity) and reused afterwards.

#include <Eigen/Core>
#include <cstddef>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <vector>

#include "../fields/field_layout.hpp"
#include "../fields/field_residual_norms.hpp"
#include "../report/report.hpp"

namespace nkit {

class field_residual_tracker {
 public:
  /// Prepares one record per field when `problem` has field_layout() (and
  /// checks that it describes `unknowns` entries); clears them otherwise.
  template <class Vector, class Problem>
  void start(const Problem& problem, Eigen::Index unknowns, std::size_t history_capacity,
             std::vector<field_residual_record>& records) {
    m_layout = nullptr;
    m_entries = m_current_entry = m_best_entry = 0;
    if constexpr (has_field_layout_v<Problem>) {
      static_assert(std::is_same_v<Vector, Eigen::VectorXd>,
                    "nkit: field_layout() is supported on the serial Eigen vector space only");
      const field_layout& layout = problem.field_layout();
      if (layout.size() != unknowns) {
        throw std::invalid_argument("nkit: the problem's field_layout() describes " + std::to_string(layout.size()) +
                                    " unknowns, but u has " + std::to_string(unknowns));
      }
      m_layout = &layout;
      records.resize(static_cast<std::size_t>(layout.field_count()));
      for (int f = 0; f < layout.field_count(); ++f) {
        field_residual_record& record = records[static_cast<std::size_t>(f)];
        record.name = layout.name(f);
        record.initial_residual_norm = record.final_residual_norm = std::numeric_limits<double>::quiet_NaN();
        record.history.clear();
        record.history.reserve(history_capacity);
      }
      m_norms.reserve(records.size());
    } else {
      static_cast<void>(problem);
      records.clear();
    }
  }

  /// ‖R_f(u0)‖ (also the final value until a step is accepted).
  template <class Vector>
  void record_initial(const Vector& residual, std::vector<field_residual_record>& records) {
    if constexpr (std::is_same_v<Vector, Eigen::VectorXd>) {
      if (m_layout == nullptr) return;
      field_residual_norms(*m_layout, residual, m_norms);
      for (std::size_t f = 0; f < m_norms.size(); ++f) {
        records[f].initial_residual_norm = records[f].final_residual_norm = m_norms[f];
      }
    } else {
      static_cast<void>(residual);
      static_cast<void>(records);
    }
  }

  /// ‖R_f‖ at the state a step record ends at (one history entry per step
  /// record, failed steps included: those end at the unchanged state).
  /// `accepted`: the step moved u; `best`: its iterate is the best so far.
  template <class Vector>
  void record_step(const Vector& residual, std::vector<field_residual_record>& records, bool accepted, bool best) {
    if constexpr (std::is_same_v<Vector, Eigen::VectorXd>) {
      if (m_layout == nullptr) return;
      field_residual_norms(*m_layout, residual, m_norms);
      for (std::size_t f = 0; f < m_norms.size(); ++f) records[f].history.push_back(m_norms[f]);
      ++m_entries;
      if (accepted) m_current_entry = m_entries;
      if (best) m_best_entry = m_entries;
    } else {
      static_cast<void>(residual), static_cast<void>(records), static_cast<void>(accepted), static_cast<void>(best);
    }
  }

  /// Final values: those of the returned u, which is the last accepted
  /// step's iterate, or the best one when `returned_best` (a solve that did
  /// not converge).
  void finish(bool returned_best, std::vector<field_residual_record>& records) const {
    const std::size_t entry = returned_best ? m_best_entry : m_current_entry;
    for (field_residual_record& field : records) {
      field.final_residual_norm =
          entry == 0 || entry > field.history.size() ? field.initial_residual_norm : field.history[entry - 1];
    }
  }

  /// Bytes held (scratch and records' histories).
  std::size_t workspace_bytes(const std::vector<field_residual_record>& records) const {
    std::size_t bytes = sizeof(double) * m_norms.capacity();
    for (const field_residual_record& field : records) bytes += sizeof(double) * field.history.capacity();
    return bytes;
  }

 private:
  const field_layout* m_layout = nullptr;  // the problem's layout during a solve, or null
  std::vector<double> m_norms;             // ‖R_f‖ scratch, one per field
  std::size_t m_entries = 0;               // history entries recorded in this solve
  std::size_t m_current_entry = 0;         // entry (1-based) of the last accepted step's iterate (0: u0)
  std::size_t m_best_entry = 0;            // entry (1-based) of the best iterate (0: u0)
};

}  // namespace nkit

#endif  // NKIT_NEWTON_FIELD_RESIDUAL_TRACKER_HPP
