// libFuzzer target for the C interface (interfaces/c/nkit_c.h): decodes the
// input into a sequence of C calls — settings by name (valid, invalid, wrong
// kind, unknown names, NaN/Inf values) and by field, callbacks set, cleared
// or failing, bounds of the right or wrong size, contradictory or NaN,
// solves with NULL or empty or NaN states, report accessors with any name or
// index — on a small random nonlinear system (invented for fuzzing):
//   R_i(u) = a_i u_i³ + b_i u_i + c_i u_{(i+1) mod n} + d_i,
//   G(u)   = u − ω R(u)          (the fixed-point map for the map methods),
// optionally NaN beyond u_0 > threshold, a callback that reports failure
// at call K, a Jacobi preconditioner and a monitor that stops at step K.
//
// Checked for every call (a failed check aborts, which libFuzzer reports):
//  - the status is one of nkit_status; a failing call leaves a non-empty
//    message, a succeeding one an empty message; never a crash or abort;
//  - NULL out-pointers are rejected, never written through;
//  - after a successful solve the state is finite, the report is available,
//    its final norm equals ‖R(u)‖ (or ‖u − G(u)‖) recomputed from the
//    returned state when finite, and a converged outcome has that norm
//    within max(absolute, relative · initial) (+ rounding);
//  - the callbacks are never called with a NULL array, a size other than the
//    solve's, or a non-finite state.
#include <fuzzer/FuzzedDataProvider.h>

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <limits>
#include <string>
#include <vector>

#include "nkit_c.h"

namespace {

[[noreturn]] void fail(const char* what, const std::string& detail = {}) {
  std::fprintf(stderr, "nkit C fuzz check failed: %s %s\n", what, detail.c_str());
  std::abort();
}
#define FUZZ_CHECK(condition, detail) ((condition) ? static_cast<void>(0) : fail("(" #condition ")", detail))

constexpr int max_size = 8;

struct fuzz_system {
  int size = 1;
  double a[max_size] = {}, b[max_size] = {}, c[max_size] = {}, d[max_size] = {};
  double omega = 0.5;
  double nan_beyond = std::numeric_limits<double>::infinity();
  long fail_at_call = -1;
  long calls = 0;
  int expected_size = 0;  // of the solve in progress
  int monitor_stop_at = -1;
  double jacobi[max_size] = {};

