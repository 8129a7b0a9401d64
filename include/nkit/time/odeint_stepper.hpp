#ifndef NKIT_TIME_ODEINT_STEPPER_HPP
#define NKIT_TIME_ODEINT_STEPPER_HPP

/// \file time/odeint_stepper.hpp
/// An nkit implicit stepper that models Boost.Odeint's controlled-stepper
/// concept for Eigen::VectorXd states, so that odeint's integrate_adaptive,
/// integrate_const, integrate_times and observers drive nkit's BDF or ESDIRK
/// steps unchanged. Needs Boost (kept out of nkit.hpp).
///
///   nkit::odeint_implicit_stepper<> stepper(settings);
///   boost::numeric::odeint::integrate_adaptive(stepper, system, x, t0, t1, dt, observer);
///
/// The system is odeint's: system(const state& x, state& dxdt, double t)
/// (M = I). try_step(system, x, t, dt) makes one attempt of size dt: on
/// success x and t advance and dt becomes the controller's proposal; on
/// failure dt is reduced (odeint retries). The stepper keeps its history
/// (BDF states, ESDIRK slope, lagged preconditioner) while odeint continues
/// from where the last step ended; when (t, x) differ from that, it starts
/// afresh. Copies share one underlying implicit_time_stepper (odeint takes
/// steppers by value), so a copy continues the same integration.

#include <Eigen/Core>
#include <boost/numeric/odeint/stepper/controlled_step_result.hpp>
#include <boost/numeric/odeint/stepper/stepper_categories.hpp>
#include <memory>
#include <utility>

#include "implicit_time_stepper.hpp"

namespace nkit {

namespace detail {
/// Turns odeint's system(x, dxdt, t) into the rate(t, u, f) of time_problem.hpp.
template <class System>
struct odeint_system_rate {
  System* system;
  void rate(double t, const Eigen::VectorXd& u, Eigen::VectorXd& f) { (*system)(u, f, t); }
};
}  // namespace detail

template <class Preconditioner = identity_preconditioner>
class odeint_implicit_stepper {
 public:
  using state_type = Eigen::VectorXd;
  using deriv_type = Eigen::VectorXd;
  using value_type = double;
  using time_type = double;
  using order_type = unsigned short;
  using stepper_category = boost::numeric::odeint::controlled_stepper_tag;
  using stepper_type = implicit_time_stepper<eigen_vector_space<double>, Preconditioner>;

  explicit odeint_implicit_stepper(time_stepper_settings settings = {}, Preconditioner preconditioner = {})
      : m_stepper(std::make_shared<stepper_type>(settings, eigen_vector_space<double>{}, std::move(preconditioner))) {}

  /// One attempt of size dt from (x, t); see the file comment.
  template <class System>
  boost::numeric::odeint::controlled_step_result try_step(System&& system, state_type& x, time_type& t, time_type& dt) {
    detail::odeint_system_rate<std::remove_reference_t<System>> problem{&system};
    stepper_type& s = *m_stepper;
    const bool continues = s.started() && s.time() == t && s.state().size() == x.size() && s.state() == x;
    if (!continues) s.begin(problem, x, t, dt);
    if (s.attempt_step(problem, x, dt)) {
      t = s.time();
      dt = s.next_step_size();
      return boost::numeric::odeint::success;
    }
    dt = s.next_step_size();
    return boost::numeric::odeint::fail;
  }

  /// The underlying stepper: its report (counts, history) and Newton solver.
  stepper_type& stepper() { return *m_stepper; }

 private:
  std::shared_ptr<stepper_type> m_stepper;
};

}  // namespace nkit

#endif  // NKIT_TIME_ODEINT_STEPPER_HPP
