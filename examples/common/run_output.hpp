// Output plumbing for the examples: the output folder, the convergence CSV,
// and gnuplot (optional: without it we print how to plot). Shared example
// plumbing (not part of the nkit library); peak memory and CPU time are in
// problems/baselines/process_resources.hpp (the benchmarks use them too).
#ifndef NKIT_EXAMPLES_COMMON_RUN_OUTPUT_HPP
#define NKIT_EXAMPLES_COMMON_RUN_OUTPUT_HPP

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <nkit/report/report.hpp>
#include <nkit/report/report_output.hpp>
#include <stdexcept>
#include <string>
#include <vector>

namespace nkit_examples {

/// Creates (if needed) and returns the output folder.
inline std::filesystem::path make_output_folder(const std::string& folder) {
  std::filesystem::path path(folder);
  std::filesystem::create_directories(path);
  return path;
}

/// Writes nkit's per-step history as CSV into folder/file_name; returns the path.
inline std::filesystem::path write_history(const std::filesystem::path& folder, const std::string& file_name,
                                           const nkit::solve_report& report) {
  const std::filesystem::path path = folder / file_name;
  std::ofstream out(path);
  if (!out) throw std::runtime_error("cannot write " + path.string());
  nkit::write_history_csv(out, report);
  return path;
}

/// True when a gnuplot executable is on the PATH.
inline bool gnuplot_available() { return std::system("command -v gnuplot > /dev/null 2>&1") == 0; }

/// Writes `script` to folder/script_name and runs gnuplot on it inside
/// `folder` (so the script may use relative file names). Returns true when a
/// plot was made; otherwise prints how to make it by hand.
inline bool run_gnuplot(const std::filesystem::path& folder, const std::string& script_name, const std::string& script,
                        std::ostream& log) {
  const std::filesystem::path path = folder / script_name;
  {
    std::ofstream out(path);
    if (!out) throw std::runtime_error("cannot write " + path.string());
    out << script;
  }
  if (!gnuplot_available()) {
    log << "gnuplot not found: the plot script is " << path.string() << "; install gnuplot and run\n"
        << "  (cd " << folder.string() << " && gnuplot " << script_name << ")\n"
        << "or plot the CSV files there with any tool.\n";
    return false;
  }
  const std::string command = "cd '" + folder.string() + "' && gnuplot '" + script_name + "' 2>&1";
  const int status = std::system(command.c_str());
  if (status != 0) {
    log << "gnuplot failed on " << path.string() << " (exit status " << status << ")\n";
    return false;
  }
  return true;
}

/// gnuplot lines for a residual-history plot (log scale) of one or more CSV
/// files with columns "<x column>,<y column>", all with a header line.
struct history_curve {
  std::string csv_file;
  int x_column;
  int y_column;
  std::string title;
};

inline std::string residual_history_script(const std::string& png_file, const std::string& title,
                                           const std::string& x_label, const std::vector<history_curve>& curves) {
  std::string script =
      "set terminal pngcairo size 900,600 enhanced font 'Sans,11'\n"
      "set output '" +
      png_file +
      "'\n"
      "set datafile separator ','\n"
      "set key top right\nset grid\nset logscale y\nset format y '10^{%L}'\n"
      "set title '" +
      title + "'\nset xlabel '" + x_label + "'\nset ylabel 'residual norm / initial residual norm'\nplot ";
  bool first = true;
  for (const history_curve& c : curves) {
    if (!first) script += ", \\\n     ";
    first = false;
    script += "'" + c.csv_file + "' using " + std::to_string(c.x_column) + ":" + std::to_string(c.y_column) +
              " skip 1 with linespoints lw 2 title '" + c.title + "' noenhanced";
  }
  script += "\n";
  return script;
}

}  // namespace nkit_examples

#endif  // NKIT_EXAMPLES_COMMON_RUN_OUTPUT_HPP
