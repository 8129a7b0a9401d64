#ifndef NKIT_KRYLOV_GMRES_HPP
#define NKIT_KRYLOV_GMRES_HPP

/// \file krylov/gmres.hpp
/// Restarted, right-preconditioned GMRES with Givens rotations, and its
/// flexible variant.
///
/// Method: Y. Saad & M.H. Schultz, "GMRES: a generalized minimal residual
/// algorithm for solving nonsymmetric linear systems", SIAM J. Sci. Stat.
/// Comput. 7 (1986) 856–869; flexible variant: Y. Saad, "A flexible
/// inner-outer preconditioned GMRES algorithm", SIAM J. Sci. Comput. 14 (1993)
/// 461–469. Right preconditioning solves A M⁻¹ y = b, x = M⁻¹ y, so the
/// residual GMRES minimises and monitors is the true residual b − A x.
///
/// Orthogonalisation: modified Gram–Schmidt with re-orthogonalisation never,
/// always, or when the norm drops below 1/√2 of its value before the pass
/// (the criterion of J.W. Daniel, W.B. Gragg, L. Kaufman & G.W. Stewart,
/// Math. Comp. 30 (1976) 772–795); or classical Gram–Schmidt applied twice,
/// whose projections use one fused reduction per pass (dot_many) on a
/// distributed space.
///
/// Memory: (m + 3) vectors, plus m more for the flexible variant, plus O(m²)
/// doubles, where m = min(restart_length, maximum_iterations) (a cycle never
/// uses more than maximum_iterations vectors). All of it is allocated
/// on the first solve (or allocate_like()) and reused while the size stays
/// the same: later solves allocate nothing.

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <string>
#include <string_view>
#include <type_traits>
#include <vector>

#include "../core/eigen_vector_space.hpp"
#include "../core/linear_operator.hpp"
#include "../core/preconditioner.hpp"
#include "../core/vector_space.hpp"
#include "../detail/checks.hpp"
#include "../detail/givens.hpp"
#include "../detail/timer.hpp"
#include "../report/monitor.hpp"
#include "../report/trace.hpp"

namespace nkit {

enum class orthogonalization_method { modified_gram_schmidt, classical_gram_schmidt_twice };
enum class reorthogonalization_policy { never, when_needed, always };
enum class gmres_variant { standard, flexible };
enum class initial_guess { zero, given };

struct gmres_settings {
  /// Krylov vectors kept before a restart. Memory grows linearly with it,
  /// orthogonalisation work quadratically.
  int restart_length = 30;
  /// Arnoldi steps allowed per linear solve, summed over restarts.
  int maximum_iterations = 300;
  /// flexible stores the preconditioned vectors (restart_length more
  /// vectors) so M⁻¹ may change between applications. The Newton driver
  /// switches to flexible automatically for such preconditioners.
  gmres_variant variant = gmres_variant::standard;
  orthogonalization_method orthogonalization = orthogonalization_method::modified_gram_schmidt;
  /// Used with modified Gram–Schmidt only.
  reorthogonalization_policy reorthogonalization = reorthogonalization_policy::when_needed;

  void validate(std::string_view prefix = "gmres_settings") const {
    const std::string p(prefix);
    detail::require_at_least(p + ".restart_length", restart_length, 1);
    detail::require_at_least(p + ".maximum_iterations", maximum_iterations, 1);
    detail::require_enumerator(p + ".variant", variant, gmres_variant::flexible, "standard, flexible");
    detail::require_enumerator(p + ".orthogonalization", orthogonalization,
                               orthogonalization_method::classical_gram_schmidt_twice,
                               "modified_gram_schmidt, classical_gram_schmidt_twice");
    detail::require_enumerator(p + ".reorthogonalization", reorthogonalization, reorthogonalization_policy::always,
                               "never, when_needed, always");
  }
};

/// Default per-iteration monitor of a linear solve: never stops.
struct null_linear_monitor {
  monitor_decision operator()(int /*iteration*/, double /*relative_residual*/) const {
    return monitor_decision::keep_going;
  }
};

namespace detail {
/// A linear monitor says whether to go on with a monitor_decision (or, for
/// simple lambdas, a bool: true = keep going).
inline bool keep_going(monitor_decision decision) { return decision == monitor_decision::keep_going; }
inline bool keep_going(bool go_on) { return go_on; }
}  // namespace detail

template <class Space = eigen_vector_space<double>>
class gmres_solver {
 public:
  using vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;

  explicit gmres_solver(gmres_settings settings = {}, Space space = {}) : m_space(std::move(space)) {
    configure(settings);
  }

