#ifndef NKIT_KRYLOV_RECYCLING_GMRES_HPP
#define NKIT_KRYLOV_RECYCLING_GMRES_HPP

/// \file krylov/recycling_gmres.hpp
/// GMRES that recycles a Krylov subspace across a sequence of linear systems
/// (GCRO-DR); settings in krylov/recycling_gmres_settings.hpp.
///
/// Method: M.L. Parks, E. de Sturler, G. Mackey, D.D. Johnson & S. Maiti,
/// "Recycling Krylov subspaces for sequences of linear systems", SIAM J. Sci.
/// Comput. 28 (2006) 1651–1674, Algorithm 2.1 (GCRO-DR(m, k)); the step
/// numbers quoted below follow that listing as we recall it (from memory).
/// The solver keeps k vectors U (unit columns, stored as Ũ) and C with
/// A Ũ = C D, D diagonal, Cᵀ C = I. Each restart cycle runs m − k Arnoldi
/// steps with (I − C Cᵀ) A (step 22), minimises over [Ũ V] with the
/// upper-Hessenberg matrix Ḡ = [D B; 0 H̄] (steps 23–29), then keeps the k
/// harmonic Ritz vectors of smallest magnitude of that cycle (steps 30–34,
/// krylov/harmonic_ritz_vectors.hpp) — unless the cycle ran fewer Arnoldi
/// steps than minimum_cycle_steps_for_update and a subspace is held, which is
/// then kept as it is (our variant; default 0, every cycle updates). The
/// first cycle with no recycled space is a plain GMRES(m) cycle (steps
/// 9–18); with recycle_dimension = 0 the solver is GMRES(m) (same Krylov
/// spaces as krylov/gmres.hpp).
///
/// A new system: the kept Ũ is carried over (step 36, Ỹ = U); unless the
/// caller declared the operator unchanged (next_solve_uses_same_operator()),
/// C is recomputed as A Ũ and re-orthonormalised, U = Ũ R⁻¹ (steps 3–5, the
/// paper's handling of a changed matrix; k operator and preconditioner
/// applications, counted in operator_applications, not in iterations).
///
/// Right preconditioning as in gmres.hpp: the method runs on A M⁻¹, Ũ and V
/// live in that space, x = x0 + M⁻¹ (Ũ y_U + V y_V) (one M⁻¹ per cycle), and the
/// residual minimised is b − A x. While C may be an earlier operator's (declared
/// same operator), convergence needs the true residual: when the estimate meets
/// the target, b − A x is formed; on a miss C is recomputed and the solve goes
/// on. Once C is of this operator (or none is kept) the estimate is accepted as
/// in gmres.hpp, even where b − A x differs (finite-difference J·v is not
/// exactly linear). Each cycle starts from the true residual (one product);
/// its component in range(C) enters the least-squares right-hand side Ŵᵀ r
/// (step 27) instead of a separate projection step (steps 6–7; same iterate in
/// exact arithmetic). The preconditioner must not change between
/// applications within a solve (no flexible variant).
///
/// Memory: m + 1 + 4k vectors plus two work vectors, O(m²) doubles and an m × m
/// dense eigenproblem workspace, all sized on the first solve (or
/// allocate_like()); later solves of the same size allocate nothing (checked for
/// m = 12 by tests/allocation; for m > 48 Eigen 3.4's blocked Householder path in
/// its eigenvalue solver allocates a small matrix per cycle: read, not measured).

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <stdexcept>
#include <string>
#include <string_view>
#include <type_traits>
#include <utility>
#include <vector>

#include "../core/eigen_vector_space.hpp"
#include "../core/linear_operator.hpp"
#include "../core/preconditioner.hpp"
#include "../core/vector_space.hpp"
#include "../detail/checks.hpp"
#include "../detail/dense_gram_schmidt.hpp"
#include "../detail/givens.hpp"
#include "../detail/timer.hpp"
#include "../report/monitor.hpp"
#include "gmres.hpp"
#include "harmonic_ritz_vectors.hpp"
#include "recycled_subspace_refresh.hpp"
#include "recycling_gmres_settings.hpp"

