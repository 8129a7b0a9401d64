// The benchmark model problem of model_problem.hpp (steady nonlinear heat
// conduction, −∇·(k(T)∇T) = q, k(T) = 1 + T², q = 10, T = 0 on the walls of
// the unit square, cell-centred finite volume on an n×n grid,
// R_P = Σ_faces flux − q h²), split the way an in-house MPI code would split
// it: each rank owns a strip of whole grid rows j ∈ [first_row, end_row) and
// exchanges one row of halo cells with each neighbour (MPI point-to-point,
// inside the residual) before every evaluation.
//
// Global numbering p = i + n·j, as in the serial model_problem.hpp; the
// strips are rank-contiguous in it, so the distributed Jacobian layout of
// nkit/row_partition.hpp applies directly: local rows, global columns.
#ifndef NKIT_PROBLEMS_MODEL_PROBLEM_STRIP_HEAT_PROBLEM_HPP
#define NKIT_PROBLEMS_MODEL_PROBLEM_STRIP_HEAT_PROBLEM_HPP

#include <mpi.h>

#include <Eigen/Core>
#include <Eigen/SparseCore>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <vector>

namespace nkit_problems {

class strip_heat_problem {
 public:
  /// Splits an n×n grid into size(communicator) strips of (nearly) equal height.
  strip_heat_problem(MPI_Comm communicator, int cells_per_side, double source = 10.0)
      : m_communicator(communicator), m_n(cells_per_side), m_source(source) {
    MPI_Comm_rank(communicator, &m_rank);
    MPI_Comm_size(communicator, &m_size);
    if (cells_per_side < m_size) {
      throw std::invalid_argument("strip_heat_problem: need at least one grid row per rank (cells_per_side = " +
                                  std::to_string(cells_per_side) + ", ranks = " + std::to_string(m_size) + ")");
    }
    const int base = m_n / m_size;
    const int extra = m_n % m_size;
    m_first_row = m_rank * base + (m_rank < extra ? m_rank : extra);
    m_end_row = m_first_row + base + (m_rank < extra ? 1 : 0);
    m_below.resize(m_n);
    m_above.resize(m_n);
  }

  int cells_per_side() const { return m_n; }
  int first_row() const { return m_first_row; }
  int end_row() const { return m_end_row; }
  Eigen::Index local_unknowns() const { return static_cast<Eigen::Index>(m_n) * (m_end_row - m_first_row); }
  std::int64_t global_unknowns() const { return static_cast<std::int64_t>(m_n) * m_n; }
  /// Global index of local unknown 0.
  std::int64_t first_global_index() const { return static_cast<std::int64_t>(m_n) * m_first_row; }
  /// Halo exchanges made so far (one per residual evaluation or assembly).
  std::int64_t halo_exchanges() const { return m_halo_exchanges; }

  static double conductivity(double temperature) { return 1.0 + temperature * temperature; }

  /// R(T) on this rank's cells. Collective (halo exchange with the neighbours).
  void operator()(const Eigen::VectorXd& t, Eigen::VectorXd& r) {
    exchange_halo(t);
    const int n = m_n;
    const double h = 1.0 / n;
    const double load = m_source * h * h;
    for (int j = m_first_row; j < m_end_row; ++j) {
      for (int i = 0; i < n; ++i) {
        const Eigen::Index p = local_index(i, j);
        const double t_p = t(p);
        const double k_p = conductivity(t_p);
        double sum = -load;
        const auto face = [&](double t_q) { sum += 0.5 * (k_p + conductivity(t_q)) * (t_p - t_q); };
        const double wall = (k_p + 1.0) * t_p;
        if (i > 0)
          face(t(p - 1));
        else
          sum += wall;
        if (i + 1 < n)
          face(t(p + 1));
        else
          sum += wall;
        if (j > 0)
          face(neighbour_below(t, i, j));
        else
          sum += wall;
        if (j + 1 < n)
          face(neighbour_above(t, i, j));
        else
          sum += wall;
        r(p) = sum;
      }
    }
  }

