// libFuzzer target: decodes the fuzz input into a small random nonlinear
// system and random solver settings, solves, and checks nkit's contract.
//
// System (n = 1..8 unknowns, invented for fuzzing): row i is
//   r_i = f_i(u_i) + Σ_k c_ik g_ik(u_j(k)) + d_i,
//   f_i(u) = a u^p + b u (p = 1..3)   or   a (e^{αu} − 1) + b u,
//   g_ik(u) = u or u²                   (random sparse couplings, <= 3 per row),
// optionally NaN everywhere beyond u_0 > threshold (an undefined region), a
// user exception after K calls, a cancellation flag raised after K calls,
// exact J·v or finite differences, an admissibility predicate, bounds, scaling
// and a Jacobi preconditioner whose setup may fail, fall back or produce
// Inf/NaN. Settings are drawn inside their documented ranges, and now and then
// one field outside (NaN, Inf, zero, negative, out of range, bad enumerator).
//
// Checked for every input (a failed check aborts, which libFuzzer reports):
//  - invalid settings, bounds, scales or initial guesses throw
//    std::invalid_argument naming the field, valid ones never do, and no other
//    exception escapes except the injected user exception (unchanged);
//  - the budgets hold at every call: Newton steps, residual evaluations
//    (checked inside the residual), linear iterations; no residual call after
//    the cancellation flag was raised;
//  - the residual is never evaluated at a non-finite state;
//  - the returned u is finite; a converged outcome has ‖R(u)‖ (recomputed from
//    the returned u) within the tolerance; any other outcome returns the best
//    iterate: ‖R(u)‖ recomputed equals report.final_residual_norm and is at
//    most ‖R(u0)‖; after the injected exception u is the last accepted iterate.
// Sanitizers (address, undefined) catch memory and UB errors; libFuzzer's
// -timeout catches hangs. Budgets are small, so each input runs in well under
// a millisecond.
#include <fuzzer/FuzzedDataProvider.h>

#include <Eigen/Core>
#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <limits>
#include <memory>
#include <nkit/nkit.hpp>
#include <string>
#include <vector>

namespace {

constexpr double nan_value = std::numeric_limits<double>::quiet_NaN();
constexpr double inf_value = std::numeric_limits<double>::infinity();

/// With NKIT_FUZZ_STATISTICS=1 in the environment, how inputs ended is
/// printed at exit (to see that the decoder reaches every path).
struct statistics {
  long outcomes[32] = {};
  long rejected_settings = 0, rejected_start = 0, user_exceptions = 0;
  ~statistics() {
    if (std::getenv("NKIT_FUZZ_STATISTICS") == nullptr) return;
    std::fprintf(stderr, "rejected settings %ld, rejected start %ld, user exceptions %ld\n", rejected_settings,
                 rejected_start, user_exceptions);
    for (int k = 0; k < 32; ++k) {
      if (outcomes[k] > 0) {
        const std::string name(nkit::name(static_cast<nkit::stop_reason>(k)));
        std::fprintf(stderr, "%-28s %ld\n", name.c_str(), outcomes[k]);
      }
    }
  }
} counts;

[[noreturn]] void fail(const char* what, const std::string& detail = {}) {
  std::fprintf(stderr, "nkit fuzz check failed: %s %s\n", what, detail.c_str());
  std::abort();
}
#define FUZZ_CHECK(condition, detail) ((condition) ? static_cast<void>(0) : fail("(" #condition ")", detail))

bool same_bits(const Eigen::VectorXd& a, const Eigen::VectorXd& b) {
  return a.size() == b.size() &&
         std::memcmp(a.data(), b.data(), sizeof(double) * static_cast<std::size_t>(a.size())) == 0;
}

/// With variable scaling the solver works on ũ = u / D and writes back D ũ,
/// which may differ from u in the last bit: |D (u / D) − u| <= 2 ε |u|.
bool same_up_to_scaling_rounding(const Eigen::VectorXd& a, const Eigen::VectorXd& b, bool scaled) {
  if (!scaled) return same_bits(a, b);
  const double epsilon = std::numeric_limits<double>::epsilon();
  return a.size() == b.size() && ((a - b).array().abs() <= 2.0 * epsilon * b.array().abs()).all();
}

/// Thrown by the residual on request; must reach the caller unchanged.
struct injected_fault {
  int code;
};

struct coupling {
  int column;
  double coefficient;
  bool quadratic;
};

struct row {
  bool exponential = false;
  int power = 1;
  double a = 1.0, b = 0.0, alpha = 1.0, d = 0.0;
  std::vector<coupling> couplings;
};

/// The random system and the faults it injects.
struct fuzz_system {
  std::vector<row> rows;
  double nan_beyond = inf_value;  ///< R = NaN where u_0 > nan_beyond
  double admissible_above = -inf_value;
  long throw_at_call = -1;
  long cancel_at_call = -1;
  std::int64_t budget = 0;
  std::atomic<bool>* cancel = nullptr;
  long calls = 0;
  long calls_after_cancel = 0;

