// Design sensitivities of the baseplate demo (INVENTED data, see
// problems/heat/baseplate.hpp and baseplate_design_study.hpp): the peak
// junction temperature of each chip (a Kreisselmeier–Steinhauser soft
// maximum over the chip's cells) with respect to 17 parameters — the
// conductivity of every material, the thickness of every layer, the
// cold plate's heat-transfer coefficient and the chip powers — by one
// adjoint solve per chip, checked against central finite differences of
// whole nonlinear solves. Then a short gradient-based design step: the
// cheapest change of two parameters (an invented quadratic cost) that brings
// the hottest chip under a temperature limit by the linearised
// sensitivities, verified by a nonlinear solve.
//
//   baseplate_sensitivity [--cells_x=320] [--cells_y=96] [--sharpness=2] [--relative_step=1e-3]
//                         [--check_tolerance=1e-5] [--peak_limit_celsius=95] [--design_parameters=...]
//                         [--design_margin=0.1] [--cost_weights=1,2] [--output=baseplate_sensitivity_output] [--help]
//
// Exit status 1 when an adjoint sensitivity and its finite difference differ by more than
// --check_tolerance times the largest sensitivity (the ctest on a small grid relies on it).
#include <algorithm>
#include <array>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nkit/nkit.hpp>
#include <nkit/preconditioners/sparse_direct.hpp>
#include <nkit/sensitivity/adjoint_sensitivity.hpp>
#include <numeric>
#include <sstream>
#include <string>
#include <vector>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "problems/heat/baseplate_design_study.hpp"