  void residual_values(const double* u, double* r, int n) const {
    if (u[0] > nan_beyond) {
      for (int i = 0; i < n; ++i) r[i] = std::numeric_limits<double>::quiet_NaN();
      return;
    }
    for (int i = 0; i < n; ++i) r[i] = a[i] * u[i] * u[i] * u[i] + b[i] * u[i] + c[i] * u[(i + 1) % n] + d[i];
  }
  void enter(const double* input, const double* output, std::int64_t n) {
    FUZZ_CHECK(input != nullptr && output != nullptr, "NULL array passed to a callback");
    FUZZ_CHECK(n == expected_size, "callback size differs from the solve's");
    for (std::int64_t i = 0; i < n; ++i) FUZZ_CHECK(std::isfinite(input[i]), "callback called at a non-finite state");
  }
};

int residual_callback(const double* u, double* r, std::int64_t n, void* user) {
  auto* s = static_cast<fuzz_system*>(user);
  s->enter(u, r, n);
  if (++s->calls == s->fail_at_call) return 3;
  s->residual_values(u, r, static_cast<int>(n));
  return 0;
}

int map_callback(const double* u, double* g, std::int64_t n, void* user) {
  auto* s = static_cast<fuzz_system*>(user);
  s->enter(u, g, n);
  if (++s->calls == s->fail_at_call) return -1;
  s->residual_values(u, g, static_cast<int>(n));
  for (std::int64_t i = 0; i < n; ++i) g[i] = u[i] - s->omega * g[i];
  return 0;
}

int jacobi_setup(const double* u, const double* r, std::int64_t n, void* user) {
  auto* s = static_cast<fuzz_system*>(user);
  s->enter(u, r, n);
  for (std::int64_t i = 0; i < n; ++i) s->jacobi[i] = 3 * s->a[i] * u[i] * u[i] + s->b[i];
  return 0;
}

int jacobi_apply(const double* r, double* z, std::int64_t n, void* user) {
  auto* s = static_cast<fuzz_system*>(user);
  FUZZ_CHECK(r != nullptr && z != nullptr && n == s->expected_size, "bad preconditioner call");
  for (std::int64_t i = 0; i < n; ++i) z[i] = s->jacobi[i] != 0.0 ? r[i] / s->jacobi[i] : r[i];
  return 0;
}

int stopping_monitor(const nkit_iteration_summary* summary, void* user) {
  auto* s = static_cast<fuzz_system*>(user);
  FUZZ_CHECK(summary != nullptr && summary->iteration >= 1, "bad monitor call");
  return s->monitor_stop_at > 0 && summary->iteration >= s->monitor_stop_at;
}

const char* const real_names[] = {"relative_tolerance",
                                  "absolute_tolerance",
                                  "wall_time_budget_seconds",
                                  "bounds.boundary_fraction",
                                  "negligible_step_size",
                                  "stagnation_factor",
                                  "forcing.constant_value",
                                  "jacobian.residual_relative_noise",
                                  "anderson.mixing",
                                  "anderson.maximum_condition_number",
                                  "anderson.stagnation_factor",
                                  "anderson.depth",
                                  "no_such_setting",
                                  ""};
const char* const integer_names[] = {"iteration_budget",
                                     "residual_evaluation_budget",
                                     "stagnation_window",
                                     "linear.restart_length",
                                     "linear.maximum_iterations",
                                     "preconditioner_rebuild.rebuild_every_newton_steps",
                                     "linear_iteration_budget",
                                     "anderson.depth",
                                     "anderson.restart_window",
                                     "anderson.stagnation_window",
                                     "method",
                                     "relative_tolerance"};
const char* const text_names[] = {"method",           "globalization",  "forcing.formula",
                                  "jacobian.formula", "anderson.depth", "unknown"};
const char* const text_values[] = {"newton_krylov",
                                   "newton_krylov_on_fixed_point_map",
                                   "anderson",
                                   "line_search",
                                   "full_step",
                                   "trust_region",
                                   "pseudo_transient",
                                   "constant",
                                   "eisenstat_walker_choice_1",
                                   "eisenstat_walker_choice_2",
                                   "forward",
                                   "central",
                                   "",
                                   "garbage"};
const char* const report_integer_names[] = {
    "iterations", "linear_iterations", "residual_evaluations", "jacobian_vector_products", "rejected_trials",
    "restarts",   "dropped_columns",   "workspace_bytes",      "history_length",           "final_residual_norm",
    "nothing"};
const char* const report_real_names[] = {"initial_residual_norm",   "final_residual_norm", "wall_seconds",
                                         "median_residual_seconds", "work_units",          "iterations"};

template <std::size_t count>
const char* pick(FuzzedDataProvider& data, const char* const (&names)[count]) {
  return names[data.ConsumeIntegralInRange<std::size_t>(0, count - 1)];
}

double any_double(FuzzedDataProvider& data) {
  switch (data.ConsumeIntegralInRange(0, 7)) {
    case 0:
      return std::numeric_limits<double>::quiet_NaN();
    case 1:
      return std::numeric_limits<double>::infinity();
    case 2:
      return -1.0;
    case 3:
      return 0.0;
    case 4:
      return std::pow(10.0, -data.ConsumeIntegralInRange(0, 14));
    default:
      return data.ConsumeFloatingPointInRange(-10.0, 10.0);
  }
}

/// The status contract of every call.
void check_status(nkit_status status) {
  FUZZ_CHECK(status >= NKIT_STATUS_SUCCESS && status <= NKIT_STATUS_INTERNAL_ERROR, std::to_string(status));
  FUZZ_CHECK(status != NKIT_STATUS_INTERNAL_ERROR, nkit_last_error_message());
  const char* message = nkit_last_error_message();
  FUZZ_CHECK(message != nullptr, "NULL message");
  FUZZ_CHECK((status == NKIT_STATUS_SUCCESS) == (message[0] == '\0'), message);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* bytes, std::size_t length) {
  FuzzedDataProvider data(bytes, length);
  fuzz_system problem;
  problem.size = data.ConsumeIntegralInRange(1, max_size);
  for (int i = 0; i < problem.size; ++i) {
    problem.a[i] = data.ConsumeFloatingPointInRange(0.0, 2.0);
    problem.b[i] = data.ConsumeFloatingPointInRange(0.5, 3.0);
    problem.c[i] = data.ConsumeFloatingPointInRange(-1.0, 1.0);
    problem.d[i] = data.ConsumeFloatingPointInRange(-5.0, 5.0);
  }
  problem.omega = data.ConsumeFloatingPointInRange(0.05, 1.0);
  if (data.ConsumeBool()) problem.nan_beyond = data.ConsumeFloatingPointInRange(-1.0, 5.0);

  nkit_solver* solver = nullptr;
  check_status(nkit_solver_create(&solver));
  FUZZ_CHECK(solver != nullptr, "create succeeded without a handle");
  double state[max_size + 1], lower[max_size + 1], upper[max_size + 1];
  const int operations = data.ConsumeIntegralInRange(1, 14);
  for (int op = 0; op < operations && data.remaining_bytes() > 0; ++op) {
    nkit_solver* target = data.ConsumeIntegralInRange(0, 15) == 0 ? nullptr : solver;
    switch (data.ConsumeIntegralInRange(0, 9)) {
      case 0:
        check_status(nkit_set_real(target, pick(data, real_names), any_double(data)));
        break;
      case 1:
        check_status(
            nkit_set_integer(target, pick(data, integer_names), data.ConsumeIntegralInRange<std::int64_t>(-3, 60)));
        break;
      case 2:
        check_status(
            nkit_set_text(target, pick(data, text_names), data.ConsumeBool() ? pick(data, text_values) : nullptr));
        break;
      case 3: {
        const int which = data.ConsumeIntegralInRange(0, 3);
        const bool clear = data.ConsumeIntegralInRange(0, 5) == 0;
        problem.fail_at_call = data.ConsumeBool() ? data.ConsumeIntegralInRange<long>(1, 40) : -1;
        if (which == 0) check_status(nkit_set_residual(target, clear ? nullptr : residual_callback, &problem));
        if (which == 1) check_status(nkit_set_fixed_point_map(target, clear ? nullptr : map_callback, &problem));
        if (which == 2) {
          check_status(nkit_set_preconditioner(target, data.ConsumeBool() ? jacobi_setup : nullptr,
                                               clear ? nullptr : jacobi_apply, &problem));
        }
        if (which == 3) {
          problem.monitor_stop_at = data.ConsumeIntegralInRange(0, 5);
          check_status(nkit_set_monitor(target, clear ? nullptr : stopping_monitor, &problem));
        }
        break;
      }
      case 4: {
        const int size = data.ConsumeIntegralInRange(0, max_size + 1);
        for (int i = 0; i < size; ++i) {
          lower[i] = data.ConsumeBool() ? -HUGE_VAL : data.ConsumeFloatingPointInRange(-10.0, 0.0);
          upper[i] = data.ConsumeBool() ? HUGE_VAL : data.ConsumeFloatingPointInRange(-1.0, 10.0);
          if (data.ConsumeIntegralInRange(0, 20) == 0) upper[i] = std::numeric_limits<double>::quiet_NaN();
        }
        const int pointers = data.ConsumeIntegralInRange(0, 3);
        check_status(nkit_set_bounds(target, pointers & 1 ? lower : nullptr, pointers & 2 ? upper : nullptr, size));
        break;
      }
      case 5: {
        nkit_settings settings;
        check_status(nkit_get_settings(target, data.ConsumeIntegralInRange(0, 10) == 0 ? nullptr : &settings));
        if (target == nullptr) break;
        check_status(nkit_get_settings(solver, &settings));
        settings.method = data.ConsumeIntegralInRange(-1, 3);
        settings.iteration_budget = data.ConsumeIntegralInRange(0, 40);
        settings.residual_evaluation_budget = data.ConsumeIntegralInRange<std::int64_t>(0, 200);
        settings.anderson_depth = data.ConsumeIntegralInRange(-1, 8);
        settings.anderson_mixing = any_double(data);
        settings.globalization = data.ConsumeIntegralInRange(-1, 4);
        settings.restart_length = data.ConsumeIntegralInRange(0, 10);
        check_status(nkit_configure(solver, &settings));
        break;
      }
      case 6:
      case 7: {
        const int size = data.ConsumeIntegralInRange(0, problem.size);
        for (int i = 0; i < size; ++i) state[i] = data.ConsumeFloatingPointInRange(-3.0, 3.0);
        if (size > 0 && data.ConsumeIntegralInRange(0, 15) == 0) state[0] = std::numeric_limits<double>::quiet_NaN();
        problem.expected_size = size;
        problem.calls = 0;
        const bool null_state = data.ConsumeIntegralInRange(0, 15) == 0;
        const nkit_status status = nkit_solve(target, null_state ? nullptr : state, size);
        check_status(status);
        if (status != NKIT_STATUS_SUCCESS) break;
        for (int i = 0; i < size; ++i) FUZZ_CHECK(std::isfinite(state[i]), "non-finite state after a solve");
        int32_t converged = -1;
        check_status(nkit_report_converged(solver, &converged));
        double initial = 0.0, final_norm = 0.0, relative = 0.0, absolute = 0.0;
        check_status(nkit_report_real(solver, "initial_residual_norm", &initial));
        check_status(nkit_report_real(solver, "final_residual_norm", &final_norm));
        check_status(nkit_get_real(solver, "relative_tolerance", &relative));
        check_status(nkit_get_real(solver, "absolute_tolerance", &absolute));
        // Recompute the norm the solver reports, from the returned state, with
        // the same arithmetic: R(u), u − G(u) or G(u) − u.
        double r[max_size];
        problem.residual_values(state, r, size);
        nkit_settings settings;
        check_status(nkit_get_settings(solver, &settings));
        double squared = 0.0;
        for (int i = 0; i < size; ++i) {
          const double g = state[i] - problem.omega * r[i];
          const double value = settings.method == 0 ? r[i] : state[i] - g;
          squared += value * value;
        }
        const double norm = std::sqrt(squared);
        if (std::isfinite(final_norm) && std::isfinite(norm)) {
          char detail[96];
          std::snprintf(detail, sizeof detail, "%.17g vs %.17g", norm, final_norm);
          FUZZ_CHECK(std::abs(norm - final_norm) <= 1e-12 * (norm + final_norm) + 1e-300, detail);
        }
        if (converged == 1) {
          FUZZ_CHECK(norm <= std::max(absolute, relative * initial) * (1 + 1e-9) + 1e-300,
                     std::string(nkit_report_stop_reason(solver)) + " with norm " + std::to_string(norm));
        }
        break;
      }
      case 8: {
        std::int64_t integer = 0;
        double real = 0.0;
        nkit_iteration_summary summary;
        const bool null_out = data.ConsumeIntegralInRange(0, 10) == 0;
        check_status(nkit_report_integer(target, pick(data, report_integer_names), null_out ? nullptr : &integer));
        check_status(nkit_report_real(target, pick(data, report_real_names), null_out ? nullptr : &real));
        check_status(nkit_report_iteration(target, data.ConsumeIntegralInRange<std::int64_t>(-2, 50),
                                           null_out ? nullptr : &summary));
        FUZZ_CHECK(nkit_report_stop_reason(target) != nullptr && nkit_report_message(target) != nullptr, "NULL text");
        break;
      }
      case 9:
        check_status(nkit_solver_destroy(solver));
        solver = nullptr;
        check_status(nkit_solver_create(&solver));
        break;
    }
  }
  check_status(nkit_solver_destroy(solver));
  return 0;
}
