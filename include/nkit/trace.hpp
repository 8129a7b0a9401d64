#ifndef NKIT_TRACE_HPP
#define NKIT_TRACE_HPP

/// \file trace.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/report/trace.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "report/trace.hpp"

#endif  // NKIT_TRACE_HPP
