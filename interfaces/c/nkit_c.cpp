// The C interface (nkit_c.h) over the header-only C++ library: one handle
// holds the settings of both method families, the callbacks, the bounds, the
// solver objects (created on the first solve of their method and reused, so
// repeat solves of one size reuse their workspace) and a copy of the last
// report in C types. A handle made by nkit_solver_create_distributed (builds
// with MPI) solves on nkit::mpi_vector_space over the caller's communicator:
// the same callbacks, each rank passing its own slice.
//
// Error contract: no C++ exception crosses the C boundary. A callback that
// returns nonzero raises callback_failure inside nkit, which unwinds like any
// user exception (nkit leaves u at the last accepted iterate) and becomes
// NKIT_STATUS_CALLBACK_FAILED here; std::invalid_argument from nkit's own
// checks becomes NKIT_STATUS_INVALID_ARGUMENT with nkit's message; bad_alloc
// becomes NKIT_STATUS_OUT_OF_MEMORY. Messages live in a fixed thread-local
// buffer, so recording one never allocates.
#include "nkit_c.h"

#ifndef NKIT_C_HAS_MPI
#define NKIT_C_HAS_MPI 0  // 1 when built with MPI (interfaces/c/CMakeLists.txt)
#endif

#include <Eigen/Core>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <limits>
#include <memory>
#include <new>
#include <nkit/fixed_point/anderson_solver.hpp>
#include <nkit/fixed_point/fixed_point_residual.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/version.hpp>
#include <stdexcept>
#if NKIT_C_HAS_MPI
#include <mpi.h>

#include <nkit/distributed/mpi_vector_space.hpp>

#include "nkit_c_distributed.h"
#endif
#include <string>
#include <vector>

