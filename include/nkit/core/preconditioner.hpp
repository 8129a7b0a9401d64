#ifndef NKIT_CORE_PRECONDITIONER_HPP
#define NKIT_CORE_PRECONDITIONER_HPP

/// \file core/preconditioner.hpp
/// The preconditioner concept, the identity preconditioner, adapters for
/// lambdas and a type-erased wrapper for run-time selection.
///
/// A preconditioner is any object with
///   void apply(const vector_type& r, vector_type& z)      z = M⁻¹ r, no allocation
/// and optionally
///   setup_status setup(const preconditioner_context<Space>& context)   (or void)
///       called by the Newton driver when its reuse policy asks for a rebuild
///   std::size_t memory_bytes() const                      factor storage, for the report
///   static constexpr bool changes_between_applications = true;
///       the operator M⁻¹ varies from one apply to the next (an inner
///       iteration): the solver then uses flexible GMRES.
///   void apply_transpose(const vector_type& r, vector_type& z)   z = M⁻ᵀ r, no allocation
///       the transposed preconditioner, for solves with the transposed
///       Jacobian (adjoint sensitivities, sensitivity/adjoint_sensitivity.hpp);
///       ⟨M⁻¹ v, w⟩ = ⟨v, M⁻ᵀ w⟩ must hold to rounding.
/// apply() is called once per GMRES iteration: keep it a template parameter
/// of the solver for zero overhead, or use any_preconditioner to choose at
/// run time (one virtual call per application). Lambdas plug in through
/// make_preconditioner(apply[, setup]); make_varying_preconditioner() does
/// the same and declares changes_between_applications. Built-in
/// preconditioners live in preconditioners/ (one header each).

#include <Eigen/SparseCore>
#include <cstddef>
#include <functional>
#include <memory>
#include <stdexcept>
#include <type_traits>
#include <utility>

#include "eigen_vector_space.hpp"
#include "linear_operator.hpp"

namespace nkit {

/// Assembled sparse Jacobian storage used across nkit: compressed rows.
using sparse_matrix = Eigen::SparseMatrix<double, Eigen::RowMajor, int>;

/// Result of a preconditioner setup.
enum class setup_status {
  ready,                ///< built as requested
  ready_with_fallback,  ///< the requested factor failed (e.g. zero pivot); a documented fallback was built
  failed  ///< nothing usable could be built; the solve stops with stop_reason::preconditioner_setup_failed
};

/// Gives a preconditioner the assembled Jacobian on demand. The Newton driver
/// implements it when the problem can assemble one (analytic callback or
/// colored finite differences); assembly happens at most once per setup.
class jacobian_source {
 public:
  virtual ~jacobian_source() = default;
  /// R'(u) at the context's state, plus the pseudo-time diagonal when one is active.
  virtual const sparse_matrix& assembled_jacobian() = 0;
  /// Frees the storage of the matrix assembled_jacobian() returned, when the
  /// caller has copied all it needs: references to it become invalid, and a
  /// later assembled_jacobian() assembles again into new storage. Sources
  /// that do not own their matrix ignore it.
  virtual void release_assembled_jacobian() {}
};

/// What the driver knows when it asks a preconditioner to set up.
template <class Space = eigen_vector_space<double>>
struct preconditioner_context {
  using vector_type = typename Space::vector_type;
  const Space& space;
  const vector_type& state;     ///< u at which the Jacobian is linearised
  const vector_type& residual;  ///< R(u)
  int newton_step = 0;          ///< index of the Newton step about to be taken (0-based)
  /// When not null, the linear operator is R'(u) + diag(diagonal_shift): the
  /// pseudo-transient term. Preconditioners that build from the state (not
  /// from assembled_jacobian(), which already includes it) must add it.
  const vector_type* diagonal_shift = nullptr;
  /// Null when no assembled Jacobian can be produced for this problem.
  jacobian_source* jacobian = nullptr;

