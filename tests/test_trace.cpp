// The timeline recorder: events for every phase call, consistent with the report.
#include <catch2/catch.hpp>
#include <map>
#include <nkit/nkit.hpp>
#include <sstream>

#include "support/matchers.hpp"

TEST_CASE("a traced solve records one event per phase call, Newton step and linear iteration", "[trace]") {
  auto residual = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r = x.array().cube() - 8.0; };
  nkit::trace_recorder recorder;
  nkit::newton_krylov_solver<> solver;
  solver.record_trace(&recorder);
  Eigen::VectorXd u = Eigen::VectorXd::Constant(20, 1.0);
  const auto report = solver.solve(residual, u);
  REQUIRE(report.converged());
  std::map<nkit::trace_phase, long> counts;
  long counters = 0;
  for (const auto& event : recorder.events()) {
    if (event.is_counter) {
      ++counters;
    } else {
      ++counts[event.phase];
      CHECK(event.duration_seconds >= 0.0);
    }
  }
  CHECK(counts[nkit::trace_phase::residual] == report.residual_evaluations);
  CHECK(counts[nkit::trace_phase::jacobian_vector] == report.jacobian_vector_products);
  CHECK(counts[nkit::trace_phase::orthogonalization] == report.linear_iterations);
  CHECK(counts[nkit::trace_phase::linear_iteration] == report.linear_iterations);
  CHECK(counts[nkit::trace_phase::newton_step] == report.newton_steps);
  CHECK(counts[nkit::trace_phase::linear_solve] == report.newton_steps);
  CHECK(counts[nkit::trace_phase::globalization] == report.calls.globalization);
  CHECK(counters > report.newton_steps);

  std::ostringstream json;
  nkit::write_trace_json(json, recorder);
  CHECK(json.str().rfind("{\"displayTimeUnit\"", 0) == 0);
  CHECK(json.str().find("\"name\": \"newton_step\"") != std::string::npos);

  // Detached: nothing more is recorded.
  solver.record_trace(nullptr);
  const std::size_t before = recorder.events().size();
  u.setConstant(1.0);
  solver.solve(residual, u);
  CHECK(recorder.events().size() == before);
}

#if NKIT_HAS_JSON
#include <nlohmann/json.hpp>

#include "problems/model_problem/model_problem.hpp"

