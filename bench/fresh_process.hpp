// Runs one benchmark configuration in a fresh process of the same program,
// so that its peak memory is its own: the child is this executable started
// again (fork + exec through /bin/sh, under coreutils `timeout`), it measures
// and prints "key value" lines, the parent parses them. Peak memory is the
// child's VmHWM (peak resident set) from /proc/self/status, read by the
// child just before it exits (problems/baselines/process_resources.hpp);
// start_rss_bytes is its VmRSS before it built anything (the program itself
// and its libraries). Linux only.
#ifndef NKIT_BENCH_FRESH_PROCESS_HPP
#define NKIT_BENCH_FRESH_PROCESS_HPP

#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <map>
#include <sstream>
#include <string>

namespace nkit_bench {

/// Path of the running executable.
inline std::string own_executable() {
  char path[4096];
  const ssize_t length = readlink("/proc/self/exe", path, sizeof path - 1);
  return length > 0 ? std::string(path, static_cast<std::size_t>(length)) : std::string();
}

/// Caps the address space of this process (child side): an allocation past
/// it throws std::bad_alloc instead of pushing the machine into swap or the
/// out-of-memory killer.
inline void limit_address_space(double gibibytes) {
  rlimit limit{};
  limit.rlim_cur = limit.rlim_max = static_cast<rlim_t>(gibibytes * 1024.0 * 1024.0 * 1024.0);
  setrlimit(RLIMIT_AS, &limit);
}

/// What a child printed, as numbers and texts by key; `ok` when it exited 0.
struct child_output {
  bool ok = false;
  int exit_status = -1;
  std::map<std::string, double> numbers;
  std::map<std::string, std::string> texts;
  double number(const std::string& key, double fallback = 0.0) const {
    const auto found = numbers.find(key);
    return found == numbers.end() ? fallback : found->second;
  }
  std::string text(const std::string& key) const {
    const auto found = texts.find(key);
    return found == texts.end() ? std::string() : found->second;
  }
};

/// Runs `executable arguments` under `timeout -s KILL kill_after_seconds`
/// and parses its standard output: lines "key value"; a value that does not
/// parse as a number is kept as text (the rest of the line).
inline child_output run_fresh_process(const std::string& executable, const std::string& arguments,
                                      double kill_after_seconds) {
  child_output output;
  std::ostringstream command;
  // One BLAS thread: a threaded BLAS under UMFPACK would otherwise use more
  // cores than the row says.
  command << "OPENBLAS_NUM_THREADS=1 MKL_NUM_THREADS=1 timeout -s KILL " << static_cast<long long>(kill_after_seconds)
          << " '" << executable << "' " << arguments << " 2>&1";
  std::FILE* pipe = popen(command.str().c_str(), "r");
  if (pipe == nullptr) return output;
  char line[1024];
  while (std::fgets(line, sizeof line, pipe) != nullptr) {
    std::string text(line);
    while (!text.empty() && (text.back() == '\n' || text.back() == '\r')) text.pop_back();
    const auto space = text.find(' ');
    if (space == std::string::npos) continue;
    const std::string key = text.substr(0, space), value = text.substr(space + 1);
    char* end = nullptr;
    const double number = std::strtod(value.c_str(), &end);
    if (end != value.c_str() && *end == '\0') {
      output.numbers[key] = number;
    } else {
      output.texts[key] = value;
    }
  }
  const int status = pclose(pipe);
  output.exit_status = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  output.ok = output.exit_status == 0;
  return output;
}

}  // namespace nkit_bench

#endif  // NKIT_BENCH_FRESH_PROCESS_HPP
