// Non-equilibrium gray radiation diffusion in 2-D: a radiatively heated
// layered target. Low-Z material (z = 1) with a high-Z layer (z = 5) in the
// way of a Marshak wave driven in through the left side; two coupled fields
// (radiation energy E, material temperature T) solved fully coupled with
// nkit's implicit time stepper (BDF2 or TR-BDF2), every stage a Newton–GMRES
// solve preconditioned by a field split (forward block Gauss–Seidel or block
// diagonal by field, sparse LU per field, on the Jacobian nkit assembles by
// colored differences). Problem: problems/radiation/gray_radiation_diffusion_2d.hpp.
//
// DEMONSTRATION ONLY. The target, its geometry and its material data are
// invented for this demonstration (dimensionless; the model follows the
// non-equilibrium diffusion test of the literature, see the problem header)
// and describe no real target or material. A converged solve is not a
// validated model of anything.
//
// Prints the front position along a row through the layer and a row above it
// and the heated area over time, step and Newton/GMRES counts, the per-field
// residual norms of a closing check step; writes CSV files and (with gnuplot)
// PNG pictures of E and T at four times, of the fronts, and of the residual
// norm per field.
//
//   radiation_layered_target [--cells=96] [--end_time=0.6] [--method=bdf] [--relative_tolerance=1e-4]
//                            [--form=block_lower_triangular] [--layer_atomic_number=5] [--flux_limiter]
//                            [--front_level=0.5] [--output=radiation_layered_target_output] [--help]
#include <algorithm>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nkit/newton/newton_krylov_solver.hpp>
#include <nkit/preconditioners/field_split.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/time/implicit_time_stepper.hpp>
#include <stdexcept>
#include <string>
#include <vector>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "problems/baselines/process_resources.hpp"
#include "problems/radiation/gray_radiation_diffusion_2d.hpp"