  void evaluate(const Eigen::VectorXd& u, Eigen::VectorXd& r) {
    FUZZ_CHECK(u.allFinite(), "the residual was called at a non-finite state");
    FUZZ_CHECK(r.size() == u.size(), "r was not sized like u");
    ++calls;
    FUZZ_CHECK(calls <= budget, "residual_evaluation_budget exceeded");
    if (cancel != nullptr && cancel->load()) ++calls_after_cancel;
    if (calls == throw_at_call) throw injected_fault{42};
    if (calls == cancel_at_call && cancel != nullptr) cancel->store(true);
    values(u, r);
  }
  /// R(u) without any bookkeeping (used to recompute norms).
  void values(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    const Eigen::Index n = u.size();
    if (u(0) > nan_beyond) {
      r.setConstant(nan_value);
      return;
    }
    for (Eigen::Index i = 0; i < n; ++i) {
      const row& q = rows[static_cast<std::size_t>(i)];
      const double x = u(i);
      double value = q.exponential ? q.a * std::expm1(q.alpha * x) : q.a * std::pow(x, q.power);
      value += q.b * x + q.d;
      for (const coupling& c : q.couplings) {
        const double y = u(c.column);
        value += c.coefficient * (c.quadratic ? y * y : y);
      }
      r(i) = value;
    }
  }
  double derivative(const Eigen::VectorXd& u, Eigen::Index i, Eigen::Index j) const {
    const row& q = rows[static_cast<std::size_t>(i)];
    double value = 0.0;
    if (i == j) {
      value += q.exponential ? q.a * q.alpha * std::exp(q.alpha * u(i)) : q.a * q.power * std::pow(u(i), q.power - 1);
      value += q.b;
    }
    for (const coupling& c : q.couplings) {
      if (c.column == j) value += c.coefficient * (c.quadratic ? 2.0 * u(j) : 1.0);
    }
    return value;
  }
  void jacobian_product(const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& jv) const {
    const Eigen::Index n = u.size();
    for (Eigen::Index i = 0; i < n; ++i) {
      double sum = 0.0;
      for (Eigen::Index j = 0; j < n; ++j) {
        if (v(j) != 0.0) sum += derivative(u, i, j) * v(j);
      }
      jv(i) = sum;
    }
  }
};

/// The three problem shapes nkit detects at compile time.
struct plain_problem {
  fuzz_system* system;
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) { system->evaluate(u, r); }
};
struct exact_problem : plain_problem {
  void jacobian_product(const Eigen::VectorXd& u, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
    system->jacobian_product(u, v, jv);
  }
};
struct admissible_problem : plain_problem {
  bool is_admissible(const Eigen::VectorXd& u) const { return (u.array() > system->admissible_above).all(); }
};

/// Jacobi preconditioner from the exact diagonal at the (solver's) state; its
/// setup can be told to fail or fall back, and its output may be Inf/NaN.
struct jacobi_preconditioner {
  fuzz_system* system = nullptr;
  int fail_at_setup = -1;
  int fallback_at_setup = -1;
  bool poison = false;
  int setups = 0;
  Eigen::VectorXd inverse_diagonal;
  nkit::setup_status setup(const nkit::preconditioner_context<>& context) {
    const int index = setups++;
    if (index == fail_at_setup) return nkit::setup_status::failed;
    inverse_diagonal.resize(context.state.size());
    for (Eigen::Index i = 0; i < context.state.size(); ++i) {
      inverse_diagonal(i) = 1.0 / system->derivative(context.state, i, i);  // may be Inf: part of the test
    }
    if (index == fallback_at_setup) {
      inverse_diagonal.setOnes();
      return nkit::setup_status::ready_with_fallback;
    }
    return nkit::setup_status::ready;
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    z = inverse_diagonal.cwiseProduct(r);
    if (poison) z(0) = nan_value;
  }
};

