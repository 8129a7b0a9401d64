#ifndef NKIT_DETAIL_GIVENS_HPP
#define NKIT_DETAIL_GIVENS_HPP

/// \file givens.hpp
/// Plane (Givens) rotations for the GMRES least-squares problem.

#include <cmath>

namespace nkit::detail {

/// Rotation [c s; -s c] with c·a + s·b = r >= 0 and −s·a + c·b = 0.
struct givens_rotation {
  double cosine = 1.0;
  double sine = 0.0;

  /// Builds the rotation that zeroes b against a; returns r = hypot(a, b).
  double make(double a, double b) {
    const double radius = std::hypot(a, b);
    if (radius == 0.0) {
      cosine = 1.0;
      sine = 0.0;
      return 0.0;
    }
    cosine = a / radius;
    sine = b / radius;
    return radius;
  }
  /// (x, y) <- (c x + s y, −s x + c y)
  void apply(double& x, double& y) const {
    const double rotated_x = cosine * x + sine * y;
    y = -sine * x + cosine * y;
    x = rotated_x;
  }
};

}  // namespace nkit::detail

#endif  // NKIT_DETAIL_GIVENS_HPP
