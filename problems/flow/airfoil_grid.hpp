// A structured body-fitted O-grid around an airfoil section given by its
// surface points (the contract of naca_four_digit_airfoil::surface_points in
// airfoil_geometry.hpp, which karman_trefftz_airfoil.hpp keeps too), generated
// algebraically, with the cell-centred finite-volume metrics of euler_airfoil.hpp.
//
// Nodes: index i = 0..n−1 runs once around the section (periodic: node n is
// node 0), starting at the trailing edge along the lower surface
// (clockwise); index j = 0..m runs outward, j = 0 on the airfoil, j = m on
// the far-field circle of radius R chords about the mid-chord point
// (0.5, 0). Beyond the blend distance D (below), node (i, j) lies on the
// straight line from the surface point P_i
// (cosine spacing) to the far-field point F_i = (0.5 + R cos ψ_i, −R sin ψ_i),
// ψ_i = 2πi/n, at the fraction
//   f_j = (q^j − 1)/(q^m − 1)    (geometric stretching, ratio q > 1)
// of its length: spacing grows by q from the wall outward, so the small
// cells sit where the flow varies fastest (common practice). Because the
// surface points use x = ½(1 + cos ψ) with the same angle ψ, the lines fan
// out around the edges without crossing for a section of moderate thickness
// and camber (the constructor checks every cell area).
// Near the wall the straight lines would meet the surface at a shallow angle
// around the leading and trailing edges (down to 8° between grid lines in the
// wall cells next to the trailing edge on 64 × 32). So within the blend
// distance D (wall_normal_blend_distance, 0.3 chord by default) node (i, j)
// lies at the same distance d = f_j |F_i − P_i| from P_i but along
//   (1 − b) n_i + b (F_i − P_i)/|F_i − P_i|,  b = 3r² − 2r³, r = min(1, d/D),
// with n_i the wall normal (from the neighbouring surface points): grid lines
// leave the wall orthogonally, where the wall condition and the surface
// pressure are evaluated, and join the straight lines smoothly at d = D.
// Measured on NACA 0012, M = 0.5, α = 2°, 64 × 32: the spurious drag falls
// from 0.0108 (straight lines) to 0.0069 (D = 0.3), on 96 × 48 from 0.0045 to
// 0.0028. The trailing edge stays a singular point of the O-grid (its normal
// is the bisector), where cells remain skewed. No elliptic smoothing: plain
// Laplace sweeps (without the source terms of an elliptic generator) pull
// the clustered wall nodes apart and undo the stretching, and an elliptic
// generator with spacing control (J.F. Thompson, F.C. Thames & C.W. Mastin,
// J. Comput. Phys. 15 (1974) 299–319; R.L. Sorenson, NASA TM-81198, 1980 —
// both from memory) is more than this test problem needs.
//
// Cells: cell (i, j), i = 0..n−1, j = 0..m−1, has the nodes a = (i, j),
// b = (i+1, j), c = (i+1, j+1), d = (i, j+1). Area ½ (c − a) × (d − b) (exact
// for a quadrilateral with straight sides; > 0 for this orientation), centre
// the mean of the four nodes.
// Face vectors (outward normal × length, exact rotations of the edge vectors):
//   i-face (i, j), between cells (i−1, j) and (i, j): edge e = node(i, j+1) − node(i, j),
//     S = (e_y, −e_x), pointing toward increasing i;
//   j-face (i, j), j = 0..m, between cells (i, j−1) and (i, j): edge e = node(i+1, j) − node(i, j),
//     S = (−e_y, e_x), pointing toward increasing j (j = 0: from the body into
//     the flow; j = m: out of the domain).
// The four outward vectors of a cell, S_i(i+1, j) − S_i(i, j) + S_j(i, j+1) − S_j(i, j),
// sum to zero exactly in exact arithmetic (the edges of a closed polygon) and
// to round-off in floating point: each edge component is one correctly
// rounded subtraction (relative error <= ε/2), so the sum is within about
// 4ε × the largest face length.
#ifndef NKIT_PROBLEMS_FLOW_AIRFOIL_GRID_HPP
#define NKIT_PROBLEMS_FLOW_AIRFOIL_GRID_HPP

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>
#include <vector>

#include "problems/flow/airfoil_geometry.hpp"

namespace nkit_problems {

struct airfoil_grid_settings {
  int cells_around = 64;          ///< n: cells (and surface points) around the airfoil; even, >= 8
  int cells_outward = 32;         ///< m: cells from the wall to the far field; >= 4
  double far_field_radius = 20;   ///< R in chords, > 1
  double stretching_ratio = 1.2;  ///< q: ratio of successive radial spacings, >= 1
  /// D in chords: grid lines leave the wall along its normal and blend into
  /// the straight radial lines by this distance; 0 = straight lines throughout.
  double wall_normal_blend_distance = 0.3;