namespace {

// ---- errors ----------------------------------------------------------------------

thread_local char last_error[1024] = "";

nkit_status fail(nkit_status status, const char* message) {
  std::snprintf(last_error, sizeof last_error, "%s", message);
  return status;
}
nkit_status fail(nkit_status status, const std::string& message) { return fail(status, message.c_str()); }
nkit_status succeed() {
  last_error[0] = '\0';
  return NKIT_STATUS_SUCCESS;
}

/// A callback returned nonzero. Thrown from inside nkit's iteration.
struct callback_failure {
  std::string message;
};

template <class Body>
nkit_status guarded(Body&& body) noexcept {
  try {
    return body();
  } catch (const callback_failure& failure) {
    return fail(NKIT_STATUS_CALLBACK_FAILED, failure.message);
  } catch (const std::invalid_argument& error) {
    return fail(NKIT_STATUS_INVALID_ARGUMENT, error.what());
  } catch (const std::bad_alloc&) {
    return fail(NKIT_STATUS_OUT_OF_MEMORY, "nkit: out of memory");
  } catch (const std::exception& error) {
    std::snprintf(last_error, sizeof last_error, "nkit: internal error: %s", error.what());
    return NKIT_STATUS_INTERNAL_ERROR;
  } catch (...) {
    return fail(NKIT_STATUS_INTERNAL_ERROR, "nkit: internal error: unknown exception");
  }
}

#define NKIT_REQUIRE_NOT_NULL(pointer, function)                                                            \
  do {                                                                                                      \
    if ((pointer) == nullptr) return fail(NKIT_STATUS_INVALID_ARGUMENT, function ": " #pointer " is NULL"); \
  } while (false)

// ---- settings -------------------------------------------------------------------------

enum class method_choice : int { newton_krylov = 0, newton_krylov_on_fixed_point_map = 1, anderson = 2 };
constexpr const char* method_names[] = {"newton_krylov", "newton_krylov_on_fixed_point_map", "anderson"};

struct all_settings {
  method_choice method = method_choice::newton_krylov;
  nkit::newton_settings newton;
  nkit::anderson_settings anderson;
  void validate() const {
    if (static_cast<int>(method) < 0 || static_cast<int>(method) > 2) {
      throw std::invalid_argument(
          "nkit: method must be one of newton_krylov, newton_krylov_on_fixed_point_map, "
          "anderson (got " +
          std::to_string(static_cast<int>(method)) + ")");
    }
    newton.validate();
    anderson.validate();
  }
};

enum class setting_kind { real, integer, text };

/// One named setting: how to write and read it. Captureless lambdas only.
struct setting_entry {
  const char* name;
  setting_kind kind;
  void (*set_real)(all_settings&, double);
  double (*get_real)(const all_settings&);
  void (*set_integer)(all_settings&, std::int64_t);
  std::int64_t (*get_integer)(const all_settings&);
  bool (*set_text)(all_settings&, const char*);  ///< false: unknown value
};

int narrow(std::int64_t value, const char* name) {
  if (value < std::numeric_limits<int>::min() || value > std::numeric_limits<int>::max()) {
    throw std::invalid_argument(std::string("nkit: setting '") + name + "' must fit in a 32-bit integer (got " +
                                std::to_string(value) + ")");
  }
  return static_cast<int>(value);
}

template <class Enum, std::size_t count>
bool enumerator_from_text(const char* text, const char* const (&names)[count], Enum& value) {
  for (std::size_t i = 0; i < count; ++i) {
    if (std::strcmp(text, names[i]) == 0) {
      value = static_cast<Enum>(i);
      return true;
    }
  }
  return false;
}

constexpr const char* globalization_names[] = {"line_search", "full_step", "trust_region", "pseudo_transient"};
constexpr const char* forcing_names[] = {"constant", "eisenstat_walker_choice_1", "eisenstat_walker_choice_2"};
constexpr const char* formula_names[] = {"forward", "central"};

#define NKIT_REAL_SETTING(key, ...)                                                                       \
  setting_entry {                                                                                         \
    key, setting_kind::real, [](all_settings& s, double v) { __VA_ARGS__ = v; },                          \
        [](const all_settings& s) { return static_cast<double>(__VA_ARGS__); }, nullptr, nullptr, nullptr \
  }
#define NKIT_INTEGER_SETTING(key, ...)                                                        \
  setting_entry {                                                                             \
    key, setting_kind::integer, nullptr, nullptr,                                             \
        [](all_settings& s, std::int64_t v) { __VA_ARGS__ = narrow(v, key); },                \
        [](const all_settings& s) { return static_cast<std::int64_t>(__VA_ARGS__); }, nullptr \
  }

const setting_entry setting_table[] = {
    // Common to every method.
    setting_entry{"relative_tolerance", setting_kind::real,
                  [](all_settings& s, double v) { s.newton.relative_tolerance = s.anderson.relative_tolerance = v; },
                  [](const all_settings& s) { return s.newton.relative_tolerance; }, nullptr, nullptr, nullptr},
    setting_entry{"absolute_tolerance", setting_kind::real,
                  [](all_settings& s, double v) { s.newton.absolute_tolerance = s.anderson.absolute_tolerance = v; },
                  [](const all_settings& s) { return s.newton.absolute_tolerance; }, nullptr, nullptr, nullptr},
    setting_entry{
        "wall_time_budget_seconds", setting_kind::real,
        [](all_settings& s, double v) { s.newton.wall_time_budget_seconds = s.anderson.wall_time_budget_seconds = v; },
        [](const all_settings& s) { return s.newton.wall_time_budget_seconds; }, nullptr, nullptr, nullptr},
    setting_entry{
        "bounds.boundary_fraction", setting_kind::real,
        [](all_settings& s, double v) { s.newton.bounds.boundary_fraction = s.anderson.bounds.boundary_fraction = v; },
        [](const all_settings& s) { return s.newton.bounds.boundary_fraction; }, nullptr, nullptr, nullptr},
    setting_entry{"iteration_budget", setting_kind::integer, nullptr, nullptr,
                  [](all_settings& s, std::int64_t v) {
                    s.newton.newton_step_budget = s.anderson.iteration_budget = narrow(v, "iteration_budget");
                  },
                  [](const all_settings& s) { return std::int64_t{s.newton.newton_step_budget}; }, nullptr},
    setting_entry{"residual_evaluation_budget", setting_kind::integer, nullptr, nullptr,
                  [](all_settings& s, std::int64_t v) {
                    s.newton.residual_evaluation_budget = s.anderson.residual_evaluation_budget = v;
                  },
                  [](const all_settings& s) { return s.newton.residual_evaluation_budget; }, nullptr},
    setting_entry{"method", setting_kind::text, nullptr, nullptr, nullptr, nullptr,
                  [](all_settings& s, const char* v) { return enumerator_from_text(v, method_names, s.method); }},
    // Newton–Krylov.
    NKIT_REAL_SETTING("negligible_step_size", s.newton.negligible_step_size),
    NKIT_REAL_SETTING("stagnation_factor", s.newton.stagnation_factor),
    NKIT_REAL_SETTING("forcing.constant_value", s.newton.forcing.constant_value),
    NKIT_REAL_SETTING("jacobian.residual_relative_noise", s.newton.jacobian.residual_relative_noise),
    NKIT_INTEGER_SETTING("stagnation_window", s.newton.stagnation_window),
    NKIT_INTEGER_SETTING("linear.restart_length", s.newton.linear.restart_length),
    NKIT_INTEGER_SETTING("linear.maximum_iterations", s.newton.linear.maximum_iterations),
    NKIT_INTEGER_SETTING("preconditioner_rebuild.rebuild_every_newton_steps",
                         s.newton.preconditioner_rebuild.rebuild_every_newton_steps),
    setting_entry{"linear_iteration_budget", setting_kind::integer, nullptr, nullptr,
                  [](all_settings& s, std::int64_t v) { s.newton.linear_iteration_budget = v; },
                  [](const all_settings& s) { return s.newton.linear_iteration_budget; }, nullptr},
    setting_entry{"globalization", setting_kind::text, nullptr, nullptr, nullptr, nullptr,
                  [](all_settings& s, const char* v) {
                    return enumerator_from_text(v, globalization_names, s.newton.globalization);
                  }},
    setting_entry{"forcing.formula", setting_kind::text, nullptr, nullptr, nullptr, nullptr,
                  [](all_settings& s, const char* v) {
                    return enumerator_from_text(v, forcing_names, s.newton.forcing.formula);
                  }},
    setting_entry{"jacobian.formula", setting_kind::text, nullptr, nullptr, nullptr, nullptr,
                  [](all_settings& s, const char* v) {
                    return enumerator_from_text(v, formula_names, s.newton.jacobian.formula);
                  }},
    // Anderson.
    NKIT_REAL_SETTING("anderson.mixing", s.anderson.mixing),
    NKIT_REAL_SETTING("anderson.maximum_condition_number", s.anderson.maximum_condition_number),
    NKIT_REAL_SETTING("anderson.stagnation_factor", s.anderson.stagnation_factor),
    NKIT_INTEGER_SETTING("anderson.depth", s.anderson.depth),
    NKIT_INTEGER_SETTING("anderson.restart_window", s.anderson.restart_window),
    NKIT_INTEGER_SETTING("anderson.stagnation_window", s.anderson.stagnation_window),
};

#undef NKIT_REAL_SETTING
#undef NKIT_INTEGER_SETTING

const setting_entry* find_setting(const char* name) {
  for (const setting_entry& entry : setting_table) {
    if (std::strcmp(entry.name, name) == 0) return &entry;
  }
  return nullptr;
}

const char* kind_text(setting_kind kind) {
  switch (kind) {
    case setting_kind::real:
      return "a real (use nkit_set_real)";
    case setting_kind::integer:
      return "an integer (use nkit_set_integer)";
    case setting_kind::text:
      return "a text (use nkit_set_text)";
  }
  return "unknown";
}

// ---- callbacks as nkit concepts --------------------------------------------------------------

/// Residual or map: calls the C function on the vectors' storage.
struct vector_callback {
  nkit_vector_function function = nullptr;
  void* user_data = nullptr;
  const char* what = "";
  long long calls = 0;
  void operator()(const Eigen::VectorXd& input, Eigen::VectorXd& output) {
    ++calls;
    const int code = function(input.data(), output.data(), static_cast<std::int64_t>(input.size()), user_data);
    if (code != 0) {
      throw callback_failure{std::string("nkit: the ") + what + " callback returned " + std::to_string(code) +
                             " (failure) at call " + std::to_string(calls) +
                             "; the state holds the last accepted iterate"};
    }
  }
};

/// Newton–Krylov sees the C residual through this (held by reference, no copy).
struct residual_reference {
  vector_callback* callback;
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) { (*callback)(u, r); }
};

struct callback_preconditioner {
  nkit_preconditioner_setup_function setup_function = nullptr;
  nkit_preconditioner_apply_function apply_function = nullptr;
  void* user_data = nullptr;