  bool has_jacobian() const { return jacobian != nullptr; }
  /// The assembled Jacobian; throws std::logic_error when none is available.
  const sparse_matrix& assembled_jacobian() const {
    if (jacobian == nullptr) {
      throw std::logic_error(
          "nkit: this preconditioner needs an assembled Jacobian, but the problem provides neither "
          "assemble_jacobian() nor a sparsity pattern for colored finite differences");
    }
    return jacobian->assembled_jacobian();
  }
  /// Lets the driver free its assembled Jacobian (jacobian_source::
  /// release_assembled_jacobian) once this preconditioner has copied what it
  /// needs. Saves the matrix's memory between setups; the price is a fresh
  /// allocation at the next assembly. No effect without a Jacobian source.
  void release_assembled_jacobian() const {
    if (jacobian != nullptr) jacobian->release_assembled_jacobian();
  }
};

/// M = I. GMRES recognises it and skips the copy.
struct identity_preconditioner {
  template <class Vector>
  void apply(const Vector& r, Vector& z) const {
    z = r;
  }
  template <class Vector>
  void apply_transpose(const Vector& r, Vector& z) const {
    z = r;
  }
};

namespace detail {

template <class P, class Context, class = void>
struct has_setup : std::false_type {};
template <class P, class Context>
struct has_setup<P, Context, std::void_t<decltype(std::declval<P&>().setup(std::declval<const Context&>()))>>
    : std::true_type {};

template <class P, class = void>
struct has_memory_bytes : std::false_type {};
template <class P>
struct has_memory_bytes<P, std::void_t<decltype(std::declval<const P&>().memory_bytes())>> : std::true_type {};

template <class P, class = void>
struct declares_changes : std::false_type {};
template <class P>
struct declares_changes<P, std::void_t<decltype(P::changes_between_applications)>>
    : std::bool_constant<P::changes_between_applications> {};

template <class P, class Vector, class = void>
struct has_apply_transpose : std::false_type {};
template <class P, class Vector>
struct has_apply_transpose<
    P, Vector,
    std::void_t<decltype(std::declval<P&>().apply_transpose(std::declval<const Vector&>(), std::declval<Vector&>()))>>
    : std::true_type {};

template <class P, class = void>
struct has_runtime_changes : std::false_type {};
template <class P>
struct has_runtime_changes<P, std::void_t<decltype(std::declval<const P&>().changes_between_applications())>>
    : std::true_type {};

}  // namespace detail

/// The preconditioner object a solver works with: the object itself, or the
/// one a std::reference_wrapper or std::unique_ptr refers to. Those two let a
/// solver use a preconditioner that cannot be moved (one holding an Eigen
/// sparse solver, say): newton_krylov_solver<Space, std::reference_wrapper<P>>
/// with std::ref(p), or newton_krylov_solver<Space, std::unique_ptr<P>>.
template <class P>
struct preconditioner_target {
  using type = P;
  static P& get(P& p) { return p; }
  static const P& get(const P& p) { return p; }
};
template <class P>
struct preconditioner_target<std::reference_wrapper<P>> {
  using type = P;
  static P& get(const std::reference_wrapper<P>& p) { return p.get(); }
};
template <class P, class Deleter>
struct preconditioner_target<std::unique_ptr<P, Deleter>> {
  using type = P;
  static P& get(const std::unique_ptr<P, Deleter>& p) { return *p; }
};

/// Calls p.setup(context) when it exists; maps a void setup to ready.
template <class Preconditioner, class Space>
setup_status setup_preconditioner(Preconditioner& preconditioner, const preconditioner_context<Space>& context) {
  if constexpr (detail::has_setup<Preconditioner, preconditioner_context<Space>>::value) {
    using result = decltype(preconditioner.setup(context));
    if constexpr (std::is_same_v<result, setup_status>) {
      return preconditioner.setup(context);
    } else {
      preconditioner.setup(context);
      return setup_status::ready;
    }
  } else {
    static_cast<void>(context);
    return setup_status::ready;
  }
}

/// True when `Preconditioner` has a setup step (so the driver schedules rebuilds).
template <class Preconditioner, class Space>
inline constexpr bool has_setup_v = detail::has_setup<Preconditioner, preconditioner_context<Space>>::value;

/// Bytes held by the preconditioner (0 when it does not say).
template <class Preconditioner>
std::size_t preconditioner_memory_bytes(const Preconditioner& preconditioner) {
  if constexpr (detail::has_memory_bytes<Preconditioner>::value) {
    return static_cast<std::size_t>(preconditioner.memory_bytes());
  } else {
    static_cast<void>(preconditioner);
    return 0;
  }
}

/// Whether GMRES must use its flexible variant with this preconditioner.
template <class Preconditioner>
bool changes_between_applications(const Preconditioner& preconditioner) {
  if constexpr (detail::has_runtime_changes<Preconditioner>::value) {
    return preconditioner.changes_between_applications();
  } else {
    static_cast<void>(preconditioner);
    return detail::declares_changes<Preconditioner>::value;
  }
}

/// True when `Preconditioner` has apply(const Vector& r, Vector& z): the one
/// member every preconditioner needs.
template <class Preconditioner, class Vector>
inline constexpr bool is_preconditioner_v = detail::is_linear_operator_impl<Preconditioner, Vector>::value;

/// True when `Preconditioner` has the optional apply_transpose(const Vector& r, Vector& z): z = M⁻ᵀ r.
template <class Preconditioner, class Vector>
inline constexpr bool has_apply_transpose_v = detail::has_apply_transpose<Preconditioner, Vector>::value;

/// Adapts an apply-only callable `apply(r, z)` (and optionally a setup
/// callable `setup(context)`) into a preconditioner. `Varies` = true
/// declares that the operator changes between applications (an inner
/// iteration), so GMRES uses its flexible variant.
template <class Apply, class Setup = std::nullptr_t, bool Varies = false>
class callable_preconditioner {
 public:
  static constexpr bool changes_between_applications = Varies;

