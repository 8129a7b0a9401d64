#ifndef NKIT_REPORT_REPORT_JSON_HPP
#define NKIT_REPORT_REPORT_JSON_HPP

/// \file report/report_json.hpp
/// The whole solve_report as JSON, for dashboards and scripts: stop reason and status,
/// counts, norms, wall time, the cost breakdown (seconds and calls per
/// phase), work units, workspace bytes and the per-step history.
///
/// Built on nlohmann::json (Debian: nlohmann-json3-dev), an optional
/// dependency of this header only: link the CMake target nkit::json, which
/// exists when the library is found; nothing else in nkit needs it. The
/// functions are the library's `to_json` customisation points, found by
/// argument-dependent lookup, so `nlohmann::json j = report;` works too.
///
/// Layout (all times in seconds, all norms Euclidean as in report.hpp):
///   {"format": "nkit_solve_report", "format_version": 2,
///    "reason": "<stop_reason name>" | null (running), "status": "<solve_status name>" | null,
///    "globalization_at_stop": "<name>", "message": "<sentence>", "converged": bool,
///    <every count and norm of solve_report under its C++ name>,
///    "work_units": number,
///    "warnings": {<every solve_warnings field>},
///    "time": {<phase>: seconds, ..., "total": seconds},
///    "calls": {<phase>: count, ...},
///    "history": [{<every newton_step_record field>}, ...],
///    "field_residuals": [{"name", "initial_residual_norm", "final_residual_norm",
///                         "history": [norm, ...]}, ...]   (only when the problem declares fields)}
/// Non-finite numbers (e.g. an infinite trust radius) are written as null,
/// as the JSON grammar has no infinity.

#include <nlohmann/json.hpp>
#include <ostream>
#include <string>

#include "report.hpp"

namespace nkit {

inline void to_json(nlohmann::json& json, const phase_seconds& time) {
  json = nlohmann::json{{"residual", time.residual},
                        {"jacobian_vector", time.jacobian_vector},
                        {"jacobian_assembly", time.jacobian_assembly},
                        {"preconditioner_setup", time.preconditioner_setup},
                        {"preconditioner_apply", time.preconditioner_apply},
                        {"orthogonalization", time.orthogonalization},
                        {"krylov_update", time.krylov_update},
                        {"globalization", time.globalization},
                        {"newton_update", time.newton_update},
                        {"monitor", time.monitor},
                        {"other", time.other},
                        {"total", time.total()}};
}

inline void to_json(nlohmann::json& json, const phase_calls& calls) {
  json = nlohmann::json{{"residual", calls.residual},
                        {"jacobian_vector", calls.jacobian_vector},
                        {"jacobian_assembly", calls.jacobian_assembly},
                        {"preconditioner_setup", calls.preconditioner_setup},
                        {"preconditioner_apply", calls.preconditioner_apply},
                        {"orthogonalization", calls.orthogonalization},
                        {"krylov_update", calls.krylov_update},
                        {"globalization", calls.globalization},
                        {"newton_update", calls.newton_update},
                        {"monitor", calls.monitor}};
}

inline void to_json(nlohmann::json& json, const newton_step_record& record) {
  json = nlohmann::json{{"step", record.step},
                        {"accepted", record.accepted},
                        {"residual_norm", record.residual_norm},
                        {"relative_residual_norm", record.relative_residual_norm},
                        {"forcing_term", record.forcing_term},
                        {"linear_iterations", record.linear_iterations},
                        {"relative_linear_residual", record.relative_linear_residual},
                        {"linear_status", std::string(name(record.linear_status))},
                        {"step_fraction", record.step_fraction},
                        {"step_norm", record.step_norm},
                        {"rejected_trials", record.rejected_trials},
                        {"preconditioner_set_up", record.preconditioner_set_up},
                        {"componentwise_step_ratio", record.componentwise_step_ratio},
                        {"step_shortened_by_bounds", record.step_shortened_by_bounds},
                        {"pseudo_time_step", record.pseudo_time_step},
                        {"trust_radius", record.trust_radius},
                        {"elapsed_seconds", record.elapsed_seconds},
                        {"residual_evaluations", record.residual_evaluations}};
}

inline void to_json(nlohmann::json& json, const solve_warnings& warnings) {
  json = nlohmann::json{{"state_magnitude_spread", warnings.state_magnitude_spread},
                        {"residual_magnitude_spread", warnings.residual_magnitude_spread},
                        {"state_magnitudes_spread_widely", warnings.state_magnitudes_spread_widely},
                        {"residual_magnitudes_spread_widely", warnings.residual_magnitudes_spread_widely}};
}

inline void to_json(nlohmann::json& json, const solve_report& report) {
  const nlohmann::json reason = report.reason ? nlohmann::json(std::string(name(*report.reason))) : nlohmann::json();
  const nlohmann::json status =
      report.reason ? nlohmann::json(std::string(name(status_of(*report.reason)))) : nlohmann::json();
  json = nlohmann::json{{"format", "nkit_solve_report"},
                        {"format_version", 2},
                        {"reason", reason},
                        {"status", status},
                        {"globalization_at_stop", std::string(name(report.globalization_at_stop))},
                        {"message", std::string(report.message())},
                        {"converged", report.converged()},
                        {"newton_steps", report.newton_steps},
                        {"linear_iterations", report.linear_iterations},
                        {"residual_evaluations", report.residual_evaluations},
                        {"jacobian_vector_products", report.jacobian_vector_products},
                        {"preconditioner_setups", report.preconditioner_setups},
                        {"preconditioner_applications", report.preconditioner_applications},
                        {"preconditioner_fallbacks", report.preconditioner_fallbacks},
                        {"jacobian_assemblies", report.jacobian_assemblies},
                        {"rejected_trials", report.rejected_trials},
                        {"non_finite_trials", report.non_finite_trials},
                        {"inadmissible_trials", report.inadmissible_trials},
                        {"steps_shortened_by_bounds", report.steps_shortened_by_bounds},
                        {"returns_to_pseudo_time", report.returns_to_pseudo_time},
                        {"initial_residual_norm", report.initial_residual_norm},
                        {"target_residual_norm", report.target_residual_norm},
                        {"final_residual_norm", report.final_residual_norm},
                        {"wall_seconds", report.wall_seconds},
                        {"median_residual_seconds", report.median_residual_seconds},
                        {"work_units", report.work_units()},
                        {"workspace_bytes", report.workspace_bytes},
                        {"warnings", report.warnings},
                        {"time", report.time},
                        {"calls", report.calls},
                        {"history", report.history}};
  if (!report.field_residuals.empty()) {  // problems that declare field_layout() only
    nlohmann::json fields = nlohmann::json::array();
    for (const field_residual_record& field : report.field_residuals) {
      nlohmann::json history = nlohmann::json::array();
      for (const double norm : field.history) history.push_back(norm);
      fields.push_back({{"name", field.name},
                        {"initial_residual_norm", field.initial_residual_norm},
                        {"final_residual_norm", field.final_residual_norm},
                        {"history", history}});
    }
    json["field_residuals"] = fields;
  }
}

/// Writes the report as one JSON document (`indent` spaces per level; -1 for
/// a single line). Allocates; call it after the solve.
inline void write_report_json(std::ostream& os, const solve_report& report, int indent = 2) {
  os << nlohmann::json(report).dump(indent) << '\n';
}

}  // namespace nkit

#endif  // NKIT_REPORT_REPORT_JSON_HPP