  template <class Context>
  nkit::setup_status setup(const Context& context) {
    if (setup_function != nullptr) {
      const int code = setup_function(context.state.data(), context.residual.data(),
                                      static_cast<std::int64_t>(context.state.size()), user_data);
      if (code != 0) {
        throw callback_failure{"nkit: the preconditioner setup callback returned " + std::to_string(code) +
                               " (failure) before Newton step " + std::to_string(context.newton_step + 1) +
                               "; the state holds the last accepted iterate"};
      }
    }
    return nkit::setup_status::ready;
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    const int code = apply_function(r.data(), z.data(), static_cast<std::int64_t>(r.size()), user_data);
    if (code != 0) {
      throw callback_failure{"nkit: the preconditioner apply callback returned " + std::to_string(code) +
                             " (failure); the state holds the last accepted iterate"};
    }
  }
};

nkit_iteration_summary summary_of(const nkit::newton_step_record& record) {
  nkit_iteration_summary summary{};
  summary.iteration = record.step;
  summary.linear_iterations = record.linear_iterations;
  summary.residual_norm = record.residual_norm;
  summary.relative_residual_norm = record.relative_residual_norm;
  summary.step_norm = record.step_norm;
  summary.elapsed_seconds = record.elapsed_seconds;
  summary.residual_evaluations = record.residual_evaluations;
  return summary;
}

nkit_iteration_summary summary_of(const nkit::anderson_step_record& record) {
  nkit_iteration_summary summary{};
  summary.iteration = record.iteration;
  summary.depth_used = record.depth_used;
  summary.restarted = record.restarted ? 1 : 0;
  summary.residual_norm = record.residual_norm;
  summary.relative_residual_norm = record.relative_residual_norm;
  summary.step_norm = record.step_norm;
  summary.elapsed_seconds = record.elapsed_seconds;
  summary.residual_evaluations = record.residual_evaluations;
  return summary;
}

struct callback_monitor {
  nkit_monitor_function function = nullptr;
  void* user_data = nullptr;
  template <class Record>
  nkit::monitor_decision notify(const Record& record) const {
    if (function == nullptr) return nkit::monitor_decision::keep_going;
    const nkit_iteration_summary summary = summary_of(record);
    return function(&summary, user_data) != 0 ? nkit::monitor_decision::stop_now : nkit::monitor_decision::keep_going;
  }
  nkit::monitor_decision after_newton_step(const nkit::newton_step_record& record) const { return notify(record); }
  nkit::monitor_decision after_anderson_step(const nkit::anderson_step_record& record) const { return notify(record); }
};

/// The last report, in C types.
struct report_copy {
  bool available = false;
  nkit::stop_reason_if_stopped reason;
  std::string message;
  std::int64_t iterations = 0, linear_iterations = 0, residual_evaluations = 0, jacobian_vector_products = 0,
               rejected_trials = 0, restarts = 0, dropped_columns = 0, workspace_bytes = 0;
  double initial_residual_norm = 0.0, final_residual_norm = 0.0, wall_seconds = 0.0, median_residual_seconds = 0.0,
         work_units = 0.0;
  std::vector<nkit_iteration_summary> history;
};

/// The solver objects of one vector space, created on the first solve of their method.
template <class Space>
struct solvers_on {
  std::unique_ptr<nkit::newton_krylov_solver<Space, nkit::identity_preconditioner>> plain;
  std::unique_ptr<nkit::newton_krylov_solver<Space, callback_preconditioner>> preconditioned;
  std::unique_ptr<nkit::anderson_solver<Space>> anderson;
};

}  // namespace