  callable_preconditioner(Apply apply, Setup setup) : m_apply(std::move(apply)), m_setup(std::move(setup)) {}
  template <class Vector>
  void apply(const Vector& r, Vector& z) {
    m_apply(r, z);
  }
  template <class Space>
  setup_status setup(const preconditioner_context<Space>& context) {
    if constexpr (std::is_same_v<Setup, std::nullptr_t>) {
      static_cast<void>(context);
      return setup_status::ready;
    } else if constexpr (std::is_same_v<decltype(m_setup(context)), setup_status>) {
      return m_setup(context);
    } else {
      m_setup(context);
      return setup_status::ready;
    }
  }

 private:
  Apply m_apply;
  Setup m_setup;
};

/// make_preconditioner(apply) or make_preconditioner(apply, setup).
template <class Apply>
callable_preconditioner<std::decay_t<Apply>> make_preconditioner(Apply&& apply) {
  return {std::forward<Apply>(apply), nullptr};
}
template <class Apply, class Setup>
callable_preconditioner<std::decay_t<Apply>, std::decay_t<Setup>> make_preconditioner(Apply&& apply, Setup&& setup) {
  return {std::forward<Apply>(apply), std::forward<Setup>(setup)};
}

/// make_varying_preconditioner(apply) or (apply, setup): as
/// make_preconditioner, for an `apply` whose result is not a fixed linear
/// function of r (e.g. a few inner Krylov iterations); the solver then uses
/// flexible GMRES.
template <class Apply>
callable_preconditioner<std::decay_t<Apply>, std::nullptr_t, true> make_varying_preconditioner(Apply&& apply) {
  return {std::forward<Apply>(apply), nullptr};
}
template <class Apply, class Setup>
callable_preconditioner<std::decay_t<Apply>, std::decay_t<Setup>, true> make_varying_preconditioner(Apply&& apply,
                                                                                                    Setup&& setup) {
  return {std::forward<Apply>(apply), std::forward<Setup>(setup)};
}

/// Type-erased preconditioner for run-time selection: one virtual call per
/// application. An empty any_preconditioner acts as the identity.
template <class Space = eigen_vector_space<double>>
class any_preconditioner {
 public:
  using vector_type = typename Space::vector_type;

  any_preconditioner() = default;
  template <class Preconditioner,
            class = std::enable_if_t<!std::is_same_v<std::decay_t<Preconditioner>, any_preconditioner>>>
  any_preconditioner(Preconditioner&& preconditioner)  // NOLINT: implicit on purpose, like std::function
      : m_model(std::make_unique<model<std::decay_t<Preconditioner>>>(std::forward<Preconditioner>(preconditioner))) {}

  any_preconditioner(any_preconditioner&&) noexcept = default;
  any_preconditioner& operator=(any_preconditioner&&) noexcept = default;

  void apply(const vector_type& r, vector_type& z) {
    if (m_model) {
      m_model->apply(r, z);
    } else {
      z = r;
    }
  }
  /// z = M⁻ᵀ r; throws std::invalid_argument when the wrapped object has no apply_transpose.
  void apply_transpose(const vector_type& r, vector_type& z) {
    if (m_model) {
      m_model->apply_transpose(r, z);
    } else {
      z = r;
    }
  }
  setup_status setup(const preconditioner_context<Space>& context) {
    return m_model ? m_model->setup(context) : setup_status::ready;
  }
  std::size_t memory_bytes() const { return m_model ? m_model->memory_bytes() : 0; }
  bool changes_between_applications() const { return m_model && m_model->changes(); }
  bool empty() const { return !m_model; }

  /// The wrapped object, or nullptr when it is not a `Preconditioner`.
  template <class Preconditioner>
  Preconditioner* target() {
    auto* typed = dynamic_cast<model<Preconditioner>*>(m_model.get());
    return typed ? &typed->value : nullptr;
  }

 private:
  struct concept_base {
    virtual ~concept_base() = default;
    virtual void apply(const vector_type& r, vector_type& z) = 0;
    virtual void apply_transpose(const vector_type& r, vector_type& z) = 0;
    virtual setup_status setup(const preconditioner_context<Space>& context) = 0;
    virtual std::size_t memory_bytes() const = 0;
    virtual bool changes() const = 0;
  };
  template <class Preconditioner>
  struct model final : concept_base {
    template <class P>
    explicit model(P&& p) : value(std::forward<P>(p)) {}
    void apply(const vector_type& r, vector_type& z) override { value.apply(r, z); }
    void apply_transpose(const vector_type& r, vector_type& z) override {
      if constexpr (has_apply_transpose_v<Preconditioner, vector_type>) {
        value.apply_transpose(r, z);
      } else {
        static_cast<void>(r), static_cast<void>(z);
        throw std::invalid_argument(
            "nkit: the preconditioner held by any_preconditioner has no apply_transpose(r, z), which solves with "
            "the transposed Jacobian need");
      }
    }
    setup_status setup(const preconditioner_context<Space>& context) override {
      return setup_preconditioner(value, context);
    }
    std::size_t memory_bytes() const override { return preconditioner_memory_bytes(value); }
    bool changes() const override { return nkit::changes_between_applications(value); }
    Preconditioner value;
  };
  std::unique_ptr<concept_base> m_model;
};

}  // namespace nkit

#endif  // NKIT_CORE_PRECONDITIONER_HPP