namespace {

using nkit_problems::gray_radiation_diffusion_2d;

std::string number_text(double value, const char* format = "%g") {
  char text[32];
  std::snprintf(text, sizeof text, format, value);
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
  nkit_examples::command_line options("radiation_layered_target",
                                      "2-D radiatively heated layered target, non-equilibrium gray radiation diffusion "
                                      "(invented demonstration data)");
  options.option("cells", "96", "finite-volume cells per side of the unit square");
  options.option("end_time", "0.6", "dimensionless end time");
  options.option("method", "bdf", "bdf (variable-step BDF2) or esdirk (TR-BDF2)");
  options.option("relative_tolerance", "1e-4", "relative tolerance of the local error (absolute: 1e-3 of it)");
  options.option("form", "block_lower_triangular", "field split: block_lower_triangular or block_diagonal");
  options.option("layer_atomic_number", "5", "z of the high-Z layer (the rest has z = 1)");
  options.flag("flux_limiter", "limit the radiation flux: D_r = 1/(3 sigma_a + |dE/dn|/E)");
  options.option("front_level", "0.5", "the front is where the material temperature falls below this");
  options.option("output", "radiation_layered_target_output", "folder for CSV files and pictures");
  if (!options.parse(argc, argv)) return 0;
  const std::string method_name = options.text("method"), form_name = options.text("form");
  if (method_name != "bdf" && method_name != "esdirk") {
    throw std::invalid_argument("radiation_layered_target: --method must be bdf or esdirk (got " + method_name + ")");
  }
  if (form_name != "block_lower_triangular" && form_name != "block_diagonal") {
    throw std::invalid_argument(
        "radiation_layered_target: --form must be block_lower_triangular or block_diagonal (got " + form_name + ")");
  }
  const double end_time = options.number("end_time");
  if (!(end_time > 0.0)) throw std::invalid_argument("radiation_layered_target: --end_time must be > 0");
  const double front_level = options.number("front_level");
  const nkit::field_split_form form = form_name == "block_diagonal" ? nkit::field_split_form::block_diagonal
                                                                    : nkit::field_split_form::block_lower_triangular;

  nkit_problems::layered_target_parameters parameters;
  parameters.material.flux_limiter = options.is_set("flux_limiter");
  parameters.layer_atomic_number = options.number("layer_atomic_number");
  const int cells = options.integer("cells");
  gray_radiation_diffusion_2d problem(cells, cells, parameters);
  // Rows where the fronts are followed: through the layer and above it.
  const int row_layer = std::min(cells - 1, static_cast<int>(0.3 * cells));
  const int row_above = std::min(cells - 1, static_cast<int>(0.85 * cells));

  nkit::time_stepper_settings settings;
  settings.method = method_name == "bdf" ? nkit::time_method::bdf : nkit::time_method::esdirk;
  settings.relative_tolerance = options.number("relative_tolerance");
  settings.absolute_tolerance = 1e-3 * settings.relative_tolerance;
  settings.step_control.initial_step = 1e-6;  // the boundary drive starts abruptly
  settings.stage.newton.linear.restart_length = 60;
  nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::field_split_preconditioner> stepper(
      settings, {}, make_split(problem.field_layout(), form));

  std::printf(
      "Layered target, 2-D non-equilibrium gray radiation diffusion: %d x %d cells, layer z = %g in [%g, %g] x [%g, "
      "%g], t in [0, %g], %s, field split %s%s\n"
      "DEMONSTRATION ONLY: invented target and data, not a validated model of any material.\n",
      cells, cells, parameters.layer_atomic_number, parameters.layer_left, parameters.layer_right,
      parameters.layer_bottom, parameters.layer_top, end_time, method_name == "bdf" ? "BDF2" : "TR-BDF2",
      form_name.c_str(), parameters.material.flux_limiter ? ", flux-limited" : "");

  Eigen::VectorXd u = problem.initial_state();
  const double initial_energy = problem.total_energy(u);
  struct step_sample {
    double time, step, front_layer, front_above, area;
    int newton_steps;
    long long gmres_iterations;
  };
  std::vector<step_sample> steps;
  const std::vector<double> snapshot_times{end_time / 8, end_time / 4, end_time / 2, end_time};
  std::vector<Eigen::VectorXd> snapshots;
  long long accepted = 0, rejected = 0, newton_steps = 0, gmres_iterations = 0, setups = 0;
  double last_step = 0.0, wall = 0.0;
  const double cpu_start = nkit_problems::process_cpu_seconds();
  double t = 0.0;
  std::printf("\n  %10s | %16s | %16s | %12s | %12s\n", "time", "front (layer row)", "front (row above)", "heated area",
              "steps so far");
  for (const double next : snapshot_times) {
    const nkit::integration_report& report =
        stepper.integrate(problem, u, t, next, [&](const nkit::time_step_record& record) {
          if (!record.accepted) return;
          steps.push_back({stepper.time(), record.step_size, problem.front_position(u, row_layer, front_level),
                           problem.front_position(u, row_above, front_level), problem.heated_area(u, front_level),
                           record.newton_steps, static_cast<long long>(record.linear_iterations)});
        });
    accepted += report.accepted_steps;
    rejected += report.rejected_steps();
    newton_steps += report.newton_steps;
    gmres_iterations += report.linear_iterations;
    setups += report.preconditioner_setups;
    wall += report.wall_seconds;
    if (!report.reached_end()) {
      std::printf("stopped at t = %g: %s\n", report.final_time, std::string(report.message()).c_str());
      return 1;
    }
    last_step = steps.back().step;
    t = next;
    snapshots.push_back(u);
    std::printf("  %10.4g | %16.4f | %16.4f | %12.4f | %12lld\n", t, problem.front_position(u, row_layer, front_level),
                problem.front_position(u, row_above, front_level), problem.heated_area(u, front_level), accepted);
  }
  std::printf("(front: where T falls below %g along the row y = %.3f through the layer and y = %.3f above it)\n",
              front_level, problem.cell_centre_y(row_layer), problem.cell_centre_y(row_above));
  std::printf(
      "\n%lld steps (%lld rejected), %lld Newton steps, %lld GMRES iterations (%.1f per Newton step),\n"
      "%lld preconditioner setups, %.2f s wall, %.2f s CPU\n",
      accepted, rejected, newton_steps, gmres_iterations,
      static_cast<double>(gmres_iterations) / std::max(1LL, newton_steps), setups, wall,
      nkit_problems::process_cpu_seconds() - cpu_start);
  std::printf("total energy hx*hy*sum(E + T): %.6f at t = 0, %.6f at t = %g\n", initial_energy, problem.total_energy(u),
              end_time);

  // Per-field residual norms: one closing check step (backward Euler, the last
  // step size) from the final state, Newton–GMRES with the same split.
  const auto folder = nkit_examples::make_output_folder(options.text("output"));
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
    std::ofstream out(folder / "radiation_field_residuals.csv");
    out << "newton_step";
    for (const nkit::field_residual_record& field : report.field_residuals) out << ",residual_norm_" << field.name;
    out << '\n';
    for (std::size_t k = 0; k <= report.field_residuals[0].history.size(); ++k) {
      out << k;
      for (const nkit::field_residual_record& field : report.field_residuals) {
        const double value = k == 0 ? field.initial_residual_norm : field.history[k - 1];
        out << ',' << value / std::max(field.initial_residual_norm, 1e-300);
      }
      out << '\n';
    }
    if (!report.converged()) return 1;
  }