struct nkit_solver {
  all_settings settings;
  vector_callback residual{nullptr, nullptr, "residual"};
  vector_callback map{nullptr, nullptr, "fixed-point map"};
  callback_preconditioner preconditioner;
  callback_monitor monitor;
  Eigen::VectorXd lower, upper;
  bool has_bounds = false;
  solvers_on<nkit::eigen_vector_space<double>> serial;
#if NKIT_C_HAS_MPI
  bool distributed = false;
  MPI_Comm communicator = MPI_COMM_NULL;
  solvers_on<nkit::mpi_vector_space> on_communicator;
#endif
  report_copy report;
};

namespace {

void copy_report(report_copy& copy, const nkit::solve_report& report) {
  copy.reason = report.reason;
  copy.message = std::string(report.message());
  copy.iterations = report.newton_steps;
  copy.linear_iterations = report.linear_iterations;
  copy.residual_evaluations = report.residual_evaluations;
  copy.jacobian_vector_products = report.jacobian_vector_products;
  copy.rejected_trials = report.rejected_trials;
  copy.restarts = copy.dropped_columns = 0;
  copy.workspace_bytes = static_cast<std::int64_t>(report.workspace_bytes);
  copy.initial_residual_norm = report.initial_residual_norm;
  copy.final_residual_norm = report.final_residual_norm;
  copy.wall_seconds = report.wall_seconds;
  copy.median_residual_seconds = report.median_residual_seconds;
  copy.work_units = report.work_units();
  copy.history.clear();
  for (const auto& record : report.history) copy.history.push_back(summary_of(record));
  copy.available = true;
}

void copy_report(report_copy& copy, const nkit::anderson_report& report) {
  copy.reason = report.reason;
  copy.message = std::string(report.message());
  copy.iterations = report.iterations;
  copy.linear_iterations = copy.jacobian_vector_products = copy.rejected_trials = 0;
  copy.residual_evaluations = report.residual_evaluations;
  copy.restarts = report.restarts;
  copy.dropped_columns = report.dropped_columns;
  copy.workspace_bytes = static_cast<std::int64_t>(report.workspace_bytes);
  copy.initial_residual_norm = report.initial_residual_norm;
  copy.final_residual_norm = report.final_residual_norm;
  copy.wall_seconds = report.wall_seconds;
  copy.median_residual_seconds = report.median_residual_seconds;
  copy.work_units = report.work_units();
  copy.history.clear();
  for (const auto& record : report.history) copy.history.push_back(summary_of(record));
  copy.available = true;
}

template <class Solver, class Space, class Problem>
nkit::solve_report run_newton(nkit_solver& handle, std::unique_ptr<Solver>& solver, const Space& space,
                              Problem& problem, Eigen::Ref<Eigen::VectorXd> u) {
  if (!solver) solver = std::make_unique<Solver>(handle.settings.newton, space);
  solver->configure(handle.settings.newton);
  if (handle.has_bounds) {
    solver->set_bounds(handle.lower, handle.upper);
  } else {
    solver->clear_bounds();
  }
  return solver->solve(problem, u, handle.monitor);
}

/// One solve with the handle's method on `space` (serial or distributed).
template <class Space>
void solve_on(nkit_solver& handle, const Space& space, solvers_on<Space>& solvers, Eigen::Map<Eigen::VectorXd> u) {
  const method_choice method = handle.settings.method;
  if (method == method_choice::anderson) {
    if (!solvers.anderson)
      solvers.anderson = std::make_unique<nkit::anderson_solver<Space>>(handle.settings.anderson, space);
    solvers.anderson->configure(handle.settings.anderson);
    if (handle.has_bounds) {
      solvers.anderson->set_bounds(handle.lower, handle.upper);
    } else {
      solvers.anderson->clear_bounds();
    }
    copy_report(handle.report, solvers.anderson->solve(handle.map, u, handle.monitor));
    return;
  }
  residual_reference residual{method == method_choice::newton_krylov ? &handle.residual : nullptr};
  auto on_map = nkit::fixed_point_residual<vector_callback&>(handle.map);
  const auto solve_with = [&](auto& problem) {
    if (handle.preconditioner.apply_function != nullptr) {
      if (!solvers.preconditioned) {
        solvers.preconditioned =
            std::make_unique<typename decltype(solvers.preconditioned)::element_type>(handle.settings.newton, space);
      }
      solvers.preconditioned->preconditioner() = handle.preconditioner;
      return run_newton(handle, solvers.preconditioned, space, problem, u);
    }
    return run_newton(handle, solvers.plain, space, problem, u);
  };
  if (method == method_choice::newton_krylov) {
    copy_report(handle.report, solve_with(residual));
  } else {
    copy_report(handle.report, solve_with(on_map));
  }
}

}  // namespace

