// Non-equilibrium gray radiation diffusion: a Marshak wave driven into a cold
// slab, two coupled fields (radiation energy E and material temperature T),
// solved fully coupled with nkit's implicit time stepper (BDF2 or TR-BDF2),
// every stage a Newton–GMRES solve preconditioned by a field split (block
// Gauss–Seidel or block diagonal by field, sparse LU per field, on the
// Jacobian nkit assembles by colored differences).
//
// DEMONSTRATION ONLY. The scenario is a dimensionless textbook-style test: the
// model follows the non-equilibrium diffusion test of the literature
// (problems/radiation/gray_radiation_diffusion.hpp gives the sources), but the
// data (z = 1, κ = 0.01, incoming flux 1, cold start 1e-5) are chosen for the
// demonstration and describe no real material. A converged solve is not a
// validated model of anything.
//
// Prints the front position (where T falls below --front_level) over time,
// step sizes and Newton/GMRES counts, the per-field residual norms of a
// closing check step, and writes CSV files and (with gnuplot) a PNG of E and T
// profiles at several times.
//
//   radiation_diffusion [--cells=200] [--end_time=1] [--method=bdf] [--relative_tolerance=1e-4]
//                       [--form=block_lower_triangular] [--flux_limiter] [--front_level=0.5]
//                       [--output=radiation_diffusion_output] [--help]
//
// End time 1: the wave then has crossed about half of the slab (see the
// printed front positions), so the profiles show the whole front and the
// right boundary still sees the cold state.
#include <algorithm>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nkit/fields/field_residual_norms.hpp>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/field_split.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/report/report_output.hpp>
#include <nkit/time/implicit_time_stepper.hpp>
#include <stdexcept>
#include <string>
#include <vector>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "problems/baselines/process_resources.hpp"
#include "problems/radiation/gray_radiation_diffusion.hpp"