namespace nkit {

template <class Space = eigen_vector_space<double>>
class recycling_gmres_solver {
 public:
  using vector_type = typename Space::vector_type;
  using scalar_type = typename Space::scalar_type;

  explicit recycling_gmres_solver(recycling_gmres_settings settings = {}, Space space = {})
      : m_space(std::move(space)) {
    configure(settings);
  }

  /// Validates and stores the settings (std::invalid_argument naming the
  /// field); a change of restart_length or recycle_dimension drops the
  /// recycled subspace.
  void configure(const recycling_gmres_settings& settings) {
    settings.validate();
    if (settings.restart_length != m_settings.restart_length ||
        settings.recycle_dimension != m_settings.recycle_dimension) {
      m_recycled_count = 0;
    }
    m_settings = settings;
  }
  const recycling_gmres_settings& settings() const { return m_settings; }
  const Space& space() const { return m_space; }

  /// Number of recycled vectors currently held (0 before the first solve).
  int recycled_dimension() const { return m_recycled_count; }
  /// Forgets the recycled subspace (keeps the memory).
  void discard_recycled_subspace() { m_recycled_count = 0; }
  /// Bytes of vector and dense workspace currently held (the dense
  /// eigenproblem's own workspace, O(m²), is not counted).
  std::size_t workspace_bytes() const {
    const std::size_t vector_count =
        m_basis.size() + m_recycled.size() + m_images.size() + m_new_recycled.size() + m_new_images.size() + 2;
    const std::size_t length = m_basis.empty() ? 0 : static_cast<std::size_t>(m_basis.front().size());
    const std::size_t dense = static_cast<std::size_t>(
        m_extended.size() + m_triangular.size() + m_cross.size() + m_right_hand_side.size() + m_coefficients.size() +
        m_scaling.size() + m_kept_images.size() + m_kept_factor.size() + m_kept_coordinates.size());
    return sizeof(scalar_type) * (vector_count * length + dense + 2 * m_rotations.size());
  }
  /// Declares that the next solve uses the same operator and preconditioner
  /// (the same A M⁻¹) as the previous one, so C = A M⁻¹ Ũ still holds and
  /// is not recomputed. Applies to the next solve only.
  void next_solve_uses_same_operator() { m_same_operator = true; }

  /// Allocates the workspace for vectors shaped like `prototype`. A new size
  /// drops the recycled subspace.
  void allocate_like(const vector_type& prototype) {
    const int m = cycle_length();
    const int k = m_settings.recycle_dimension;
    if (!m_recycled.empty() && m_recycled.front().size() != prototype.size()) m_recycled_count = 0;
    resize_set(m_basis, m + 1, prototype);
    resize_set(m_recycled, k, prototype);
    resize_set(m_images, k, prototype);
    resize_set(m_new_recycled, k, prototype);
    resize_set(m_new_images, k, prototype);
    m_space.allocate_like(m_work, prototype);
    m_space.allocate_like(m_update, prototype);
    if (m_sources.size() != static_cast<std::size_t>(m + 1 + k)) m_sources.resize(static_cast<std::size_t>(m + 1 + k));
    if (m_targets.size() != static_cast<std::size_t>(k)) m_targets.resize(static_cast<std::size_t>(k));  // k may be 0
    const Eigen::Index rows = Eigen::Index{m} + 1;
    if (m_extended.rows() != rows || m_scaling.size() != k) {
      m_extended.resize(rows, m);
      m_triangular.resize(rows, m);
      m_cross.resize(rows, m);
      m_right_hand_side.resize(rows);
      m_coefficients.resize(m);
      m_rotations.assign(static_cast<std::size_t>(m), detail::givens_rotation{});
      m_scaling.resize(k);
      m_kept_images.resize(rows, k);
      m_kept_factor.resize(k, k);
      m_kept_coordinates.resize(m, k);
    }
    if (k > 0) m_ritz.allocate(m, k);
  }

