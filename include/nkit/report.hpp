#ifndef NKIT_REPORT_HPP
#define NKIT_REPORT_HPP

/// \file report.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/report/report.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "report/report.hpp"

#endif  // NKIT_REPORT_HPP