  void validate() const {
    const auto fail = [](const std::string& what) { throw std::invalid_argument("airfoil_grid_settings." + what); };
    if (cells_around < 8 || cells_around % 2 != 0) {
      fail("cells_around must be even and >= 8 (got " + std::to_string(cells_around) + ")");
    }
    if (cells_outward < 4) fail("cells_outward must be >= 4 (got " + std::to_string(cells_outward) + ")");
    if (!(far_field_radius > 1.0)) fail("far_field_radius must be > 1 (got " + std::to_string(far_field_radius) + ")");
    if (!(stretching_ratio >= 1.0 && stretching_ratio < 2.0)) {
      fail("stretching_ratio must be in [1, 2) (got " + std::to_string(stretching_ratio) + ")");
    }
    if (!(wall_normal_blend_distance >= 0.0 && wall_normal_blend_distance < far_field_radius)) {
      fail("wall_normal_blend_distance must be in [0, far_field_radius) (got " +
           std::to_string(wall_normal_blend_distance) + ")");
    }
  }
};

class airfoil_o_grid {
 public:
  /// Around a NACA four-digit section (its surface_points(cells_around)).
  airfoil_o_grid(const naca_four_digit_airfoil& airfoil, airfoil_grid_settings settings)
      : airfoil_o_grid(checked_surface_points(airfoil, settings), settings) {}

  /// Around the section with these surface points: cells_around of them,
  /// the trailing edge first, along the lower surface to the leading edge
  /// (point cells_around/2) and back along the upper surface, clockwise, with
  /// a sharp trailing edge (the contract of naca_four_digit_airfoil::surface_points).
  /// Throws std::invalid_argument for a wrong count, non-finite points or a
  /// counter-clockwise polygon.
  airfoil_o_grid(const std::vector<point2>& surface, airfoil_grid_settings settings) : m_settings(settings) {
    settings.validate();
    m_n = settings.cells_around;
    m_m = settings.cells_outward;
    if (surface.size() != static_cast<std::size_t>(m_n)) {
      throw std::invalid_argument("airfoil_o_grid: surface has " + std::to_string(surface.size()) +
                                  " points but settings.cells_around is " + std::to_string(m_n));
    }
    double twice_signed_area = 0.0;
    for (std::size_t k = 0; k < surface.size(); ++k) {
      const point2 a = surface[k], b = surface[(k + 1) % surface.size()];
      if (!(std::isfinite(a.x) && std::isfinite(a.y))) {
        throw std::invalid_argument("airfoil_o_grid: surface point " + std::to_string(k) + " is not finite");
      }
      twice_signed_area += a.x * b.y - b.x * a.y;
    }
    if (!(twice_signed_area < 0.0)) {
      throw std::invalid_argument("airfoil_o_grid: surface points must run clockwise (signed area " +
                                  std::to_string(0.5 * twice_signed_area) + " >= 0)");
    }
    const double pi = std::acos(-1.0), radius = settings.far_field_radius, q = settings.stretching_ratio;
    const double blend = settings.wall_normal_blend_distance;
    m_nodes.resize(static_cast<std::size_t>(m_n) * static_cast<std::size_t>(m_m + 1));
    for (int i = 0; i < m_n; ++i) {
      const double psi = 2.0 * pi * i / m_n;
      const point2 p = surface[static_cast<std::size_t>(i)];
      const point2 f{0.5 + radius * std::cos(psi), -radius * std::sin(psi)};
      // Unit wall normal at P_i from the neighbouring surface points (central
      // difference of the tangent), turned to the side of the far field.
      const point2 before = surface[static_cast<std::size_t>((i + m_n - 1) % m_n)];
      const point2 after = surface[static_cast<std::size_t>((i + 1) % m_n)];
      const double tangent_length = std::hypot(after.x - before.x, after.y - before.y);
      double nx = -(after.y - before.y) / tangent_length, ny = (after.x - before.x) / tangent_length;
      const double length = std::hypot(f.x - p.x, f.y - p.y);
      if (nx * (f.x - p.x) + ny * (f.y - p.y) < 0.0) {
        nx = -nx;
        ny = -ny;
      }
      for (int j = 0; j <= m_m; ++j) {
        const double s = q == 1.0 ? double(j) / m_m : (std::pow(q, j) - 1.0) / (std::pow(q, m_m) - 1.0);
        const double distance = s * length;
        const double ramp = blend > 0.0 ? std::min(1.0, distance / blend) : 1.0;
        const double b = ramp * ramp * (3.0 - 2.0 * ramp);  // 0 at the wall, 1 from the blend distance on
        if (j == m_m) {
          node_ref(i, j) = f;
        } else if (b >= 1.0) {
          node_ref(i, j) = {p.x + s * (f.x - p.x), p.y + s * (f.y - p.y)};
        } else {
          const double dx = (1.0 - b) * nx + b * (f.x - p.x) / length, dy = (1.0 - b) * ny + b * (f.y - p.y) / length;
          node_ref(i, j) = {p.x + distance * dx, p.y + distance * dy};
        }
      }
    }
    const std::size_t cells = static_cast<std::size_t>(m_n) * static_cast<std::size_t>(m_m);
    m_area.resize(cells);
    m_centre.resize(cells);
    m_i_face.resize(cells);
    m_j_face.resize(static_cast<std::size_t>(m_n) * static_cast<std::size_t>(m_m + 1));
    for (int j = 0; j < m_m; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const point2 a = node(i, j), b = node(i + 1, j), c = node(i + 1, j + 1), d = node(i, j + 1);
        const double area = 0.5 * ((c.x - a.x) * (d.y - b.y) - (c.y - a.y) * (d.x - b.x));
        if (!(area > 0.0)) {
          throw std::invalid_argument("airfoil_o_grid: cell (" + std::to_string(i) + ", " + std::to_string(j) +
                                      ") has area " + std::to_string(area) +
                                      " <= 0; lower stretching_ratio or raise cells_around");
        }
        m_area[cell_index(i, j)] = area;
        m_centre[cell_index(i, j)] = {0.25 * (a.x + b.x + c.x + d.x), 0.25 * (a.y + b.y + c.y + d.y)};
        m_i_face[cell_index(i, j)] = {d.y - a.y, -(d.x - a.x)};
      }
    }
    for (int j = 0; j <= m_m; ++j) {
      for (int i = 0; i < m_n; ++i) {
        const point2 a = node(i, j), b = node(i + 1, j);
        m_j_face[static_cast<std::size_t>(j) * static_cast<std::size_t>(m_n) + static_cast<std::size_t>(i)] = {
            -(b.y - a.y), b.x - a.x};
      }
    }
  }

