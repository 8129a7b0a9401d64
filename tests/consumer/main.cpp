// Solves x^3 = 8 through the installed (or embedded) nkit and checks x = 2.
#include <cmath>
#include <cstdio>
#include <nkit/nkit.hpp>

int main() {
  auto residual = [](const Eigen::VectorXd& x, Eigen::VectorXd& r) { r(0) = x(0) * x(0) * x(0) - 8.0; };
  Eigen::VectorXd x = Eigen::VectorXd::Constant(1, 1.0);
  nkit::newton_settings settings;
  settings.relative_tolerance = 1e-12;
  const nkit::solve_report report = nkit::solve(residual, x, settings);
  std::printf("consumer: %s, x = %.15f\n", std::string(nkit::name(report.reason)).c_str(), x(0));
  return report.converged() && std::abs(x(0) - 2.0) < 1e-10 ? 0 : 1;
}
