// Output plumbing for the examples: the output folder, peak memory, the
// convergence CSV, and gnuplot (optional: without it we print how to plot).
// Shared example plumbing (not part of the nkit library).
#ifndef NKIT_EXAMPLES_COMMON_RUN_OUTPUT_HPP
#define NKIT_EXAMPLES_COMMON_RUN_OUTPUT_HPP

#include <sys/resource.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <nkit/report.hpp>
#include <nkit/report_output.hpp>
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

/// Peak resident memory of this process so far, bytes: VmHWM from
/// /proc/self/status when readable, otherwise getrusage's ru_maxrss (KiB on Linux).
inline double peak_memory_bytes() {
  std::ifstream status("/proc/self/status");
  std::string line;
  while (std::getline(status, line)) {
    if (line.rfind("VmHWM:", 0) == 0) return 1024.0 * std::strtod(line.c_str() + 6, nullptr);
  }
  rusage usage{};
  if (getrusage(RUSAGE_SELF, &usage) == 0) return 1024.0 * static_cast<double>(usage.ru_maxrss);
  return 0.0;
}

/// Resets the peak-memory mark to the current resident size (Linux: writes 5
/// to /proc/self/clear_refs), so two methods run one after the other in the
/// same process each get their own peak (freed heap is first returned to
/// the system with malloc_trim where glibc provides it). Returns false when not supported
/// (the peak then covers the whole process so far).
inline bool reset_peak_memory() {
#ifdef __GLIBC__
  malloc_trim(0);  // hand freed heap back first, so the next growth is really new memory
#endif
  std::ofstream clear("/proc/self/clear_refs");
  if (!clear) return false;
  clear << "5";
  clear.flush();
  return static_cast<bool>(clear);
}

/// Current resident memory, bytes (VmRSS; 0 when unavailable).
inline double resident_memory_bytes() {
  std::ifstream status("/proc/self/status");
  std::string line;
  while (std::getline(status, line)) {
    if (line.rfind("VmRSS:", 0) == 0) return 1024.0 * std::strtod(line.c_str() + 6, nullptr);
  }
  return 0.0;
}

/// CPU time used by this process so far, seconds (all threads; user +
/// system), from clock_gettime(CLOCK_PROCESS_CPUTIME_ID). On a machine shared
/// with other jobs it is a steadier measure of a method's cost than wall time.
inline double process_cpu_seconds() {
  timespec now{};
  if (clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &now) != 0) return 0.0;
  return static_cast<double>(now.tv_sec) + 1e-9 * static_cast<double>(now.tv_nsec);
}

inline double mebibytes(double bytes) { return bytes / (1024.0 * 1024.0); }

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