  /// Solves A x = b until ‖b − A x‖ <= relative_tolerance · ‖b‖, with the
  /// arguments and result of gmres_solver::solve (iterations = Arnoldi steps;
  /// operator_applications also counts the restart residuals and the k
  /// products that refresh C for a new operator). Collective on a distributed
  /// space. x holds the best iterate built from finite data on every status.
  template <class Operator, class Preconditioner, class LinearMonitor = null_linear_monitor>
  linear_solve_result solve(Operator& op, Preconditioner& preconditioner, const vector_type& b, vector_type& x,
                            double relative_tolerance, initial_guess guess = initial_guess::given,
                            LinearMonitor&& monitor = {}) {
    static_assert(is_linear_operator_v<Operator, vector_type>,
                  "nkit: the operator must have apply(const vector_type& in, vector_type& out)");
    if (!(relative_tolerance >= 0.0)) {
      detail::throw_invalid_setting("recycling_gmres_solver::solve relative_tolerance", ">= 0", relative_tolerance);
    }
    if (changes_between_applications(preconditioner)) {
      throw std::invalid_argument(
          "nkit: recycling_gmres_solver needs a preconditioner that stays the same between applications "
          "(this one declares changes_between_applications)");
    }
    const bool same_operator = m_same_operator;
    m_same_operator = false;
    allocate_like(b);
    linear_solve_result result = run(op, preconditioner, b, x, relative_tolerance, guess, monitor, same_operator);
    if (!m_settings.keep_recycled_subspace) m_recycled_count = 0;
    return result;
  }

  /// Same, with settings().relative_tolerance.
  template <class Operator, class Preconditioner, class LinearMonitor = null_linear_monitor>
  linear_solve_result solve(Operator& op, Preconditioner& preconditioner, const vector_type& b, vector_type& x,
                            initial_guess guess = initial_guess::given, LinearMonitor&& monitor = {}) {
    return solve(op, preconditioner, b, x, m_settings.relative_tolerance, guess, std::forward<LinearMonitor>(monitor));
  }

 private:
  /// Vectors of one cycle: restart_length, but never more than a cycle can use
  /// (k recycled plus maximum_iterations Arnoldi steps), so a huge
  /// restart_length does not allocate what no cycle needs (as gmres_solver).
  int cycle_length() const {
    return static_cast<int>(
        std::min<long long>(m_settings.restart_length,
                            static_cast<long long>(m_settings.recycle_dimension) + m_settings.maximum_iterations));
  }

  void resize_set(std::vector<vector_type>& set, int count, const vector_type& prototype) {
    if (set.size() != static_cast<std::size_t>(count)) set.resize(static_cast<std::size_t>(count));
    for (auto& v : set) m_space.allocate_like(v, prototype);
  }

  /// out = A M⁻¹ in (`m_work` holds M⁻¹ in).
  template <class Operator, class Preconditioner>
  void apply_preconditioned(Operator& op, Preconditioner& preconditioner, const vector_type& in, vector_type& out,
                            linear_solve_result& result) {
    if constexpr (std::is_same_v<std::decay_t<Preconditioner>, identity_preconditioner>) {
      op.apply(in, out);
    } else {
      preconditioner.apply(in, m_work);
      ++result.preconditioner_applications;
      op.apply(static_cast<const vector_type&>(m_work), out);
    }
    ++result.operator_applications;
  }

