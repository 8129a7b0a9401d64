#ifndef NKIT_TRACE_OUTPUT_HPP
#define NKIT_TRACE_OUTPUT_HPP

/// \file trace_output.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/report/trace_output.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "report/trace_output.hpp"

#endif  // NKIT_TRACE_OUTPUT_HPP
