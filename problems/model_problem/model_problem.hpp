// The benchmark model problem: steady nonlinear heat conduction
//   −∇·(k(T)∇T) = q on the unit square (2-D) or the unit cube (3-D),
//   k(T) = 1 + T², q = 10, T = 0 on the walls,
// cell-centred finite volume on n^d cells (h = 1/n, unknown p = i + n·j + n²·k).
// Definition (common practice; our own benchmark problem, defined here once so
// that every benchmark measures the same work; problems/README.md):
//   interior face P|Q:  k_f = ½(k(T_P) + k(T_Q)),  flux = k_f (T_P − T_Q)
//   wall face:          flux = 2·½(k(T_P) + k(0))·T_P = (k(T_P) + 1) T_P
//   R_P = Σ_faces flux − q h²
// (the cell balance divided by h^(d−2): not divided by h², so in 2-D
// ‖R(0)‖₂ = q/n; 5-point stencil in 2-D, 7-point in 3-D).
// Benchmarks start from T0 = 0 and count a solve as converged when
// ‖R‖₂ <= 1e-8 ‖R(T0)‖₂. The 2-D solution's maximum is about 0.6466 (0.64659 at
// n = 256, 0.64660 at n = 1024; computed, a sanity check only).
#ifndef NKIT_PROBLEMS_MODEL_PROBLEM_MODEL_PROBLEM_HPP
#define NKIT_PROBLEMS_MODEL_PROBLEM_MODEL_PROBLEM_HPP

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <algorithm>
#include <array>
#include <limits>
#include <stdexcept>
#include <string>
#include <type_traits>
#include <vector>

namespace nkit_problems {

class heat_conduction_model_problem {
 public:
  /// n^dimensions cells (dimensions 2: the unit square, 3: the unit cube).
  explicit heat_conduction_model_problem(int cells_per_side, double source = 10.0, int dimensions = 2)
      : m_n(cells_per_side), m_source(source), m_dimensions(dimensions) {
    if (cells_per_side < 1) throw std::invalid_argument("heat_conduction_model_problem: cells_per_side must be >= 1");
    if (dimensions != 2 && dimensions != 3) {
      throw std::invalid_argument("heat_conduction_model_problem: dimensions must be 2 or 3, got " +
                                  std::to_string(dimensions));
    }
  }

  int cells_per_side() const { return m_n; }
  int dimensions() const { return m_dimensions; }
  Eigen::Index unknowns() const {
    const auto n = static_cast<Eigen::Index>(m_n);
    return m_dimensions == 3 ? n * n * n : n * n;
  }
  double cell_size() const { return 1.0 / m_n; }
  double source() const { return m_source; }

  template <class Scalar>
  static Scalar conductivity(const Scalar& temperature) {
    return 1.0 + temperature * temperature;
  }

  /// R(T): one pass over the faces; works for double and for dual numbers.
  template <class Scalar>
  void operator()(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& t,
                  Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    if (m_dimensions == 3) {
      residual<3>(t, r);
    } else {
      residual<2>(t, r);
    }
  }

  /// Floating-point operations of one residual evaluation (+, −, × counted
  /// once each): 2 per cell (k_P = 1 + T_P²), 8 per interior face (k_Q, the
  /// face average, the difference, the flux, and its two updates) and 3 per
  /// wall face ((k_P + 1) T_P added): 18 − 4/n per cell in 2-D, 26 − 6/n in 3-D.
  double residual_flops() const {
    const auto n = static_cast<double>(m_n);
    const double layer = m_dimensions == 3 ? n * n : n;  // cells across one grid direction's faces
    const double interior_faces = m_dimensions * (n - 1) * layer, wall_faces = 2.0 * m_dimensions * layer;
    return 2.0 * static_cast<double>(unknowns()) + 8.0 * interior_faces + 3.0 * wall_faces;
  }

  /// Throws std::length_error when a sparse matrix of this problem (at most 2d + 1 entries per
  /// row) has more entries than StorageIndex can count: with Eigen's default int, from
  /// n = 675 in 3-D and n = 20725 in 2-D. Both assembly functions call it first.
  template <class StorageIndex>
  void check_index_range() const {
    const long long entries = static_cast<long long>(2 * m_dimensions + 1) * static_cast<long long>(unknowns());
    if (static_cast<unsigned long long>(entries) >
        static_cast<unsigned long long>(std::numeric_limits<StorageIndex>::max())) {
      throw std::length_error("heat_conduction_model_problem: cells_per_side " + std::to_string(m_n) + " in " +
                              std::to_string(m_dimensions) + "-D gives up to " + std::to_string(entries) +
                              " matrix entries, more than the sparse matrix's " +
                              std::to_string(8 * sizeof(StorageIndex)) +
                              "-bit index can count; use a 64-bit StorageIndex");
    }
  }

