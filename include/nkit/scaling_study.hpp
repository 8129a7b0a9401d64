#ifndef NKIT_SCALING_STUDY_HPP
#define NKIT_SCALING_STUDY_HPP

/// \file scaling_study.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/report/scaling_study.hpp>. Include that path instead; this file will be removed in nkit 0.3.

#include "report/scaling_study.hpp"

#endif  // NKIT_SCALING_STUDY_HPP
