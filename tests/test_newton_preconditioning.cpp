// Preconditioned Newton–GMRES on the nonlinear model problem
// (problems/model_problem/model_problem.hpp): every preconditioner reaches the exact-Newton solution,
// exact Newton takes one GMRES iteration per step, each trigger of the
// reuse policy, report counts, and failure handling.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <functional>
#include <limits>
#include <memory>
#include <nkit/jacobian/automatic_differentiation.hpp>
#include <nkit/jacobian/sparse_jacobian.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/block_jacobi.hpp>
#include <nkit/preconditioners/ilu_zero.hpp>
#include <nkit/preconditioners/incomplete_lut.hpp>
#include <nkit/preconditioners/inner_gmres.hpp>
#include <nkit/preconditioners/jacobi.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <string>
#include <vector>
#if NKIT_HAS_SUITESPARSE
#include <nkit/preconditioners/suitesparse_direct.hpp>
#endif

#include "problems/model_problem/model_problem.hpp"
#include "support/matchers.hpp"

using nkit_problems::heat_conduction_model_problem;

namespace {

constexpr int cells = 16;

/// The model problem with exact J·v (forward-mode AD) and its analytic
/// assembled Jacobian (model_problem.hpp): the ingredients of exact Newton.
struct exact_model {
  heat_conduction_model_problem problem{cells};
  nkit::residual_with_automatic_differentiation<heat_conduction_model_problem> differentiated{problem};
  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& r) const { problem(t, r); }
  void jacobian_product(const Eigen::VectorXd& t, const Eigen::VectorXd& v, Eigen::VectorXd& jv) {
    differentiated.jacobian_product(t, v, jv);
  }
  void assemble_jacobian(const Eigen::VectorXd& t, nkit::sparse_matrix& jacobian) const {
    problem.assemble_jacobian(t, jacobian);
  }
};

nkit::newton_settings tight_settings() {
  nkit::newton_settings settings;
  // ‖T − T*‖ <= ‖J⁻¹‖‖R‖ with ‖J⁻¹‖ ≈ 1/λ_min ≈ n²/(2π²) ≈ 13 at n = 16 and
  // ‖R(T0)‖ = q/n (model_problem.hpp): relative_tolerance 1e-11 keeps the
  // solution error near 1e-11·(10/16)·13/‖T*‖ ≈ 2e-11 relative, well inside
  // the 1e-8 comparison below.
  settings.relative_tolerance = 1e-11;
  settings.linear.restart_length = 40;
  settings.linear.maximum_iterations = 2000;
  return settings;
}

/// Exact Newton with Eigen's SparseLU as the preconditioner, from T0 = 0.
struct exact_newton_run {
  Eigen::VectorXd temperature = Eigen::VectorXd::Zero(cells * cells);
  nkit::solve_report report;
  std::int64_t symbolic_analyses = 0;
  exact_newton_run() {
    exact_model model;
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> solver(
        tight_settings());
    report = solver.solve(model, temperature);
    symbolic_analyses = solver.preconditioner().symbolic_analyses();
  }
};

const Eigen::VectorXd& exact_newton_solution() {
  static const Eigen::VectorXd solution = [] {
    const exact_newton_run run;
    REQUIRE(run.report.converged());
    return run.temperature;
  }();
  return solution;
}

double relative_difference(const Eigen::VectorXd& a, const Eigen::VectorXd& b) { return (a - b).norm() / b.norm(); }

}  // namespace

TEST_CASE("exact Newton: the direct preconditioner makes GMRES converge in one iteration", "[newton][exact]") {
  const exact_newton_run run;
  const nkit::solve_report& report = run.report;
  REQUIRE(report.converged());
  // M = J and exact J·v: A M⁻¹ = I, so the first Krylov vector solves the
  // system (Saad & Schultz 1986: GMRES terminates once the Krylov space holds
  // the solution).
  for (const nkit::newton_step_record& record : report.history) CHECK(record.linear_iterations == 1);
  CHECK(report.preconditioner_setups == report.newton_steps);
  CHECK(report.jacobian_assemblies == report.preconditioner_setups);
  // Sanity value (computed, model_problem.hpp): max T ≈ 0.6466 at fine grids;
  // on 16² the cell centres sit off the peak, so only the first two digits are checked.
  CHECK_THAT(run.temperature.maxCoeff(), Catch::Matchers::WithinAbs(0.64, 0.02));
  CHECK(run.symbolic_analyses == 1);  // analysed once, refactorised per step
}