namespace {
/// Jacobi from the assembled model Jacobian: the trace then has assembly,
/// setup and apply events too.
struct traced_jacobi {
  Eigen::VectorXd inverse_diagonal;
  void setup(const nkit::preconditioner_context<>& context) {
    inverse_diagonal = context.assembled_jacobian().diagonal().cwiseInverse();
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { z = inverse_diagonal.cwiseProduct(r); }
};

struct span {
  double begin, end;  // microseconds
  int index;
  bool contains(const span& inner) const {
    // Timestamps and durations are printed with 3 decimals (nanoseconds);
    // each end is rounded separately, so allow 2 ns.
    return inner.begin >= begin - 0.002 && inner.end <= end + 0.002;
  }
};
}  // namespace

TEST_CASE("the trace file parses as JSON, counts every call and nests phases inside their Newton step",
          "[trace][json]") {
  nkit_problems::heat_conduction_model_problem problem(16);
  Eigen::VectorXd t = Eigen::VectorXd::Zero(problem.unknowns());
  nkit::trace_recorder recorder;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, traced_jacobi> solver;
  solver.record_trace(&recorder);
  int monitor_calls = 0;
  const auto report = solver.solve(problem, t, [&](const nkit::newton_step_record&) { ++monitor_calls; });
  REQUIRE(report.converged());

  std::ostringstream os;
  nkit::write_trace_json(os, recorder, "model problem 16x16");
  const nlohmann::json trace = nlohmann::json::parse(os.str());  // throws on malformed text
  REQUIRE(trace.at("traceEvents").is_array());

  std::map<std::string, std::vector<span>> phases;
  std::map<std::string, long> counters;
  for (const auto& event : trace.at("traceEvents")) {
    const std::string kind = event.at("ph");
    if (kind == "X") {
      const double begin = event.at("ts");
      phases[event.at("name")].push_back({begin, begin + event.at("dur").get<double>(), event.at("args").at("index")});
    } else if (kind == "C") {
      ++counters[event.at("name")];
      CHECK(event.at("args").at("value").is_number());
    } else {
      CHECK(kind == "M");
    }
  }
  // One event per call of every phase, per Newton step and per linear iteration.
  CHECK(phases["residual"].size() == static_cast<std::size_t>(report.residual_evaluations));
  CHECK(phases["jacobian_vector"].size() == static_cast<std::size_t>(report.jacobian_vector_products));
  CHECK(phases["jacobian_assembly"].size() == static_cast<std::size_t>(report.jacobian_assemblies));
  CHECK(phases["preconditioner_setup"].size() == static_cast<std::size_t>(report.preconditioner_setups));
  CHECK(phases["preconditioner_apply"].size() == static_cast<std::size_t>(report.preconditioner_applications));
  CHECK(phases["orthogonalization"].size() == static_cast<std::size_t>(report.linear_iterations));
  CHECK(phases["linear_iteration"].size() == static_cast<std::size_t>(report.linear_iterations));
  CHECK(phases["linear_solve"].size() == static_cast<std::size_t>(report.calls.krylov_update));
  CHECK(phases["globalization"].size() == static_cast<std::size_t>(report.calls.globalization));
  CHECK(phases["monitor"].size() == static_cast<std::size_t>(monitor_calls));
  CHECK(phases["newton_step"].size() == static_cast<std::size_t>(report.newton_steps));
  // Counters: R(u0) and one per step; a forcing term per step; a relative
  // linear residual per linear iteration.
  CHECK(counters["residual_norm"] == report.newton_steps + 1);
  CHECK(counters["forcing_term"] == report.newton_steps);
  CHECK(counters["relative_linear_residual"] == report.linear_iterations);

  // Nesting. Newton steps are disjoint and numbered 1, 2, ...
  const std::vector<span>& steps = phases["newton_step"];
  for (std::size_t k = 0; k < steps.size(); ++k) {
    CHECK(steps[k].index == static_cast<int>(k + 1));
    if (k > 0) CHECK(steps[k - 1].end <= steps[k].begin + 0.002);
  }
  const auto step_containing = [&](const span& inner) -> int {
    for (const span& step : steps) {
      if (step.contains(inner)) return step.index;
    }
    return 0;
  };
  // Every phase event lies inside a Newton step, except the evaluation of R(u0).
  int outside = 0;
  for (const auto& [phase, events] : phases) {
    if (phase == "newton_step") continue;
    for (const span& event : events) {
      CAPTURE(phase, event.begin, event.end);
      const int step = step_containing(event);
      if (step == 0) {
        ++outside;
        CHECK(phase == "residual");
        CHECK(event.end <= steps.front().begin + 0.002);
      }
      // Events that carry their Newton step's number lie inside that step.
      if (phase == "linear_solve" || phase == "preconditioner_setup" || phase == "globalization") {
        CHECK(step == event.index);
      }
    }
  }
  CHECK(outside == 1);
  // Inside a step: Arnoldi work inside a linear solve, and each forward
  // difference J·v holds exactly one residual evaluation.
  for (const char* inner : {"orthogonalization", "linear_iteration", "preconditioner_apply"}) {
    for (const span& event : phases[inner]) {
      bool found = false;
      for (const span& solve : phases["linear_solve"]) found = found || solve.contains(event);
      CAPTURE(inner, event.begin);
      CHECK(found);
    }
  }
  for (const span& product : phases["jacobian_vector"]) {
    int inside = 0;
    for (const span& evaluation : phases["residual"]) inside += product.contains(evaluation) ? 1 : 0;
    CHECK(inside == 1);
  }
}
#endif
