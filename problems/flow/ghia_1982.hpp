// Reference data for the lid-driven cavity: U. Ghia, K.N. Ghia, C.T. Shin,
// "High-Re solutions for incompressible flow using the Navier–Stokes
// equations and a multigrid method", J. Comput. Phys. 48 (1982) 387–411,
// Table I (u along the vertical centre line x = 0.5) and Table II (v along
// the horizontal centre line y = 0.5), 129 × 129 grid, lid velocity 1.
// The values were checked against consistent independent published
// transcriptions of the tables; the majority values are used, not the known transcription
// typos (Re=1000 v(0.8047) = −0.31966, u(0.9531) = 0.46604, u(0.9609) = 0.51117).
#ifndef NKIT_PROBLEMS_FLOW_GHIA_1982_HPP
#define NKIT_PROBLEMS_FLOW_GHIA_1982_HPP

#include <array>

namespace nkit_problems::ghia_1982 {

struct centre_line_point {
  double position;  ///< y for Table I, x for Table II
  double re_100;    ///< velocity at Re = 100
  double re_1000;   ///< velocity at Re = 1000
};

/// Table I: u(0.5, y).
inline constexpr std::array<centre_line_point, 17> u_vertical_centre_line{{
    {1.0000, 1.00000, 1.00000},
    {0.9766, 0.84123, 0.65928},
    {0.9688, 0.78871, 0.57492},
    {0.9609, 0.73722, 0.51117},
    {0.9531, 0.68717, 0.46604},
    {0.8516, 0.23151, 0.33304},
    {0.7344, 0.00332, 0.18719},
    {0.6172, -0.13641, 0.05702},
    {0.5000, -0.20581, -0.06080},
    {0.4531, -0.21090, -0.10648},
    {0.2813, -0.15662, -0.27805},
    {0.1719, -0.10150, -0.38289},
    {0.1016, -0.06434, -0.29730},
    {0.0703, -0.04775, -0.22220},
    {0.0625, -0.04192, -0.20196},
    {0.0547, -0.03717, -0.18109},
    {0.0000, 0.00000, 0.00000},
}};

/// Table II: v(x, 0.5).
inline constexpr std::array<centre_line_point, 17> v_horizontal_centre_line{{
    {1.0000, 0.00000, 0.00000},
    {0.9688, -0.05906, -0.21388},
    {0.9609, -0.07391, -0.27669},
    {0.9531, -0.08864, -0.33714},
    {0.9453, -0.10313, -0.39188},
    {0.9063, -0.16914, -0.51550},
    {0.8594, -0.22445, -0.42665},
    {0.8047, -0.24533, -0.31966},
    {0.5000, 0.05454, 0.02526},
    {0.2344, 0.17527, 0.32235},
    {0.2266, 0.17507, 0.33075},
    {0.1563, 0.16077, 0.37095},
    {0.0938, 0.12317, 0.32627},
    {0.0781, 0.10890, 0.30353},
    {0.0703, 0.10091, 0.29012},
    {0.0625, 0.09233, 0.27485},
    {0.0000, 0.00000, 0.00000},
}};

/// Primary vortex (minimum streamfunction and its position), Ghia et al.
/// (1982) Table V, from memory: not confirmed against the paper or a
/// transcription, so use it with a tolerance that reflects the doubt.
struct primary_vortex {
  double streamfunction, x, y;
};
inline constexpr primary_vortex primary_vortex_re_100{-0.103423, 0.6172, 0.7344};
inline constexpr primary_vortex primary_vortex_re_1000{-0.117929, 0.5313, 0.5625};

}  // namespace nkit_problems::ghia_1982

#endif  // NKIT_PROBLEMS_FLOW_GHIA_1982_HPP