/// Draws values, and records which fields were deliberately made invalid.
class decoder {
 public:
  explicit decoder(FuzzedDataProvider& in) : m_in(in) {}
  FuzzedDataProvider& in() { return m_in; }
  const std::vector<std::string>& invalid_fields() const { return m_invalid; }

  /// One field in one byte out of 256 is made invalid (about 15 % of inputs have one).
  bool make_invalid(const std::string& field) {
    if (m_in.ConsumeIntegral<std::uint8_t>() != 255) return false;
    m_invalid.push_back(field);
    return true;
  }
  double uniform(double lower, double upper) { return lower + (upper - lower) * m_in.ConsumeProbability<double>(); }
  double log_uniform(double lower, double upper) {
    return std::pow(10.0, uniform(std::log10(lower), std::log10(upper)));
  }
  double real(const std::string& field, double value, std::initializer_list<double> invalid) {
    return make_invalid(field) ? pick(invalid) : value;
  }
  template <class Integer>
  Integer integer(const std::string& field, Integer value, std::initializer_list<Integer> invalid) {
    return make_invalid(field) ? pick(invalid) : value;
  }
  template <class Value>
  Value pick(std::initializer_list<Value> values) {
    const std::size_t index = m_in.ConsumeIntegralInRange<std::size_t>(0, values.size() - 1);
    return *(values.begin() + index);
  }

 private:
  FuzzedDataProvider& m_in;
  std::vector<std::string> m_invalid;
};