  int cells_around() const { return m_n; }
  int cells_outward() const { return m_m; }
  int cells() const { return m_n * m_m; }
  const airfoil_grid_settings& settings() const { return m_settings; }

  /// Node (i, j); i is taken modulo cells_around.
  point2 node(int i, int j) const { return m_nodes[node_index(wrap(i), j)]; }
  /// Cell number c = i + n j (i fastest), the numbering of the state vector.
  std::size_t cell_index(int i, int j) const {
    return static_cast<std::size_t>(wrap(i)) + static_cast<std::size_t>(m_n) * static_cast<std::size_t>(j);
  }
  double area(int i, int j) const { return m_area[cell_index(i, j)]; }
  point2 centre(int i, int j) const { return m_centre[cell_index(i, j)]; }
  /// Normal × length of i-face (i, j), toward increasing i (i modulo n).
  point2 i_face(int i, int j) const { return m_i_face[cell_index(i, j)]; }
  /// Normal × length of j-face (i, j), j = 0..m, toward increasing j (i modulo n).
  point2 j_face(int i, int j) const {
    return m_j_face[static_cast<std::size_t>(j) * static_cast<std::size_t>(m_n) + static_cast<std::size_t>(wrap(i))];
  }
  /// Σ outward normal × length over the four faces of cell (i, j) (zero up to round-off).
  point2 face_sum(int i, int j) const {
    const point2 e = i_face(i + 1, j), w = i_face(i, j), n = j_face(i, j + 1), s = j_face(i, j);
    return {e.x - w.x + n.x - s.x, e.y - w.y + n.y - s.y};
  }
  /// Largest face length of cell (i, j).
  double largest_face_length(int i, int j) const {
    double largest = 0.0;
    for (const point2 f : {i_face(i + 1, j), i_face(i, j), j_face(i, j + 1), j_face(i, j)}) {
      largest = std::max(largest, std::hypot(f.x, f.y));
    }
    return largest;
  }

 private:
  static std::vector<point2> checked_surface_points(const naca_four_digit_airfoil& airfoil,
                                                    const airfoil_grid_settings& settings) {
    settings.validate();
    if (airfoil.open_trailing_edge()) {
      throw std::invalid_argument("airfoil_o_grid: the O-grid needs a closed trailing edge (open_trailing_edge)");
    }
    return airfoil.surface_points(settings.cells_around);
  }
  int wrap(int i) const { return ((i % m_n) + m_n) % m_n; }
  std::size_t node_index(int i, int j) const {
    return static_cast<std::size_t>(i) + static_cast<std::size_t>(m_n) * static_cast<std::size_t>(j);
  }
  point2& node_ref(int i, int j) { return m_nodes[node_index(i, j)]; }

  airfoil_grid_settings m_settings;
  int m_n = 0, m_m = 0;
  std::vector<point2> m_nodes;
  std::vector<double> m_area;
  std::vector<point2> m_centre, m_i_face, m_j_face;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_FLOW_AIRFOIL_GRID_HPP
