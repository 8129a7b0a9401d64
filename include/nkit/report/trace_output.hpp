#ifndef NKIT_REPORT_TRACE_OUTPUT_HPP
#define NKIT_REPORT_TRACE_OUTPUT_HPP

/// \file report/trace_output.hpp
/// Writes a trace_recorder as Trace Event JSON (the open format read by
/// common trace viewers): complete events ("ph": "X") with microsecond
/// timestamps for phases, counter events ("ph": "C") for norms. The writer is
/// a few lines of plain text formatting: every value is a number or one of
/// nkit's fixed identifier names, so no string escaping is needed.

#include <cstdio>
#include <ostream>
#include <string>

#include "trace.hpp"

namespace nkit {

/// Writes {"traceEvents": [...], "displayTimeUnit": "ms"}; `process_name`
/// labels the process row (letters, digits, spaces, '_' and '-' only).
inline void write_trace_json(std::ostream& os, const trace_recorder& recorder,
                             const std::string& process_name = "nkit solve") {
  os << "{\"displayTimeUnit\": \"ms\", \"traceEvents\": [\n";
  os << "{\"name\": \"process_name\", \"ph\": \"M\", \"pid\": 1, \"tid\": 1, \"args\": {\"name\": \"" << process_name
     << "\"}}";
  char line[256];
  for (const trace_event& event : recorder.events()) {
    const double start_microseconds = 1e6 * event.start_seconds;
    if (event.is_counter) {
      std::snprintf(
          line, sizeof line,
          ",\n{\"name\": \"%s\", \"ph\": \"C\", \"ts\": %.3f, \"pid\": 1, \"tid\": 1, \"args\": {\"value\": %.17g}}",
          std::string(name(event.counter)).c_str(), start_microseconds, event.value);
    } else {
      std::snprintf(line, sizeof line,
                    ",\n{\"name\": \"%s\", \"cat\": \"nkit\", \"ph\": \"X\", \"ts\": %.3f, \"dur\": %.3f, \"pid\": 1, "
                    "\"tid\": 1, \"args\": {\"index\": %d}}",
                    std::string(name(event.phase)).c_str(), start_microseconds, 1e6 * event.duration_seconds,
                    event.index);
    }
    os << line;
  }
  os << "\n]}\n";
}

}  // namespace nkit

#endif  // NKIT_REPORT_TRACE_OUTPUT_HPP
