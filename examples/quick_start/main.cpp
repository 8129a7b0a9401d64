#include <iostream>
#include <nkit/nkit.hpp>

// R(u) for your discretisation: write into r, which nkit passes already sized.
struct my_residual {
  void operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    const Eigen::Index n = u.size();
    for (Eigen::Index i = 0; i < n; ++i) {
      const double left = i > 0 ? u(i - 1) : 0.0, right = i + 1 < n ? u(i + 1) : 0.0;
      r(i) = (3.0 - 2.0 * u(i)) * u(i) - left - 2.0 * right + 1.0;
    }
  }
};

int main() {
  Eigen::VectorXd u = Eigen::VectorXd::Constant(100000, -1.0);  // or Eigen::Map over your own array
  nkit::newton_settings settings;                               // defaults: line search, Eisenstat–Walker forcing
  settings.relative_tolerance = 1e-10;
  nkit::newton_krylov_solver<> solver(settings);  // keep it: repeat solves allocate nothing
  const nkit::solve_report report = solver.solve(my_residual{}, u);
  nkit::print_convergence_table(std::cout, report);  // steps, GMRES iterations, time per phase
  return report.converged() ? 0 : 1;
}