  {
    std::ofstream out(folder / "radiation_steps.csv");
    out << "time,step_size,front_position_layer_row,front_position_above_row,heated_area,newton_steps,"
           "linear_iterations\n";
    for (const step_sample& s : steps) {
      out << s.time << ',' << s.step << ',' << s.front_layer << ',' << s.front_above << ',' << s.area << ','
          << s.newton_steps << ',' << s.gmres_iterations << '\n';
    }
  }
  // Fields: one file per snapshot, "x y E T", a blank line after each row (gnuplot's grid format).
  for (std::size_t k = 0; k < snapshots.size(); ++k) {
    std::ofstream out(folder / ("radiation_fields_" + std::to_string(k) + ".dat"));
    out << "# x y radiation_energy material_temperature at t = " << snapshot_times[k] << '\n';
    for (int j = 0; j < cells; ++j) {
      for (int i = 0; i < cells; ++i) {
        const int c = problem.cell(i, j);
        out << problem.cell_centre_x(i) << ' ' << problem.cell_centre_y(j) << ' '
            << gray_radiation_diffusion_2d::energy(snapshots[k], c) << ' '
            << gray_radiation_diffusion_2d::temperature(snapshots[k], c) << '\n';
      }
      out << '\n';
    }
  }
  const std::string layer_box = "set object 1 rect from " + number_text(parameters.layer_left) + "," +
                                number_text(parameters.layer_bottom) + " to " + number_text(parameters.layer_right) +
                                "," + number_text(parameters.layer_top) +
                                " front fillstyle empty border lc rgb 'white' lw 1.5\n";
  std::string fields =
      "set terminal pngcairo size 1500,760\nset output 'radiation_fields.png'\n"
      "set multiplot layout 2,4 title 'Layered target (invented data): radiation energy E (top), material "
      "temperature T (bottom); white box: high-Z layer'\n"
      "set size ratio -1\nset xrange [0:1]\nset yrange [0:1]\nset palette rgbformulae 21,22,23\nunset key\n" +
      layer_box;
  for (int field = 0; field < 2; ++field) {
    for (std::size_t k = 0; k < snapshots.size(); ++k) {
      fields += "set title '" + std::string(field == 0 ? "E" : "T") + ", t = " + number_text(snapshot_times[k]) +
                "'\nplot 'radiation_fields_" + std::to_string(k) + ".dat' using 1:2:" + std::to_string(3 + field) +
                " with image\n";
    }
  }
  fields += "unset multiplot\n";
  nkit_examples::run_gnuplot(folder, "radiation_fields.gp", fields, std::cout);
  const std::string fronts =
      "set datafile separator ','\nset terminal pngcairo size 1100,450\nset output 'radiation_fronts.png'\n"
      "set multiplot layout 1,2 title 'Layered target (invented data): fronts (T = " +
      number_text(front_level) +
      ")'\nset grid\nset xlabel 'time'\nset key top left\nset title 'front position x'\n"
      "plot 'radiation_steps.csv' using 1:3 skip 1 with lines lw 2 title 'row y = " +
      number_text(problem.cell_centre_y(row_layer), "%.3f") +
      " (through the layer)', '' using 1:4 skip 1 with lines lw 2 title 'row y = " +
      number_text(problem.cell_centre_y(row_above), "%.3f") +
      " (above it)'\nset title 'heated area (T >= level)'\nplot 'radiation_steps.csv' using 1:5 skip 1 with lines "
      "lw 2 notitle\nunset multiplot\n";
  nkit_examples::run_gnuplot(folder, "radiation_fronts.gp", fronts, std::cout);
  nkit_examples::run_gnuplot(
      folder, "radiation_field_residuals.gp",
      nkit_examples::residual_history_script(
          "radiation_field_residuals.png",
          "Closing backward-Euler step: residual norm per field (Newton-GMRES, field split)", "Newton step",
          {{"radiation_field_residuals.csv", 1, 2, "radiation_energy"},
           {"radiation_field_residuals.csv", 1, 3, "material_temperature"}}),
      std::cout);
  std::printf(
      "\nWrote %s (radiation_steps.csv, radiation_fields_*.dat, radiation_field_residuals.csv, gnuplot scripts and "
      "pictures).\n",
      folder.string().c_str());
  std::printf("Demonstration data: a converged solve of these equations is not a validated model.\n");
  return 0;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