namespace {

using nkit_problems::baseplate_design_study;
using nkit_problems::chip_peak_temperature;
constexpr double kelvin_offset = 273.15;
constexpr int chip_count = 3;
const char* const chip_names[chip_count] = {"chip A", "chip B", "chip C"};

using problem_type = nkit::parameter_residual_with_automatic_differentiation<baseplate_design_study>;
using solver_type = nkit::newton_krylov_solver<nkit::eigen_vector_space<double>, nkit::sparse_direct_preconditioner>;

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

/// Solves R(T, p) = 0 from `t` (initial guess in, solution out); throws when it does not converge.
nkit::solve_report solve_at(solver_type& solver, problem_type& problem, const Eigen::VectorXd& p, Eigen::VectorXd& t) {
  auto fixed = nkit::at_parameters(problem, p);
  const nkit::solve_report report = solver.solve(fixed, t);
  if (!report.converged()) {
    throw std::runtime_error(std::string("baseplate_sensitivity: the nonlinear solve stopped with ") +
                             std::string(nkit::name(report.reason)));
  }
  return report;
}

std::array<double, chip_count> peaks(const std::vector<chip_peak_temperature>& outputs, const Eigen::VectorXd& t,
                                     const Eigen::VectorXd& p) {
  std::array<double, chip_count> values{};
  for (int c = 0; c < chip_count; ++c) values[static_cast<std::size_t>(c)] = outputs[static_cast<std::size_t>(c)](t, p);
  return values;
}

std::vector<std::string> split(const std::string& text) {
  std::vector<std::string> words;
  std::stringstream stream(text);
  std::string word;
  while (std::getline(stream, word, ',')) words.push_back(word);
  return words;
}

int parameter_by_key(const std::string& key) {
  const auto& table = baseplate_design_study::parameters();
  for (std::size_t j = 0; j < table.size(); ++j) {
    if (key == table[j].key) return static_cast<int>(j);
  }
  throw std::invalid_argument("baseplate_sensitivity: --design_parameters: unknown parameter '" + key +
                              "' (see --help for the names)");
}

int run(int argc, char** argv) {
  std::string keys;
  for (const auto& parameter : baseplate_design_study::parameters())
    keys += std::string(keys.empty() ? "" : ", ") + parameter.key;
  nkit_examples::command_line options(
      "baseplate_sensitivity",
      "peak chip temperatures of the baseplate (invented data): adjoint sensitivities to 17 design parameters, "
      "checked by finite differences, and a two-parameter design step");
  options.option("cells_x", "320", "cell columns across the 40 mm width");
  options.option("cells_y", "96", "about this many cell rows through the 8 mm height (at least 2 per layer)");
  options.option("sharpness", "2", "rho of the soft maximum over a chip's cells, 1/K");
  options.option("relative_tolerance", "1e-11", "nonlinear solves stop when ||R||_2 <= this * ||R(T0)||_2");
  options.option("relative_step", "1e-3", "finite differences: step h_j = this * |p_j|");
  options.option("check_tolerance", "1e-5",
                 "exit status 1 when |adjoint - differences| exceeds this times the largest sensitivity");
  options.option("peak_limit_celsius", "95", "the design step brings the hottest chip's peak under this");
  options.option("design_margin", "0.1",
                 "the linearised step aims this many kelvin under the limit (the response is not linear)");
  options.option("design_parameters", "ceramic_conductivity,heat_transfer_coefficient",
                 "the two parameters the design step changes, from: " + keys);
  options.option("cost_weights", "1,2",
                 "invented cost of the design step: sum of weight * (relative change)^2, one weight per parameter");
  options.option("output", "baseplate_sensitivity_output", "folder for the CSV and PNG files");
  if (!options.parse(argc, argv)) return 0;

  baseplate_design_study study(options.integer("cells_x"), options.integer("cells_y"));
  const double sharpness = options.number("sharpness"), relative_step = options.number("relative_step");
  const double check_tolerance = options.number("check_tolerance");
  if (!(relative_step > 0.0 && relative_step < 0.1)) {
    throw std::invalid_argument("baseplate_sensitivity: --relative_step must be in (0, 0.1)");
  }
  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  const auto& parameters = baseplate_design_study::parameters();
  const Eigen::Index m = study.parameter_count();
  std::vector<chip_peak_temperature> outputs;
  for (int c = 0; c < chip_count; ++c) outputs.emplace_back(study, static_cast<std::size_t>(c), sharpness);
  problem_type problem(study);
  const baseplate_design_study& grid = problem.residual();
  std::printf(
      "Baseplate design sensitivities: peak chip temperatures against 17 parameters.\n"
      "NOTE: the geometry, materials, k(T) laws, chip powers and cooling are INVENTED for this demo.\n"
      "Grid %d x %d = %lld cells, rows aligned with the layers; peak = soft maximum over a chip's cells, "
      "rho = %g per K.\noptions: %s\n\n",
      grid.cells_x(), grid.cells_y(), static_cast<long long>(grid.unknowns()), sharpness, options.summary().c_str());

  nkit::newton_settings settings;
  settings.relative_tolerance = options.number("relative_tolerance");
  settings.linear.restart_length = 30;
  solver_type solver(settings);
  const Eigen::VectorXd nominal = grid.nominal_parameters();
  Eigen::VectorXd t = Eigen::VectorXd::Constant(grid.unknowns(), grid.design().coolant_temperature);
  const nkit::solve_report base = solve_at(solver, problem, nominal, t);
  const double removed = grid.heat_removed(t, nominal);
  const double power = nominal.tail(chip_count).sum();
  std::printf(
      "Nonlinear solve (Newton-GMRES, sparse LU preconditioner, AD products): %d Newton steps, %lld GMRES "
      "iterations, %.3f s\nenergy balance: chips %.2f W/m, removed by the coolant %.2f W/m (relative difference "
      "%.1e)\n\n",
      base.newton_steps, static_cast<long long>(base.linear_iterations), base.wall_seconds, power, removed,
      std::abs(removed - power) / power);
  const std::array<double, chip_count> nominal_peaks = peaks(outputs, t, nominal);
  std::printf("%-8s %22s %22s %18s\n", "chip", "soft maximum [deg C]", "largest cell [deg C]", "difference [K]");
  for (int c = 0; c < chip_count; ++c) {
    const double largest = outputs[static_cast<std::size_t>(c)].largest(t);
    std::printf("%-8s %22.3f %22.3f %18.3f\n", chip_names[c],
                nominal_peaks[static_cast<std::size_t>(c)] - kelvin_offset, largest - kelvin_offset,
                largest - nominal_peaks[static_cast<std::size_t>(c)]);
  }

  // ---- adjoint: one transposed solve per chip ------------------------------------
  Eigen::MatrixXd adjoint(m, chip_count), differences(m, chip_count);
  double adjoint_seconds = 0.0;
  long long adjoint_iterations = 0;
  for (int c = 0; c < chip_count; ++c) {
    const auto result = nkit::adjoint_sensitivities(solver, problem, nominal, outputs[static_cast<std::size_t>(c)]);
    if (!result.report.linear_solves_converged) {
      throw std::runtime_error("baseplate_sensitivity: the adjoint solve did not converge");
    }
    adjoint.col(c) = result.gradient;
    adjoint_seconds += result.report.wall_seconds;
    adjoint_iterations += result.report.linear_iterations;
  }
  std::printf("\nAdjoint: 3 transposed solves (one per chip), %lld GMRES iterations, %.3f s (%.2f nonlinear solves)\n",
              adjoint_iterations, adjoint_seconds, adjoint_seconds / base.wall_seconds);

  // ---- central differences of whole nonlinear solves ---------------------------------
  // Each solve warm-starts from the nominal state and stops at the nominal solve's absolute residual.
  nkit::newton_settings warm = settings;
  warm.relative_tolerance = 0.0;
  warm.absolute_tolerance = settings.relative_tolerance * base.initial_residual_norm;
  solver.configure(warm);
  const auto difference_start = std::chrono::steady_clock::now();
  for (Eigen::Index j = 0; j < m; ++j) {
    const double h = relative_step * std::abs(nominal(j));
    std::array<std::array<double, chip_count>, 2> values{};
    for (int side = 0; side < 2; ++side) {
      Eigen::VectorXd shifted = nominal;
      shifted(j) += side == 0 ? h : -h;
      Eigen::VectorXd state = t;
      solve_at(solver, problem, shifted, state);
      values[static_cast<std::size_t>(side)] = peaks(outputs, state, shifted);
    }
    for (int c = 0; c < chip_count; ++c) {
      differences(j, c) = (values[0][static_cast<std::size_t>(c)] - values[1][static_cast<std::size_t>(c)]) / (2.0 * h);
    }
  }
  const double difference_seconds = seconds_since(difference_start);
  std::printf("Finite differences: %lld nonlinear solves (two per parameter, h_j = %g |p_j|), %.3f s\n\n",
              static_cast<long long>(2 * m), relative_step, difference_seconds);

  // ---- ranked table: change of each peak for a 1 % increase of the parameter ---------------
  // Scaled sensitivity S_j = 0.01 p_j dJ/dp_j, K (parameters of different units become comparable).
  const Eigen::MatrixXd scaled = 0.01 * nominal.asDiagonal() * adjoint;
  const Eigen::MatrixXd scaled_differences = 0.01 * nominal.asDiagonal() * differences;
  std::vector<int> order(static_cast<std::size_t>(m));
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(),
            [&](int a, int b) { return scaled.row(a).cwiseAbs().maxCoeff() > scaled.row(b).cwiseAbs().maxCoeff(); });
  const double largest_sensitivity = scaled.cwiseAbs().maxCoeff();
  const double largest_difference = (scaled - scaled_differences).cwiseAbs().maxCoeff();
  std::printf(
      "Change of each chip's peak temperature for a 1 %% increase of one parameter, K (adjoint),\n"
      "ranked by the largest of the three; last column: largest |adjoint - finite differences|, K\n");
  std::printf("%4s  %-45s %10s %-9s %9s %9s %9s %12s\n", "rank", "parameter", "value", "unit", "chip A", "chip B",
              "chip C", "difference");
  for (std::size_t r = 0; r < order.size(); ++r) {
    const int j = order[r];
    const auto& parameter = parameters[static_cast<std::size_t>(j)];
    std::printf("%4zu  %-45s %10.4g %-9s %+9.4f %+9.4f %+9.4f %12.2e\n", r + 1, parameter.name,
                nominal(j) * parameter.display_scale, parameter.display_unit, scaled(j, 0), scaled(j, 1), scaled(j, 2),
                (scaled.row(j) - scaled_differences.row(j)).cwiseAbs().maxCoeff());
  }
  const bool agree = largest_difference <= check_tolerance * largest_sensitivity;
  std::printf("largest difference %.2e K = %.2e of the largest sensitivity (%.4f K); tolerance %.0e: %s\n",
              largest_difference, largest_difference / largest_sensitivity, largest_sensitivity, check_tolerance,
              agree ? "adjoint and finite differences agree" : "DISAGREE");

