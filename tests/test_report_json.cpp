// The JSON export of a solve report: it parses (nlohmann::json, a
// general-purpose JSON library) and carries every field with its value.
#if NKIT_HAS_JSON
#include <catch2/catch.hpp>
#include <nkit/nkit.hpp>
#include <nkit/report/report_json.hpp>
#include <sstream>

#include "problems/model_problem/model_problem.hpp"

// A new field in these structs must also be written by report_json.hpp
// (and listed below): the sizes catch an addition that forgot it.
static_assert(sizeof(nkit::phase_seconds) == 11 * sizeof(double), "update report_json.hpp and this test");
static_assert(sizeof(nkit::phase_calls) == 10 * sizeof(std::int64_t), "update report_json.hpp and this test");

TEST_CASE("the report's JSON parses and carries every field", "[report][json]") {
  nkit_problems::heat_conduction_model_problem problem(16);
  Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
  nkit::newton_krylov_solver<> solver;
  const nkit::solve_report report = solver.solve(problem, t);
  REQUIRE(report.converged());

  std::ostringstream os;
  nkit::write_report_json(os, report);
  const nlohmann::json json = nlohmann::json::parse(os.str());  // throws on malformed text

  CHECK(json.at("format") == "nkit_solve_report");
  CHECK(json.at("format_version") == 2);
  CHECK(json.at("reason") == std::string(nkit::name(*report.reason)));
  CHECK(json.at("status") == "converged");
  CHECK(json.at("globalization_at_stop") == "line_search");
  CHECK(json.at("message") == std::string(report.message()));
  CHECK(json.at("converged") == true);
  CHECK(json.at("newton_steps") == report.newton_steps);
  CHECK(json.at("linear_iterations") == report.linear_iterations);
  CHECK(json.at("residual_evaluations") == report.residual_evaluations);
  CHECK(json.at("jacobian_vector_products") == report.jacobian_vector_products);
  CHECK(json.at("preconditioner_setups") == report.preconditioner_setups);
  CHECK(json.at("preconditioner_applications") == report.preconditioner_applications);
  CHECK(json.at("preconditioner_fallbacks") == report.preconditioner_fallbacks);
  CHECK(json.at("jacobian_assemblies") == report.jacobian_assemblies);
  CHECK(json.at("rejected_trials") == report.rejected_trials);
  CHECK(json.at("non_finite_trials") == report.non_finite_trials);
  CHECK(json.at("returns_to_pseudo_time") == report.returns_to_pseudo_time);
  CHECK(json.at("inadmissible_trials") == report.inadmissible_trials);
  CHECK(json.at("steps_shortened_by_bounds") == report.steps_shortened_by_bounds);
  // Doubles are written with round-trip precision: equal after parsing.
  CHECK(json.at("initial_residual_norm").get<double>() == report.initial_residual_norm);
  CHECK(json.at("target_residual_norm").get<double>() == report.target_residual_norm);
  CHECK(json.at("final_residual_norm").get<double>() == report.final_residual_norm);
  CHECK(json.at("wall_seconds").get<double>() == report.wall_seconds);
  CHECK(json.at("median_residual_seconds").get<double>() == report.median_residual_seconds);
  CHECK(json.at("work_units").get<double>() == report.work_units());
  CHECK(json.at("workspace_bytes").get<std::size_t>() == report.workspace_bytes);
  CHECK(json.size() == 31);  // the fields above plus warnings, time, calls, history
  const nlohmann::json& warnings = json.at("warnings");
  CHECK(warnings.at("residual_magnitude_spread").get<double>() == report.warnings.residual_magnitude_spread);
  CHECK(warnings.at("state_magnitudes_spread_widely") == report.warnings.state_magnitudes_spread_widely);

  const nlohmann::json& seconds = json.at("time");
  const nkit::phase_seconds& time = report.time;
  CHECK(seconds.size() == 12);
  CHECK(seconds.at("residual").get<double>() == time.residual);
  CHECK(seconds.at("jacobian_vector").get<double>() == time.jacobian_vector);
  CHECK(seconds.at("jacobian_assembly").get<double>() == time.jacobian_assembly);
  CHECK(seconds.at("preconditioner_setup").get<double>() == time.preconditioner_setup);
  CHECK(seconds.at("preconditioner_apply").get<double>() == time.preconditioner_apply);
  CHECK(seconds.at("orthogonalization").get<double>() == time.orthogonalization);
  CHECK(seconds.at("krylov_update").get<double>() == time.krylov_update);
  CHECK(seconds.at("globalization").get<double>() == time.globalization);
  CHECK(seconds.at("newton_update").get<double>() == time.newton_update);
  CHECK(seconds.at("monitor").get<double>() == time.monitor);
  CHECK(seconds.at("other").get<double>() == time.other);
  CHECK(seconds.at("total").get<double>() == time.total());

  const nlohmann::json& calls = json.at("calls");
  CHECK(calls.size() == 10);
  CHECK(calls.at("residual") == report.calls.residual);
  CHECK(calls.at("jacobian_vector") == report.calls.jacobian_vector);
  CHECK(calls.at("jacobian_assembly") == report.calls.jacobian_assembly);
  CHECK(calls.at("preconditioner_setup") == report.calls.preconditioner_setup);
  CHECK(calls.at("preconditioner_apply") == report.calls.preconditioner_apply);
  CHECK(calls.at("orthogonalization") == report.calls.orthogonalization);
  CHECK(calls.at("krylov_update") == report.calls.krylov_update);
  CHECK(calls.at("globalization") == report.calls.globalization);
  CHECK(calls.at("newton_update") == report.calls.newton_update);
  CHECK(calls.at("monitor") == report.calls.monitor);

  const nlohmann::json& history = json.at("history");
  REQUIRE(history.size() == report.history.size());
  for (std::size_t k = 0; k < report.history.size(); ++k) {
    const nkit::newton_step_record& r = report.history[k];
    const nlohmann::json& h = history[k];
    CAPTURE(k);
    CHECK(h.size() == 18);
    CHECK(h.at("step") == r.step);
    CHECK(h.at("residual_norm").get<double>() == r.residual_norm);
    CHECK(h.at("relative_residual_norm").get<double>() == r.relative_residual_norm);
    CHECK(h.at("forcing_term").get<double>() == r.forcing_term);
    CHECK(h.at("linear_iterations") == r.linear_iterations);
    CHECK(h.at("relative_linear_residual").get<double>() == r.relative_linear_residual);
    CHECK(h.at("linear_status") == std::string(nkit::name(r.linear_status)));
    CHECK(h.at("step_fraction").get<double>() == r.step_fraction);
    CHECK(h.at("step_norm").get<double>() == r.step_norm);
    CHECK(h.at("rejected_trials") == r.rejected_trials);
    CHECK(h.at("preconditioner_set_up") == r.preconditioner_set_up);
    CHECK(h.at("step_shortened_by_bounds") == r.step_shortened_by_bounds);
    CHECK(h.at("pseudo_time_step").get<double>() == r.pseudo_time_step);
    CHECK(h.at("trust_radius").get<double>() == r.trust_radius);
    CHECK(h.at("elapsed_seconds").get<double>() == r.elapsed_seconds);
    CHECK(h.at("residual_evaluations") == r.residual_evaluations);
    CHECK(h.at("accepted") == r.accepted);
    CHECK(h.at("componentwise_step_ratio").get<double>() == r.componentwise_step_ratio);
  }
}

TEST_CASE("non-finite numbers in a report become JSON null, so the text stays valid", "[report][json]") {
  nkit::solve_report report;
  report.reason = nkit::stop_reason::non_finite_initial_residual;
  report.initial_residual_norm = std::numeric_limits<double>::quiet_NaN();
  report.final_residual_norm = std::numeric_limits<double>::infinity();
  std::ostringstream os;
  nkit::write_report_json(os, report, -1);
  const nlohmann::json json = nlohmann::json::parse(os.str());
  CHECK(json.at("initial_residual_norm").is_null());
  CHECK(json.at("final_residual_norm").is_null());
  CHECK(json.at("converged") == false);
  CHECK(json.at("status") == "cannot_proceed");
  nkit::solve_report running;  // a report with no reason yet: null, not a made-up value
  std::ostringstream running_text;
  nkit::write_report_json(running_text, running, -1);
  CHECK(nlohmann::json::parse(running_text.str()).at("reason").is_null());
}
#endif