  template <class Operator, class Preconditioner, class LinearMonitor>
  linear_solve_result run(Operator& op, Preconditioner& preconditioner, const vector_type& b, vector_type& x,
                          double relative_tolerance, initial_guess guess, LinearMonitor& monitor, bool same_operator) {
    linear_solve_result result;
    const double b_norm = m_space.norm(b);
    result.right_hand_side_norm = b_norm;
    // An early return skips the refresh of C: the next solve must refresh it.
    if (!same_operator && (!std::isfinite(b_norm) || b_norm == 0.0)) m_images_stale = true;
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
    // False while C = A M⁻¹ Ũ may be an earlier operator's (declared same operator).
    bool images_from_this_operator = m_recycled_count == 0;
    if (m_recycled_count > 0 && (!same_operator || m_images_stale)) {
      if (!refresh_images(op, preconditioner, result)) m_recycled_count = 0;
      images_from_this_operator = true;
    }
    m_images_stale = false;

    vector_type& residual = m_update;  // the cycle's starting residual lives here until the update
    double beta = b_norm;
    if (guess == initial_guess::zero) {
      m_space.fill(0, x);
      m_space.copy(b, residual);
    } else {
      beta = true_residual(op, b, x, result);
    }
    result.initial_residual_norm = result.final_residual_norm = beta;
    if (!std::isfinite(beta)) {
      result.status = linear_solve_status::non_finite;
      return result;
    }

    const int m = cycle_length();
    int total = 0;
    int total_at_last_mismatch = -1;  // no progress since the last estimate/true mismatch: stagnated
    while (true) {
      if (beta <= target) {
        result.status = linear_solve_status::converged;
        break;
      }
      if (total >= m_settings.maximum_iterations) {
        result.status = linear_solve_status::maximum_iterations_reached;
        break;
      }
      const int kept = m_recycled_count;
      // Least-squares right-hand side Ŵᵀ r = [Cᵀ r; ‖(I − C Cᵀ) r‖ e₁] (step 27)
      // and the first Arnoldi vector v₁ = (I − C Cᵀ) r / ‖·‖ (step 22).
      m_right_hand_side.setZero();
      m_extended.setZero();
      vector_type& first = m_basis[0];
      m_space.copy(static_cast<const vector_type&>(residual), first);
      for (int i = 0; i < kept; ++i) {
        const double h = m_space.dot(m_images[static_cast<std::size_t>(i)], first);
        m_right_hand_side(i) = h;
        m_space.add_scaled(-h, m_images[static_cast<std::size_t>(i)], first);
        m_extended(i, i) = m_scaling(i);  // the D block of Ḡ (step 26)
      }
      const double first_norm = m_space.norm(first);
      const bool start_arnoldi = first_norm > 4 * std::numeric_limits<double>::epsilon() * beta;
      if (start_arnoldi) m_space.scale(1 / first_norm, first);
      m_right_hand_side(kept) = start_arnoldi ? first_norm : 0.0;
      m_triangular = m_extended;
      double estimate = start_arnoldi ? first_norm : 0.0;
      int columns = 0;
      bool happy_breakdown = !start_arnoldi;
      bool non_finite = false;
      bool stopped = false;

      const int steps = m - kept;  // step 22: m − k Arnoldi steps
      for (int j = 0; start_arnoldi && j < steps && total < m_settings.maximum_iterations; ++j) {
        vector_type& w = m_basis[static_cast<std::size_t>(j + 1)];
        apply_preconditioned(op, preconditioner, m_basis[static_cast<std::size_t>(j)], w, result);
        const auto start = detail::clock_type::now();
        const double next_norm = orthogonalize(kept, j);
        result.orthogonalization_seconds += detail::seconds_between(start, detail::clock_type::now());
        const int column = kept + j;
        if (!std::isfinite(next_norm) || !m_extended.col(column).head(column + 1).allFinite()) {
          non_finite = true;
          m_extended.col(column).setZero();
          break;
        }
        m_extended(column + 1, column) = next_norm;
        // Givens QR of Ḡ, which is upper Hessenberg: rotation i acts on rows
        // kept + i and kept + i + 1; the D block needs none.
        m_triangular.col(column) = m_extended.col(column);
        for (int i = 0; i < j; ++i) {
          m_rotations[static_cast<std::size_t>(i)].apply(m_triangular(kept + i, column),
                                                         m_triangular(kept + i + 1, column));
        }
        const double diagonal = m_rotations[static_cast<std::size_t>(j)].make(m_triangular(column, column), next_norm);
        if (diagonal == 0.0) {
          happy_breakdown = true;  // A M⁻¹ v = 0 after projection: singular direction; drop the column
          m_extended.col(column).setZero();
          break;
        }
        m_triangular(column, column) = diagonal;
        m_triangular(column + 1, column) = 0.0;
        const auto& rotation = m_rotations[static_cast<std::size_t>(j)];
        m_right_hand_side(column + 1) = -rotation.sine * m_right_hand_side(column);
        m_right_hand_side(column) = rotation.cosine * m_right_hand_side(column);
        estimate = std::abs(m_right_hand_side(column + 1));
        ++total;
        columns = j + 1;
        result.final_residual_norm = estimate;
        double column_norm_squared = next_norm * next_norm;
        for (int i = 0; i <= column; ++i) column_norm_squared += m_extended(i, column) * m_extended(i, column);
        if (next_norm <= 4 * std::numeric_limits<double>::epsilon() * std::sqrt(column_norm_squared)) {
          happy_breakdown = true;  // invariant subspace: the new direction adds nothing
          m_extended(column + 1, column) = 0.0;
          m_space.fill(0, w);
        } else {
          m_space.scale(1 / next_norm, w);
        }
        if (!detail::keep_going(monitor(total, estimate / b_norm))) {
          stopped = true;
          break;
        }
        if (estimate <= target || happy_breakdown) break;
      }

      const int n = kept + columns;
      const bool updated = update_solution(preconditioner, kept, columns, x, result);  // steps 28–29
      if (!updated) {
        result.status = linear_solve_status::non_finite;
        result.final_residual_norm = beta;
        break;
      }
      const bool short_cycle = kept > 0 && columns < m_settings.minimum_cycle_steps_for_update;
      if (m_settings.recycle_dimension > 0 && columns > 0 && !short_cycle) {
        if (choose_recycled_subspace(kept, columns, n)) {
          if (kept == 0) images_from_this_operator = true;  // from this operator's Arnoldi relation
        } else {
          ++result.recycle_updates_skipped;
        }
      }
      if (n > 0 && estimate <= target) {
        // The Givens estimate met the target: converged only if the true
        // residual does. Otherwise C = A M⁻¹ Ũ may not hold (e.g. a wrong
        // next_solve_uses_same_operator()): recompute C, continue from b − A x.
        const double checked = true_residual(op, b, x, result);
        result.final_residual_norm = checked;
        if (!std::isfinite(checked)) {
          result.status = linear_solve_status::non_finite;
          break;
        }
        if (checked <= target) {
          result.status = linear_solve_status::converged;
          break;
        }
        ++result.true_residual_mismatches;
        if (images_from_this_operator) {
          // C is of this operator (or none is kept): the miss comes from products
          // not linear to the target's accuracy (finite-difference J·v on an
          // ill-conditioned Jacobian). Re-checking after each further Arnoldi step
          // repeats it (thousands of one-step cycles on the 384² model problem);
          // accept GMRES's estimate, as gmres_solver does (file comment).
          result.status = linear_solve_status::converged;
          result.final_residual_norm = estimate;
          break;
        }
        if (total == total_at_last_mismatch || total >= m_settings.maximum_iterations) {
          result.status = total == total_at_last_mismatch ? linear_solve_status::stagnated
                                                          : linear_solve_status::maximum_iterations_reached;
          break;
        }
        total_at_last_mismatch = total;
        if (!refresh_images(op, preconditioner, result)) m_recycled_count = 0;
        images_from_this_operator = true;
        ++result.restarts;
        beta = checked;
        continue;
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
      // Next cycle from the true residual of the current iterate.
      const double restarted = true_residual(op, b, x, result);
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

  /// m_update = b − A x (one operator application); returns its norm.
  template <class Operator>
  double true_residual(Operator& op, const vector_type& b, const vector_type& x, linear_solve_result& result) {
    op.apply(x, m_update);
    ++result.operator_applications;
    m_space.combine(1, b, -1, m_update, m_update);
    return m_space.norm(m_update);
  }

  /// Orthogonalises basis[j+1] against C (into the B block of Ḡ, rows
  /// 0..kept−1) and V_0..V_j (the H̄ block), modified Gram–Schmidt with the
  /// re-orthogonalisation policy; returns the norm of what remains.
  double orthogonalize(int kept, int j) {
    vector_type& w = m_basis[static_cast<std::size_t>(j + 1)];
    const int column = kept + j;
    const auto policy = m_settings.reorthogonalization;
    const double norm_before = policy == reorthogonalization_policy::when_needed ? m_space.norm(w) : 0.0;
    const auto pass = [&](bool first_pass) {
      for (int i = 0; i < kept + j + 1; ++i) {
        const vector_type& q =
            i < kept ? m_images[static_cast<std::size_t>(i)] : m_basis[static_cast<std::size_t>(i - kept)];
        const double h = m_space.dot(q, w);
        m_extended(i, column) = first_pass ? h : m_extended(i, column) + h;
        m_space.add_scaled(-h, q, w);
      }
    };
    pass(true);
    double norm_after = m_space.norm(w);
    if (policy == reorthogonalization_policy::always ||
        (policy == reorthogonalization_policy::when_needed && norm_after < norm_before / std::sqrt(2.0))) {
      pass(false);
      norm_after = m_space.norm(w);
    }
    return norm_after;
  }

  /// y from the triangular system, then x += M⁻¹ (Ũ y_U + V y_V) (steps 27–28).
  /// Returns false, leaving x unchanged, when M⁻¹ of the update is not finite.
  template <class Preconditioner>
  bool update_solution(Preconditioner& preconditioner, int kept, int columns, vector_type& x,
                       linear_solve_result& result) {
    const int n = kept + columns;
    if (n == 0) return true;
    for (int i = n - 1; i >= 0; --i) {
      double sum = m_right_hand_side(i);
      for (int l = i + 1; l < n; ++l) sum -= m_triangular(i, l) * m_coefficients(l);
      m_coefficients(i) = sum / m_triangular(i, i);
    }
    for (int i = 0; i < kept; ++i) m_sources[static_cast<std::size_t>(i)] = &m_recycled[static_cast<std::size_t>(i)];
    for (int i = 0; i < columns; ++i) {
      m_sources[static_cast<std::size_t>(kept + i)] = &m_basis[static_cast<std::size_t>(i)];
    }
    vector_type* update = &m_update;
    linear_combinations(m_space, m_sources.data(), n, m_coefficients.data(), n, &update, 1);
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

  /// Steps 30–34: P = harmonic Ritz coordinates, Ḡ P = Q R, U = V̂ P R⁻¹,
  /// C = Ŵ Q; then Ũ = U D (unit columns) with A Ũ = C D.
  /// Returns false when no usable vector was found (the previous subspace kept).
  bool choose_recycled_subspace(int kept, int columns, int n) {
    // Ŵᵀ V̂ with Ŵ = [C V_0..V_columns], V̂ = [Ũ V_0..V_{columns−1}]: the
    // identity on the V block, Cᵀ V = 0 by construction, two dense blocks with Ũ.
    m_cross.topLeftCorner(n + 1, n).setZero();
    for (int i = 0; i < columns; ++i) m_cross(kept + i, kept + i) = 1.0;
    for (int j = 0; j < kept; ++j) {
      const vector_type& u = m_recycled[static_cast<std::size_t>(j)];
      // Column j of Ŵᵀ V̂ is contiguous: two fused reductions on a distributed space.
      dot_many(m_space, m_images.data(), kept, u, m_cross.col(j).data());
      dot_many(m_space, m_basis.data(), columns + 1, u, m_cross.col(j).data() + kept);
    }
    const int wanted = m_settings.recycle_dimension;
    int found = m_ritz.compute(m_extended, m_triangular, m_cross, n, wanted);
    if (found == 0) return false;  // keep the previous subspace
    const Eigen::MatrixXd& p = m_ritz.vectors();
    // Ḡ P, then modified Gram–Schmidt twice: Ḡ P = Q R (step 32).
    for (int c = 0; c < found; ++c) {
      for (int r = 0; r <= n; ++r) {
        double value = 0.0;
        for (int l = 0; l < n; ++l) value += m_extended(r, l) * p(l, c);
        m_kept_images(r, c) = value;
      }
    }
    m_kept_factor.setZero();
    // Ḡ P numerically rank deficient: keep its leading independent columns.
    found = detail::dense_gram_schmidt_qr(m_kept_images, m_kept_factor, n + 1, found);
    if (found == 0) return false;  // keep the previous subspace
    // Coordinates of U = V̂ P R⁻¹ (step 34): solve Φ R = P row by row.
    for (int r = 0; r < n; ++r) {
      for (int c = 0; c < found; ++c) {
        double value = p(r, c);
        for (int l = 0; l < c; ++l) value -= m_kept_coordinates(r, l) * m_kept_factor(l, c);
        m_kept_coordinates(r, c) = value / m_kept_factor(c, c);
      }
    }
    // U = [Ũ V] Φ and C = [C V] Q (steps 33–34), each in one pass over memory.
    for (int i = 0; i < kept; ++i) m_sources[static_cast<std::size_t>(i)] = &m_recycled[static_cast<std::size_t>(i)];
    for (int i = 0; i <= columns; ++i) {
      m_sources[static_cast<std::size_t>(kept + i)] = &m_basis[static_cast<std::size_t>(i)];
    }
    for (int c = 0; c < found; ++c)
      m_targets[static_cast<std::size_t>(c)] = &m_new_recycled[static_cast<std::size_t>(c)];
    linear_combinations(m_space, m_sources.data(), kept + columns, m_kept_coordinates.data(),
                        static_cast<int>(m_kept_coordinates.rows()), m_targets.data(), found);
    for (int i = 0; i < kept; ++i) m_sources[static_cast<std::size_t>(i)] = &m_images[static_cast<std::size_t>(i)];
    for (int c = 0; c < found; ++c) m_targets[static_cast<std::size_t>(c)] = &m_new_images[static_cast<std::size_t>(c)];
    linear_combinations(m_space, m_sources.data(), kept + columns + 1, m_kept_images.data(),
                        static_cast<int>(m_kept_images.rows()), m_targets.data(), found);
    for (int c = 0; c < found; ++c) {
      std::swap(m_recycled[static_cast<std::size_t>(c)], m_new_recycled[static_cast<std::size_t>(c)]);
      std::swap(m_images[static_cast<std::size_t>(c)], m_new_images[static_cast<std::size_t>(c)]);
      const double norm = m_space.norm(m_recycled[static_cast<std::size_t>(c)]);
      m_space.scale(1 / norm, m_recycled[static_cast<std::size_t>(c)]);
      m_scaling(c) = 1 / norm;  // D (step 23)
    }
    m_recycled_count = found;
    return true;
  }

  /// Steps 3–5 for a changed operator (krylov/recycled_subspace_refresh.hpp).
  /// Returns false when nothing usable remains.
  template <class Operator, class Preconditioner>
  bool refresh_images(Operator& op, Preconditioner& preconditioner, linear_solve_result& result) {
    const auto apply = [&](const vector_type& in, vector_type& out) {
      apply_preconditioned(op, preconditioner, in, out, result);
    };
    ++result.recycled_space_refreshes;
    m_recycled_count =
        detail::refresh_recycled_subspace(m_space, apply, m_recycled_count, m_recycled, m_images, m_new_recycled,
                                          m_kept_factor, m_kept_coordinates, m_scaling, m_sources, m_targets);
    return m_recycled_count > 0;
  }

  Space m_space;
  recycling_gmres_settings m_settings;
  std::vector<vector_type> m_basis;         ///< V: m + 1 Arnoldi vectors
  std::vector<vector_type> m_recycled;      ///< Ũ: unit columns, A M⁻¹ Ũ = C D
  std::vector<vector_type> m_images;        ///< C: orthonormal
  std::vector<vector_type> m_new_recycled;  ///< scratch for the next Ũ
  std::vector<vector_type> m_new_images;    ///< scratch for the next C
  vector_type m_work;
  vector_type m_update;
  Eigen::MatrixXd m_extended;    ///< Ḡ of the cycle, unrotated (rows n + 1, columns n)
  Eigen::MatrixXd m_triangular;  ///< Ḡ after the Givens rotations
  Eigen::MatrixXd m_cross;       ///< Ŵᵀ V̂
  Eigen::VectorXd m_right_hand_side;
  Eigen::VectorXd m_coefficients;
  Eigen::VectorXd m_scaling;           ///< diagonal of D
  Eigen::MatrixXd m_kept_images;       ///< Q of Ḡ P = Q R
  Eigen::MatrixXd m_kept_factor;       ///< R
  Eigen::MatrixXd m_kept_coordinates;  ///< P R⁻¹
  std::vector<detail::givens_rotation> m_rotations;
  std::vector<const vector_type*> m_sources;  ///< inputs of one linear_combinations call
  std::vector<vector_type*> m_targets;        ///< its outputs
  detail::harmonic_ritz_vectors m_ritz;
  int m_recycled_count = 0;
  bool m_same_operator = false;
  bool m_images_stale = false;  ///< C = A M⁻¹ Ũ not refreshed for the last operator (early return)
};

}  // namespace nkit

#endif  // NKIT_KRYLOV_RECYCLING_GMRES_HPP