// ---- C entry points ----------------------------------------------------------------------------

extern "C" {

nkit_status nkit_solver_create(nkit_solver** solver) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_solver_create");
    *solver = nullptr;
    return guarded([&] {
      *solver = new nkit_solver();
      return succeed();
    });
  });
}

int32_t nkit_has_distributed(void) { return NKIT_C_HAS_MPI ? 1 : 0; }

nkit_status nkit_solver_create_distributed_fortran(nkit_solver** solver, int32_t fortran_communicator) {
#if NKIT_C_HAS_MPI
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_solver_create_distributed_fortran");
    *solver = nullptr;
    int initialized = 0;
    MPI_Initialized(&initialized);
    if (!initialized) {
      return fail(NKIT_STATUS_INVALID_ARGUMENT,
                  "nkit_solver_create_distributed_fortran: MPI is not initialised (call MPI_Init first)");
    }
    return nkit_solver_create_distributed(solver, MPI_Comm_f2c(static_cast<MPI_Fint>(fortran_communicator)));
  });
#else
  static_cast<void>(fortran_communicator);
  if (solver != nullptr) *solver = nullptr;
  return fail(NKIT_STATUS_INVALID_ARGUMENT,
              "nkit_solver_create_distributed_fortran: this nkit_c library was built without MPI "
              "(nkit_has_distributed() returns 0; configure nkit where MPI is found, e.g. libopenmpi-dev)");
#endif
}

nkit_status nkit_solver_destroy(nkit_solver* solver) {
  delete solver;
  return succeed();
}

const char* nkit_last_error_message(void) { return last_error; }

const char* nkit_version_text(void) {
#define NKIT_TEXT_OF(x) #x
#define NKIT_VERSION_TEXT(a, b, c) NKIT_TEXT_OF(a) "." NKIT_TEXT_OF(b) "." NKIT_TEXT_OF(c)
  return NKIT_VERSION_TEXT(NKIT_VERSION_MAJOR, NKIT_VERSION_MINOR, NKIT_VERSION_PATCH);
#undef NKIT_VERSION_TEXT
#undef NKIT_TEXT_OF
}

nkit_status nkit_set_residual(nkit_solver* solver, nkit_vector_function residual, void* user_data) {
  NKIT_REQUIRE_NOT_NULL(solver, "nkit_set_residual");
  solver->residual.function = residual;
  solver->residual.user_data = user_data;
  return succeed();
}

nkit_status nkit_set_fixed_point_map(nkit_solver* solver, nkit_vector_function map, void* user_data) {
  NKIT_REQUIRE_NOT_NULL(solver, "nkit_set_fixed_point_map");
  solver->map.function = map;
  solver->map.user_data = user_data;
  return succeed();
}

nkit_status nkit_set_preconditioner(nkit_solver* solver, nkit_preconditioner_setup_function setup,
                                    nkit_preconditioner_apply_function apply, void* user_data) {
  NKIT_REQUIRE_NOT_NULL(solver, "nkit_set_preconditioner");
  if (apply == nullptr && setup != nullptr) {
    return fail(NKIT_STATUS_INVALID_ARGUMENT, "nkit_set_preconditioner: setup given without apply");
  }
  solver->preconditioner.setup_function = setup;
  solver->preconditioner.apply_function = apply;
  solver->preconditioner.user_data = user_data;
  return succeed();
}

nkit_status nkit_set_monitor(nkit_solver* solver, nkit_monitor_function monitor, void* user_data) {
  NKIT_REQUIRE_NOT_NULL(solver, "nkit_set_monitor");
  solver->monitor.function = monitor;
  solver->monitor.user_data = user_data;
  return succeed();
}

