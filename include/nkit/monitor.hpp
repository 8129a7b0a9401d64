#ifndef NKIT_MONITOR_HPP
#define NKIT_MONITOR_HPP

/// \file monitor.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/report/monitor.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "report/monitor.hpp"

#endif  // NKIT_MONITOR_HPP