nkit::newton_settings decode_settings(decoder& d) {
  FuzzedDataProvider& in = d.in();
  nkit::newton_settings s;
  const std::string p = "newton_settings.";
  s.relative_tolerance = d.real(p + "relative_tolerance", d.log_uniform(1e-14, 1e-1), {-1.0, nan_value, inf_value});
  s.absolute_tolerance =
      d.real(p + "absolute_tolerance", in.ConsumeBool() ? 0.0 : d.log_uniform(1e-14, 1.0), {-1e-3, nan_value});
  s.negligible_step_size =
      d.real(p + "negligible_step_size", in.ConsumeBool() ? 0.0 : d.log_uniform(1e-14, 1e-2), {-1.0});
  s.newton_step_budget = d.integer(p + "newton_step_budget", in.ConsumeIntegralInRange(1, 40), {0, -7});
  s.residual_evaluation_budget =
      d.integer<std::int64_t>(p + "residual_evaluation_budget", in.ConsumeIntegralInRange(1, 400), {0, -1});
  s.linear_iteration_budget =
      d.integer<std::int64_t>(p + "linear_iteration_budget", in.ConsumeIntegralInRange(1, 400), {0});
  s.wall_time_budget_seconds =
      d.real(p + "wall_time_budget_seconds", in.ConsumeIntegral<std::uint8_t>() == 7 ? 1e-300 : inf_value,
             {0.0, -1.0, nan_value});
  s.stagnation_window = d.integer(p + "stagnation_window", in.ConsumeIntegralInRange(1, 12), {0});
  s.stagnation_factor = d.real(p + "stagnation_factor", d.uniform(0.5, 0.999), {0.0, 1.0, nan_value});
  s.globalization = static_cast<nkit::globalization_strategy>(in.ConsumeIntegralInRange(0, 3));
  if (d.make_invalid(p + "globalization")) s.globalization = static_cast<nkit::globalization_strategy>(5);

  s.forcing.formula = static_cast<nkit::forcing_term_formula>(in.ConsumeIntegralInRange(0, 2));
  if (d.make_invalid(p + "forcing.formula")) s.forcing.formula = static_cast<nkit::forcing_term_formula>(-2);
  s.forcing.constant_value = d.real(p + "forcing.constant_value", d.log_uniform(1e-10, 0.9), {0.0, 1.0});
  s.forcing.initial_value = d.real(p + "forcing.initial_value", d.uniform(0.01, 0.99), {1.5, nan_value});
  s.forcing.maximum_value = d.real(p + "forcing.maximum_value", d.uniform(0.01, 0.99), {0.0, inf_value});
  s.forcing.choice_2_gamma = d.real(p + "forcing.choice_2_gamma", d.uniform(0.0, 1.0), {-0.5, 1.5});
  s.forcing.choice_2_alpha = d.real(p + "forcing.choice_2_alpha", d.uniform(1.01, 2.0), {1.0, 3.0});
  s.forcing.avoid_oversolving = in.ConsumeBool();

  s.line_search.sufficient_decrease = d.real(p + "line_search.sufficient_decrease", d.log_uniform(1e-6, 0.5), {0.0});
  s.line_search.minimum_shrink_factor = d.uniform(0.01, 0.5);
  s.line_search.maximum_shrink_factor = d.uniform(s.line_search.minimum_shrink_factor, 0.9);
  s.line_search.minimum_shrink_factor =
      d.real(p + "line_search.minimum_shrink_factor", s.line_search.minimum_shrink_factor, {0.95, -0.1});
  s.line_search.maximum_rejected_trials =
      d.integer(p + "line_search.maximum_rejected_trials", in.ConsumeIntegralInRange(0, 30), {-1});

  s.trust_region.initial_radius =
      d.real(p + "trust_region.initial_radius", in.ConsumeBool() ? 0.0 : d.log_uniform(1e-3, 1e3), {-1.0, inf_value});
  s.trust_region.minimum_radius = d.real(p + "trust_region.minimum_radius", d.log_uniform(1e-14, 1e-6), {0.0});
  s.trust_region.maximum_radius =
      d.real(p + "trust_region.maximum_radius", in.ConsumeBool() ? inf_value : d.log_uniform(1e-2, 1e6), {nan_value});
  s.trust_region.acceptance_ratio = d.real(p + "trust_region.acceptance_ratio", d.log_uniform(1e-6, 0.2), {1.0});
  s.trust_region.shrink_below_ratio = d.uniform(0.1, 0.5);
  s.trust_region.grow_above_ratio = d.uniform(s.trust_region.shrink_below_ratio, 0.95);
  s.trust_region.grow_above_ratio =
      d.real(p + "trust_region.grow_above_ratio", s.trust_region.grow_above_ratio, {0.05});
  s.trust_region.shrink_factor = d.real(p + "trust_region.shrink_factor", d.uniform(0.05, 0.9), {1.0});
  s.trust_region.growth_factor = d.real(p + "trust_region.growth_factor", d.uniform(1.1, 8.0), {1.0, inf_value});

  s.pseudo_transient.minimum_step = d.real(p + "pseudo_transient.minimum_step", d.log_uniform(1e-14, 1e-6), {0.0});
  s.pseudo_transient.initial_step =
      d.real(p + "pseudo_transient.initial_step", d.log_uniform(1e-4, 1e4), {-1.0, nan_value});
  s.pseudo_transient.maximum_step =
      d.real(p + "pseudo_transient.maximum_step", in.ConsumeBool() ? inf_value : 1e12, {-5.0});
  s.pseudo_transient.maximum_step_growth =
      d.real(p + "pseudo_transient.maximum_step_growth", d.uniform(1.5, 100.0), {1.0});
  s.pseudo_transient.shrink_factor = d.real(p + "pseudo_transient.shrink_factor", d.uniform(0.05, 0.9), {0.0});
  s.pseudo_transient.maximum_residual_growth =
      d.real(p + "pseudo_transient.maximum_residual_growth", d.uniform(1.0, 1e3), {0.5});
  s.pseudo_transient.switch_ratio = d.real(p + "pseudo_transient.switch_ratio", d.uniform(0.0, 1.0), {2.0});

  s.bounds.boundary_fraction = d.real(p + "bounds.boundary_fraction", d.uniform(0.5, 0.999), {1.0, 0.0});

  s.linear.restart_length = d.integer(p + "linear.restart_length", in.ConsumeIntegralInRange(1, 12), {0});
  s.linear.maximum_iterations = d.integer(p + "linear.maximum_iterations", in.ConsumeIntegralInRange(1, 40), {-3});
  s.linear.variant = static_cast<nkit::gmres_variant>(in.ConsumeIntegralInRange(0, 1));
  s.linear.orthogonalization = static_cast<nkit::orthogonalization_method>(in.ConsumeIntegralInRange(0, 1));
  s.linear.reorthogonalization = static_cast<nkit::reorthogonalization_policy>(in.ConsumeIntegralInRange(0, 2));
  if (d.make_invalid(p + "linear.reorthogonalization")) {
    s.linear.reorthogonalization = static_cast<nkit::reorthogonalization_policy>(3);
  }
  s.jacobian.formula = static_cast<nkit::difference_formula>(in.ConsumeIntegralInRange(0, 1));
  s.jacobian.residual_relative_noise =
      d.real(p + "jacobian.residual_relative_noise", in.ConsumeBool() ? 0.0 : d.log_uniform(1e-16, 1e-6), {1.0});
  s.preconditioner_rebuild.rebuild_every_newton_steps =
      d.integer(p + "preconditioner_rebuild.rebuild_every_newton_steps", in.ConsumeIntegralInRange(1, 4), {0});
  s.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = in.ConsumeIntegralInRange(0, 10);
  s.preconditioner_rebuild.rebuild_after_linear_failure = in.ConsumeBool();
  return s;
}

