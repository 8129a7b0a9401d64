// Captures everything written to standard output and standard error while it
// lives: both the C++ streams (std::cout, std::cerr, std::clog, by swapping
// their buffers) and the file descriptors 1 and 2 (by dup2 onto a temporary
// file), so printf, puts and writes from other libraries are caught too.
// Used to prove that nkit prints nothing by itself. POSIX only.
//
// Catch2 writes its own output to stdout, so keep assertions outside the
// captured region: capture, call nkit, call text(), then CHECK.
#ifndef NKIT_TESTS_SUPPORT_OUTPUT_CAPTURE_HPP
#define NKIT_TESTS_SUPPORT_OUTPUT_CAPTURE_HPP

#include <unistd.h>

#include <cstdio>
#include <iostream>
#include <sstream>
#include <stdexcept>
#include <string>

namespace nkit_test {

class output_capture {
 public:
  output_capture() {
    std::fflush(stdout);
    std::fflush(stderr);
    std::cout.flush();
    std::cerr.flush();
    m_file = std::tmpfile();
    if (m_file == nullptr) throw std::runtime_error("output_capture: tmpfile failed");
    m_saved_out = ::dup(1);
    m_saved_err = ::dup(2);
    if (m_saved_out < 0 || m_saved_err < 0) throw std::runtime_error("output_capture: dup failed");
    ::dup2(::fileno(m_file), 1);
    ::dup2(::fileno(m_file), 2);
    m_cout = std::cout.rdbuf(m_stream.rdbuf());
    m_cerr = std::cerr.rdbuf(m_stream.rdbuf());
    m_clog = std::clog.rdbuf(m_stream.rdbuf());
  }
  output_capture(const output_capture&) = delete;
  output_capture& operator=(const output_capture&) = delete;
  ~output_capture() { restore(); }

  /// Stops capturing (if still active) and returns everything captured.
  std::string text() {
    restore();
    return m_text;
  }

 private:
  void restore() {
    if (m_file == nullptr) return;
    std::cout.rdbuf(m_cout);
    std::cerr.rdbuf(m_cerr);
    std::clog.rdbuf(m_clog);
    std::fflush(stdout);
    std::fflush(stderr);
    ::dup2(m_saved_out, 1);
    ::dup2(m_saved_err, 2);
    ::close(m_saved_out);
    ::close(m_saved_err);
    m_text = m_stream.str();
    std::rewind(m_file);
    char buffer[4096];
    std::size_t count = 0;
    while ((count = std::fread(buffer, 1, sizeof buffer, m_file)) > 0) m_text.append(buffer, count);
    std::fclose(m_file);
    m_file = nullptr;
  }

  std::FILE* m_file = nullptr;
  int m_saved_out = -1;
  int m_saved_err = -1;
  std::ostringstream m_stream;
  std::streambuf* m_cout = nullptr;
  std::streambuf* m_cerr = nullptr;
  std::streambuf* m_clog = nullptr;
  std::string m_text;
};

/// Runs `call` with all output captured; returns what was printed.
template <class Call>
std::string printed_by(Call&& call) {
  output_capture capture;
  try {
    call();
  } catch (...) {
    capture.text();
    throw;
  }
  return capture.text();
}

}  // namespace nkit_test

#endif  // NKIT_TESTS_SUPPORT_OUTPUT_CAPTURE_HPP