TEST_CASE("every preconditioner reaches the exact-Newton solution", "[newton][preconditioner]") {
  std::vector<std::string> names{"none",      "jacobi",         "block_jacobi",  "ilu_zero",
                                 "milu_zero", "incomplete_lut", "sparse_direct", "inner_gmres"};
#if NKIT_HAS_SUITESPARSE
  names.insert(names.end(), {"umfpack", "klu"});
#endif
  const std::string choice = GENERATE_COPY(from_range(names));
  nkit::any_preconditioner<> chosen;
  if (choice == "jacobi") chosen = nkit::jacobi_preconditioner{};
  if (choice == "block_jacobi") chosen = nkit::block_jacobi_preconditioner{1};
  if (choice == "ilu_zero") chosen = nkit::ilu_zero_preconditioner{};
  if (choice == "milu_zero") chosen = nkit::ilu_zero_preconditioner{nkit::ilu_zero_settings{1.0}};
  if (choice == "incomplete_lut") chosen = nkit::incomplete_lut_preconditioner{};
  if (choice == "sparse_direct") chosen = nkit::sparse_direct_preconditioner{};
  if (choice == "inner_gmres") chosen = nkit::inner_gmres_preconditioner<>{};
#if NKIT_HAS_SUITESPARSE
  if (choice == "umfpack") chosen = nkit::umfpack_direct_preconditioner{};
  if (choice == "klu") chosen = nkit::klu_direct_preconditioner{};
#endif
  // The plain model problem: finite-difference J·v, analytic assembled Jacobian.
  heat_conduction_model_problem problem(cells);
  Eigen::VectorXd t = Eigen::VectorXd::Zero(cells * cells);
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::any_preconditioner<>> solver(tight_settings(), {},
                                                                                                  std::move(chosen));
  const nkit::solve_report report = solver.solve(problem, t);
  INFO(choice << ": " << report.newton_steps << " Newton steps, " << report.linear_iterations << " GMRES iterations");
  REQUIRE(report.converged());
  CHECK(relative_difference(t, exact_newton_solution()) <= 1e-8);
  if (choice != "none") {
    CHECK(report.preconditioner_setups >= 1);
    CHECK(report.preconditioner_applications >= report.linear_iterations);
  }
}

TEST_CASE("a colored finite-difference Jacobian feeds ILU(0) through the template path", "[newton][preconditioner]") {
  auto problem =
      nkit::with_jacobian_pattern(heat_conduction_model_problem(cells), nkit::five_point_grid_pattern(cells, cells));
  Eigen::VectorXd t = Eigen::VectorXd::Zero(cells * cells);
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(tight_settings());
  const nkit::solve_report report = solver.solve(problem, t);
  REQUIRE(report.converged());
  CHECK(relative_difference(t, exact_newton_solution()) <= 1e-8);
  CHECK(report.residual_evaluations ==
        report.calls.residual + report.jacobian_vector_products + 5 * report.jacobian_assemblies);
  CHECK(solver.preconditioner().symbolic_analyses() == 1);
}

namespace {
/// Point Jacobi that counts its setups and applications, to check the
/// driver's reuse policy and report against an independent count.
struct counting_jacobi {
  nkit::jacobi_preconditioner jacobi;
  int* setups;
  long* applications;
  std::vector<int>* setup_steps;
  nkit::setup_status setup(const nkit::preconditioner_context<>& context) {
    ++*setups;
    setup_steps->push_back(context.newton_step);
    return jacobi.build(context.assembled_jacobian());
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) {
    ++*applications;
    jacobi.apply(r, z);
  }
};

struct reuse_run {
  nkit::solve_report report;
  int setups = 0;
  long applications = 0;
  std::vector<int> setup_steps;
};

reuse_run run_with_policy(const nkit::newton_settings& settings) {
  reuse_run run;
  heat_conduction_model_problem problem(cells);
  Eigen::VectorXd t = Eigen::VectorXd::Zero(cells * cells);
  counting_jacobi preconditioner{{}, &run.setups, &run.applications, &run.setup_steps};
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, counting_jacobi> solver(settings, {}, preconditioner);
  run.report = solver.solve(problem, t);
  return run;
}

std::vector<bool> rebuilt_flags(const nkit::solve_report& report) {
  std::vector<bool> flags;
  for (const auto& record : report.history) flags.push_back(record.preconditioner_set_up);
  return flags;
}
}  // namespace

