// What a comparison of solvers reports besides iteration counts: the peak and
// current resident memory of this process and its CPU time (Linux: the
// fields of /proc/self/status described in proc(5), and
// clock_gettime(CLOCK_PROCESS_CPUTIME_ID)). Used by the examples that print
// Newton–GMRES against a hand-written baseline and by the benchmarks; not
// part of the nkit library.
#ifndef NKIT_PROBLEMS_BASELINES_PROCESS_RESOURCES_HPP
#define NKIT_PROBLEMS_BASELINES_PROCESS_RESOURCES_HPP

#include <sys/resource.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

#include <cstdlib>
#include <cstring>
#include <ctime>
#include <fstream>
#include <string>

namespace nkit_problems {

/// A memory field of /proc/self/status ("VmHWM:", "VmRSS:") in bytes; 0 when
/// the file or the field is missing.
inline double process_status_bytes(const char* field) {
  std::ifstream status("/proc/self/status");
  std::string line;
  while (std::getline(status, line)) {
    if (line.rfind(field, 0) == 0) return 1024.0 * std::strtod(line.c_str() + std::strlen(field), nullptr);
  }
  return 0.0;
}

/// Peak resident memory of this process so far, bytes: VmHWM from
/// /proc/self/status when readable, otherwise getrusage's ru_maxrss (KiB on Linux).
inline double peak_memory_bytes() {
  if (const double peak = process_status_bytes("VmHWM:"); peak > 0.0) return peak;
  rusage usage{};
  if (getrusage(RUSAGE_SELF, &usage) == 0) return 1024.0 * static_cast<double>(usage.ru_maxrss);
  return 0.0;
}

/// Current resident memory, bytes (VmRSS; 0 when unavailable).
inline double resident_memory_bytes() { return process_status_bytes("VmRSS:"); }

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

/// CPU time used by this process so far, seconds (all threads; user +
/// system), from clock_gettime(CLOCK_PROCESS_CPUTIME_ID). On a machine shared
/// with other jobs it is a steadier measure of a method's cost than wall time.
inline double process_cpu_seconds() {
  timespec now{};
  if (clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &now) != 0) return 0.0;
  return static_cast<double>(now.tv_sec) + 1e-9 * static_cast<double>(now.tv_nsec);
}

inline double mebibytes(double bytes) { return bytes / (1024.0 * 1024.0); }

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_BASELINES_PROCESS_RESOURCES_HPP