fuzz_system decode_system(FuzzedDataProvider& in, int n) {
  fuzz_system system;
  system.rows.resize(static_cast<std::size_t>(n));
  for (row& q : system.rows) {
    q.exponential = in.ConsumeIntegralInRange(0, 3) == 0;
    q.power = in.ConsumeIntegralInRange(1, 3);
    q.a = in.ConsumeFloatingPointInRange(-4.0, 4.0);
    q.b = in.ConsumeFloatingPointInRange(-4.0, 4.0);
    q.alpha = in.ConsumeFloatingPointInRange(-3.0, 3.0);
    q.d = in.ConsumeFloatingPointInRange(-10.0, 10.0);
    const int count = in.ConsumeIntegralInRange(0, 3);
    for (int k = 0; k < count; ++k) {
      q.couplings.push_back(
          {in.ConsumeIntegralInRange(0, n - 1), in.ConsumeFloatingPointInRange(-2.0, 2.0), in.ConsumeBool()});
    }
  }
  return system;
}

/// Starts `problem` with `solver` and checks everything listed at the top.
template <class Solver, class Problem>
void solve_and_check(Solver& solver, Problem& problem, fuzz_system& system, const Eigen::VectorXd& start,
                     const nkit::newton_settings& settings, bool expect_invalid_start,
                     const Eigen::VectorXd& residual_scale) {
  const bool scaled = residual_scale.size() > 0;  // both scales are set together here
  Eigen::VectorXd u = start;
  Eigen::VectorXd last_accepted = start;
  nkit::solve_report report;
  bool faulted = false;
  auto monitor = [&](const nkit::newton_step_record& record) {
    FUZZ_CHECK(record.step <= settings.newton_step_budget, "Newton-step limit exceeded");
    FUZZ_CHECK(record.residual_evaluations <= settings.residual_evaluation_budget, "budget exceeded in history");
  };
  try {
    auto run = solver.begin(problem, u, monitor);
    FUZZ_CHECK(!expect_invalid_start, "an invalid initial guess was accepted");
    while (run.advance() == nkit::run_state::running) last_accepted = u;
    report = run.report();
  } catch (const std::invalid_argument& error) {
    FUZZ_CHECK(expect_invalid_start, std::string("unexpected std::invalid_argument: ") + error.what());
    FUZZ_CHECK(same_bits(u, start), "u changed by a rejected start");
    ++counts.rejected_start;
    return;
  } catch (const injected_fault& fault) {
    FUZZ_CHECK(fault.code == 42, "the user exception changed");
    faulted = true;
  }
  if (faulted) {
    ++counts.user_exceptions;
    FUZZ_CHECK(same_bits(u, last_accepted), "after a user exception u is not the last accepted iterate");
    return;
  }
  FUZZ_CHECK(report.reason.has_value(), "the solve ended without a stop reason");
  ++counts.outcomes[static_cast<int>(*report.reason) & 31];
  FUZZ_CHECK(report.newton_steps <= settings.newton_step_budget, "Newton-step limit exceeded");
  FUZZ_CHECK(report.residual_evaluations <= settings.residual_evaluation_budget, "evaluation budget exceeded");
  FUZZ_CHECK(report.residual_evaluations == system.calls, "evaluation count differs from the calls made");
  FUZZ_CHECK(report.linear_iterations <= settings.linear_iteration_budget, "linear-iteration budget exceeded");
  FUZZ_CHECK(system.calls_after_cancel == 0, "a residual evaluation started after cancellation");
  FUZZ_CHECK(u.allFinite(), "the returned u is not finite");
  if (system.calls == 0) {  // stopped before R(u0): nothing is known
    FUZZ_CHECK(report.reason == nkit::stop_reason::wall_time_budget_spent ||
                   report.reason == nkit::stop_reason::cancellation_flag_raised,
               std::string(nkit::name(report.reason)));
    FUZZ_CHECK(std::isnan(report.final_residual_norm), "a norm was reported without an evaluation");
    FUZZ_CHECK(same_up_to_scaling_rounding(u, start, scaled), "u changed without an evaluation");
    return;
  }
  Eigen::VectorXd r(u.size());
  system.values(u, r);
  if (residual_scale.size() > 0) r = r.cwiseQuotient(residual_scale);
  const double recomputed = r.norm();
  const std::string detail = std::string(nkit::name(report.reason)) + " reported " +
                             std::to_string(report.final_residual_norm) + " recomputed " + std::to_string(recomputed);
  if (report.reason == nkit::stop_reason::non_finite_initial_residual) {
    FUZZ_CHECK(!std::isfinite(report.initial_residual_norm) && report.newton_steps == 0, detail);
    FUZZ_CHECK(same_up_to_scaling_rounding(u, start, scaled), "u changed after a non-finite initial residual");
    return;
  }
  FUZZ_CHECK(std::isfinite(report.initial_residual_norm), detail);
  FUZZ_CHECK(recomputed == report.final_residual_norm, "final_residual_norm is not ‖R(u)‖: " + detail);
  if (report.converged()) {
    const double target =
        std::max(settings.absolute_tolerance, settings.relative_tolerance * report.initial_residual_norm);
    FUZZ_CHECK(recomputed <= target, "converged outside the tolerance: " + detail);
  } else {
    FUZZ_CHECK(report.final_residual_norm <= report.initial_residual_norm, "not the best iterate: " + detail);
    for (const auto& record : report.history) {
      FUZZ_CHECK(report.final_residual_norm <= record.residual_norm, "a better iterate was seen: " + detail);
    }
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  FuzzedDataProvider in(data, size);
  decoder d(in);
  const nkit::newton_settings settings = decode_settings(d);
  const int n = in.ConsumeIntegralInRange(1, 8);
  fuzz_system system = decode_system(in, n);
  system.budget = settings.residual_evaluation_budget;

  Eigen::VectorXd start(n);
  for (int i = 0; i < n; ++i) start(i) = in.ConsumeFloatingPointInRange(-5.0, 5.0);
  bool invalid_start = false;
  if (in.ConsumeIntegral<std::uint8_t>() == 255) {
    start(in.ConsumeIntegralInRange(0, n - 1)) = in.ConsumeBool() ? nan_value : -inf_value;
    invalid_start = true;
  }

  // Faults in user code.
  const std::uint8_t faults = in.ConsumeIntegral<std::uint8_t>();
  if (faults & 1u) system.nan_beyond = in.ConsumeFloatingPointInRange(-5.0, 5.0);
  if (faults & 2u) system.throw_at_call = in.ConsumeIntegralInRange(1, 60);
  std::atomic<bool> cancel{false};
  nkit::newton_settings used = settings;
  if (faults & 4u) {
    system.cancel = &cancel;
    system.cancel_at_call = in.ConsumeIntegralInRange(1, 60);
    used.cancellation_flag = &cancel;
  }

  using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::any_preconditioner<>>;
  std::unique_ptr<solver_type> solver;
  try {
    solver = std::make_unique<solver_type>(used);
    FUZZ_CHECK(d.invalid_fields().empty(), "invalid settings were accepted: " + d.invalid_fields().front());
  } catch (const std::invalid_argument& error) {
    const std::string message = error.what();
    FUZZ_CHECK(!d.invalid_fields().empty(), "valid settings rejected: " + message);
    bool named = false;
    for (const std::string& field : d.invalid_fields()) named = named || message.find(field) != std::string::npos;
    FUZZ_CHECK(message.rfind("nkit: ", 0) == 0 && named, "the message does not name the field: " + message);
    ++counts.rejected_settings;
    return 0;
  }

  // Preconditioner: none, or Jacobi with scripted setup faults.
  const std::uint8_t preconditioning = in.ConsumeIntegral<std::uint8_t>();
  if (preconditioning & 1u) {
    jacobi_preconditioner jacobi;
    jacobi.system = &system;
    if (preconditioning & 2u) jacobi.fail_at_setup = in.ConsumeIntegralInRange(0, 5);
    if (preconditioning & 4u) jacobi.fallback_at_setup = in.ConsumeIntegralInRange(0, 5);
    jacobi.poison = (preconditioning & 0xF0u) == 0xF0u;
    solver->preconditioner() = nkit::any_preconditioner<>(jacobi);
  }

  // Bounds and scaling (sometimes invalid: then set_* must reject them).
  const std::uint8_t extras = in.ConsumeIntegral<std::uint8_t>();
  if (extras & 1u) {
    Eigen::VectorXd lower(n), upper(n);
    for (int i = 0; i < n; ++i) {
      lower(i) = in.ConsumeBool() ? -inf_value : in.ConsumeFloatingPointInRange(-6.0, 6.0);
      upper(i) = in.ConsumeBool() ? inf_value : in.ConsumeFloatingPointInRange(-6.0, 6.0);
    }
    const bool nan_bound = in.ConsumeIntegral<std::uint8_t>() == 255;
    if (nan_bound) lower(0) = nan_value;
    const bool contradictory = !nan_bound && ((lower.array() > upper.array()).any());
    try {
      solver->set_bounds(lower, upper);
      FUZZ_CHECK(!nan_bound && !contradictory, "bad bounds were accepted");
    } catch (const std::invalid_argument&) {
      FUZZ_CHECK(nan_bound || contradictory, "valid bounds were rejected");
    }
    if (!nan_bound && !contradictory && !invalid_start) {
      invalid_start = ((start.array() < lower.array()) || (start.array() > upper.array())).any();
    }
  }
  Eigen::VectorXd residual_scale;
  if (extras & 2u) {
    Eigen::VectorXd variable_scale(n);
    residual_scale.resize(n);
    for (int i = 0; i < n; ++i) {
      variable_scale(i) = std::pow(10.0, in.ConsumeFloatingPointInRange(-3.0, 3.0));
      residual_scale(i) = std::pow(10.0, in.ConsumeFloatingPointInRange(-3.0, 3.0));
    }
    const bool bad_scale = in.ConsumeIntegral<std::uint8_t>() == 255;
    if (bad_scale) variable_scale(n - 1) = in.ConsumeBool() ? 0.0 : -1.0;
    try {
      solver->set_scaling(variable_scale, residual_scale);
      FUZZ_CHECK(!bad_scale, "a bad scale was accepted");
    } catch (const std::invalid_argument&) {
      FUZZ_CHECK(bad_scale, "a valid scale was rejected");
      residual_scale.resize(0);
    }
  }

  const int shape = in.ConsumeIntegralInRange(0, 2);
  if (shape == 0) {
    plain_problem problem{&system};
    solve_and_check(*solver, problem, system, start, used, invalid_start, residual_scale);
  } else if (shape == 1) {
    exact_problem problem{{&system}};
    solve_and_check(*solver, problem, system, start, used, invalid_start, residual_scale);
  } else {
    system.admissible_above = in.ConsumeFloatingPointInRange(-8.0, 0.0);
    const bool admissible_start = !invalid_start && (start.array() > system.admissible_above).all();
    admissible_problem problem{{&system}};
    solve_and_check(*solver, problem, system, start, used, invalid_start || !admissible_start, residual_scale);
  }
  return 0;
}