nkit_status nkit_set_bounds(nkit_solver* solver, const double* lower, const double* upper, int64_t size) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_set_bounds");
    if (lower == nullptr && upper == nullptr) {
      solver->has_bounds = false;
      return succeed();
    }
    NKIT_REQUIRE_NOT_NULL(lower, "nkit_set_bounds");
    NKIT_REQUIRE_NOT_NULL(upper, "nkit_set_bounds");
    if (size <= 0) {
      return fail(NKIT_STATUS_INVALID_ARGUMENT,
                  "nkit_set_bounds: size must be >= 1 (got " + std::to_string(size) + ")");
    }
    return guarded([&] {
      const Eigen::Map<const Eigen::VectorXd> low(lower, size), high(upper, size);
      for (int64_t i = 0; i < size; ++i) {
        if (std::isnan(low(i)) || std::isnan(high(i))) {
          return fail(NKIT_STATUS_INVALID_ARGUMENT, "nkit_set_bounds: lower or upper contains NaN at index " +
                                                        std::to_string(i) + " (use -HUGE_VAL/HUGE_VAL for no bound)");
        }
        if (low(i) > high(i)) {
          return fail(NKIT_STATUS_INVALID_ARGUMENT,
                      "nkit_set_bounds: contradictory bounds at index " + std::to_string(i) + " (lower > upper)");
        }
      }
      solver->lower = low;
      solver->upper = high;
      solver->has_bounds = true;
      return succeed();
    });
  });
}

nkit_status nkit_settings_defaults(nkit_settings* settings) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(settings, "nkit_settings_defaults");
    nkit_solver defaults;
    return nkit_get_settings(&defaults, settings);
  });
}

nkit_status nkit_get_settings(const nkit_solver* solver, nkit_settings* settings) {
  NKIT_REQUIRE_NOT_NULL(solver, "nkit_get_settings");
  NKIT_REQUIRE_NOT_NULL(settings, "nkit_get_settings");
  const all_settings& s = solver->settings;
  *settings = nkit_settings{};
  settings->method = static_cast<int32_t>(s.method);
  settings->relative_tolerance = s.newton.relative_tolerance;
  settings->absolute_tolerance = s.newton.absolute_tolerance;
  settings->iteration_budget = s.newton.newton_step_budget;
  settings->residual_evaluation_budget = s.newton.residual_evaluation_budget;
  settings->wall_time_budget_seconds = s.newton.wall_time_budget_seconds;
  settings->globalization = static_cast<int32_t>(s.newton.globalization);
  settings->restart_length = s.newton.linear.restart_length;
  settings->maximum_linear_iterations = s.newton.linear.maximum_iterations;
  settings->residual_relative_noise = s.newton.jacobian.residual_relative_noise;
  settings->anderson_depth = s.anderson.depth;
  settings->anderson_mixing = s.anderson.mixing;
  settings->anderson_maximum_condition_number = s.anderson.maximum_condition_number;
  settings->anderson_restart_window = s.anderson.restart_window;
  return succeed();
}

nkit_status nkit_configure(nkit_solver* solver, const nkit_settings* settings) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_configure");
    NKIT_REQUIRE_NOT_NULL(settings, "nkit_configure");
    return guarded([&] {
      all_settings s = solver->settings;
      s.method = static_cast<method_choice>(settings->method);
      s.newton.relative_tolerance = s.anderson.relative_tolerance = settings->relative_tolerance;
      s.newton.absolute_tolerance = s.anderson.absolute_tolerance = settings->absolute_tolerance;
      s.newton.newton_step_budget = s.anderson.iteration_budget = settings->iteration_budget;
      s.newton.residual_evaluation_budget = s.anderson.residual_evaluation_budget =
          settings->residual_evaluation_budget;
      s.newton.wall_time_budget_seconds = s.anderson.wall_time_budget_seconds = settings->wall_time_budget_seconds;
      s.newton.globalization = static_cast<nkit::globalization_strategy>(settings->globalization);
      s.newton.linear.restart_length = settings->restart_length;
      s.newton.linear.maximum_iterations = settings->maximum_linear_iterations;
      s.newton.jacobian.residual_relative_noise = settings->residual_relative_noise;
      s.anderson.depth = settings->anderson_depth;
      s.anderson.mixing = settings->anderson_mixing;
      s.anderson.maximum_condition_number = settings->anderson_maximum_condition_number;
      s.anderson.restart_window = settings->anderson_restart_window;
      s.validate();
      solver->settings = s;
      return succeed();
    });
  });
}
}  // extern "C"

namespace {
/// The setting `name` when it exists and has `kind`; otherwise nullptr, with
/// the failure recorded for nkit_last_error_message().
const setting_entry* setting_of_kind(const char* name, setting_kind kind, nkit_status& status) {
  const setting_entry* entry = find_setting(name);
  if (entry == nullptr) {
    status = fail(NKIT_STATUS_INVALID_ARGUMENT, std::string("nkit: unknown setting '") + name + "'");
    return nullptr;
  }
  if (entry->kind != kind) {
    status =
        fail(NKIT_STATUS_INVALID_ARGUMENT, std::string("nkit: setting '") + name + "' is " + kind_text(entry->kind));
    return nullptr;
  }
  return entry;
}

/// Sets one setting by name on a copy of the settings and keeps the copy
/// only when the whole settings validate: `apply(entry, settings)` returns
/// an empty string or the reason the value was refused.
template <class Apply>
nkit_status set_by_name(nkit_solver* solver, const char* name, setting_kind kind, Apply&& apply) {
  return guarded([&] {
    nkit_status status = NKIT_STATUS_SUCCESS;
    const setting_entry* entry = setting_of_kind(name, kind, status);
    if (entry == nullptr) return status;
    all_settings s = solver->settings;
    if (const std::string refused = apply(*entry, s); !refused.empty()) {
      return fail(NKIT_STATUS_INVALID_ARGUMENT, refused);
    }
    s.validate();
    solver->settings = s;
    return succeed();
  });
}
}  // namespace

