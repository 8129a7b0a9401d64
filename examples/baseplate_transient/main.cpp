// Transient flagship: power cycling of the baseplate demo's power module
// (INVENTED data and our own scenario; see power_cycling.hpp, and note that a
// lifetime assessment needs the applicable standards and qualified
// engineers). Integrates C dT/dt = −R(T) + S(t) with nkit's adaptive implicit
// stepper (BDF2 or TR-BDF2; every stage a Newton–GMRES solve with a lagged
// sparse-LU preconditioner of the stage Jacobian), then reports the
// junction-temperature swing per cycle and chip and draws temperature and
// step size against time (gnuplot, when installed).
//
//   baseplate_power_cycling [--cells_x=160] [--cells_y=64] [--cycles=5] [--period=2]
//                           [--method=bdf] [--relative_tolerance=1e-4] [--output=power_cycling_output] [--help]
//   (--method=bdf: variable-step BDF2; --method=esdirk: TR-BDF2)
#include <algorithm>
#include <cstdio>
#include <exception>
#include <fstream>
#include <iostream>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/time/implicit_time_stepper.hpp>
#include <string>
#include <vector>

#include "baseplate_transient/power_cycling.hpp"
#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "problems/baselines/process_resources.hpp"
#include "problems/heat/baseplate.hpp"