  /// Analytic Jacobian (derivatives of the fluxes above): ∂R_P/∂T_P = Σ_faces [k_f + T_P (T_P − T_Q)]
  /// plus k_P + 1 + 2 T_P² per wall face; ∂R_P/∂T_Q = −k_f + T_Q (T_P − T_Q).
  /// The matrix is built in compressed storage directly (no triplets); one
  /// that already holds this pattern (the previous assembly's) keeps its
  /// storage and gets its values overwritten: no allocation, no sort.
  template <class SparseMatrix>
  void assemble_jacobian(const Eigen::VectorXd& t, SparseMatrix& jacobian) const {
    check_index_range<typename SparseMatrix::StorageIndex>();
    if (overwrite_jacobian_values(t, jacobian)) return;
    build_jacobian_pattern(jacobian);
    overwrite_jacobian_values(t, jacobian);
  }

  /// The Jacobian's pattern in compressed storage, entries sorted within each
  /// row (column): cell p and its neighbours. The pattern is symmetric, so
  /// the same lists serve row- and column-major storage. Values are zero.
  template <class SparseMatrix>
  void build_jacobian_pattern(SparseMatrix& jacobian) const {
    using index_type = typename SparseMatrix::StorageIndex;
    jacobian.resize(unknowns(), unknowns());
    jacobian.resizeNonZeros(jacobian_entries());
    index_type* outer = jacobian.outerIndexPtr();
    index_type* inner = jacobian.innerIndexPtr();
    index_type entry = 0;
    for_each_cell([&](Eigen::Index p, const auto& neighbours) {
      // In increasing index: −z, −y, −x, p, +x, +y, +z (neighbours are −x, +x, −y, +y[, −z, +z]).
      Eigen::Index below = -1, above = -1;
      if constexpr (std::tuple_size<std::decay_t<decltype(neighbours)>>::value == 6) {
        below = neighbours[4];
        above = neighbours[5];
      }
      const std::array<Eigen::Index, 7> sorted = {below,         neighbours[2], neighbours[0], p,
                                                  neighbours[1], neighbours[3], above};
      outer[p] = entry;
      for (const Eigen::Index q : sorted) {
        if (q >= 0) inner[entry++] = static_cast<index_type>(q);
      }
    });
    outer[unknowns()] = entry;
    std::fill(jacobian.valuePtr(), jacobian.valuePtr() + entry, 0.0);
  }

  /// Entries of the Jacobian: one per cell and two per interior face.
  Eigen::Index jacobian_entries() const {
    const auto n = static_cast<Eigen::Index>(m_n);
    return unknowns() + 2 * m_dimensions * (n - 1) * (m_dimensions == 3 ? n * n : n);
  }

  /// Writes the analytic Jacobian's values into `jacobian` when it is compressed
  /// with this problem's entry count and holds every entry (p, q) the stencil
  /// needs: then each of its entries is written once. Returns false otherwise
  /// (values possibly part-written), and the caller builds the pattern.
  template <class SparseMatrix>
  bool overwrite_jacobian_values(const Eigen::VectorXd& t, SparseMatrix& jacobian) const {
    using index_type = typename SparseMatrix::StorageIndex;
    if (jacobian.rows() != unknowns() || jacobian.cols() != unknowns() || !jacobian.isCompressed() ||
        jacobian.nonZeros() != jacobian_entries()) {
      return false;
    }
    const index_type* outer = jacobian.outerIndexPtr();
    const index_type* inner = jacobian.innerIndexPtr();
    double* values = jacobian.valuePtr();
    bool complete = true;
    const auto write = [&](Eigen::Index p, Eigen::Index q, double value) {
      const Eigen::Index major = SparseMatrix::IsRowMajor ? p : q;
      const auto minor = static_cast<index_type>(SparseMatrix::IsRowMajor ? q : p);
      for (index_type k = outer[major]; k < outer[major + 1]; ++k) {
        if (inner[k] == minor) {
          values[k] = value;
          return;
        }
      }
      complete = false;
    };
    for_each_jacobian_entry(t, write);
    return complete;
  }

  /// Calls emit(p, q, ∂R_p/∂T_q) for every entry of the analytic Jacobian, row by row.
  template <class Emit>
  void for_each_jacobian_entry(const Eigen::VectorXd& t, Emit&& emit) const {
    for_each_cell([&](Eigen::Index p, const auto& neighbours) {
      const double k_p = conductivity(t(p));
      double diagonal = 0.0;
      const double wall = k_p + 1.0 + 2.0 * t(p) * t(p);
      for (const Eigen::Index q : neighbours) {
        if (q < 0) {
          diagonal += wall;
          continue;
        }
        const double k_f = 0.5 * (k_p + conductivity(t(q)));
        diagonal += k_f + t(p) * (t(p) - t(q));
        emit(p, q, -k_f + t(q) * (t(p) - t(q)));
      }
      emit(p, p, diagonal);
    });
  }

