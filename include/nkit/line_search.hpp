#ifndef NKIT_LINE_SEARCH_HPP
#define NKIT_LINE_SEARCH_HPP

/// \file line_search.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/globalization/line_search.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "globalization/line_search.hpp"

#endif  // NKIT_LINE_SEARCH_HPP
