#ifndef NKIT_REPORT_OUTPUT_HPP
#define NKIT_REPORT_OUTPUT_HPP

/// \file report_output.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/report/report_output.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "report/report_output.hpp"

#endif  // NKIT_REPORT_OUTPUT_HPP