  {
    std::ofstream csv(folder / "sensitivities.csv");
    csv << "rank,parameter,name,value,unit";
    for (const char* chip : {"chip_a", "chip_b", "chip_c"}) {
      csv << ',' << chip << "_adjoint_derivative," << chip << "_difference_derivative," << chip
          << "_adjoint_kelvin_per_percent," << chip << "_difference_kelvin_per_percent";
    }
    csv << '\n';
    csv.precision(10);
    std::ofstream plot_data(folder / "sensitivities_ranked.dat");
    for (std::size_t r = 0; r < order.size(); ++r) {
      const int j = order[r];
      const auto& parameter = parameters[static_cast<std::size_t>(j)];
      csv << r + 1 << ',' << parameter.key << ",\"" << parameter.name << "\"," << nominal(j) << ',' << parameter.unit;
      for (int c = 0; c < chip_count; ++c) {
        csv << ',' << adjoint(j, c) << ',' << differences(j, c) << ',' << scaled(j, c) << ','
            << scaled_differences(j, c);
      }
      csv << '\n';
      plot_data << '"' << parameter.key << "\" " << scaled(j, 0) << ' ' << scaled(j, 1) << ' ' << scaled(j, 2) << '\n';
    }
  }
  const std::string chart =
      "set terminal pngcairo size 1200,650 enhanced font 'Sans,11'\n"
      "set output 'sensitivities.png'\n"
      "set title 'Baseplate (invented data): change of the peak chip temperature for a 1 % parameter increase'\n"
      "set ylabel 'change of peak temperature [K]'\nset grid ytics\nset key top right\n"
      "set style data histograms\nset style histogram clustered gap 1\nset style fill solid 0.85 border -1\n"
      "set boxwidth 0.9\nset xtics rotate by -40 left noenhanced\nset bmargin 11\nset rmargin 10\nset xzeroaxis lt -1\n"
      "plot 'sensitivities_ranked.dat' using 2:xtic(1) title 'chip A', '' using 3 title 'chip B', "
      "'' using 4 title 'chip C'\n";
  const bool plotted = nkit_examples::run_gnuplot(folder, "sensitivities.gp", chart, std::cout);

