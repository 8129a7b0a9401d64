#ifndef NKIT_OUTCOME_HPP
#define NKIT_OUTCOME_HPP

/// \file outcome.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/report/outcome.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "report/outcome.hpp"

#endif  // NKIT_OUTCOME_HPP
