#ifndef NKIT_VERSION_HPP
#define NKIT_VERSION_HPP

/// \file version.hpp
/// Library version, as macros (for preprocessor checks) and as constants.

#define NKIT_VERSION_MAJOR 0
#define NKIT_VERSION_MINOR 1
#define NKIT_VERSION_PATCH 0

namespace nkit {
inline constexpr int version_major = NKIT_VERSION_MAJOR;
inline constexpr int version_minor = NKIT_VERSION_MINOR;
inline constexpr int version_patch = NKIT_VERSION_PATCH;
}  // namespace nkit

#endif  // NKIT_VERSION_HPP
