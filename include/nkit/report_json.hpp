#ifndef NKIT_REPORT_JSON_HPP
#define NKIT_REPORT_JSON_HPP

/// \file report_json.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/report/report_json.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "report/report_json.hpp"

#endif  // NKIT_REPORT_JSON_HPP
