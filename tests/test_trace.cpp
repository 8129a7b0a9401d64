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