  /// The frozen-coefficient (Picard) matrix A(T): every face conductance
  /// evaluated at T (interior ½(k_P + k_Q), wall k_P + 1), so that
  /// A(T) T − q h² = R(T) exactly; symmetric positive definite (common
  /// practice). `entries` is scratch space that repeated calls reuse.
  template <class SparseMatrix>
  void assemble_frozen_conduction(
      const Eigen::VectorXd& t, SparseMatrix& a,
      std::vector<Eigen::Triplet<double, typename SparseMatrix::StorageIndex>>& entries) const {
    check_index_range<typename SparseMatrix::StorageIndex>();
    entries.clear();
    for_each_cell([&](Eigen::Index p, const auto& neighbours) {
      const double k_p = conductivity(t(p));
      double diagonal = 0.0;
      for (const Eigen::Index q : neighbours) {
        if (q < 0) {
          diagonal += k_p + 1.0;
          continue;
        }
        const double k_f = 0.5 * (k_p + conductivity(t(q)));
        diagonal += k_f;
        entries.emplace_back(p, q, -k_f);
      }
      entries.emplace_back(p, p, diagonal);
    });
    a.resize(unknowns(), unknowns());
    a.setFromTriplets(entries.begin(), entries.end());
  }

 private:
  /// The residual on a d-dimensional grid: each interior face once (east,
  /// north, top), walls where a cell has no neighbour.
  template <int Dimensions, class Scalar>
  void residual(const Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& t, Eigen::Matrix<Scalar, Eigen::Dynamic, 1>& r) const {
    const int n = m_n;
    const Eigen::Index layer = static_cast<Eigen::Index>(n) * n;
    const double h = 1.0 / n;
    const double load = m_source * h * h;
    for (Eigen::Index p = 0; p < unknowns(); ++p) r(p) = Scalar(-load);
    const int layers = Dimensions == 3 ? n : 1;
    for (int k = 0; k < layers; ++k) {
      for (int j = 0; j < n; ++j) {
        for (int i = 0; i < n; ++i) {
          const Eigen::Index p = i + static_cast<Eigen::Index>(n) * j + layer * k;
          const Scalar k_p = conductivity(t(p));
          // The face towards the neighbour q = p + stride (interior), or a wall.
          const auto face_or_wall = [&](bool interior, Eigen::Index stride) {
            if (interior) {
              const Scalar flux = 0.5 * (k_p + conductivity(t(p + stride))) * (t(p) - t(p + stride));
              r(p) += flux;
              r(p + stride) -= flux;
            } else {
              r(p) += (k_p + 1.0) * t(p);
            }
          };
          face_or_wall(i + 1 < n, 1);              // east
          face_or_wall(j + 1 < n, n);              // north
          if (i == 0) r(p) += (k_p + 1.0) * t(p);  // west wall
          if (j == 0) r(p) += (k_p + 1.0) * t(p);  // south wall
          if constexpr (Dimensions == 3) {
            face_or_wall(k + 1 < n, layer);          // top
            if (k == 0) r(p) += (k_p + 1.0) * t(p);  // bottom wall
          }
        }
      }
    }
  }

  /// Calls visit(p, neighbours) for every cell p, with the 2d neighbour
  /// indices in the order west, east, south, north (, bottom, top); −1 marks
  /// a wall.
  template <class Visit>
  void for_each_cell(Visit&& visit) const {
    const int n = m_n;
    const Eigen::Index layer = static_cast<Eigen::Index>(n) * n;
    const int layers = m_dimensions == 3 ? n : 1;
    std::array<Eigen::Index, 6> all{};
    for (int k = 0; k < layers; ++k) {
      for (int j = 0; j < n; ++j) {
        for (int i = 0; i < n; ++i) {
          const Eigen::Index p = i + static_cast<Eigen::Index>(n) * j + layer * k;
          all[0] = i > 0 ? p - 1 : -1;
          all[1] = i + 1 < n ? p + 1 : -1;
          all[2] = j > 0 ? p - n : -1;
          all[3] = j + 1 < n ? p + n : -1;
          all[4] = k > 0 ? p - layer : -1;
          all[5] = k + 1 < n ? p + layer : -1;
          if (m_dimensions == 3) {
            visit(p, all);
          } else {
            visit(p, std::array<Eigen::Index, 4>{all[0], all[1], all[2], all[3]});
          }
        }
      }
    }
  }

  int m_n;
  double m_source;
  int m_dimensions;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_MODEL_PROBLEM_MODEL_PROBLEM_HPP
