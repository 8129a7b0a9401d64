#ifndef NKIT_PARAMETRISED_RESIDUAL_HPP
#define NKIT_PARAMETRISED_RESIDUAL_HPP

/// \file parametrised_residual.hpp
/// Forwarding header, kept for one release (nkit 0.2): this header moved to
/// <nkit/continuation/parametrized_residual.hpp> (and its names are spelled
/// "parametrized" now). Include that path instead; this file will be removed
/// in nkit 0.3.

#include "continuation/parametrized_residual.hpp"

#endif  // NKIT_PARAMETRISED_RESIDUAL_HPP
