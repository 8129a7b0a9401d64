#ifndef NKIT_ROW_PARTITION_HPP
#define NKIT_ROW_PARTITION_HPP

/// \file row_partition.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/distributed/row_partition.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "distributed/row_partition.hpp"

#endif  // NKIT_ROW_PARTITION_HPP