extern "C" {

nkit_status nkit_set_real(nkit_solver* solver, const char* name, double value) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_set_real");
    NKIT_REQUIRE_NOT_NULL(name, "nkit_set_real");
    return set_by_name(solver, name, setting_kind::real, [&](const setting_entry& entry, all_settings& s) {
      entry.set_real(s, value);
      return std::string();
    });
  });
}

nkit_status nkit_set_integer(nkit_solver* solver, const char* name, int64_t value) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_set_integer");
    NKIT_REQUIRE_NOT_NULL(name, "nkit_set_integer");
    return set_by_name(solver, name, setting_kind::integer, [&](const setting_entry& entry, all_settings& s) {
      entry.set_integer(s, value);
      return std::string();
    });
  });
}

nkit_status nkit_set_text(nkit_solver* solver, const char* name, const char* value) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_set_text");
    NKIT_REQUIRE_NOT_NULL(name, "nkit_set_text");
    NKIT_REQUIRE_NOT_NULL(value, "nkit_set_text");
    return set_by_name(solver, name, setting_kind::text, [&](const setting_entry& entry, all_settings& s) {
      return entry.set_text(s, value) ? std::string()
                                      : std::string("nkit: setting '") + name + "' has no value '" + value + "'";
    });
  });
}

nkit_status nkit_get_real(const nkit_solver* solver, const char* name, double* value) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_get_real");
    NKIT_REQUIRE_NOT_NULL(name, "nkit_get_real");
    NKIT_REQUIRE_NOT_NULL(value, "nkit_get_real");
    nkit_status status = NKIT_STATUS_SUCCESS;
    const setting_entry* entry = setting_of_kind(name, setting_kind::real, status);
    if (entry == nullptr) return status;
    *value = entry->get_real(solver->settings);
    return succeed();
  });
}

nkit_status nkit_get_integer(const nkit_solver* solver, const char* name, int64_t* value) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_get_integer");
    NKIT_REQUIRE_NOT_NULL(name, "nkit_get_integer");
    NKIT_REQUIRE_NOT_NULL(value, "nkit_get_integer");
    nkit_status status = NKIT_STATUS_SUCCESS;
    const setting_entry* entry = setting_of_kind(name, setting_kind::integer, status);
    if (entry == nullptr) return status;
    *value = entry->get_integer(solver->settings);
    return succeed();
  });
}

nkit_status nkit_solve(nkit_solver* solver, double* state, int64_t size) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_solve");
    NKIT_REQUIRE_NOT_NULL(state, "nkit_solve");
    if (size <= 0)
      return fail(NKIT_STATUS_INVALID_ARGUMENT, "nkit_solve: size must be >= 1 (got " + std::to_string(size) + ")");
    if (solver->has_bounds && solver->lower.size() != size) {
      return fail(NKIT_STATUS_INVALID_ARGUMENT, "nkit_solve: the bounds have " + std::to_string(solver->lower.size()) +
                                                    " entries but the state has " + std::to_string(size));
    }
    const method_choice method = solver->settings.method;
    if (method == method_choice::newton_krylov && solver->residual.function == nullptr) {
      return fail(NKIT_STATUS_MISSING_CALLBACK,
                  "nkit_solve: method newton_krylov needs a residual callback (nkit_set_residual)");
    }
    if (method != method_choice::newton_krylov && solver->map.function == nullptr) {
      return fail(NKIT_STATUS_MISSING_CALLBACK, std::string("nkit_solve: method ") +
                                                    method_names[static_cast<int>(method)] +
                                                    " needs a fixed-point map callback (nkit_set_fixed_point_map)");
    }
    solver->report.available = false;
    return guarded([&] {
      Eigen::Map<Eigen::VectorXd> u(state, size);
      solver->residual.calls = solver->map.calls = 0;
#if NKIT_C_HAS_MPI
      if (solver->distributed) {
        solve_on(*solver, nkit::mpi_vector_space(solver->communicator), solver->on_communicator, u);
        return succeed();
      }
#endif
      solve_on(*solver, nkit::eigen_vector_space<double>{}, solver->serial, u);
      return succeed();
    });
  });
}