namespace {

constexpr double kelvin_offset = 273.15;

int run(int argc, char** argv) {
  nkit_examples::command_line options(
      "baseplate_power_cycling", "Power cycling of the baseplate demo (invented data): junction-temperature swing");
  options.option("cells_x", "160", "cells across the 40 mm width");
  options.option("cells_y", "64", "cells through the 8 mm height");
  options.option("cycles", "5", "number of switching periods to simulate");
  options.option("period", "2", "switching period, s (chips A, C on in the first half, B in the second)");
  options.option("method", "bdf", "bdf (variable-step BDF2) or esdirk (TR-BDF2)");
  options.option("relative_tolerance", "1e-4", "relative tolerance of the local error (absolute: 1e-3 K)");
  options.option("output", "power_cycling_output", "folder for CSV files and pictures");
  if (!options.parse(argc, argv)) return 0;
  const std::string method_name = options.text("method");
  if (method_name != "bdf" && method_name != "esdirk") {
    throw std::invalid_argument("baseplate_power_cycling: --method must be bdf or esdirk (got " + method_name + ")");
  }

  nkit_problems::baseplate_conduction problem(options.integer("cells_x"), options.integer("cells_y"));
  nkit_examples::power_cycle cycle;
  cycle.period = options.number("period");
  const double end_time = options.integer("cycles") * cycle.period;
  nkit_examples::power_cycling_source source(problem, cycle);
  auto system = nkit::make_residual_form(
      problem, source, nkit::mass_matrix<Eigen::VectorXd>::diagonal(nkit_examples::heat_capacity_per_cell(problem)));

  nkit::time_stepper_settings settings;
  settings.method = method_name == "bdf" ? nkit::time_method::bdf : nkit::time_method::esdirk;
  settings.relative_tolerance = options.number("relative_tolerance");
  settings.absolute_tolerance = 1e-3;  // K
  settings.step_control.initial_step = 1e-4;
  // The power switches abruptly: cap the step at 1/20 period so no switching edge is stepped over.
  settings.step_control.maximum_step = cycle.period / 20.0;
  nkit::implicit_time_stepper<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner> stepper(settings);

  Eigen::VectorXd t = Eigen::VectorXd::Constant(problem.unknowns(), problem.design().coolant_temperature);
  const std::size_t chips = problem.design().chips.size();
  struct sample {
    double time, step;
    std::vector<double> junction;
  };
  std::vector<sample> samples;
  samples.push_back({0.0, 0.0, nkit_examples::junction_temperatures(problem, t)});
  const auto monitor = [&](const nkit::time_step_record& record) {
    if (record.accepted) {
      samples.push_back({stepper.time(), record.step_size, nkit_examples::junction_temperatures(problem, t)});
    }
  };
  std::printf("Power cycling (invented data): %d x %d cells, %zu chips, %g s period, %g s simulated, %s\n",
              problem.cells_x(), problem.cells_y(), chips, cycle.period, end_time, method_name.c_str());
  const double cpu_start = nkit_problems::process_cpu_seconds();
  const nkit::integration_report& report = stepper.integrate(system, t, 0.0, end_time, monitor);
  std::printf(
      "%s after %.2f s (CPU %.2f s): %lld steps (%lld rejected), %lld Newton steps, %lld GMRES iterations,\n"
      "%lld preconditioner setups (%.2f per step), step sizes %.2e ... %.2e s, %.0f work units\n",
      std::string(nkit::name(report.reason)).c_str(), report.wall_seconds,
      nkit_problems::process_cpu_seconds() - cpu_start, static_cast<long long>(report.accepted_steps),
      static_cast<long long>(report.rejected_steps()), static_cast<long long>(report.newton_steps),
      static_cast<long long>(report.linear_iterations), static_cast<long long>(report.preconditioner_setups),
      static_cast<double>(report.preconditioner_setups) / std::max<std::int64_t>(1, report.accepted_steps),
      report.smallest_accepted_step, report.largest_accepted_step, report.work_units());
  if (!report.reached_end()) return 1;

  // Swing per cycle and chip: max − min of the junction temperature within each period.
  std::printf("\nJunction-temperature swing per cycle (K) and peak (deg C), invented data:\n  %-6s", "cycle");
  for (const auto& chip : problem.design().chips) std::printf(" | %22s", chip.name);
  std::printf("\n");
  const int cycles = options.integer("cycles");
  std::vector<double> last_swing(chips, 0.0);
  for (int k = 0; k < cycles; ++k) {
    std::printf("  %-6d", k + 1);
    for (std::size_t c = 0; c < chips; ++c) {
      double low = 1e300, high = -1e300;
      for (const sample& s : samples) {
        if (s.time < k * cycle.period || s.time > (k + 1) * cycle.period) continue;
        low = std::min(low, s.junction[c]);
        high = std::max(high, s.junction[c]);
      }
      last_swing[c] = high - low;
      std::printf(" | %9.2f K %7.2f C", high - low, high - kelvin_offset);
    }
    std::printf("\n");
  }

  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  {
    std::ofstream out(folder / "power_cycling.csv");
    out << "time_s,step_s";
    for (std::size_t c = 0; c < chips; ++c) out << ",junction_" << char('A' + c) << "_C";
    out << "\n";
    for (const sample& s : samples) {
      out << s.time << ',' << s.step;
      for (double v : s.junction) out << ',' << v - kelvin_offset;
      out << "\n";
    }
  }
  std::string script =
      "set datafile separator ','\nset terminal pngcairo size 900,500\nset grid\n"
      "set output 'power_cycling_junction.png'\nset title 'Junction temperature per chip (invented data)'\n"
      "set xlabel 'time [s]'\nset ylabel 'junction temperature [deg C]'\nplot ";
  for (std::size_t c = 0; c < chips; ++c) {
    script += (c ? ", " : "") + std::string("'power_cycling.csv' using 1:") + std::to_string(3 + c) +
              " with lines title '" + problem.design().chips[c].name + "'";
  }
  script +=
      "\nset output 'power_cycling_step_size.png'\nset title 'Adaptive step size'\nset ylabel 'step [s]'\n"
      "set logscale y\nplot 'power_cycling.csv' using 1:2 every ::1 with linespoints pt 7 ps 0.4 title 'accepted "
      "step'\n";
  nkit_examples::run_gnuplot(folder, "power_cycling.gp", script, std::cout);
  std::printf("\nWrote %s (CSV, gnuplot script and pictures).\n", folder.string().c_str());
  std::printf(
      "A converged time integration is not a validated model; the swing is where a thermal-cycling\n"
      "assessment starts, and lifetime needs the applicable standards and qualified engineers.\n");
  return 0;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