  /// Validates and stores the settings; throws std::invalid_argument naming the field.
  void configure(const gmres_settings& settings) {
    settings.validate();
    m_settings = settings;
  }
  const gmres_settings& settings() const { return m_settings; }
  const Space& space() const { return m_space; }

  /// Allocates the workspace for vectors shaped like `prototype`.
  void allocate_like(const vector_type& prototype, bool flexible = false) {
    const int m = cycle_length();
    if (m_basis.size() != static_cast<std::size_t>(m) + 1) m_basis.resize(static_cast<std::size_t>(m) + 1);
    for (auto& v : m_basis) m_space.allocate_like(v, prototype);
    m_space.allocate_like(m_work, prototype);
    m_space.allocate_like(m_update, prototype);
    if (flexible || m_settings.variant == gmres_variant::flexible) {
      if (static_cast<int>(m_preconditioned.size()) != m) m_preconditioned.resize(static_cast<std::size_t>(m));
      for (auto& v : m_preconditioned) m_space.allocate_like(v, prototype);
    }
    const Eigen::Index rows = Eigen::Index{m} + 1;
    if (m_hessenberg.rows() != rows || m_hessenberg.cols() != m) {
      m_hessenberg.resize(rows, m);
      m_least_squares_rhs.resize(rows);
      m_first_row.resize(m);
      m_coefficients.resize(m);
      m_projections.resize(rows);
      m_rotations.assign(static_cast<std::size_t>(m), detail::givens_rotation{});
    }
  }

  /// Asks the next solve (from a zero initial guess) to also write the Cauchy
  /// point of its first restart cycle into `target`: the minimiser of
  /// ½‖b − A x‖² along the steepest-descent direction of that model in the
  /// first Krylov subspace (coordinates of the basis, i.e. the M-norm under
  /// right preconditioning). Used by the trust-region globalisation (Brown &
  /// Saad 1990). Pass nullptr to stop. `target` must be shaped like b.
  void capture_cauchy_point(vector_type* target) { m_cauchy_target = target; }
  /// True when the last solve wrote a Cauchy point.
  bool cauchy_point_available() const { return m_cauchy_written; }

  /// Records orthogonalisation and linear-iteration events (and the relative
  /// residual counter) into `recorder`; nullptr stops recording.
  void record_trace(trace_recorder* recorder) { m_trace = recorder; }

  /// Bytes of vector and dense workspace currently held.
  std::size_t workspace_bytes() const {
    std::size_t vector_count = m_basis.size() + m_preconditioned.size() + 2;
    const std::size_t length = m_basis.empty() ? 0 : static_cast<std::size_t>(m_basis.front().size());
    const std::size_t dense =
        static_cast<std::size_t>(m_hessenberg.size() + m_least_squares_rhs.size() + m_coefficients.size() +
                                 m_projections.size() + m_first_row.size()) +
        2 * m_rotations.size();
    return sizeof(scalar_type) * (vector_count * length + dense);
  }