namespace {

using nkit_problems::gray_radiation_diffusion_1d;

std::string number_text(double value) {
  char text[32];
  std::snprintf(text, sizeof text, "%g", value);
  return text;
}

nkit::field_split_preconditioner make_split(const nkit::field_layout& layout, nkit::field_split_form form) {
  nkit::field_split_settings settings;
  settings.form = form;
  return nkit::field_split_preconditioner(
      layout, settings,
      nkit::make_inner_preconditioners(nkit::sparse_direct_preconditioner{}, nkit::sparse_direct_preconditioner{}));
}

int run(int argc, char** argv) {
  nkit_examples::command_line options("radiation_diffusion",
                                      "Marshak wave, non-equilibrium gray radiation diffusion (demonstration data)");
  options.option("cells", "200", "finite-volume cells on [0, 1]");
  options.option("end_time", "1", "dimensionless end time");
  options.option("method", "bdf", "bdf (variable-step BDF2) or esdirk (TR-BDF2)");
  options.option("relative_tolerance", "1e-4", "relative tolerance of the local error (absolute: 1e-3 of it)");
  options.option("form", "block_lower_triangular", "field split: block_lower_triangular or block_diagonal");
  options.flag("flux_limiter", "limit the radiation flux: D_r = 1/(3 sigma_a + |dE/dx|/E)");
  options.option("front_level", "0.5", "the front is where the material temperature falls below this");
  options.option("output", "radiation_diffusion_output", "folder for CSV files and pictures");
  if (!options.parse(argc, argv)) return 0;
  const std::string method_name = options.text("method"), form_name = options.text("form");
  if (method_name != "bdf" && method_name != "esdirk") {
    throw std::invalid_argument("radiation_diffusion: --method must be bdf or esdirk (got " + method_name + ")");
  }
  if (form_name != "block_lower_triangular" && form_name != "block_diagonal") {
    throw std::invalid_argument("radiation_diffusion: --form must be block_lower_triangular or block_diagonal (got " +
                                form_name + ")");
  }
  const double end_time = options.number("end_time");
  if (!(end_time > 0.0)) throw std::invalid_argument("radiation_diffusion: --end_time must be > 0");
  const double front_level = options.number("front_level");
  const nkit::field_split_form form = form_name == "block_diagonal" ? nkit::field_split_form::block_diagonal
                                                                    : nkit::field_split_form::block_lower_triangular;

  nkit_problems::gray_radiation_parameters parameters;
  parameters.flux_limiter = options.is_set("flux_limiter");
  gray_radiation_diffusion_1d problem(options.integer("cells"), parameters);

  nkit::time_stepper_settings settings;
  settings.method = method_name == "bdf" ? nkit::time_method::bdf : nkit::time_method::esdirk;
  settings.relative_tolerance = options.number("relative_tolerance");
  settings.absolute_tolerance = 1e-3 * settings.relative_tolerance;
  settings.step_control.initial_step = 1e-6;  // the boundary drive starts abruptly
  settings.stage.newton.linear.restart_length = 60;
  nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::field_split_preconditioner> stepper(
      settings, {}, make_split(problem.field_layout(), form));

  std::printf(
      "Marshak wave, non-equilibrium gray radiation diffusion: %d cells, t in [0, %g], %s, field split %s%s\n"
      "DEMONSTRATION ONLY: dimensionless data chosen for the demo, not a validated model of any material.\n",
      problem.cells(), end_time, method_name == "bdf" ? "BDF2" : "TR-BDF2", form_name.c_str(),
      parameters.flux_limiter ? ", flux-limited" : "");

  Eigen::VectorXd u = problem.initial_state();
  const double initial_energy = problem.total_energy(u);
  struct step_sample {
    double time, step, front, energy;
    int newton_steps;
    long long gmres_iterations;
  };
  std::vector<step_sample> steps;
  // Profiles at these times: the integration runs interval by interval up to each.
  const std::vector<double> profile_times{end_time / 8, end_time / 4, end_time / 2, end_time};
  std::vector<Eigen::VectorXd> profiles;
  long long accepted = 0, rejected = 0, newton_steps = 0, gmres_iterations = 0, setups = 0;
  double smallest_step = 1e300, largest_step = 0.0, last_step = 0.0, wall = 0.0;
  const double cpu_start = nkit_problems::process_cpu_seconds();
  double t = 0.0;
  std::printf("\n  %10s | %14s | %12s | %12s\n", "time", "front position", "steps so far", "last step");
  for (const double next : profile_times) {
    const nkit::integration_report& report =
        stepper.integrate(problem, u, t, next, [&](const nkit::time_step_record& record) {
          if (!record.accepted) return;
          steps.push_back({stepper.time(), record.step_size, problem.front_position(u, front_level),
                           problem.total_energy(u), record.newton_steps,
                           static_cast<long long>(record.linear_iterations)});
        });
    accepted += report.accepted_steps;
    rejected += report.rejected_steps();
    newton_steps += report.newton_steps;
    gmres_iterations += report.linear_iterations;
    setups += report.preconditioner_setups;
    smallest_step = std::min(smallest_step, report.smallest_accepted_step);
    largest_step = std::max(largest_step, report.largest_accepted_step);
    wall += report.wall_seconds;
    if (!report.reached_end()) {
      std::printf("stopped at t = %g: %s\n", report.final_time, std::string(report.message()).c_str());
      return 1;
    }
    last_step = steps.back().step;
    t = next;
    profiles.push_back(u);
    std::printf("  %10.4g | %14.4f | %12lld | %12.3e\n", t, problem.front_position(u, front_level), accepted,
                last_step);
  }
  std::printf(
      "\n%lld steps (%lld rejected), %lld Newton steps, %lld GMRES iterations (%.1f per Newton step),\n"
      "%lld preconditioner setups, step sizes %.2e ... %.2e, %.2f s wall, %.2f s CPU\n",
      accepted, rejected, newton_steps, gmres_iterations,
      static_cast<double>(gmres_iterations) / std::max(1LL, newton_steps), setups, smallest_step, largest_step, wall,
      nkit_problems::process_cpu_seconds() - cpu_start);
  std::printf("total energy h*sum(E + T): %.6f at t = 0, %.6f at t = %g\n", initial_energy, problem.total_energy(u),
              end_time);

  // Per-field residual norms: one closing check step (backward Euler, the last
  // step size) from the final state, solved by Newton-GMRES with the same split;
  // its report carries the residual norm of each field.
  {
    const nkit_problems::gray_radiation_backward_euler_step check(problem, u, last_step);
    nkit::newton_settings newton;
    newton.relative_tolerance = 1e-10;
    newton.linear.restart_length = 60;
    nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::field_split_preconditioner> solver(
        newton, {}, make_split(problem.field_layout(), form));
    Eigen::VectorXd v = u;
    const nkit::solve_report report = solver.solve(check, v);
    std::printf("\nClosing check step (backward Euler, dt = %.3e from t = %g): %s, %d Newton steps, %lld GMRES\n",
                last_step, end_time, std::string(report.message()).c_str(), report.newton_steps,
                static_cast<long long>(report.linear_iterations));
    std::printf("residual norm per field (initial -> final):\n");
    for (const nkit::field_residual_record& field : report.field_residuals) {
      std::printf("  %-22s %.3e -> %.3e\n", field.name.c_str(), field.initial_residual_norm, field.final_residual_norm);
    }
    if (!report.converged()) return 1;
  }

  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  {
    std::ofstream out(folder / "radiation_steps.csv");
    out << "time,step_size,front_position,total_energy,newton_steps,linear_iterations\n";
    for (const step_sample& s : steps) {
      out << s.time << ',' << s.step << ',' << s.front << ',' << s.energy << ',' << s.newton_steps << ','
          << s.gmres_iterations << '\n';
    }
  }
  {
    std::ofstream out(folder / "radiation_profiles.csv");
    out << "x";
    for (const double time : profile_times) out << ",radiation_energy_t" << time << ",material_temperature_t" << time;
    out << '\n';
    for (int i = 0; i < problem.cells(); ++i) {
      out << problem.cell_centre(i);
      for (const Eigen::VectorXd& p : profiles) {
        out << ',' << gray_radiation_diffusion_1d::energy(p, i) << ','
            << gray_radiation_diffusion_1d::temperature(p, i);
      }
      out << '\n';
    }
  }
  std::string script =
      "set datafile separator ','\nset terminal pngcairo size 1100,450\nset output 'radiation_profiles.png'\n"
      "set multiplot layout 1,2 title 'Marshak wave (demonstration data)'\nset grid\nset xlabel 'x'\n"
      "set key top right\nset title 'radiation energy E'\nplot ";
  for (std::size_t k = 0; k < profile_times.size(); ++k) {
    script += (k ? ", " : "") + std::string("'radiation_profiles.csv' using 1:") + std::to_string(2 + 2 * k) +
              " every ::1 with lines lw 2 title 't = " + number_text(profile_times[k]) + "'";
  }
  script += "\nset title 'material temperature T'\nplot ";
  for (std::size_t k = 0; k < profile_times.size(); ++k) {
    script += (k ? ", " : "") + std::string("'radiation_profiles.csv' using 1:") + std::to_string(3 + 2 * k) +
              " every ::1 with lines lw 2 title 't = " + number_text(profile_times[k]) + "'";
  }
  script += "\nunset multiplot\n";
  nkit_examples::run_gnuplot(folder, "radiation_profiles.gp", script, std::cout);
  std::printf("\nWrote %s (radiation_steps.csv, radiation_profiles.csv, gnuplot script and picture).\n",
              folder.string().c_str());
  std::printf("Demonstration data: a converged solve of these equations is not a validated model.\n");
  return 0;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