  /// Analytic Jacobian (as in model_problem.hpp) of this rank's rows with global
  /// column indices, in the layout of nkit/row_partition.hpp. Writes the
  /// compressed-row arrays directly; the storage is reused when the matrix
  /// already has this shape. Collective (halo exchange).
  void assemble_jacobian(const Eigen::VectorXd& t, Eigen::SparseMatrix<double, Eigen::RowMajor, int>& jacobian) {
    exchange_halo(t);
    const int n = m_n;
    const Eigen::Index rows = local_unknowns();
    if (jacobian.rows() != rows || jacobian.cols() != global_unknowns() || !jacobian.isCompressed()) {
      jacobian.resize(rows, static_cast<Eigen::Index>(global_unknowns()));
    }
    jacobian.resizeNonZeros(5 * rows);  // upper bound; trimmed below
    int* offsets = jacobian.outerIndexPtr();
    int* columns = jacobian.innerIndexPtr();
    double* values = jacobian.valuePtr();
    int position = 0;
    for (int j = m_first_row; j < m_end_row; ++j) {
      for (int i = 0; i < n; ++i) {
        const Eigen::Index p = local_index(i, j);
        const int global_p = i + n * j;
        offsets[p] = position;
        const double t_p = t(p);
        const double k_p = conductivity(t_p);
        const double wall = k_p + 1.0 + 2.0 * t_p * t_p;
        double diagonal = 0.0;
        int diagonal_position = -1;
        // Columns in increasing global order: south, west, centre, east, north.
        const auto neighbour = [&](int global_q, double t_q) {
          const double k_f = 0.5 * (k_p + conductivity(t_q));
          diagonal += k_f + t_p * (t_p - t_q);
          columns[position] = global_q;
          values[position] = -k_f + t_q * (t_p - t_q);
          ++position;
        };
        if (j > 0)
          neighbour(global_p - n, neighbour_below(t, i, j));
        else
          diagonal += wall;
        if (i > 0)
          neighbour(global_p - 1, t(p - 1));
        else
          diagonal += wall;
        diagonal_position = position++;
        columns[diagonal_position] = global_p;
        if (i + 1 < n)
          neighbour(global_p + 1, t(p + 1));
        else
          diagonal += wall;
        if (j + 1 < n)
          neighbour(global_p + n, neighbour_above(t, i, j));
        else
          diagonal += wall;
        values[diagonal_position] = diagonal;
      }
    }
    offsets[rows] = position;
    jacobian.resizeNonZeros(position);
  }

 private:
  Eigen::Index local_index(int i, int j) const {
    return static_cast<Eigen::Index>(i) + static_cast<Eigen::Index>(m_n) * (j - m_first_row);
  }
  double neighbour_below(const Eigen::VectorXd& t, int i, int j) const {
    return j > m_first_row ? t(local_index(i, j - 1)) : m_below[static_cast<std::size_t>(i)];
  }
  double neighbour_above(const Eigen::VectorXd& t, int i, int j) const {
    return j + 1 < m_end_row ? t(local_index(i, j + 1)) : m_above[static_cast<std::size_t>(i)];
  }

  /// Sends the first local row down and the last one up; receives the rows
  /// just outside the strip. Ranks at the walls talk to MPI_PROC_NULL.
  void exchange_halo(const Eigen::VectorXd& t) {
    const int down = m_rank > 0 ? m_rank - 1 : MPI_PROC_NULL;
    const int up = m_rank + 1 < m_size ? m_rank + 1 : MPI_PROC_NULL;
    const double* first = t.data();
    const double* last = t.data() + local_index(0, m_end_row - 1);
    constexpr int upward = 1, downward = 2;
    MPI_Sendrecv(last, m_n, MPI_DOUBLE, up, upward, m_below.data(), m_n, MPI_DOUBLE, down, upward, m_communicator,
                 MPI_STATUS_IGNORE);
    MPI_Sendrecv(first, m_n, MPI_DOUBLE, down, downward, m_above.data(), m_n, MPI_DOUBLE, up, downward, m_communicator,
                 MPI_STATUS_IGNORE);
    ++m_halo_exchanges;
  }

  MPI_Comm m_communicator;
  int m_n;
  double m_source;
  int m_rank = 0;
  int m_size = 1;
  int m_first_row = 0;
  int m_end_row = 0;
  std::vector<double> m_below;
  std::vector<double> m_above;
  std::int64_t m_halo_exchanges = 0;
};

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_MODEL_PROBLEM_STRIP_HEAT_PROBLEM_HPP