  // ---- a two-parameter design step -----------------------------------------------------
  // Variables: relative changes x_i = Δp_i/p_i of the two chosen parameters. Invented cost
  // C = Σ w_i x_i²; constraint, linearised: J_hot + Σ S_i x_i = limit, S_i = p_i dJ_hot/dp_i. The cheapest
  // step (Lagrange multiplier, closed form): x_i = −Δ (S_i/w_i) / Σ_k (S_k²/w_k), Δ = J_hot − limit.
  // Repeated from the new design until the verifying nonlinear solve is under the limit (at most 5 steps).
  const std::vector<std::string> chosen_keys = split(options.text("design_parameters"));
  const std::vector<std::string> weight_words = split(options.text("cost_weights"));
  if (chosen_keys.size() != 2 || weight_words.size() != 2) {
    throw std::invalid_argument("baseplate_sensitivity: --design_parameters and --cost_weights need two entries each");
  }
  const std::array<int, 2> chosen{parameter_by_key(chosen_keys[0]), parameter_by_key(chosen_keys[1])};
  std::array<double, 2> weights{};
  for (int i = 0; i < 2; ++i) {
    weights[static_cast<std::size_t>(i)] = std::stod(weight_words[static_cast<std::size_t>(i)]);
    if (!(weights[static_cast<std::size_t>(i)] > 0.0)) {
      throw std::invalid_argument("baseplate_sensitivity: --cost_weights must be > 0");
    }
  }
  const double limit = options.number("peak_limit_celsius") + kelvin_offset;
  const double margin = options.number("design_margin");
  if (!(margin >= 0.0)) throw std::invalid_argument("baseplate_sensitivity: --design_margin must be >= 0");
  // The verifying solves warm-start from the last state too, with the absolute criterion above.
  Eigen::VectorXd design = nominal;
  std::array<double, chip_count> current = nominal_peaks;
  std::printf(
      "\nDesign step: bring the hottest chip's peak under %.2f deg C by changing %s and %s\n"
      "(invented cost: %g (relative change)^2 + %g (relative change)^2; linearised by the adjoint "
      "sensitivities, aimed %g K under the limit, verified by a nonlinear solve; temperatures in deg C)\n",
      limit - kelvin_offset, parameters[static_cast<std::size_t>(chosen[0])].name,
      parameters[static_cast<std::size_t>(chosen[1])].name, weights[0], weights[1], margin);
  std::printf("%4s %12s %14s %14s %14s %14s %10s\n", "step", "hottest chip", "aimed at", "achieved", "parameter 1",
              "parameter 2", "cost");
  bool reached = *std::max_element(current.begin(), current.end()) <= limit;
  Eigen::MatrixXd gradients = adjoint;
  for (int step = 1; step <= 5 && !reached; ++step) {
    const int hot = static_cast<int>(std::max_element(current.begin(), current.end()) - current.begin());
    const double excess = current[static_cast<std::size_t>(hot)] - (limit - margin);
    std::array<double, 2> s{}, x{};
    double denominator = 0.0;
    for (int i = 0; i < 2; ++i) {
      const int j = chosen[static_cast<std::size_t>(i)];
      s[static_cast<std::size_t>(i)] = design(j) * gradients(j, hot);
      denominator +=
          s[static_cast<std::size_t>(i)] * s[static_cast<std::size_t>(i)] / weights[static_cast<std::size_t>(i)];
    }
    if (denominator == 0.0)
      throw std::runtime_error("baseplate_sensitivity: the chosen parameters do not change the peak");
    for (int i = 0; i < 2; ++i) {
      x[static_cast<std::size_t>(i)] =
          -excess * (s[static_cast<std::size_t>(i)] / weights[static_cast<std::size_t>(i)]) / denominator;
      design(chosen[static_cast<std::size_t>(i)]) *= 1.0 + x[static_cast<std::size_t>(i)];
    }
    if (design(chosen[0]) <= 0.0 || design(chosen[1]) <= 0.0) {
      throw std::runtime_error(
          "baseplate_sensitivity: the design step asks for a non-positive parameter; raise the limit");
    }
    solve_at(solver, problem, design, t);
    current = peaks(outputs, t, design);
    double cost = 0.0;
    for (int i = 0; i < 2; ++i) {
      const double relative =
          design(chosen[static_cast<std::size_t>(i)]) / nominal(chosen[static_cast<std::size_t>(i)]) - 1.0;
      cost += weights[static_cast<std::size_t>(i)] * relative * relative;
    }
    const double achieved = *std::max_element(current.begin(), current.end());
    std::printf("%4d %12s %14.3f %14.3f %14.5g %14.5g %10.4f\n", step, chip_names[hot], limit - margin - kelvin_offset,
                achieved - kelvin_offset,
                design(chosen[0]) * parameters[static_cast<std::size_t>(chosen[0])].display_scale,
                design(chosen[1]) * parameters[static_cast<std::size_t>(chosen[1])].display_scale, cost);
    reached = achieved <= limit;
    if (!reached) {
      for (int c = 0; c < chip_count; ++c) {
        gradients.col(c) =
            nkit::adjoint_sensitivities(solver, problem, design, outputs[static_cast<std::size_t>(c)]).gradient;
      }
    }
  }
  std::printf("%s: %s %.5g -> %.5g %s, %s %.5g -> %.5g %s; peaks now %.2f, %.2f, %.2f deg C\n",
              reached ? "limit reached" : "limit NOT reached in 5 steps",
              parameters[static_cast<std::size_t>(chosen[0])].name,
              nominal(chosen[0]) * parameters[static_cast<std::size_t>(chosen[0])].display_scale,
              design(chosen[0]) * parameters[static_cast<std::size_t>(chosen[0])].display_scale,
              parameters[static_cast<std::size_t>(chosen[0])].display_unit,
              parameters[static_cast<std::size_t>(chosen[1])].name,
              nominal(chosen[1]) * parameters[static_cast<std::size_t>(chosen[1])].display_scale,
              design(chosen[1]) * parameters[static_cast<std::size_t>(chosen[1])].display_scale,
              parameters[static_cast<std::size_t>(chosen[1])].display_unit, current[0] - kelvin_offset,
              current[1] - kelvin_offset, current[2] - kelvin_offset);
  std::printf(
      "CAUTION: the scenario and the cost are invented. A converged residual is not a validated model: design\n"
      "decisions need validated material data and models, and the applicable standards and professional review.\n");

  std::printf("\nwrote %s/{sensitivities.csv%s}\n", std::filesystem::absolute(folder).string().c_str(),
              plotted ? ",sensitivities.png" : "");
  return agree ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