TEST_CASE("the reuse policy rebuilds on each of its triggers", "[newton][reuse]") {
  nkit::newton_settings settings = tight_settings();
  settings.relative_tolerance = 1e-8;
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 1000;
  settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 0;
  settings.preconditioner_rebuild.rebuild_after_linear_failure = false;

  SECTION("every k Newton steps") {
    settings.preconditioner_rebuild.rebuild_every_newton_steps = 3;
    const reuse_run run = run_with_policy(settings);
    REQUIRE(run.report.converged());
    REQUIRE(run.report.newton_steps >= 4);
    const auto flags = rebuilt_flags(run.report);
    for (std::size_t k = 0; k < flags.size(); ++k) CHECK(flags[k] == (k % 3 == 0));
  }
  SECTION("when the previous linear solve needed more than N iterations") {
    settings.preconditioner_rebuild.rebuild_when_linear_iterations_exceed = 4;
    const reuse_run run = run_with_policy(settings);
    REQUIRE(run.report.converged());
    const auto flags = rebuilt_flags(run.report);
    int triggered = 0;
    for (std::size_t k = 0; k < flags.size(); ++k) {
      const bool expected = k == 0 || run.report.history[k - 1].linear_iterations > 4;
      CHECK(flags[k] == expected);
      triggered += k > 0 && expected;
    }
    CHECK(triggered >= 1);
  }
  SECTION("after a linear solve that did not converge") {
    settings.linear.maximum_iterations = 3;  // GMRES cannot reach the forcing term
    settings.newton_step_budget = 4;
    settings.preconditioner_rebuild.rebuild_after_linear_failure = GENERATE(true, false);
    const reuse_run run = run_with_policy(settings);
    const auto flags = rebuilt_flags(run.report);
    REQUIRE(flags.size() >= 2);
    for (std::size_t k = 0; k < flags.size(); ++k) {
      const bool failed_before =
          k > 0 && run.report.history[k - 1].linear_status != nkit::linear_solve_status::converged;
      CHECK(flags[k] == (k == 0 || (settings.preconditioner_rebuild.rebuild_after_linear_failure && failed_before)));
    }
  }
  SECTION("on request") {
    heat_conduction_model_problem problem(cells);
    Eigen::VectorXd t = Eigen::VectorXd::Zero(cells * cells);
    int setups = 0;
    long applications = 0;
    std::vector<int> steps;
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, counting_jacobi> solver(
        settings, {}, counting_jacobi{{}, &setups, &applications, &steps});
    auto run = solver.begin(problem, t);
    int taken = 0;
    while (run.advance() == nkit::run_state::running) {
      if (++taken == 2) solver.request_preconditioner_rebuild();
    }
    REQUIRE(run.report().converged());
    REQUIRE(run.report().newton_steps >= 4);
    CHECK(steps == std::vector<int>{0, 2});
  }
}

TEST_CASE("the report counts preconditioner setups, applications and their time", "[newton][reuse][report]") {
  nkit::newton_settings settings = tight_settings();
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 2;
  const reuse_run run = run_with_policy(settings);
  REQUIRE(run.report.converged());
  const nkit::solve_report& report = run.report;
  CHECK(report.preconditioner_setups == run.setups);
  CHECK(report.calls.preconditioner_setup == run.setups);
  CHECK(report.preconditioner_applications == run.applications);
  CHECK(report.calls.preconditioner_apply == run.applications);
  CHECK(report.jacobian_assemblies == run.setups);  // one assembly per setup, none when reusing
  CHECK(report.time.preconditioner_setup > 0.0);
  CHECK(report.time.preconditioner_apply > 0.0);
  CHECK(report.time.jacobian_assembly > 0.0);
  CHECK(report.workspace_bytes > 0);
  CHECK(report.work_units() > 0.0);
}

namespace {
/// The model problem whose assembled Jacobian is damaged on purpose.
struct damaged_jacobian_model {
  heat_conduction_model_problem problem{cells};
  double first_diagonal;  // written into J(0,0)
  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& r) const { problem(t, r); }
  void assemble_jacobian(const Eigen::VectorXd& t, nkit::sparse_matrix& jacobian) const {
    problem.assemble_jacobian(t, jacobian);
    jacobian.coeffRef(0, 0) = first_diagonal;
  }
};
}  // namespace