  /// Solves A x = b until ‖b − A x‖ <= relative_tolerance · ‖b‖.
  ///   op.apply(in, out)        out = A in
  ///   preconditioner.apply(r, z)  z = M⁻¹ r
  ///   guess                    initial_guess::zero ignores x on entry (saves one A·x)
  ///   monitor(iteration, ‖b − A x‖/‖b‖) after every Arnoldi step; return
  ///   monitor_decision::stop_now (or false) to stop
  /// On every status x holds the best iterate built from finite data.
  template <class Operator, class Preconditioner, class LinearMonitor = null_linear_monitor>
  linear_solve_result solve(Operator& op, Preconditioner& preconditioner, const vector_type& b, vector_type& x,
                            double relative_tolerance, initial_guess guess = initial_guess::given,
                            LinearMonitor&& monitor = {}) {
    static_assert(is_linear_operator_v<Operator, vector_type>,
                  "nkit: the operator must have apply(const vector_type& in, vector_type& out)");
    if (!(relative_tolerance >= 0.0)) {
      detail::throw_invalid_setting("gmres_solver::solve relative_tolerance", ">= 0", relative_tolerance);
    }
    constexpr bool identity = std::is_same_v<std::decay_t<Preconditioner>, identity_preconditioner>;
    const bool flexible =
        !identity && (m_settings.variant == gmres_variant::flexible || changes_between_applications(preconditioner));
    allocate_like(b, flexible);

    linear_solve_result result;
    m_orthogonalization_seconds = 0.0;
    const int m = cycle_length();
    const double b_norm = m_space.norm(b);
    result.right_hand_side_norm = b_norm;
    if (!std::isfinite(b_norm)) {
      result.status = linear_solve_status::non_finite;
      result.initial_residual_norm = result.final_residual_norm = b_norm;
      return result;
    }
    if (b_norm == 0.0) {
      m_space.fill(0, x);
      return result;
    }
    const double target = relative_tolerance * b_norm;

    vector_type& first = m_basis[0];
    double beta = b_norm;
    if (guess == initial_guess::zero) {
      m_space.fill(0, x);
      m_space.copy(b, first);
    } else {
      op.apply(static_cast<const vector_type&>(x), first);
      ++result.operator_applications;
      m_space.combine(1, b, -1, first, first);
      beta = m_space.norm(first);
    }
    result.initial_residual_norm = result.final_residual_norm = beta;
    if (!std::isfinite(beta)) {
      result.status = linear_solve_status::non_finite;
      return result;
    }

    int total = 0;
    int cycle = 0;
    m_cauchy_written = false;
    while (true) {
      if (beta <= target) {
        result.status = linear_solve_status::converged;
        break;
      }
      if (total >= m_settings.maximum_iterations) {
        result.status = linear_solve_status::maximum_iterations_reached;
        break;
      }
      m_space.scale(1 / beta, first);
      m_least_squares_rhs.setZero();
      m_least_squares_rhs(0) = beta;
      double estimate = beta;
      int columns = 0;
      bool happy_breakdown = false;
      bool non_finite = false;
      bool stopped = false;

      for (int j = 0; j < m && total < m_settings.maximum_iterations; ++j) {
        const auto iteration_start = detail::clock_type::now();
        const vector_type* z = &m_basis[static_cast<std::size_t>(j)];
        if constexpr (!identity) {
          vector_type& target_vector = flexible ? m_preconditioned[static_cast<std::size_t>(j)] : m_work;
          preconditioner.apply(m_basis[static_cast<std::size_t>(j)], target_vector);
          ++result.preconditioner_applications;
          z = &target_vector;
        }
        op.apply(*z, m_basis[static_cast<std::size_t>(j + 1)]);
        ++result.operator_applications;

        const auto start = detail::clock_type::now();
        const double next_norm = orthogonalize(j);
        const auto stop = detail::clock_type::now();
        result.orthogonalization_seconds += detail::seconds_between(start, stop);
        m_orthogonalization_seconds = result.orthogonalization_seconds;
        if (m_trace != nullptr) m_trace->record(trace_phase::orthogonalization, start, stop, total + 1);

        if (!std::isfinite(next_norm) || !m_hessenberg.col(j).head(j + 1).allFinite()) {
          non_finite = true;  // column j is discarded; earlier columns are sound
          break;
        }
        m_first_row(j) = m_hessenberg(0, j);  // before rotations: row 1 of the Hessenberg matrix
        double column_norm_squared = next_norm * next_norm;
        for (int i = 0; i <= j; ++i) column_norm_squared += m_hessenberg(i, j) * m_hessenberg(i, j);

        for (int i = 0; i < j; ++i) {
          m_rotations[static_cast<std::size_t>(i)].apply(m_hessenberg(i, j), m_hessenberg(i + 1, j));
        }
        const double diagonal = m_rotations[static_cast<std::size_t>(j)].make(m_hessenberg(j, j), next_norm);
        if (diagonal == 0.0) {
          happy_breakdown = true;  // A z = 0: singular direction; drop the column
          break;
        }
        m_hessenberg(j, j) = diagonal;
        m_hessenberg(j + 1, j) = 0.0;
        const auto& rotation = m_rotations[static_cast<std::size_t>(j)];
        m_least_squares_rhs(j + 1) = -rotation.sine * m_least_squares_rhs(j);
        m_least_squares_rhs(j) = rotation.cosine * m_least_squares_rhs(j);
        estimate = std::abs(m_least_squares_rhs(j + 1));
        ++total;
        columns = j + 1;
        result.final_residual_norm = estimate;

        // Exact invariant subspace: w lies in the span of the basis.
        if (next_norm <= 4 * std::numeric_limits<double>::epsilon() * std::sqrt(column_norm_squared)) {
          happy_breakdown = true;
        } else {
          m_space.scale(1 / next_norm, m_basis[static_cast<std::size_t>(j + 1)]);
        }
        if (m_trace != nullptr) {
          const auto now = detail::clock_type::now();
          m_trace->record(trace_phase::linear_iteration, iteration_start, now, total);
          m_trace->record_counter(trace_counter::relative_linear_residual, now, estimate / b_norm);
        }
        if (!detail::keep_going(monitor(total, estimate / b_norm))) {
          stopped = true;
          break;
        }
        if (estimate <= target || happy_breakdown) break;
      }

      if (cycle == 0 && m_cauchy_target != nullptr && guess == initial_guess::zero && columns > 0) {
        cauchy_point(preconditioner, columns, beta, flexible, result);
      }
      const bool updated = update_solution(preconditioner, columns, flexible, x, result);
      result.iterations = total;
      ++cycle;
      if (!updated) {  // M⁻¹ V y was not finite: x keeps the iterate of the cycle start
        result.status = linear_solve_status::non_finite;
        result.final_residual_norm = beta;
        break;
      }

      if (estimate <= target && columns > 0) {
        result.status = linear_solve_status::converged;
        break;
      }
      if (non_finite) {
        result.status = linear_solve_status::non_finite;
        break;
      }
      if (stopped) {
        result.status = linear_solve_status::monitor_requested_stop;
        break;
      }
      if (happy_breakdown || columns == 0) {
        result.status = estimate <= target ? linear_solve_status::converged : linear_solve_status::stagnated;
        break;
      }
      if (total >= m_settings.maximum_iterations) {
        result.status = linear_solve_status::maximum_iterations_reached;
        break;
      }
      // Restart from the true residual of the current iterate.
      op.apply(static_cast<const vector_type&>(x), first);
      ++result.operator_applications;
      m_space.combine(1, b, -1, first, first);
      const double restarted = m_space.norm(first);
      ++result.restarts;
      if (!std::isfinite(restarted)) {
        result.status = linear_solve_status::non_finite;
        break;
      }
      result.final_residual_norm = restarted;
      if (restarted >= beta) {
        result.status = linear_solve_status::stagnated;
        break;
      }
      beta = restarted;
    }
    result.iterations = total;
    return result;
  }