nkit_status nkit_report_converged(const nkit_solver* solver, int32_t* converged) {
  NKIT_REQUIRE_NOT_NULL(solver, "nkit_report_converged");
  NKIT_REQUIRE_NOT_NULL(converged, "nkit_report_converged");
  if (!solver->report.available) return fail(NKIT_STATUS_NO_REPORT, "nkit_report_converged: no completed solve");
  *converged = nkit::is_converged(solver->report.reason) ? 1 : 0;
  return succeed();
}

const char* nkit_report_stop_reason(const nkit_solver* solver) {
  if (solver == nullptr || !solver->report.available) return "";
  return nkit::name(solver->report.reason).data();
}

const char* nkit_report_status(const nkit_solver* solver) {
  if (solver == nullptr || !solver->report.available || !solver->report.reason) return "";
  return nkit::name(nkit::status_of(*solver->report.reason)).data();
}

const char* nkit_report_message(const nkit_solver* solver) {
  if (solver == nullptr || !solver->report.available) return "";
  return solver->report.message.c_str();
}

nkit_status nkit_report_integer(const nkit_solver* solver, const char* name, int64_t* value) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_report_integer");
    NKIT_REQUIRE_NOT_NULL(name, "nkit_report_integer");
    NKIT_REQUIRE_NOT_NULL(value, "nkit_report_integer");
    if (!solver->report.available) return fail(NKIT_STATUS_NO_REPORT, "nkit_report_integer: no completed solve");
    const report_copy& r = solver->report;
    const struct {
      const char* name;
      std::int64_t value;
    } fields[] = {{"iterations", r.iterations},
                  {"linear_iterations", r.linear_iterations},
                  {"residual_evaluations", r.residual_evaluations},
                  {"jacobian_vector_products", r.jacobian_vector_products},
                  {"rejected_trials", r.rejected_trials},
                  {"restarts", r.restarts},
                  {"dropped_columns", r.dropped_columns},
                  {"workspace_bytes", r.workspace_bytes},
                  {"history_length", static_cast<std::int64_t>(r.history.size())}};
    for (const auto& field : fields) {
      if (std::strcmp(field.name, name) == 0) {
        *value = field.value;
        return succeed();
      }
    }
    return fail(NKIT_STATUS_INVALID_ARGUMENT, std::string("nkit_report_integer: unknown report field '") + name + "'");
  });
}

nkit_status nkit_report_real(const nkit_solver* solver, const char* name, double* value) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_report_real");
    NKIT_REQUIRE_NOT_NULL(name, "nkit_report_real");
    NKIT_REQUIRE_NOT_NULL(value, "nkit_report_real");
    if (!solver->report.available) return fail(NKIT_STATUS_NO_REPORT, "nkit_report_real: no completed solve");
    const report_copy& r = solver->report;
    const struct {
      const char* name;
      double value;
    } fields[] = {{"initial_residual_norm", r.initial_residual_norm},
                  {"final_residual_norm", r.final_residual_norm},
                  {"wall_seconds", r.wall_seconds},
                  {"median_residual_seconds", r.median_residual_seconds},
                  {"work_units", r.work_units}};
    for (const auto& field : fields) {
      if (std::strcmp(field.name, name) == 0) {
        *value = field.value;
        return succeed();
      }
    }
    return fail(NKIT_STATUS_INVALID_ARGUMENT, std::string("nkit_report_real: unknown report field '") + name + "'");
  });
}

nkit_status nkit_report_iteration(const nkit_solver* solver, int64_t index, nkit_iteration_summary* summary) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_report_iteration");
    NKIT_REQUIRE_NOT_NULL(summary, "nkit_report_iteration");
    if (!solver->report.available) return fail(NKIT_STATUS_NO_REPORT, "nkit_report_iteration: no completed solve");
    if (index < 0 || index >= static_cast<int64_t>(solver->report.history.size())) {
      return fail(NKIT_STATUS_NO_REPORT, "nkit_report_iteration: index " + std::to_string(index) +
                                             " is outside the history of " +
                                             std::to_string(solver->report.history.size()) + " iterations");
    }
    *summary = solver->report.history[static_cast<std::size_t>(index)];
    return succeed();
  });
}

}  // extern "C"

#if NKIT_C_HAS_MPI
extern "C" nkit_status nkit_solver_create_distributed(nkit_solver** solver, MPI_Comm communicator) {
  return guarded([&]() -> nkit_status {
    NKIT_REQUIRE_NOT_NULL(solver, "nkit_solver_create_distributed");
    *solver = nullptr;
    int initialized = 0;
    MPI_Initialized(&initialized);
    if (!initialized) {
      return fail(NKIT_STATUS_INVALID_ARGUMENT,
                  "nkit_solver_create_distributed: MPI is not initialised (call MPI_Init first)");
    }
    if (communicator == MPI_COMM_NULL) {
      return fail(NKIT_STATUS_INVALID_ARGUMENT, "nkit_solver_create_distributed: the communicator is MPI_COMM_NULL");
    }
    return guarded([&] {
      auto handle = std::make_unique<nkit_solver>();
      handle->distributed = true;
      handle->communicator = communicator;
      *solver = handle.release();
      return succeed();
    });
  });
}
#endif