TEST_CASE("a failed setup stops the solve, a fallback keeps it going", "[newton][failure]") {
  nkit::newton_settings settings = tight_settings();
  SECTION("non-finite Jacobian: preconditioner_failed, u unchanged") {
    damaged_jacobian_model model{heat_conduction_model_problem(cells), std::numeric_limits<double>::quiet_NaN()};
    Eigen::VectorXd t = Eigen::VectorXd::Zero(cells * cells);
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
    const nkit::solve_report report = solver.solve(model, t);
    CHECK(report.reason == nkit::stop_reason::preconditioner_setup_failed);
    CHECK(report.newton_steps == 0);
    CHECK(t.isZero(0.0));
  }
  SECTION("zero pivot: ILU(0) falls back, the solve converges to the same solution") {
    damaged_jacobian_model model{heat_conduction_model_problem(cells), 0.0};
    Eigen::VectorXd t = Eigen::VectorXd::Zero(cells * cells);
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> solver(settings);
    const nkit::solve_report report = solver.solve(model, t);
    REQUIRE(report.converged());
    CHECK(report.preconditioner_fallbacks == report.preconditioner_setups);
    CHECK(relative_difference(t, exact_newton_solution()) <= 1e-8);
  }
}

namespace {
/// A preconditioner that cannot move (it stands for one holding an Eigen
/// sparse solver, which has no move constructor): the inverse diagonal of
/// R'(u) for r_i = u_i³ − (i + 1), i.e. exact for that diagonal Jacobian.
struct pinned_inverse_diagonal {
  pinned_inverse_diagonal() = default;
  pinned_inverse_diagonal(const pinned_inverse_diagonal&) = delete;
  pinned_inverse_diagonal(pinned_inverse_diagonal&&) = delete;
  Eigen::VectorXd inverse_diagonal;
  int setups = 0;
  void setup(const nkit::preconditioner_context<>& context) {
    ++setups;
    inverse_diagonal = (3.0 * context.state.array().square()).inverse().matrix();
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { z = inverse_diagonal.cwiseProduct(r); }
};
struct cubic_diagonal {
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    for (Eigen::Index i = 0; i < u.size(); ++i) r(i) = u(i) * u(i) * u(i) - static_cast<double>(i + 1);
  }
};
}  // namespace

TEST_CASE("a preconditioner that cannot move is used through std::ref or std::unique_ptr", "[newton][preconditioner]") {
  // With the exact inverse of a diagonal Jacobian, GMRES needs one iteration
  // per Newton step (M⁻¹J = I up to the finite-difference error of J·v).
  const Eigen::VectorXd start = Eigen::VectorXd::Constant(6, 3.0);
  pinned_inverse_diagonal referenced;
  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, std::reference_wrapper<pinned_inverse_diagonal>>
      by_reference({}, {}, std::ref(referenced));
  Eigen::VectorXd u = start;
  const auto report = by_reference.solve(cubic_diagonal{}, u);
  REQUIRE(report.converged());
  CHECK(referenced.setups == report.newton_steps);  // the caller's object was set up
  CHECK(report.linear_iterations == report.newton_steps);

  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, std::unique_ptr<pinned_inverse_diagonal>> owning(
      {}, {}, std::make_unique<pinned_inverse_diagonal>());
  Eigen::VectorXd v = start;
  const auto owned_report = owning.solve(cubic_diagonal{}, v);
  REQUIRE(owned_report.converged());
  CHECK(owning.preconditioner()->setups == owned_report.newton_steps);
  CHECK(v == u);  // the same arithmetic either way
}

namespace {

/// ILU(0) that lets the driver free its assembled Jacobian once the factor
/// holds the values (preconditioner_context::release_assembled_jacobian).
/// With `assemble_again_after_release`, it then asks for the Jacobian once
/// more, which must be assembled afresh, equal to the first.
struct releasing_ilu_zero {
  nkit::ilu_zero_preconditioner ilu;
  bool assemble_again_after_release = false;
  int matrices_equal_after_release = 0;
  template <class Space>
  nkit::setup_status setup(const nkit::preconditioner_context<Space>& context) {
    const nkit::setup_status status = ilu.build(context.assembled_jacobian());
    const nkit::sparse_matrix first =
        assemble_again_after_release ? context.assembled_jacobian() : nkit::sparse_matrix();
    context.release_assembled_jacobian();
    if (assemble_again_after_release) {
      const nkit::sparse_matrix& again = context.assembled_jacobian();
      matrices_equal_after_release += again.rows() == first.rows() && again.nonZeros() == first.nonZeros() &&
                                      Eigen::MatrixXd(again) == Eigen::MatrixXd(first);
    }
    return status;
  }
  void apply(const Eigen::VectorXd& r, Eigen::VectorXd& z) const { ilu.apply(r, z); }
};

}  // namespace