  /// Gram–Schmidt seconds of the current or last solve, also when an
  /// exception from the operator or preconditioner ended it early (the
  /// result object is then lost; cost accounting reads this instead).
  double orthogonalization_seconds_of_last_solve() const { return m_orthogonalization_seconds; }

 private:
  /// Krylov vectors per restart cycle: restart_length, but never more than
  /// maximum_iterations (so a huge restart_length does not allocate what no
  /// cycle can use).
  int cycle_length() const { return std::min(m_settings.restart_length, m_settings.maximum_iterations); }

  /// Orthogonalises basis[j+1] against basis[0..j]; writes H(0..j, j);
  /// returns the norm of what remains.
  double orthogonalize(int j) {
    vector_type& w = m_basis[static_cast<std::size_t>(j + 1)];
    if (m_settings.orthogonalization == orthogonalization_method::classical_gram_schmidt_twice) {
      for (int pass = 0; pass < 2; ++pass) {
        dot_many(m_space, m_basis.data(), j + 1, w, m_projections.data());
        for (int i = 0; i <= j; ++i) m_space.add_scaled(-m_projections(i), m_basis[static_cast<std::size_t>(i)], w);
        if (pass == 0) {
          m_hessenberg.col(j).head(j + 1) = m_projections.head(j + 1);
        } else {
          m_hessenberg.col(j).head(j + 1) += m_projections.head(j + 1);
        }
      }
      return m_space.norm(w);
    }
    const auto policy = m_settings.reorthogonalization;
    const double norm_before = policy == reorthogonalization_policy::when_needed ? m_space.norm(w) : 0.0;
    for (int i = 0; i <= j; ++i) {
      const double h = m_space.dot(m_basis[static_cast<std::size_t>(i)], w);
      m_hessenberg(i, j) = h;
      m_space.add_scaled(-h, m_basis[static_cast<std::size_t>(i)], w);
    }
    double norm_after = m_space.norm(w);
    const bool again = policy == reorthogonalization_policy::always ||
                       (policy == reorthogonalization_policy::when_needed && norm_after < norm_before / std::sqrt(2.0));
    if (again) {
      for (int i = 0; i <= j; ++i) {
        const double h = m_space.dot(m_basis[static_cast<std::size_t>(i)], w);
        m_hessenberg(i, j) += h;
        m_space.add_scaled(-h, m_basis[static_cast<std::size_t>(i)], w);
      }
      norm_after = m_space.norm(w);
    }
    return norm_after;
  }

  /// Cauchy point of the first cycle. Model in basis coordinates:
  /// m(y) = ½‖β e₁ − H̄ y‖², gradient at 0 = −β H̄ᵀ e₁, so the descent
  /// direction is d = β (first row of H̄)ᵀ and the minimiser along it is
  /// t = ‖d‖² / ‖H̄ d‖²; ‖H̄ d‖ = ‖R d‖ because the rotations are orthogonal.
  template <class Preconditioner>
  void cauchy_point(Preconditioner& preconditioner, int columns, double beta, bool flexible,
                    linear_solve_result& result) {
    double d_squared = 0.0;
    for (int i = 0; i < columns; ++i) {
      m_coefficients(i) = beta * m_first_row(i);
      d_squared += m_coefficients(i) * m_coefficients(i);
    }
    double r_d_squared = 0.0;
    for (int i = 0; i < columns; ++i) {
      double row = 0.0;
      for (int k = i; k < columns; ++k) row += m_hessenberg(i, k) * m_coefficients(k);
      r_d_squared += row * row;
    }
    if (!(r_d_squared > 0.0) || !(d_squared > 0.0)) return;
    const double t = d_squared / r_d_squared;
    vector_type& target = *m_cauchy_target;
    if (flexible) {
      m_space.fill(0, target);
      for (int i = 0; i < columns; ++i) {
        m_space.add_scaled(t * m_coefficients(i), m_preconditioned[static_cast<std::size_t>(i)], target);
      }
    } else {
      vector_type& combination =
          std::is_same_v<std::decay_t<Preconditioner>, identity_preconditioner> ? target : m_update;
      m_space.fill(0, combination);
      for (int i = 0; i < columns; ++i) {
        m_space.add_scaled(t * m_coefficients(i), m_basis[static_cast<std::size_t>(i)], combination);
      }
      if constexpr (!std::is_same_v<std::decay_t<Preconditioner>, identity_preconditioner>) {
        preconditioner.apply(static_cast<const vector_type&>(m_update), target);
        ++result.preconditioner_applications;
        if (!m_space.all_finite(target)) return;  // no Cauchy point rather than a NaN one
      }
    }
    m_cauchy_written = true;
  }

  /// x += M⁻¹ V y (standard) or x += Z y (flexible), y from the triangular
  /// system. Returns false, leaving x unchanged, when the preconditioner turns
  /// V y into NaN/Inf (one reduction per restart cycle); the columns of Z
  /// passed through the operator already, so their finiteness is known.
  template <class Preconditioner>
  bool update_solution(Preconditioner& preconditioner, int columns, bool flexible, vector_type& x,
                       linear_solve_result& result) {
    if (columns == 0) return true;
    for (int i = columns - 1; i >= 0; --i) {  // back substitution, upper-triangular H
      double sum = m_least_squares_rhs(i);
      for (int k = i + 1; k < columns; ++k) sum -= m_hessenberg(i, k) * m_coefficients(k);
      m_coefficients(i) = sum / m_hessenberg(i, i);
    }
    if (flexible) {
      for (int i = 0; i < columns; ++i) {
        m_space.add_scaled(m_coefficients(i), m_preconditioned[static_cast<std::size_t>(i)], x);
      }
      return true;
    }
    m_space.combine(m_coefficients(0), m_basis[0], 0, m_basis[0], m_update);
    for (int i = 1; i < columns; ++i)
      m_space.add_scaled(m_coefficients(i), m_basis[static_cast<std::size_t>(i)], m_update);
    if constexpr (std::is_same_v<std::decay_t<Preconditioner>, identity_preconditioner>) {
      m_space.add_scaled(1, m_update, x);
    } else {
      preconditioner.apply(static_cast<const vector_type&>(m_update), m_work);
      ++result.preconditioner_applications;
      if (!m_space.all_finite(m_work)) return false;
      m_space.add_scaled(1, m_work, x);
    }
    return true;
  }

  Space m_space;
  gmres_settings m_settings;
  std::vector<vector_type> m_basis;
  std::vector<vector_type> m_preconditioned;
  vector_type m_work;
  vector_type m_update;
  Eigen::MatrixXd m_hessenberg;
  Eigen::VectorXd m_least_squares_rhs;
  Eigen::VectorXd m_coefficients;
  Eigen::VectorXd m_projections;
  Eigen::VectorXd m_first_row;
  std::vector<detail::givens_rotation> m_rotations;
  vector_type* m_cauchy_target = nullptr;
  trace_recorder* m_trace = nullptr;
  double m_orthogonalization_seconds = 0.0;  ///< of the current or last solve
  bool m_cauchy_written = false;
};

}  // namespace nkit

#endif  // NKIT_KRYLOV_GMRES_HPP