TEST_CASE("a preconditioner may let the driver free the assembled Jacobian after copying it", "[newton][memory]") {
  nkit::newton_settings settings = tight_settings();
  settings.relative_tolerance = 1e-10;
  settings.preconditioner_rebuild.rebuild_every_newton_steps = 2;  // lagged: steps without a setup in between
  const Eigen::VectorXd start = Eigen::VectorXd::Zero(cells * cells);

  nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::ilu_zero_preconditioner> keeping(settings);
  Eigen::VectorXd kept = start;
  exact_model model;
  const nkit::solve_report kept_report = keeping.solve(model, kept);
  REQUIRE(kept_report.converged());
  REQUIRE(kept_report.newton_steps >= 3);  // at least two setups, one after a release
  REQUIRE(keeping.assembled_jacobian_bytes() > 0);

  SECTION("the solve is the same arithmetic, and the matrix's storage is freed") {
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, releasing_ilu_zero> releasing(settings);
    Eigen::VectorXd released = start;
    const nkit::solve_report report = releasing.solve(model, released);
    REQUIRE(report.converged());
    // The Jacobian is assembled afresh at every setup into new storage: the
    // same values, so the same factor, directions and iterates, bit for bit.
    CHECK(released == kept);
    CHECK(report.newton_steps == kept_report.newton_steps);
    CHECK(report.linear_iterations == kept_report.linear_iterations);
    CHECK(report.preconditioner_setups == kept_report.preconditioner_setups);
    CHECK(report.jacobian_assemblies == report.preconditioner_setups);
    // Freed after the last setup: what is left (the unused coloring
    // workspace's few bytes) is fewer bytes than the matrix has entries, and
    // the saving is at least the matrix's values, indices and row offsets.
    nkit::sparse_matrix reference;
    model.assemble_jacobian(released, reference);
    const auto matrix_bytes = static_cast<std::size_t>(reference.nonZeros()) * (sizeof(double) + sizeof(int)) +
                              static_cast<std::size_t>(reference.rows() + 1) * sizeof(int);
    CHECK(releasing.assembled_jacobian_bytes() < static_cast<std::size_t>(reference.nonZeros()));
    CHECK(keeping.assembled_jacobian_bytes() - releasing.assembled_jacobian_bytes() >= matrix_bytes);

    // The converged linearisation assembles the Jacobian at u* again: Jᵀw
    // against the model's own matrix there (both exact; the same arithmetic
    // row by row, so equal to rounding of the transposed product's sums).
    const Eigen::VectorXd w = Eigen::VectorXd::LinSpaced(cells * cells, -1.0, 2.0);
    Eigen::VectorXd transposed;
    releasing.linearized_transpose_product(model, w, transposed);
    const Eigen::VectorXd expected = reference.transpose() * w;
    const double bound = 8 * std::numeric_limits<double>::epsilon() *
                         (Eigen::MatrixXd(reference).cwiseAbs().transpose() * w.cwiseAbs()).maxCoeff();
    CHECK((transposed - expected).lpNorm<Eigen::Infinity>() <= bound);
    CHECK(releasing.assembled_jacobian_bytes() >= matrix_bytes);
  }

  SECTION("after a release, asking again assembles the same matrix afresh") {
    releasing_ilu_zero asking_twice;
    asking_twice.assemble_again_after_release = true;
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, releasing_ilu_zero> releasing(settings, {},
                                                                                               asking_twice);
    Eigen::VectorXd released = start;
    const nkit::solve_report report = releasing.solve(model, released);
    REQUIRE(report.converged());
    CHECK(released == kept);
    CHECK(releasing.preconditioner().matrices_equal_after_release == report.preconditioner_setups);
    CHECK(report.jacobian_assemblies == 2 * report.preconditioner_setups);
  }
}
